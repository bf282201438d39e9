"""Transmission loss of one source on a grid of ranges and receiver depths.

PROFILE_OR_SECTION is read as by ``seaprofile fan`` (a built profile, a raw cast, or casts
forming a section). The loss field (dB re 1 m) comes from a fan of geometric beams
(``seaprofile.propagation.loss.transmission_loss``); the volume absorption uses the
profile's own temperature and salinity when it has them (else an assumed water, said so in
the output), the seabed is a fluid half-space (a named sediment by default, stated in the
output). Prints the median loss of a few depth bands at a few ranges, and the least and
greatest loss of the grid; writes the field (netCDF) and a figure when asked. Depths and
ranges are metres unless a 'km' suffix is given.
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION
from .._validate import SeaprofileError
from ..io import save_figure, write_netcdf
from ._common import parse_length, print_json, print_table
from ._environment import add_bottom_options, add_seabed_options, parse_receiver_depths, prepare
from ._options import add_quiet_option, add_ray_input_options, optional_length

NAME = "loss"
HELP = "transmission loss by range and depth from one source; summary, netCDF and figure"
EXAMPLE = """example:
  seaprofile loss demo_casts/deep_ocean_ctd.csv --source-depth 50 --frequency 1000 \\
      --range 30km --bottom-depth 4000 --plot loss.png --out loss.nc
  seaprofile loss demo_casts/shelf_summer_ctd.csv --source-depth 20 --band 2000 4000 \\
      --range 10km --seabed silt --mode incoherent --json"""

DEFAULT_RANGE = "20km"
DEFAULT_RANGE_CELLS = 400
DEFAULT_DEPTH_CELLS = 100
DEFAULT_BAND_COUNT = 5
DEFAULT_BEAMS = 1000
#: Sediment used when no seabed is given: sand, a common shelf sediment (common practice,
#: no source); stated in every output.
DEFAULT_SEABED = "sand"
#: How many depth bands and ranges the text summary shows.
SUMMARY_BANDS = 3
SUMMARY_RANGES = 4


def add_arguments(p):
    add_ray_input_options(
        p,
        "PROFILE_OR_SECTION",
        "profile or cast file(s), or a directory of casts forming a section",
    )
    f = p.add_mutually_exclusive_group(required=True)
    f.add_argument("--frequency", type=float, help="frequency, Hz")
    f.add_argument(
        "--band",
        nargs=2,
        type=float,
        metavar=("LOW", "HIGH"),
        help="average the intensity over a band, Hz (--band-count frequencies, log spaced)",
    )
    p.add_argument(
        "--band-count",
        type=int,
        default=DEFAULT_BAND_COUNT,
        help=f"frequencies in --band, both ends included (default {DEFAULT_BAND_COUNT})",
    )
    p.add_argument(
        "--range",
        default=DEFAULT_RANGE,
        dest="max_range",
        help=f"farthest range, m or km (default {DEFAULT_RANGE})",
    )
    p.add_argument(
        "--range-step",
        help=f"range grid step, m or km (default: the range / {DEFAULT_RANGE_CELLS})",
    )
    d = p.add_mutually_exclusive_group()
    d.add_argument(
        "--depth-step",
        help="receiver depths every STEP from the surface to the deepest bottom, m "
        f"(default: that depth / {DEFAULT_DEPTH_CELLS})",
    )
    d.add_argument("--receiver-depths", help="receiver depths, m, comma separated")
    p.add_argument(
        "--mode",
        choices=["coherent", "semicoherent", "incoherent"],
        default="semicoherent",
        help="how beams add: coherent (phases kept), semicoherent (the surface "
        "interference kept, distinct paths with random phase) or incoherent; default "
        "semicoherent (smooth enough to read on a coarse grid, surface effect kept; common "
        "practice, no source)",
    )
    p.add_argument(
        "--beams",
        type=int,
        default=DEFAULT_BEAMS,
        help=f"beams launched between -80 and 80 degrees (default {DEFAULT_BEAMS})",
    )
    add_bottom_options(p)
    add_seabed_options(p, default=DEFAULT_SEABED)
    p.add_argument("--plot", metavar="FIGURE", help="write the loss figure (PNG, PDF, SVG)")
    p.add_argument("--out", metavar="LOSS_NC", help="write the loss field as netCDF")
    p.add_argument("--overwrite", action="store_true", help="replace existing output files")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    add_quiet_option(p, "the rays and the beam sum of a large field")


def _positive_frequency(value, option):
    if not (np.isfinite(value) and value > 0):
        raise SeaprofileError(f"{option} must be a positive frequency (Hz), got {value:g}")
    return float(value)


def _frequencies(args):
    """(centre frequency, band or None), Hz."""
    if args.band is None:
        return _positive_frequency(args.frequency, "--frequency"), None
    lo = _positive_frequency(args.band[0], "--band")
    hi = _positive_frequency(args.band[1], "--band")
    if not lo < hi:
        raise SeaprofileError(f"--band: LOW must be below HIGH, got {lo:g} {hi:g}")
    if args.band_count < 2:
        raise SeaprofileError(f"--band-count must be >= 2, got {args.band_count}")
    return float(np.sqrt(lo * hi)), (lo, hi)


def _grid(args, environment, bottom):
    max_range = parse_length(args.max_range, "--range")
    if max_range <= 0:
        raise SeaprofileError(f"--range must be positive, got {args.max_range!r}")
    step = optional_length(args.range_step, "--range-step")
    step = max_range / DEFAULT_RANGE_CELLS if step is None else step
    if not 0 < step <= max_range:
        raise SeaprofileError(f"--range-step must be positive and <= --range, got {step:g} m")
    ranges = np.arange(step, max_range + 0.5 * step, step)
    # the deepest bottom within the grid's ranges (a section may deepen farther out)
    track = np.linspace(0.0, max_range, 1001)
    deepest = float(np.max(environment.bottom_at(np.union1d(track, ranges))))
    if args.receiver_depths:
        depths = np.unique(parse_receiver_depths(args.receiver_depths, bottom, 0))
        if depths[-1] > deepest:
            raise SeaprofileError(
                f"--receiver-depths: {depths[-1]:g} m lies below the deepest bottom ({deepest:g} m)"
            )
        return ranges, depths
    dz = optional_length(args.depth_step, "--depth-step")
    dz = deepest / DEFAULT_DEPTH_CELLS if dz is None else dz
    if not 0 < dz <= deepest:
        raise SeaprofileError(
            f"--depth-step must be positive and <= the deepest bottom ({deepest:g} m), got {dz:g}"
        )
    depths = np.arange(0.0, deepest, dz)
    return ranges, np.append(depths, deepest) if deepest - depths[-1] > 1e-6 * dz else depths


def run(args):
    frequency, band = _frequencies(args)
    if args.beams < 10:
        raise SeaprofileError(f"--beams must be >= 10, got {args.beams}")
    prep = prepare(args, seabed_default=DEFAULT_SEABED)
    env = prep.environment
    ranges, depths = _grid(args, env, prep.bottom)

    # lazily: the loss field lives in its own module
    from ..propagation.loss import transmission_loss

    loss = transmission_loss(
        env,
        prep.source_depth,
        frequency,
        ranges=ranges,
        depths=depths,
        mode=args.mode,
        beams=args.beams,
        band=band,
        band_frequencies=args.band_count,
        progress=not args.quiet,
    )
    loss.attrs["input"] = prep.loaded.description
    loss.attrs["seabed_note"] = prep.seabed_note
    written = []
    if prep.out_path is not None:
        write_netcdf(loss.to_dataset(), prep.out_path, overwrite=args.overwrite)
        written.append(str(prep.out_path))
    if prep.plot_path is not None:
        from ..plots.loss import plot_loss_figure

        fig = plot_loss_figure(loss, environment=env, profile=prep.loaded.profile)
        save_figure(fig, prep.plot_path, overwrite=args.overwrite)
        written.append(str(prep.plot_path))

    summary = summarise(loss, prep, band)
    summary["written"] = written
    if args.json:
        print_json(summary)
    else:
        _print_summary(summary)
    return 0


def _bands(depths, bottom):
    """Up to SUMMARY_BANDS equal depth bands from the surface to ``bottom`` holding depths."""
    edges = np.linspace(0.0, max(bottom, float(depths.max())), SUMMARY_BANDS + 1)
    out = []
    for i, (a, b) in enumerate(zip(edges[:-1], edges[1:])):
        inside = (depths >= a) & ((depths < b) if i < SUMMARY_BANDS - 1 else (depths <= b))
        if inside.any():
            out.append((float(a), float(b), inside))
    return out


def _cell(loss, which):
    i, j = np.unravel_index(which, loss.shape)
    return {
        "loss_db": float(loss.values[i, j]),
        "range_m": float(loss["range"].values[j]),
        "depth_m": float(loss["depth"].values[i]),
    }


def summarise(loss, prep, band=None):
    """The command's summary of a loss field as a plain dict (JSON-ready)."""
    tl = np.asarray(loss.values, dtype=float)
    r = np.asarray(loss["range"].values, dtype=float)
    z = np.asarray(loss["depth"].values, dtype=float)
    picks = np.unique(
        [int(np.argmin(np.abs(r - f * r[-1]))) for f in np.linspace(0, 1, SUMMARY_RANGES + 1)[1:]]
    )
    rows = []
    for a, b, inside in _bands(z, prep.bottom):
        values = []
        for j in picks:
            col = tl[inside, j]
            col = col[np.isfinite(col)]
            values.append(float(np.median(col)) if col.size else float("nan"))
        rows.append({"depth_from_m": a, "depth_to_m": b, "median_loss_db": values})
    finite = np.isfinite(tl)
    least = greatest = None
    if finite.any():
        flat = np.where(finite, tl, np.nan).ravel()
        least, greatest = _cell(loss, np.nanargmin(flat)), _cell(loss, np.nanargmax(flat))
    return {
        "input": str(loss.attrs.get("input", "")),
        "source_depth_m": prep.source_depth,
        "frequency_hz": float(loss.attrs["frequency"]),
        "band_hz": None if band is None else [float(band[0]), float(band[1])],
        "mode": str(loss.attrs["mode"]),
        "beams": int(loss.attrs["beams"]),
        "bottom_depth_at_source_m": prep.bottom,
        "seabed": prep.seabed_note,
        "absorption": str(loss.attrs.get("absorption", "")),
        "absorption_water": str(loss.attrs.get("absorption_water", "")),
        "ranges": {"count": int(r.size), "first_m": float(r[0]), "last_m": float(r[-1])},
        "depths": {"count": int(z.size), "first_m": float(z[0]), "last_m": float(z[-1])},
        "summary_ranges_m": [float(r[j]) for j in picks],
        "depth_bands": rows,
        "least_loss": least,
        "greatest_finite_loss": greatest,
        "cells_without_field": int((~finite).sum()),
        "caution": CAUTION,
    }


