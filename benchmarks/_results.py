"""Shared pieces of the benchmark scripts: best-of timing and the atomic JSON result."""

from __future__ import annotations

import json
import os
import platform
import tempfile
import time

import numba

HERE = os.path.dirname(os.path.abspath(__file__))


def best_of(fn, repeat=3):
    """Shortest wall time of ``repeat`` calls of ``fn()``, s."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def machine():
    """What the numbers were measured on: threads and platform."""
    return {"threads": numba.get_num_threads(), "machine": platform.platform()}


def write_result(name, result):
    """Write ``result`` as benchmarks/results/<name>.json atomically; return the path."""
    folder = os.path.join(HERE, "results")
    os.makedirs(folder, exist_ok=True)
    path = os.path.join(folder, f"{name}.json")
    fd, tmp = tempfile.mkstemp(dir=folder, suffix=".tmp")
    with os.fdopen(fd, "w") as fh:
        json.dump(result, fh, indent=2)
    os.chmod(tmp, 0o644)
    os.replace(tmp, path)
    print(f"wrote {path}")
    return path
