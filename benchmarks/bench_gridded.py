"""Gridded sound speed and layer maps at scale: wall time, peak memory, thread speed-up.

A synthetic field (invented; the same shape of water column as
:func:`seaprofile.gridded.synthetic_field`, but built lazily with dask so that the input
itself never sits whole in memory) of ``--nlon x --nlat x --ndepth`` (default 1440 x 720 x
40, a quarter-degree global grid) goes through

    sound_speed_field -> layer_maps -> compute (all maps, 2-D)

Each case runs in its own subprocess; its peak resident memory is that child's
``ru_maxrss`` (``os.wait4``, i.e. ``getrusage`` of that one child). Cases: default chunks
(latitude=180, longitude=360, the vertical whole) on 1 and on 2 threads; the ratio of the
two is the speed-up (target >= 1.7x on 2 cores) and the 2-thread peak is compared with the
1 GB target. The baseline of the ratio is the 1-thread run of this same script. On a shared
machine the wall times move with the load of the other processes; the JSON records the
load average at the start and the machine's ceiling: the speed-up of two GIL-free threads
of plain arithmetic measured before and after the cases (2.0 on two idle cores).

Run:  .venv/bin/python benchmarks/bench_gridded.py [--scale 0.5] [--repeat 1]
Writes benchmarks/results/gridded.json.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

CHILD = r"""
import json, sys, time
import numpy as np
import dask
import dask.array as da
import xarray as xr
from seaprofile.gridded import layer_maps

nlon, nlat, ndepth, threads, clat, clon = (int(v) for v in sys.argv[1:7])
depth = np.linspace(0.0, 4000.0, ndepth)
lat1 = np.linspace(-70.0, 70.0, nlat)
lon1 = np.linspace(-180.0, 180.0, nlon, endpoint=False)
z = da.from_array(depth, chunks=-1)[:, None, None]
lat = da.from_array(lat1, chunks=clat)[None, :, None]
lon = da.from_array(lon1, chunks=clon)[None, None, :]
mld = 30.0 + 20.0 * da.cos(da.radians(lon)) + 0.5 * abs(lat)
surface = 28.0 - 0.3 * abs(lat)
deep = 2.5
thermo = 1.0 / (1.0 + da.exp((z - mld - 300.0) / 150.0))
temp = deep + (surface - deep) * da.where(z <= mld, 1.0, thermo * (1 + (mld + 300 - z) / 3e3))
temp = da.minimum(temp, surface + 0.0 * z)
sal = 34.7 + 0.8 * da.exp(-z / 400.0) + 0.0 * lat + 0.0 * lon
dims = ("depth", "latitude", "longitude")
ds = xr.Dataset(
    {
        "temperature": (dims, temp, {"standard_name": "sea_water_temperature", "units": "degC"}),
        "salinity": (dims, sal, {"standard_name": "sea_water_practical_salinity", "units": "1"}),
    },
    coords={
        "depth": ("depth", depth, {"standard_name": "depth", "units": "m", "axis": "Z"}),
        "latitude": ("latitude", lat1, {"standard_name": "latitude", "units": "degrees_north"}),
        "longitude": ("longitude", lon1, {"standard_name": "longitude", "units": "degrees_east"}),
    },
)
# compile (or load) the kernels on a tiny grid first: not part of the timing
layer_maps(ds.isel(latitude=slice(0, 2), longitude=slice(0, 2))).compute(scheduler="sync")
t0 = time.perf_counter()
with dask.config.set(scheduler="threads", num_workers=threads):
    out = layer_maps(ds).compute()
wall = time.perf_counter() - t0
print(json.dumps({"wall_s": wall, "finite_sld": int(np.isfinite(out["sonic_layer_depth"]).sum())}))
"""


CEILING = r"""
import json, threading, time
import numba

@numba.njit(nogil=True)
def spin(n):
    s = 0.0
    for i in range(n):
        s += (i % 7) ** 0.5
    return s

spin(10)
n = 200_000_000
t0 = time.perf_counter()
spin(n)
one = time.perf_counter() - t0
workers = [threading.Thread(target=spin, args=(n,)) for _ in range(2)]
t0 = time.perf_counter()
for w in workers:
    w.start()
for w in workers:
    w.join()
