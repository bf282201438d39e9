"""Tests of seaprofile.propagation.section: the c(r, z) field between casts, and ranges."""

import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.interpolate import CubicSpline, PchipInterpolator

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import Environment
from seaprofile.propagation.section import (
    EARTH_MEAN_RADIUS,
    Section,
    great_circle_distance,
    track_ranges,
)

DEPTH = np.array([0.0, 50.0, 200.0, 1000.0, 3000.0])
C3 = np.array(
    [
        [1510.0, 1508.0, 1495.0, 1482.0, 1500.0],
        [1515.0, 1509.0, 1492.0, 1483.0, 1501.0],
        [1505.0, 1507.0, 1497.0, 1481.0, 1499.0],
    ]
)
R3 = np.array([0.0, 12000.0, 30000.0])


def _profile(depth, c, lat, lon, pid):
    return xr.Dataset(
        {"sound_speed": ("depth", np.asarray(c, float))},
        coords={
            "depth": np.asarray(depth, float),
            "latitude": lat,
            "longitude": lon,
            "profile_id": pid,
        },
    )


@pytest.mark.parametrize("method", ["pchip", "spline", "linear"])
def test_two_casts_reduce_to_linear_interpolation(method):
    sec = Section([1000.0, 9000.0], DEPTH, C3[:2], range_interpolation=method)
    rng = np.random.default_rng(1)
    r = rng.uniform(1000.0, 9000.0, 200)
    z = rng.uniform(0.0, 3000.0, 200)
    # independent bilinear formula: linear in range between the casts, and in depth
    # between the nodes
    w = (r - 1000.0) / 8000.0
    ca = np.interp(z, DEPTH, C3[0])
    cb = np.interp(z, DEPTH, C3[1])
    expect = ca + w * (cb - ca)
    np.testing.assert_allclose(sec.sound_speed_at(r, z), expect, rtol=0, atol=1e-9)
    c, cr, cz, crr, crz = sec.gradient_at(r, z)
    np.testing.assert_allclose(cr, (cb - ca) / 8000.0, atol=1e-12)
    np.testing.assert_allclose(crr, 0.0, atol=1e-15)


@pytest.mark.parametrize("method", ["pchip", "spline", "linear"])
def test_identical_casts_give_a_range_independent_field(method):
    sec = Section(R3, DEPTH, np.repeat(C3[:1], 3, axis=0), range_interpolation=method)
    assert sec.is_range_independent
    r = np.linspace(-5000.0, 40000.0, 91)
    for z in (0.0, 30.0, 600.0, 2999.0, 3500.0):
        c, cr, cz, crr, crz = sec.gradient_at(r, z)
        np.testing.assert_allclose(c, np.interp(z, DEPTH, C3[0]), rtol=1e-15, atol=1e-12)
        assert np.all(cr == 0.0) and np.all(crr == 0.0) and np.all(crz == 0.0)


def test_range_interpolation_matches_scipy_at_the_depth_nodes():
    # scipy's PchipInterpolator / natural CubicSpline are the reference implementations
    r = np.linspace(0.0, 29999.0, 301)  # at 30000 m the (constant) cell beyond applies
    for method, ref in (
        ("pchip", PchipInterpolator(R3, C3, axis=0)),
        ("spline", CubicSpline(R3, C3, axis=0, bc_type="natural")),
    ):
        sec = Section(R3, DEPTH, C3, range_interpolation=method)
        for k, z in enumerate(DEPTH):
            c, cr, _, crr, _ = sec.gradient_at(r, z)
            np.testing.assert_allclose(c, ref(r)[:, k], rtol=1e-13)
            np.testing.assert_allclose(cr, ref(r, 1)[:, k], rtol=1e-9, atol=1e-14)
            np.testing.assert_allclose(crr, ref(r, 2)[:, k], rtol=1e-7, atol=1e-15)


def test_casts_are_reproduced_and_held_outside():
    sec = Section(R3, DEPTH, C3)
    for k, r in enumerate(R3):
        np.testing.assert_allclose(sec.sound_speed_at(r, DEPTH), C3[k], atol=1e-10)
    np.testing.assert_allclose(sec.sound_speed_at(-1e4, DEPTH), C3[0])
    np.testing.assert_allclose(sec.sound_speed_at(1e6, DEPTH), C3[-1])
    # zero vertical gradient above the first / below the last node
    assert sec.gradient_at(100.0, 5000.0)[2] == 0.0


def test_pchip_first_derivative_is_continuous_at_interior_casts():
    sec = Section(R3, DEPTH, C3)
    eps = 1e-6
    for z in (25.0, 500.0, 2000.0):
        below = sec.gradient_at(R3[1] - eps, z)[1]
        above = sec.gradient_at(R3[1] + eps, z)[1]
        assert abs(above - below) < 1e-9


def test_gradients_match_finite_differences_inside_cells():
    sec = Section(R3, DEPTH, C3, range_interpolation="spline")
    rng = np.random.default_rng(5)
    r = rng.uniform(1000.0, 29000.0, 50)
    z = rng.uniform(60.0, 190.0, 50)  # inside one layer, away from the nodes
    h = 1e-3
    c, cr, cz, crr, crz = sec.gradient_at(r, z)
    f = sec.sound_speed_at
    np.testing.assert_allclose(cr, (f(r + h, z) - f(r - h, z)) / (2 * h), atol=1e-8)
    np.testing.assert_allclose(cz, (f(r, z + h) - f(r, z - h)) / (2 * h), atol=1e-8)
    g = lambda rr, zz: sec.gradient_at(rr, zz)[1]  # noqa: E731
    np.testing.assert_allclose(crz, (g(r, z + h) - g(r, z - h)) / (2 * h), atol=1e-9)


