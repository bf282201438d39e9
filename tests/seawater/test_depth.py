"""Pressure <-> depth: published check values, cross-checks between methods, inverses."""

import dask.array as da
import gsw
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import SeaprofileError
from seaprofile.seawater.depth import METHODS, depth_from_pressure, pressure_from_depth

PRESSURES = np.linspace(0.0, 11000.0, 1101)  # dbar, surface to the deepest trench
LATITUDES = (0.0, 30.0, 45.0, 60.0, 90.0)


def test_registry_lists_the_four_methods():
    assert set(METHODS) == {"unesco1983", "leroy_parthiot1998", "saunders1981", "teos10"}
    for forward, inverse, needs_latitude, reference in METHODS.values():
        assert callable(forward) and callable(inverse)
        assert needs_latitude is True
        assert reference


def test_unesco1983_check_value():
    # Fofonoff & Millard (1983), Unesco Tech. Pap. Mar. Sci. 44, DEPTH check value:
    # 9712.653 m at 10000 dbar, latitude 30 deg. Printed to 1 mm: tolerance half a unit.
    assert depth_from_pressure(10000.0, 30.0) == pytest.approx(9712.653, abs=5e-4)
    assert pressure_from_depth(9712.653, 30.0) == pytest.approx(10000.0, abs=1e-3)


@pytest.mark.parametrize("latitude", LATITUDES)
def test_saunders1981_within_1_m_of_unesco_to_5000_dbar(latitude):
    p = PRESSURES[PRESSURES <= 5000.0]
    diff = depth_from_pressure(p, latitude, "saunders1981") - depth_from_pressure(p, latitude)
    # Saunders (1981), J. Phys. Oceanogr. 11, 573-574: the quadratic is stated to agree
    # with the full standard-ocean integration within about 1 m to 5000 dbar.
    # Measured here: at most 0.30 m (at the pole), so 1 m is the paper's own claim.
    assert np.abs(diff).max() < 1.0


def test_saunders1981_drifts_in_the_trenches():
    # Saunders (1981) is a 5000-dbar approximation; measured 6.0 m short of UNESCO 1983 at
    # 10000 dbar, 30 deg. We only check that it is metres, not decimetres or tens of metres.
    diff = depth_from_pressure(10000.0, 30.0) - depth_from_pressure(10000.0, 30.0, "saunders1981")
    assert 2.0 < diff < 15.0


@pytest.mark.parametrize("latitude", LATITUDES)
def test_leroy_parthiot1998_standard_ocean_vs_unesco(latitude):
    diff = depth_from_pressure(PRESSURES, latitude, "leroy_parthiot1998") - depth_from_pressure(
        PRESSURES, latitude
    )
    # Leroy & Parthiot (1998), JASA 103(3), 1346-1352, fit the same standard ocean
    # (0 degC, S 35) as Fofonoff & Millard (1983). Measured: at most 0.07 m over
    # 0..11000 dbar at any latitude. The smallest term of h(Z,45), 2.8e-19 Z^4, is worth
    # 0.28 dbar at 10 km, and the latitude term of g(phi) about 50 m: a 0.1 m tolerance
    # pins the formula to about 1e-5 of depth and catches a wrong leading digit in any
    # coefficient (not a slip in the last digit of the smallest term, worth ~0.01 m).
    assert np.abs(diff).max() < 0.1


@pytest.mark.parametrize("latitude", LATITUDES)
def test_leroy_parthiot1998_vs_gsw(latitude):
    ours = depth_from_pressure(PRESSURES, latitude, "leroy_parthiot1998")
    ref = -gsw.z_from_p(PRESSURES, latitude)
    # gsw (TEOS-10) z_from_p: also a standard-ocean integration (SA 35.16504, CT 0) but with
    # the TEOS-10 equation of state and its own gravity gradient. Measured: at most 1.53 m
    # at 11000 dbar (1.4e-4 of depth). Tolerance 2e-4 of depth (2.2 m at 11 km).
    assert np.all(np.abs(ours - ref) <= 2e-4 * ref + 1e-9)


