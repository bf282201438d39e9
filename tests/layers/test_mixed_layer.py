"""Tests of seaprofile.layers.mixed (mixed and sonic layers, gradients, duct cut-off)
against closed forms."""

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st

from seaprofile import layers
from seaprofile._validate import SeaprofileError


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
    g_in, g_below = layers.layer_gradients(c, z, sld)
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


# --- xarray layer ----------------------------------------------------------------------
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
    c = xr.DataArray(
        np.where(z <= 35, 1500 + 0.016 * z, 1500.56 - 0.1 * (z - 35)),
        dims="depth",
        coords={"depth": z},
    )
    sld, speed = layers.sonic_layer_depth(c)  # xarray: (depth, speed) as for numpy
    assert float(sld) == 35.0 and float(speed) == pytest.approx(1500.56)
