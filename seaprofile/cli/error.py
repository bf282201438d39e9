"""Depth error and uncertainty by beam angle, against an IHO S-44 order's budget.

PROFILE is the profile the soundings are processed with (a built profile or a raw cast).
With --against TRUE_PROFILE: the depth and across-track error of each beam angle when the
water the beams crossed is that profile's instead (flat seafloor at --water-depth), and
one plain line saying how far out PROFILE still holds. With --sigma-sound-speed: the
depth uncertainty caused by a sound-speed offset of that size (1 sigma, shown at 95 %).
The TVU budget of the order at the water depth is printed beside each angle.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import check_figure_path, load_profile, save_figure
from ..survey import cast_advice, depth_uncertainty, profile_error, tvu
from ..survey.budget import S44_ORDERS
from ._common import parse_length, print_json, print_table
from ._options import add_reading_options, reading_options
from .soundings import profile_nodes

NAME = "error"
HELP = "depth error and uncertainty by beam angle against an S-44 budget"
EXAMPLE = """example:
  seaprofile error demo_casts/shelf_summer_ctd.csv --against demo_casts/shelf_summer_late_ctd.csv \\
      --water-depth 116 --transducer-depth 4.5 --order 1a --plot error.png
  seaprofile error demo_casts/shelf_winter_ctd.csv --water-depth 140 --transducer-depth 4 \\
      --sigma-sound-speed 0.5 --json"""


def add_arguments(p):
    p.add_argument("profile", metavar="PROFILE", help="profile the soundings are processed with")
    p.add_argument("--against", metavar="TRUE_PROFILE", help="profile of the water crossed")
    p.add_argument("--water-depth", required=True, help="flat seafloor depth, m")
    p.add_argument("--transducer-depth", default="0", help="transducer depth, m (default 0)")
    p.add_argument(
        "--order",
        default="1a",
        choices=sorted(S44_ORDERS),
        help="IHO S-44 order of the budget (default 1a)",
    )
    p.add_argument(
        "--fraction",
        type=float,
        default=0.5,
        help="share of the TVU allowed for the sound-speed error (default 0.5; common "
        "practice, no source)",
    )
    p.add_argument(
        "--max-angle", type=float, default=75.0, help="widest beam angle, degrees (default 75)"
    )
    p.add_argument(
        "--sigma-sound-speed",
        type=float,
        help="1-sigma sound-speed offset of the profile, m/s (adds the uncertainty column)",
    )
    p.add_argument("--plot", metavar="FIGURE", help="write the figure (PNG, PDF or SVG)")
    p.add_argument("--overwrite", action="store_true", help="replace an existing figure")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    add_reading_options(p)


def run(args):
    water = parse_length(args.water_depth, "--water-depth")
    z0 = parse_length(args.transducer_depth, "--transducer-depth")
    if not 0 <= z0 < water:
        raise SeaprofileError("--transducer-depth must be at or below 0 and above --water-depth")
    if not (0 < args.max_angle < 90):
        raise SeaprofileError(f"--max-angle must be in (0, 90) degrees, got {args.max_angle}")
    if args.against is None and args.sigma_sound_speed is None:
        raise SeaprofileError("give --against TRUE_PROFILE, --sigma-sound-speed, or both")
    if args.sigma_sound_speed is not None and not args.sigma_sound_speed > 0:
        raise SeaprofileError("--sigma-sound-speed must be positive (m/s)")
    read = reading_options(args)
    inputs = [args.profile] + ([args.against] if args.against else [])
    plot = check_figure_path(args.plot, overwrite=args.overwrite, inputs=inputs, argument="--plot")
    z, c = profile_nodes(load_profile(args.profile, **read))
    angles = np.arange(0.0, np.floor(args.max_angle) + 1.0, 1.0)
    budget = float(tvu(water, args.order))
    result = {"beam_angle": angles}
    advice = None
    if args.against:
        tz, tc = profile_nodes(load_profile(args.against, **read))
        errors = profile_error(
            z, c, tz, tc, water_depth=water, transducer_depth=z0, beam_angles=angles
        )
        result["depth_error"] = errors["depth_error_combined"].values
        result["across_error"] = errors["across_error_combined"].values
        advice = cast_advice(errors, order=args.order, fraction=args.fraction)
    if args.sigma_sound_speed is not None:
        u = depth_uncertainty(
            depth=z,
            sound_speed=c,
            water_depth=water,
            transducer_depth=z0,
            beam_angles=angles,
            sigma_sound_speed=args.sigma_sound_speed,
            order=args.order,
            samples=500,
        )
        result["uncertainty_95"] = u["expanded_uncertainty"].values
    rows = [
        {k: float(v[i]) for k, v in result.items()} | {"tvu": budget} for i in range(angles.size)
    ]
    if plot is not None:
        from ..plots.beam_error import plot_beam_error

        save_figure(plot_beam_error(result, budget, args.fraction, args.order, water), plot)
    if args.json:
        print_json(
            {
                "profile": args.profile,
                "against": args.against,
                "water_depth_m": water,
                "transducer_depth_m": z0,
                "order": args.order,
                "tvu_m": budget,
                "units": {"beam_angle": "degree", "errors and uncertainty": "m"},
                "rows": rows,
                "advice": advice,
                "caution": CAUTION,
            }
        )
        return 0
    print_table(rows[::5] if len(rows) > 20 else rows, list(rows[0]))
    print("angles in degrees from vertical; errors (processed minus true), uncertainty at 95 %")
    print(f"and TVU (IHO S-44 Order {args.order}, 95 %) in m; every 5th angle shown")
    if advice:
        print(advice)
    if plot is not None:
        print(f"figure: {plot}")
    print(f"Caution: {CAUTION}")
    return 0
