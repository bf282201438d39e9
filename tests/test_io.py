"""seaprofile.io: loading profiles and sections, bathymetry, outputs, option checks."""

import os
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from seaprofile import InputFileError, io
from seaprofile.casts.write import write
from seaprofile.io.options import (
    FULL_OCEAN_DEPTH,
    check_build_options,
    check_read_options,
    check_scheduler,
)

DEMO = Path(__file__).resolve().parents[1] / "demo_casts"


# --- bathymetry ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "header, scale",
    [
        ("range_km,depth_m", 1000.0),
        ("range (m), depth (m)", 1.0),
        ("Range [km]; Depth [m]", 1000.0),
        ("range_m\tdepth_m", 1.0),
        ("range_m depth_m", 1.0),
    ],
)
def test_bathymetry_header_states_units(tmp_path, header, scale):
    sep = ";" if ";" in header else "\t" if "\t" in header else "," if "," in header else " "
    path = tmp_path / "b.txt"
    path.write_text(f"# invented track (synthetic)\n{header}\n0{sep}200\n2{sep}120\n")
    r, z = io.read_bathymetry(path)
    np.testing.assert_array_equal(r, [0.0, 2.0 * scale])
    np.testing.assert_array_equal(z, [200.0, 120.0])


@pytest.mark.parametrize(
    "text, line",
    [
        ("0,200\n2000,120\n", 1),  # bare columns: units would be a guess
        ("# note\nrange,depth\n0,200\n", 2),  # names without units
        ("depth_m,range_m\n200,0\n", 1),  # wrong order
        ("range_miles,depth_m\n0,200\n", 1),  # unknown unit
    ],
)
def test_bathymetry_without_units_is_refused(tmp_path, text, line):
    path = tmp_path / "bottom.txt"
    path.write_text(text)
    with pytest.raises(InputFileError) as err:
        io.read_bathymetry(path)
    assert err.value.line == line and "bottom.txt" in str(err.value)
    assert "range_km,depth_m" in str(err.value)


def test_bathymetry_bad_values_named_by_line_and_column(tmp_path):
    path = tmp_path / "b.txt"
    path.write_text("range_m,depth_m\n0,100\n500,deep\n")
    with pytest.raises(InputFileError) as err:
        io.read_bathymetry(path)
    assert (err.value.line, err.value.column) == (3, 2)
    path.write_text("range_m,depth_m\n0,100\n0,90\n")
    with pytest.raises(InputFileError, match="repeat"):
        io.read_bathymetry(path)
    path.write_text("range_m,depth_m\n0,-5\n")
    with pytest.raises(InputFileError, match="below the surface"):
        io.read_bathymetry(path)


def test_bathymetry_negative_range_named_by_line_and_column(tmp_path):
    path = tmp_path / "b.txt"
    path.write_text("# invented track (synthetic)\nrange_km,depth_m\n0,100\n-0.5,90\n")
    with pytest.raises(InputFileError, match="range") as err:
        io.read_bathymetry(path)
    assert (err.value.line, err.value.column) == (4, 1) and "b.txt" in str(err.value)


def test_bathymetry_repeated_range_names_both_lines(tmp_path):
    # 2 km and 2000 m are the same range once the header's units are applied
    path = tmp_path / "b.txt"
    path.write_text("range_m,depth_m\n2000,100\n0,80\n# note\n2000.0,90\n")
    with pytest.raises(InputFileError, match="repeat") as err:
        io.read_bathymetry(path)
    assert (err.value.line, err.value.column) == (5, 1)
    assert "line 2" in str(err.value) and "b.txt" in str(err.value)


def test_bathymetry_points_in_any_order_come_back_sorted(tmp_path):
    path = tmp_path / "b.txt"
    path.write_text("range_km,depth_m\n3,50\n0,100\n1.5,70\n")
    r, z = io.read_bathymetry(path)
    np.testing.assert_array_equal(r, [0.0, 1500.0, 3000.0])
    np.testing.assert_array_equal(z, [100.0, 70.0, 50.0])


# --- loading ---------------------------------------------------------------------------


def test_declared_kind_of_written_files(tmp_path):
    from seaprofile.casts.read import read_cast

    src = DEMO / "shelf_summer_ctd.csv"
    assert io.declared_kind(src) is None  # a raw cast says nothing
    profile = io.load_profile(src)
    cast = read_cast(src)
    for suffix in (".nc", ".csv", ".json"):
        write(profile, tmp_path / f"p{suffix}")
        write(cast, tmp_path / f"c{suffix}")
        assert io.declared_kind(tmp_path / f"p{suffix}") == "profile"
        assert io.declared_kind(tmp_path / f"c{suffix}") == "cast"


def test_load_profile_raw_and_built_agree(tmp_path):
    raw = io.load_profile(DEMO / "shelf_summer_ctd.csv")
    for suffix in (".nc", ".csv", ".json"):
        path = tmp_path / f"p{suffix}"
        write(raw, path)
        again = io.load_profile(path)
        np.testing.assert_allclose(again["sound_speed"].values, raw["sound_speed"].values)


def test_load_profile_takes_reading_and_building_options():
    fine = io.load_profile(DEMO / "shelf_summer_ctd.csv", bin_size=0.5, latitude=54.0)
    assert float(fine["latitude"]) == 54.0
    assert float(fine.attrs["bin_size"]) == 0.5


