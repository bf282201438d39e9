"""Diagnostics of one sound-speed profile: layers, ducts, channel, critical depth.

PROFILE may be a profile written by seaprofile or a raw cast file (built on the fly with
default settings).
"""

from __future__ import annotations

from ..batch import load_profile
from ..layers import describe
from ._common import parse_length, print_json

NAME = "inspect"
HELP = "diagnostics of one profile (mixed/sonic layer, duct, channel, critical depth)"
EXAMPLE = """example:
  seaprofile inspect demo_casts/deep_ocean_ctd.csv --bottom-depth 4800 --source-depth 60
  seaprofile inspect profiles/deep.nc --json"""


def add_arguments(p):
    p.add_argument("profile", metavar="PROFILE", help="profile or raw cast file")
    p.add_argument("--bottom-depth", help="sea-floor depth, m (depth excess, harmonic mean)")
    p.add_argument("--source-depth", help="source depth, m (its conjugate depth)")
    p.add_argument("--transducer-depth", default="0", help="upper depth of the harmonic mean, m")
    p.add_argument("--latitude", type=float, help="latitude, degrees north, for a raw cast without one")
    p.add_argument("--json", action="store_true", help="print the diagnostics as JSON")


def run(args):
    options = {} if args.latitude is None else {"latitude": args.latitude}
    profile = load_profile(args.profile, **options)
    d = describe(
        profile,
        bottom_depth=parse_length(args.bottom_depth, "--bottom-depth") if args.bottom_depth else None,
        source_depth=parse_length(args.source_depth, "--source-depth") if args.source_depth else None,
        transducer_depth=parse_length(args.transducer_depth, "--transducer-depth"),
    )
    if args.json:
        print_json(d)
        return 0
    print(f"profile {d.get('cast_name') or args.profile}  (equation {d.get('equation')})")
    width = max(len(v) for v in d["long_names"].values())
    for key, unit in d["units"].items():
        value = d.get(key)
        if value is None:
            continue
        if key == "duct_cutoff_frequency" and isinstance(value, float):
            text = f"{float(f'{value:.2g}'):g}"  # a rule of thumb: two figures at most
            unit += " (rule of thumb)"
        else:
            text = f"{value:.2f}" if isinstance(value, float) else str(value)
        print(f"  {d['long_names'][key]:<{width}}  {text:>10} {unit}")
    print(f"  {'surface duct':<{width}}  {'yes' if d['surface_duct'] else 'no':>10}")
    for note in d["notes"]:
        print(f"  note: {note}")
    print(f"caution: {d['caution']}")
    return 0
