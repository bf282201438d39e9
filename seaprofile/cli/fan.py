"""Trace a fan of rays from one source through a sound-speed profile or a section.

PROFILE_OR_SECTION is a built profile (netCDF/CSV/JSON written by seaprofile), a raw cast
file (built into a profile with the default settings), or several casts forming a section
(a directory, several files, or one file holding several casts; their ranges along the
track come from their positions). Prints how many rays were traced, how they ended and how
often they were reflected; writes the rays (netCDF) and a figure if asked. Depths and
ranges are metres unless a 'km' suffix is given; angles are degrees from horizontal,
positive toward the bottom.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import (
    check_memory,
    fan_bytes,
    save_figure,
    write_netcdf,
)
from ._common import parse_length, print_json, print_table
from ._environment import add_bottom_options, prepare
from ._options import (
    add_angle_options,
    add_quiet_option,
    add_ray_input_options,
    optional_length,
    parse_angles,
)

NAME = "fan"
HELP = "trace a fan of rays from one source; summary, rays file and figure"
EXAMPLE = """example:
  seaprofile fan demo_casts/deep_ocean_ctd.csv --source-depth 50 --angles -15 15 --rays 61 \\
      --range 40km --bottom-depth 4000 --plot fan.png --out rays.nc
  seaprofile fan demo_casts/section --source-depth 30 --range 25km --shade reflections --plot section.png"""

DEFAULT_ANGLES = ("-15", "15")
DEFAULT_RAYS = 61
DEFAULT_RANGE = "40km"
DEFAULT_MAX_REFLECTIONS = 100

_END_WORDS = {
    "range_reached": "reached the full range",
    "absorbed": "stopped: too many reflections",
    "left_domain": "left the water (turned back or through a boundary)",
    "step_limit_reached": "stopped by the step limit",
}


def add_arguments(p):
    add_ray_input_options(
        p,
        "PROFILE_OR_SECTION",
        "profile or cast file(s), or a directory of casts forming a section",
    )
    add_angle_options(p, default=DEFAULT_ANGLES, rays=DEFAULT_RAYS)
    p.add_argument(
        "--range",
        default=DEFAULT_RANGE,
        dest="max_range",
        help=f"range to trace to, m or km (default {DEFAULT_RANGE})",
    )
    add_bottom_options(p)
    p.add_argument(
        "--range-step",
        help="sample each ray every STEP (m or km) instead of keeping "
        "every layer crossing and reflection (smaller files for big fans)",
    )
    p.add_argument(
        "--max-reflections",
        type=int,
        default=DEFAULT_MAX_REFLECTIONS,
        help="stop a ray after this many surface + bottom reflections "
        f"(default {DEFAULT_MAX_REFLECTIONS})",
    )
    p.add_argument(
        "--shade",
        choices=["launch-angle", "reflections"],
        default="launch-angle",
        help="colour the rays of the figure by launch angle or by reflections",
    )
    p.add_argument(
        "--plot", metavar="FIGURE", help="write the ray figure (PNG, PDF or SVG by suffix)"
    )
    p.add_argument("--out", metavar="RAYS_NC", help="write the rays as netCDF")
    p.add_argument("--overwrite", action="store_true", help="replace existing output files")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    add_quiet_option(p, "a large fan")


def run(args):
    angles = parse_angles(args.angles, args.rays)
    max_range = parse_length(args.max_range, "--range")
    if max_range <= 0:
        raise SeaprofileError(f"--range must be positive, got {args.max_range!r}")
    range_step = optional_length(args.range_step, "--range-step")
    if range_step is not None:
        if range_step <= 0:
            raise SeaprofileError(f"--range-step must be positive, got {args.range_step!r}")
        check_memory(
            "--range-step",
            fan_bytes(angles.size, max_range, range_step),
            f"{angles.size} rays sampled every {range_step:g} m to {max_range:g} m",
        )
    if args.max_reflections < 0:
        raise SeaprofileError(f"--max-reflections must be >= 0, got {args.max_reflections}")
    prep = prepare(args)
    env, loaded, source_depth = prep.environment, prep.loaded, prep.source_depth
    plot_path, out_path = prep.plot_path, prep.out_path

    from ..propagation.rays import trace_fan

    fan = trace_fan(
        env,
        source_depth,
        angles,
        max_range,
        range_step=range_step,
        max_bounces=args.max_reflections,
        progress=not args.quiet,
    )
    fan.attrs["input"] = loaded.description

    written = []
    if out_path is not None:
        write_netcdf(fan, out_path, overwrite=args.overwrite)
        written.append(str(out_path))
    if plot_path is not None:
        from ..plots.rays import fan_for_drawing, plot_fan

        # drawn from fine samples along every arc (the same rays; the file keeps what was
        # asked for), so turning points are round rather than polygonal
        fig = plot_fan(
            fan_for_drawing(fan, env),
            env,
            shade=args.shade.replace("-", "_"),
            profile=loaded.profile,
        )
        save_figure(fig, plot_path, overwrite=args.overwrite)
        written.append(str(plot_path))

    summary = summarise(fan, env, loaded.description)
    summary["written"] = written
    if args.json:
        summary["caution"] = CAUTION
        print_json(summary)
    else:
        _print_summary(summary)
    return 0


def summarise(fan, env, description=""):
    """The command's summary of a RayFan as a plain dict (JSON-ready)."""
    codes = np.asarray(fan["end_reason"].values).astype(int)
    meanings = str(fan["end_reason"].attrs.get("flag_meanings", "")).split()
    values = [int(v) for v in np.atleast_1d(fan["end_reason"].attrs.get("flag_values", []))]
    names = dict(zip(values, meanings))
    ended = {}
    for code in np.unique(codes):
        name = names.get(int(code), f"code_{int(code)}")
        ended[name] = int(np.sum(codes == code))
    s = np.asarray(fan["surface_reflections"].values)
    b = np.asarray(fan["bottom_reflections"].values)
    tp = np.asarray(fan["turning_points"].values)
    launch = np.asarray(fan["launch_angle"].values, dtype=float)
    return {
        "input": description,
        "environment": {
            "range_dependent": bool(env.is_range_dependent),
            "casts": 1 if env.section is None else int(env.section.ranges.size),
            "bottom_depth_at_source_m": float(env.bottom_at(0.0)),
            "bottom": "flat" if env.bathymetry.is_flat else "bathymetry",
        },
        "source_depth_m": float(fan.attrs.get("source_depth", np.nan)),
        "max_range_m": float(fan.attrs.get("max_range", np.nan)),
        "rays": int(fan.sizes["ray"]),
        "launch_angles_deg": [float(launch.min()), float(launch.max())],
        "solver": str(fan.attrs.get("solver", "")),
        "ended": ended,
        "reflections": {
            "no_reflection": int(np.sum((s == 0) & (b == 0))),
            "surface_only": int(np.sum((s > 0) & (b == 0))),
            "reach_bottom": int(np.sum(b > 0)),
            "max_surface_reflections": int(s.max()) if s.size else 0,
            "max_bottom_reflections": int(b.max()) if b.size else 0,
        },
        "rays_with_turning_points": int(np.sum(tp > 0)),
    }