def test_load_section_from_demo_line():
    section = io.load_section(DEMO / "section")
    # demo_casts/README.md: ten casts 7.5 km apart on a line
    assert section.ranges.size == 10
    np.testing.assert_allclose(np.diff(section.ranges), 7500.0, rtol=0.02)
    with pytest.raises(io.ArgumentError) as err:
        io.load_section(DEMO / "shelf_summer_ctd.csv")
    assert err.value.argument == "paths"


def test_section_without_positions_names_the_argument(tmp_path):
    for k in range(2):
        text = (DEMO / "shelf_summer_ctd.csv").read_text().splitlines()
        kept = [ln for ln in text if not ln.startswith(("# latitude", "# longitude"))]
        (tmp_path / f"c{k}.csv").write_text("\n".join(kept) + "\n")
    with pytest.raises(io.ArgumentError) as err:
        io.load_input(tmp_path, latitude=54.0)
    assert err.value.argument == "paths" and "latitude/longitude" in err.value.reason


def test_load_environment_bottom_and_argument_errors():
    env, loaded = io.load_environment(DEMO / "shelf_summer_ctd.csv")
    assert float(env.bottom_at(0.0)) == pytest.approx(120.0)  # the cast's bottom_depth
    assert loaded.profile is not None and loaded.files == [DEMO / "shelf_summer_ctd.csv"]
    for kwargs, name in (
        ({"bottom_depth": -1.0}, "bottom_depth"),
        ({"thin_tolerance": -1.0}, "thin_tolerance"),
    ):
        with pytest.raises(io.ArgumentError) as err:
            io.load_environment(DEMO / "shelf_summer_ctd.csv", **kwargs)
        assert err.value.argument == name


# --- outputs ---------------------------------------------------------------------------


def test_an_input_is_never_an_output(tmp_path):
    src = tmp_path / "cast.csv"
    src.write_text("x")
    link = tmp_path / "link.csv"
    os.symlink(src, link)
    for target in (src, link, tmp_path / "sub" / ".." / "cast.csv"):
        with pytest.raises(io.ArgumentError, match="input"):
            io.check_output(target, overwrite=True, inputs=[src], argument="--out")
    assert io.check_output(tmp_path / "new.nc", inputs=[src]) == tmp_path / "new.nc"
    with pytest.raises(io.ArgumentError, match="exists"):
        io.check_output(src)
    assert io.is_same_file(link, src) and not io.is_same_file(tmp_path / "a", src)


def test_figure_suffix_checked_before_work(tmp_path):
    with pytest.raises(io.ArgumentError) as err:
        io.check_figure_path(tmp_path / "fan.xyz", argument="--plot")
    assert err.value.argument == "--plot" and ".png" in err.value.reason
    assert io.check_figure_path(tmp_path / "fan.PDF") == tmp_path / "fan.PDF"


@given(st.floats(1e-9, 1e-4))
def test_tiny_bins_refused_before_allocating(bin_size):
    # the estimate is plain arithmetic on the numbers: the allocation never happens
    with pytest.raises(io.MemoryLimitError) as err:
        check_build_options(bin_size=bin_size)
    assert err.value.argument == "bin_size"
    assert err.value.requested == io.profile_bytes(FULL_OCEAN_DEPTH, bin_size)
    assert err.value.requested > err.value.limit and "memory" in err.value.reason


def test_usual_bins_accepted():
    check_build_options(bin_size=0.1, extend_to=6000.0)
    check_build_options(bin_size=1.0, extend_to="bottom")


def test_fan_bytes_grow_with_rays_and_range():
    assert io.fan_bytes(10, 1000.0, 1.0) == 10 * io.fan_bytes(1, 1000.0, 1.0)
    assert io.fan_bytes(1, 2000.0, 1.0) > io.fan_bytes(1, 1000.0, 1.0)


@pytest.mark.parametrize(
    "kwargs, name",
    [
        ({"columns": "temperature"}, "columns"),
        ({"columns": "colour=red"}, "columns"),
        ({"columns": "temperature=T,pressure=T"}, "columns"),
        ({"units": "pressure=furlong"}, "units"),
        ({"latitude": 91.0}, "latitude"),
        ({"longitude": float("nan")}, "longitude"),
        ({"salinity": 50.0}, "salinity"),
        ({"fall_rate": "fast"}, "fall_rate"),
        ({"fall_rate": (6.0, -1.0)}, "fall_rate"),
        ({"instrument": "sonar"}, "instrument"),
    ],
)
def test_read_options_named_by_argument(kwargs, name):
    with pytest.raises(io.ArgumentError) as err:
        check_read_options(**kwargs)
    assert err.value.argument == name


def test_read_options_parsed():
    got = check_read_options(
        columns="temperature=T_deg,pressure=P", units="pressure=kPa", fall_rate=(6.691, 0.00225)
    )
    assert got == {
        "columns": {"temperature": "T_deg", "pressure": "P"},
        "units": {"pressure": "kPa"},
        "fall_rate": (6.691, 0.00225),
    }


def test_scheduler_names_checked():
    assert check_scheduler(None) is None
    with pytest.raises(io.ArgumentError) as err:
        check_scheduler("bogus")
    assert err.value.argument == "scheduler" and "threads" in err.value.reason


def test_argument_error_survives_pickling():
    import pickle

    err = io.MemoryLimitError("bin_size", "too small", 10, 5)
    again = pickle.loads(pickle.dumps(err))
    assert (again.argument, again.reason, again.requested, again.limit) == (
        "bin_size",
        "too small",
        10,
        5,
    )
