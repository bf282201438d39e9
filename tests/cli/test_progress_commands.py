"""`fan`, `loss` and `coverage`: a bar on a terminal, nothing off one or with --quiet.

The thresholds of a "large" job are lowered to 0 here so that the small demo jobs (the
synthetic demo casts) would be cut into groups and drawn whenever progress is on.
"""

import io
import os
import subprocess
import sys

import pytest
from _cli_helpers import DEMO

import seaprofile.cli as cli

COMMANDS = {
    "fan": ["fan", str(DEMO / "deep_ocean_ctd.csv"), "--source-depth", "50", "--rays", "40"]
    + ["--range", "5km", "--bottom-depth", "4000"],
    "loss": ["loss", str(DEMO / "shelf_summer_ctd.csv"), "--source-depth", "20"]
    + ["--frequency", "2000", "--range", "2km", "--range-step", "100", "--beams", "60"],
    "coverage": ["coverage", str(DEMO / "shelf_summer_ctd.csv"), "--source-depth", "20"]
    + ["--frequency", "5000", "--range", "2km", "--figure-of-merit", "80"],
}
#: what each command's bars say
LABELS = {"fan": ["tracing rays"], "loss": ["tracing rays", "summing beams"]}
LABELS["coverage"] = LABELS["loss"]
#: characters a tqdm bar draws
BAR_MARKS = ("\r", "%|", "ray/s", "beam/s", "tracing rays", "summing beams")

_LOWERED = (
    "import sys\n"
    "from seaprofile import _progress\n"
    "from seaprofile.propagation import codes, loss\n"
    "codes.PROGRESS_RAYS = codes.PROGRESS_RAYS_INTEGRATED = loss.PROGRESS_WORK = 0\n"
    "_progress.BAR_DELAY = 0.0\n"
    "from seaprofile.cli import main\n"
    "sys.exit(main(sys.argv[1:]))\n"
)


class _Tty(io.StringIO):
    def isatty(self):
        return True


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_no_bar_when_stderr_is_a_pipe(name):
    env = dict(os.environ)
    env.pop("TQDM_DISABLE", None)
    run = subprocess.run(
        [sys.executable, "-c", _LOWERED, *COMMANDS[name], "--json"],
        capture_output=True,
        text=True,
        timeout=300,
        env=env,
    )
    assert run.returncode == 0, run.stderr
    assert not [m for m in BAR_MARKS if m in run.stderr], run.stderr
    assert run.stdout.lstrip().startswith("{")  # the summary is untouched


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_bar_on_a_terminal_and_none_with_quiet(name, small_jobs_show_progress, monkeypatch, capsys):
    tty = _Tty()
    monkeypatch.setattr(sys, "stderr", tty)  # in the test body: capture resets it between
    assert cli.main([*COMMANDS[name], "--json"]) == 0
    for label in LABELS[name]:
        assert label in tty.getvalue(), tty.getvalue()
    quiet = _Tty()
    monkeypatch.setattr(sys, "stderr", quiet)
    assert cli.main([*COMMANDS[name], "--json", "--quiet"]) == 0
    # warnings (e.g. the absorption formula's salinity range) still come; no bar
    assert not [m for m in BAR_MARKS if m in quiet.getvalue()], quiet.getvalue()
    capsys.readouterr()


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_quiet_is_in_the_help(name, capsys):
    with pytest.raises(SystemExit):
        cli.main([name, "--help"])
    out = capsys.readouterr().out
    assert "--quiet" in out and "progress bar" in out
