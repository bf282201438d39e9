"""Exact layered ray tracing (kernels.py, rays.py) against closed forms and quadrature."""

import sys
import types

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import integrate, optimize

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import Environment, trace_fan


def _points(fan, ray, kind=None):
    n = int(fan.point_count[ray])
    sel = {
        k: fan[k].values[ray, :n] for k in ("range", "depth", "travel_time", "angle", "point_kind")
    }
    if kind is not None:
        m = sel["point_kind"] == kind
        sel = {k: v[m] for k, v in sel.items()}
    return sel


@pytest.mark.parametrize(
    "g, zs, theta", [(0.05, 100.0, 10.0), (0.05, 100.0, 3.0), (-0.03, 2000.0, -8.0)]
)
def test_constant_gradient_circle(g, zs, theta):
    c0 = 1500.0 if g > 0 else 1550.0
    bottom = 5000.0
    env = Environment.from_arrays([0.0, bottom], [c0, c0 + g * bottom])
    fan = trace_fan(env, zs, [theta], 200000.0)
    turn = _points(fan, 0, kind=2)
    # Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, 2nd ed.,
    # ch. 3.2: in c(z) = c0 + g z every ray is a circle of radius R = c_s / (|g| cos th0)
    # whose centre lies where c = 0 (z = -c0/g). Derived here: the turning point is where
    # p c = 1, i.e. c_t = c_s / cos th0; it lies R |sin th0| away in range. Along the arc,
    # ds = R dth and c = |g| R cos th, so dt = dth / (|g| cos th) and the time from launch
    # to the vertex is (1/|g|) ln tan(|th0|/2 + pi/4) (integral of sec).
    th0 = np.radians(abs(theta))
    cs = c0 + g * zs
    radius = cs / (abs(g) * np.cos(th0))
    z_turn = (cs / np.cos(th0) - c0) / g
    r_turn = radius * np.sin(th0)
    t_turn = np.log(np.tan(th0 / 2 + np.pi / 4)) / abs(g)
    # closed forms evaluated in double precision: 1e-9 relative leaves ~1e4 ulp of slack
    # for the few hundred operations along the ray
    np.testing.assert_allclose(turn["depth"][0], z_turn, rtol=1e-9)
    np.testing.assert_allclose(turn["range"][0], r_turn, rtol=1e-9)
    np.testing.assert_allclose(turn["travel_time"][0], t_turn, rtol=1e-9)
    # later vertices: same depth, and evenly spaced in range and time (periodic path;
    # with a surface reflection in the cycle the period is not simply 2 r_turn)
    np.testing.assert_allclose(turn["depth"], z_turn, rtol=1e-9)
    assert turn["range"].size > 2
    np.testing.assert_allclose(np.diff(turn["range"]), np.diff(turn["range"])[0], rtol=1e-9)
    np.testing.assert_allclose(
        np.diff(turn["travel_time"]), np.diff(turn["travel_time"])[0], rtol=1e-9
    )
    if int(fan.surface_reflections[0]) == 0 and int(fan.bottom_reflections[0]) == 0:
        np.testing.assert_allclose(np.diff(turn["range"]), 2 * r_turn, rtol=1e-9)
        np.testing.assert_allclose(np.diff(turn["travel_time"]), 2 * t_turn, rtol=1e-9)


def _munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


