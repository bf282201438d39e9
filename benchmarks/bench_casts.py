"""Throughput of the cast chain on one core: read -> process -> QC -> profile -> write.

Synthetic CTD casts (seeded, written to a temporary directory; invented vessel and place)
of ``--samples`` samples each, in the text format seaprofile reads: ``# key: value``
metadata lines, then ``pressure [dbar],temperature [degC],salinity`` and one row per
sample. Every cast goes through

    read_cast -> build_profile (process + QC + binning + sound speed) -> describe -> write

and each stage is timed per cast (netCDF output, the classic netCDF-3 of the ``netcdf``
format; the netCDF-4 of ``netcdf4`` and CSV output timed as well, outside the chain), both
as CPU time of this process (``time.process_time``: the time actually spent on the core,
which is what "casts/s on one core" means) and as elapsed time. The baseline, measured on
the same file right after each cast, is the I/O floor: ``numpy.loadtxt`` of the numbers and
a plain ``netCDF4`` write of the three columns. The same three columns written plainly as
classic netCDF-3 (``scipy.io.netcdf_file``) are timed beside it (``baseline_netcdf3_write``),
not part of the floor. The whole batch is also run once more through
:func:`seaprofile.batch.build_files` as the end-to-end check (``keep_casts=False``, as
``seaprofile build`` runs it), serially and on a 2-worker ``dask.distributed`` LocalCluster.

One core: numba/BLAS/OpenMP threads are set to 1 before numpy is imported and everything
runs in this one process (``--pin-cpu N`` also pins it to CPU N). On a shared machine the
elapsed rates move with the load; CPU-time rates and the ratio to the same-run baseline
move much less.

Run:  .venv/bin/python benchmarks/bench_casts.py [--count 1000] [--samples 5000]
Writes benchmarks/results/casts.json. Target (DEVELOPERS.md, Benchmarks): >= 50 casts/s.
"""

from __future__ import annotations

import os

