"""Loss field: 1000 ranges x 500 depths, 2000 beams, Munk profile to 100 km, after
compilation; the ray fan alone (trace_fan sampled at the same ranges) as the baseline."""

import json
import time
import tracemalloc
from pathlib import Path

import numpy as np

from seaprofile.propagation import Environment, Seabed, trace_fan
from seaprofile.propagation.loss import transmission_loss


def munk(z):
    # Munk (1974) canonical profile, eps = 0.00737, axis 1300 m, scale 1300 m
    e = 2 * (z - 1300.0) / 1300.0
    return 1500.0 * (1 + 0.00737 * (e - 1 + np.exp(-e)))


def main():
    z = np.linspace(0, 5000, 101)
    env = Environment.from_arrays(z, munk(z), 5000, seabed=Seabed.named("sand"))
    r = np.linspace(100, 100_000, 1000)
    d = np.linspace(0, 5000, 500)
    kw = dict(ranges=r, depths=d, beams=2000, angles=(-20, 20), absorption=None)
    transmission_loss(env, 1000, 100, **{**kw, "beams": 20})  # compile
    trace_fan(env, 1000, np.linspace(-20, 20, 20), 100_000, range_step=100)
    rows = {}
    for name, fn in (
        (
            "ray fan (trace_fan)",
            lambda: trace_fan(env, 1000, np.linspace(-20, 20, 2000), 100_000, range_step=100),
        ),  # fmt: skip
        ("loss field", lambda: transmission_loss(env, 1000, 100, **kw)),
    ):
        tracemalloc.start()
        t = time.perf_counter()
        fn()
        dt = time.perf_counter() - t
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        rows[name] = {"seconds": dt, "peak_MB": peak / 1e6}
    base = rows["ray fan (trace_fan)"]["seconds"]
    print(f"{'step':24s} {'s':>8s} {'peak MB':>9s} {'x fan':>7s}")
    for k, v in rows.items():
        print(f"{k:24s} {v['seconds']:8.3f} {v['peak_MB']:9.1f} {v['seconds'] / base:7.2f}")
    out = Path(__file__).parent / "results" / "bench_loss.json"
    out.write_text(json.dumps(rows, indent=1) + "\n")


if __name__ == "__main__":
    main()