print(json.dumps({"ceiling": 2 * one / (time.perf_counter() - t0)}))
"""


def machine_ceiling():
    """Speed-up of two GIL-free threads of pure arithmetic now: what the load leaves us."""
    out = subprocess.run([sys.executable, "-c", CEILING], capture_output=True, check=True)
    return json.loads(out.stdout.decode().strip().splitlines()[-1])["ceiling"]


def run_case(nlon, nlat, ndepth, threads, clat, clon):
    env = dict(os.environ)
    for var in ("NUMBA_NUM_THREADS", "OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        env[var] = "1"
    args = [sys.executable, "-c", CHILD, *map(str, (nlon, nlat, ndepth, threads, clat, clon))]
    proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    out, err = proc.stdout.read(), proc.stderr.read()
    _, status, usage = os.wait4(proc.pid, 0)
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode:
        raise SystemExit(f"case failed ({threads} threads):\n{err.decode()[-2000:]}")
    res = json.loads(out.decode().strip().splitlines()[-1])
    scale = 1 if sys.platform == "darwin" else 1024  # ru_maxrss: kB on Linux, bytes on macOS
    res["peak_rss_mb"] = usage.ru_maxrss * scale / 1e6
    res["threads"] = threads
    return res


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--nlon", type=int, default=1440)
    p.add_argument("--nlat", type=int, default=720)
    p.add_argument("--ndepth", type=int, default=40)
    p.add_argument("--scale", type=float, default=1.0, help="shrink both horizontal sizes")
    p.add_argument("--repeat", type=int, default=1, help="runs per case (best wall time kept)")
    p.add_argument("--out", type=Path, default=HERE / "results" / "gridded.json")
    a = p.parse_args(argv)
    nlon, nlat = max(2, int(a.nlon * a.scale)), max(2, int(a.nlat * a.scale))
    clat, clon = min(180, nlat), min(360, nlon)
    load = os.getloadavg()
    ceiling_before = machine_ceiling()
    cases = {}
    for threads in (1, 2):
        runs = [run_case(nlon, nlat, a.ndepth, threads, clat, clon) for _ in range(a.repeat)]
        best = min(runs, key=lambda r: r["wall_s"])
        best["peak_rss_mb"] = max(r["peak_rss_mb"] for r in runs)
        cases[threads] = best
    speedup = cases[1]["wall_s"] / cases[2]["wall_s"]
    ceiling = (ceiling_before + machine_ceiling()) / 2
    columns = nlon * nlat
    print(
        f"grid {nlon} x {nlat} x {a.ndepth} ({columns} columns), chunks latitude={clat}, "
        f"longitude={clon}, vertical whole; load average at start {load[0]:.2f}"
    )
    print(f"{'threads':>7} {'wall s':>8} {'columns/s':>11} {'peak RSS MB':>12}")
    for t, r in cases.items():
        print(
            f"{t:>7} {r['wall_s']:>8.2f} {columns / r['wall_s']:>11.0f} {r['peak_rss_mb']:>12.0f}"
        )
    print(
        f"speed-up 2 vs 1 thread: {speedup:.2f}x (target >= 1.7x); "
        f"peak RSS on 2 threads {cases[2]['peak_rss_mb']:.0f} MB (target <= 1000 MB)"
    )
    print(
        f"machine ceiling: two GIL-free threads of pure arithmetic ran {ceiling:.2f}x one "
        "(mean of before and after; below 2 when other processes hold the cores)"
    )
    result = {
        "benchmark": "gridded layer maps",
        "grid": {"nlon": nlon, "nlat": nlat, "ndepth": a.ndepth},
        "chunks": {"latitude": clat, "longitude": clon, "depth": -1},
        "cases": {str(t): r for t, r in cases.items()},
        "speedup_2_vs_1": speedup,
        "machine_ceiling_2_threads": ceiling,
        "targets": {"speedup": 1.7, "peak_rss_mb": 1000},
        "loadavg_start": load,
        "cpu_count": os.cpu_count(),
        "python": platform.python_version(),
        "time": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
    }
    a.out.parent.mkdir(parents=True, exist_ok=True)
    a.out.write_text(json.dumps(result, indent=1) + "\n")
    print(f"wrote {a.out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
