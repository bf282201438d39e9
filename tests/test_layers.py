"""Tests of seaprofile.layers against closed forms, the Munk profile and scipy."""

import json

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st
from scipy.integrate import quad
from scipy.optimize import brentq

from seaprofile import _cf, layers
from seaprofile._validate import SeaprofileError
from seaprofile.seawater.depth import pressure_from_depth
from seaprofile.seawater.soundspeed import sound_speed


# --- helpers ---------------------------------------------------------------------------
def munk(z):
    """Munk (1974), JASA 55, 220-226: c = 1500[1 + 0.00737(eta + exp(-eta) - 1)],
    eta = 2(z - 1300)/1300 (the canonical parameters)."""
    eta = 2.0 * (np.asarray(z, dtype=float) - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def make_profile(depth, *, temperature=None, salinity=None, sound=None, flags=None,
                 latitude=45.0, longitude=-10.0, name="test cast"):
    """A Profile Dataset as described in DEVELOPERS.md ("The data model")."""
    z = np.asarray(depth, dtype=float)
    n = z.size
    t = np.full(n, 10.0) if temperature is None else np.asarray(temperature, float)
    s = np.full(n, 35.0) if salinity is None else np.asarray(salinity, float)
    p = np.asarray(pressure_from_depth(z, latitude), dtype=float)
    c = np.asarray(sound_speed(t, s, p), float) if sound is None else np.asarray(sound, float)
    q = np.ones(n, np.int8) if flags is None else np.asarray(flags, np.int8)
    data = {
        "sound_speed": ("depth", c, _cf.attrs_for("sound_speed")),
        "temperature": ("depth", t, _cf.attrs_for("temperature")),
        "salinity": ("depth", s, _cf.attrs_for("salinity")),
        "pressure": ("depth", p, _cf.attrs_for("pressure")),
        "samples_per_bin": ("depth", np.where(q == _cf.ESTIMATED, 0, 24).astype(np.int32)),
    }
    for v in ("sound_speed", "temperature", "salinity", "pressure"):
        data[f"{v}_qc"] = ("depth", q.copy(), _cf.flag_attrs(v))
    coords = {
        "depth": ("depth", z, _cf.attrs_for("depth")),
        "latitude": ((), latitude),
        "longitude": ((), longitude),
        "time": ((), np.datetime64("2031-07-14T09:12:00", "ns")),
        "profile_id": ((), name, {"cf_role": "profile_id"}),
    }
    est = z[q == _cf.ESTIMATED]
    attrs = _cf.base_attrs(featureType="profile", equation="chen_millero1977",
                           depth_method="unesco1983", cast_name=name,
                           cast_max_depth=float(est.min() if est.size else z.max()))
    return xr.Dataset(data, coords=coords, attrs=attrs)


# --- mixed layer depth -----------------------------------------------------------------
@given(h=st.integers(11, 80), g=st.floats(0.01, 1.0))
def test_mixed_layer_temperature_piecewise_linear(h, g):
    # de Boyer Montegut et al. (2004), JGR 109, C12003, doi:10.1029/2004JC002378:
    # |T(z) - T(10 m)| = 0.2 degC, linear interpolation. For T = 20 above h and
    # 20 - g (z - h) below, sampled every 1 m with a node at h, the crossing is exactly
    # h + 0.2 / g (linear between nodes), so only rounding error is allowed.
    z = np.arange(0.0, 400.0, 1.0)
    t = 20.0 - g * np.maximum(z - h, 0.0)
    assert layers.mixed_layer_depth(t, z) == pytest.approx(h + 0.2 / g, abs=1e-9)


def test_mixed_layer_temperature_exponential_profile():
    # de Boyer Montegut et al. (2004) criterion on T = 18 - A(1 - exp(-(z-10)/L)) below
    # 10 m: closed-form crossing 10 - L ln(1 - 0.2/A). Sampled every 0.05 m, linear
    # interpolation errs by at most dz^2 |T''| / (8 |T'|) = 0.05^2 / (8 L) < 1e-4 m.
    A, L = 5.0, 12.0
    z = np.arange(0.0, 200.0, 0.05)
    t = 18.0 - A * (1.0 - np.exp(-np.maximum(z - 10.0, 0.0) / L))
    expected = 10.0 - L * np.log(1.0 - 0.2 / A)
    assert layers.mixed_layer_depth(t, z) == pytest.approx(expected, abs=1e-4)


def test_mixed_layer_temperature_counts_warming_and_reference_interpolation():
    # The temperature criterion is on |delta T| (de Boyer Montegut et al. 2004): a
    # warming of 0.2 degC also ends the layer. Samples at 0.5, 1.5, ... m: the 10 m
    # reference is interpolated (T is constant above 30 m, so it is 10.0 exactly).
    z = np.arange(0.5, 300.0, 1.0)
    t = 10.0 + 0.05 * np.maximum(z - 30.5, 0.0)
    assert layers.mixed_layer_depth(t, z) == pytest.approx(30.5 + 0.2 / 0.05, abs=1e-9)


@given(h=st.integers(11, 80), k=st.floats(0.001, 0.5))
def test_mixed_layer_density_piecewise_linear(h, k):
    # de Boyer Montegut et al. (2004): sigma-theta(z) - sigma-theta(10 m) = 0.03 kg/m3.
    z = np.arange(0.0, 400.0, 1.0)
    sigma = 26.0 + k * np.maximum(z - h, 0.0)
    assert layers.mixed_layer_depth_density(sigma, z) == pytest.approx(h + 0.03 / k, abs=1e-9)


def test_mixed_layer_vectorised_nan_and_end():
    z = np.arange(0.0, 200.0, 1.0)
    hs = np.array([15.0, 40.0, 90.0])
    t = 20.0 - 0.1 * np.maximum(z[None, :] - hs[:, None], 0.0)
    t[1, 5] = np.nan  # a missing bin well above the crossing changes nothing
    got = layers.mixed_layer_depth(t, z)
    assert got.shape == (3,)
    np.testing.assert_allclose(got, hs + 2.0, atol=1e-9)
    # isothermal: no crossing; the deepest valid depth with reached_end True
    mld, end = layers.mixed_layer_depth(np.full(z.size, 12.0), z, return_reached_end=True)
    assert end and mld == z[-1]
    # no data at or above the reference depth: undefined
    assert np.isnan(layers.mixed_layer_depth(np.where(z < 12, np.nan, 12.0), z))


def test_mixed_layer_rejects_bad_depth():
    with pytest.raises(SeaprofileError, match="depth"):
        layers.mixed_layer_depth([1.0, 2.0, 3.0], [0.0, 5.0, 5.0])


# --- sonic layer, gradients, duct ------------------------------------------------------
def test_sonic_layer_and_gradients_on_a_constructed_duct():
    # c rises 0.016 1/s to H = 35 m then falls 0.1 1/s: the near-surface maximum is at H
    # (Helber et al. 2008, JGR 113: sonic layer depth = near-surface sound-speed maximum)
    # and least-squares slopes of exactly linear pieces are exact.
    z = np.arange(0.0, 300.0, 1.0)
    c = np.where(z <= 35, 1500 + 0.016 * z, 1500 + 0.016 * 35 - 0.1 * (z - 35))
    sld, csld = layers.sonic_layer_depth(c, z)
    assert sld == 35.0 and csld == pytest.approx(1500.56)
    g_in, g_below = layers.layer_gradients(z, c, sld)
    assert g_in == pytest.approx(0.016, abs=1e-12)
    assert g_below == pytest.approx(-0.1, abs=1e-12)
    # decreasing from the surface: layer depth is the first sample (no duct)
    assert layers.sonic_layer_depth(1500 - 0.05 * z, z)[0] == 0.0
    # noise below the tolerance does not end the layer early
    rng = np.random.default_rng(1)
    noisy = c + rng.normal(0, 0.02, z.size)
    assert abs(layers.sonic_layer_depth(noisy, z)[0] - 35.0) <= 3.0


def test_duct_cutoff_frequency_rule():
    # common practice, no source: trapping rule lambda_max = 8.5e-3 H^1.5 (lambda, H in m),
    # f_min = c / lambda_max; about 1.07 kHz for a 30 m layer at 1500 m/s.
    f = layers.duct_cutoff_frequency(30.0, 1500.0)
    assert f == pytest.approx(1500.0 / (8.5e-3 * 30.0**1.5), rel=1e-12)
    assert f == pytest.approx(1070.0, rel=0.01)
    # vectorised; thicker ducts trap lower frequencies; no duct -> NaN
    f = layers.duct_cutoff_frequency(np.array([10.0, 50.0, 100.0, 0.0]))
    assert f[0] > f[1] > f[2] and np.isnan(f[3])


# --- channels, critical depth, depth excess on the Munk profile -------------------------
Z_MUNK = np.arange(0.0, 5001.0, 1.0)


def test_munk_channel_axis():
    # Munk (1974), JASA 55, 220: the axis of the canonical profile is at z1 = 1300 m.
    ch = layers.sound_channels(Z_MUNK, munk(Z_MUNK))
    assert ch["axis_depth"] == 1300.0
    assert ch["axis_speed"] == pytest.approx(1500.0, abs=1e-9)
    assert np.isnan(ch["secondary_depth"])


def test_munk_critical_depth_and_depth_excess():
    # Munk (1974), JASA 55, 220 profile; the depth below the axis where c(z) = c(0) is
    # found independently with scipy.optimize.brentq on the closed form. The profile is
    # sampled every 1 m and interpolated linearly: |c''| < 1e-4 1/(m s) there, so the
    # interpolation error is far below the 0.01 m tolerance.
    c = munk(Z_MUNK)
    expected = brentq(lambda z: munk(z) - munk(0.0), 1300.0, 5000.0, xtol=1e-10)
    got = layers.critical_depth(Z_MUNK, c, c[0], 1300.0)
    assert got == pytest.approx(expected, abs=0.01)
    assert layers.depth_excess(5000.0, got) == pytest.approx(5000.0 - expected, abs=0.01)
    assert layers.depth_excess(4000.0, got) < 0
    assert layers.depth_excess(5000.0, np.nan) is None

    d = layers.describe(make_profile(Z_MUNK, sound=c), bottom_depth=5000.0,
                        source_depth=300.0)
    assert d["channel_axis_depth"] == 1300.0
    assert d["critical_depth_surface"] == pytest.approx(expected, abs=0.01)
    assert d["depth_excess_surface"] == pytest.approx(5000.0 - expected, abs=0.01)
    # the source's conjugate depth: c(z) = c(300 m) below the axis (brentq, closed form)
    conj = brentq(lambda z: munk(z) - munk(300.0), 1300.0, 5000.0, xtol=1e-10)
    assert d["source_sound_speed"] == pytest.approx(munk(300.0), abs=1e-6)
    assert d["critical_depth_source"] == pytest.approx(conj, abs=0.01)
    # a source below the axis has its conjugate above it
    d = layers.describe(make_profile(Z_MUNK, sound=c), source_depth=3000.0)
    conj = brentq(lambda z: munk(z) - munk(3000.0), 0.0, 1300.0, xtol=1e-10)
    assert d["critical_depth_source"] == pytest.approx(conj, abs=0.01)


def test_critical_depth_not_reached():
    z = np.arange(0.0, 3001.0, 1.0)
    d = layers.describe(make_profile(z, sound=munk(z)), bottom_depth=3000.0)
    assert d["channel_axis_depth"] == 1300.0
    assert d["critical_depth_surface"] is None and d["depth_excess_surface"] is None


def test_secondary_channel_rule():
    # Our documented rule: a second local minimum rising >= 1 m/s on its lower side,
    # with a trapping region >= 10 m thick. A 4 m/s Gaussian dip at 400 m qualifies.
    c = munk(Z_MUNK) - 4.0 * np.exp(-(((Z_MUNK - 400.0) / 40.0) ** 2))
    ch = layers.sound_channels(Z_MUNK, c)
    assert ch["axis_depth"] == 1300.0
    assert abs(ch["secondary_depth"] - 400.0) < 20.0
    assert ch["secondary_contrast"] > 1.0 and ch["secondary_thickness"] >= 10.0
    # a 0.3 m/s wiggle does not
    c = munk(Z_MUNK) - 0.3 * np.exp(-(((Z_MUNK - 400.0) / 40.0) ** 2))
    assert np.isnan(layers.sound_channels(Z_MUNK, c)["secondary_depth"])


def test_no_axis_when_speed_decreases_to_the_end():
    z = np.arange(0.0, 120.0, 1.0)
    ch = layers.sound_channels(z, 1500.0 - 0.1 * z)
    assert np.isnan(ch["axis_depth"]) and ch["still_decreasing"]


# --- harmonic mean ---------------------------------------------------------------------
@given(c0=st.floats(1400.0, 1600.0), g=st.floats(-0.2, 0.2),
       z1=st.floats(0.0, 400.0), dz=st.floats(0.5, 600.0))
def test_harmonic_mean_linear_profile(c0, g, z1, dz):
    # Closed form for c = c0 + g z (textbook integral of 1/(c0 + g z)):
    # (z2 - z1) / integral(dz / c) = (z2 - z1) g / ln(c(z2) / c(z1)); c0 when g = 0.
    # Irregular nodes, z1 and z2 between nodes; relative tolerance 1e-10 (rounding only).
    z = np.unique(np.concatenate([[0.0, 1000.0], np.linspace(0, 1000, 37) ** 1.02 / 1.15]))
    z2 = z1 + dz
    c = c0 + g * z
    got = layers.harmonic_mean_sound_speed(z, c, z1, z2)
    if abs(g) < 1e-12:
        expected = c0
    else:
        # ln(c2/c1) written as log1p(g (z2 - z1) / c1) to avoid cancellation for tiny g
        expected = (z2 - z1) * g / np.log1p(g * (z2 - z1) / (c0 + g * z1))
    assert got == pytest.approx(expected, rel=1e-10)


def test_harmonic_mean_against_quadrature_and_vectorised():
    # scipy.integrate.quad of 1/c over the piecewise-linear Munk profile (nodes every
    # 50 m): independent of our segment formula; quad converges to ~1e-12 relative.
    z = np.arange(0.0, 5001.0, 50.0)
    c = munk(z)
    bottoms = np.array([10.0, 333.0, 1300.0, 4444.4])
    got = layers.harmonic_mean_sound_speed(z, c, 5.0, bottoms)
    for b, value in zip(bottoms, got):
        integral, _ = quad(lambda x: 1.0 / np.interp(x, z, c), 5.0, b, points=z[z < b],
                           limit=200, epsabs=0, epsrel=1e-13)
        assert value == pytest.approx((b - 5.0) / integral, rel=1e-10)
    # equal depths give the local speed; below the profile gives NaN
    assert layers.harmonic_mean_sound_speed(z, c, 100.0, 100.0) == pytest.approx(
        np.interp(100.0, z, c))
    assert np.isnan(layers.harmonic_mean_sound_speed(z, c, 0.0, 6000.0))


@given(st.lists(st.floats(1450.0, 1550.0), min_size=3, max_size=30),
       st.floats(0.0, 1.0), st.floats(0.0, 1.0))
def test_harmonic_mean_between_extremes(speeds, a, b):
    z = np.arange(len(speeds), dtype=float) * 7.0
    c = np.array(speeds)
    top, bottom = sorted((a * z[-1], b * z[-1]))
    hm = layers.harmonic_mean_sound_speed(z, c, top, bottom)
    assert c.min() - 1e-9 <= hm <= c.max() + 1e-9


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
        layers.duct_cutoff_frequency(29.5, d["sonic_layer_sound_speed"]))
    # isothermal water below 51.7 m: pressure alone raises c by ~1.07 m/s to the bottom,
    # enough (>= 1 m/s) for a weak channel on the first isothermal bin; never regains c(0)
    assert d["channel_axis_depth"] == 52.5
    assert d["critical_depth_surface"] is None
    assert d["harmonic_mean_sound_speed"] == pytest.approx(
        layers.harmonic_mean_sound_speed(z, prof.sound_speed.values, 4.0, 119.5))
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
    assert ds["mixed_layer_depth_temperature"].attrs["standard_name"] == \
        "ocean_mixed_layer_thickness"
    assert ds["duct_cutoff_frequency"].attrs["units"] == "Hz"
    assert ds["bottom_depth"].attrs["standard_name"] == "sea_floor_depth_below_sea_surface"
    assert "describe" in ds.attrs["processing_steps"]
    assert ds.attrs["caution"] == _cf.CAUTION


