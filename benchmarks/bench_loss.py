"""Benchmark: transmission-loss field in the Munk ocean.

Scenario: Munk (1974) canonical profile at 100 layers (0-5000 m), flat bottom at 5000 m
(sand), source at 1000 m, 200 Hz, 2000 beams over -20..20 degrees, coherent field on
1000 ranges (100 m - 100 km) x 500 depths. After compilation: wall time of
``transmission_loss``, peak Python memory (tracemalloc), and the ray fan alone
(``trace_fan`` on the same launch angles) measured in the same run as the baseline.
Target: <= 2 s for the field. Prints a table and writes benchmarks/results/loss.json.
Run: ``.venv/bin/python benchmarks/bench_loss.py``
"""

from __future__ import annotations

import tracemalloc

import numpy as np
from _results import best_of, machine, write_result

from seaprofile.propagation import Environment, trace_fan
from seaprofile.propagation.boundaries import Seabed
from seaprofile.propagation.loss import transmission_loss


def munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def scenario():
    """The benchmark case: (environment, keywords of transmission_loss, launch angles deg)."""
    z = np.linspace(0.0, 5000.0, 101)
    env = Environment.from_arrays(z, munk(z), 5000.0, seabed=Seabed.named("sand"))
    ranges = np.linspace(100.0, 100_000.0, 1000)
    depths = np.linspace(0.0, 5000.0, 500)
    kw = dict(ranges=ranges, depths=depths, beams=2000, angles=(-20.0, 20.0))
    return env, kw, np.linspace(-20.0, 20.0, 2000)


def main():
    env, kw, launch = scenario()
    ranges, depths = kw["ranges"], kw["depths"]
    transmission_loss(env, 1000.0, 200.0, **kw)  # compile
    t_field = best_of(lambda: transmission_loss(env, 1000.0, 200.0, **kw))
    t_fan = best_of(lambda: trace_fan(env, 1000.0, launch, 100_000.0))
    tracemalloc.start()
    tl = transmission_loss(env, 1000.0, 200.0, **kw)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    covered = float((tl.beam_count.values > 0).mean())
    rows = [
        ("field (1000 x 500, 2000 beams)", t_field),
        ("ray fan alone (2000 rays)", t_fan),
        ("beam summation (field - fan)", t_field - t_fan),
    ]
    print(f"{'step':34s} {'wall s':>8s}")
    for name, t in rows:
        print(f"{name:34s} {t:8.3f}")
    print(f"peak traced memory {peak / 1e6:.1f} MB; cells with coverage {covered:.3f}")
    print(f"field / fan ratio {t_field / t_fan:.2f}; target field <= 2 s")
    out = {
        **machine(),
        "field_s": t_field,
        "fan_s": t_fan,
        "field_over_fan": t_field / t_fan,
        "peak_memory_mb": peak / 1e6,
        "coverage_fraction": covered,
        "grid": [int(depths.size), int(ranges.size)],
        "beams": 2000,
    }
    write_result("loss", out)


if __name__ == "__main__":
    main()
