"""Tests of the range-dependent ray integrator (seaprofile.propagation.integrate)."""

import numpy as np
import pytest
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st
from scipy.integrate import RK45, solve_ivp

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import integrate
from seaprofile.propagation.environment import Environment
from seaprofile.propagation.integrate import trace_fan_integrated
from seaprofile.propagation.rays import trace_fan
from seaprofile.propagation.section import Section

# a layered deep-water profile (Munk 1974 canonical form, sampled on 41 nodes)
Z = np.linspace(0.0, 4000.0, 41)
_ETA = 2.0 * (Z - 1300.0) / 1300.0
C = 1500.0 * (1.0 + 0.00737 * (_ETA + np.exp(-_ETA) - 1.0))


def _ends(fan, name):
    n = fan.point_count.values
    return fan[name].values[np.arange(n.size), n - 1]


def _isovelocity(bathymetry, c=1500.0, bottom=None):
    sec = Section([0.0], [0.0, 5000.0], [[c, c]])
    return Environment.from_section(sec, bottom, bathymetry=bathymetry)


def test_tableau_is_the_scipy_dormand_prince_pair():
    # scipy.integrate.RK45 (Dormand & Prince 1980; Shampine 1986 dense output) as reference
    np.testing.assert_allclose(integrate._DP_A, RK45.A[:, :5], rtol=1e-15)
    np.testing.assert_allclose(integrate._DP_B, RK45.B, rtol=1e-15)
    np.testing.assert_allclose(integrate._DP_E, RK45.E, rtol=1e-15)
    np.testing.assert_allclose(integrate._DP_P, RK45.P, rtol=1e-15)


def test_identical_casts_reproduce_the_exact_layered_solver():
    exact_env = Environment.from_arrays(Z, C, 4000.0)
    sec = Section([0.0, 15000.0, 30000.0, 50000.0], Z, np.repeat(C[None], 4, axis=0))
    env = Environment.from_section(sec, 4000.0)
    angles = np.linspace(-15.0, 15.0, 31)
    exact = trace_fan(exact_env, 1000.0, angles, 50000.0)
    fan = trace_fan(env, 1000.0, angles, 50000.0)  # dispatches to the integrator
    assert fan.attrs["solver"] == "integrated" and exact.attrs["solver"] == "exact_layered"
    assert set(fan.variables) == set(exact.variables)
    te, ti = _ends(exact, "travel_time"), _ends(fan, "travel_time")
    # required: travel time to 1e-6 relative, depth at range to ~1 mm (the integrator's
    # default tolerance gives ~1e-9 and ~0.03 mm; see benchmarks/bench_range_dependent.py)
    np.testing.assert_allclose(ti, te, rtol=1e-6)
    np.testing.assert_allclose(_ends(fan, "depth"), _ends(exact, "depth"), atol=1e-3)
    np.testing.assert_allclose(_ends(fan, "range"), 50000.0, rtol=0, atol=0)
    for name in (
        "surface_reflections",
        "bottom_reflections",
        "turning_points",
        "caustics",
        "end_reason",
    ):
        np.testing.assert_array_equal(fan[name], exact[name], err_msg=name)


def test_identical_casts_sampled_in_range_match_the_exact_samples():
    exact_env = Environment.from_arrays(Z, C, 4000.0)
    env = Environment.from_section(Section([0.0, 20000.0], Z, np.vstack([C, C])), 4000.0)
    angles = np.array([-12.0, -4.0, 0.0, 3.0, 9.0])
    exact = trace_fan(exact_env, 300.0, angles, 30000.0, range_step=2500.0)
    fan = trace_fan(env, 300.0, angles, 30000.0, range_step=2500.0)
    assert fan.sizes == exact.sizes
    np.testing.assert_array_equal(fan["range"], exact["range"])
    np.testing.assert_allclose(fan["depth"], exact["depth"], atol=1e-3)
    np.testing.assert_allclose(fan["travel_time"], exact["travel_time"], rtol=1e-7)
    np.testing.assert_array_equal(fan["point_kind"], exact["point_kind"])


