"""Find the eigenrays from a source to receivers: the arrivals at each receiver.

For every receiver (RANGE,DEPTH; plain numbers are metres, a 'km' suffix is accepted) the
table lists each ray joining source and receiver, in order of travel time: one-way travel
time (s), launch and arrival angle (degrees from horizontal, positive toward the bottom),
surface and bottom reflections, refracted turning points and the geometric spreading loss
(dB re 1 m; no absorption, no bottom loss). PROFILE is a built profile or a raw cast file
(built with the default settings); the bottom is flat.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import check_figure_path, expand_paths, load_environment, save_figure
from ._common import print_json, print_table
from ._options import (
    add_angle_options,
    add_ray_input_options,
    optional_length,
    parse_angles,
    parse_receiver,
    parse_source_depth,
    reading_options,
)

NAME = "paths"
HELP = "eigenrays and arrivals from a source to receivers"
EXAMPLE = """example:
  seaprofile paths demo_casts/deep_ocean_ctd.csv --source-depth 50 --receiver 12km,200 \\
      --receiver 20km,50 --bottom-depth 4000 --max-reflections 3 --plot arrivals.png
  seaprofile build demo_casts/deep_ocean_ctd.csv --out profiles --extend-to bottom --overwrite
  seaprofile paths profiles/VS31-D01.nc --source-depth 1000 --receiver 50km,800 --json"""

PATH_WORDS = ("refracted", "surface", "bottom", "surface+bottom")

#: angular spacing of the search fan when only --search-angles is given, degrees
SEARCH_SPACING = 0.05


def add_arguments(p):
    add_ray_input_options(p, "PROFILE", "built profile or raw cast file")
    p.add_argument(
        "--receiver",
        action="append",
        required=True,
        metavar="RANGE,DEPTH",
        help="receiver range and depth, m or km (e.g. 12km,200); repeat for more",
    )
    p.add_argument(
        "--bottom-depth",
        help="flat bottom depth, m (default: the profile's bottom "
        "depth if it carries one, else its deepest level)",
    )
    p.add_argument(
        "--max-reflections",
        type=int,
        default=3,
        help="largest number of surface + bottom reflections of a path (default 3)",
    )
    add_angle_options(
        p,
        prefix="search-",
        what="launch angles of the search fan (default: -89 "
        f"to 89 every {SEARCH_SPACING:g} deg; a denser fan finds paths of narrow "
        "ducts)",
    )
    p.add_argument(
        "--plot", metavar="FIGURE", help="write the arrivals chart (PNG, PDF or SVG by suffix)"
    )
    p.add_argument("--overwrite", action="store_true", help="replace an existing figure")
    p.add_argument("--json", action="store_true", help="print the arrivals as JSON")


def _search_angles(args):
    if args.search_angles is None:
        if args.search_rays is not None:
            raise SeaprofileError("--search-rays: give --search-angles LOW HIGH with it")
        return None
    count = args.search_rays
    if count is None:  # the default spacing over the span given
        low, high = (
            float(v)
            for v in parse_angles(args.search_angles, 2, "--search-angles", "--search-rays")[
                [0, -1]
            ]
        )
        count = int(round((high - low) / SEARCH_SPACING)) + 1
    return parse_angles(args.search_angles, count, "--search-angles", "--search-rays")


def run(args):
    source_depth = parse_source_depth(args.source_depth)
    receivers = [parse_receiver(r, "--receiver") for r in args.receiver]
    bottom_depth = optional_length(args.bottom_depth, "--bottom-depth")
    if args.max_reflections < 0:
        raise SeaprofileError(f"--max-reflections must be >= 0, got {args.max_reflections}")
    search = _search_angles(args)
    read = reading_options(args)
    plot_path = check_figure_path(
        args.plot, overwrite=args.overwrite, inputs=expand_paths(args.profile), argument="--plot"
    )

    env, loaded = load_environment(
        args.profile, bottom_depth=bottom_depth, thin_tolerance=args.thin_tolerance, **read
    )
    bottom = float(env.bottom_at(0.0))
    if source_depth > bottom:
        raise SeaprofileError(
            f"--source-depth {source_depth:g} m lies below the bottom ({bottom:g} m)"
        )
    for (_, z), text in zip(receivers, args.receiver):
        if z > bottom:
            raise SeaprofileError(
                f"--receiver {text}: depth {z:g} m lies below the bottom ({bottom:g} m)"
            )

    from ..propagation.eigenrays import eigenrays

    ranges = np.unique([r for r, _ in receivers])
    depths = np.unique([z for _, z in receivers])
    arrivals = eigenrays(
        env, source_depth, ranges, depths, max_reflections=args.max_reflections, angles=search
    )
    arrivals.attrs["input"] = loaded.description

    results = []
    for r, z in receivers:
        i = int(np.searchsorted(ranges, r))
        j = int(np.searchsorted(depths, z))
        results.append(
            {"range_m": float(r), "depth_m": float(z), "arrivals": _arrivals_at(arrivals, i, j)}
        )

    written = []
    if plot_path is not None:
        from ..plots.arrivals import plot_arrivals

        flat = [
            int(np.searchsorted(ranges, r)) * depths.size + int(np.searchsorted(depths, z))
            for r, z in receivers
        ]
        fig = plot_arrivals(arrivals, receiver=list(dict.fromkeys(flat)))
        save_figure(fig, plot_path, overwrite=args.overwrite)
        written.append(str(plot_path))

    if args.json:
        print_json(
            {
                "input": loaded.description,
                "source_depth_m": source_depth,
                "bottom_depth_m": bottom,
                "max_reflections": args.max_reflections,
                "units": {
                    "travel_time": "s",
                    "launch_angle": "degree, positive down",
                    "arrival_angle": "degree, positive down",
                    "spreading_loss": "dB re 1 m",
                    "range": "m",
                    "depth": "m",
                },
                "receivers": results,
                "written": written,
                "caution": CAUTION,
            }
        )
        return 0
    print(f"input: {loaded.description}")
    print(
        f"source {source_depth:g} m, flat bottom {bottom:g} m, paths with up to "
        f"{args.max_reflections} reflections"
    )
    for res in results:
        n = len(res["arrivals"])
        print()
        print(
            f"receiver at {_range_text(res['range_m'])} range, {res['depth_m']:g} m depth: "
            f"{n} arrival{'s' if n != 1 else ''}"
        )
        if not n:
            print("  no path found within the reflection limit")
            continue
        rows = [
            {
                "time_s": f"{a['travel_time']:.4f}",
                "launch_deg": f"{a['launch_angle']:+.2f}",
                "arrival_deg": f"{a['arrival_angle']:+.2f}",
                "surface": a["surface_reflections"],
                "bottom": a["bottom_reflections"],
                "turning_points": a["turning_points"],
                "loss_dB": f"{a['spreading_loss']:.1f}",
                "path": a["path"],
            }
            for a in res["arrivals"]
        ]
        print_table(
            rows,
            [
                "time_s",
                "launch_deg",
                "arrival_deg",
                "surface",
                "bottom",
                "turning_points",
                "loss_dB",
                "path",
            ],
        )
    print()
    print(
        "surface, bottom: reflections; angles: degrees from horizontal, + toward the bottom; "
        "loss: geometric spreading, dB re 1 m"
    )
    for w in written:
        print(f"wrote {w}")
    print(f"Caution: {CAUTION}")
    return 0


def _range_text(r):
    return f"{r / 1000:g} km" if r >= 1000 else f"{r:g} m"


def _arrivals_at(arrivals, i, j):
    """Arrivals at receiver (range index i, depth index j) as dicts, by travel time."""
    sel = (np.asarray(arrivals["receiver_range_index"].values) == i) & (
        np.asarray(arrivals["receiver_depth_index"].values) == j
    )
    idx = np.flatnonzero(sel)
    t = np.asarray(arrivals["travel_time"].values, dtype=float)[idx]
    idx = idx[np.argsort(t, kind="stable")]
    out = []
    for k in idx:  # a handful of arrivals per receiver: formatting only
        s = int(arrivals["surface_reflections"].values[k])
        b = int(arrivals["bottom_reflections"].values[k])
        out.append(
            {
                "travel_time": float(arrivals["travel_time"].values[k]),
                "launch_angle": float(arrivals["launch_angle"].values[k]),
                "arrival_angle": float(arrivals["arrival_angle"].values[k]),
                "surface_reflections": s,
                "bottom_reflections": b,
                "turning_points": int(arrivals["turning_points"].values[k]),
                "spreading_loss": float(arrivals["spreading_loss"].values[k]),
                "path": PATH_WORDS[(s > 0) + 2 * (b > 0)],
            }
        )
    return out
