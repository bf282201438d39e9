"""Detection coverage: the transmission-loss field of one source against a sonar equation.

PROFILE_OR_SECTION is read as by ``seaprofile fan``. The loss field is computed on a grid of
ranges and receiver depths (``seaprofile.propagation.loss.transmission_loss``), then the
sonar equation, all in dB (Urick 1983, Principles of Underwater Sound, 3rd ed., ch. 2):
passive FOM = SL - (NL - DI) - DT with signal excess SE = FOM - TL; active noise-limited
(--target-strength given) FOM = SL + TS - (NL - DI) - DT with SE = FOM - 2 TL; or a figure
of merit given directly. Prints, for each receiver depth, the range intervals where
SE >= 0 (convergence zones show as separate intervals).
"""

from __future__ import annotations

import numpy as np

from .._validate import SeaprofileError
from ..io import save_figure
from ..io.write import write
from ..propagation.coverage import coverage, figure_of_merit
from ._common import parse_length, print_json
from ._environment import (
    add_bottom_options,
    add_seabed_options,
    parse_receiver_depths,
    prepare,
)
from ._options import add_quiet_option, add_ray_input_options

NAME = "coverage"
HELP = "detection ranges by receiver depth from transmission loss and a sonar equation"
EXAMPLE = """example:
  seaprofile coverage demo_casts/deep_ocean_ctd.csv --source-depth 50 --frequency 3000 \\
      --range 60km --bottom-depth 4000 --source-level 140 --noise-level 65 \\
      --directivity-index 10 --detection-threshold 10 --plot coverage.png
  seaprofile coverage demo_casts/shelf_summer_ctd.csv --source-depth 20 --frequency 5000 \\
      --range 15km --figure-of-merit 80 --json"""

DEFAULT_RANGE = "40km"
DEFAULT_RANGE_STEP = "200m"
DEFAULT_DEPTHS = 9


def add_arguments(p):
    add_ray_input_options(
        p,
        "PROFILE_OR_SECTION",
        "profile or cast file(s), or a directory of casts forming a section",
    )
    p.add_argument("--frequency", type=float, required=True, help="frequency, Hz")
    p.add_argument(
        "--range", default=DEFAULT_RANGE, dest="max_range", help="farthest range, m or km"
    )
    p.add_argument("--range-step", default=DEFAULT_RANGE_STEP, help="range grid step, m or km")
    p.add_argument(
        "--mode",
        choices=["incoherent", "semicoherent", "coherent"],
        default="incoherent",
        help="how beams are summed (default incoherent: coverage is judged on the smooth "
        "loss, not on single interference nulls; common practice, no source)",
    )
    p.add_argument(
        "--receiver-depths",
        help="receiver depths, m, comma separated (default: "
        f"{DEFAULT_DEPTHS} evenly from the surface to the bottom)",
    )
    add_bottom_options(p)
    add_seabed_options(p)
    s = p.add_argument_group("sonar equation (dB)")
    s.add_argument("--source-level", type=float, help="SL, dB re 1 uPa at 1 m")
    s.add_argument("--noise-level", type=float, help="NL in the receiver band, dB re 1 uPa^2")
    s.add_argument("--directivity-index", type=float, default=0.0, help="DI, dB (default 0)")
    s.add_argument("--detection-threshold", type=float, help="DT, dB")
    s.add_argument(
        "--target-strength", type=float, help="TS, dB re 1 m^2: active form, two-way loss"
    )
    s.add_argument(
        "--figure-of-merit", type=float, help="FOM, dB, instead of the terms above (passive)"
    )
    p.add_argument("--plot", metavar="FIGURE", help="write the coverage figure (PNG, PDF, SVG)")
    p.add_argument("--out", metavar="COVERAGE_NC", help="write the coverage as netCDF")
    p.add_argument("--overwrite", action="store_true", help="replace existing output files")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    add_quiet_option(p, "the rays and the beam sum of a large field")


def _terms(args):
    terms = (args.source_level, args.noise_level, args.detection_threshold)
    if args.figure_of_merit is not None:
        if any(t is not None for t in (*terms, args.target_strength)):
            raise SeaprofileError(
                "--figure-of-merit: give either it or --source-level, --noise-level, "
                "--detection-threshold (and --target-strength)"
            )
        return figure_of_merit(figure_of_merit=args.figure_of_merit)
    if any(t is None for t in terms):
        raise SeaprofileError(
            "give --source-level, --noise-level and --detection-threshold, or --figure-of-merit"
        )
    return figure_of_merit(
        args.source_level,
        args.noise_level,
        args.detection_threshold,
        directivity_index=args.directivity_index,
        target_strength=args.target_strength,
    )


def run(args):
    terms = _terms(args)
    if not (np.isfinite(args.frequency) and args.frequency > 0):
        raise SeaprofileError(f"--frequency must be positive, got {args.frequency!r}")
    max_range = parse_length(args.max_range, "--range")
    step = parse_length(args.range_step, "--range-step")
    if max_range <= 0 or step <= 0 or step > max_range:
        raise SeaprofileError("--range and --range-step must be positive, step <= range")
    prep = prepare(args)
    env, loaded, source_depth, bottom = (
        prep.environment,
        prep.loaded,
        prep.source_depth,
        prep.bottom,
    )
    plot_path, out_path = prep.plot_path, prep.out_path
    depths = parse_receiver_depths(args.receiver_depths, bottom, DEFAULT_DEPTHS)
    ranges = np.arange(step, max_range + 0.5 * step, step)

    # lazily: the loss field lives in its own module
    from ..propagation.loss import transmission_loss

    loss = transmission_loss(
        env,
        source_depth,
        args.frequency,
        ranges=ranges,
        depths=depths,
        mode=args.mode,
        progress=not args.quiet,
    )
    cov = coverage(loss, terms)
    written = []
    if out_path is not None:
        write(cov.to_dataset(), out_path, overwrite=args.overwrite)
        written.append(str(out_path))
    if plot_path is not None:
        from ..plots.coverage import plot_coverage

        fig = plot_coverage(cov, loss, environment=env, profile=loaded.profile)
        save_figure(fig, plot_path, overwrite=args.overwrite)
        written.append(str(plot_path))
    if args.json:
        out = cov.to_dict()
        out["input"] = loaded.description
        out["source_depth_m"] = source_depth
        out["frequency_hz"] = float(args.frequency)
        out["seabed"] = prep.seabed_note
        out["written"] = written
        print_json(out)
    else:
        print(f"input: {loaded.description}")
        print(
            f"source at {source_depth:g} m, {args.frequency:g} Hz, bottom {bottom:g} m at the source"
        )
        print(f"seabed: {prep.seabed_note}")
        print(cov.to_text())
        for w in written:
            print(f"wrote {w}")
    return 0
