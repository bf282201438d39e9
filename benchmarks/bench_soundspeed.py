"""Throughput of every sound-speed equation against gsw.sound_speed, measured in one run.

Also each absorption formula in ``ABSORPTION``: the public ``absorption`` (checks,
dispatcher) against the formula's own function, its compiled kernel without checks
(``ratio_vs_function``).

For each equation in ``EQUATIONS``: random points drawn uniformly inside that equation's
validity box, timed through the public ``sound_speed`` (validation, range check, kernel)
and through the equation's own function (kernel only). The baseline is
``gsw.sound_speed(SA, CT, p)`` on in-range points with SA and CT precomputed. Compilation
and page faults are warmed up first; each timing is the best of ``--repeats`` runs.

Run:  .venv/bin/python benchmarks/bench_soundspeed.py [--points 10000000] [--repeats 3]
      [--clock wall|cpu]
Writes benchmarks/results/soundspeed.json.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import tempfile
import time
import warnings

import gsw
import numba
import numpy as np

from seaprofile import __version__
from seaprofile.seawater.absorption import ABSORPTION, absorption
from seaprofile.seawater.soundspeed import EQUATIONS, sound_speed

HERE = os.path.dirname(os.path.abspath(__file__))


CLOCKS = {"wall": time.perf_counter, "cpu": time.thread_time}
_clock = time.perf_counter


def best_of(repeats, func, *args, **kwargs):
    best = np.inf
    for _ in range(repeats):
        start = _clock()
        func(*args, **kwargs)
        best = min(best, _clock() - start)
    return best


def inputs_for(eq, n, rng):
    (tl, th), (sl, sh), (vl, vh) = eq.temperature_range, eq.salinity_range, eq.vertical_range
    t = rng.uniform(tl, th, n)
    s = rng.uniform(sl, sh, n)
    v = rng.uniform(vl, vh, n)
    lat = rng.uniform(-80.0, 80.0, n) if eq.needs_latitude else None
    return t, s, v, lat


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=10_000_000)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--output", default=os.path.join(HERE, "results", "soundspeed.json"))
    parser.add_argument(
        "--clock",
        choices=sorted(CLOCKS),
        default="wall",
        help="wall time (default), or the CPU time of this thread, which "
        "other work on a shared machine disturbs far less (every route "
        "here runs in the calling thread)",
    )
    args = parser.parse_args(argv)
    global _clock
    _clock = CLOCKS[args.clock]
    n, rng = args.points, np.random.default_rng(20240601)

    # baseline: gsw.sound_speed on in-range points (inside the oceanographic funnel)
    t = rng.uniform(0.0, 30.0, n)
    sp = rng.uniform(30.0, 40.0, n)
    p = rng.uniform(0.0, 8000.0, n)
    sa = gsw.SR_from_SP(sp)
    ct = gsw.CT_from_t(sa, t, p)
    gsw.sound_speed(sa, ct, p)  # warm-up
    t_gsw = best_of(args.repeats, gsw.sound_speed, sa, ct, p)
    del t, sp, p, sa, ct

    rows = [{"equation": "gsw.sound_speed", "route": "baseline", "seconds": t_gsw}]
    for name, eq in EQUATIONS.items():
        t, s, v, lat = inputs_for(eq, n, rng)
        kw = {eq.needs: v}
        extra = {}
        if eq.needs_latitude:
            kw["latitude"] = extra["latitude"] = lat
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # in-range points must not warn
            sound_speed(t[:1000], s[:1000], equation=name, **{k: x[:1000] for k, x in kw.items()})
            sound_speed(t, s, equation=name, **kw)  # warm-up at full size
            public = best_of(args.repeats, sound_speed, t, s, equation=name, **kw)
        eq.function(t, s, v, **extra)
        raw = best_of(args.repeats, eq.function, t, s, v, **extra)
        rows.append({"equation": name, "route": "sound_speed", "seconds": public})
        rows.append({"equation": name, "route": "function", "seconds": raw})
        del t, s, v, lat

    # absorption: the public entry point against the formula function it calls, in-box points
    for name, form in ABSORPTION.items():
        box = form.validity
        f = np.exp(rng.uniform(*np.log(box["frequency"][:2]), n))
        kw = {k: rng.uniform(box[k][0], box[k][1], n) for k in form.inputs}
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # in-range points must not warn
            absorption(f, equation=name, **kw)  # warm-up at full size
            public = best_of(args.repeats, absorption, f, equation=name, **kw)
        raw = best_of(args.repeats, form.function, f, *kw.values())
        label = f"absorption:{name}"
        rows.append({"equation": label, "route": "absorption", "seconds": public})
        rows.append({"equation": label, "route": "function", "seconds": raw})
        rows[-2]["ratio_vs_function"] = public / raw
        del f, kw

    for r in rows:
        r["mpoints_per_s"] = n / r["seconds"] / 1e6
        r["speedup_vs_gsw"] = t_gsw / r["seconds"]

    print(
        f"{n:,} points, best of {args.repeats} ({args.clock} clock); "
        "speed-up = gsw.sound_speed time / time"
    )
    print(
        f"{'equation':34s} {'route':12s} {'seconds':>9s} {'Mpoints/s':>10s} "
        f"{'speed-up vs gsw':>16s}"
    )
    for r in rows:
        print(
            f"{r['equation']:34s} {r['route']:12s} {r['seconds']:9.4f} "
            f"{r['mpoints_per_s']:10.1f} {r['speedup_vs_gsw']:16.2f}"
        )

    result = {
        "benchmark": "sound speed throughput",
        "points": n,
        "repeats": args.repeats,
        "timing": f"best of repeats, seconds, one thread, {args.clock} clock",
        "baseline": "gsw.sound_speed(SA, CT, p), SA and CT precomputed",
        "rows": rows,
        "versions": {
            "seaprofile": __version__,
            "numpy": np.__version__,
            "numba": numba.__version__,
            "gsw": gsw.__version__,
            "python": platform.python_version(),
        },
        "machine": {
            "processor": platform.processor() or platform.machine(),
            "cpus": os.cpu_count(),
            "system": platform.system(),
        },
        "date": time.strftime("%Y-%m-%dT%H:%M:%S%z"),
    }
    os.makedirs(os.path.dirname(args.output), exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=os.path.dirname(args.output), suffix=".tmp")
    with os.fdopen(fd, "w") as fh:
        json.dump(result, fh, indent=2)
    os.chmod(tmp, 0o644)
    os.replace(tmp, args.output)
    print(f"wrote {args.output}")


if __name__ == "__main__":
    main()
