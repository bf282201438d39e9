"""Benchmark: multibeam soundings by exact ray tracing against the straight-ray conversion.

Scenario (synthetic): 10,000 pings x 100 beams (10^6 beams, -65..65 degrees from vertical)
over a flat 1000 m seafloor, through a 200-layer profile (201 nodes, 0-2000 m) with a
surface layer and thermocline; two-way travel times made from the straight ray at the
transducer speed with a little jitter (the timing does not depend on where they come from).

* ``beam_to_sounding``, one fan of 100 angles for every ping (roll-stabilised beams): the
  whole public call (checks, flattening, fan tables, parallel kernel);
* ``beam_to_sounding``, every beam its own angle (the fan rolled by a different angle on
  each ping, up to +-5 degrees): each beam walks down the layers;
* baseline measured in the same run: ``straight_ray_sounding`` at the transducer speed
  (numpy, no refraction) on the same swath.

Prints a table and writes benchmarks/results/soundings.json. Run:
``.venv/bin/python benchmarks/bench_soundings.py``
"""

from __future__ import annotations

import numpy as np
from _results import best_of, machine, write_result

from seaprofile.survey import beam_to_sounding, straight_ray_sounding

PINGS, BEAMS, LAYERS = 10_000, 100, 200


def profile():
    z = np.linspace(0.0, 2000.0, LAYERS + 1)
    c = 1480.0 + 25.0 * np.exp(-z / 80.0) + 0.016 * z
    return z, c


def main():
    z, c = profile()
    rng = np.random.default_rng(1)
    fan = np.linspace(-65.0, 65.0, BEAMS)
    rolled = fan + rng.uniform(-5.0, 5.0, (PINGS, 1))
    slant = 1000.0 / np.cos(np.radians(rolled))
    times = 2.0 * slant / c[0] * (1.0 + 1e-3 * rng.standard_normal((PINGS, BEAMS)))
    beam_to_sounding(z, c, fan[:2], times[:1, :2])  # compile / load from cache
    beam_to_sounding(z, c, fan[:2], times[:8, :2])

    n = PINGS * BEAMS
    cases = {
        "exact, one fan for all pings": lambda: beam_to_sounding(
            z, c, fan, times, transducer_depth=5.0
        ),
        "exact, every beam its own angle": lambda: beam_to_sounding(
            z, c, rolled, times, transducer_depth=5.0
        ),
        "straight ray (baseline)": lambda: straight_ray_sounding(
            rolled, times, c[0], transducer_depth=5.0
        ),
    }
    seconds = {name: best_of(fn) for name, fn in cases.items()}
    base = seconds["straight ray (baseline)"]
    d_exact, _ = beam_to_sounding(z, c, rolled, times, transducer_depth=5.0)
    d_straight, _ = straight_ray_sounding(rolled, times, c[0], transducer_depth=5.0)
    worst = float(np.nanmax(np.abs(d_exact - d_straight)))
    info = machine()
    print(f"{n:,} beams, {LAYERS} layers, {info['threads']} threads (target: exact <= 1 s)")
    print(f"{'case':34s} {'s':>8s} {'beams/s':>12s} {'/ straight':>11s}")
    for name, s in seconds.items():
        print(f"{name:34s} {s:8.3f} {n / s:12.3e} {s / base:10.1f}x")
    print(f"largest depth difference exact - straight: {worst:.2f} m")
    write_result(
        "soundings",
        {
            "beams": n,
            "layers": LAYERS,
            **info,
            "seconds": seconds,
            "over_straight": {k: v / base for k, v in seconds.items()},
            "largest_depth_difference_m": worst,
        },
    )


if __name__ == "__main__":
    main()
