"""Thin gsw wrappers: identity with gsw, a published PSS-78 check value, sanity."""

import dask.array as da
import gsw
import numpy as np
import pytest
import xarray as xr

from seaprofile import SeaprofileError
from seaprofile.seawater.state import (
    absolute_salinity,
    buoyancy_frequency_squared,
    density,
    potential_density_anomaly,
    salinity_from_conductivity,
)

# an invented, smooth profile (not data): warm surface layer over cold deep water
P = np.linspace(0.0, 2000.0, 41)
T = 2.5 + 20.0 * np.exp(-P / 400.0)
S = 34.6 + 0.8 * np.exp(-P / 600.0)
LAT, LON = 24.0, -38.0


def test_pss78_check_value():
    # Lewis & Perkin (1981), Deep-Sea Res. 28A; Fofonoff & Millard (1983), Unesco Tech.
    # Pap. Mar. Sci. 44, SAL78 check value: S = 40.0000 at R = 1.888091, T68 = 40 degC,
    # 10000 dbar. C = R * 42.914 mS/cm, T90 = T68 / 1.00024. Printed to 1e-4: tolerance 5e-5.
    s = salinity_from_conductivity(1.888091 * 42.914, 40.0 / 1.00024, 10000.0)
    assert s == pytest.approx(40.0, abs=5e-5)


def test_salinity_from_conductivity_is_gsw():
    c = np.array([30.0, 42.914, 55.0, np.nan])
    t = np.array([5.0, 15.0, 25.0, 10.0])
    p = np.array([1000.0, 0.0, 10.0, 5.0])
    # gsw (TEOS-10 reference library) SP_from_C: the wrapper must be exactly it
    np.testing.assert_array_equal(salinity_from_conductivity(c, t, p), gsw.SP_from_C(c, t, p))


def test_absolute_salinity_with_and_without_position():
    # gsw: SA_from_SP with a position, SR_from_SP (35.16504/35 * SP) without one
    np.testing.assert_array_equal(absolute_salinity(S, P, LAT, LON), gsw.SA_from_SP(S, P, LON, LAT))
    np.testing.assert_array_equal(absolute_salinity(S, P), gsw.SR_from_SP(S))
    # a NaN position is unknown and refused (one rule for every function); a Cast without
    # a fix passes None, which means reference salinity
    with pytest.raises(SeaprofileError, match="latitude is NaN"):
        absolute_salinity(S, P, np.nan, np.nan)


def test_density_and_sigma0_are_gsw():
    sa = gsw.SA_from_SP(S, P, LON, LAT)
    ct = gsw.CT_from_t(sa, T, P)
    # gsw (TEOS-10 reference library): rho(SA, CT, p) and sigma0(SA, CT)
    np.testing.assert_array_equal(density(T, S, P, LAT, LON), gsw.rho(sa, ct, P))
    np.testing.assert_array_equal(potential_density_anomaly(T, S, P, LAT, LON), gsw.sigma0(sa, ct))
    sr = gsw.SR_from_SP(S)
    np.testing.assert_array_equal(density(T, S, P), gsw.rho(sr, gsw.CT_from_t(sr, T, P), P))


def test_density_sanity():
    t = np.linspace(3.0, 5.0, 2001)
    rho = density(t, 0.0, 0.0)
    # from memory: pure water is densest, about 999.975 kg/m3, near 3.98 degC (e.g. Tanaka
    # et al. 2001, Metrologia 38, 301). TEOS-10 gives 999.976 at 3.974 degC; tolerances
    # 0.005 kg/m3 and 0.05 degC cover the 3-4 printed digits of the recalled value.
    assert rho.max() == pytest.approx(999.975, abs=5e-3)
    assert t[rho.argmax()] == pytest.approx(3.98, abs=0.05)
    # from memory: standard sea water (S 35, 0 degC, surface) 1028.106 kg/m3 (EOS-80
    # sigma_t 28.106); TEOS-10 gives 1028.107. Tolerance 0.005 kg/m3.
    assert density(0.0, 35.0, 0.0) == pytest.approx(1028.106, abs=5e-3)
    # sigma0 is in-situ density at the surface minus 1000 kg/m3 (definition)
    assert potential_density_anomaly(10.0, 35.0, 0.0) == pytest.approx(
        density(10.0, 35.0, 0.0) - 1000.0, abs=1e-9
    )
    # compressibility: in-situ density grows with pressure (about 4.5 kg/m3 per 1000 dbar)
    assert density(10.0, 35.0, 1000.0) > density(10.0, 35.0, 0.0) + 4.0
    # argument order (temperature, salinity, ...): warmer is lighter, saltier is heavier
    assert density(20.0, 35.0, 0.0) < density(10.0, 35.0, 0.0) < density(10.0, 36.0, 0.0)