def test_snell_invariant_along_integrated_rays():
    # Snell's law in a range-independent medium: cos(theta)/c(z) is constant along a ray
    # (Jensen et al. 2011, Computational Ocean Acoustics, 2nd ed., ch. 3)
    env = Environment.from_section(
        Section([0.0, 25000.0], Z, np.vstack([C, C]), range_interpolation="spline"), 4000.0
    )
    angles = np.linspace(-12.0, 12.0, 13)
    fan = trace_fan_integrated(env, 800.0, angles, 40000.0, tolerance=1e-8)
    c0 = np.interp(800.0, Z, C)
    inv0 = np.cos(np.radians(angles)) / c0
    inv = np.cos(np.radians(fan["angle"].values)) / np.interp(fan["depth"].values, Z, C)
    ok = np.isfinite(inv)
    np.testing.assert_allclose(inv[ok], np.broadcast_to(inv0[:, None], inv.shape)[ok], rtol=1e-9)


@settings(max_examples=50, deadline=None)
@given(slope_deg=st.floats(-8.0, 8.0), angle=st.floats(20.0, 60.0), up=st.booleans())
def test_sloping_bottom_reflection_law(slope_deg, angle, up):
    # specular reflection: the angle between ray and bottom normal is the same before and
    # after (theta_r - a = -(theta_i - a), a the bottom's angle below the horizontal)
    a = np.radians(slope_deg)
    env = _isovelocity(([0.0, 10000.0], [2000.0, 2000.0 + 10000.0 * np.tan(a)]))
    fan = trace_fan_integrated(env, 200.0, [-angle if up else angle], 10000.0, max_bounces=20)
    kind = fan["point_kind"].values[0]
    th = fan["angle"].values[0]
    r = fan["range"].values[0]
    z = fan["depth"].values[0]
    hits = np.flatnonzero(kind == 4)
    assert hits.size >= 1
    for k in hits:
        incident, reflected = th[k - 1], th[k]  # straight lines in isovelocity water
        assert reflected - slope_deg == pytest.approx(-(incident - slope_deg), abs=1e-9)
        bottom = 2000.0 + min(r[k], 10000.0) * np.tan(a)
        assert z[k] == pytest.approx(bottom, abs=1e-9)


def test_wedge_each_bottom_reflection_steepens_by_twice_the_slope():
    # upslope wedge with isovelocity water and a pressure-release surface: each bottom
    # reflection increases the ray's grazing angle by twice the wedge angle
    # (Jensen et al. 2011, Computational Ocean Acoustics, 2nd ed., ch. 3, image method in
    # a wedge); computed here from plane geometry
    alpha = 2.0  # degrees
    depth0 = 200.0
    apex = depth0 / np.tan(np.radians(alpha))
    env = _isovelocity(([0.0, apex - 1.0], [depth0, 1.0 * np.tan(np.radians(alpha))]))
    fan = trace_fan_integrated(env, 20.0, [3.0], apex, max_bounces=200)
    kind = fan["point_kind"].values[0]
    th = fan["angle"].values[0]
    hits = np.flatnonzero(kind == 4)
    grazing = th[hits - 1] + alpha  # incident angle relative to the (up-sloping) bottom
    assert hits.size >= 5
    np.testing.assert_allclose(np.diff(grazing), 2 * alpha, atol=1e-9)
    # the ray finally turns back toward the source and leaves the fan's domain
    assert int(fan.end_reason[0]) == 2
    assert grazing[-1] + alpha >= 90.0 - 2 * alpha


def test_spreading_is_the_path_length_in_isovelocity_water():
    # uniform medium, point source: q = path length s (the spherical-spreading ray tube;
    # Jensen et al. 2011, ch. 3, dynamic ray equations with q(0) = 0, p(0) = 1/c); flat
    # boundaries, also sloping, keep it (image sources)
    env = _isovelocity(([0.0, 6000.0, 12000.0], [900.0, 500.0, 700.0]))
    fan = trace_fan_integrated(env, 100.0, np.linspace(-40, 40, 17), 15000.0, max_bounces=500)
    s = 1500.0 * fan["travel_time"].values
    q = fan["tube_width"].values
    ok = np.isfinite(q)
    np.testing.assert_allclose(q[ok], s[ok], rtol=1e-9, atol=1e-7)
    assert int(fan.caustics.sum()) == 0


