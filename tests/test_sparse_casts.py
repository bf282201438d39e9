"""Low-resolution and short casts through build_profile: bottles, floats, planning nodes.

Casts sampled every 5-50 m, two- and three-node planning profiles and speed-only probe
casts must come out of the chain with their measured levels intact, no interior holes,
and interpolated levels flagged 8 (estimated).
"""

import warnings

import gsw
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import _cf
from seaprofile.casts.binning import LargeGapWarning
from seaprofile.casts.model import make_cast
from seaprofile.casts.qc import qc_summary
from seaprofile.profile import build_profile, describe_assumptions

LAT, LON = 30.0, -40.0


def thermocline_t(z):
    """Invented smooth temperature, degC: 18 degC mixed water over a tanh thermocline
    centred at 150 m (40 m thick), 4 degC below."""
    return 4.0 + 7.0 * (1.0 - np.tanh((z - 150.0) / 40.0))


def thermocline_s(z):
    """Invented smooth practical salinity rising with depth (stable with the temperature)."""
    return 34.5 + 0.5 * np.tanh(z / 300.0)


def munk(z):
    # Munk (1974), JASA 55, 220-226: the canonical profile c = c1 [1 + eps (eta + e^-eta - 1)],
    # eta = 2 (z - z1) / B, with the usual c1 = 1500 m/s, z1 = 1300 m, B = 1300 m,
    # eps = 0.00737 (from memory); evaluated here independently of the package
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def teos10_sound_speed(t, s, z):
    """TEOS-10 sound speed via gsw, from in-situ T, practical S and depth (m)."""
    p = gsw.p_from_z(-z, LAT)
    sa = gsw.SA_from_SP(s, p, LON, LAT)
    return gsw.sound_speed(sa, gsw.CT_from_t(sa, t, p), p)


# first sample and spacing, m: the 1 m cast lies on the 1 m bin centres (binned: each
# sample is its bin); the sparser ones are off the bin centres on purpose
SPACINGS = [(1.0, 1.0), (5.0, 2.3), (10.0, 3.7), (25.0, 2.0), (50.0, 5.3)]


@pytest.mark.parametrize("spacing, first", SPACINGS)
def test_sparse_cast_reproduces_the_equation_at_every_measured_level(spacing, first):
    z = np.arange(first, 2000.0, spacing)
    t, s = thermocline_t(z), thermocline_s(z)
    cast = make_cast(depth=z, temperature=t, salinity=s, latitude=LAT, longitude=LON)
    prof = build_profile(cast, equation="teos10")
    depth = prof["depth"].values
    c = prof["sound_speed"].values
    flags = prof["sound_speed_qc"].values
    # no holes anywhere: what rays and outputs get
    assert np.isfinite(c).all() and np.isfinite(prof["temperature"].values).all()
    # every measured level is a level of the Profile, at its own depth, unchanged
    at = np.searchsorted(depth, z)
    np.testing.assert_allclose(depth[at], z, rtol=0, atol=1e-9)
    np.testing.assert_array_equal(prof["temperature"].values[at], t)
    np.testing.assert_array_equal(prof["salinity"].values[at], s)
    # TEOS-10 (IOC, SCOR & IAPSO 2010) via gsw, evaluated independently at each measured
    # level; gsw.p_from_z and the package's UNESCO 1983 depth->pressure differ by under
    # 0.004 dbar above 2000 m (7e-5 m/s of sound speed), far inside the 0.01 m/s asked
    np.testing.assert_allclose(c[at], teos10_sound_speed(t, s, z), rtol=0, atol=0.01)
    # measured levels passed QC; every other level was interpolated and says so
    assert (flags[at] == _cf.GOOD).all()
    others = np.setdiff1d(np.arange(depth.size), at)
    assert (flags[others] == _cf.ESTIMATED).all()
    assert (prof["samples_per_bin"].values[others] == 0).all()
    # nothing was flagged as a spike, by either test
    steps = {st["step"]: st for st in _cf.steps_of(prof.attrs)}
    assert sum(steps["despike"]["flagged"].values()) == 0
    assert prof.attrs["cast_max_depth"] == pytest.approx(z[-1])
    if spacing > 2.0:
        assert steps["bin_cast"]["levels_kept"] == z.size
        assert f"{others.size} of {depth.size} levels interpolated" in prof.attrs["assumptions"]


@pytest.mark.parametrize("spacing, first", SPACINGS[1:])
def test_speed_only_probe_keeps_measured_levels(spacing, first):
    z = np.arange(first, 4000.0, spacing)
    cast = make_cast(depth=z, measured_sound_speed=munk(z), instrument="svp", latitude=LAT)
    prof = build_profile(cast)
    depth, c = prof["depth"].values, prof["sound_speed"].values
    at = np.searchsorted(depth, z)
    # Munk (1974) evaluated independently: measured levels come through exactly
    np.testing.assert_allclose(c[at], munk(z), rtol=0, atol=0.01)
    assert np.isfinite(c).all()
    # between levels: linear in sound speed, flagged 8
    mid = np.setdiff1d(np.arange(depth.size), at)
    np.testing.assert_allclose(c[mid], np.interp(depth[mid], z, munk(z)), atol=1e-9)
    assert (prof["sound_speed_qc"].values[mid] == _cf.ESTIMATED).all()


