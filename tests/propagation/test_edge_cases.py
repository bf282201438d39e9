"""The ray API on edge cases: special launches and sources, huge ranges, bad profiles,
memory refused before allocating; invariants (Snell, reciprocity) with hypothesis."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import Environment, eigenrays, trace_fan
from seaprofile.propagation.integrate import trace_fan_integrated

ISO = ([0.0, 100.0], [1500.0, 1500.0])  # one layer, no gradient
ISO3 = ([0.0, 40.0, 70.0, 100.0], [1500.0, 1500.0, 1500.0, 1500.0])  # zero-gradient layers
UP = ([0.0, 100.0], [1500.0, 1510.0])  # one layer, upward refracting
MIXED = ([0.0, 100.0, 200.0, 300.0], [1500.0, 1510.0, 1505.0, 1520.0])


def _tracers():
    return [
        lambda env, *a, **k: trace_fan(env, *a, **k),
        lambda env, *a, **k: trace_fan_integrated(env, *a, **k),
    ]


def _valid(fan, ray=0):
    n = int(fan.point_count[ray])
    return {k: fan[k].values[ray, :n] for k in ("range", "depth", "travel_time", "angle")}


@pytest.mark.parametrize("solver", [0, 1], ids=["exact", "integrated"])
@pytest.mark.parametrize("profile", [ISO, ISO3, UP, MIXED], ids=["iso", "iso3", "up", "mixed"])
@pytest.mark.parametrize("where", ["surface", "bottom", "node", "inside"])
@pytest.mark.parametrize("theta", [0.0, 90.0, -90.0, 1e-12, -1e-12])
@pytest.mark.parametrize("range_step", [None, 500.0])
def test_special_launches_and_sources_are_finite_and_in_the_water(
    solver, profile, where, theta, range_step
):
    env = Environment.from_arrays(*profile)
    bottom = env.bottom_depth
    zs = {
        "surface": 0.0,
        "bottom": bottom,
        "node": float(env.depth[1]) if env.depth.size > 2 else 0.0,
        "inside": 0.37 * bottom,
    }[where]
    fan = _tracers()[solver](env, zs, [theta], 4000.0, range_step=range_step, max_bounces=20)
    pts = _valid(fan)
    for v in pts.values():
        assert np.all(np.isfinite(v))
    assert np.all(pts["depth"] >= 0.0) and np.all(pts["depth"] <= bottom)
    assert np.all(np.diff(pts["range"]) >= 0) and np.all(np.diff(pts["travel_time"]) >= 0)
    # a vertical ray never gains range: it bounces until the reflection limit stops it
    reason = int(fan.end_reason[0])
    assert reason == (1 if abs(theta) == 90.0 else 0)


@pytest.mark.parametrize("zs", [0.0, 37.0, 100.0])
def test_horizontal_launch_in_isovelocity_water_is_a_straight_line(zs):
    # a straight horizontal ray (Jensen et al. 2011, ch. 3: g = 0, constant angle)
    env = Environment.from_arrays(*ISO)
    fan = trace_fan(env, zs, [0.0], 1e7, range_step=1e5)
    pts = _valid(fan)
    np.testing.assert_allclose(pts["depth"], zs, atol=0)
    # rounding of r / c only
    np.testing.assert_allclose(pts["travel_time"], pts["range"] / 1500.0, rtol=1e-14)


def test_vertical_launch_bounces_in_place():
    # a vertical ray in isovelocity water: up 50 m, then 100 m legs; the 4th reflection is
    # one more than max_bounces = 3, so it stops on the bottom at range 0 after 350 m
    env = Environment.from_arrays(*ISO)
    fan = trace_fan(env, 50.0, [-90.0], 1000.0, max_bounces=3)
    pts = _valid(fan)
    assert int(fan.end_reason[0]) == 1
    np.testing.assert_allclose(pts["range"], 0.0, atol=1e-9)
    np.testing.assert_allclose(pts["travel_time"][-1], 350.0 / 1500.0, rtol=1e-14)
    assert (int(fan.surface_reflections[0]), int(fan.bottom_reflections[0])) == (2, 2)


def test_huge_range_keeps_the_image_geometry():
    # a 0.01 degree ray over 10,000 km in 100 m of isovelocity water: the method of
    # images (Jensen et al. 2011, ch. 2) folds the straight line at 0 and 100 m, about 17
    # reflections; rounding grows with the reflections (~1e-12 m each), 1e-6 m is ample
    env = Environment.from_arrays(*ISO)
    theta = 0.01
    fan = trace_fan(env, 50.0, [theta], 1e7, range_step=1e6, max_bounces=1000)
    r = fan.range.values[0]
    z = np.mod(50.0 + r * np.tan(np.radians(theta)), 200.0)
    z = np.where(z > 100.0, 200.0 - z, z)
    np.testing.assert_allclose(fan.depth.values[0], z, atol=1e-6)
    np.testing.assert_allclose(
        fan.travel_time.values[0], r / np.cos(np.radians(theta)) / 1500.0, rtol=1e-12
    )
    assert int(fan.end_reason[0]) == 0


@pytest.mark.parametrize(
    "depth, speed, name",
    [
        ([0.0, np.nan], [1500.0, 1500.0], "depth"),
        ([0.0, 100.0], [1500.0, np.nan], "sound_speed"),
        ([0.0, 100.0], [1500.0, np.inf], "sound_speed"),
    ],
)
def test_nan_in_the_profile_is_refused(depth, speed, name):
    with pytest.raises(SeaprofileError, match=name):
        Environment.from_arrays(depth, speed)


@pytest.mark.parametrize(
    "call, name",
    [
        (lambda env: trace_fan(env, np.nan, [1.0], 1000.0), "source_depth"),
        (lambda env: trace_fan(env, 101.0, [1.0], 1000.0), "source_depth"),
        (lambda env: trace_fan(env, 50.0, [np.nan], 1000.0), "angles"),
        (lambda env: trace_fan(env, 50.0, [1.0], np.inf), "max_range"),
        (lambda env: trace_fan(env, 50.0, [1.0], 1000.0, max_bounces=np.nan), "max_bounces"),
        (lambda env: trace_fan(env, 50.0, [1.0], 1000.0, max_bounces=2.5), "max_bounces"),
        (lambda env: eigenrays(env, 50.0, [1000.0], [100.5]), "receiver_depths"),
        (lambda env: eigenrays(env, 50.0, [1000.0], [np.nan]), "receiver_depths"),
        (
            lambda env: eigenrays(env, 50.0, [1000.0], [10.0], max_reflections=np.nan),
            "max_reflections",
        ),
    ],
)
def test_bad_arguments_raise_naming_them(call, name):
    env = Environment.from_arrays(*ISO)
    with pytest.raises(SeaprofileError, match=name):
        call(env)


@pytest.mark.parametrize(
    "call, name",
    [
        (
            lambda env: trace_fan(env, 50.0, np.linspace(-10, 10, 1000), 1e7, range_step=1.0),
            "range_step",
        ),
        (lambda env: trace_fan(env, 50.0, [1.0], 1e300, range_step=1e-300), "range_step"),
        (
            lambda env: trace_fan_integrated(
                env, 50.0, np.linspace(-10, 10, 1000), 1e7, range_step=1.0
            ),
            "range_step",
        ),
        (lambda env: eigenrays(env, 50.0, np.linspace(1.0, 1e6, 10**6), [10.0]), "receiver_ranges"),
    ],
)
def test_oversized_requests_are_refused_before_allocating(call, name):
    # refused from the estimate alone: these would need hundreds of GB (or an infinite
    # count); the message names the argument and the memory asked for
    env = Environment.from_arrays(*ISO)
    with pytest.raises(SeaprofileError, match=rf"{name}: .* GB of memory"):
        call(env)


def test_range_dependent_eigenrays_say_what_to_do():
    env = Environment.from_arrays(*ISO, bathymetry=([0.0, 1000.0], [100.0, 80.0]))
    with pytest.raises(SeaprofileError, match="environment: .*range-independent"):
        eigenrays(env, 50.0, [500.0], [10.0])


# --- invariants -----------------------------------------------------------------------
layered = st.integers(1, 5).flatmap(
    lambda n: st.tuples(
        st.lists(st.floats(5.0, 300.0), min_size=n, max_size=n),
        st.lists(
            st.sampled_from([1480.0, 1490.0, 1500.0, 1510.0]) | st.floats(1450.0, 1550.0),
            min_size=n + 1,
            max_size=n + 1,
        ),
    )
)


@settings(max_examples=60, deadline=None)
@given(layered, st.data())
def test_snell_invariant_from_nodes_and_boundaries(profile, data):
    # Jensen et al. (2011), ch. 3: cos(theta) / c is constant along a ray in
    # range-independent water, also for sources on nodes, the surface or the bottom and
    # for horizontal and vertical launches (the kernel's grazing rules change it by at
    # most 5e-11 relative, codes.RIDE_SINE)
    steps, speeds = profile
    z = np.concatenate([[0.0], np.cumsum(steps)])
    env = Environment.from_arrays(z, speeds)
    zs = data.draw(st.sampled_from(list(z)) | st.floats(0.0, float(z[-1])))
    theta = data.draw(st.sampled_from([0.0, 90.0, -90.0]) | st.floats(-89.9, 89.9))
    fan = trace_fan(env, zs, [theta], 5000.0, max_bounces=40)
    pts = _valid(fan)
    p = np.cos(np.radians(theta)) / env.sound_speed_at(zs)
    inv = np.cos(np.radians(pts["angle"])) / env.sound_speed_at(pts["depth"])
    np.testing.assert_allclose(inv, p, rtol=1e-9, atol=1e-15)


@settings(max_examples=25, deadline=None)
@given(layered, st.floats(0.0, 1.0), st.floats(0.0, 1.0), st.floats(500.0, 20000.0))
def test_travel_time_reciprocity_path_by_path(profile, fs, fr, r):
    # reciprocity (Jensen et al. 2011, ch. 3: the ray equations are reversible): every
    # eigenray from A to B, launched back from B at minus its arrival angle, comes back to
    # A's range with the same travel time. Checked path by path, so the test does not
    # depend on the search finding the same set of paths from both ends.
    steps, speeds = profile
    z = np.concatenate([[0.0], np.cumsum(steps)])
    env = Environment.from_arrays(z, speeds)
    # ends at least 1 mm (a thousand eigenray depth tolerances) from the surface and the
    # bottom: closer, the ray launched back can reflect between its end and the wanted
    # depth, where the first-order end correction below no longer holds (a source 2.8 um
    # below the surface gave 2.4e-10 relative). Ends on the boundaries are checked exactly
    # against the image method in test_source_or_receiver_on_the_surface_or_bottom_against_images
    # (tests/propagation/test_eigenrays.py).
    margin = 1e-3
    zs, zr = (margin + f * (z[-1] - 2 * margin) for f in (fs, fr))
    e = eigenrays(env, zs, [r], [zr], max_reflections=2)
    for k in range(e.sizes["path"]):
        back = trace_fan(env, zr, [-float(e.arrival_angle[k])], r, range_step=r, max_bounces=3)
        assert int(back.end_reason[0]) == 0
        # Both rays end a little off the exact eigenray (the forward one within its 1 um
        # depth tolerance, the backward one by that miss magnified by the ray tubes): move
        # each end to the wanted depth with dT/dz = sin(theta)/c at fixed range (the
        # vertical slowness, Jensen et al. 2011, ch. 3); what remains is second order in
        # the misses (< 1e-12 s here) and rounding
        c_r, c_s = env.sound_speed_at(zr), env.sound_speed_at(zs)
        t_fwd = (
            float(e.travel_time[k])
            - float(e.depth_miss[k]) * np.sin(np.radians(float(e.arrival_angle[k]))) / c_r
        )
        t_back = (
            back.travel_time.values[0, -1]
            + (zs - back.depth.values[0, -1]) * np.sin(np.radians(back.angle.values[0, -1])) / c_s
        )
        np.testing.assert_allclose(t_back, t_fwd, rtol=1e-10)