@pytest.mark.parametrize("theta", [4.0, 10.0])
def test_munk_cycle_range_against_quadrature(theta):
    # Munk (1974), JASA 55, 220-226: c(z) = c1 [1 + eps (eta + exp(-eta) - 1)],
    # eta = 2 (z - z1) / B, with the canonical c1 = 1500 m/s, z1 = B = 1300 m,
    # eps = 0.00737 (the test case in Jensen et al. 2011, ch. 3).
    z = np.linspace(0.0, 5000.0, 2001)
    env = Environment.from_arrays(z, _munk(z))
    zs = 1300.0
    fan = trace_fan(env, zs, [theta], 150000.0)
    turn = _points(fan, 0, kind=2)
    assert turn["range"].size >= 3
    p = np.cos(np.radians(theta)) / _munk(zs)
    # reference: ray integral R = 2 int_{z_up}^{z_low} dz / tan(theta(z)), cos theta = p c,
    # on the continuous Munk profile; turning depths by brentq on p c(z) = 1; the
    # end-point singularities removed by z = a + (b - a)(1 - cos u) / 2 (scipy quad).
    z_up = optimize.brentq(lambda x: p * _munk(x) - 1.0, 0.0, zs, xtol=1e-12)
    z_low = optimize.brentq(lambda x: p * _munk(x) - 1.0, zs, 5000.0, xtol=1e-12)

    def integrand(u):
        zz = z_up + (z_low - z_up) * (1.0 - np.cos(u)) / 2.0
        cz = p * _munk(zz)
        sin_t = np.sqrt(max((1.0 - cz) * (1.0 + cz), 1e-300))
        return cz / sin_t * (z_low - z_up) * np.sin(u) / 2.0

    cycle_ref = 2.0 * integrate.quad(integrand, 0.0, np.pi, epsabs=0, epsrel=1e-12, limit=200)[0]
    cycle = turn["range"][2] - turn["range"][0]
    # tolerance: the traced profile is Munk sampled every 2.5 m and linear between nodes
    # (interpolation error h^2 c''/8 < 1e-4 m/s); its effect on a ~50 km cycle is well
    # below 1e-4 relative
    np.testing.assert_allclose(cycle, cycle_ref, rtol=1e-4)
    # conjugate depths: both turning depths have the speed 1/p (exactly, in the traced model)
    c_turn = env.sound_speed_at(turn["depth"][:3])
    np.testing.assert_allclose(c_turn, 1.0 / p, rtol=1e-12)
    # launched downward: first the lower vertex, then the upper one
    assert turn["depth"][1] < zs < turn["depth"][0]
    # the traced vertices sit within the interpolation error of the continuous profile
    np.testing.assert_allclose(turn["depth"][[0, 1]], [z_low, z_up], atol=1.0)


def test_munk_cycle_exact_in_the_layered_model():
    # the traced cycle range against scipy quadrature of the same ray integral on the same
    # piecewise-linear profile, layer by layer (Jensen et al. 2011, ch. 3:
    # R = 2 int dz / tan(theta), cos(theta) = p c(z)); the 1/sqrt singularities at the two
    # turning depths are handled by quad's algebraic weight
    z = np.linspace(0.0, 5000.0, 501)
    env = Environment.from_arrays(z, _munk(z))
    fan = trace_fan(env, 1000.0, [10.0], 200000.0)
    turn = _points(fan, 0, kind=2)
    p = np.cos(np.radians(10.0)) / env.sound_speed_at(1000.0)
    cz = env.sound_speed
    # turning depths: where the linear interpolant reaches 1/p (above and below 1000 m)
    iu = np.nonzero((cz[:-1] >= 1 / p) & (cz[1:] < 1 / p) & (z[1:] <= 1000.0))[0][-1]
    il = np.nonzero((cz[:-1] < 1 / p) & (cz[1:] >= 1 / p) & (z[:-1] >= 1000.0))[0][0]
    g = np.diff(cz) / np.diff(z)
    z_up = z[iu] + (1 / p - cz[iu]) / g[iu]
    z_low = z[il] + (1 / p - cz[il]) / g[il]
    np.testing.assert_allclose(np.sort(turn["depth"][:2]), [z_up, z_low], rtol=1e-12)
    inner = z[(z > z_up) & (z < z_low)]
    c = lambda x: np.interp(x, z, cz)  # noqa: E731
    cot = lambda x: p * c(x) / np.sqrt((1.0 - p * c(x)) * (1.0 + p * c(x)))  # noqa: E731
    # in a turning layer 1 - p c(x) = p |g| |x - z_turn|, so cot * sqrt|x - z_turn| is smooth
    end_u = lambda x: p * c(x) / np.sqrt(p * abs(g[iu]) * (1.0 + p * c(x)))  # noqa: E731
    end_l = lambda x: p * c(x) / np.sqrt(p * abs(g[il]) * (1.0 + p * c(x)))  # noqa: E731
    total = integrate.quad(
        end_u, z_up, inner[0], weight="alg", wvar=(-0.5, 0.0), epsabs=0, epsrel=1e-13
    )[0]
    total += integrate.quad(
        end_l, inner[-1], z_low, weight="alg", wvar=(0.0, -0.5), epsabs=0, epsrel=1e-13
    )[0]
    for a, b in zip(inner[:-1], inner[1:]):
        total += integrate.quad(cot, a, b, epsabs=0, epsrel=1e-13)[0]
    # both sides exact for the model; 1e-9 covers quadrature and rounding
    np.testing.assert_allclose(turn["range"][2] - turn["range"][0], 2.0 * total, rtol=1e-9)