def _db(value):
    return f"{value:.1f}" if np.isfinite(value) else "-"


def _print_summary(s):
    print(f"input: {s['input']}")
    freq = (
        f"{s['frequency_hz']:g} Hz"
        if s["band_hz"] is None
        else f"band {s['band_hz'][0]:g}..{s['band_hz'][1]:g} Hz"
    )
    print(
        f"source at {s['source_depth_m']:g} m, {freq}, {s['mode']} sum of {s['beams']} beams, "
        f"bottom {s['bottom_depth_at_source_m']:g} m at the source"
    )
    print(f"seabed: {s['seabed']}")
    print(f"absorption ({s['absorption']}): {s['absorption_water']}")
    print(
        f"grid: {s['ranges']['count']} ranges {s['ranges']['first_m']:g}..{s['ranges']['last_m']:g}"
        f" m, {s['depths']['count']} depths {s['depths']['first_m']:g}.."
        f"{s['depths']['last_m']:g} m"
    )
    print("median transmission loss (dB re 1 m) of the receivers in each depth band:")
    heads = [f"{x / 1000:g} km" for x in s["summary_ranges_m"]]
    rows = []
    for row in s["depth_bands"]:
        cells = {"depth band (m)": f"{row['depth_from_m']:.0f}-{row['depth_to_m']:.0f}"}
        cells.update(zip(heads, (_db(v) for v in row["median_loss_db"])))
        rows.append(cells)
    print_table(rows, ["depth band (m)", *heads])
    if any(not np.isfinite(v) for row in s["depth_bands"] for v in row["median_loss_db"]):
        print("(-: no receiver of the band in the water there, or none reached by a beam)")
    for key, word in (("least_loss", "least"), ("greatest_finite_loss", "greatest")):
        c = s[key]
        if c is not None:
            print(
                f"{word} loss {c['loss_db']:.1f} dB at {c['range_m'] / 1000:g} km, "
                f"{c['depth_m']:g} m"
            )
    if s["cells_without_field"]:
        print(
            f"{s['cells_without_field']} cells without a field (below the bottom, on the "
            "pressure-release surface, or reached by no beam)"
        )
    for w in s["written"]:
        print(f"wrote {w}")
    print(f"caution: {CAUTION}")