def test_spreading_in_a_linear_gradient_matches_the_circular_arc_solution():
    # c = c0 + g z: rays are circles (Jensen et al. 2011, ch. 3). At depth z the range is
    # R(z; theta0) = (sin theta0 - sin theta) c0 / (g cos theta0), cos theta = cos theta0
    # c(z) / c0 (sin theta signed: negative after the turning point), and the ray-tube
    # width per radian is q = -dR/dtheta0|_z sin(theta); dR/dtheta0 by central differences
    # of this closed form.
    c0, g = 1480.0, 0.05
    env = Environment.from_section(Section([0.0], [0.0, 5000.0], [[c0, c0 + g * 5000.0]]), 5000.0)
    zs = 300.0
    cs = c0 + g * zs
    angles = np.array([5.0, 10.0, 20.0])
    fan = trace_fan_integrated(env, zs, angles, 60000.0, tolerance=1e-9)

    def rng(theta0, z, sign):
        cos_t = np.cos(theta0) * (c0 + g * z) / cs
        sin_t = sign * np.sqrt(1.0 - cos_t**2)
        return (np.sin(theta0) - sin_t) * cs / (g * np.cos(theta0)), sin_t

    checked = 0
    for n, a in enumerate(np.radians(angles)):
        stop = np.flatnonzero(fan["point_kind"].values[n] == 3)  # first surface reflection
        last = stop[0] if stop.size else fan.point_count.values[n]
        for k in range(1, last):
            z = fan["depth"].values[n, k]
            sign = 1.0 if fan["angle"].values[n, k] > 0 else -1.0
            r, sin_t = rng(a, z, sign)
            if abs(sin_t) < 0.02:
                continue  # finite differences degrade near the turning point
            assert r == pytest.approx(fan["range"].values[n, k], rel=1e-8)
            d = 1e-6
            dr = (rng(a + d, z, sign)[0] - rng(a - d, z, sign)[0]) / (2 * d)
            assert fan["tube_width"].values[n, k] == pytest.approx(-dr * sin_t, rel=1e-5)
            checked += 1
    assert checked > 30


def test_spreading_matches_neighbouring_rays_in_a_range_dependent_section():
    # internal consistency of the dynamic-ray jump conditions (layer nodes, cast ranges,
    # surface and sloping-bottom reflections): |q| = |dz/dtheta0 at fixed range| cos(theta)
    rng = np.random.default_rng(3)
    casts = C[None, :] + rng.normal(0, 1.5, (4, Z.size)).cumsum(axis=1) * 0.2
    sec = Section([0.0, 10000.0, 22000.0, 35000.0], Z, casts)
    env = Environment.from_section(
        sec, bathymetry=([0.0, 15000.0, 30000.0], [3500.0, 2600.0, 3000.0])
    )
    step = 1000.0
    d = 1e-5
    checked = 0
    for a0 in (-11.0, -6.0, 4.0, 8.0, 13.0):
        th = np.radians(a0)
        fans = [
            trace_fan_integrated(
                env, 150.0, [np.degrees(th + e)], 35000.0, range_step=step, tolerance=1e-10
            )
            for e in (-d, 0.0, d)
        ]
        counts = [int(f.surface_reflections[0] + f.bottom_reflections[0]) for f in fans]
        z = [f["depth"].values[0] for f in fans]
        n = min(len(v) for v in z)
        if len(set(counts)) > 1:
            continue
        dz = (z[2][:n] - z[0][:n]) / (2 * d)
        q = fans[1]["tube_width"].values[0][:n]
        cos_t = np.cos(np.radians(fans[1]["angle"].values[0][:n]))
        scale = np.nanmax(np.abs(q))
        np.testing.assert_allclose(np.abs(q), np.abs(dz) * cos_t, atol=2e-3 * scale)
        checked += 1
    assert checked >= 3


