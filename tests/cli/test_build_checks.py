"""`build`: options checked once, inputs never written over, memory, assumptions, threads."""

import json
import shutil

import numpy as np
import pytest
import xarray as xr
from _cli_helpers import DEMO, RENAMED_OPTIONS, one_line_error

import seaprofile.batch
from seaprofile.cli import main

TWO = [str(DEMO / "shelf_summer_ctd.csv"), str(DEMO / "shelf_winter_ctd.csv")]


@pytest.mark.parametrize(
    "option, value",
    [
        ("--bin", "-1"),
        ("--bin", "0"),
        ("--fall-rate", "fast"),
        ("--fall-rate", "1,-1"),
        ("--columns", "temperature"),
        ("--columns", "colour=red"),
        ("--units", "pressure=furlong"),
        ("--latitude", "95"),
        ("--longitude", "-200"),
        ("--salinity", "50"),
        ("--extend-to", "-5"),
        ("--extend-to", "deep"),
        ("--extend-to", "20000"),
        ("--scheduler", "bogus"),
        ("--replace-salinity", "60"),
        ("--replace-salinity", "nan"),
        ("--max-gap", "-3"),
        ("--max-gap", "wide"),
    ],
)
def test_bad_option_once_exit_2_before_any_file(tmp_path, capsys, option, value):
    out = tmp_path / "out"
    assert main(["build", *TWO, "--out", str(out), option, value]) == 2
    err = one_line_error(capsys)  # one line, not one per file
    assert err.startswith(f"seaprofile build: error: {option}")
    assert not out.exists()  # nothing was processed


def test_tiny_bin_refused_with_the_memory_it_would_need(capsys):
    assert main(["build", *TWO, "--bin", "0.000001"]) == 2
    err = one_line_error(capsys)
    assert "--bin" in err and "memory" in err and "TB" in err


