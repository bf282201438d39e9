"""The `seaprofile paths` command: arrivals table and JSON, figure, errors."""

import json
import math

import numpy as np
import pytest
import xarray as xr

import seaprofile.cli as cli
from seaprofile import _cf
from seaprofile.casts.write import write

C = 1500.0  # m/s, uniform water


@pytest.fixture
def main(monkeypatch):
    """seaprofile.cli.main with the ray commands registered (until COMMANDS lists them)."""
    missing = [c for c in ("fan", "paths") if c not in cli.COMMANDS]
    if missing:
        monkeypatch.setattr(cli, "COMMANDS", cli.COMMANDS + missing)
    return cli.main


@pytest.fixture
def uniform_nc(tmp_path):
    """A built profile of uniform water, 200 m deep."""
    prof = xr.Dataset(
        {"sound_speed": ("depth", np.full(3, C), _cf.attrs_for("sound_speed"))},
        coords={
            "depth": ("depth", [0.0, 100.0, 200.0], _cf.attrs_for("depth")),
            "latitude": 44.0,
            "longitude": -9.6,
            "profile_id": "uniform",
        },
        attrs=_cf.base_attrs(featureType="profile", bottom_depth=200.0),
    )
    path = tmp_path / "uniform.nc"
    write(prof, path)
    return path


def _one_line_error(capsys):
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "error" in err
    return err


def test_uniform_water_arrivals_match_image_sources(main, uniform_nc, capsys):
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "1km,80",
                "--max-reflections",
                "1",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    (rec,) = doc["receivers"]
    assert rec["range_m"] == 1000.0 and rec["depth_m"] == 80.0
    got = {(a["surface_reflections"], a["bottom_reflections"]): a for a in rec["arrivals"]}
    # Straight rays and mirror images in uniform water between a flat surface and a flat
    # bottom (elementary geometry, computed here): direct path to the receiver, the image
    # of the source above the surface (-50 m) and below the bottom (2 * 200 - 50 = 350 m).
    r, zs, zr, h = 1000.0, 50.0, 80.0, 200.0
    expected = {
        (0, 0): math.hypot(r, zr - zs),
        (1, 0): math.hypot(r, zr + zs),
        (0, 1): math.hypot(r, 2 * h - zs - zr),
    }
    assert set(got) == set(expected)
    for key, slant in expected.items():
        a = got[key]
        # one-way time = slant / c; the eigenray is refined to 1e-6 m in depth, so 1e-9 s
        # is ample
        assert a["travel_time"] == pytest.approx(slant / C, abs=1e-9)
        # spherical spreading 20 log10(R / 1 m) in uniform water; 1e-6 dB
        assert a["spreading_loss"] == pytest.approx(20 * math.log10(slant), abs=1e-6)
    direct = got[(0, 0)]
    # launch angle of the direct path: atan(dz / r), positive down (computed here)
    assert direct["launch_angle"] == pytest.approx(math.degrees(math.atan2(30.0, r)), abs=1e-6)
    assert direct["arrival_angle"] == pytest.approx(direct["launch_angle"], abs=1e-6)
    assert got[(1, 0)]["path"] == "surface" and got[(0, 1)]["path"] == "bottom"


def test_table_for_several_receivers_with_km(main, uniform_nc, capsys):
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "2km,100",
                "--receiver",
                "500,20",
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    assert "receiver at 2 km range, 100 m depth" in out
    assert "receiver at 500 m range, 20 m depth" in out
    for col in (
        "time_s",
        "launch_deg",
        "arrival_deg",
        "surface",
        "bottom",
        "turning_points",
        "loss_dB",
    ):
        assert col in out
    assert "Caution" in out


def test_no_reflections_leaves_only_the_direct_path(main, uniform_nc, capsys):
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "3km,60",
                "--max-reflections",
                "0",
                "--json",
            ]
        )
        == 0
    )
    (rec,) = json.loads(capsys.readouterr().out)["receivers"]
    assert len(rec["arrivals"]) == 1
    assert rec["arrivals"][0]["path"] == "refracted"


