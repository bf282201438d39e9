"""Build sound-speed profiles from cast files: read, process, quality-control, write.

Every cast becomes a Profile with its processing steps and QC flags recorded. Options are
checked once, before any file is read (a bad option: one line, exit status 2). A file that
cannot be read is reported on stderr and the others are still processed; the exit status
is 2 when any file failed. Each summary line lists what was assumed for its cast (salinity,
fall rate, extension below the last sample). An input file is never written over.
"""

from __future__ import annotations

import csv
import json
import sys
from pathlib import Path

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..batch import build_files, summary_row
from ..casts._atomic import atomic_write
from ..casts.write import FORMATS
from ..io import load_profile
from ..io.loading import CAST_SUFFIXES
from ..io.options import check_build_options, check_replacement_salinity, check_scheduler
from ._common import parse_length, print_json, print_table
from ._options import add_building_options, in_option_terms, option_name, reading_options

NAME = "build"
HELP = "build sound-speed profiles from cast files"
EXAMPLE = """example:
  seaprofile build demo_casts/*.csv --out profiles --format netcdf
  seaprofile build demo_casts/shelf_summer_ctd.csv --latitude 54.2 --extend-to 130 \\
      --columns "temperature=temperature [degC],pressure=pressure [dbar]"
  seaprofile build demo_casts/xbt_drop.csv --extend-to bottom \\
      --reference demo_casts/deep_ocean_ctd.csv --out extended
  seaprofile build demo_casts --out batch --summary batch_summary.csv --quiet"""

# the per-cast numbers, in the order of the table and of the --summary file
_CAST_COLUMNS = [
    "instrument",
    "depth_range_m",
    "samples",
    "flags",
    "surface_speed",
    "mixed_layer_m",
    "sonic_layer_m",
]
COLUMNS = ["file", "cast", *_CAST_COLUMNS, "status", "assumed"]


def add_arguments(p):
    p.add_argument(
        "casts",
        nargs="+",
        metavar="CAST",
        help="cast files (text, netCDF or JSON), or directories: a directory stands "
        "for its files ending in " + ", ".join(CAST_SUFFIXES) + ", in name order "
        "(not its subdirectories)",
    )
    add_building_options(p)
    p.add_argument(
        "--extend-to",
        help="sea-floor depth, m, to extend every profile to (flagged "
        "estimated); 'bottom' uses each file's bottom_depth metadata",
    )
    p.add_argument("--reference", help="a deeper profile or cast file that shapes the extension")
    p.add_argument("--out", help="output directory (default: print the summary only)")
    p.add_argument(
        "--format",
        default="netcdf",
        choices=sorted(FORMATS),
        help="output format (default netcdf: classic netCDF-3, .nc; netcdf4: netCDF-4, .nc4)",
    )
    p.add_argument(
        "--overwrite",
        action="store_true",
        help="replace existing output files (never an input file)",
    )
    p.add_argument(
        "--scheduler",
        help="run through dask: threads, processes or the address of "
        "a running dask.distributed scheduler (tcp://host:8786)",
    )
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    p.add_argument(
        "--summary",
        metavar="FILE",
        help="also write every cast's status (built, or failed with its message) and "
        "layer values to FILE (.csv or .json)",
    )
    p.add_argument(
        "--quiet",
        action="store_true",
        help="no progress bar and no first-run notice on stderr (a bar is only ever "
        "shown when stderr is a terminal)",
    )