@pytest.mark.parametrize("latitude", LATITUDES)
def test_unesco1983_vs_teos10(latitude):
    unesco = depth_from_pressure(PRESSURES, latitude)
    teos = depth_from_pressure(PRESSURES, latitude, "teos10")
    # gsw (TEOS-10) z_from_p vs the EOS-80-era UNESCO 1983 formula: same standard ocean,
    # different equation of state and gravity gradient. Measured: 1.08 m at 10000 dbar,
    # 1.46 m at 11000 dbar, at most 1.4e-4 of depth. Tolerance 2e-4 of depth.
    assert np.all(np.abs(unesco - teos) <= 2e-4 * teos + 1e-9)
    assert np.abs(unesco - teos)[PRESSURES <= 10000.0].max() < 1.5


def test_teos10_is_gsw_exactly():
    lat = np.linspace(-80.0, 80.0, PRESSURES.size)
    # gsw (TEOS-10 reference library): our teos10 method is a sign change around it.
    np.testing.assert_array_equal(
        depth_from_pressure(PRESSURES, lat, "teos10"), -gsw.z_from_p(PRESSURES, lat)
    )
    z = np.linspace(0.0, 11000.0, 101)
    np.testing.assert_array_equal(pressure_from_depth(z, 45.0, "teos10"), gsw.p_from_z(-z, 45.0))


def _warm_profile_true_depth(p, latitude, surface_temperature, deep_temperature, scale):
    """Depth from gsw with the dynamic height anomaly of an invented T(p), S = 35 profile."""
    t = deep_temperature + (surface_temperature - deep_temperature) * np.exp(-p / scale)
    sa = gsw.SA_from_SP(np.full_like(p, 35.0), p, -40.0, latitude)
    ct = gsw.CT_from_t(sa, t, p)
    dyn = gsw.geo_strf_dyn_height(sa, ct, p, p_ref=0.0)
    return -gsw.z_from_p(p, latitude, dyn)


def test_leroy_parthiot1998_common_ocean_correction_sanity():
    p = np.linspace(0.0, 3000.0, 301)
    idx = [10, 50, 100, 300]  # 100, 500, 1000, 3000 dbar
    # Invented subtropical profile (25 degC at the surface, 2 degC deep): the true depth from
    # gsw with the dynamic height anomaly. Leroy & Parthiot (1998) made the common-ocean
    # correction for such warm non-polar water, so it must bring their formula closer to
    # the truth (measured: 0.2..2.3 m off without it, 0.1..0.4 m with it).
    truth = _warm_profile_true_depth(p, 20.0, 25.0, 2.0, 500.0)
    standard = depth_from_pressure(p, 20.0, "leroy_parthiot1998")
    common = depth_from_pressure(p, 20.0, "leroy_parthiot1998", correction="common_ocean")
    assert np.all(np.abs(common - truth)[idx] < np.abs(standard - truth)[idx])
    # and for a polar profile (2 degC to -1 degC) the standard ocean is the better choice
    truth = _warm_profile_true_depth(p, 75.0, 2.0, -1.0, 1000.0)
    standard = depth_from_pressure(p, 75.0, "leroy_parthiot1998")
    common = depth_from_pressure(p, 75.0, "leroy_parthiot1998", correction="common_ocean")
    assert np.all(np.abs(standard - truth)[idx] < np.abs(common - truth)[idx])


@settings(max_examples=100, deadline=None)
@given(
    depth=st.floats(-1.0, 11000.0),
    latitude=st.floats(-90.0, 90.0),
    method=st.sampled_from(sorted(METHODS)),
    correction=st.sampled_from([None, "common_ocean"]),
)
def test_inverse_round_trip_to_1_mm(depth, latitude, method, correction):
    if method != "leroy_parthiot1998":
        correction = None
    kw = {"correction": correction} if correction else {}
    p = pressure_from_depth(depth, latitude, method, **kw)
    assert abs(depth_from_pressure(p, latitude, method, **kw) - depth) < 1e-3
    z = depth_from_pressure(depth, latitude, method, **kw)  # the depth value read as dbar
    assert abs(pressure_from_depth(z, latitude, method, **kw) - depth) < 1e-3


