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


def test_flag_table_agrees_with_isin_for_every_byte():
    # the 256-entry look-up describe uses (_cf.flags_in) against numpy.isin on the Argo
    # flags of _cf, every int8 and uint8 value (exhaustive); wider integers take
    # numpy.isin (no wrap)
    for flags in (_cf.UNUSABLE_FLAGS, _cf.NOT_MEASURED_FLAGS):
        for dtype in (np.int8, np.uint8):
            q = np.arange(256).astype(dtype)
            np.testing.assert_array_equal(_cf.flags_in(q, flags), np.isin(q, flags))
        q = np.array([-253, 3, 259, 9, 8, 264, 4, 1], dtype=np.int64)
        np.testing.assert_array_equal(_cf.flags_in(q, flags), np.isin(q, flags))


def test_describe_same_for_byte_and_wide_integer_flags():
    z, t = _summer_shelf()
    prof = make_profile(z, temperature=t, salinity=np.full(z.size, 35.2))
    prof["temperature"][12] = 99.0
    prof["temperature_qc"][12] = _cf.BAD
    prof["sound_speed_qc"][40] = _cf.MISSING
    wide = prof.copy(deep=True)
    for q in ("temperature_qc", "salinity_qc", "sound_speed_qc"):
        if q in wide:
            wide[q] = wide[q].astype(np.int64)
    assert prof["temperature_qc"].dtype == np.int8
    assert layers.describe(wide) == layers.describe(prof)


@pytest.mark.parametrize("mixed", [30.0, 400.0, None])
def test_describe_density_mixed_layer_equals_the_public_functions(mixed):
    # describe computes sigma0 only as deep as the crossing needs (first 128 bins, then
    # the rest): the same number as gsw's sigma0 of the whole column through
    # mixed_layer_depth_density, for a shallow layer, one deeper than 128 bins and a
    # column that never crosses (de Boyer Montegut et al. 2004 criterion; exact equality)
    from seaprofile.seawater.state import potential_density_anomaly

    z = np.arange(0.0, 600.0, 1.0)  # uniform water: sigma0 rises 0.016 kg/m3 by 600 m
    t = np.full(z.size, 12.0) if mixed is None else np.where(z <= mixed, 15.0, 10.0)
    prof = make_profile(z, temperature=t, salinity=np.full(z.size, 35.0))
    sigma = potential_density_anomaly(t, prof.salinity.values, prof.pressure.values, 45.0, -10.0)
    want, end = layers.mixed_layer_depth_density(sigma, z, return_reached_end=True)
    d = layers.describe(prof)
    assert d["mixed_layer_depth_density"] == want
    assert end == (mixed is None)
    assert any("density never rises" in n for n in d["notes"]) == bool(end)


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
