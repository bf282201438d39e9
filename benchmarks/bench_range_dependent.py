"""Benchmark: range-dependent ray fan (numba integrator) against a plain scipy trace.

Scenario (synthetic, invented): a 50 km track with 20 casts across a front, c(r, z)
piecewise linear on 49 depth nodes, a shoaling bottom from 4000 m to 2600 m; 1000 rays
from a 100 m source, launch angles -20..20 degrees, traced to 50 km.

Baseline, measured in the same run: the same rays traced with scipy.integrate.solve_ivp
(RK45, rtol 1e-12, tight absolute tolerances per component) with the sound speed and gradients from
Section.gradient_at, surface and bottom reflections by terminal events and restart. Only
a few rays are run that way and the time is scaled to the fan; their end points are
compared with the integrator's.

Run:  .venv/bin/python benchmarks/bench_range_dependent.py
Writes benchmarks/results/range_dependent.json
"""

from __future__ import annotations

import json
import os
import platform
import sys
import tempfile
import time

import numpy as np
from scipy.integrate import solve_ivp

from seaprofile.propagation import Environment
from seaprofile.propagation.integrate import trace_fan_integrated
from seaprofile.propagation.section import Section

N_RAYS = 1000
MAX_RANGE = 50_000.0
SOURCE_DEPTH = 100.0
N_BASELINE = 4
RTOL = 1e-12
# absolute tolerances: r, z (m), slowness components (s/m), t (s), q (m/rad), p
ATOL = np.array([1e-8, 1e-8, 1e-15, 1e-15, 1e-14, 1e-8, 1e-15])


def scenario():
    """Invented section: channel axis deepening and surface water warming along track."""
    ranges = np.linspace(0.0, MAX_RANGE, 20)
    depth = np.concatenate([np.arange(0.0, 400.0, 25.0), np.linspace(400.0, 4000.0, 33)])
    frac = ranges[:, None] / MAX_RANGE
    axis = 1000.0 + 300.0 * frac  # m
    eta = 2.0 * (depth[None, :] - axis) / 1300.0
    c = 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))
    c += 6.0 * frac * np.exp(-depth[None, :] / 150.0)  # warmer surface water further out
    sec = Section(ranges, depth, c)
    bathy_r = np.linspace(0.0, MAX_RANGE, 11)
    bathy_z = 4000.0 - 1400.0 * bathy_r / MAX_RANGE + 80.0 * np.sin(bathy_r / 3000.0)
    return Environment.from_section(sec, bathymetry=(bathy_r, bathy_z))


def scipy_trace(env, angle_deg, max_bounces=100):
    """One ray with solve_ivp: events at the surface, bottom and max range; reflect, restart."""
    sec = env.section
    br, bz = env.bathymetry.ranges, env.bathymetry.depths

    def grad(r, z):
        c, cr, cz, crr, crz = sec.gradient_at(r, z)
        return float(c), float(cr), float(cz), float(crr), float(crz)

    def rhs(s, y):
        r, z, xi, zeta, t, q, p = y
        c, cr, cz, crr, crz = grad(r, z)
        tr, tz = c * xi, c * zeta
        cnn = crr * tz * tz - 2.0 * crz * tr * tz
        return [tr, tz, -cr / c**2, -cz / c**2, 1.0 / c, c * p, -cnn * q / c**2]

    def surface(s, y):
        return y[1]

    def bottom(s, y):
        return np.interp(y[0], br, bz) - y[1]

    def end(s, y):
        return MAX_RANGE - y[0]

    for ev in (surface, bottom, end):
        ev.terminal = True
        ev.direction = -1
    th = np.radians(angle_deg)
    c0 = grad(0.0, SOURCE_DEPTH)[0]
    y = np.array([0.0, SOURCE_DEPTH, np.cos(th) / c0, np.sin(th) / c0, 0.0, 0.0, 1.0 / c0])
    s0 = 0.0
    bounces = 0
    while True:
        sol = solve_ivp(
            rhs,
            (s0, s0 + 3 * MAX_RANGE),
            y,
            method="RK45",
            rtol=RTOL,
            atol=ATOL,
            events=(surface, bottom, end),
        )
        y = sol.y[:, -1].copy()
        s0 = sol.t[-1]
        if sol.status != 1 or len(sol.t_events[2]):
            break
        c = grad(y[0], y[1])[0]
        t = np.array([y[2], y[3]]) * c
        if len(sol.t_events[0]):
            y[1] = 0.0
            nrm = np.array([0.0, 1.0])
        else:
            k = np.searchsorted(br, y[0]).clip(1, len(br) - 1)
            slope = (bz[k] - bz[k - 1]) / (br[k] - br[k - 1])
            nrm = np.array([-slope, 1.0]) / np.hypot(slope, 1.0)
            y[1] = np.interp(y[0], br, bz)
        t = t - 2.0 * (t @ nrm) * nrm
        y[2], y[3] = t / c
        bounces += 1
        if bounces > max_bounces or y[2] < 0:
            break
        # step off the boundary so the event does not fire again at once
        s0 += 1e-9
    return y, sol.nfev