def test_buoyancy_frequency_squared_numpy():
    n2, pm = buoyancy_frequency_squared(T, S, P, LAT, LON)
    sa = gsw.SA_from_SP(S, P, LON, LAT)
    ct = gsw.CT_from_t(sa, T, P)
    ref, ref_p = gsw.Nsquared(sa, ct, P, lat=LAT)
    # gsw Nsquared: identical, at the mid-points between samples
    np.testing.assert_array_equal(n2, ref)
    np.testing.assert_array_equal(pm, ref_p)
    np.testing.assert_allclose(pm, 0.5 * (P[1:] + P[:-1]))
    assert n2.shape == (P.size - 1,)
    assert np.all(n2 > 0)  # the invented profile is stably stratified
    # 2-D input along axis 0 gives the same columns
    n2_2d, pm_2d = buoyancy_frequency_squared(
        np.stack([T, T], axis=1), np.stack([S, S], axis=1), P[:, None], LAT, LON, axis=0
    )
    np.testing.assert_array_equal(n2_2d[:, 1], n2)
    np.testing.assert_array_equal(pm_2d[:, 0], pm)


def test_buoyancy_frequency_squared_xarray_and_dask():
    n2, pm = buoyancy_frequency_squared(T, S, P, LAT, LON)
    t, s, p = (xr.DataArray(v, dims="depth") for v in (T, S, P))
    out = buoyancy_frequency_squared(t, s, p, LAT, LON)
    assert out.dims == ("depth_mid",)
    assert out.attrs["units"] == "s-2"
    np.testing.assert_array_equal(out.values, n2)
    np.testing.assert_array_equal(out["pressure_mid"].values, pm)
    lazy = buoyancy_frequency_squared(t.chunk(), s.chunk(), p.chunk(), LAT, LON)
    np.testing.assert_array_equal(lazy.values, n2)


@pytest.mark.parametrize(
    "func, attrs",
    [
        (density, {"standard_name": "sea_water_density", "units": "kg m-3"}),
        (potential_density_anomaly, {"standard_name": "sea_water_sigma_theta", "units": "kg m-3"}),
    ],
)
def test_xarray_and_dask_keep_cf_attrs(func, attrs):
    expected = func(T, S, P, LAT, LON)
    t, s, p = (xr.DataArray(v, dims="depth") for v in (T, S, P))
    out = func(t, s, p, LAT, LON)
    np.testing.assert_array_equal(out.values, expected)
    for k, v in attrs.items():
        assert out.attrs[k] == v
    lazy = func(t.chunk(10), s.chunk(10), p.chunk(10), LAT, LON)
    assert lazy.chunks is not None
    np.testing.assert_array_equal(lazy.values, expected)
    dk = func(da.from_array(T, chunks=10), S, da.from_array(P, chunks=7), LAT, LON)
    np.testing.assert_array_equal(dk.compute(), expected)


def test_salinity_from_conductivity_xarray_attrs():
    c = xr.DataArray(np.array([40.0, 45.0]), dims="sample")
    out = salinity_from_conductivity(c, 15.0, 100.0)
    assert out.attrs["standard_name"] == "sea_water_practical_salinity"
    np.testing.assert_array_equal(out.values, gsw.SP_from_C(c.values, 15.0, 100.0))


def test_half_a_position_or_bad_position_is_named():
    with pytest.raises(SeaprofileError, match="longitude"):
        density(10.0, 35.0, 0.0, latitude=30.0)
    with pytest.raises(SeaprofileError, match="latitude"):
        absolute_salinity(35.0, 0.0, longitude=30.0)
    with pytest.raises(SeaprofileError, match="latitude"):
        density(10.0, 35.0, 0.0, 120.0, 10.0)
    with pytest.raises(SeaprofileError, match="temperature"):
        density("warm", 35.0, 0.0)
