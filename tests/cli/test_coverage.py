"""The `seaprofile coverage` command: sonar-equation options, errors, text/JSON/files.

The runs that need the loss field skip (with the reason) while
``seaprofile.propagation.loss.transmission_loss`` cannot be imported; no numbers are faked.
"""

import json

import pytest
from _cli_helpers import DEMO, one_line_error

import seaprofile.cli as cli
from seaprofile._cf import CAUTION

try:
    from seaprofile.propagation.loss import transmission_loss  # noqa: F401

    HAVE_LOSS = True
except ImportError:
    HAVE_LOSS = False

needs_loss = pytest.mark.skipif(
    not HAVE_LOSS,
    reason="seaprofile.propagation.loss.transmission_loss not importable (loss branch not merged)",
)

BASE = [
    "coverage",
    str(DEMO / "deep_ocean_ctd.csv"),
    "--source-depth",
    "50",
    "--frequency",
    "3000",
    "--range",
    "30km",
    "--bottom-depth",
    "4000",
]
PASSIVE = ["--source-level", "140", "--noise-level", "65", "--detection-threshold", "10"]


def test_registered():
    assert "coverage" in cli.COMMANDS


def test_sonar_terms_missing_is_one_line_error(capsys):
    assert cli.main(BASE + ["--source-level", "140"]) == 2
    assert "--figure-of-merit" in one_line_error(capsys)


def test_figure_of_merit_and_terms_together_refused(capsys):
    assert cli.main(BASE + PASSIVE + ["--figure-of-merit", "80"]) == 2
    assert "--figure-of-merit" in one_line_error(capsys)


def test_bad_frequency_refused(capsys):
    argv = list(BASE)
    argv[argv.index("--frequency") + 1] = "-5"
    assert cli.main(argv + PASSIVE) == 2
    assert "--frequency" in one_line_error(capsys)


@needs_loss
def test_text_output_has_depths_and_caution(capsys):
    assert cli.main(BASE + PASSIVE) == 0
    out = capsys.readouterr().out
    assert "receiver depth (m)" in out
    assert "figure of merit: 65.0 dB" in out
    assert CAUTION in out
    assert "nan" not in out.lower()


@needs_loss
def test_json_and_files(capsys, tmp_path):
    nc, png = tmp_path / "c.nc", tmp_path / "c.png"
    argv = BASE + PASSIVE + ["--json", "--out", str(nc), "--plot", str(png)]
    assert cli.main(argv) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["sonar_equation"]["figure_of_merit_db"] == 65.0
    assert data["caution"] == CAUTION
    assert nc.exists() and png.exists()


def test_bad_seabed_name_lists_the_known_ones(capsys):
    from seaprofile.propagation.reflection import SEDIMENTS

    assert cli.main(BASE + ["--figure-of-merit", "80", "--seabed", "ooze"]) == 2
    err = one_line_error(capsys)
    assert "--seabed" in err and all(name in err for name in SEDIMENTS)


@needs_loss
def test_section_with_a_figure(tmp_path, capsys):
    # the demo section (synthetic): the side panel draws every cast (a traceback before)
    fig = tmp_path / "cov.png"
    argv = ["coverage", str(DEMO / "section"), "--source-depth", "30", "--frequency", "3000"]
    argv += ["--range", "3km", "--figure-of-merit", "80", "--seabed", "silt"]
    assert cli.main(argv + ["--plot", str(fig), "--json"]) == 0, capsys.readouterr().err
    doc = json.loads(capsys.readouterr().out)
    assert doc["seabed"].startswith("silt (named)")
    assert fig.stat().st_size > 10_000