profiles = st.integers(2, 7).flatmap(
    lambda n: st.tuples(
        st.lists(st.floats(1.0, 400.0), min_size=n - 1, max_size=n - 1),
        st.lists(st.floats(1450.0, 1550.0), min_size=n, max_size=n),
    )
)


@given(profiles, st.floats(0.0, 1.0), st.floats(-89.0, 89.0))
def test_snell_invariant_and_sanity(profile, frac, theta):
    steps, speeds = profile
    z = np.concatenate([[0.0], np.cumsum(steps)])
    c = np.array(speeds)
    env = Environment.from_arrays(z, c)
    zs = frac * z[-1]
    fan = trace_fan(env, zs, [theta], 3000.0, max_bounces=30)
    pts = _points(fan, 0)
    assert np.all(np.isfinite(pts["range"])) and np.all(np.isfinite(pts["travel_time"]))
    assert np.all(np.isfinite(pts["depth"])) and np.all(np.isfinite(pts["angle"]))
    assert np.all(pts["depth"] >= -1e-9) and np.all(pts["depth"] <= z[-1] + 1e-9)
    assert np.all(np.diff(pts["range"]) >= 0) and np.all(np.diff(pts["travel_time"]) >= 0)
    # Jensen et al. (2011), ch. 3: Snell's law, cos(theta)/c(z) is constant along the ray
    p = np.cos(np.radians(theta)) / env.sound_speed_at(zs)
    inv = np.cos(np.radians(pts["angle"])) / env.sound_speed_at(pts["depth"])
    np.testing.assert_allclose(inv, p, rtol=1e-9, atol=1e-15)