def test_range_dependent_ray_matches_scipy_solve_ivp():
    # reference: scipy's DOP853 at rtol 1e-12 on the same ray equations (Jensen et al.
    # 2011, ch. 3) and the same field (Section.gradient_at, tested against scipy's
    # interpolators in test_section.py). One depth layer and a C2 range spline, so the
    # right-hand side is smooth for the reference solver.
    sec = Section(
        [0.0, 8000.0, 20000.0],
        [0.0, 5000.0],
        [[1490.0, 1560.0], [1500.0, 1555.0], [1485.0, 1570.0]],
        range_interpolation="spline",
    )
    env = Environment.from_section(sec, 5000.0)
    zs, a, rmax = 2500.0, 4.0, 20000.0
    fan = trace_fan_integrated(env, zs, [a], rmax)

    def rhs(s, y):
        c, cr, cz, crr, crz = (float(v) for v in sec.gradient_at(y[0], y[1]))
        tr, tz = c * y[2], c * y[3]
        cnn = crr * tz * tz - 2 * crz * tr * tz
        return [tr, tz, -cr / c**2, -cz / c**2, 1 / c, c * y[6], -cnn * y[5] / c**2]

    def end(s, y):
        return rmax - y[0]

    end.terminal = True
    c0 = float(sec.sound_speed_at(0.0, zs))
    th = np.radians(a)
    y0 = [0.0, zs, np.cos(th) / c0, np.sin(th) / c0, 0.0, 0.0, 1 / c0]
    atol = [1e-9, 1e-9, 1e-16, 1e-16, 1e-13, 1e-9, 1e-16]
    sol = solve_ivp(rhs, (0, 2 * rmax), y0, method="DOP853", rtol=1e-12, atol=atol, events=end)
    ref = sol.y_events[0][0]
    assert _ends(fan, "range")[0] == rmax
    assert _ends(fan, "depth")[0] == pytest.approx(ref[1], abs=1e-4)
    assert _ends(fan, "travel_time")[0] == pytest.approx(ref[4], rel=1e-10)
    assert _ends(fan, "tube_width")[0] == pytest.approx(ref[5], rel=1e-6)
    assert int(fan.turning_points[0]) >= 1


def test_events_land_exactly_on_boundaries():
    sec = Section([0.0, 9000.0, 21000.0], Z, np.vstack([C, C + 2.0, C - 1.0]))
    bathy = ([0.0, 12000.0, 30000.0], [3800.0, 2500.0, 3200.0])
    env = Environment.from_section(sec, bathymetry=bathy)
    fan = trace_fan_integrated(env, 50.0, np.linspace(-25, 25, 21), 30000.0)
    kind = fan["point_kind"].values
    r = fan["range"].values
    z = fan["depth"].values
    cross = kind == 1
    on_node = np.isin(z, Z) | np.isin(r, np.concatenate([sec.ranges, bathy[0]]))
    assert np.all(on_node[cross])
    assert np.all(z[kind == 3] == 0.0)
    bot = kind == 4
    np.testing.assert_allclose(z[bot], np.interp(r[bot], *bathy), atol=1e-9)
    assert np.all(kind[np.arange(kind.shape[0]), fan.point_count.values - 1] == 6)
    assert np.all(np.diff(fan["travel_time"].values, axis=1)[np.isfinite(z[:, 1:])] >= 0)


def test_max_bounces_absorbs_and_codes():
    env = _isovelocity(([0.0, 10000.0], [100.0, 120.0]))
    fan = trace_fan_integrated(env, 50.0, [30.0, 1.0], 10000.0, max_bounces=3)
    assert int(fan.end_reason[0]) == 1  # absorbed
    assert int(fan.surface_reflections[0] + fan.bottom_reflections[0]) == 4
    assert int(fan.end_reason[1]) == 0  # range reached


