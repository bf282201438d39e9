"""Expendable probes: fall-rate depth, assumed salinity, completing a cast."""

import gsw
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import OutsideValidityWarning, SeaprofileError
from seaprofile._cf import steps_of
from seaprofile.casts.model import make_cast
from seaprofile.casts.xbt import (
    FALL_RATES,
    assumed_salinity,
    complete_xbt_cast,
    depth_from_elapsed_time,
    fall_depth,
    resolve_fall_rate,
)


def hanawa(t):
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: z = 6.691 t - 2.25e-3 t^2
    # (T-4/T-6/T-7 class probes), evaluated here independently of the package
    return 6.691 * t - 2.25e-3 * t * t


def test_hanawa_coefficients_in_table():
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: a = 6.691 m/s, b = 2.25e-3 m/s^2
    for name in ("hanawa1995_t4", "hanawa1995_t6", "hanawa1995_t7"):
        a, b, ref = FALL_RATES[name]
        assert (a, b) == (6.691, 2.25e-3)
        assert "Deep-Sea Res. I 42" in ref


def test_fall_rate_depths_against_hanawa1995():
    t = np.array([0.0, 1.0, 10.0, 60.0, 100.0, 120.5, 300.0])
    # Hanawa et al. (1995), eq. z = a t - b t^2 evaluated independently; the two evaluate the
    # same polynomial in float64, so agreement to 1e-9 m is rounding only
    np.testing.assert_allclose(depth_from_elapsed_time(t), hanawa(t), rtol=0, atol=1e-9)
    # Hanawa et al. (1995) equation by hand: 6.691*100 - 2.25e-3*100^2 = 669.1 - 22.5 = 646.6 m
    assert depth_from_elapsed_time(100.0) == pytest.approx(646.6, abs=1e-9)


def test_custom_and_legacy_coefficients():
    t = np.linspace(0, 200, 21)
    np.testing.assert_allclose(depth_from_elapsed_time(t, (6.5, 2e-3)), 6.5 * t - 2e-3 * t**2)
    a, b, _ = FALL_RATES["legacy_pre1995"]
    np.testing.assert_allclose(depth_from_elapsed_time(t, "legacy_pre1995"), a * t - b * t**2)
    assert resolve_fall_rate((6.5, 0.002))[2] == "custom"


@pytest.mark.parametrize("bad", ["no_such_probe", (0.0, 1e-3), (6.0, -1.0), "x", (1, 2, 3)])
def test_bad_fall_rate(bad):
    with pytest.raises(SeaprofileError, match="fall_rate"):
        depth_from_elapsed_time([1.0], bad)


def test_negative_and_late_times_warn():
    with pytest.warns(OutsideValidityWarning, match="elapsed_time"):
        z = depth_from_elapsed_time([-1.0, 10.0])
    assert np.isnan(z[0]) and z[1] == pytest.approx(hanawa(10.0))
    with pytest.warns(OutsideValidityWarning, match="1486.89"):  # a / (2 b) = 6.691 / 4.5e-3 s
        depth_from_elapsed_time([1500.0])


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(0, 1400), min_size=2, max_size=30))
def test_depth_increases_with_time(times):
    t = np.sort(np.array(times))
    z = depth_from_elapsed_time(t)
    assert np.all(np.diff(z) >= -1e-9)
    assert np.all(z >= 0)


def test_xarray_wrapper_with_dask():
    pytest.importorskip("dask")
    t = xr.DataArray(np.linspace(0, 100, 50), dims="sample").chunk(10)
    z = fall_depth(t)
    assert z.chunks is not None
    np.testing.assert_allclose(z.compute().values, hanawa(t.values), atol=1e-9)
    assert z.attrs["standard_name"] == "depth" and "hanawa1995_t7" in z.attrs["comment"]


def test_assumed_salinity_constant_and_profile():
    z = np.array([0.0, 50.0, 100.0, 500.0, np.nan])
    values, desc = assumed_salinity(z, 34.2)
    assert np.all(values == 34.2) and desc == "assumed constant 34.2"
    values, desc = assumed_salinity(z, ([0, 100, 200], [33.0, 34.0, 35.0]))
    np.testing.assert_allclose(values[:4], [33.0, 33.5, 34.0, 35.0])
    assert np.isnan(values[4]) and "reference profile" in desc
    for bad in (50.0, ([0, 10], [1.0]), ([10, 0], [34, 35]), ([0, np.nan], [34, 35])):
        with pytest.raises(SeaprofileError, match="salinity"):
            assumed_salinity(z, bad)


def test_complete_xbt_cast():
    t = np.arange(0, 120, 0.5)
    temp = 20 - t / 10
    raw = make_cast(elapsed_time=t, temperature=temp, instrument="xbt", latitude=30.0)
    before = raw.copy(deep=True)
    cast = complete_xbt_cast(raw, salinity=34.8)
    xr.testing.assert_identical(raw, before)  # input untouched
    np.testing.assert_allclose(cast["depth"].values, hanawa(t), atol=1e-9)
    assert np.all(cast["salinity"].values == 34.8)
    assert np.all(cast["salinity_qc"].values == 0)
    assert cast.attrs["salinity_assumed"] == "yes"
    assert cast.attrs["salinity_source"] == "assumed constant 34.8"
    assert cast.attrs["fall_rate"] == "hanawa1995_t7"
    # gsw.p_from_z (TEOS-10, McDougall & Barker 2011) and UNESCO 1983 both describe the
    # standard ocean; measured here: under 0.004 dbar above 2000 m (the depth tests bound
    # the two by 2e-4 of depth, 0.4 m at 2000 m; 0.01 dbar is far tighter and still holds)
    p_ref = gsw.p_from_z(-cast["depth"].values, 30.0)
    np.testing.assert_allclose(cast["pressure"].values, p_ref, atol=0.01)
    steps = [s["step"] for s in steps_of(cast.attrs)]
    assert steps == ["depth_from_fall_rate", "assume_salinity", "pressure_from_depth"]


def test_complete_xbt_cast_without_latitude_has_no_pressure():
    cast = complete_xbt_cast(make_cast(elapsed_time=[0, 1.0], temperature=[20, 20.0],
                                       instrument="xbt"))
    assert "pressure" not in cast and "depth" in cast
