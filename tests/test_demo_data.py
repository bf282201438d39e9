"""The synthetic demo casts: reproducible, marked synthetic, readable, fit for their purpose."""

import importlib.util
import warnings
from pathlib import Path

import numpy as np
import pytest

DEMO = Path(__file__).resolve().parents[1] / "demo_casts"
DATA_FILES = sorted(p for p in DEMO.rglob("*.csv"))
GOOD_FILES = [p for p in DATA_FILES if p.parent.name != "broken"]


def _generator():
    spec = importlib.util.spec_from_file_location("demo_generate", DEMO / "generate.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _header(path):
    meta = {}
    with open(path, encoding="utf-8") as f:
        for line in f:
            if not line.startswith("#"):
                break
            key, _, value = line[1:].partition(":")
            meta[key.strip()] = value.strip()
    return meta


def test_expected_files_present_and_modest():
    names = {p.relative_to(DEMO).as_posix() for p in DATA_FILES}
    for name in (
        "deep_ocean_ctd.csv",
        "shelf_summer_ctd.csv",
        "shelf_winter_ctd.csv",
        "xbt_drop.csv",
        "svp_cast.csv",
        "messy/messy_shelf_ctd.csv",
        "messy/messy_deep_ctd.csv",
        "messy/stuck_salinity_ctd.csv",
        "broken/bad_number.csv",
    ):
        assert name in names
    assert len([n for n in names if n.startswith("section/")]) == 10
    assert sum(p.stat().st_size for p in DATA_FILES) < 3_000_000


def test_regeneration_is_byte_identical(tmp_path):
    _generator().main(["--output", str(tmp_path)])
    made = sorted(p.relative_to(tmp_path) for p in tmp_path.rglob("*.csv"))
    assert made == [p.relative_to(DEMO) for p in DATA_FILES]
    for rel in made:
        assert (tmp_path / rel).read_bytes() == (DEMO / rel).read_bytes(), rel


@pytest.mark.parametrize("path", DATA_FILES, ids=lambda p: p.relative_to(DEMO).as_posix())
def test_every_file_says_synthetic_and_has_metadata(path):
    meta = _header(path)
    assert meta["note"].startswith("SYNTHETIC")
    assert "synthetic" in meta["survey"]
    for key in (
        "cast_name",
        "vessel",
        "instrument",
        "latitude",
        "longitude",
        "time",
        "bottom_depth",
    ):
        assert meta[key], key
    assert meta["time"].endswith("Z")
    np.datetime64(meta["time"].rstrip("Z"))  # ISO 8601
    assert -90 <= float(meta["latitude"]) <= 90


@pytest.mark.parametrize("path", GOOD_FILES, ids=lambda p: p.relative_to(DEMO).as_posix())
def test_every_good_file_reads(path):
    read = pytest.importorskip("seaprofile.casts.read")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cast = read.read_cast(path)
    meta = _header(path)
    assert cast.attrs["instrument"] == meta["instrument"]
    assert cast.attrs["cast_name"] == meta["cast_name"]
    assert float(cast["latitude"]) == pytest.approx(float(meta["latitude"]))
    assert cast.sizes["sample"] > 50


def test_broken_file_fails_on_the_known_line():
    read = pytest.importorskip("seaprofile.casts.read")
    from seaprofile import InputFileError

    line = _generator().BROKEN_LINE
    with pytest.raises(InputFileError) as err:
        read.read_cast(DEMO / "broken" / "bad_number.csv")
    assert err.value.line == line
    assert "temperature" in str(err.value.column) or err.value.column == 2


def test_xbt_drop_follows_the_fall_rate():
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: z = 6.691 t - 2.25e-3 t^2;
    # the drop was generated to reach 760 m (within one 0.1 s sample, < 0.7 m).
    path = DEMO / "xbt_drop.csv"
    data = np.loadtxt(path, delimiter=",", skiprows=len(_header(path)) + 1)
    t = data[:, 0]
    assert np.all(np.diff(t) > 0)
    z_end = 6.691 * t[-1] - 2.25e-3 * t[-1] ** 2
    assert 759.0 < z_end <= 760.0


def _profile(name):
    pytest.importorskip("seaprofile.profile")
    from seaprofile.casts.read import read_cast
    from seaprofile.profile import build_profile

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cast = read_cast(DEMO / name)
        return build_profile(cast, extend_to=float(cast.attrs["bottom_depth"]))


def test_demo_casts_show_what_they_are_for():
    from seaprofile import layers

    summer = layers.describe(_profile("shelf_summer_ctd.csv"), bottom_depth=120.0)
    assert summer["surface_duct"] and 25.0 < summer["sonic_layer_depth"] < 40.0
    assert 30.0 < summer["mixed_layer_depth_temperature"] < 40.0
    winter = layers.describe(_profile("shelf_winter_ctd.csv"), bottom_depth=150.0)
    assert winter["sonic_layer_depth"] > 140.0
    deep = layers.describe(_profile("deep_ocean_ctd.csv"), bottom_depth=5012.0)
    assert 600.0 < deep["channel_axis_depth"] < 1300.0
    assert deep["depth_excess_surface"] > 500.0


def test_swath_line_regenerates_and_says_synthetic(tmp_path):
    _generator().swath_line(tmp_path)
    rel = Path("swath") / "line07_beams.txt"
    assert (tmp_path / rel).read_bytes() == (DEMO / rel).read_bytes()
    meta = _header(DEMO / rel)
    assert meta["note"].startswith("SYNTHETIC") and "synthetic" in meta["survey"]