def test_input_is_never_an_output(tmp_path, capsys, monkeypatch):
    # a cast file named like its cast: `build X.csv --format csv --out . --overwrite`
    # would write X.csv over itself
    src = tmp_path / "VS31-S04.csv"
    shutil.copy(DEMO / "shelf_summer_ctd.csv", src)
    before = src.read_bytes()
    monkeypatch.chdir(tmp_path)
    assert main(["build", "VS31-S04.csv", "--format", "csv", "--out", ".", "--overwrite"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "is an input" in err[0] and "VS31-S04.csv" in err[0]
    assert src.read_bytes() == before


def test_reference_file_is_never_an_output(tmp_path, capsys):
    ref = tmp_path / "VS31-X07.nc"  # the name build would give the probe's profile
    assert main(["build", str(DEMO / "deep_ocean_ctd.csv"), "--out", str(tmp_path)]) == 0
    (tmp_path / "VS31-D01.nc").rename(ref)
    before = ref.read_bytes()
    capsys.readouterr()
    assert (
        main(
            [
                "build",
                str(DEMO / "xbt_drop.csv"),
                "--extend-to",
                "3000",
                "--reference",
                str(ref),
                "--out",
                str(tmp_path),
                "--overwrite",
            ]
        )
        == 2
    )
    assert "is an input" in capsys.readouterr().err
    assert ref.read_bytes() == before


def test_missing_reference_named_as_the_option(tmp_path, capsys):
    # a sound-speed probe cast of depth and sound speed only (synthetic): nothing to
    # extend with but a deeper reference profile
    path = tmp_path / "probe.csv"
    rows = "\n".join(f"{z:.1f},{1510.0 - 0.02 * z:.3f}" for z in np.arange(1.0, 200.0))
    path.write_text(
        "# note: SYNTHETIC test cast\n# instrument: svp\n# latitude: 44.0\n"
        f"# longitude: -9.6\ndepth [m],sound speed [m/s]\n{rows}\n"
    )
    assert main(["build", str(path), "--extend-to", "400"]) == 2
    err = capsys.readouterr().err
    assert "--reference" in err and "reference=" not in err
    ref = DEMO / "svp_cast.csv"
    assert main(["build", str(path), "--extend-to", "400", "--reference", str(ref), "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)["casts"]
    assert row["depth_range_m"].endswith("400")
    assert "extended" in row["assumptions"] and "400" in row["assumptions"]


def test_reader_keyword_hints_name_the_option(renamed_cast, capsys):
    assert main(["build", str(renamed_cast)]) == 2
    err = capsys.readouterr().err
    assert "--columns" in err and "columns=" not in err
    assert main(["build", str(renamed_cast), *RENAMED_OPTIONS, "--json"]) == 0


def test_summary_shows_every_assumption(capsys):
    assert (
        main(
            [
                "build",
                str(DEMO / "xbt_drop.csv"),
                "--salinity",
                "35.2",
                "--fall-rate",
                "6.691,0.00225",
                "--extend-to",
                "3000",
                "--reference",
                str(DEMO / "deep_ocean_ctd.csv"),
                "--json",
            ]
        )
        == 0
    )
    (row,) = json.loads(capsys.readouterr().out)["casts"]
    said = row["assumptions"]
    assert "salinity" in said and "35.2" in said
    assert "fall rate" in said and "6.691" in said
    # the extension: where it starts (the probe's last bin, 759 m), where it ends, and
    # the deep cast that shaped it, by name
    assert (
        "extended 759-3000 m with reference VS31-D01: its measured temperature and salinity" in said
    )
    assert main(["build", str(DEMO / "xbt_drop.csv")]) == 0
    text = capsys.readouterr().out
    assert "assumptions" in text and "salinity assumed constant 35" in text
    assert "hanawa1995" in text


def test_diagnostics_error_is_reported_as_itself(monkeypatch, capsys):
    def broken(profile, **options):
        raise seaprofile.batch.SeaprofileError("an invented diagnostics failure")

    monkeypatch.setattr(seaprofile.batch, "describe", broken)
    assert main(["build", str(DEMO / "shelf_summer_ctd.csv"), "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)["casts"]
    assert row["status"] == "diagnostics failed: an invented diagnostics failure"


def test_stuck_salinity_still_says_no_usable_sound_speed(capsys):
    assert main(["build", str(DEMO / "messy" / "stuck_salinity_ctd.csv"), "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)["casts"]
    assert row["status"] == "no usable sound speed"


def test_threads_write_netcdf_safely(tmp_path, capsys):
    pytest.importorskip("dask")
    casts = sorted(str(p) for p in (DEMO / "section").glob("*.csv"))
    assert main(["build", *casts, "--out", str(tmp_path / "t"), "--scheduler", "threads"]) == 0
    assert main(["build", *casts, "--out", str(tmp_path / "s")]) == 0
    names = sorted(p.name for p in (tmp_path / "s").iterdir())
    assert names == sorted(p.name for p in (tmp_path / "t").iterdir()) and len(names) == 10
    for name in names:
        a = xr.load_dataset(tmp_path / "s" / name)
        b = xr.load_dataset(tmp_path / "t" / name)
        np.testing.assert_array_equal(a["sound_speed"].values, b["sound_speed"].values)


def test_failed_salinity_channel_replaced_from_the_command_line(tmp_path, capsys):
    stuck = str(DEMO / "messy" / "stuck_salinity_ctd.csv")
    assert main(["build", stuck, "--json"]) == 0
    plain = json.loads(capsys.readouterr().out)["casts"][0]
    assert plain["status"] == "no usable sound speed"
    assert (
        main(["build", stuck, "--replace-salinity", "35.2", "--out", str(tmp_path), "--json"]) == 0
    )
    row = json.loads(capsys.readouterr().out)["casts"][0]
    assert row["status"] == "ok"
    assert "salinity replaced" in row["assumed"] and "35.2" in row["assumptions"]
    profile = xr.open_dataset(next(tmp_path.glob("*.nc")))
    assert "35.2" in profile.attrs["salinity_replaced"]


def test_extend_to_bottom_without_a_bottom_depth_is_an_error_of_that_cast(tmp_path, capsys):
    # a cast file with no sea-floor depth in its header (invented, synthetic)
    bare = tmp_path / "no_floor.csv"
    bare.write_text(
        "# synthetic test cast\npressure [dbar],temperature [degC],salinity\n"
        + "".join(f"{p},{12 - 0.02 * p:.3f},35.0\n" for p in range(1, 80))
    )
    with_floor = DEMO / "shelf_summer_ctd.csv"
    assert (
        main(
            [
                "build",
                str(bare),
                str(with_floor),
                "--extend-to",
                "bottom",
                "--out",
                str(tmp_path / "out"),
            ]
        )
        == 2
    )
    captured = capsys.readouterr()
    err = [line for line in captured.err.splitlines() if line.strip()]
    assert len(err) == 1 and "no_floor.csv" in err[0] and "--extend-to" in err[0]
    assert "Traceback" not in captured.err
    assert (tmp_path / "out" / "VS31-S04.nc").exists()  # the other cast carried on


def test_summary_table_keeps_assumptions_short(capsys):
    assert (
        main(
            [
                "build",
                str(DEMO / "xbt_drop.csv"),
                "--extend-to",
                "bottom",
                "--reference",
                str(DEMO / "deep_ocean_ctd.csv"),
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    row = next(line for line in out.splitlines() if line.startswith("xbt_drop.csv"))
    assert "salinity assumed" in row and "fall rate hanawa1995" in row
    assert "extended below" in row and "VS31-D01" in row
    assert len(row) < 220  # the full sentences live in the file and in --json


def test_max_gap_reaches_the_profile(tmp_path, capsys):
    # a dense cast (1 m) with its samples from 40 to 70 m lost (invented, synthetic)
    z = [float(d) for d in range(1, 120) if not 40 <= d <= 70]
    lossy = tmp_path / "lossy.csv"
    lossy.write_text(
        "# synthetic test cast\n# latitude: 44.0\n# longitude: -9.0\n"
        "depth [m],temperature [degC],salinity\n"
        + "".join(f"{d},{15 - 0.05 * d:.3f},35.0\n" for d in z)
    )
    for option, unfilled in (("auto", True), ("all", False), ("40", False), ("10", True)):
        out = tmp_path / option
        assert main(["build", str(lossy), "--max-gap", option, "--out", str(out)]) == 0
        profile = xr.open_dataset(next(out.glob("*.nc")))
        assert (profile.attrs["unfilled_gaps"] != "none") == unfilled, option
    capsys.readouterr()


def test_output_directory_that_cannot_be_one(tmp_path, capsys):
    a_file = tmp_path / "a_file"
    a_file.write_text("not a directory")
    for out in (a_file, a_file / "below"):
        assert main(["build", TWO[0], "--out", str(out)]) == 2
        err = one_line_error(capsys)
        assert err.startswith("seaprofile build: error: --out") and "Errno" not in err
    assert a_file.read_text() == "not a directory"