def test_bad_options_raise():
    env = _isovelocity(([0.0, 1000.0], [100.0, 120.0]))
    with pytest.raises(SeaprofileError, match="tolerance"):
        trace_fan_integrated(env, 10.0, [1.0], 1000.0, tolerance=0.0)
    with pytest.raises(SeaprofileError, match="max_step"):
        trace_fan_integrated(env, 10.0, [1.0], 1000.0, max_step=-1.0)
    with pytest.raises(SeaprofileError, match="source_depth"):
        trace_fan_integrated(env, 150.0, [1.0], 1000.0)


@settings(max_examples=30, deadline=None)
@given(
    seed=st.integers(0, 2**16),
    source=st.floats(0.0, 0.99),
    angles=st.lists(st.floats(-89.0, 89.0), min_size=1, max_size=6),
)
# regression (hypothesis found it): a 1845 m step carried into a 17 m spline interval
# evaluated the cubic far outside it, overflowed to NaN, and the NaN error estimate was
# skipped by the max() and the step accepted: 2e6 NaN points, then the step limit
@example(seed=2085, source=0.0, angles=[0.0])
def test_random_sections_stay_in_the_water_and_finish(seed, source, angles):
    rng = np.random.default_rng(seed)
    casts = C[None, :] + rng.normal(0.0, 3.0, (3, Z.size))
    sec = Section(
        np.sort(rng.uniform(0, 20000, 3)) + [0, 1, 2],
        Z,
        casts,
        range_interpolation=["pchip", "spline", "linear"][seed % 3],
    )
    br = np.array([0.0, 5000.0, 12000.0, 20000.0])
    bz = rng.uniform(300.0, 3900.0, 4)
    env = Environment.from_section(sec, bathymetry=(br, bz))
    zs = source * bz[0]
    fan = trace_fan_integrated(env, zs, angles, 20000.0, max_bounces=60)
    assert not np.any(fan.end_reason.values == 3)
    z = fan["depth"].values
    r = fan["range"].values
    ok = np.isfinite(z)
    assert np.all(z[ok] >= 0.0)
    assert np.all(z[ok] <= np.interp(r[ok], br, bz) + 1e-6)
    reached = fan.end_reason.values == 0
    np.testing.assert_array_equal(_ends(fan, "range")[reached], 20000.0)


# grazing starts within rounding of a boundary or a node (the exact solver's regression
# cases, tests/propagation/test_exact.py): the landing point used to be located by a
# 1e-7 m nudge along the ray, which a grazing ray cannot resolve, so the ray was put back
# into the layer it had left (or below the bottom) and stalled there until the step limit
_GRAZING_STARTS = [
    ([0.0, 1.0], [1473.0, 1472.0], 0.9999999999999999, 4.083321069181064e-152),
    ([0.0, 1.0], [1473.0, 1472.0], 0.9999999999999999, 0.0),
    ([0.0, 1.0], [1473.0, 1472.0], 1.0, 4.08e-152),
    ([0.0, 1.0], [1472.0, 1473.0], 1e-17, -4.083321069181064e-152),
    ([0.0, 1.0], [1472.0, 1473.0], 0.0, 0.0),
    ([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0], 100.0, 1e-7),
    ([0.0, 100.0, 200.0], [1510.0, 1500.0, 1510.0], np.nextafter(100.0, 0.0), 0.0),
    ([0.0, 1.0, 2.0, 3.0], [1451.0, 1450.0, 1451.0, 1450.0], 1.0, 3.0700804481492352e-83),
]


@pytest.mark.parametrize("nodes, speeds, zs, theta", _GRAZING_STARTS)
def test_grazing_starts_run_along_the_boundary_like_the_exact_solver(nodes, speeds, zs, theta):
    env = Environment.from_arrays(nodes, speeds)
    fan = trace_fan_integrated(env, zs, [theta], 3000.0, max_bounces=30)
    exact = trace_fan(env, zs, [theta], 3000.0, max_bounces=30)
    assert int(fan.end_reason[0]) == 0 == int(exact.end_reason[0])
    # no stall: riding steps are 50 m long (integrate._RIDE_STEP)
    assert int(fan.point_count[0]) <= 3000.0 / 50.0 + 10
    n = int(fan.point_count[0])
    np.testing.assert_allclose(fan.range.values[0, n - 1], 3000.0, rtol=0, atol=0)
    np.testing.assert_allclose(fan.depth.values[0, :n], zs, atol=1e-12)
    assert np.all(np.abs(fan.angle.values[0, :n]) < 1e-5)
    # travel time along the node: range / c there, as the exact solver
    np.testing.assert_allclose(_ends(fan, "travel_time"), _ends(exact, "travel_time"), rtol=1e-12)