def run(args):
    # every option is checked before any file is read
    read = reading_options(args)
    extend = _extend(args.extend_to)
    check_build_options(
        bin_size=args.bin, extend_to=extend, equation=args.equation, depth_method=args.depth_method
    )
    check_scheduler(args.scheduler)
    summary_path = _summary_target(args.summary, args.overwrite)
    check_replacement_salinity(args.replace_salinity, args.replace_salinity_where)
    reference = load_profile(args.reference) if args.reference else None
    results = build_files(
        args.casts,
        out_dir=args.out,
        format=args.format,
        overwrite=args.overwrite,
        equation=args.equation,
        bin_size=args.bin,
        depth_method=args.depth_method,
        extend_to=extend,
        scheduler=args.scheduler,
        reference=reference,
        max_gap=_max_gap(args.max_gap),
        replacement_salinity=args.replace_salinity,
        replace_salinity=args.replace_salinity_where,
        protect=[args.reference] if args.reference else (),
        progress=not args.quiet,
        keep_casts=False,  # the command reports from the profiles: no raw casts kept
        **read,
    )
    failed = [r for r in results if not r.ok]
    for r in failed:
        print(f"seaprofile build: error: {error_line(r)}", file=sys.stderr)
    rows = [summary_row(r) for r in results]
    if summary_path is not None:
        write_summary(results, summary_path, overwrite=args.overwrite)
    if args.json:
        print_json(
            {
                "casts": rows,
                "written": [w for r in results for w in r.written],
                "failed": len(failed),
                "caution": CAUTION,
            }
        )
    else:
        print_table(rows, COLUMNS)
        print(
            f"{len(results) - len(failed)} built, {len(failed)} failed; speeds in m/s, depths in m"
            "; what each profile assumes is written in full in its file (attribute "
            "'assumptions') and in --json"
        )
        print(f"Caution: {CAUTION}")
    return 2 if failed else 0


SUMMARY_COLUMNS = ["file", "cast", "status", "message", *_CAST_COLUMNS, "assumptions", "written"]


def summary_records(results):
    """One plain dict per result: ``status`` "built" or "failed" (with ``message``)."""
    out = []
    for r in results:
        row = summary_row(r)
        rec = {k: row.get(k) for k in SUMMARY_COLUMNS}
        rec["status"] = "built" if r.ok else "failed"
        rec["message"] = error_line(r) if not r.ok else (row.get("status") or "ok")
        rec["written"] = " ".join(r.written)
        out.append(rec)
    return out


def _summary_target(text, overwrite):
    """The --summary path, checked before any cast is read (suffix, existing file)."""
    if text is None:
        return None
    path = Path(text)
    if path.suffix.lower() not in (".csv", ".json"):
        raise SeaprofileError(f"--summary: expected a .csv or .json file name, got {text!r}")
    if path.exists() and not overwrite:
        raise SeaprofileError(f"--summary: {text} exists; pass --overwrite to replace it")
    if not path.parent.is_dir():
        raise SeaprofileError(f"--summary: directory {path.parent} does not exist")
    return path


def write_summary(results, path, *, overwrite=False):
    """Write :func:`summary_records` of ``results`` to ``path`` (.csv or .json), atomically."""
    records = summary_records(results)
    path = Path(path)

    def fill(tmp):
        with open(tmp, "w", newline="", encoding="utf-8") as fh:
            if path.suffix.lower() == ".json":
                json.dump({"casts": records, "caution": CAUTION}, fh, indent=1, default=_plain)
                fh.write("\n")
            else:
                w = csv.DictWriter(fh, fieldnames=SUMMARY_COLUMNS)
                w.writeheader()
                for rec in records:
                    w.writerow({k: "" if v is None else _plain(v) for k, v in rec.items()})

    atomic_write(path, overwrite, fill)
    return path


def _plain(value):
    if isinstance(value, (np.floating, np.integer)):
        return value.item()
    return value


def error_line(result):
    """A failed result's error, naming the command-line option when it was about one."""
    if result.error_argument is not None:
        return f"{result.path}: {option_name(result.error_argument)}: {result.error_reason}"
    return in_option_terms(result.error)


def _max_gap(text):
    t = str(text).strip().lower()
    if t == "auto":
        return "auto"
    if t == "all":
        return None
    value = parse_length(text, "--max-gap")
    if value < 0:
        raise SeaprofileError(f"--max-gap must be 'auto', 'all' or a depth >= 0 m, got {text!r}")
    return value


def _extend(text):
    if text is None:
        return None
    if text.strip().lower() == "bottom":
        return "bottom"
    return parse_length(text, "--extend-to")
