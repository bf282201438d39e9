"""Benchmark: what the progress bar of a large fan and loss field costs.

Scenario: that of ``bench_loss.py`` (Munk 1974 profile at 100 layers, flat sand bottom at
5000 m, source at 1000 m, 200 Hz, 2000 beams over -20..20 degrees, coherent field on 1000
ranges x 500 depths). Jobs:

* the field as the library runs it (the 2000-ray fan is below the fan threshold, the beam
  sum above the loss threshold: cut into groups of beams);
* the 2000-ray fan alone, forced into groups (threshold lowered to 0): the worst case, a
  short job on a parallel kernel;
* a large range-dependent fan (same profile, bottom shoaling 5000 -> 3000 -> 4000 m over
  100 km): 1000 rays through the integrator, cut into groups at the default threshold.

Each job is timed without a bar (``progress=False``: one compiled call) and with one
(``progress=True`` with stderr replaced by a fake terminal, so the work is cut into groups
and tqdm draws into memory), the two alternating so that load on a shared machine hits
both alike; best of ``REPEAT`` each. Also checks that both give the same bytes. Prints a
table and writes benchmarks/results/progress.json.
Run: ``.venv/bin/python benchmarks/bench_progress.py``
"""

from __future__ import annotations

import contextlib
import io
import sys
import time

import numpy as np
from _results import machine, write_result

from seaprofile import _progress
from seaprofile.propagation import Environment, codes, trace_fan
from seaprofile.propagation.boundaries import Seabed
from seaprofile.propagation.loss import transmission_loss

REPEAT = 5


class _Terminal(io.StringIO):
    def isatty(self):
        return True


@contextlib.contextmanager
def _on_a_terminal():
    real = sys.stderr
    sys.stderr = _Terminal()
    try:
        yield
    finally:
        sys.stderr = real


def munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def _paired(fn):
    """Best wall time (s) of fn(False) and of fn(True) on a fake terminal, alternated."""
    plain, shown = [], []
    for _ in range(REPEAT):
        t0 = time.perf_counter()
        a = fn(False)
        plain.append(time.perf_counter() - t0)
        with _on_a_terminal():
            t0 = time.perf_counter()
            b = fn(True)
            shown.append(time.perf_counter() - t0)
    return min(plain), min(shown), a, b


def _same(a, b):
    return all(
        np.asarray(a[k].values).tobytes() == np.asarray(b[k].values).tobytes() for k in a.variables
    )


def main():
    z = np.linspace(0.0, 5000.0, 101)
    env = Environment.from_arrays(z, munk(z), 5000.0, seabed=Seabed.named("sand"))
    ranges = np.linspace(100.0, 100_000.0, 1000)
    depths = np.linspace(0.0, 5000.0, 500)
    kw = dict(ranges=ranges, depths=depths, beams=2000, angles=(-20.0, 20.0))
    launch = np.linspace(-20.0, 20.0, 2000)

    def field(progress):
        return transmission_loss(env, 1000.0, 200.0, **kw, progress=progress).to_dataset()

    def fan(progress):
        low = codes.PROGRESS_RAYS
        codes.PROGRESS_RAYS = 0  # force the groups on this short fan
        try:
            return trace_fan(env, 1000.0, launch, 100_000.0, progress=progress)
        finally:
            codes.PROGRESS_RAYS = low

    sloping = Environment.from_arrays(
        z, munk(z), bathymetry=([0.0, 50_000.0, 100_000.0], [5000.0, 3000.0, 4000.0])
    )
    launch_1000 = np.linspace(-20.0, 20.0, 1000)

    def integrated(progress):
        return trace_fan(sloping, 1000.0, launch_1000, 100_000.0, progress=progress)

    field(False)  # compile
    with _on_a_terminal():
        field(True)
    integrated(False)
    rows = []
    out = {**machine(), "pieces": _progress.PIECES, "repeat": REPEAT}
    for key, name, fn in (
        ("field", "field (1000 x 500, 2000 beams)", field),
        ("fan_forced", "fan, 2000 rays, forced groups", fan),
        ("fan_integrated", "integrated fan, 1000 rays", integrated),
    ):
        plain, shown, a, b = _paired(fn)
        same = _same(a, b)
        rows.append((name, plain, shown, same))
        out[key] = {"plain_s": plain, "bar_s": shown, "same_bytes": same}
    print(f"{'job':32s} {'no bar s':>9s} {'bar s':>9s} {'cost %':>7s} same bytes")
    for name, plain, shown, same in rows:
        print(f"{name:32s} {plain:9.3f} {shown:9.3f} {100 * (shown / plain - 1):7.1f} {same}")
    print("(shared machine: differences of a few percent either way are noise)")
    write_result("progress", out)


if __name__ == "__main__":
    main()