def test_ray_riding_a_speed_minimum_leaves_it_where_the_minimum_ends():
    # a section whose first cast has a sound-speed minimum at the 100 m node and whose
    # second cast has speed increasing with depth there: a horizontal ray launched on the
    # node runs along it while the minimum holds, then refracts upward (the layer below
    # bends it up once c_z > 0 on both sides), never stalling
    z = np.array([0.0, 100.0, 200.0])
    casts = np.array([[1510.0, 1500.0, 1510.0], [1495.0, 1500.0, 1510.0]])
    sec = Section([0.0, 2000.0], z, casts, range_interpolation="linear")
    env = Environment.from_section(sec, 200.0)
    fan = trace_fan_integrated(env, 100.0, [0.0], 6000.0)
    assert int(fan.end_reason[0]) == 0
    n = int(fan.point_count[0])
    d = fan.depth.values[0, :n]
    r = fan.range.values[0, :n]
    # the minimum holds while c(r, 0 m) > 1500 m/s, i.e. up to r = 2000 * 10 / 15 m
    # (linear in range); riding steps are at most 50 m long
    r_end = 2000.0 * 10.0 / 15.0
    np.testing.assert_allclose(d[r <= r_end], 100.0)
    assert np.all(d[r > r_end + 50.0] < 100.0)
    assert d[-1] < 100.0 - 1.0  # it has left the node upward by the end


# A ray launched horizontally on the surface (or the bottom) comes back to it exactly
# grazing; its turning point falls within rounding of the boundary and used to be landed
# ~1e-7 m beyond it (above the surface / below the bottom), where the integrator carried on.
_NEAR_BOUNDARY = {
    "surface": lambda b: 0.0,
    "just below the surface": lambda b: 5e-324,
    "1e-13 m deep": lambda b: 1e-13,
    "bottom": lambda b: b,
    "just above the bottom": lambda b: float(np.nextafter(b, 0.0)),
    "bottom minus rounding": lambda b: b * (1.0 - 1e-15),
}


