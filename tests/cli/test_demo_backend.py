"""`seaprofile demo` draws its figures without touching the user's matplotlib backend."""

import subprocess
import sys
from pathlib import Path

from _cli_helpers import DEMO

ROOT = Path(__file__).resolve().parents[2]


def test_demo_leaves_the_backend_and_pyplot_alone(tmp_path):
    code = f"""
import sys
import matplotlib
matplotlib.use("svg")
import seaprofile.cli
rc = seaprofile.cli.main(["demo", "--out", {str(tmp_path / "demo")!r}, "--casts", {str(DEMO)!r}])
assert rc == 0, rc
print(matplotlib.get_backend())
pyplot = sys.modules.get("matplotlib.pyplot")
print(len(pyplot.get_fignums()) if pyplot else "no pyplot")
"""
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=600
    )
    assert done.returncode == 0, done.stderr
    backend, figures = done.stdout.strip().splitlines()[-2:]
    assert backend == "svg"
    assert figures in ("no pyplot", "0")  # no figure left registered with pyplot
    pngs = sorted(p.name for p in (tmp_path / "demo" / "figures").iterdir())
    assert "deep_ocean_ctd_fan.png" in pngs and "deep_ocean_ctd_profile.png" in pngs
    assert "import matplotlib.pyplot" not in (ROOT / "seaprofile" / "demo.py").read_text()
    assert "matplotlib.use" not in (ROOT / "seaprofile" / "demo.py").read_text()
