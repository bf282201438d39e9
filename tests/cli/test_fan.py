"""The `seaprofile fan` command: inputs (cast, profile, section), summary, outputs, errors."""

import json
import math

import numpy as np
import pytest
import xarray as xr

import seaprofile.cli as cli
from seaprofile import _cf
from seaprofile.casts.write import write


@pytest.fixture
def main(monkeypatch):
    """seaprofile.cli.main with the ray commands registered (until COMMANDS lists them)."""
    missing = [c for c in ("fan", "paths") if c not in cli.COMMANDS]
    if missing:
        monkeypatch.setattr(cli, "COMMANDS", cli.COMMANDS + missing)
    return cli.main


def make_profile(z, c, lat=44.0, lon=-9.6, pid="p1", bottom=None):
    """A Profile with the documented layout (dimension depth, sound_speed)."""
    attrs = _cf.base_attrs(featureType="profile")
    if bottom is not None:
        attrs["bottom_depth"] = float(bottom)
    return xr.Dataset(
        {"sound_speed": ("depth", np.asarray(c, float), _cf.attrs_for("sound_speed"))},
        coords={
            "depth": ("depth", np.asarray(z, float), _cf.attrs_for("depth")),
            "latitude": float(lat),
            "longitude": float(lon),
            "profile_id": pid,
        },
        attrs=attrs,
    )


def write_raw_cast(path, lat=44.0, lon=-9.6, bottom=160.0, seed=1):
    """A synthetic CTD cast (invented; a warm mixed layer over a thermocline) as CSV text."""
    rng = np.random.default_rng(seed)
    p = np.arange(1.0, 150.0, 0.5)
    t = 12.0 + 5.0 / (1.0 + np.exp((p - 35.0) / 4.0)) + rng.normal(0, 0.002, p.size)
    s = 35.3 + 0.002 * p / 150 + rng.normal(0, 0.001, p.size)
    lines = [
        "# note: SYNTHETIC test cast",
        "# instrument: ctd",
        f"# latitude: {lat}",
        f"# longitude: {lon}",
        f"# bottom_depth: {bottom}",
        "pressure [dbar],temperature [degC],salinity [PSS-78]",
    ]
    lines += [f"{a:.2f},{b:.4f},{c:.4f}" for a, b, c in zip(p, t, s)]
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.fixture
def uniform_nc(tmp_path):
    path = tmp_path / "uniform.nc"
    write(make_profile([0, 100, 200], [1500.0, 1500.0, 1500.0], bottom=200.0), path)
    return path


def _one_line_error(capsys):
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "error" in err
    return err


def test_raw_cast_summary_and_outputs(main, tmp_path, capsys):
    cast = write_raw_cast(tmp_path / "cast.csv")
    out_nc, png = tmp_path / "rays.nc", tmp_path / "fan.png"
    rc = main(
        [
            "fan",
            str(cast),
            "--source-depth",
            "30",
            "--angles",
            "-10",
            "10",
            "--rays",
            "21",
            "--range",
            "5km",
            "--out",
            str(out_nc),
            "--plot",
            str(png),
        ]
    )
    out = capsys.readouterr().out
    assert rc == 0
    assert "raw cast, built with the default settings" in out
    assert "rays traced: 21" in out
    assert "bottom flat (160 m at the source)" in out  # from the cast's own bottom depth
    assert "Caution" in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    fan = xr.load_dataset(out_nc)
    assert fan.sizes["ray"] == 21
    np.testing.assert_allclose(fan["launch_angle"], np.linspace(-10, 10, 21))
    assert fan.attrs["source_depth"] == 30.0 and fan.attrs["max_range"] == 5000.0
    assert not list(tmp_path.glob(".*"))  # no temporary files left behind


