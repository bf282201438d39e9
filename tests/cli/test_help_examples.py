"""Every example printed by ``seaprofile COMMAND --help`` runs as written on the demo files.

How the examples are run: each command's EXAMPLE text (what ``--help`` prints under
"example:") is split into command lines (a trailing backslash continues a line, as in a
shell), each line is split like a shell would (``shlex``), shell wildcards are expanded in
the working directory the way a shell would expand them, and the line goes through
``seaprofile.cli.main`` in a fresh temporary directory holding a copy of ``demo_casts/``.
Lines run in the order written, so an example that inspects a file built by the line
before it must use the name ``build`` writes. Each must exit 0.
"""

import glob
import importlib
import shlex
import shutil
from pathlib import Path

import pytest

import seaprofile.cli as cli

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"


def example_lines(text):
    """The command lines of an EXAMPLE text (backslash continuations joined)."""
    lines, current = [], ""
    for raw in text.splitlines():
        s = raw.strip()
        if not s or s.endswith(":") and not current:
            continue
        current = f"{current} {s}".strip()
        if current.endswith("\\"):
            current = current[:-1].rstrip()
            continue
        lines.append(current)
        current = ""
    return lines


def shell_words(line):
    """``shlex`` words of a line, wildcards expanded like a shell (sorted, kept if none)."""
    words = []
    for word in shlex.split(line):
        matches = sorted(glob.glob(word)) if any(ch in word for ch in "*?[") else []
        words.extend(matches or [word])
    return words


def test_example_lines_parser():
    text = "example:\n  seaprofile a x \\\n      y\n  seaprofile b 'c d'\n"
    assert example_lines(text) == ["seaprofile a x y", "seaprofile b 'c d'"]


@pytest.mark.parametrize("command", cli.COMMANDS)
def test_every_help_example_runs(command, tmp_path, monkeypatch, capsys):
    module = importlib.import_module(f"seaprofile.cli.{command}")
    lines = example_lines(getattr(module, "EXAMPLE", ""))
    assert lines, f"seaprofile {command} --help shows no example"
    shutil.copytree(DEMO, tmp_path / "demo_casts")
    monkeypatch.chdir(tmp_path)
    # the examples are what --help prints
    with pytest.raises(SystemExit):
        cli.main([command, "--help"])
    shown = capsys.readouterr().out
    for line in lines:
        words = shell_words(line)
        assert words[0] == "seaprofile", line
        assert all(w in shown for w in shlex.split(line)[1:3]), line
        code = cli.main(words[1:])
        err = capsys.readouterr().err
        assert code == 0, f"{line!r} exited {code}: {err}"
