"""Benchmark: multibeam soundings by exact ray tracing against the straight-ray conversion.

Scenario (synthetic): 10,000 pings x 100 beams (10^6 beams, -65..65 degrees from vertical)
over a flat 1000 m seafloor, through a 200-layer profile (201 nodes, 0-2000 m) with a
surface layer and thermocline; two-way travel times made from the straight ray at the
transducer speed with a little jitter (the timing does not depend on where they come from).

* ``beam_to_sounding``: the whole public call (checks, flattening, parallel kernel);
* baseline measured in the same run: ``straight_ray_sounding`` at the transducer speed
  (numpy, no refraction) on the same swath.

Prints a table and writes benchmarks/results/soundings.json. Run:
``.venv/bin/python benchmarks/bench_soundings.py``
"""

from __future__ import annotations

import json
import os
import platform
import time

import numba
import numpy as np

from seaprofile.survey import beam_to_sounding, straight_ray_sounding

HERE = os.path.dirname(os.path.abspath(__file__))
PINGS, BEAMS, LAYERS = 10_000, 100, 200


def profile():
    z = np.linspace(0.0, 2000.0, LAYERS + 1)
    c = 1480.0 + 25.0 * np.exp(-z / 80.0) + 0.016 * z
    return z, c


def best_of(fn, repeat=3):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main():
    z, c = profile()
    angles = np.linspace(-65.0, 65.0, BEAMS)
    rng = np.random.default_rng(1)
    slant = 1000.0 / np.cos(np.radians(angles))
    times = 2.0 * slant / c[0] * (1.0 + 1e-3 * rng.standard_normal((PINGS, BEAMS)))
    beam_to_sounding(z, c, angles[:2], times[:1, :2])  # compile / load from cache

    exact = best_of(lambda: beam_to_sounding(z, c, angles, times, transducer_depth=5.0))
    straight = best_of(lambda: straight_ray_sounding(angles, times, c[0], transducer_depth=5.0))
    d_exact, _ = beam_to_sounding(z, c, angles, times, transducer_depth=5.0)
    d_straight, _ = straight_ray_sounding(angles, times, c[0], transducer_depth=5.0)
    n = PINGS * BEAMS
    rows = [
        ("beam_to_sounding (exact arcs)", exact, n / exact),
        ("straight_ray_sounding (baseline)", straight, n / straight),
    ]
    print(f"{n:,} beams, {LAYERS} layers, {numba.get_num_threads()} threads")
    print(f"{'method':36s} {'s':>8s} {'beams/s':>12s}")
    for name, s, rate in rows:
        print(f"{name:36s} {s:8.3f} {rate:12.3e}")
    ratio = exact / straight
    worst = float(np.nanmax(np.abs(d_exact - d_straight)))
    print(f"exact / straight time: {ratio:.1f}x; largest depth difference {worst:.2f} m")
    out = {
        "beams": n,
        "layers": LAYERS,
        "threads": numba.get_num_threads(),
        "machine": platform.platform(),
        "exact_s": exact,
        "straight_s": straight,
        "exact_over_straight": ratio,
        "largest_depth_difference_m": worst,
    }
    os.makedirs(os.path.join(HERE, "results"), exist_ok=True)
    path = os.path.join(HERE, "results", "soundings.json")
    tmp = path + ".tmp"
    with open(tmp, "w") as f:
        json.dump(out, f, indent=2)
    os.replace(tmp, path)


if __name__ == "__main__":
    main()
