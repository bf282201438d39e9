"""Run the main job end to end on the bundled demo casts (synthetic data).

Builds every demo cast into a sound-speed profile (quality-controlled, extended to the
bottom, every step recorded), writes netCDF, CSV and plain speed tables, draws profile
figures, ray fans, and transmission-loss and coverage maps of two casts, and prints the
summary. One demo file is broken on purpose: it is
reported and the others carry on. The demo rewrites its own output folder on every run.
"""

from __future__ import annotations

import sys

from .._cf import CAUTION
from ..demo import run_demo
from ..seawater.soundspeed import EQUATIONS
from ._common import print_json, print_table
from .build import COLUMNS

NAME = "demo"
HELP = "run the main job on the bundled synthetic demo casts"
EXAMPLE = """example:
  seaprofile demo
  seaprofile demo --out demo_teos10 --equation teos10 --no-figures"""


def add_arguments(p):
    p.add_argument("--out", default="demo_output", help="output folder (default demo_output)")
    p.add_argument("--casts", help="folder of demo casts (default ./demo_casts)")
    p.add_argument(
        "--equation",
        default="chen_millero1977",
        choices=sorted(EQUATIONS),
        help="sound-speed equation (default chen_millero1977)",
    )
    p.add_argument("--no-figures", action="store_true", help="skip the figures")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")


def run(args):
    report = run_demo(
        args.out, casts_dir=args.casts, equation=args.equation, figures=not args.no_figures
    )
    if args.json:
        print_json(
            {
                "synthetic": True,
                "casts": report.rows,
                "written": report.written,
                "failures": report.failures,
                "survey": report.survey,
                "loss": report.loss,
                "caution": CAUTION,
            }
        )
        return 0
    print("seaprofile demo: synthetic casts of an invented survey (not real data)\n")
    print_table(report.rows, COLUMNS)
    print("\nspeeds in m/s, depths in m; flags = samples flagged per test")
    for failure in report.failures:
        print(f"reported (expected in the demo): {failure}", file=sys.stderr)
    for line in report.survey:
        print(line)
    for line in report.loss:
        print(line)
    print(f"\n{len(report.written)} files written under {args.out}/")
    print(f"Caution: {CAUTION}")
    return 0
