"""The `build`, `inspect` and `demo` commands."""

import json
from pathlib import Path

import pytest

from seaprofile.cli import main

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"


def test_build_reports_bad_file_and_exits_1(tmp_path, capsys):
    code = main(
        [
            "build",
            str(DEMO / "shelf_summer_ctd.csv"),
            str(DEMO / "broken" / "bad_number.csv"),
            "--out",
            str(tmp_path),
            "--format",
            "csv",
        ]
    )
    assert code == 2  # bad input: exit 2, the other files still built
    captured = capsys.readouterr()
    assert "VS31-S04" in captured.out and "FAILED" in captured.out
    err = captured.err.strip().splitlines()
    assert len(err) == 1 and "line 41" in err[0] and "Traceback" not in captured.err
    assert (tmp_path / "VS31-S04.csv").exists()


@pytest.mark.parametrize(
    ("fmt", "name", "magic"),
    [("netcdf", "VS31-S04.nc", b"CDF\x02"), ("netcdf4", "VS31-S04.nc4", b"\x89HDF")],
)
def test_build_writes_classic_or_netcdf4(tmp_path, capsys, fmt, name, magic):
    # classic netCDF-3 starts "CDF" + version byte 2 (64-bit offset; netCDF Users Guide,
    # classic format specification); netCDF-4 is HDF5 ("\x89HDF", HDF5 format specification)
    args = ["build", str(DEMO / "shelf_summer_ctd.csv"), "--out", str(tmp_path), "--format", fmt]
    assert main(args) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]
    assert (tmp_path / name).read_bytes()[:4] == magic
    capsys.readouterr()
    assert main(["inspect", str(tmp_path / name), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["caution"].startswith("Not for navigation")


def test_build_help_names_both_netcdf_formats(capsys):
    with pytest.raises(SystemExit):
        main(["build", "--help"])
    help_text = " ".join(capsys.readouterr().out.split())
    assert "netcdf: classic netCDF-3, .nc; netcdf4: netCDF-4, .nc4" in help_text


def test_build_json_summary(capsys):
    assert (
        main(["build", str(DEMO / "shelf_winter_ctd.csv"), "--json", "--extend-to", "bottom"]) == 0
    )
    doc = json.loads(capsys.readouterr().out)
    (row,) = doc["casts"]
    assert row["cast"] == "VS31-W02" and row["depth_range_m"].endswith("150")


def test_build_missing_file_exit_1(capsys):
    assert main(["build", "no/such/cast.csv"]) == 2
    assert "no/such/cast.csv" in capsys.readouterr().err


def test_inspect_raw_cast_json(capsys):
    assert (
        main(
            [
                "inspect",
                str(DEMO / "deep_ocean_ctd.csv"),
                "--bottom-depth",
                "5012",
                "--source-depth",
                "60",
                "--json",
            ]
        )
        == 0
    )
    d = json.loads(capsys.readouterr().out)
    assert 500 < d["channel_axis_depth"] < 1200
    assert d["depth_excess_surface"] is not None
    assert d["caution"].startswith("Not for navigation")


def test_inspect_text_lists_units(capsys):
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv")]) == 0
    out = capsys.readouterr().out
    assert "sonic layer depth" in out and "surface duct" in out and "caution" in out


def test_inspect_bad_length_exit_2(capsys):
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv"), "--bottom-depth", "deep"]) == 2
    assert "--bottom-depth" in capsys.readouterr().err


def test_demo_end_to_end(tmp_path, capsys):
    out = tmp_path / "demo"
    assert main(["demo", "--out", str(out), "--casts", str(DEMO), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    statuses = {row["file"]: row["status"] for row in doc["casts"]}
    assert statuses["bad_number.csv"] == "FAILED"
    assert statuses["deep_ocean_ctd.csv"] == "ok"
    assert (out / "profiles" / "VS31-D01.nc").exists()
    assert (out / "figures" / "deep_ocean_ctd_profile.png").exists()
    # a second run rewrites its own output folder
    assert main(["demo", "--out", str(out), "--casts", str(DEMO), "--no-figures"]) == 0


def test_demo_without_casts_exit_2(tmp_path, capsys):
    assert main(["demo", "--casts", str(tmp_path / "none")]) == 2
    assert "--casts" in capsys.readouterr().err


def test_build_fall_rate_and_reference(tmp_path, capsys):
    # the deep cast shapes the extension of the expendable-probe drop below its last sample
    code = main(
        [
            "build",
            str(DEMO / "xbt_drop.csv"),
            "--fall-rate",
            "6.691,0.00225",
            "--salinity",
            "35.2",
            "--extend-to",
            "3000",
            "--reference",
            str(DEMO / "deep_ocean_ctd.csv"),
            "--json",
        ]
    )
    assert code == 0
    (row,) = json.loads(capsys.readouterr().out)["casts"]
    assert row["depth_range_m"].endswith("3000")


def test_build_bad_fall_rate_exit_2(capsys):
    assert main(["build", str(DEMO / "xbt_drop.csv"), "--fall-rate", "fast"]) == 2
    assert "--fall-rate" in capsys.readouterr().err