def tolerance_table(env):
    """Integrator (section of identical casts) against the exact layered solver."""
    from seaprofile.propagation.environment import Environment
    from seaprofile.propagation.rays import trace_fan

    sec = env.section
    c0 = sec.sound_speed[0]
    flat = Environment.from_arrays(sec.depth, c0, 4000.0)
    same = Environment.from_section(
        Section(sec.ranges, sec.depth, np.repeat(c0[None, :], sec.ranges.size, axis=0)), 4000.0
    )
    angles = np.linspace(-20.0, 20.0, 201)
    exact = trace_fan(flat, SOURCE_DEPTH, angles, MAX_RANGE)

    def ends(fan):
        n = fan.point_count.values
        idx = np.arange(n.size), n - 1
        return fan["depth"].values[idx], fan["travel_time"].values[idx]

    ze, te = ends(exact)
    rows = []
    for tol in (1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9):
        trace_fan_integrated(same, SOURCE_DEPTH, angles[:2], MAX_RANGE, tolerance=tol)
        t0 = time.perf_counter()
        fan = trace_fan_integrated(same, SOURCE_DEPTH, angles, MAX_RANGE, tolerance=tol)
        el = time.perf_counter() - t0
        zi, ti = ends(fan)
        steps = json.loads(fan.attrs["processing_steps"])[-1]["integration_steps"]
        rows.append(
            {
                "tolerance_m": tol,
                "max_rel_time_error": float(np.max(np.abs(ti - te) / te)),
                "max_depth_error_m": float(np.max(np.abs(zi - ze))),
                "same_counts": bool(
                    np.array_equal(fan.surface_reflections, exact.surface_reflections)
                    and np.array_equal(fan.bottom_reflections, exact.bottom_reflections)
                    and np.array_equal(fan.caustics, exact.caustics)
                ),
                "seconds": el,
                "steps": int(steps),
            }
        )
    print(
        f"error against the exact layered solver ({angles.size} rays, 50 km, identical "
        "casts, flat bottom):"
    )
    print(
        f"{'tolerance (m)':>14s} {'max rel dt':>12s} {'max |dz| (m)':>13s} "
        f"{'counts equal':>13s} {'steps':>9s} {'time (s)':>9s}"
    )
    for r in rows:
        print(
            f"{r['tolerance_m']:14.0e} {r['max_rel_time_error']:12.2e} "
            f"{r['max_depth_error_m']:13.2e} {str(r['same_counts']):>13s} "
            f"{r['steps']:9d} {r['seconds']:9.3f}"
        )
    return rows