def test_search_angles_option(main, uniform_nc, capsys):
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "1km,80",
                "--max-reflections",
                "0",
                "--search-angles",
                "-10",
                "10",
                "--search-rays",
                "2001",
                "--json",
            ]
        )
        == 0
    )
    (rec,) = json.loads(capsys.readouterr().out)["receivers"]
    assert len(rec["arrivals"]) == 1
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "1km,80",
                "--search-angles",
                "-95",
                "95",
                "--search-rays",
                "11",
            ]
        )
        == 2
    )
    assert "--search-angles" in _one_line_error(capsys)


def test_arrivals_figure_written(main, uniform_nc, tmp_path, capsys):
    png = tmp_path / "arrivals.png"
    args = [
        "paths",
        str(uniform_nc),
        "--source-depth",
        "50",
        "--receiver",
        "1km,80",
        "--receiver",
        "2km,150",
        "--plot",
        str(png),
    ]
    assert main(args) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert f"wrote {png}" in capsys.readouterr().out
    assert main(args) == 2  # kept without --overwrite
    assert "--overwrite" in _one_line_error(capsys)


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--receiver", "12km"], "--receiver"),
        (["--receiver", "12km,deep"], "--receiver"),
        (["--receiver", "-1km,20"], "--receiver"),
        (["--receiver", "1km,500"], "below the bottom"),
        (["--receiver", "1km,50", "--source-depth", "300"], "--source-depth"),
        (["--receiver", "1km,50", "--max-reflections", "-1"], "--max-reflections"),
    ],
)
def test_bad_input_one_line_exit_2(main, uniform_nc, capsys, extra, words):
    argv = ["paths", str(uniform_nc)] + extra
    if "--source-depth" not in extra:
        argv += ["--source-depth", "50"]
    assert main(argv) == 2
    assert words in _one_line_error(capsys)


def test_missing_profile(main, tmp_path, capsys):
    assert (
        main(["paths", str(tmp_path / "none.nc"), "--source-depth", "5", "--receiver", "1km,5"])
        == 2
    )
    assert "no such file" in _one_line_error(capsys)


def test_help_has_example_and_caution(main, capsys):
    with pytest.raises(SystemExit):
        main(["paths", "--help"])
    out = capsys.readouterr().out
    assert "example:" in out and "--receiver" in out and "Caution" in out


def test_search_rays_default_spacing_and_errors(main, uniform_nc, capsys):
    base = [
        "paths",
        str(uniform_nc),
        "--source-depth",
        "50",
        "--receiver",
        "1km,80",
        "--max-reflections",
        "0",
        "--json",
    ]
    assert main(base + ["--search-angles", "-10", "10"]) == 0  # every 0.05 deg
    (rec,) = json.loads(capsys.readouterr().out)["receivers"]
    assert len(rec["arrivals"]) == 1
    assert main(base + ["--search-rays", "100"]) == 2
    assert "--search-angles" in _one_line_error(capsys)
    assert main(base + ["--search-angles", "-10", "10", "--search-rays", "1"]) == 2
    assert "--search-rays" in _one_line_error(capsys)


def test_reading_options_and_figure_suffix(main, uniform_nc, tmp_path, capsys):
    from _cli_helpers import DEMO, RENAMED_OPTIONS, rewrite_cast

    renamed = rewrite_cast(
        DEMO / "shelf_summer_ctd.csv",
        tmp_path / "renamed.csv",
        header="col_a,col_b,col_c",
        pressure_scale=10.0,
    )
    argv = ["paths", str(renamed), "--source-depth", "20", "--receiver", "1km,30", "--json"]
    assert main(argv) == 2
    assert "--columns" in _one_line_error(capsys)
    assert main(argv + RENAMED_OPTIONS) == 0
    assert json.loads(capsys.readouterr().out)["receivers"][0]["arrivals"]
    assert (
        main(
            [
                "paths",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--receiver",
                "1km,80",
                "--plot",
                str(tmp_path / "arrivals.jpeg"),
            ]
        )
        == 2
    )
    assert "--plot" in _one_line_error(capsys)
