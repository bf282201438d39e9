"""Draw the figure of one sound-speed profile: temperature, salinity and sound speed.

PROFILE is a profile written by seaprofile (netCDF, CSV or JSON) or a raw cast file (built
on the fly with the default settings; its samples are drawn as light dots behind the
bins). A profile with sound speed only, or a planning profile of a few nodes, gets one
panel. Layers (mixed and sonic layer, channel axis, critical depth) are marked; flagged
bins are marked with one symbol per quality flag; the part below the deepest measurement
is dashed. The figure type follows the suffix of --out: .png, .pdf or .svg. Depths are
metres unless a 'km' suffix is given.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import check_figure_path, profile_bottom, read_as_profiles, save_figure
from ._common import parse_length, print_json
from ._options import add_reading_options, reading_options

NAME = "plot"
HELP = "draw the profile figure of a profile or cast file (PNG, PDF or SVG)"
EXAMPLE = """example:
  seaprofile plot demo_casts/deep_ocean_ctd.csv --out deep_profile.png
  seaprofile plot demo_casts/messy/messy_shelf_ctd.csv --upper-panel none --out messy_profile.svg"""


def add_arguments(p):
    p.add_argument("profile", metavar="PROFILE", help="profile or raw cast file")
    p.add_argument(
        "--out",
        required=True,
        metavar="FIGURE",
        help="figure to write; the type follows the suffix (.png, .pdf or .svg)",
    )
    p.add_argument(
        "--name",
        help="the profile to draw when PROFILE holds several (its cast name or profile id)",
    )
    p.add_argument(
        "--bottom-depth",
        help="sea-floor depth, m, drawn and used for the depth "
        "excess (default: the one the file carries, if any)",
    )
    p.add_argument(
        "--upper-panel",
        default="auto",
        metavar="DEPTH",
        help="depth, m, of the extra panel of the upper ocean, above the deepest "
        "level of the profile, or 'none' (default auto: 300 m for profiles "
        "deeper than 1500 m)",
    )
    add_reading_options(p)
    p.add_argument(
        "--dpi",
        type=float,
        default=150,
        help="resolution of a PNG, dots per inch (default %(default)s)",
    )
    p.add_argument("--overwrite", action="store_true", help="replace an existing figure")
    p.add_argument("--json", action="store_true", help="print what was drawn as JSON")


def _upper_panel(text):
    t = str(text).strip().lower()
    if t == "auto":
        return None
    if t in ("none", "no", "off", "0"):
        return False
    depth = parse_length(text, "--upper-panel")
    if depth <= 0:
        raise SeaprofileError(f"--upper-panel must be a positive depth or 'none', got {text!r}")
    return depth


def _check_upper_panel(zoom, text, profile):
    """Refuse an upper-ocean panel that reaches below the deepest level of the profile."""
    if not zoom:
        return
    deepest = float(np.nanmax(profile["depth"].values))
    if zoom > deepest:
        raise SeaprofileError(
            f"--upper-panel: {text!r} reaches below the deepest level of "
            f"the profile ({deepest:g} m); give a depth in (0, {deepest:g}] "
            "m or 'none'"
        )


def _pick(profiles, name, path):
    """The one profile to draw (by --name when the file holds several)."""

    def names(p):
        out = {str(p.attrs.get("cast_name", ""))}
        if "profile_id" in p.coords:
            out.add(str(p["profile_id"].values))
        return out - {""}

    if name is not None:
        hits = [p for p in profiles if name in names(p)]
        if not hits:
            have = ", ".join(sorted(set().union(*(names(p) for p in profiles))))
            raise SeaprofileError(f"--name: no profile {name!r} in {path}; it holds {have}")
        return hits[0]
    if len(profiles) != 1:
        have = ", ".join(sorted(set().union(*(names(p) for p in profiles)))[:8])
        raise SeaprofileError(
            f"PROFILE: {path} holds {len(profiles)} profiles ({have}); pick one with --name"
        )
    return profiles[0]


def run(args):
    # refused before any reading: a bad suffix, an existing file, the input itself
    out = check_figure_path(
        args.out, overwrite=args.overwrite, inputs=[args.profile], argument="--out"
    )
    zoom = _upper_panel(args.upper_panel)
    bottom = parse_length(args.bottom_depth, "--bottom-depth") if args.bottom_depth else None
    if bottom is not None and bottom <= 0:
        raise SeaprofileError(
            f"--bottom-depth must be below the surface (> 0 m), got {args.bottom_depth!r}"
        )
    if args.dpi <= 0 or args.dpi > 1200:
        raise SeaprofileError(f"--dpi must lie in 1..1200, got {args.dpi:g}")
    options = reading_options(args)

    from ..plots.profile import plot_profile

    profiles, kind = read_as_profiles(args.profile, **options)
    profile = _pick(profiles, args.name, args.profile)
    cast = None
    if kind == "cast":  # the raw samples, drawn behind the bins
        from ..casts.read import read_casts
        from ..io.loading import READ_OPTIONS

        casts = read_casts(args.profile, **{k: v for k, v in options.items() if k in READ_OPTIONS})
        cast = casts[profiles.index(profile)] if len(casts) == len(profiles) else None
    _check_upper_panel(zoom, args.upper_panel, profile)
    if bottom is None:
        bottom = profile_bottom(profile)
    fig = plot_profile(profile, cast=cast, zoom=zoom, bottom_depth=bottom)
    save_figure(fig, out, overwrite=args.overwrite, dpi=args.dpi)
    what = "built profile" if kind == "profile" else "raw cast, built with the default settings"
    name = profile.attrs.get("cast_name") or (
        str(profile["profile_id"].values) if "profile_id" in profile.coords else ""
    )
    if args.json:
        print_json(
            {
                "input": f"{what} from {args.profile}",
                "profile": name,
                "bottom_depth_m": bottom,
                "panels": len(fig.axes),
                "written": [str(out)],
                "caution": CAUTION,
            }
        )
        return 0
    print(f"input: {what} from {args.profile}")
    print(
        f"profile {name}: {len(fig.axes)} panel{'s' if len(fig.axes) != 1 else ''}"
        + (f", sea floor at {bottom:g} m" if bottom is not None else "")
    )
    print(f"wrote {out}")
    print(f"Caution: {CAUTION}")
    return 0