def test_great_circle_distance_textbook_cases():
    # one degree of longitude on the equator, and equator to pole: arcs of a sphere
    # (2 pi R / 360 and pi R / 2; exact geometry)
    assert great_circle_distance(0, 10, 0, 11) == pytest.approx(
        2 * np.pi * EARTH_MEAN_RADIUS / 360, rel=1e-12
    )
    assert great_circle_distance(0, 0, 90, 0) == pytest.approx(
        np.pi * EARTH_MEAN_RADIUS / 2, rel=1e-12
    )
    assert great_circle_distance(12.5, -30.0, 12.5, -30.0) == 0.0


@settings(max_examples=60, deadline=None)
@given(st.floats(-80, 80), st.floats(-180, 180), st.floats(-80, 80), st.floats(-180, 180))
def test_haversine_agrees_with_the_spherical_law_of_cosines(lat1, lon1, lat2, lon2):
    # independent formula: central angle = acos(sin p1 sin p2 + cos p1 cos p2 cos dl);
    # ill-conditioned for short arcs, so only compared beyond 10 km
    p1, p2, dl = np.radians(lat1), np.radians(lat2), np.radians(lon2 - lon1)
    ang = np.arccos(np.clip(np.sin(p1) * np.sin(p2) + np.cos(p1) * np.cos(p2) * np.cos(dl), -1, 1))
    d = great_circle_distance(lat1, lon1, lat2, lon2)
    assert d == pytest.approx(great_circle_distance(lat2, lon2, lat1, lon1), rel=1e-12)
    if EARTH_MEAN_RADIUS * ang > 1e4:
        assert d == pytest.approx(EARTH_MEAN_RADIUS * ang, rel=1e-7)


def test_from_profiles_ranges_from_positions_and_common_grid():
    p0 = _profile([0, 100, 1000], [1500, 1490, 1485], 0.0, 0.0, "a")
    p1 = _profile([0, 50, 200, 1000], [1502, 1496, 1488, 1486], 0.0, 0.1, "b")
    p2 = _profile([0, 100, 800], [1504, 1492, 1484], 0.0, 0.25, "c")
    sec = Section.from_profiles([p0, p1, p2])
    deg = 2 * np.pi * EARTH_MEAN_RADIUS / 360
    np.testing.assert_allclose(sec.ranges, [0.0, 0.1 * deg, 0.25 * deg], rtol=1e-9)
    np.testing.assert_array_equal(sec.depth, [0, 50, 100, 200, 800, 1000])
    # every cast exact at its own nodes; held below its deepest value
    np.testing.assert_allclose(
        sec.sound_speed_at(sec.ranges[1], [0, 50, 200, 1000]), [1502, 1496, 1488, 1486]
    )
    np.testing.assert_allclose(sec.sound_speed[2, -1], 1484.0)
    assert sec.profile_ids == ["a", "b", "c"]
    assert "section_from_profiles" in sec.attrs["processing_steps"]
    back = Section.from_dataset(sec.to_dataset())
    np.testing.assert_array_equal(back.sound_speed, sec.sound_speed)
    np.testing.assert_array_equal(back.ranges, sec.ranges)
    ds = sec.to_dataset()
    assert ds["sound_speed"].attrs["standard_name"] == "speed_of_sound_in_sea_water"
    assert ds["range"].attrs["units"] == "m" and "caution" in ds.attrs


def test_track_ranges_accumulate_legs():
    r = track_ranges([0, 0, 1], [0, 1, 1])
    deg = 2 * np.pi * EARTH_MEAN_RADIUS / 360
    np.testing.assert_allclose(r, [0, deg, 2 * deg], rtol=1e-9)


def test_errors_name_the_argument():
    with pytest.raises(SeaprofileError, match="ranges"):
        Section([0.0, 0.0], DEPTH, C3[:2])
    with pytest.raises(SeaprofileError, match="sound_speed"):
        Section(R3, DEPTH, C3.T)
    with pytest.raises(SeaprofileError, match="depth"):
        Section(R3, DEPTH[::-1], C3)
    with pytest.raises(SeaprofileError, match="range_interpolation"):
        Section(R3, DEPTH, C3, range_interpolation="nearest")
    nopos = _profile([0, 100], [1500, 1490], np.nan, np.nan, "x")
    with pytest.raises(SeaprofileError, match="ranges"):
        Section.from_profiles([nopos, nopos])


def test_environment_from_section():
    sec = Section(R3 + 5000.0, DEPTH, C3)
    env = Environment.from_section(sec, bathymetry=([0.0, 30000.0], [2500.0, 1500.0]))
    assert env.section is sec
    assert env.is_range_dependent
    assert env.bottom_depth == 2500.0
    np.testing.assert_allclose(env.sound_speed_at(DEPTH), C3[0])
    with pytest.raises(SeaprofileError, match="section"):
        Environment.from_section("not a section")
