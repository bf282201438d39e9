"""Tests of seaprofile.layers.summary (describe, describe_dataset) on Profile Datasets."""

import json

import numpy as np
import pytest
import xarray as xr
from _layer_test_profiles import make_profile, munk

from seaprofile import _cf, layers
from seaprofile._validate import SeaprofileError


# --- describe on Profile Datasets ------------------------------------------------------
def _summer_shelf():
    z = np.arange(0.5, 120.0, 1.0)
    t = np.where(z <= 30.0, 17.0, 17.0 - 0.3 * (z - 30.0)).clip(10.5)
    return z, t


def test_describe_summer_shelf_profile():
    z, t = _summer_shelf()
    prof = make_profile(z, temperature=t, salinity=np.full(z.size, 35.2))
    d = layers.describe(prof, bottom_depth=119.5, transducer_depth=4.0)
    # crossing of the constructed profile: 30 + 0.2 / 0.3 m (de Boyer Montegut 2004)
    assert d["mixed_layer_depth_temperature"] == pytest.approx(30.0 + 0.2 / 0.3, abs=1e-6)
    assert 30.0 < d["mixed_layer_depth_density"] < 31.0
    assert d["surface_duct"] and d["sonic_layer_depth"] == pytest.approx(29.5)
    assert 0.010 < d["in_layer_gradient"] < 0.020
    assert d["below_layer_gradient"] < -0.3  # fitted over 50 m: thermocline and below
    assert d["duct_cutoff_frequency"] == pytest.approx(
        layers.duct_cutoff_frequency(29.5, d["sonic_layer_sound_speed"])
    )
    # isothermal water below 51.7 m: pressure alone raises c by ~1.07 m/s to the bottom,
    # enough (>= 1 m/s) for a weak channel on the first isothermal bin; never regains c(0)
    assert d["channel_axis_depth"] == 52.5
    assert d["critical_depth_surface"] is None
    assert d["harmonic_mean_sound_speed"] == pytest.approx(
        layers.harmonic_mean_sound_speed(prof.sound_speed.values, z, 4.0, 119.5)
    )
    json.dumps(d)  # JSON-friendly
    assert d["caution"] == _cf.CAUTION and d["units"]["duct_cutoff_frequency"] == "Hz"


def test_describe_ignores_flagged_and_nan_bins():
    z, t = _summer_shelf()
    prof = make_profile(z, temperature=t, salinity=np.full(z.size, 35.2))
    clean = layers.describe(prof)
    dirty = prof.copy(deep=True)
    dirty["temperature"][12] = 99.0
    dirty["temperature_qc"][12] = _cf.BAD
    dirty["sound_speed"][12] = 1700.0
    dirty["sound_speed_qc"][12] = _cf.BAD
    dirty["sound_speed"][60] = np.nan
    got = layers.describe(dirty)
    for k in ("mixed_layer_depth_temperature", "sonic_layer_depth", "max_sound_speed"):
        assert got[k] == pytest.approx(clean[k])
    assert prof["temperature"][12] != 99.0  # input untouched


def test_describe_estimated_bins():
    z = np.arange(0.0, 5001.0, 1.0)
    q = np.where(z > 4000.0, _cf.ESTIMATED, _cf.GOOD)
    prof = make_profile(z, sound=munk(z), flags=q)
    d = layers.describe(prof, bottom_depth=5000.0)
    assert d["critical_depth_surface"] > 4000.0
    assert any("estimated" in n for n in d["notes"])
    d = layers.describe(prof, bottom_depth=5000.0, include_estimated=False)
    assert d["critical_depth_surface"] is None


def test_describe_dataset_attributes():
    z, t = _summer_shelf()
    ds = layers.describe_dataset(make_profile(z, temperature=t), bottom_depth=119.5)
    # CF standard name table: the criterion-specific mixed layer names
    assert (
        ds["mixed_layer_depth_temperature"].attrs["standard_name"]
        == "ocean_mixed_layer_thickness_defined_by_temperature"
    )
    assert ds["duct_cutoff_frequency"].attrs["units"] == "Hz"
    assert ds["bottom_depth"].attrs["standard_name"] == "sea_floor_depth_below_sea_surface"
    assert "describe" in ds.attrs["processing_steps"]
    assert ds.attrs["caution"] == _cf.CAUTION


def test_describe_rejects_non_profiles():
    with pytest.raises(SeaprofileError):
        layers.describe(xr.Dataset({"x": ("sample", [1.0, 2.0])}))
