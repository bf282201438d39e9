"""The `seaprofile plot` command: every kind of input, the example as written, errors."""

import json
import shlex
from pathlib import Path

import matplotlib
import numpy as np
import pytest
import xarray as xr

import seaprofile.cli as cli
import seaprofile.cli.plot as plot_cmd
from seaprofile import _cf
from seaprofile.casts.write import write

REPO = Path(__file__).resolve().parents[2]
PNG = b"\x89PNG\r\n\x1a\n"


def main(argv):
    return cli.main(argv)


def speed_only(pid="VS31-P02", n=150):
    """A synthetic speed-only Profile (invented station name)."""
    z = np.arange(0.0, float(n))
    return xr.Dataset(
        {
            "sound_speed": ("depth", 1505.0 - 0.03 * z, _cf.attrs_for("sound_speed")),
            "sound_speed_qc": ("depth", np.ones(z.size, np.int8), _cf.flag_attrs("sound_speed")),
        },
        coords={
            "depth": ("depth", z, _cf.attrs_for("depth")),
            "latitude": 44.0,
            "longitude": -9.6,
            "profile_id": pid,
        },
        attrs=_cf.base_attrs(featureType="profile", cast_name=pid, equation="measured"),
    )


def _one_line_error(capsys):
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "error" in err and "Traceback" not in err
    return err


def test_registered_and_help_has_example_and_caution(capsys):
    assert "plot" in cli.COMMANDS
    with pytest.raises(SystemExit) as stop:
        main(["plot", "--help"])
    assert stop.value.code == 0
    out = capsys.readouterr().out
    assert "example:" in out and "seaprofile plot" in out and "Caution" in out


def test_example_runs_as_written(tmp_path, monkeypatch, capsys):
    (tmp_path / "demo_casts").symlink_to(REPO / "demo_casts")
    monkeypatch.chdir(tmp_path)
    commands = [
        line.strip()
        for line in plot_cmd.EXAMPLE.splitlines()
        if line.strip().startswith("seaprofile ")
    ]
    assert len(commands) >= 2
    for command in commands:
        argv = shlex.split(command)[1:]
        assert main(argv) == 0, capsys.readouterr().err
        target = tmp_path / argv[argv.index("--out") + 1]
        head = target.read_bytes()[:64]
        assert (
            head.startswith(PNG)
            if target.suffix == ".png"
            else b"<svg" in target.read_bytes()[:400]
        )
    out = capsys.readouterr().out
    assert "Caution" in out and "raw cast" in out


@pytest.mark.parametrize("suffix", [".nc", ".csv", ".json"])
def test_built_speed_only_profile_in_every_format(tmp_path, capsys, drawn, suffix):
    src = tmp_path / f"p{suffix}"
    write(speed_only(), src)
    out = tmp_path / "p.png"
    assert main(["plot", str(src), "--out", str(out), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["input"].startswith("built profile") and doc["panels"] == 1
    assert doc["profile"] == "VS31-P02" and doc["written"] == [str(out)]
    assert out.read_bytes()[:8] == PNG
    (fig,) = drawn
    assert "nan" not in fig._suptitle.get_text().lower()
    assert "VS31-P02" in fig._suptitle.get_text()
    assert not list(tmp_path.glob(".*"))  # no temporary file left behind


def test_raw_cast_draws_its_samples_and_the_sea_floor(tmp_path, capsys, drawn):
    out = tmp_path / "shelf.pdf"
    assert main(["plot", str(REPO / "demo_casts" / "shelf_summer_ctd.csv"), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "raw cast, built with the default settings" in text
    assert "sea floor at 120 m" in text  # from the cast's own bottom_depth
    assert out.read_bytes()[:5] == b"%PDF-"
    (fig,) = drawn
    labels = {t.get_text() for t in fig.legends[0].get_texts()}
    assert {"raw samples", "sea floor"} <= labels


@pytest.mark.parametrize("name", ["figure.jpgx", "figure", "figure.nc"])
def test_unknown_figure_type_refused_before_reading(tmp_path, capsys, name):
    missing = tmp_path / "not_there.csv"  # would fail later, if it were read at all
    assert main(["plot", str(missing), "--out", str(tmp_path / name)]) == 2
    err = _one_line_error(capsys)
    assert "--out" in err and ".png" in err and "no such file" not in err


def test_existing_figure_kept_unless_overwrite(tmp_path, capsys):
    src = tmp_path / "p.nc"
    write(speed_only(), src)
    target = tmp_path / "fig.svg"
    target.write_text("keep me")
    assert main(["plot", str(src), "--out", str(target)]) == 2
    assert "--overwrite" in _one_line_error(capsys)
    assert target.read_text() == "keep me"
    assert main(["plot", str(src), "--out", str(target), "--overwrite"]) == 0
    assert "<svg" in target.read_text()[:400]


def test_file_of_several_profiles_needs_a_name(tmp_path, capsys, drawn):
    src = tmp_path / "two.nc"
    write([speed_only("VS31-P03"), speed_only("VS31-P04", n=90)], src)
    out = tmp_path / "f.png"
    assert main(["plot", str(src), "--out", str(out)]) == 2
    err = _one_line_error(capsys)
    assert "--name" in err and "VS31-P03" in err and "VS31-P04" in err
    assert main(["plot", str(src), "--out", str(out), "--name", "VS31-P04"]) == 0
    assert "VS31-P04" in drawn[-1]._suptitle.get_text()
    assert main(["plot", str(src), "--out", str(out), "--name", "VS31-X", "--overwrite"]) == 2
    assert "--name" in _one_line_error(capsys)


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--upper-panel", "deep"], "--upper-panel"),
        (["--upper-panel", "-50"], "--upper-panel"),
        (["--bottom-depth", "-3"], "--bottom-depth"),
        (["--dpi", "0"], "--dpi"),
    ],
)
def test_bad_options_name_themselves(tmp_path, capsys, extra, words):
    src = tmp_path / "p.nc"
    write(speed_only(), src)
    assert main(["plot", str(src), "--out", str(tmp_path / "f.png")] + extra) == 2
    assert words in _one_line_error(capsys)


def test_upper_panel_depth_and_none(tmp_path, capsys, drawn):
    src = tmp_path / "p.nc"
    write(speed_only(n=2000), src)
    assert main(["plot", str(src), "--out", str(tmp_path / "a.png"), "--upper-panel", "100"]) == 0
    assert "upper 100 m" in drawn[-1].axes[-1].get_xlabel()
    assert main(["plot", str(src), "--out", str(tmp_path / "b.png"), "--upper-panel", "none"]) == 0
    assert len(drawn[-1].axes) == 1


def test_headerless_speed_table(tmp_path, capsys, drawn):
    table = tmp_path / "planning.table"
    table.write_text("0.0 1500.0\n200.0 1490.0\n")
    from seaprofile._validate import InputFileError
    from seaprofile.batch import read_as_profiles

    try:
        read_as_profiles(table)
    except InputFileError:
        pytest.skip("headerless depth / sound-speed tables are not readable yet")
    assert main(["plot", str(table), "--out", str(tmp_path / "t.png")]) == 0
    (fig,) = drawn
    assert len(fig.axes) == 1


def test_command_leaves_the_backend_alone(tmp_path, capsys):
    src = tmp_path / "p.nc"
    write(speed_only(), src)
    before = matplotlib.get_backend()
    assert main(["plot", str(src), "--out", str(tmp_path / "f.png")]) == 0
    assert matplotlib.get_backend() == before