for _var in ("NUMBA_NUM_THREADS", "OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import json  # noqa: E402
import platform  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
import warnings  # noqa: E402
from pathlib import Path  # noqa: E402

import netCDF4  # noqa: E402
import numba  # noqa: E402
import numpy as np  # noqa: E402
import scipy  # noqa: E402
import xarray as xr  # noqa: E402
from scipy.io import netcdf_file  # noqa: E402

from seaprofile import __version__  # noqa: E402
from seaprofile.batch import build_files  # noqa: E402
from seaprofile.casts.read import read_cast, read_profile  # noqa: E402
from seaprofile.casts.write import write  # noqa: E402
from seaprofile.layers import describe  # noqa: E402
from seaprofile.profile import build_profile  # noqa: E402

HERE = Path(__file__).resolve().parent
TARGET = 50.0  # casts per second (DEVELOPERS.md, Benchmarks)
TARGET_RATIO = 3.0  # the chain within 3x of the I/O floor (issue "scale out")
WORKERS = 2  # dask worker processes for the parallel batch
STAGES = ("read", "build", "describe", "write_netcdf", "write_netcdf4", "write_csv")
#: the columns of the baseline writes: name, units
COLUMNS = (("pressure", "dbar"), ("temperature", "degC"), ("salinity", "1"))


# --- synthetic casts ---------------------------------------------------------------------


def synthetic_cast(rng, n):
    """One invented CTD cast: a short soak, then a downcast with ship heave and noise.

    Returns pressure (dbar), temperature (degC) and practical salinity, ``n`` samples each.
    The water column is a mixed layer over a thermocline and a slow deep decay; shapes and
    noise levels are plausible, not taken from any measurement.
    """
    n_soak = n // 25
    bottom = rng.uniform(300.0, 2000.0)
    soak = rng.uniform(4.0, 8.0) + rng.normal(0.0, 0.3, n_soak)
    down = np.linspace(0.5, bottom, n - n_soak)
    heave = 0.4 * np.sin(np.arange(n - n_soak) * 2 * np.pi / rng.uniform(150, 250))
    pressure = np.concatenate([soak, down + heave + rng.normal(0.0, 0.02, n - n_soak)])
    pressure = np.maximum(pressure, 0.05)
    mixed = rng.uniform(10.0, 80.0)
    t_surface, t_deep = rng.uniform(12.0, 26.0), rng.uniform(2.0, 5.0)
    t_thermo = rng.uniform(6.0, 10.0)
    z = pressure
    temperature = (
        t_deep
        + (t_thermo - t_deep) * np.exp(-z / 800.0)
        + (t_surface - t_thermo) * 0.5 * (1 - np.tanh((z - mixed) / 15.0))
    )
    temperature += rng.normal(0.0, 0.002, n)
    s_surface = rng.uniform(34.0, 36.5)
    salinity = 34.9 + (s_surface - 34.9) * np.exp(-z / 400.0) + rng.normal(0.0, 0.002, n)
    return pressure, temperature, salinity


def write_casts(directory, count, samples, seed):
    """Write ``count`` synthetic cast files; returns their paths and metadata line count."""
    rng = np.random.default_rng(seed)
    paths = []
    n_meta = 0
    for k in range(count):
        p, t, s = synthetic_cast(rng, samples)
        lat, lon = rng.uniform(-60, 60), rng.uniform(-170, 170)
        day = np.datetime64("2031-03-01T00:00") + np.timedelta64(int(k * 173), "m")
        meta = [
            "note: SYNTHETIC benchmark cast; invented survey, not a real measurement",
            f"cast_name: BENCH-{k:04d}",
            "vessel: SV Quillon Drift (invented)",
            "instrument: ctd",
            f"latitude: {lat:.5f}",
            f"longitude: {lon:.5f}",
            f"time: {np.datetime_as_string(day, unit='s')}Z",
        ]
        n_meta = len(meta)
        path = Path(directory) / f"bench_{k:04d}.csv"
        np.savetxt(
            path,
            np.column_stack([p, t, s]),
            fmt=("%.2f", "%.4f", "%.4f"),
            delimiter=",",
            header="\n".join(f"# {m}" for m in meta)
            + "\npressure [dbar],temperature [degC],salinity",
            comments="",
        )
        paths.append(path)
    return paths, n_meta


# --- timing ------------------------------------------------------------------------------


def _clock():
    """(wall, cpu) seconds: perf_counter and this process's CPU time (user + system)."""
    return time.perf_counter(), time.process_time()


def run_chain(paths, out_dir, n_meta):
    """Time each stage of each cast and the baseline on the same file, cast after cast.

    Returns ``{stage: (wall, cpu)}`` with arrays of seconds per cast, the profile bins and
    the number of warnings. Interleaving the baseline keeps both under the same load.
    """
    names = STAGES + ("baseline_loadtxt", "baseline_netcdf_write", "baseline_netcdf3_write")
    wall = {s: np.zeros(len(paths)) for s in names}
    cpu = {s: np.zeros(len(paths)) for s in names}
    bins = 0
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        for k, path in enumerate(paths):
            marks = [_clock()]
            cast = read_cast(path)
            marks.append(_clock())
            profile = build_profile(cast)
            marks.append(_clock())
            describe(profile)
            marks.append(_clock())
            write(profile, out_dir / f"{path.stem}.nc", "netcdf", overwrite=True)
            marks.append(_clock())
            write(profile, out_dir / f"{path.stem}.nc4", "netcdf4", overwrite=True)
            marks.append(_clock())
            write(profile, out_dir / f"{path.stem}.csv", "csv", overwrite=True)
            marks.append(_clock())
            data = np.loadtxt(path, delimiter=",", skiprows=n_meta + 1)
            marks.append(_clock())
            _floor_write(data, out_dir / f"{path.stem}_floor.nc")
            marks.append(_clock())
            _floor_write_classic(data, out_dir / f"{path.stem}_floor3.nc")
            marks.append(_clock())
            for i, stage in enumerate(names):
                wall[stage][k] = marks[i + 1][0] - marks[i][0]
                cpu[stage][k] = marks[i + 1][1] - marks[i][1]
            bins += profile.sizes["depth"]
    return {s: (wall[s], cpu[s]) for s in names}, bins, len(caught)


def _dask_batch(paths, tmp, serial):
    """(elapsed s of the batch, elapsed s to start the cluster, results) on 2 workers."""
    from dask.distributed import LocalCluster

    start = time.perf_counter()
    with (
        warnings.catch_warnings(),
        LocalCluster(
            n_workers=WORKERS,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        ) as cluster,
    ):
        warnings.simplefilter("ignore")
        address = cluster.scheduler_address
        build_files(paths[:4], out_dir=tmp / "dask_warm", format="netcdf", scheduler=address)
        started = time.perf_counter() - start
        begin = time.perf_counter()
        parallel = build_files(  # as `seaprofile build` does: no raw casts sent back
            paths, out_dir=tmp / "batch_dask", format="netcdf", scheduler=address, keep_casts=False
        )
        elapsed = time.perf_counter() - begin
    for r, q in zip(serial, parallel):
        for name in r.profile.data_vars:
            assert np.array_equal(r.profile[name].values, q.profile[name].values, equal_nan=True), (
                name
            )
    return elapsed, started, parallel


def _floor_write(data, path):
    """The baseline write: the three columns, plain netCDF4, units only."""
    with netCDF4.Dataset(path, "w", format="NETCDF4") as nc:
        nc.createDimension("sample", data.shape[0])
        for j, (name, units) in enumerate(COLUMNS):
            v = nc.createVariable(name, "f8", ("sample",))
            v.units = units
            v[:] = data[:, j]


def _floor_write_classic(data, path):
    """The three columns written plainly as classic netCDF-3 (64-bit offset) by scipy."""
    with netcdf_file(path, "w", version=2) as nc:
        nc.createDimension("sample", data.shape[0])
        for j, (name, units) in enumerate(COLUMNS):
            v = nc.createVariable(name, "f8", ("sample",))
            v.units = units
            v[:] = data[:, j]


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=1000, help="number of casts")
    parser.add_argument("--samples", type=int, default=5000, help="samples per cast")
    parser.add_argument("--seed", type=int, default=20310301)
    parser.add_argument(
        "--pin-cpu",
        type=int,
        default=None,
        help="pin the process to this CPU (default: one thread, not pinned)",
    )
    parser.add_argument("--output", default=str(HERE / "results" / "casts.json"))
    args = parser.parse_args(argv)
    pinned = None
    if args.pin_cpu is not None and hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {args.pin_cpu})
        pinned = args.pin_cpu
    numba.set_num_threads(1)

    with tempfile.TemporaryDirectory(prefix="seaprofile_bench_") as tmp:
        tmp = Path(tmp)
        (tmp / "in").mkdir()
        (tmp / "out").mkdir()
        (tmp / "batch").mkdir()
        start = time.perf_counter()
        paths, n_meta = write_casts(tmp / "in", args.count, args.samples, args.seed)
        generate = time.perf_counter() - start

        # warm-up (numba caches, imports, first-call costs): two casts, not timed
        warm = tmp / "warm"
        warm.mkdir()
        run_chain(paths[:2], warm, n_meta)

        times, bins, n_warnings = run_chain(paths, tmp / "out", n_meta)
        start = _clock()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            results = build_files(paths, out_dir=tmp / "batch", format="netcdf", keep_casts=False)
        end = _clock()
        batch = (end[0] - start[0], end[1] - start[1])
        failed = sum(not r.ok for r in results)
        # the same batch on a dask.distributed cluster of 2 single-thread worker processes
        # on this machine (loopback), started and warmed up first, as a survey pipeline
        # keeps its cluster: elapsed time (the CPU time of this process no longer counts
        # the work); the profiles must be the same numbers
        batch_dask, start_dask, parallel = _dask_batch(paths, tmp, results)
        failed_dask = sum(not r.ok for r in parallel)
        # sanity: the last profile reads back with as many bins as were written
        back = read_profile(tmp / "out" / f"{paths[-1].stem}.nc")
        assert back.sizes["depth"] == results[-1].profile.sizes["depth"]

    n = args.count

    def total(stages, clock):
        return sum(times[s][clock] for s in stages)

    chain_nc = ("read", "build", "describe", "write_netcdf")
    chain_csv = ("read", "build", "describe", "write_csv")
    floor = ("baseline_loadtxt", "baseline_netcdf_write")
    groups = [(s, (s,)) for s in STAGES] + [
        ("chain_netcdf", chain_nc),
        ("chain_csv", chain_csv),
        ("baseline_loadtxt", floor[:1]),
        ("baseline_netcdf_write", floor[1:]),
        ("baseline_total", floor),
        ("baseline_netcdf3_write", ("baseline_netcdf3_write",)),  # beside the floor, not in it
    ]
    floor_cpu = float(total(floor, 1).sum())
    chain_cpu = float(total(chain_nc, 1).sum())
    rows = []
    for name, stages in groups:
        w, c = total(stages, 0), total(stages, 1)
        rows.append(
            {
                "stage": name,
                "cpu_s": float(c.sum()),
                "wall_s": float(w.sum()),
                "cpu_ms_per_cast": 1e3 * float(c.mean()),
                "cpu_median_ms": 1e3 * float(np.median(c)),
                "wall_ms_per_cast": 1e3 * float(w.mean()),
                "casts_per_cpu_s": n / float(c.sum()),
                "casts_per_wall_s": n / float(w.sum()),
                "share_of_chain": (
                    float(c.sum()) / chain_cpu
                    if set(stages) <= set(chain_nc) and len(stages) == 1
                    else None
                ),
                "ratio_to_baseline": float(c.sum()) / floor_cpu,
            }
        )
    rows.append(
        {
            "stage": "build_files_netcdf",
            "cpu_s": batch[1],
            "wall_s": batch[0],
            "cpu_ms_per_cast": 1e3 * batch[1] / n,
            "cpu_median_ms": None,
            "wall_ms_per_cast": 1e3 * batch[0] / n,
            "casts_per_cpu_s": n / batch[1],
            "casts_per_wall_s": n / batch[0],
            "share_of_chain": None,
            "ratio_to_baseline": batch[1] / floor_cpu,
        }
    )

    rows.append(
        {
            "stage": f"build_files_dask_{WORKERS}_workers",
            "cpu_s": None,
            "wall_s": batch_dask,
            "cpu_ms_per_cast": None,
            "cpu_median_ms": None,
            "wall_ms_per_cast": 1e3 * batch_dask / n,
            "casts_per_cpu_s": None,
            "casts_per_wall_s": n / batch_dask,
            "share_of_chain": None,
            "ratio_to_baseline": None,
        }
    )
    rate_nc = n / chain_cpu
    print(
        f"{n} synthetic casts x {args.samples} samples, one thread"
        + (f" pinned to CPU {pinned}" if pinned is not None else "")
        + f"; {bins / n:.0f} bins/profile; files generated in {generate:.1f} s"
    )
    print("cpu = time on the core (process time); wall = elapsed; x floor = cpu / baseline cpu")
    print(
        f"{'stage':22s} {'cpu ms':>7s} {'median':>7s} {'wall ms':>8s} {'casts/s':>8s} "
        f"{'(wall)':>7s} {'share':>6s} {'x floor':>8s}"
    )
    for r in rows:
        share = (
            f"{100 * r['share_of_chain']:5.1f}%" if r["share_of_chain"] is not None else "     -"
        )
        if r["cpu_ms_per_cast"] is None:  # the parallel batch: elapsed time only
            print(
                f"{r['stage']:22s} {'-':>7s} {'-':>7s} {r['wall_ms_per_cast']:8.2f} "
                f"{'-':>8s} {r['casts_per_wall_s']:7.1f}      - {'-':>8s}"
            )
            continue
        med = f"{r['cpu_median_ms']:7.2f}" if r["cpu_median_ms"] is not None else "      -"
        print(
            f"{r['stage']:22s} {r['cpu_ms_per_cast']:7.2f} {med} "
            f"{r['wall_ms_per_cast']:8.2f} {r['casts_per_cpu_s']:8.1f} "
            f"{r['casts_per_wall_s']:7.1f} {share} {r['ratio_to_baseline']:8.2f}"
        )
    verdict = "meets" if rate_nc >= TARGET else "misses"
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(
        f"chain (netCDF output): {rate_nc:.1f} casts per CPU-second -> {verdict} the target "
        f"of {TARGET:.0f} casts/s; {n / float(total(chain_nc, 0).sum()):.1f} casts per "
        f"wall-second; {chain_cpu / floor_cpu:.1f} x the I/O floor; build_files: "
        f"{n / batch[1]:.1f} casts per CPU-second, {failed} failed; {n_warnings} warnings; "
        f"load average {load:.2f} on {os.cpu_count()} CPUs"
    )
    ratio = chain_cpu / floor_cpu
    print(
        f"within {TARGET_RATIO:.0f} x the floor: {'yes' if ratio <= TARGET_RATIO else 'no'} "
        f"({ratio:.2f} x); build_files serial {batch[0]:.1f} s against {WORKERS} dask workers "
        f"{batch_dask:.1f} s elapsed ({batch[0] / batch_dask:.2f} x, {failed_dask} failed, "
        f"same numbers; cluster start and warm-up {start_dask:.1f} s, not counted)"
    )

    result = {
        "benchmark": "cast chain throughput (read -> build_profile -> describe -> write)",
        "casts": n,
        "samples_per_cast": args.samples,
        "bins_per_profile": bins / n,
        "seed": args.seed,
        "timing": "per cast and stage: process_time (cpu) and perf_counter (wall), one "
        "process, one thread; baseline interleaved cast by cast",
        "pinned_cpu": pinned,
        "baseline": "numpy.loadtxt of the same file + plain netCDF4 write of its 3 columns",
        "baseline_netcdf3_write": "the same 3 columns written plainly as classic netCDF-3 "
        "(scipy.io.netcdf_file, 64-bit offset); not part of the baseline",
        "netcdf_output": "write_netcdf: classic netCDF-3 (netcdf, in the chain); netCDF-4 "
        "(netcdf4) timed as write_netcdf4, not in the chain",
        "target_casts_per_s": TARGET,
        "casts_per_cpu_s_netcdf": rate_nc,
        "casts_per_cpu_s_csv": n / float(total(chain_csv, 1).sum()),
        "casts_per_cpu_s_baseline": n / floor_cpu,
        "casts_per_cpu_s_build_files": n / batch[1],
        "casts_per_wall_s_netcdf": n / float(total(chain_nc, 0).sum()),
        "ratio_chain_to_baseline": chain_cpu / floor_cpu,
        "target_ratio": TARGET_RATIO,
        "meets_target_ratio": bool(chain_cpu / floor_cpu <= TARGET_RATIO),
        "build_files_serial_wall_s": batch[0],
        "build_files_dask_wall_s": batch_dask,
        "dask_workers": WORKERS,
        "dask_cluster": "dask.distributed.LocalCluster, worker processes, 1 thread each",
        "dask_cluster_start_s": start_dask,
        "dask_speedup_wall": batch[0] / batch_dask,
        "meets_target": bool(rate_nc >= TARGET),
        "failed_in_build_files": failed,
        "warnings": n_warnings,
        "rows": rows,
        "versions": {
            "seaprofile": __version__,
            "numpy": np.__version__,
            "numba": numba.__version__,
            "xarray": xr.__version__,
            "netCDF4": netCDF4.__version__,
            "scipy": scipy.__version__,
            "hdf5": netCDF4.__hdf5libversion__,
            "python": platform.python_version(),
        },
        "machine": {
            "processor": platform.processor() or platform.machine(),
            "cpus": os.cpu_count(),
            "system": platform.system(),
            "load_average_1min": load,
        },
        "date": time.strftime("%Y-%m-%dT%H:%M:%S%z"),
    }
    out = Path(args.output)
    out.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=out.parent, suffix=".tmp")
    with os.fdopen(fd, "w") as fh:
        json.dump(result, fh, indent=2)
    os.chmod(tmp, 0o644)
    os.replace(tmp, out)
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
