"""The rays a fan figure draws: fine samples along the traced arcs, merged with the event
points, so that turning points are drawn round while every point stays on the ray."""

import numpy as np
import pytest

from seaprofile.plots.rays import (
    DRAW_POINTS_PER_RAY,
    DRAW_POINTS_TOTAL,
    MIN_DRAW_POINTS_PER_RAY,
    fan_for_drawing,
    plot_fan,
    ray_segments,
)
from seaprofile.propagation import Environment, trace_fan

C0, G = 1500.0, 0.017  # m/s, 1/s: a constant sound-speed gradient (invented)
ZS, BOTTOM, RMAX = 100.0, 5000.0, 40e3  # m


@pytest.fixture(scope="module")
def linear():
    env = Environment.from_arrays([0.0, BOTTOM], [C0, C0 + G * BOTTOM], bottom_depth=BOTTOM)
    angles = np.array([5.0, 10.0, 15.0])
    return env, angles, trace_fan(env, ZS, angles, RMAX)


def _circle(angle_deg):
    """Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, 2nd ed.,
    ch. 3: in a constant gradient g a ray is a circle of radius R = c_s / (g cos theta_0)
    about the depth where c would vanish (-c0/g); below the source its lowest point (the
    turning point) lies at range (c_s / g) tan theta_0."""
    cs = C0 + G * ZS
    th = np.radians(angle_deg)
    return (cs / G) * np.tan(th), -C0 / G, cs / (G * np.cos(th))


def _distance_to_circle(r, z, angle):
    rc, zc, radius = _circle(angle)
    return np.abs(np.hypot(r - rc, z - zc) - radius)


def test_drawn_points_lie_on_the_analytic_arc_and_segments_hug_it(linear):
    env, angles, fan = linear
    drawn = fan_for_drawing(fan, env)
    for k, angle in enumerate(angles):
        rc, _, _ = _circle(angle)
        r, z = drawn["range"].values[k], drawn["depth"].values[k]
        arc = np.isfinite(r) & (r <= 2 * rc)  # down to the turning point and back to ZS
        # every drawn point is a point of the traced ray (closed form: exact to rounding)
        assert _distance_to_circle(r[arc], z[arc], angle).max() < 1e-6 * _circle(angle)[2]
        # the straight segment between neighbours stays within 0.5 m of the arc: a smooth
        # line at any figure size (the deep panel spans ~5000 m in ~450 px, 11 m a pixel)
        mid_r, mid_z = 0.5 * (r[arc][1:] + r[arc][:-1]), 0.5 * (z[arc][1:] + z[arc][:-1])
        assert _distance_to_circle(mid_r, mid_z, angle).max() < 0.5
    # the event points alone (start, turning point, reflections) are a polygon: the chord
    # across the turning point misses the arc by hundreds of metres
    r, z = fan["range"].values[1], fan["depth"].values[1]
    ok = np.isfinite(r) & (r <= 2 * _circle(angles[1])[0])
    mid = 0.5 * (r[ok][1:] + r[ok][:-1]), 0.5 * (z[ok][1:] + z[ok][:-1])
    assert _distance_to_circle(*mid, angles[1]).max() > 50.0


def test_event_points_are_kept_and_per_ray_results_unchanged(linear):
    env, _, fan = linear
    drawn = fan_for_drawing(fan, env)
    for k in range(fan.sizes["ray"]):
        t_drawn = drawn["travel_time"].values[k]
        t_event = fan["travel_time"].values[k]
        t_event = t_event[np.isfinite(t_event)]
        assert np.isin(t_event, t_drawn).all()  # reflections and turning points included
        t = t_drawn[np.isfinite(t_drawn)]
        assert np.all(np.diff(t) >= 0)  # in order along the ray
    for name in (
        "surface_reflections",
        "bottom_reflections",
        "turning_points",
        "end_reason",
        "launch_angle",
    ):
        np.testing.assert_array_equal(drawn[name].values, fan[name].values)
    assert drawn.attrs == fan.attrs
    fig = plot_fan(drawn, env)  # the figure takes it as it takes any RayFan
    assert len(fig.axes) >= 2


def test_sampling_is_bounded_for_big_fans():
    env = Environment.from_arrays([0.0, BOTTOM], [C0, C0 + G * BOTTOM], bottom_depth=BOTTOM)
    angles = np.linspace(-10.0, 10.0, 2000)
    fan = trace_fan(env, ZS, angles, RMAX, range_step=RMAX / 50)
    drawn = fan_for_drawing(fan, env)
    per_ray = max(DRAW_POINTS_TOTAL // angles.size, MIN_DRAW_POINTS_PER_RAY)
    assert per_ray < DRAW_POINTS_PER_RAY
    # the samples asked for (plus the end point) and the fan's own points, no more
    assert ray_segments(drawn).shape[1] <= fan.sizes["point"] + per_ray + 2