@settings(max_examples=60, deadline=None)
@given(
    thickness=st.lists(st.floats(5.0, 200.0), min_size=2, max_size=5),
    speeds=st.lists(st.integers(1480, 1520), min_size=6, max_size=6),
    where=st.sampled_from(sorted(_NEAR_BOUNDARY)),
    angle=st.sampled_from([0.0, 1e-300, -1e-300, 1e-12, -1e-12, 1e-7, -1e-7, 1e-4, -1e-4]),
)
@example([50.0, 250.0], [1500.0, 1495.0, 1530.0, 0, 0, 0], "surface", 0.0)  # z < 0 before
@example(
    [14.6, 157.8],
    [1507.4081435959938, 1486.2538659961435, 1495.426313786302, 0, 0, 0],
    "bottom",
    1e-300,
)  # 2.8e-6 m below the bottom before
def test_grazing_returns_to_the_surface_or_bottom_stay_in_the_water(
    thickness, speeds, where, angle
):
    nodes = np.concatenate([[0.0], np.cumsum(thickness)])
    cn = np.asarray(speeds[: nodes.size], dtype=np.float64)
    # grazing returns to an interior node (its speed equal to the surface or bottom speed)
    # are the node cases of _GRAZING_STARTS above; here only the surface and the bottom
    assume(not np.isin(cn[1:-1], cn[[0, -1]]).any())
    bottom = float(nodes[-1])
    zs = _NEAR_BOUNDARY[where](bottom)
    exact_env = Environment.from_arrays(nodes, cn)
    env = Environment.from_section(Section([0.0, 5000.0], nodes, np.vstack([cn, cn])), bottom)
    for tolerance in (1e-6, 1e-9):
        fan = trace_fan_integrated(env, zs, [angle], 20000.0, max_bounces=2000, tolerance=tolerance)
        n = int(fan.point_count[0])
        z = fan.depth.values[0, :n]
        assert np.all(z >= 0.0) and np.all(z <= bottom)
        assert int(fan.end_reason[0]) == 0
    exact = trace_fan(exact_env, zs, [angle], 20000.0, max_bounces=2000)
    assert int(exact.end_reason[0]) == 0
    np.testing.assert_array_equal(_ends(fan, "range"), 20000.0)
    # against the exact layered solver (tests/propagation/test_exact.py checks it against
    # the closed-form arcs). A ray coming back to a boundary near grazing is ill-conditioned
    # (a depth error d there moves the rest of the ray by ~sqrt(8 R d) in range, R the
    # radius of the arc), so compare at tolerance 1e-9 m, where the measured differences
    # after 20 km over 1600 random cases of this kind were < 1.3e-2 m in depth and < 9e-8
    # relative in travel time; the bounds are about 4x and 6x that
    np.testing.assert_allclose(_ends(fan, "depth"), _ends(exact, "depth"), rtol=0, atol=5e-2)
    np.testing.assert_allclose(_ends(fan, "travel_time"), _ends(exact, "travel_time"), rtol=5e-7)
    # same events, except that a ray the integrator rides along the boundary from the
    # launch may first take a micrometre turn and reflection in the exact solver
    events = ("surface_reflections", "bottom_reflections", "turning_points")
    n_fan = sum(int(fan[name][0]) for name in events)
    n_exact = sum(int(exact[name][0]) for name in events)
    assert 0 <= n_exact - n_fan <= 2
    if n_exact != n_fan:
        assert np.all(fan.angle.values[0, 1:n] == 0.0)
        np.testing.assert_allclose(z, zs, rtol=0, atol=1e-12)


def test_grazing_return_on_a_sloping_bottom_stays_in_the_water():
    # the same grazing returns where the bottom slopes gently: reflected, never crossed
    nodes = np.array([0.0, 50.0, 300.0])
    cn = np.array([1500.0, 1495.0, 1530.0])
    sec = Section([0.0, 5000.0], nodes, np.vstack([cn, cn]))
    bathy = (np.array([0.0, 8000.0, 20000.0]), np.array([300.0, 299.0, 300.5]))
    env = Environment.from_section(sec, bathymetry=bathy)
    fan = trace_fan_integrated(env, 0.0, [0.0, 1e-12, -1e-7], 20000.0, max_bounces=200)
    assert np.all(fan.end_reason.values == 0)
    z = fan["depth"].values
    r = fan["range"].values
    ok = np.isfinite(z)
    assert np.all(z[ok] >= 0.0)
    assert np.all(z[ok] <= np.interp(r[ok], *bathy) + 1e-9)


def test_point_buffer_growth_gives_the_same_record():
    # rays that outgrow the first point buffer are traced again with a 4x larger one; the
    # record assembled from the rounds must equal one traced with room enough at once
    from seaprofile.propagation.integrate import _medium_of, _trace_arrays

    env = Environment.from_section(
        Section([0.0, 20000.0], Z, np.vstack([C, C + 1.0])),
        bathymetry=([0.0, 20000.0], [4000.0, 3000.0]),
    )
    angles = [-30.0, -5.0, 0.0, 2.0, 25.0]
    small = _trace_arrays(*_medium_of(env), 800.0, angles, 20000.0, first_buffer=16)
    large = _trace_arrays(*_medium_of(env), 800.0, angles, 20000.0, first_buffer=100000)
    assert small["point_count"].max() > 4 * 16  # at least two growth rounds happened
    for name, value in large.items():
        np.testing.assert_array_equal(small[name], value, err_msg=name)
