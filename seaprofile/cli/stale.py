"""Which casts of a survey have gone stale against an IHO S-44 order's budget.

CASTS are the casts (or built profiles) of one survey: files, or a directory of them. They
are put in time order from their metadata; each cast is then judged against the next one
(the water the beams crossed by the time that later cast was taken): the widest beam
angle whose depth error stays within --fraction of the TVU at --water-depth. A cast whose
widest angle is narrower than --swath-angle was stale before the next cast was taken.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import expand_paths, read_as_profiles
from ..survey import profile_error, widest_angle
from ..survey.budget import S44_ORDERS
from ._common import parse_length, print_json, print_table
from ._options import add_reading_options, reading_options
from .soundings import profile_nodes

NAME = "stale"
HELP = "which casts of a survey are stale against an S-44 budget (time order)"
EXAMPLE = """example:
  seaprofile stale demo_casts/shelf_summer_ctd.csv demo_casts/shelf_summer_late_ctd.csv \\
      --water-depth 116 --transducer-depth 4.5 --swath-angle 65 --order special"""


def add_arguments(p):
    p.add_argument("casts", nargs="+", metavar="CASTS", help="cast files or a directory")
    p.add_argument("--water-depth", required=True, help="flat seafloor depth, m")
    p.add_argument("--transducer-depth", default="0", help="transducer depth, m (default 0)")
    p.add_argument(
        "--swath-angle",
        type=float,
        default=65.0,
        help="outermost beam angle in use, degrees from vertical (default 65)",
    )
    p.add_argument(
        "--order", default="1a", choices=sorted(S44_ORDERS), help="IHO S-44 order (default 1a)"
    )
    p.add_argument(
        "--fraction",
        type=float,
        default=0.5,
        help="share of the TVU allowed (default 0.5; common practice, no source)",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    add_reading_options(p)


def _name(profile, i):
    name = str(profile.attrs.get("cast_name") or "")
    return name or f"cast {i + 1}"


def run(args):
    water = parse_length(args.water_depth, "--water-depth")
    z0 = parse_length(args.transducer_depth, "--transducer-depth")
    if not 0 <= z0 < water:
        raise SeaprofileError("--transducer-depth must be at or below 0 and above --water-depth")
    if not (0 < args.swath_angle < 90):
        raise SeaprofileError(f"--swath-angle must be in (0, 90) degrees, got {args.swath_angle}")
    read = reading_options(args)
    profiles = [p for f in expand_paths(args.casts) for p in read_as_profiles(f, **read)[0]]
    if len(profiles) < 2:
        raise SeaprofileError("CASTS: need at least two casts to compare")
    times = [np.datetime64(p["time"].values) if "time" in p.coords else None for p in profiles]
    if any(t is None or np.isnat(t) for t in times):
        missing = [
            _name(p, i) for i, (p, t) in enumerate(zip(profiles, times)) if t is None or np.isnat(t)
        ]
        raise SeaprofileError(f"CASTS: no time in the metadata of {', '.join(missing)}")
    order = sorted(range(len(profiles)), key=lambda i: times[i])
    angles = np.arange(0.0, np.floor(args.swath_angle) + 1.0, 1.0)
    if angles[-1] < args.swath_angle:
        angles = np.append(angles, args.swath_angle)
    rows = []
    for k, i in enumerate(order):
        row = {"cast": _name(profiles[i], i), "time": str(times[i])[:16] + "Z"}
        if k + 1 < len(order):
            j = order[k + 1]
            z, c = profile_nodes(profiles[i])
            tz, tc = profile_nodes(profiles[j])
            errors = profile_error(
                z, c, tz, tc, water_depth=water, transducer_depth=z0, beam_angles=angles
            )
            widest = widest_angle(errors, order=args.order, fraction=args.fraction)
            worst = float(np.nanmax(np.abs(errors["depth_error_combined"].values)))
            stale = not (widest >= args.swath_angle)
            row |= {
                "next_cast": _name(profiles[j], j),
                "widest_angle": widest,
                "largest_error": worst,
                "stale": "yes" if stale else "no",
            }
        else:
            row |= {"next_cast": "", "widest_angle": None, "largest_error": None, "stale": "-"}
        rows.append(row)
    if args.json:
        print_json(
            {
                "order": args.order,
                "fraction": args.fraction,
                "water_depth_m": water,
                "swath_angle_deg": args.swath_angle,
                "units": {"widest_angle": "degree", "largest_error": "m"},
                "casts": rows,
                "caution": CAUTION,
            }
        )
        return 0
    print_table(rows, ["cast", "time", "next_cast", "widest_angle", "largest_error", "stale"])
    print(
        f"each cast judged against the next in time: widest beam angle (degrees) whose depth "
        f"error stays within {args.fraction * 100:g} % of the Order {args.order} TVU at "
        f"{water:g} m; stale = narrower than the {args.swath_angle:g} degree swath"
    )
    print(f"Caution: {CAUTION}")
    return 0