def main():
    env = scenario()
    angles = np.linspace(-20.0, 20.0, N_RAYS)
    t0 = time.perf_counter()
    trace_fan_integrated(env, SOURCE_DEPTH, angles[:4], MAX_RANGE)
    compile_s = time.perf_counter() - t0
    times = []
    for _ in range(3):
        t0 = time.perf_counter()
        fan = trace_fan_integrated(env, SOURCE_DEPTH, angles, MAX_RANGE)
        times.append(time.perf_counter() - t0)
    t_fan = min(times)
    n = fan.point_count.values
    idx = np.arange(n.size), n - 1
    end_r = fan["range"].values[idx]
    end_z = fan["depth"].values[idx]
    end_t = fan["travel_time"].values[idx]

    pick = np.linspace(0, N_RAYS - 1, N_BASELINE).round().astype(int)
    t0 = time.perf_counter()
    base = [scipy_trace(env, angles[k]) for k in pick]
    t_base = time.perf_counter() - t0
    t_base_scaled = t_base / N_BASELINE * N_RAYS
    dz = [abs(b[0][1] - end_z[k]) if end_r[k] == MAX_RANGE else np.nan for b, k in zip(base, pick)]
    dt = [abs(b[0][4] - end_t[k]) if end_r[k] == MAX_RANGE else np.nan for b, k in zip(base, pick)]

    rows = [
        ("numba integrator, 1000 rays (best of 3)", t_fan, 1.0),
        ("numba integrator, first call (compile or cache load)", compile_s, compile_s / t_fan),
        (
            f"scipy solve_ivp, {N_BASELINE} rays scaled to {N_RAYS}",
            t_base_scaled,
            t_base_scaled / t_fan,
        ),
    ]
    print(
        f"range-dependent fan: {N_RAYS} rays, {MAX_RANGE / 1000:.0f} km, "
        f"{env.section.ranges.size} casts, {env.section.depth.size} depth nodes, "
        f"{env.bathymetry.ranges.size} bathymetry points"
    )
    print(f"{'case':58s} {'time (s)':>10s} {'x fan':>8s}")
    for name, sec, ratio in rows:
        print(f"{name:58s} {sec:10.3f} {ratio:8.1f}")
    steps = json.loads(fan.attrs["processing_steps"])[-1]["integration_steps"]
    print(f"integration steps: {steps}; points kept: {int(n.sum())}")
    print(
        f"end reasons: {np.bincount(fan.end_reason.values, minlength=4).tolist()} "
        "(range_reached, absorbed, left_domain, step_limit)"
    )
    print(
        f"end-point agreement with scipy on {N_BASELINE} rays: max |dz| = "
        f"{np.nanmax(dz):.2e} m, max |dt| = {np.nanmax(dt):.2e} s"
    )
    table = tolerance_table(env)
    target = 2.0
    print(f"target <= {target:.1f} s after compilation: {'met' if t_fan <= target else 'NOT met'}")

    result = {
        "benchmark": "range_dependent",
        "rays": N_RAYS,
        "max_range_m": MAX_RANGE,
        "casts": int(env.section.ranges.size),
        "depth_nodes": int(env.section.depth.size),
        "fan_seconds": t_fan,
        "fan_seconds_all": times,
        "first_call_seconds": compile_s,
        "baseline": "scipy.integrate.solve_ivp RK45 rtol 1e-12, events + restart",
        "baseline_rays": N_BASELINE,
        "baseline_seconds_scaled": t_base_scaled,
        "speedup_vs_baseline": t_base_scaled / t_fan,
        "baseline_max_abs_depth_diff_m": float(np.nanmax(dz)),
        "baseline_max_abs_time_diff_s": float(np.nanmax(dt)),
        "error_vs_tolerance": table,
        "target_seconds": target,
        "target_met": bool(t_fan <= target),
        "python": sys.version.split()[0],
        "machine": platform.machine(),
        "cpu_count": os.cpu_count(),
    }
    out = os.path.join(
        os.path.dirname(os.path.abspath(__file__)), "results", "range_dependent.json"
    )
    os.makedirs(os.path.dirname(out), exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=os.path.dirname(out), suffix=".tmp")
    with os.fdopen(fd, "w") as fh:
        json.dump(result, fh, indent=2)
    os.replace(tmp, out)
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
