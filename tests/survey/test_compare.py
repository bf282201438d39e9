"""Profile comparison and cast advice against closed forms. All profiles are synthetic."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import (
    beam_to_sounding,
    cast_advice,
    face_error_rule,
    profile_error,
    seafloor_travel_time,
    surface_sensor_check,
    tvu,
    widest_angle,
)

# a synthetic coastal profile: warm mixed layer, thermocline
Z = np.array([0.0, 6.0, 15.0, 35.0, 60.0, 150.0])
C = np.array([1512.0, 1511.8, 1504.0, 1494.0, 1491.0, 1489.5])
ISO = ([0.0, 500.0], [1500.0, 1500.0])
ANGLES = np.linspace(0.0, 75.0, 16)


def test_seafloor_travel_time_isovelocity_geometry():
    # straight-ray geometry: slant h / cos(theta) at speed c; across h tan(theta)
    h, z0, c = 80.0, 4.0, 1500.0
    t, x = seafloor_travel_time(*ISO, ANGLES, h + z0, transducer_depth=z0)
    th = np.radians(ANGLES)
    np.testing.assert_allclose(t, 2 * h / np.cos(th) / c, rtol=1e-13)
    np.testing.assert_allclose(x, h * np.tan(th), rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("g", [0.05, -0.04])
def test_seafloor_travel_time_one_gradient_arc(g):
    # one constant-gradient layer (Jensen, Kuperman, Porter & Schmidt 2011, ch. 3):
    # x = (cos a - cos b) / (g p), t = ln[tan(b/2) / tan(a/2)] / g, sin b = p c(z)
    c0, h = 1500.0, 120.0
    th = np.radians(ANGLES[1:])
    t, x = seafloor_travel_time([0.0, 1000.0], [c0, c0 + 1000 * g], ANGLES[1:], h, two_way=False)
    p = np.sin(th) / c0
    b = np.arcsin(p * (c0 + g * h))
    np.testing.assert_allclose(x, (np.cos(th) - np.cos(b)) / (g * p), rtol=1e-9)
    np.testing.assert_allclose(t, np.log(np.tan(b / 2) / np.tan(th / 2)) / g, rtol=1e-9)


@pytest.mark.parametrize(
    "profile",
    [
        (Z, C),  # dense-ish
        ([0.0, 200.0], [1510.0, 1490.0]),  # two-node planning profile
        (np.arange(0.0, 301.0, 50.0), 1500.0 - 0.05 * np.arange(0.0, 301.0, 50.0)),  # bottles
    ],
)
def test_round_trip_forward_then_recover(profile):
    # invariant: the forward trace fed back to the same profile gives the seafloor back
    z, c = profile
    t, x = seafloor_travel_time(z, c, ANGLES, 95.0, transducer_depth=3.0)
    d, x2 = beam_to_sounding(z, c, ANGLES, t, transducer_depth=3.0)
    # rounding of the closed forms only (1e-9 m on 100 m)
    np.testing.assert_allclose(d, 95.0, atol=1e-8)
    np.testing.assert_allclose(x2, x, atol=1e-8)


def test_same_profile_gives_no_error():
    ds = profile_error(Z, C, Z, C, water_depth=90.0, transducer_depth=2.0)
    for path in ("column", "face", "combined"):
        np.testing.assert_allclose(ds[f"depth_error_{path}"], 0.0, atol=1e-8)
        np.testing.assert_allclose(ds[f"across_error_{path}"], 0.0, atol=1e-8)
    assert ds.attrs["product"] == "profile_error"
    assert "Not for navigation" in ds.attrs["caution"]
    assert "profile_error" in ds.attrs["processing_steps"]


def test_isovelocity_combined_error_closed_form():
    # straight-ray geometry, derived here: true water c_t, used uniform c_u, the array
    # steering with c_u (the default sensor: the used profile's face speed). Snell at the
    # face: sin(theta') = sin(theta) c_t / c_u; slant to the seafloor r = h / cos(theta');
    # the time is reprocessed at speed c_u and angle theta: depth r (c_u / c_t) cos(theta).
    ct, cu, h = 1500.0, 1497.0, 100.0
    ds = profile_error([0, 500], [cu, cu], [0, 500], [ct, ct], water_depth=h, beam_angles=ANGLES)
    th = np.radians(ANGLES)
    thp = np.arcsin(np.sin(th) * ct / cu)
    expected = h / np.cos(thp) * cu / ct * np.cos(th) - h
    np.testing.assert_allclose(ds["depth_error_combined"], expected, atol=1e-9)


@pytest.mark.parametrize("beam", [20.0, 45.0, 65.0])
def test_face_error_small_error_rule(beam):
    # derived here from Snell's law at a flat face: sin(theta') = sin(theta)(1 + e),
    # e = c_face/c_sensor - 1, d(theta) = tan(theta) e; processed depth
    # h cos(theta)/cos(theta') ~= h (1 + tan^2(theta) e); i.e. dz/z ~= -tan^2(theta) dc/c
    # with dc = c_sensor - c_face. Exact isovelocity value h (cos theta/cos theta' - 1).
    c, cs, h = 1500.0, 1499.0, 100.0
    ds = profile_error(*ISO, *ISO, water_depth=h, beam_angles=[beam], sensor_sound_speed=cs)
    th = math.radians(beam)
    thp = math.asin(math.sin(th) * c / cs)
    exact = h * (math.cos(th) / math.cos(thp) - 1)
    assert float(ds["depth_error_face"][0]) == pytest.approx(exact, abs=1e-9)
    rule = float(face_error_rule(beam, h, cs, c))
    # first order: tolerance 5 % (second-order term ~ e tan^2 theta / cos^2 theta)
    assert rule == pytest.approx(exact, rel=5e-2)
    assert rule > 0  # a slow sensor curls the outer beams down


@settings(max_examples=30, deadline=None)
@given(angle=st.floats(0.5, 70.0), offset=st.floats(-5.0, 5.0))
def test_mirror_symmetry(angle, offset):
    # invariant: port and starboard beams of a level transducer see the same water
    ds = profile_error(Z, C + offset, Z, C, water_depth=80.0, beam_angles=[angle, -angle])
    for path in ("column", "face", "combined"):
        d = ds[f"depth_error_{path}"].values
        x = ds[f"across_error_{path}"].values
        assert d[0] == d[1]
        assert x[0] == -x[1]


def test_surface_sensor_check():
    r = surface_sensor_check(Z, C, 1510.0, water_depth=85.0, transducer_depth=3.0)
    assert r["profile_sound_speed"] == pytest.approx(np.interp(3.0, Z, C), abs=1e-12)
    assert r["difference"] == pytest.approx(1510.0 - np.interp(3.0, Z, C), abs=1e-12)
    # slow sensor: outer beam deep, near the first-order rule (10 %: refraction in the column)
    assert r["depth_error"] > 0
    assert r["depth_error_rule"] == pytest.approx(r["depth_error"], rel=0.1)


def test_advice_lines_and_limits():
    used = C.copy()
    used[:2] += 3.0  # a surface layer 3 m/s faster than when the cast was taken
    ds = profile_error(Z, used, Z, C, water_depth=85.0, transducer_depth=2.0)
    err = np.abs(ds["depth_error_combined"].values)
    for order in ("exclusive", "special", "1a", "1b", "2"):
        w = widest_angle(ds, order=order)
        limit = 0.5 * tvu(85.0, order)
        inside = ds["beam_angle"].values <= math.floor(w) if np.isfinite(w) else []
        assert np.all(err[inside] <= limit)
    line = cast_advice(ds, order="1a")
    assert "Order 1a at 85 m" in line and "50 %" in line and "common practice" in line
    strict = cast_advice(ds, a=0.02, b=0.0005, fraction=0.3)
    assert "new cast" in strict and "30 %" in strict


def test_bad_arguments_are_named():
    with pytest.raises(ArgumentError) as err:
        profile_error(Z, C, Z, C, water_depth=1.0, transducer_depth=2.0)
    assert err.value.argument == "water_depth"
    with pytest.raises(ArgumentError) as err:
        profile_error(Z, C, Z, C, water_depth=50.0, beam_angles=[95.0])
    assert err.value.argument == "beam_angles"
    ds = profile_error(Z, C, Z, C, water_depth=50.0)
    with pytest.raises(ArgumentError) as err:
        widest_angle(ds, order="1a", fraction=1.5)
    assert err.value.argument == "fraction"


def test_messy_profiles_two_node_against_bottle_profile():
    # a two-node planning profile used where the water was sampled by 50 m bottles: finite
    # errors, zero at nadir only if the harmonic means agree, mirror-symmetric
    true_z = np.arange(0.0, 301.0, 50.0)
    true_c = np.array([1510.0, 1498.0, 1492.0, 1490.0, 1489.5, 1489.2, 1489.0])
    ds = profile_error(
        [0.0, 300.0],
        [1510.0, 1489.0],
        true_z,
        true_c,
        water_depth=250.0,
        beam_angles=np.linspace(-70, 70, 15),
    )
    for path in ("column", "face", "combined"):
        e = ds[f"depth_error_{path}"].values
        assert np.all(np.isfinite(e))
        np.testing.assert_array_equal(e, e[::-1])
    # same face speed (1510 both): the face path is exactly zero
    np.testing.assert_allclose(ds["depth_error_face"], 0.0, atol=1e-9)
