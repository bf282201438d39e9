"""Soundings from beam angle and travel time against analytic ray geometry.

All profiles here are synthetic.
"""

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import (
    TurnedBeamWarning,
    beam_to_sounding,
    depth_from_harmonic_mean,
    straight_ray_sounding,
)

# a synthetic shelf-edge profile: warm surface layer, thermocline, slow deep increase
Z = np.array([0.0, 8.0, 25.0, 60.0, 120.0, 300.0, 800.0, 1500.0])
C = np.array([1512.0, 1511.5, 1505.0, 1492.0, 1488.0, 1484.5, 1482.0, 1490.0])
ANGLES = np.linspace(-70.0, 70.0, 29)


def test_isovelocity_is_straight_ray_geometry():
    # Straight-ray geometry in uniform water (Snell's law with c constant):
    # depth = z0 + c t/2 cos(beam), across = c t/2 sin(beam)
    c, z0 = 1500.0, 4.5
    t = np.linspace(0.01, 2.0, 7)[:, None]
    depth, across = beam_to_sounding([0.0, 3000.0], [c, c], ANGLES, t, transducer_depth=z0)
    theta = np.radians(ANGLES)
    # tolerance: rounding only (1e-9 relative on ~1 km)
    np.testing.assert_allclose(depth, z0 + c * t / 2 * np.cos(theta), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(across, c * t / 2 * np.sin(theta), rtol=1e-12, atol=1e-9)
    d2, a2 = straight_ray_sounding(ANGLES, t, c, transducer_depth=z0)
    np.testing.assert_allclose(depth, d2, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(across, a2, rtol=1e-12, atol=1e-9)


def _arc_point(c0, g, theta0, tau):
    """One constant-gradient layer c = c0 + g z: the circle of radius R = 1/(|g| p).

    Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, 2nd ed.,
    ch. 3 (ray in a linear profile is a circular arc): with theta from the vertical,
    sin(theta) = p c, the centre lies where c = 0 (z_c = -c0/g), z - z_c = sin(theta)/(g p),
    x = (cos(theta0) - cos(theta))/(g p), and t = (1/g) ln[tan(theta/2)/tan(theta0/2)].
    """
    p = math.sin(theta0) / c0
    theta = 2.0 * math.atan(math.tan(theta0 / 2.0) * math.exp(g * tau))
    zc = -c0 / g
    z = zc + math.sin(theta) / (g * p)
    x = (math.cos(theta0) - math.cos(theta)) / (g * p)
    return z, x


@pytest.mark.parametrize("g", [0.017, -0.05, 0.3])
@pytest.mark.parametrize("beam", [5.0, 30.0, 55.0])
def test_single_gradient_layer_is_a_circular_arc(g, beam):
    c0, tau = 1500.0, 0.4
    bottom = 5000.0
    depth, across = beam_to_sounding([0.0, bottom], [c0, c0 + g * bottom], beam, tau, two_way=False)
    z, x = _arc_point(c0, g, math.radians(beam), tau)
    # closed form (Jensen et al. 2011, ch. 3); tolerance 1e-6 m: the textbook form loses
    # digits to cancellation in cos(theta0) - cos(theta) near nadir, not the kernel
    assert depth == pytest.approx(z, abs=1e-6)
    assert across == pytest.approx(x, abs=1e-6)


@settings(max_examples=60, deadline=None)
@given(
    angle=st.floats(0.0, 80.0),
    time=st.floats(0.0, 3.0),
    z0=st.floats(0.0, 20.0),
)
def test_mirrored_beams_give_mirrored_soundings(angle, time, z0):
    # invariant: the port and starboard beams of a level transducer see the same water
    d, a = beam_to_sounding(Z, C, [angle, -angle], time, transducer_depth=z0)
    np.testing.assert_array_equal(d[0], d[1])
    np.testing.assert_array_equal(a[0], -a[1])


def _forward_ray(z, c, theta0, z_end):
    """Range (m) and one-way time (s) of a ray from z[0] at theta0 to depth z_end.

    Layer by layer with the closed forms of Jensen et al. (2011) ch. 3 written with
    angles (x = (cos a - cos b)/(g p), t = ln[tan(b/2)/tan(a/2)]/g), independent of the
    package's kernel; no turning allowed.
    """
    p = math.sin(theta0) / c[0]
    x = t = 0.0
    for k in range(len(z) - 1):
        zb = min(z[k + 1], z_end)
        cb = c[k] + (c[k + 1] - c[k]) * (zb - z[k]) / (z[k + 1] - z[k])
        ca = c[k]
        a, b = math.asin(p * ca), math.asin(p * cb)
        g = (c[k + 1] - c[k]) / (z[k + 1] - z[k])
        x += (math.cos(a) - math.cos(b)) / (g * p)
        t += math.log(math.tan(b / 2) / math.tan(a / 2)) / g
        if zb >= z_end:
            return x, t
    raise AssertionError("end depth below the profile")


@pytest.mark.parametrize("target", [(150.0, 400.0), (-600.0, 1200.0), (40.0, 90.0)])
def test_round_trip_to_a_known_seafloor_point(target):
    across_true, depth_true = target
    # launch angle that reaches the point: brentq on the forward closed forms (scipy)
    side = math.copysign(1.0, across_true)
    theta = brentq(
        lambda th: _forward_ray(Z, C, th, depth_true)[0] - abs(across_true),
        1e-4,
        math.radians(75.0),
        xtol=1e-15,
    )
    t_one_way = _forward_ray(Z, C, theta, depth_true)[1]
    depth, across = beam_to_sounding(Z, C, side * math.degrees(theta), 2.0 * t_one_way)
    # tolerance 1e-5 m: the angle root to 1e-15 rad and the textbook forms' cancellation
    assert depth == pytest.approx(depth_true, abs=1e-5)
    assert across == pytest.approx(across_true, abs=1e-5)


def test_nadir_matches_harmonic_mean_depth():
    # at nadir the exact ray and the harmonic mean (exact integral of dz/c, the package's
    # layers.harmonic_mean_sound_speed) must agree: the definition of the harmonic mean
    t = np.array([0.05, 0.2, 0.8, 1.5])
    d_ray, x_ray = beam_to_sounding(Z, C, 0.0, t, transducer_depth=3.0)
    d_hm = depth_from_harmonic_mean(Z, C, t, transducer_depth=3.0)
    np.testing.assert_allclose(d_ray, d_hm, atol=1e-6)
    np.testing.assert_array_equal(x_ray, 0.0)


@pytest.mark.parametrize("beam", [15.0, 45.0, 60.0])
def test_wrong_transducer_sound_speed_small_error_rule(beam):
    # Small-error rule, derived here from Snell's law (the rule as usually quoted in
    # hydrography texts is from memory): a flat face steers with sin(theta)/c_s fixed, so
    # if the water at the face is c = c_s (1 + e) the beam leaves at
    # sin(theta') = sin(theta) (1 + e), i.e. d(theta) = tan(theta) e to first order. Along
    # a slant range r = c t/2 in uniform water, depth r cos(theta') changes by
    # -r sin(theta) d(theta) = -d tan(theta) d(theta) = -d tan^2(theta) e (d = r cos theta),
    # and the across-track distance by r cos(theta) d(theta) = d d(theta).
    c, e, t = 1500.0, 2e-4, 0.6
    theta = math.radians(beam)
    d0, x0 = beam_to_sounding([0.0, 2000.0], [c, c], beam, t)
    d1, x1 = beam_to_sounding([0.0, 2000.0], [c, c], beam, t, transducer_sound_speed=c / (1 + e))
    dtheta = math.tan(theta) * e
    # first-order rule: tolerance 2 % of the change (the second-order term is ~e tan^2)
    assert d1 - d0 == pytest.approx(-d0 * math.tan(theta) * dtheta, rel=2e-2)
    assert x1 - x0 == pytest.approx(d0 * dtheta, rel=2e-2)


@settings(max_examples=40, deadline=None)
@given(
    speeds=st.lists(st.floats(1440.0, 1560.0), min_size=2, max_size=12),
    z0=st.floats(0.0, 20.0),
    seed=st.integers(0, 2**31 - 1),
)
def test_fan_tables_and_the_layer_walk_give_identical_soundings(speeds, z0, seed):
    # Internal consistency (no outside reference): a fan shared by many pings is traced
    # by tables and binary search, a full angle array by walking the layers; both must
    # give the same bits, including turned beams, missing beams, zero times and times
    # that go below the deepest node.
    rng = np.random.default_rng(seed)
    z = np.concatenate([[0.0], np.cumsum(rng.uniform(2.0, 300.0, len(speeds) - 1))])
    c = np.asarray(speeds)
    fan = np.concatenate([np.linspace(-80.0, 80.0, 9), [np.nan, 0.0]])
    # 40 pings: enough beams per distinct angle that the fan tables are always used
    t = rng.uniform(0.0, 3.0 * z[-1] / 1400.0 + 0.1, (40, fan.size))
    t[0] = 0.0
    t[1, 3] = np.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", TurnedBeamWarning)
        shared = beam_to_sounding(z, c, fan, t, transducer_depth=z0, return_flags=True)
        full = np.broadcast_to(fan, t.shape).copy()
        walked = beam_to_sounding(z, c, full, t, transducer_depth=z0, return_flags=True)
    for a, b in zip(shared, walked):
        np.testing.assert_array_equal(a, b)


def test_turned_beam_is_nan_and_counted():
    # a strong speed increase: a 70 degree beam reaches p c = 1 near 480 m (about 1.9 s
    # one-way along its arc) and turns upward
    z, c = [0.0, 1000.0], [1500.0, 1700.0]
    with pytest.warns(TurnedBeamWarning, match="^2 beam"):
        d, x, f = beam_to_sounding(z, c, [0.0, 70.0, -70.0], 8.0, return_flags=True)
    assert np.isfinite(d[0]) and f[0] == 0
    assert np.all(np.isnan(d[1:])) and np.all(np.isnan(x[1:]))
    np.testing.assert_array_equal(f, [0, 1, 1])
    # before the turning point the same beam still gives a number
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        d, x, f = beam_to_sounding(z, c, 70.0, 0.1, return_flags=True)
    assert np.isfinite(d) and f == 0


def test_missing_beams_are_flagged():
    d, x, f = beam_to_sounding(Z, C, [np.nan, 10.0], [0.5, np.nan], return_flags=True)
    assert np.all(np.isnan(d)) and np.all(np.isnan(x))
    np.testing.assert_array_equal(f, [2, 2])


def test_swath_shape_and_inputs_untouched():
    angles = np.linspace(-60, 60, 11)
    times = np.full((4, 11), 0.3)
    z, c = Z.copy(), C.copy()
    d, x = beam_to_sounding(z, c, angles, times)
    assert d.shape == x.shape == (4, 11)
    np.testing.assert_array_equal(z, Z)
    np.testing.assert_array_equal(c, C)


@pytest.mark.parametrize(
    "kwargs, argument",
    [
        ({"beam_angle": 90.0}, "beam_angle"),
        ({"beam_angle": -95.0}, "beam_angle"),
        ({"beam_angle": np.inf}, "beam_angle"),
        ({"travel_time": -0.1}, "travel_time"),
        ({"profile_depth": [0.0, 10.0, 10.0]}, "profile_depth"),
        ({"profile_sound_speed": [1500.0, -1.0, 1500.0]}, "profile_sound_speed"),
        ({"profile_sound_speed": [1500.0, 1500.0]}, "profile_sound_speed"),
        ({"transducer_sound_speed": 0.0}, "transducer_sound_speed"),
        ({"transducer_depth": np.nan}, "transducer_depth"),
    ],
)
def test_bad_arguments_are_named(kwargs, argument):
    args = {
        "profile_depth": [0.0, 10.0, 20.0],
        "profile_sound_speed": [1500.0, 1501.0, 1502.0],
        "beam_angle": 10.0,
        "travel_time": 0.1,
    }
    args.update(kwargs)
    with pytest.raises(ArgumentError) as err:
        beam_to_sounding(**args)
    assert err.value.argument == argument


# --- transducer speed join and the xarray/dask route ---------------------------------

from seaprofile.survey import join_transducer_speed, swath_soundings  # noqa: E402


def test_join_methods_put_the_sensor_speed_at_the_transducer():
    z, c = [0.0, 10.0, 50.0], [1510.0, 1505.0, 1490.0]
    zs, cs, how = join_transducer_speed(z, c, 1508.0, transducer_depth=2.0, method="node")
    assert zs[0] == 2.0 and cs[0] == 1508.0 and how.startswith("node")
    np.testing.assert_array_equal(zs[1:], [10.0, 50.0])
    zs, cs, how = join_transducer_speed(z, c, 1508.0, transducer_depth=2.0, join_distance=5.0)
    # blend: sensor speed at 2 m, the profile itself from 7 m down (linear profile values
    # at 7 m: 1510 - 0.5 * 7 = 1506.5)
    np.testing.assert_allclose(zs, [2.0, 7.0, 10.0, 50.0])
    np.testing.assert_allclose(cs, [1508.0, 1506.5, 1505.0, 1490.0])
    assert "5 m" in how
    zs, cs, how = join_transducer_speed(z, c, 1508.0, method="launch")
    np.testing.assert_array_equal(cs, c)


def test_swath_route_matches_numpy_on_dask_and_xarray():
    import xarray as xr

    angles = np.linspace(-65.0, 65.0, 9)
    times = np.linspace(0.1, 0.3, 6)[:, None] + 0.01 * np.abs(angles)[None, :] / 65
    expected = beam_to_sounding(Z, C, angles, times, transducer_depth=3.0)
    a = xr.DataArray(angles, dims="beam")
    t = xr.DataArray(times, dims=("ping", "beam")).chunk({"ping": 2})
    ds = swath_soundings(Z, C, a, t, transducer_depth=3.0)
    assert ds["depth"].dims == ("ping", "beam")
    assert ds["depth"].chunks is not None  # lazy until computed
    ds = ds.compute()
    np.testing.assert_array_equal(ds["depth"].values, expected[0])
    np.testing.assert_array_equal(ds["across_track_distance"].values, expected[1])
    assert ds.attrs["product"] == "soundings" and "caution" in ds.attrs
    d, x = swath_soundings(Z, C, angles, times, transducer_depth=3.0)
    np.testing.assert_array_equal(d, expected[0])


def test_node_join_in_beam_to_sounding_is_the_joined_profile():
    zs, cs, _ = join_transducer_speed(Z, C, 1509.0, transducer_depth=3.0, method="node")
    expected = beam_to_sounding(zs, cs, ANGLES, 0.2, transducer_depth=3.0)
    got = beam_to_sounding(
        Z, C, ANGLES, 0.2, transducer_depth=3.0, transducer_sound_speed=1509.0, join="node"
    )
    np.testing.assert_array_equal(got[0], expected[0])
    # uniform water with the same sensor speed: any join leaves straight-ray geometry
    for join in ("launch", "node", "blend"):
        d, x = beam_to_sounding(
            [0.0, 900.0], [1500.0, 1500.0], 40.0, 0.2, transducer_sound_speed=1500.0, join=join
        )
        assert d == pytest.approx(150.0 * math.cos(math.radians(40.0)), abs=1e-9)


def test_log_ratio_series_matches_the_logarithm_where_it_is_used():
    # ln(1 + x) / x: the kernel's Taylor series for |x| < 2e-3 against the logarithm
    # (math.log1p, correctly rounded to about 1 ulp); tolerance a few ulp
    from seaprofile.survey._kernels import _log_ratio

    for x in np.concatenate([np.linspace(-2e-3, 2e-3, 401), [1e-12, -1e-12, 1.9999e-3]]):
        if x == 0.0:
            assert _log_ratio(0.0) == 1.0
            continue
        assert _log_ratio(float(x)) == pytest.approx(math.log1p(x) / x, rel=5e-16)


def test_a_shared_fan_is_traced_by_tables_and_a_full_angle_array_walks(monkeypatch):
    # which route the identity test above exercises (internal consistency, no source)
    import seaprofile.survey.refraction as refraction

    calls = []
    real = refraction._fan_tables
    monkeypatch.setattr(refraction, "_fan_tables", lambda *a: calls.append(1) or real(*a))
    t = np.full((40, ANGLES.size), 0.2)
    beam_to_sounding(Z, C, ANGLES, t, transducer_depth=3.0)
    assert calls == [1]
    beam_to_sounding(Z, C, np.broadcast_to(ANGLES, t.shape).copy(), t, transducer_depth=3.0)
    assert calls == [1]
