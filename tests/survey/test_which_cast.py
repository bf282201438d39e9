"""Cast choice per ping and neighbour checks. All positions and casts are invented."""

import math

import numpy as np
import pytest

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import EARTH_RADIUS, cast_for_pings, great_circle_distance, neighbour_check


def test_great_circle_sphere_closed_forms():
    # spherical geometry: along a meridian d = R dphi; equator to pole = pi R / 2;
    # along the equator d = R dlambda (exact on the sphere)
    assert great_circle_distance(10.0, 5.0, 11.0, 5.0) == pytest.approx(
        EARTH_RADIUS * math.radians(1.0), rel=1e-12
    )
    assert great_circle_distance(0.0, 0.0, 90.0, 40.0) == pytest.approx(
        math.pi * EARTH_RADIUS / 2, rel=1e-12
    )
    assert great_circle_distance(0.0, 179.5, 0.0, -179.5) == pytest.approx(
        EARTH_RADIUS * math.radians(1.0), rel=1e-12
    )


CAST_T = np.array([0.0, 3600.0, 7200.0])
CAST_LAT = np.array([50.0, 50.1, 50.0])
CAST_LON = np.array([-4.0, -4.0, -3.8])


def test_time_distance_and_both():
    pt = np.array([100.0, 3000.0, 7000.0])
    plat = np.array([50.0, 50.0, 50.1])
    plon = np.array([-3.8, -4.0, -4.0])
    np.testing.assert_array_equal(
        cast_for_pings(CAST_T, CAST_LAT, CAST_LON, pt, plat, plon, rule="time"), [0, 1, 2]
    )
    np.testing.assert_array_equal(
        cast_for_pings(CAST_T, CAST_LAT, CAST_LON, pt, plat, plon, rule="distance"), [2, 0, 1]
    )
    # ping 0 is ~14.3 km from cast 2 and 0 h away from cast 0 (14.3 km off): with 1 km/h
    # time counts little, with 100 km/h it decides
    slow = cast_for_pings(
        CAST_T, CAST_LAT, CAST_LON, pt, plat, plon, rule="both", distance_scale=1000.0
    )
    fast = cast_for_pings(
        CAST_T, CAST_LAT, CAST_LON, pt, plat, plon, rule="both", distance_scale=1e5
    )
    np.testing.assert_array_equal(fast, [0, 1, 2])
    assert slow[1] == 0 and slow[2] == 1
    earlier = cast_for_pings(
        CAST_T, CAST_LAT, CAST_LON, [-5.0, 3599.0], [50, 50], [-4, -4], only_earlier=True
    )
    np.testing.assert_array_equal(earlier, [-1, 0])


def test_datetime_times():
    base = np.datetime64("2026-06-01T00:00:00")
    ct = base + CAST_T.astype("timedelta64[s]")
    pt = base + np.array([4000], dtype="timedelta64[s]")
    assert cast_for_pings(ct, CAST_LAT, CAST_LON, pt, [50.0], [-4.0])[0] == 1


def test_bad_arguments():
    with pytest.raises(ArgumentError) as err:
        cast_for_pings(CAST_T, CAST_LAT, CAST_LON, [0.0], [50.0], [-4.0], rule="both")
    assert err.value.argument == "distance_scale"
    with pytest.raises(ArgumentError) as err:
        cast_for_pings(CAST_T, CAST_LAT, CAST_LON, [0.0], [50.0], [-4.0], rule="closest")
    assert err.value.argument == "rule"


def test_neighbour_check_flags_a_changed_water_column():
    z = np.array([0.0, 8.0, 30.0, 200.0])
    c = np.array([1510.0, 1509.0, 1495.0, 1490.0])
    warm = c + np.array([6.0, 6.0, 0.0, 0.0])  # surface layer warmed strongly
    ds = neighbour_check(
        [(z, c), (z, c), (z, warm)], water_depth=100.0, outer_angle=65.0, order="special"
    )
    assert ds["outer_depth_error"][0] == pytest.approx(0.0, abs=1e-8)
    assert not bool(ds["exceeds"][0])
    assert bool(ds["exceeds"][1])
    assert "common practice" in ds.attrs["rule"]
