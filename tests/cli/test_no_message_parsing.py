"""The command line and the loaders decide nothing from the text of an error message."""

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2] / "seaprofile"
FILES = sorted([*ROOT.glob("cli/*.py"), *ROOT.glob("io/*.py"), ROOT / "batch.py"])


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_no_control_flow_on_message_text(path):
    text = path.read_text()
    # e.g. `if "latitude" in str(exc)`, `"use read_profile" not in str(err)`
    assert not re.search(r"\bin\s+str\((exc|err|error|e|as_\w+)\)", text), path
    assert not re.search(r"str\((exc|err|error|e)\)\.(startswith|endswith|find)", text), path
