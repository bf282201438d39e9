"""Benchmark: exact layered ray fan and eigenrays in the Munk ocean.

Scenario: Munk (1974) canonical profile sampled at 500 layers (0-5000 m), flat bottom at
5000 m, source at 1000 m, rays to 100 km with surface and bottom reflections.

* fan: 10,000 rays, -45..45 degrees (kernel only, and the full ``trace_fan`` Dataset
  sampled every 1 km); throughput in layer crossings (kernel steps) per second;
* a bare compiled arc kernel on the same fan (:func:`bare_fan`: range and time only, no
  record), measured in the same run: the fan kernel and Dataset should stay within 2x;
* eigenrays: 100 ranges (1-100 km) x 10 receiver depths (100-4900 m), up to 3 reflections;
* baseline measured in the same run: scipy ``solve_ivp`` (DOP853, rtol 1e-10, which is
  needed to come within ~0.1 m of the exact depth at 100 km; RK45 at rtol 1e-8 is off by
  metres) on the ray equations of Jensen et al. (2011, ch. 3) for a few refracted rays,
  scaled per ray and per layer crossing.

Prints a table and writes benchmarks/results/rays.json. Run:
``.venv/bin/python benchmarks/bench_rays.py``
"""

from __future__ import annotations

import json
import os
import platform
import time

import numba
import numpy as np
from scipy.integrate import solve_ivp

from seaprofile.propagation import Environment, eigenrays, kernels, trace_fan

HERE = os.path.dirname(os.path.abspath(__file__))


def munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


@numba.njit(cache=True, parallel=True, fastmath={"contract", "arcp"})
def bare_fan(zn, cn, gn, tl, zs, thetas, rmax, max_bounces, out_r, out_t):
    """The bare arc kernel: each ray follows only range and travel time, layer by layer.

    Same closed forms as the ray engine (Jensen et al. 2011, ch. 3: circular arcs in
    linear layers, p = cos(theta)/c), none of its bookkeeping: no stored points or
    samples, no dynamic ray, no grazing rules, no counts; the ray stops at the first layer
    end beyond ``rmax`` or after more than ``max_bounces`` reflections. Layer gradients
    ``gn`` and vertical slowness integrals ``tl`` are precomputed, as the engine does. The
    baseline that the full kernel and the RayFan Dataset are measured against.
    """
    n = zn.size - 1
    for j in numba.prange(thetas.size):
        i = min(max(np.searchsorted(zn, zs, side="right") - 1, 0), n - 1)
        c = cn[i] + gn[i] * (zs - zn[i])
        p = np.cos(thetas[j]) / c
        sa = abs(np.sin(thetas[j]))
        d = 1 if thetas[j] >= 0.0 else -1
        z = zs
        r = 0.0
        t = 0.0
        bounces = 0
        while r < rmax and bounces <= max_bounces:
            g = gn[i] * d
            zb = zn[i + 1] if d > 0 else zn[i]
            cb = cn[i + 1] if d > 0 else cn[i]
            dz = abs(zb - z)
            turn = p * cb >= 1.0
            if turn:
                cb = 1.0 / p
                dz = (cb - c) / g
                sb = 0.0
            else:
                sb = np.sqrt(max(1.0 - (p * cb) * (p * cb), 0.0))
            if sa + sb > 0.0:
                k = dz * (c + cb) / (sa + sb)
                r += p * k
                q1 = p * p * k / (1.0 + sb)
                y = g * q1
                t += q1 * (np.log1p(y) / y if abs(y) > 1e-12 else 1.0)
                if turn or z != zn[i + (1 if d < 0 else 0)]:
                    x = g * dz / c  # a part of the layer: its own slowness integral
                    t += dz / c * (np.log1p(x) / x if abs(x) > 1e-12 else 1.0)
                else:
                    t += tl[i]
            else:
                r = rmax  # horizontal in an isovelocity layer
            z = zb if not turn else z + d * dz
            c = cb
            sa = sb
            if turn:
                d = -d
            elif d > 0 and i == n - 1:
                d = -1
                bounces += 1
            elif d < 0 and i == 0:
                d = 1
                bounces += 1
            else:
                i += d
        out_r[j] = r
        out_t[j] = t