def test_a_real_spike_on_a_sparse_cast_is_flagged_and_reported():
    z = np.arange(2.0, 1000.0, 10.0)
    t = thermocline_t(z)
    # Wong et al., Argo Quality Control Manual for CTD and Trajectory Data,
    # doi:10.13155/33951, real-time test 9 (spike): temperature threshold 6 degC above
    # 500 dbar; a spike of 8 degC at 302 m exceeds it by 2 degC, far beyond the smooth
    # thermocline's own curvature between bottles 10 m apart
    t[30] += 8.0
    cast = make_cast(depth=z, temperature=t, salinity=thermocline_s(z), latitude=LAT, longitude=LON)
    prof = build_profile(cast)
    i = int(np.searchsorted(prof["depth"].values, z[30]))
    assert prof["depth"].values[i] == pytest.approx(z[30])
    # the level is left out of the profile, estimated from its neighbours, and flagged 8
    assert prof["temperature_qc"].values[i] == _cf.ESTIMATED
    assert prof["temperature"].values[i] == pytest.approx(
        np.interp(z[30], z[[29, 31]], t[[29, 31]])
    )
    # the reason and the count are on the record
    from seaprofile.casts.qc import qc_summary

    assert qc_summary(prof)["spike"]["temperature"] == 1
    binned = [st for st in _cf.steps_of(prof.attrs) if st["step"] == "bin_cast"][0]
    assert binned["left_out"]["temperature"] == 1


@pytest.mark.parametrize("depths", [[0.0, 100.0], [0.0, 50.0, 100.0]])
def test_isovelocity_planning_profiles_are_usable(depths):
    z = np.array(depths)
    cast = make_cast(
        depth=z, measured_sound_speed=np.full(z.size, 1500.0), instrument="svp", latitude=LAT
    )
    prof = build_profile(cast)
    c = prof["sound_speed"].values
    assert np.all(c == 1500.0) and prof["depth"].values[[0, -1]].tolist() == [0.0, 100.0]
    f = prof["sound_speed_qc"].values
    at = np.searchsorted(prof["depth"].values, z)
    assert (f[at] == _cf.GOOD).all()
    assert (np.delete(f, at) == _cf.ESTIMATED).all()


@pytest.mark.parametrize("n", [2, 3])
def test_constant_temperature_salinity_planning_profile(n):
    z = np.linspace(0.0, 100.0, n)
    cast = make_cast(
        depth=z,
        temperature=np.full(n, 10.0),
        salinity=np.full(n, 35.0),
        latitude=LAT,
        longitude=LON,
    )
    prof = build_profile(cast, equation="teos10")
    at = np.searchsorted(prof["depth"].values, z)
    # TEOS-10 via gsw, independently (see above for the pressure tolerance)
    np.testing.assert_allclose(
        prof["sound_speed"].values[at],
        teos10_sound_speed(np.full(n, 10.0), np.full(n, 35.0), z),
        atol=0.01,
    )
    assert (prof["temperature_qc"].values[at] == _cf.GOOD).all()
    assert describe_assumptions(prof).endswith(
        "levels interpolated linearly in depth between measured ones (flag 8)"
    )


def test_dense_constant_speed_probe_is_not_condemned():
    # a speed-only probe in well-mixed water: temperature and salinity constant, sound
    # speed rising only by the pressure term, 1.630e-2 m/s per m (Mackenzie 1981,
    # J. Acoust. Soc. Am. 70, 807-812, linear depth coefficient) -- not a stuck sensor
    z = np.arange(1.0, 60.0, 0.5)
    c = 1480.0 + 1.630e-2 * z
    cast = make_cast(depth=z, measured_sound_speed=c, instrument="svp", latitude=LAT)
    prof = build_profile(cast)
    assert (prof["sound_speed_qc"].values == _cf.GOOD).all()


def test_dense_stuck_speed_probe_is_flagged():
    # hundreds of samples of one value over 149 m: even well-mixed water would have
    # changed by ~2.4 m/s through the pressure term (Mackenzie 1981, 1.630e-2 m/s per m),
    # so the Argo stuck-value test (doi:10.13155/33951, test 13) flags them bad (4) and
    # no level of the profile is usable
    z = np.arange(1.0, 150.0, 0.5)
    cast = make_cast(
        depth=z, measured_sound_speed=np.full(z.size, 1480.0), instrument="svp", latitude=LAT
    )
    prof = build_profile(cast)
    assert qc_summary(prof)["stuck_value"]["measured_sound_speed"] == z.size
    assert not _cf.usable(prof["sound_speed"].values, prof["sound_speed_qc"].values).any()


@settings(max_examples=30, deadline=None)
@given(st.lists(st.floats(0.2, 60.0), min_size=1, max_size=40), st.floats(0.0, 5.0))
def test_any_spacing_gives_a_profile_without_holes(gaps, first):
    # invariant: whatever the spacing, filling every gap (max_gap=None) leaves no interior
    # holes, depths increasing, isolated samples kept at their own depth with their own
    # value, the rest flagged 1 or 8
    z = first + np.concatenate(([0.0], np.cumsum(gaps)))
    c = munk(z)
    cast = make_cast(depth=z, measured_sound_speed=c, instrument="svp", latitude=LAT)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LargeGapWarning)
        prof = build_profile(cast, max_gap=None)
    depth, speed = prof["depth"].values, prof["sound_speed"].values
    assert np.isfinite(speed).all() and (np.diff(depth) > 0).all()
    assert set(np.unique(prof["sound_speed_qc"].values)) <= {_cf.GOOD, _cf.ESTIMATED}
    g = np.diff(z)
    isolated = (np.concatenate(([np.inf], g)) > 2.0) & (np.concatenate((g, [np.inf])) > 2.0)
    at = np.searchsorted(depth, z[isolated])
    np.testing.assert_array_equal(depth[at], z[isolated])
    np.testing.assert_array_equal(speed[at], c[isolated])
