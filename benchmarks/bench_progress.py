"""Benchmark: what the progress bar of a large fan and loss field costs.

Scenario: that of ``bench_loss.py`` (Munk 1974 profile at 100 layers, flat sand bottom at
5000 m, source at 1000 m, 200 Hz, 2000 beams over -20..20 degrees, coherent field on 1000
ranges x 500 depths). Jobs:

* the field as the library runs it (the 2000-ray fan is below the fan threshold, the beam
  sum above the loss threshold: cut into groups of beams);
* the 2000-ray fan alone, forced into groups (threshold lowered to 0): the worst case, a
  short job on a parallel kernel;
* a large range-dependent fan (same profile, bottom shoaling 5000 -> 3000 -> 4000 m over
  100 km): 2000 rays through the integrator, cut into groups at the default threshold.

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
from bench_loss import munk, scenario

from seaprofile import _progress
from seaprofile.propagation import Environment, codes, trace_fan
from seaprofile.propagation.loss import transmission_loss

REPEAT = 7


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


def _timed(fn, progress):
    """(wall s, CPU s of the whole process, result) of one call."""
    w0, c0 = time.perf_counter(), time.process_time()
    out = fn(progress)
    return time.perf_counter() - w0, time.process_time() - c0, out


def _paired(fn):
    """Best wall and CPU times (s) of fn(False) and of fn(True) on a fake terminal.

    The two alternate, ``REPEAT`` times each. CPU time (all threads of the process) is
    less sensitive than wall time to other work on a shared machine.
    """
    plain, shown = [], []
    for _ in range(REPEAT):
        plain.append(_timed(fn, False))
        with _on_a_terminal():
            shown.append(_timed(fn, True))
    best = [min(t[k] for t in runs) for runs in (plain, shown) for k in (0, 1)]
    return (*best, plain[-1][2], shown[-1][2])


def _same(a, b):
    return all(
        np.asarray(a[k].values).tobytes() == np.asarray(b[k].values).tobytes() for k in a.variables
    )


def main():
    env, kw, launch = scenario()
    z = np.linspace(0.0, 5000.0, 101)  # the nodes of bench_loss

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

    def integrated(progress):
        return trace_fan(sloping, 1000.0, launch, 100_000.0, progress=progress)

    field(False)  # compile
    with _on_a_terminal():
        field(True)
    integrated(False)
    rows = []
    out = {**machine(), "pieces": _progress.PIECES, "repeat": REPEAT}
    for key, name, fn in (
        ("field", "field (1000 x 500, 2000 beams)", field),
        ("fan_forced", "fan, 2000 rays, forced groups", fan),
        ("fan_integrated", "integrated fan, 2000 rays", integrated),
    ):
        wall, cpu, wall_bar, cpu_bar, a, b = _paired(fn)
        same = _same(a, b)
        rows.append((name, wall, wall_bar, cpu, cpu_bar, same))
        out[key] = {
            "plain_wall_s": wall,
            "bar_wall_s": wall_bar,
            "plain_cpu_s": cpu,
            "bar_cpu_s": cpu_bar,
            "same_bytes": same,
        }
    head = f"{'job':31s} {'wall s':>6s} {'+bar':>6s} {'cost':>6s} {'cpu s':>6s} {'+bar':>6s} {'cost':>6s}"
    print(head + " same bytes")
    for name, w, wb, c, cb, same in rows:
        print(
            f"{name:31s} {w:6.3f} {wb:6.3f} {100 * (wb / w - 1):5.1f}% "
            f"{c:6.3f} {cb:6.3f} {100 * (cb / c - 1):5.1f}% {same}"
        )
    print("(shared machine: differences of several percent either way are noise)")
    write_result("progress", out)


if __name__ == "__main__":
    main()