def best(fn, repeat=5):
    times = []
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def scipy_ray(zn, cn, zs, theta_deg, rmax, method="DOP853", rtol=1e-10):
    """Straightforward ray-equation integration (Jensen et al. 2011, eqs. 3.23-3.24)."""
    g = np.diff(cn) / np.diff(zn)

    def cz(z):
        i = min(max(np.searchsorted(zn, z) - 1, 0), g.size - 1)
        return np.interp(z, zn, cn), g[i]

    def rhs(s, y):
        r, z, xi, zeta = y
        c, dc = cz(z)
        return [c * xi, c * zeta, 0.0, -dc / (c * c)]

    c0 = np.interp(zs, zn, cn)
    th = np.radians(theta_deg)
    ev = lambda s, y: y[0] - rmax  # noqa: E731
    ev.terminal = True
    sol = solve_ivp(
        rhs,
        (0.0, 3.0 * rmax),
        [0.0, zs, np.cos(th) / c0, np.sin(th) / c0],
        method=method,
        rtol=rtol,
        atol=rtol * 1e-3,
        events=ev,
    )
    return sol.y_events[0][0][1]


def main():
    z = np.linspace(0.0, 5000.0, 501)
    env = Environment.from_arrays(z, munk(z))
    zn, cn = env.layers()
    zs, rmax = 1000.0, 100_000.0
    angles = np.linspace(-45.0, 45.0, 10_000)
    # compile
    kernels.trace_layers(zn, cn, zs, angles[:8], rmax, 100)
    trace_fan(env, zs, angles[:8], rmax, range_step=1000.0)
    rr = np.linspace(1000.0, 100_000.0, 100)
    zr = np.linspace(100.0, 4900.0, 10)
    eigenrays(env, zs, rr[:2], zr[:2])

    th = np.radians(angles)
    gn, tl = kernels._gradients(zn, cn), kernels._layer_times(zn, cn)
    bare_r, bare_t = np.empty(angles.size), np.empty(angles.size)

    def bare():
        bare_fan(zn, cn, gn, tl, zs, th, rmax, 100, bare_r, bare_t)

    bare_fan(zn, cn, gn, tl, zs, th[:8], rmax, 100, bare_r[:8], bare_t[:8])
    t_bare, _ = best(bare)
    t_kernel, out = best(lambda: kernels.trace_layers(zn, cn, zs, angles, rmax, 100))
    steps = int(out["steps"].sum())
    nthreads = numba.get_num_threads()
    numba.set_num_threads(1)
    t_kernel_1, _ = best(lambda: kernels.trace_layers(zn, cn, zs, angles, rmax, 100), repeat=3)
    t_bare_1, _ = best(bare, repeat=3)
    t_fan_1, _ = best(lambda: trace_fan(env, zs, angles, rmax, range_step=1000.0), repeat=3)
    numba.set_num_threads(nthreads)
    t_fan, fan = best(lambda: trace_fan(env, zs, angles, rmax, range_step=1000.0), repeat=3)
    t_eig, eig = best(lambda: eigenrays(env, zs, rr, zr, max_reflections=3), repeat=3)

    # baseline: solve_ivp on a few refracted rays (no reflections for |theta| <= 12 deg)
    base_angles = np.array([-12.0, -6.0, 3.0, 9.0])
    t0 = time.perf_counter()
    zb = [scipy_ray(zn, cn, zs, a, rmax) for a in base_angles]
    t_base_per_ray = (time.perf_counter() - t0) / base_angles.size
    t0 = time.perf_counter()
    zb_rk45 = [scipy_ray(zn, cn, zs, a, rmax, "RK45", 1e-8) for a in base_angles]
    t_rk45_per_ray = (time.perf_counter() - t0) / base_angles.size
    chk = kernels.trace_layers(zn, cn, zs, base_angles, rmax, 100, samp_r=np.array([rmax]))
    depth_diff = float(np.max(np.abs(chk["sample_depth"][:, 0] - np.array(zb))))
    depth_diff_rk45 = float(np.max(np.abs(chk["sample_depth"][:, 0] - np.array(zb_rk45))))
    ours_steps = chk["steps"].mean()
    many = np.repeat(base_angles, 500)
    t_one, _ = best(
        lambda: kernels.trace_layers(zn, cn, zs, many, rmax, 100, samp_r=np.array([rmax])), repeat=5
    )
    t_ours_per_ray = t_one / many.size
    # fan rays are on average longer (reflections) than the baseline rays: compare per step
    base_fan_estimate = t_base_per_ray / ours_steps * steps

    res = {
        "machine": {
            "python": platform.python_version(),
            "numba": numba.__version__,
            "threads": numba.get_num_threads(),
            "cpu_count": os.cpu_count(),
        },
        "scenario": {
            "profile": "Munk 1974 canonical",
            "layers": int(zn.size - 1),
            "source_depth_m": zs,
            "max_range_m": rmax,
            "bottom_depth_m": 5000.0,
            "fan_rays": int(angles.size),
            "fan_angles_deg": [-45.0, 45.0],
        },
        "bare_arc_kernel_s": t_bare,
        "fan_kernel_over_bare": t_kernel / t_bare,
        "bare_arc_kernel_1thread_s": t_bare_1,
        "fan_kernel_over_bare_1thread": t_kernel_1 / t_bare_1,
        "fan_dataset_over_bare": t_fan / t_bare,
        "fan_dataset_1thread_s": t_fan_1,
        "fan_dataset_over_bare_1thread": t_fan_1 / t_bare_1,
        "fan_kernel_s": t_kernel,
        "fan_dataset_1km_samples_s": t_fan,
        "fan_layer_crossings": steps,
        "layer_crossings_per_s": steps / t_kernel,
        "fan_kernel_1thread_s": t_kernel_1,
        "layer_crossings_per_s_1thread": steps / t_kernel_1,
        "load_average_at_start": os.getloadavg()[0],
        "fan_end_reasons": {str(k): int(np.sum(out["end_reason"] == k)) for k in range(4)},
        "eigenrays_s": t_eig,
        "eigenray_receivers": int(rr.size * zr.size),
        "eigenray_paths": int(eig.sizes["path"]),
        "eigenray_max_depth_miss_m": float(np.abs(eig.depth_miss).max()),
        "baseline_solve_ivp_per_ray_s": t_base_per_ray,
        "exact_per_ray_s_same_rays": t_ours_per_ray,
        "speedup_same_rays": t_base_per_ray / t_ours_per_ray,
        "baseline_fan_estimate_s": base_fan_estimate,
        "speedup_fan_vs_baseline_estimate": base_fan_estimate / t_kernel,
        "baseline_depth_difference_m": depth_diff,
        "baseline_rk45_rtol1e-8_per_ray_s": t_rk45_per_ray,
        "baseline_rk45_depth_difference_m": depth_diff_rk45,
        "speedup_same_rays_vs_rk45": t_rk45_per_ray / t_ours_per_ray,
        "targets": {"fan_s": 0.5, "eigenrays_s": 2.0, "fan_over_bare": 2.0},
    }
    rows = [
        ("fan kernel, 10k rays, 100 km", f"{t_kernel:.3f} s", "target <= 0.5 s"),
        (
            "fan kernel, 1 thread",
            f"{t_kernel_1:.3f} s",
            f"{steps / t_kernel_1 / 1e6:.1f} M crossings/s",
        ),
        ("fan Dataset, 1 km samples", f"{t_fan:.3f} s", f"x{t_fan / t_bare:.2f} the bare kernel"),
        (
            "fan Dataset, 1 km samples, 1 thread",
            f"{t_fan_1:.3f} s",
            f"x{t_fan_1 / t_bare_1:.2f} the bare kernel (1 thread each), target <= 2",
        ),
        (
            "bare arc kernel (range, time only)",
            f"{t_bare:.3f} s",
            f"fan kernel x{t_kernel / t_bare:.2f}, target <= 2",
        ),
        (
            "bare arc kernel, 1 thread",
            f"{t_bare_1:.3f} s",
            f"fan kernel x{t_kernel_1 / t_bare_1:.2f} (1 thread each)",
        ),
        ("layer crossings", f"{steps:,}", f"{steps / t_kernel / 1e6:.1f} M/s"),
        (
            "eigenrays 100 x 10 receivers",
            f"{t_eig:.3f} s",
            f"{eig.sizes['path']} paths, target <= 2 s",
        ),
        (
            "solve_ivp DOP853 rtol 1e-10 per ray",
            f"{t_base_per_ray * 1e3:.1f} ms",
            f"exact {t_ours_per_ray * 1e6:.1f} us/ray, x{t_base_per_ray / t_ours_per_ray:.0f}",
        ),
        (
            "solve_ivp RK45 rtol 1e-8 per ray",
            f"{t_rk45_per_ray * 1e3:.1f} ms",
            f"x{t_rk45_per_ray / t_ours_per_ray:.0f}, {depth_diff_rk45:.2f} m off at 100 km",
        ),
        (
            "baseline fan estimate",
            f"{base_fan_estimate:.1f} s",
            f"x{base_fan_estimate / t_kernel:.0f} slower than the kernel",
        ),
        ("baseline vs exact depth at 100 km", f"{depth_diff:.2e} m", ""),
    ]
    rows.append(
        ("load average (other jobs)", f"{os.getloadavg()[0]:.2f}", f"{os.cpu_count()} cores")
    )
    w = max(len(r[0]) for r in rows)
    print(f"{'case':<{w}}  {'value':>14}  note")
    for a, b, c in rows:
        print(f"{a:<{w}}  {b:>14}  {c}")
    os.makedirs(os.path.join(HERE, "results"), exist_ok=True)
    path = os.path.join(HERE, "results", "rays.json")
    tmp = path + ".tmp"
    with open(tmp, "w") as fh:
        json.dump(res, fh, indent=2)
    os.replace(tmp, path)
    print(f"wrote {path}")


if __name__ == "__main__":
    main()
