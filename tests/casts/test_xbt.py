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
    # (460 m and 760 m rated probes), evaluated here independently of the package
    return 6.691 * t - 2.25e-3 * t * t


def test_hanawa_coefficients_in_table():
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: a = 6.691 m/s, b = 2.25e-3 m/s^2
    for name in ("hanawa1995", "hanawa1995_460m", "hanawa1995_760m"):
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
    assert z.attrs["standard_name"] == "depth" and "hanawa1995" in z.attrs["comment"]


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
    assert cast.attrs["fall_rate"] == "hanawa1995"
    # gsw.p_from_z (TEOS-10, McDougall & Barker 2011) and UNESCO 1983 both describe the
    # standard ocean; measured here: under 0.004 dbar above 2000 m (the depth tests bound
    # the two by 2e-4 of depth, 0.4 m at 2000 m; 0.01 dbar is far tighter and still holds)
    p_ref = gsw.p_from_z(-cast["depth"].values, 30.0)
    np.testing.assert_allclose(cast["pressure"].values, p_ref, atol=0.01)
    steps = [s["step"] for s in steps_of(cast.attrs)]
    assert steps == ["depth_from_fall_rate", "assume_salinity", "pressure_from_depth"]


def test_complete_xbt_cast_without_latitude_has_no_pressure():
    cast = complete_xbt_cast(
        make_cast(elapsed_time=[0, 1.0], temperature=[20, 20.0], instrument="xbt")
    )
    assert "pressure" not in cast and "depth" in cast


def test_joined_to_a_reference_the_probe_follows_its_measured_water():
    # Before the fix the reference was shifted to meet the probe's assumed salinity (35
    # here, against 34.4 measured by the reference), carrying about -0.7 m/s to the bottom.
    from seaprofile.casts.binning import add_sound_speed, bin_cast
    from seaprofile.casts.process import add_depth
    from seaprofile.profile import build_profile

    lat, lon = 30.0, -40.0

    def t_of(z):  # invented smooth water column, degC
        return 3.0 + 15.0 * np.exp(-z / 300.0)

    def s_of(z):  # invented measured salinity
        return 34.4 + 0.2 * np.exp(-z / 500.0)

    zr = np.arange(0.0, 3001.0, 1.0)
    ref = make_cast(
        depth=zr,
        temperature=t_of(zr),
        salinity=s_of(zr),
        latitude=lat,
        longitude=lon,
        cast_name="deep-reference",
    )
    ref = add_sound_speed(bin_cast(add_depth(ref), 1.0), "teos10")
    t = np.arange(0.0, 120.0, 0.1)
    z = hanawa(t)
    xbt = make_cast(
        elapsed_time=t, temperature=t_of(z) + 0.05, instrument="xbt", latitude=lat, longitude=lon
    )
    prof = build_profile(xbt, equation="teos10", extend_to=3000.0, reference=ref)
    depth = prof["depth"].values
    z_join = prof.attrs["cast_max_depth"]
    deep = depth > z_join + 100.0  # below the 100 m over which the offset at the join fades
    assert deep.sum() > 2000
    # the reference's water as measured: its temperature and salinity, unshifted
    np.testing.assert_allclose(prof["temperature"].values[deep], t_of(depth[deep]), atol=1e-9)
    np.testing.assert_allclose(prof["salinity"].values[deep], s_of(depth[deep]), atol=1e-9)
    # TEOS-10 via gsw, independently, of the reference's water (pressure: gsw.p_from_z,
    # within 0.01 dbar of UNESCO 1983 above 3000 m, under 2e-4 m/s)
    p = gsw.p_from_z(-depth[deep], lat)
    sa = gsw.SA_from_SP(s_of(depth[deep]), p, lon, lat)
    expected = gsw.sound_speed(sa, gsw.CT_from_t(sa, t_of(depth[deep]), p), p)
    np.testing.assert_allclose(prof["sound_speed"].values[deep], expected, atol=0.01)
    # the probe's temperature offset (+0.05 degC) fades linearly over the 100 m below it
    below = (depth > z_join) & ~deep
    fade = 1.0 - (depth[below] - z_join) / 100.0
    np.testing.assert_allclose(
        prof["temperature"].values[below] - t_of(depth[below]), 0.05 * fade, atol=2e-3
    )
    # every assumption is on the record, in attributes and in one line
    a = prof.attrs
    assert a["salinity_source"] == "assumed constant 35"
    assert a["fall_rate_coefficients"] == "a=6.691 m/s, b=0.00225 m/s^2"
    assert a["extension_reference"] == "deep-reference"
    # the assumed salinity's offset fades like the temperature's (no step in sound speed
    # at the join), and the record says the cast's salinity was assumed
    assert "salinity offset +0.557 fading" in a["extension_join"]
    assert "(the cast's was assumed)" in a["extension_join"]
    line = a["assumptions"]
    for text in (
        "salinity assumed constant 35",
        "fall rate hanawa1995 (a=6.691 m/s",
        "reference deep-reference",
        "fading to zero over 100 m",
    ):
        assert text in line


def test_fall_rate_names_are_coefficients_and_depth_ratings():
    # our naming rule: the published equation (author + year), optionally its depth rating
    import re

    for name in FALL_RATES:
        assert re.fullmatch(r"[a-z]+\d{4}(_\d+m)?|legacy_pre1995", name), name
