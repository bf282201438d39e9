"""Build sound-speed profiles from cast files: read, process, quality-control, write.

Every cast becomes a Profile with its processing steps and QC flags recorded. A file that
cannot be read is reported on stderr and the others are still processed; the exit status
is 1 when any file failed.
"""

from __future__ import annotations

import sys

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..batch import build_files, load_profile, summary_row
from ..casts.xbt import FALL_RATES
from ..casts.write import FORMATS
from ..seawater.depth import METHODS
from ..seawater.soundspeed import EQUATIONS
from ._common import parse_length, print_json, print_table

NAME = "build"
HELP = "build sound-speed profiles from cast files"
EXAMPLE = """example:
  seaprofile build demo_casts/*.csv --out profiles --format netcdf
  seaprofile build cast.txt --columns temperature=T_deg,pressure=P --latitude 54.2 --extend-to 4800"""

COLUMNS = ["file", "cast", "instrument", "depth_range_m", "samples", "flags",
           "surface_speed", "mixed_layer_m", "sonic_layer_m", "status"]


def add_cast_options(p):
    """Options shared by every command that reads raw casts."""
    p.add_argument("--columns", help="explicit column mapping, e.g. temperature=T_deg,pressure=P")
    p.add_argument("--units", help="unit overrides, e.g. pressure=MPa,temperature=degC")
    p.add_argument("--instrument", choices=["ctd", "xbt", "svp"], help="instrument kind (default: from the file)")
    p.add_argument("--latitude", type=float, help="latitude, degrees north (overrides the file)")
    p.add_argument("--longitude", type=float, help="longitude, degrees east (overrides the file)")
    p.add_argument("--equation", default="chen_millero1977", choices=sorted(EQUATIONS),
                   help="sound-speed equation (default chen_millero1977)")
    p.add_argument("--depth-method", default="unesco1983", choices=sorted(METHODS),
                   help="pressure-to-depth method (default unesco1983)")
    p.add_argument("--bin", type=float, default=1.0, help="bin size, m (default 1)")
    p.add_argument("--salinity", type=float,
                   help="salinity assumed for casts without one (expendable probes: default 35)")
    p.add_argument("--fall-rate", default="hanawa1995_t7",
                   help="expendable-probe fall rate: " + ", ".join(sorted(FALL_RATES))
                   + " or A,B for depth = A t - B t^2 (m, s); default hanawa1995_t7")


def add_arguments(p):
    p.add_argument("casts", nargs="+", metavar="CAST", help="cast files (text, netCDF or JSON)")
    add_cast_options(p)
    p.add_argument("--extend-to", help="sea-floor depth, m, to extend every profile to (flagged "
                   "estimated); 'bottom' uses each file's bottom_depth metadata")
    p.add_argument("--reference", help="a deeper profile or cast file that shapes the extension")
    p.add_argument("--out", help="output directory (default: print the summary only)")
    p.add_argument("--format", default="netcdf", choices=sorted(FORMATS), help="output format (default netcdf)")
    p.add_argument("--overwrite", action="store_true", help="replace existing output files")
    p.add_argument("--scheduler", help="run through dask: threads, processes or a scheduler address")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")


def run(args):
    results = build_files(
        args.casts, out_dir=args.out, format=args.format, overwrite=args.overwrite,
        columns=args.columns, units=args.units, instrument=args.instrument,
        latitude=args.latitude, longitude=args.longitude, equation=args.equation,
        bin_size=args.bin, depth_method=args.depth_method,
        extend_to=_extend(args.extend_to),
        scheduler=args.scheduler, salinity=args.salinity,
        fall_rate=parse_fall_rate(args.fall_rate),
        reference=load_profile(args.reference) if args.reference else None,
    )
    failed = [r for r in results if not r.ok]
    for r in failed:
        print(f"seaprofile build: error: {r.error}", file=sys.stderr)
    rows = [summary_row(r) for r in results]
    if args.json:
        print_json({"casts": rows, "written": [w for r in results for w in r.written],
                    "failed": len(failed), "caution": CAUTION})
    else:
        print_table(rows, COLUMNS)
        print(f"{len(results) - len(failed)} built, {len(failed)} failed; speeds in m/s, depths in m")
        print(f"Caution: {CAUTION}")
    return 1 if failed else 0


def _extend(text):
    if text is None:
        return None
    if text.strip().lower() == "bottom":
        return "bottom"
    return parse_length(text, "--extend-to")


def parse_fall_rate(text):
    """A fall-rate name, or ``A,B`` (m/s, m/s^2) for depth = A t - B t^2."""
    if text in FALL_RATES:
        return text
    try:
        a, b = (float(x) for x in text.split(","))
    except ValueError:
        raise SeaprofileError(f"--fall-rate: expected one of {', '.join(sorted(FALL_RATES))} "
                              f"or A,B, got {text!r}") from None
    return (a, b)