def _print_summary(sm):
    env = sm["environment"]
    print(f"input: {sm['input']}")
    kind = f"section of {env['casts']} casts" if env["casts"] > 1 else "one profile"
    print(
        f"environment: {kind}, bottom {env['bottom']} ({env['bottom_depth_at_source_m']:g} m "
        f"at the source), solver {sm['solver']}"
    )
    lo, hi = sm["launch_angles_deg"]
    print(
        f"rays traced: {sm['rays']} from a source at {sm['source_depth_m']:g} m, launch angles "
        f"{lo:g} to {hi:g} deg, out to {sm['max_range_m'] / 1000:g} km"
    )
    print()
    rows = [{"how the rays ended": _END_WORDS.get(k, k), "rays": v} for k, v in sm["ended"].items()]
    print_table(rows, ["how the rays ended", "rays"])
    print()
    r = sm["reflections"]
    rows = [
        {"reflections": "none (refracted only)", "rays": r["no_reflection"]},
        {"reflections": "surface only", "rays": r["surface_only"]},
        {"reflections": "reach the bottom", "rays": r["reach_bottom"]},
    ]
    print_table(rows, ["reflections", "rays"])
    print(
        f"most reflections on one ray: {r['max_surface_reflections']} at the surface, "
        f"{r['max_bottom_reflections']} at the bottom; "
        f"{sm['rays_with_turning_points']} rays turn by refraction"
    )
    for w in sm["written"]:
        print(f"wrote {w}")
    print(f"Caution: {CAUTION}")