def test_isovelocity_paths_are_straight():
    env = Environment.from_arrays([0.0, 200.0], [1500.0, 1500.0])
    fan = trace_fan(env, 50.0, [20.0], 1000.0, range_step=100.0)
    r = fan.range.values[0]
    zs = 50.0 + r * np.tan(np.radians(20.0))
    # method of images: fold the straight line back at the bottom (200 m) and surface
    zs = np.mod(zs, 400.0)
    zs = np.where(zs > 200.0, 400.0 - zs, zs)
    np.testing.assert_allclose(fan.depth.values[0], zs, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(
        fan.travel_time.values[0], r / np.cos(np.radians(20.0)) / 1500.0, rtol=1e-12
    )
    assert int(fan.bottom_reflections[0]) == 1 and int(fan.surface_reflections[0]) == 1


def test_horizontal_launch_at_sound_speed_minimum_stays_on_axis():
    env = Environment.from_arrays([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0])
    fan = trace_fan(env, 100.0, [0.0], 5000.0)
    pts = _points(fan, 0)
    np.testing.assert_allclose(pts["depth"], 100.0)
    np.testing.assert_allclose(pts["travel_time"][-1], 5000.0 / 1500.0, rtol=1e-14)
    assert int(fan.end_reason[0]) == 0


@pytest.mark.parametrize(
    "zs, theta",
    [
        (50.0, 0.0),
        (100.0, 0.0),
        (100.0, 3.0),
        (100.0, -3.0),
        (0.0, -5.0),
        (0.0, 0.0),
        (300.0, 5.0),
        (300.0, 0.0),
        (150.0, 90.0),
        (150.0, -90.0),
    ],
)
def test_special_launches_never_nan(zs, theta):
    env = Environment.from_arrays([0.0, 100.0, 200.0, 300.0], [1500.0, 1510.0, 1505.0, 1520.0])
    fan = trace_fan(env, zs, [theta], 4000.0, max_bounces=20)
    pts = _points(fan, 0)
    for k in ("range", "depth", "travel_time", "angle"):
        assert np.all(np.isfinite(pts[k]))
    assert int(fan.end_reason[0]) in (0, 1)


def test_grazing_a_node_exactly():
    # launch from the surface so that p c(100 m) = 1: the ray turns on the node itself
    env = Environment.from_arrays([0.0, 100.0, 200.0], [1500.0, 1510.0, 1530.0])
    theta = np.degrees(np.arccos(1500.0 / 1510.0))
    fan = trace_fan(env, 0.0, [theta, theta * (1 - 1e-12), theta * (1 + 1e-12)], 10000.0)
    assert np.all(np.isfinite(fan.depth.values[fan.point_kind.values >= 0]))
    assert np.all(fan.end_reason.values == 0)
    # the three rays agree closely at the end (continuity through the grazing case)
    ends = [fan.depth.values[i, int(fan.point_count[i]) - 1] for i in range(3)]
    assert np.ptp(ends) < 1e-3


def test_fan_layout_and_attrs():
    env = Environment.from_arrays([0.0, 1000.0], [1500.0, 1517.0])
    fan = trace_fan(env, 500.0, np.linspace(-20, 20, 5), 20000.0, range_step=500.0)
    assert fan.sizes["ray"] == 5 and fan.sizes["point"] == 41
    assert fan.end_reason.dtype == np.int8
    assert "range_reached" in fan.end_reason.attrs["flag_meanings"]
    assert fan.depth.attrs["units"] == "m" and fan.travel_time.attrs["units"] == "s"
    assert fan.attrs["solver"] == "exact_layered" and "caution" in fan.attrs
    np.testing.assert_allclose(fan.range.values[0, -1], 20000.0)


def test_bad_arguments_name_themselves():
    env = Environment.from_arrays([0.0, 100.0], [1500.0, 1500.0])
    with pytest.raises(SeaprofileError, match="angles"):
        trace_fan(env, 10.0, [95.0], 1000.0)
    with pytest.raises(SeaprofileError, match="source_depth"):
        trace_fan(env, 150.0, [5.0], 1000.0)
    with pytest.raises(SeaprofileError, match="max_range"):
        trace_fan(env, 10.0, [5.0], -1.0)
    with pytest.raises(SeaprofileError, match="range_step"):
        trace_fan(env, 10.0, [5.0], 100.0, range_step=0.0)
    with pytest.raises(SeaprofileError, match="environment"):
        trace_fan(object(), 10.0, [5.0], 100.0)


def test_range_dependent_goes_to_integrator(monkeypatch):
    calls = {}
    fake = types.ModuleType("seaprofile.propagation.integrate")

    def trace_fan_integrated(environment, source_depth, angles, max_range, **kw):
        calls.update(kw, source_depth=source_depth)
        return "integrated"

    fake.trace_fan_integrated = trace_fan_integrated
    # rays.py imports the integrator module once, at the top (no import circle any more)
    rays_module = sys.modules["seaprofile.propagation.rays"]
    monkeypatch.setattr(rays_module, "integrate", fake)
    env = Environment.from_arrays([0, 100], [1500, 1500], bathymetry=([0, 1000], [80, 100]))
    assert trace_fan(env, 10.0, [1.0], 500.0) == "integrated"
    assert calls["source_depth"] == 10.0


def test_huge_path_fan_asks_for_range_step(monkeypatch):
    from seaprofile.propagation import kernels

    monkeypatch.setattr(kernels, "MAX_STORED_POINTS", 1000)
    z = np.linspace(0.0, 500.0, 51)
    env = Environment.from_arrays(z, 1500.0 + 0.016 * z)
    with pytest.raises(SeaprofileError, match="range_step"):
        trace_fan(env, 100.0, np.linspace(-60.0, 60.0, 50), 10000.0)
    assert (
        trace_fan(env, 100.0, np.linspace(-60.0, 60.0, 50), 10000.0, range_step=100.0).sizes[
            "point"
        ]
        == 101
    )


# --- grazing at a boundary or node when the source lies within rounding of it ----------
# Regression (hypothesis found it): c(z_s) rounded to the node's speed while z_s was one
# ulp above the bottom, so both end sines of the first piece were ~0 for a depth step
# > 0 and the piece's range dz (c_a + c_b) / (s_a + s_b) exploded (the second path point
# had 63 degrees instead of ~0).
_HAIR = [
    # (nodes, speeds, source depth, launch angle): downward refracting, a hair above the
    # bottom; its mirror, upward refracting, a hair below the surface; sources exactly on
    # the boundary / node; a source on / next to a sound-speed minimum
    ([0.0, 1.0], [1473.0, 1472.0], 0.9999999999999999, 4.083321069181064e-152),
    ([0.0, 1.0], [1473.0, 1472.0], 0.9999999999999999, 0.0),
    ([0.0, 1.0], [1473.0, 1472.0], 0.9999999999999999, -4.08e-152),
    ([0.0, 1.0], [1473.0, 1472.0], 1.0, 4.08e-152),
    ([0.0, 1.0], [1473.0, 1472.0], 1.0, 0.0),
    ([0.0, 1.0], [1472.0, 1473.0], 1e-17, -4.083321069181064e-152),
    ([0.0, 1.0], [1472.0, 1473.0], 1e-17, 4.08e-152),
    ([0.0, 1.0], [1472.0, 1473.0], 1e-17, 0.0),
    ([0.0, 1.0], [1472.0, 1473.0], 0.0, -1e-100),
    ([0.0, 1.0], [1472.0, 1473.0], 0.0, 0.0),
    ([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0], 100.0, 1e-7),
    ([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0], np.nextafter(100.0, 0.0), 0.0),
    ([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0], np.nextafter(100.0, 200.0), -1e-30),
    # a horizontal ray on a speed minimum used to pick up a noise sine of ~1.5e-8 from
    # p c = 1 - 1 ulp and oscillate ~1e-13 m high until the step limit
    ([0.0, 1.0, 2.0, 3.0], [1451.0, 1450.0, 1451.0, 1450.0], 1.0, 3.0700804481492352e-83),
]


@pytest.mark.parametrize("range_step", [None, 250.0])
@pytest.mark.parametrize("nodes, speeds, zs, theta", _HAIR)
def test_grazing_source_within_rounding_of_a_boundary(nodes, speeds, zs, theta, range_step):
    env = Environment.from_arrays(nodes, speeds)
    fan = trace_fan(env, zs, [theta], 3000.0, max_bounces=30, range_step=range_step)
    pts = _points(fan, 0)
    for k in ("range", "depth", "travel_time", "angle"):
        assert np.all(np.isfinite(pts[k]))
    # a horizontal ray next to a boundary or a speed minimum that bends it back stays
    # there: it reaches the end of the fan, running along the boundary / node
    assert int(fan.end_reason[0]) == 0
    np.testing.assert_allclose(pts["range"][-1], 3000.0, rtol=1e-15)
    assert int(fan.turning_points[0]) <= 1 and int(fan.surface_reflections[0]) <= 1
    assert int(fan.bottom_reflections[0]) <= 1
    np.testing.assert_allclose(pts["depth"], zs, atol=1e-12)
    assert np.all(np.abs(pts["angle"]) < 1e-5)
    # Jensen et al. (2011), ch. 3: Snell's law, cos(theta)/c(z) constant along the ray
    p = np.cos(np.radians(theta)) / env.sound_speed_at(zs)
    inv = np.cos(np.radians(pts["angle"])) / env.sound_speed_at(pts["depth"])
    np.testing.assert_allclose(inv, p, rtol=1e-12)
    # travel time of a horizontal ray along the node: range / c there (to rounding)
    np.testing.assert_allclose(pts["travel_time"][-1], 3000.0 / env.sound_speed_at(zs), rtol=1e-12)


def test_grazing_rays_near_the_bottom_are_continuous_in_launch_angle():
    # a fan of small launch angles from a hair above a downward-refracting bottom layer:
    # the depth at the end changes smoothly (no ray is thrown off by a rounding sliver)
    env = Environment.from_arrays([0.0, 50.0, 100.0], [1500.0, 1499.0, 1497.0])
    zs = np.nextafter(100.0, 0.0)
    angles = np.concatenate([-np.logspace(-3, -12, 10), [0.0], np.logspace(-12, -3, 10)])
    # the steeper ones bounce every ~1 m: allow all their reflections
    fan = trace_fan(env, zs, angles, 5000.0, range_step=5000.0, max_bounces=10**6)
    assert np.all(fan.end_reason.values == 0)
    ends = fan.depth.values[:, -1]
    assert np.all(np.isfinite(ends)) and np.all((ends >= 0) & (ends <= 100.0))
    # a ray leaving the bottom at angle eps in a layer of gradient g turns at the height
    # c eps^2 / (2 |g|) (circular arc, Jensen et al. 2011, ch. 3): 1e-3 deg, g = -0.04 1/s
    # gives 6e-6 m, so every ray stays within 1e-5 m of the bottom
    assert np.all(ends > 100.0 - 1e-5)
    # bounce count: one per cycle of range 2 sin(eps) / (p |g|) (chord of the circle of
    # radius 1 / (p |g|), Jensen et al. 2011, ch. 3), computed here; +-1 for the ends
    nb = fan.bottom_reflections.values.astype(float)
    p = np.cos(np.radians(angles)) / env.sound_speed_at(zs)
    cycle = 2.0 * np.sin(np.radians(np.abs(angles))) / (p * 0.04)
    with np.errstate(divide="ignore"):
        expect = 5000.0 / cycle
    big = np.abs(angles) >= 1e-3
    np.testing.assert_allclose(nb[big], expect[big], atol=1.0)
    # below ~4e-4 deg a reflected ray would never rise 1 micrometre (c s^2 / (2 |g|)) above
    # the bottom: it grazes it once and runs along it (codes.RIDE_DEPTH)
    assert np.all(nb[np.abs(angles) < 4e-4] <= 1)


def test_rays_within_a_micrometre_of_a_speed_minimum_run_along_it():
    # sharp minimum (|g| = 1 1/s): at 1e-5 deg the ray would rise and sink
    # c sin^2 / (2 |g|) ~ 2e-11 m about the node in ~1e7 arcs over 3 km; it runs along the
    # node instead (codes.RIDE_DEPTH = 1 micrometre). At 0.5 deg (excursion ~0.06 m) it
    # oscillates as usual.
    env = Environment.from_arrays(
        [0.0, 1.0, 2.0, 3.0, 4.0], [1450.0, 1451.0, 1450.0, 1451.0, 1450.0]
    )
    fan = trace_fan(env, 2.0, [1e-5, 0.5], 3000.0, max_bounces=30)
    assert np.all(fan.end_reason.values == 0)
    flat = _points(fan, 0)
    assert flat["range"].size < 10
    np.testing.assert_allclose(flat["depth"], 2.0, atol=1e-6)
    # travel time: range / c(node) (the ray's real path is longer by ~ (1e-5 deg)^2 / 2)
    np.testing.assert_allclose(flat["travel_time"][-1], 3000.0 / 1450.0, rtol=1e-12)
    steep = _points(fan, 1)
    assert int(fan.turning_points[1]) > 100
    # Jensen et al. (2011), ch. 3: the turning depth where p c = 1, i.e. c = c_s / cos th0
    c_turn = 1450.0 / np.cos(np.radians(0.5))
    np.testing.assert_allclose(
        steep["depth"][steep["point_kind"] == 2].max(), 2.0 + (c_turn - 1450.0), rtol=1e-9
    )


def test_near_horizontal_ray_in_isovelocity_keeps_range_and_time_consistent():
    # found by a node-targeted stress run: 2.6 micrometres below a node in isovelocity
    # water, 1e-7 deg upward. The end sine computed as sqrt(1 - (p c)^2) rounded to 0, so
    # the piece to the node had twice its range (3000 m) but the time of the true one.
    # Straight line (no gradient): it reaches the node after dz / tan(theta) and goes on.
    env = Environment.from_arrays([0.0, 262.0, 263.0], [1450.0, 1450.0, 1450.0])
    zs, theta = 262.0 * (1 + 1e-8), -1e-7
    fan = trace_fan(env, zs, [theta], 3000.0, range_step=100.0)
    r = fan.range.values[0]
    th = np.radians(theta)
    np.testing.assert_allclose(fan.depth.values[0], zs + r * np.tan(th), rtol=0, atol=1e-9)
    np.testing.assert_allclose(fan.travel_time.values[0], r / np.cos(th) / 1450.0, rtol=1e-12)
