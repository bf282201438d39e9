"""Diagnostics of one sound-speed profile: layers, ducts, channel, critical depth.

PROFILE may be a profile written by seaprofile or a raw cast file (built on the fly with
default settings; --columns, --units, --latitude and --longitude say how to read it).
"""

from __future__ import annotations

from .._validate import SeaprofileError
from ..io import load_profile, profile_bottom
from ..layers import describe
from ..plots._numbers import cutoff_text
from ._common import parse_length, print_json
from ._options import add_reading_options, optional_length, reading_options

NAME = "inspect"
HELP = "diagnostics of one profile (mixed/sonic layer, duct, channel, critical depth)"
EXAMPLE = """example:
  seaprofile inspect demo_casts/deep_ocean_ctd.csv --bottom-depth 4800 --source-depth 60
  seaprofile build demo_casts/deep_ocean_ctd.csv --out profiles --extend-to bottom --overwrite
  seaprofile inspect profiles/VS31-D01.nc --json"""


def add_arguments(p):
    p.add_argument("profile", metavar="PROFILE", help="profile or raw cast file")
    p.add_argument("--bottom-depth", help="sea-floor depth, m (depth excess, harmonic mean)")
    p.add_argument("--source-depth", help="source depth, m (its conjugate depth)")
    p.add_argument("--transducer-depth", default="0", help="upper depth of the harmonic mean, m")
    add_reading_options(p)
    p.add_argument("--json", action="store_true", help="print the diagnostics as JSON")


def run(args):
    bottom = optional_length(args.bottom_depth, "--bottom-depth")
    source = optional_length(args.source_depth, "--source-depth")
    transducer = parse_length(args.transducer_depth, "--transducer-depth")
    if bottom is not None and bottom <= 0:
        raise SeaprofileError(
            f"--bottom-depth must be below the surface (> 0 m), got {args.bottom_depth!r}"
        )
    for value, text, option in (
        (source, args.source_depth, "--source-depth"),
        (transducer, args.transducer_depth, "--transducer-depth"),
    ):
        if value is not None and value < 0:
            raise SeaprofileError(
                f"{option} must be at or below the surface (>= 0 m), got {text!r}"
            )
    profile = load_profile(args.profile, **reading_options(args))
    floor = bottom if bottom is not None else profile_bottom(profile)
    if source is not None and floor is not None and source > floor:
        raise SeaprofileError(f"--source-depth {source:g} m lies below the bottom ({floor:g} m)")
    d = describe(profile, bottom_depth=bottom, source_depth=source, transducer_depth=transducer)
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
            text = cutoff_text(value) or "nan"  # the same text as the figure's
            unit += " (rule of thumb)"
        else:
            text = f"{value:.2f}" if isinstance(value, float) else str(value)
        print(f"  {d['long_names'][key]:<{width}}  {text:>10} {unit}")
    print(f"  {'surface duct':<{width}}  {'yes' if d['surface_duct'] else 'no':>10}")
    for note in d["notes"]:
        print(f"  note: {note}")
    print(f"caution: {d['caution']}")
    return 0