@pytest.mark.parametrize("method", sorted(METHODS))
def test_nan_propagates_and_small_negatives_are_computed(method):
    p = np.array([np.nan, -0.5, 0.0, 100.0])
    z = depth_from_pressure(p, 45.0, method)
    assert np.isnan(z[0]) and np.all(np.isfinite(z[1:]))
    assert -0.51 < z[1] < -0.49 and z[2] == 0.0
    back = pressure_from_depth(z, 45.0, method)
    assert np.isnan(back[0])
    np.testing.assert_allclose(back[1:], p[1:], atol=1e-6)


@pytest.mark.parametrize("method", sorted(METHODS))
def test_xarray_and_dask_match_numpy(method):
    p = np.linspace(-0.5, 8000.0, 37)
    lat = np.linspace(-60.0, 60.0, 37)
    expected = depth_from_pressure(p, lat, method)
    pa = xr.DataArray(p, dims="sample", attrs={"units": "dbar"})
    la = xr.DataArray(lat, dims="sample")
    out = depth_from_pressure(pa, la, method)
    np.testing.assert_array_equal(out.values, expected)
    assert out.attrs["standard_name"] == "depth" and out.attrs["positive"] == "down"
    assert out.attrs["units"] == "m" and out.name == "depth"
    lazy = depth_from_pressure(pa.chunk(10), la.chunk(7), method)
    assert lazy.chunks is not None
    np.testing.assert_array_equal(lazy.values, expected)
    dk = depth_from_pressure(da.from_array(p, chunks=10), da.from_array(lat, chunks=7), method)
    assert isinstance(dk, da.Array)
    np.testing.assert_array_equal(dk.compute(), expected)
    back = pressure_from_depth(out, 0.0 * la + lat, method)
    assert back.attrs["standard_name"] == "sea_water_pressure" and back.attrs["units"] == "dbar"
    np.testing.assert_array_equal(back.values, pressure_from_depth(expected, lat, method))


def test_2d_broadcast_against_latitude_column():
    p = np.linspace(0.0, 5000.0, 6)[None, :]
    lat = np.array([[0.0], [45.0], [90.0]])
    out = depth_from_pressure(p, lat)
    assert out.shape == (3, 6)
    np.testing.assert_array_equal(out[1], depth_from_pressure(p[0], 45.0))


@pytest.mark.parametrize("bad", [None, 91.0, -90.5, np.nan, [10.0, 95.0], "north"])
@pytest.mark.parametrize("func", [depth_from_pressure, pressure_from_depth])
def test_bad_latitude_is_named(func, bad):
    with pytest.raises(SeaprofileError, match="latitude"):
        func(np.array([10.0, 20.0]), bad)


def test_unknown_method_lists_the_names():
    with pytest.raises(SeaprofileError) as err:
        depth_from_pressure(100.0, 45.0, method="hydrostatic")
    for name in METHODS:
        assert name in str(err.value)


def test_correction_only_for_leroy_parthiot():
    with pytest.raises(SeaprofileError, match="correction"):
        depth_from_pressure(100.0, 45.0, "unesco1983", correction="common_ocean")
    with pytest.raises(SeaprofileError, match="correction"):
        depth_from_pressure(100.0, 45.0, "leroy_parthiot1998", correction="baltic")


def test_non_numeric_pressure_is_named():
    with pytest.raises(SeaprofileError, match="pressure"):
        depth_from_pressure("deep", 45.0)
    with pytest.raises(SeaprofileError, match="depth"):
        pressure_from_depth(None, 45.0)


def test_inputs_not_modified():
    p = np.array([0.0, 10.0, 100.0])
    keep = p.copy()
    depth_from_pressure(p, 45.0)
    np.testing.assert_array_equal(p, keep)