def test_describe_rejects_non_profiles():
    with pytest.raises(SeaprofileError):
        layers.describe(xr.Dataset({"x": ("sample", [1.0, 2.0])}))


def test_dataarray_and_dask_layer():
    # xarray layer: the same numbers as the numpy layer, lazily with dask
    da = pytest.importorskip("dask.array")
    z = np.arange(0.0, 200.0, 1.0)
    hs = np.array([15.0, 40.0, 90.0, 120.0])
    t = 20.0 - 0.1 * np.maximum(z[None, :] - hs[:, None], 0.0)
    arr = xr.DataArray(t, dims=("station", "depth"), coords={"depth": z})
    got = layers.mixed_layer_depth(arr)
    np.testing.assert_allclose(got.values, hs + 2.0, atol=1e-9)
    assert got.attrs["standard_name"] == "ocean_mixed_layer_thickness"
    lazy = layers.mixed_layer_depth(arr.chunk({"station": 2}))
    assert isinstance(lazy.data, da.Array)
    np.testing.assert_allclose(lazy.compute().values, hs + 2.0, atol=1e-9)
    c = xr.DataArray(np.where(z <= 35, 1500 + 0.016 * z, 1500.56 - 0.1 * (z - 35)),
                     dims="depth", coords={"depth": z})
    assert float(layers.sonic_layer_depth(c)) == 35.0