def test_sound_speed_probe_cast_with_depth_column_is_built(main, tmp_path, capsys):
    # a raw probe cast already has depth and sound speed; it is still a cast, not a profile
    rng = np.random.default_rng(3)
    z = np.arange(1.0, 120.0, 1.0)
    c = 1510.0 - 0.05 * z + rng.normal(0, 0.01, z.size)
    lines = [
        "# note: SYNTHETIC test cast",
        "# instrument: svp",
        "# latitude: 44.0",
        "# longitude: -9.6",
        "depth [m],sound speed [m/s]",
    ]
    lines += [f"{a:.2f},{b:.3f}" for a, b in zip(z, c)]
    path = tmp_path / "probe.csv"
    path.write_text("\n".join(lines) + "\n")
    assert (
        main(
            [
                "fan",
                str(path),
                "--source-depth",
                "10",
                "--angles",
                "-2",
                "2",
                "--rays",
                "3",
                "--range",
                "1km",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["input"].startswith("raw cast, built with the default settings")


def test_uniform_water_surface_reflection_geometry(main, uniform_nc, tmp_path, capsys):
    out_nc = tmp_path / "rays.nc"
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--angles",
                "-10",
                "10",
                "--rays",
                "2",
                "--range",
                "2km",
                "--out",
                str(out_nc),
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["rays"] == 2 and doc["ended"] == {"range_reached": 2}
    fan = xr.load_dataset(out_nc)
    kinds = fan["point_kind"].values
    up = int(np.flatnonzero(fan["launch_angle"].values < 0)[0])
    first_surface = fan["range"].values[up][kinds[up] == 3][0]
    # Straight rays in uniform water (elementary geometry, computed here): a ray leaving
    # 50 m at 10 deg upward meets the surface at 50 / tan(10 deg) m; 1e-6 m is far above
    # the closed-form solver's rounding.
    assert first_surface == pytest.approx(50.0 / math.tan(math.radians(10.0)), abs=1e-6)
    down = 1 - up
    first_bottom = fan["range"].values[down][kinds[down] == 4][0]
    assert first_bottom == pytest.approx(150.0 / math.tan(math.radians(10.0)), abs=1e-6)


def test_negative_angle_range_without_equals(main, uniform_nc, capsys):
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--angles",
                "-5",
                "5",
                "--rays",
                "3",
                "--range",
                "1km",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["launch_angles_deg"] == [-5.0, 5.0] and doc["rays"] == 3


def test_built_profile_csv_and_bottom_option(main, tmp_path, capsys):
    path = tmp_path / "prof.csv"
    write(make_profile([0, 50, 300], [1510.0, 1495.0, 1500.0]), path)
    assert (
        main(
            [
                "fan",
                str(path),
                "--source-depth",
                "20",
                "--bottom-depth",
                "250",
                "--angles",
                "-3",
                "3",
                "--rays",
                "7",
                "--range",
                "3000",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["input"].startswith("built profile")
    assert doc["environment"]["bottom_depth_at_source_m"] == 250.0
    assert sum(doc["ended"].values()) == 7


def test_section_directory_with_bathymetry_from_casts(main, tmp_path, capsys):
    folder = tmp_path / "line"
    folder.mkdir()
    for k in range(3):  # three casts 0.05 degree of latitude apart
        write(
            make_profile(
                [0, 40, 200],
                [1512.0 - k, 1500.0, 1497.0 + k],
                lat=44.0 + 0.05 * k,
                pid=f"c{k}",
                bottom=150.0 + 20 * k,
            ),
            folder / f"cast_{k}.nc",
        )
    png = tmp_path / "section.png"
    assert (
        main(
            [
                "fan",
                str(folder),
                "--source-depth",
                "30",
                "--angles",
                "-4",
                "4",
                "--rays",
                "5",
                "--range",
                "6km",
                "--plot",
                str(png),
                "--shade",
                "reflections",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["environment"]["casts"] == 3
    assert doc["environment"]["range_dependent"] is True
    assert doc["environment"]["bottom"] == "bathymetry"
    assert doc["environment"]["bottom_depth_at_source_m"] == pytest.approx(150.0)
    assert "section of 3 casts" in doc["input"]
    assert png.exists()


def test_one_file_of_several_profiles_is_a_section(main, tmp_path, capsys):
    path = tmp_path / "line.nc"
    write(
        [
            make_profile(
                [0, 40, 200],
                [1510.0 + k, 1500.0, 1498.0],
                lat=44.0,
                lon=-9.6 + 0.05 * k,
                pid=f"c{k}",
            )
            for k in range(2)
        ],
        path,
    )
    assert (
        main(
            [
                "fan",
                str(path),
                "--source-depth",
                "30",
                "--angles",
                "-4",
                "4",
                "--rays",
                "3",
                "--range",
                "3km",
                "--bottom-depth",
                "180",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["environment"]["casts"] == 2
    assert doc["environment"]["bottom"] == "flat"
    assert doc["environment"]["bottom_depth_at_source_m"] == 180.0


def test_section_without_positions_is_refused(main, tmp_path, capsys):
    path = tmp_path / "nowhere.nc"
    write(
        [
            make_profile([0, 200], [1500.0, 1490.0], lat=np.nan, lon=np.nan, pid=f"c{k}")
            for k in range(2)
        ],
        path,
    )
    assert main(["fan", str(path), "--source-depth", "30"]) == 2
    err = _one_line_error(capsys)
    assert "2 casts form a section" in err and "latitude/longitude" in err


def test_bathymetry_file_in_km(main, uniform_nc, tmp_path, capsys):
    bathy = tmp_path / "bottom.txt"
    bathy.write_text("# invented track\nrange_km, depth_m\n0, 200\n2, 120\n")
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--angles",
                "-2",
                "2",
                "--rays",
                "3",
                "--range",
                "2km",
                "--bathymetry",
                str(bathy),
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["environment"]["bottom"] == "bathymetry"
    assert doc["environment"]["range_dependent"] is True


def test_existing_output_kept_unless_overwrite(main, uniform_nc, tmp_path, capsys):
    target = tmp_path / "rays.nc"
    target.write_text("keep me")
    args = [
        "fan",
        str(uniform_nc),
        "--source-depth",
        "50",
        "--angles",
        "-2",
        "2",
        "--rays",
        "3",
        "--range",
        "1km",
        "--out",
        str(target),
    ]
    assert main(args) == 2
    assert "--overwrite" in _one_line_error(capsys)
    assert target.read_text() == "keep me"
    assert main(args + ["--overwrite"]) == 0
    assert xr.load_dataset(target).sizes["ray"] == 3


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--source-depth", "500"], "below the bottom"),
        (["--source-depth", "50", "--angles", "-95", "95", "--rays", "11"], "--angles"),
        (["--source-depth", "50", "--angles", "90", "90", "--rays", "1"], "--angles"),
        (["--source-depth", "50", "--angles", "a", "b"], "--angles"),
        (["--source-depth", "50", "--angles", "5", "-5"], "--angles"),
        (["--source-depth", "50", "--rays", "0"], "--rays"),
        (["--source-depth", "50", "--rays", "many"], "--rays"),
        (["--source-depth", "50", "--angles", "-5", "5", "--rays", "1"], "--rays"),
        (["--source-depth", "50", "--range", "far"], "--range"),
        (["--source-depth", "-5"], "--source-depth"),
        (["--source-depth", "50", "--bottom-depth", "-10"], "--bottom-depth"),
    ],
)
def test_bad_input_one_line_exit_2(main, uniform_nc, capsys, extra, words):
    assert main(["fan", str(uniform_nc), "--range", "1km"] + extra) == 2
    assert words in _one_line_error(capsys)


def test_missing_file_and_bad_bathymetry(main, uniform_nc, tmp_path, capsys):
    assert main(["fan", str(tmp_path / "nope.csv"), "--source-depth", "5"]) == 2
    assert "no such file" in _one_line_error(capsys)
    bad = tmp_path / "bad.txt"
    bad.write_text("range_m depth_m\n0 100\n500 deep\n")
    assert main(["fan", str(uniform_nc), "--source-depth", "5", "--bathymetry", str(bad)]) == 2
    err = _one_line_error(capsys)
    assert "bad.txt, line 3, column 2" in err


def test_help_has_example_and_caution(main, capsys):
    with pytest.raises(SystemExit) as stop:
        main(["fan", "--help"])
    assert stop.value.code == 0
    out = capsys.readouterr().out
    assert "example:" in out and "seaprofile fan" in out
    assert "Caution" in out and "--source-depth" in out


def test_old_colon_angle_syntax_is_gone(main, uniform_nc, capsys):
    # argparse itself refuses one value for LOW HIGH: still one line, exit status 2
    with pytest.raises(SystemExit) as stop:
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--angles",
                "-15:15:61",
                "--range",
                "1km",
            ]
        )
    assert stop.value.code == 2
    assert "--angles" in _one_line_error(capsys)


def test_bare_bathymetry_columns_refused(main, uniform_nc, tmp_path, capsys):
    bathy = tmp_path / "bottom.txt"
    bathy.write_text("0 200\n2 120\n")  # km or m? a file must say
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--range",
                "2km",
                "--bathymetry",
                str(bathy),
            ]
        )
        == 2
    )
    err = _one_line_error(capsys)
    assert "bottom.txt, line 1" in err and "range_km,depth_m" in err


def test_reading_options_on_raw_casts(main, tmp_path, capsys):
    from _cli_helpers import DEMO, RENAMED_OPTIONS, rewrite_cast

    renamed = rewrite_cast(
        DEMO / "shelf_summer_ctd.csv",
        tmp_path / "renamed.csv",
        header="col_a,col_b,col_c",
        pressure_scale=10.0,
    )
    argv = [
        "fan",
        str(renamed),
        "--source-depth",
        "20",
        "--angles",
        "-3",
        "3",
        "--rays",
        "5",
        "--range",
        "2km",
        "--json",
    ]
    assert main(argv) == 2
    assert "--columns" in _one_line_error(capsys)
    assert main(argv + RENAMED_OPTIONS) == 0
    assert json.loads(capsys.readouterr().out)["rays"] == 5
    unplaced = rewrite_cast(
        DEMO / "shelf_summer_ctd.csv", tmp_path / "unplaced.csv", drop=("latitude", "longitude")
    )
    argv[1] = str(unplaced)
    assert main(argv) == 2
    assert "latitude" in _one_line_error(capsys)
    assert main(argv + ["--latitude", "54"]) == 0


def test_unknown_figure_suffix_refused_before_any_work(main, uniform_nc, tmp_path, capsys):
    out_nc = tmp_path / "rays.nc"
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--range",
                "1km",
                "--out",
                str(out_nc),
                "--plot",
                str(tmp_path / "fan.xyz"),
            ]
        )
        == 2
    )
    err = _one_line_error(capsys)
    assert "--plot" in err and ".png" in err
    assert not out_nc.exists()


def test_tiny_range_step_refused_with_the_memory(main, uniform_nc, capsys):
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--range",
                "40km",
                "--range-step",
                "0.001",
            ]
        )
        == 2
    )
    err = _one_line_error(capsys)
    assert "--range-step" in err and "GB" in err and "memory" in err


def test_outputs_never_over_inputs(main, uniform_nc, tmp_path, capsys):
    before = uniform_nc.read_bytes()
    assert (
        main(
            [
                "fan",
                str(uniform_nc),
                "--source-depth",
                "50",
                "--range",
                "1km",
                "--out",
                str(uniform_nc),
                "--overwrite",
            ]
        )
        == 2
    )
    assert "input" in _one_line_error(capsys)
    assert (
        main(
            [
                "fan",
                str(tmp_path),
                "--source-depth",
                "50",
                "--range",
                "1km",
                "--plot",
                str(uniform_nc.with_suffix(".png")),
                "--out",
                str(tmp_path / "uniform.nc"),
                "--overwrite",
            ]
        )
        == 2
    )
    assert "--out" in _one_line_error(capsys)
    assert uniform_nc.read_bytes() == before
