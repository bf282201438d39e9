"""Convert a file of beam records (ping, beam angle, travel time) into soundings.

BEAMS is delimited text with a header row naming the columns: ping, beam_angle [deg]
(from the vessel's vertical, positive to starboard), travel_time [s] (two-way unless
--one-way), optional roll [deg] (positive starboard down, added to the beam angle) and
transducer_sound_speed [m/s]; any other column (time, position) is copied through. Each
beam is traced exactly through the profile's layers to its depth and across-track
distance. The file is read and written in chunks (a file of ten million beams never sits
in memory) and the output CSV appears only when complete. No row is ever dropped: bad or
missing values are flagged in the output's flag column (--strict: an error naming the
file, line and column instead).
"""

from __future__ import annotations

import numpy as np

from .._cf import CAUTION, usable
from .._validate import SeaprofileError
from ..io import check_output, load_profile
from ..io.beams import BEAM_FLAGS, DEFAULT_CHUNK_ROWS, convert_beam_file
from ._common import parse_length, print_json, print_table
from ._options import add_reading_options, reading_options

NAME = "soundings"
HELP = "beam records (angle, travel time) to depths and across-track distances"
EXAMPLE = """example:
  seaprofile soundings demo_casts/swath/line07_beams.txt --profile demo_casts/shelf_summer_ctd.csv \\
      --transducer-depth 4.5 --out line07_soundings.csv
  seaprofile soundings demo_casts/swath/line07_beams.txt --profile demo_casts/shelf_summer_ctd.csv \\
      --transducer-depth 4.5 --straight-ray --out compare.csv --json"""


def add_arguments(p):
    p.add_argument("beams", metavar="BEAMS", help="beam-record file (CSV with a header row)")
    p.add_argument(
        "--profile",
        required=True,
        help="sound-speed profile: a built profile, or a raw cast built with the defaults",
    )
    p.add_argument(
        "--transducer-depth",
        required=True,
        help="depth of the transducer face below the sea surface, m",
    )
    p.add_argument(
        "--one-way", action="store_true", help="travel times are one-way (default: two-way)"
    )
    p.add_argument(
        "--straight-ray",
        action="store_true",
        help="also write the straight-ray depth and across-track distance at the "
        "transducer sound speed, for comparison",
    )
    p.add_argument("--out", required=True, metavar="CSV", help="soundings file to write")
    p.add_argument(
        "--chunk-rows",
        type=int,
        default=DEFAULT_CHUNK_ROWS,
        help=f"rows read and written at a time (default {DEFAULT_CHUNK_ROWS})",
    )
    p.add_argument(
        "--strict",
        action="store_true",
        help="stop at the first bad value (file, line, column) instead of flagging its row",
    )
    p.add_argument("--overwrite", action="store_true", help="replace an existing output file")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    add_reading_options(p)


def profile_nodes(profile):
    """Usable (depth m, sound speed m/s) nodes of a Profile."""
    z = np.asarray(profile["depth"], dtype=float)
    c = np.asarray(profile["sound_speed"], dtype=float)
    keep = np.isfinite(z) & np.isfinite(c)
    if "sound_speed_qc" in profile:
        keep &= usable(c, np.asarray(profile["sound_speed_qc"]))
    if np.count_nonzero(keep) < 1:
        raise SeaprofileError("--profile: no usable sound-speed level")
    return z[keep], c[keep]


def run(args):
    transducer_depth = parse_length(args.transducer_depth, "--transducer-depth")
    if transducer_depth < 0:
        raise SeaprofileError(
            f"--transducer-depth must be at or below the surface, got {args.transducer_depth!r}"
        )
    if args.chunk_rows < 1:
        raise SeaprofileError(f"--chunk-rows must be at least 1, got {args.chunk_rows}")
    read = reading_options(args)
    out = check_output(
        args.out, overwrite=args.overwrite, inputs=[args.beams, args.profile], argument="--out"
    )
    z, c = profile_nodes(load_profile(args.profile, **read))
    summary = convert_beam_file(
        args.beams,
        out,
        z,
        c,
        transducer_depth=transducer_depth,
        two_way=not args.one_way,
        straight_ray=args.straight_ray,
        chunk_rows=args.chunk_rows,
        strict=args.strict,
        overwrite=args.overwrite,
        profile_name=str(args.profile),
    )
    if summary["first_bad"]:
        line, column, reason = summary["first_bad"]
        where = f"line {line}" + (f", column {column}" if column else "")
        print(
            f"seaprofile: warning: {args.beams}, {where}: {reason}; "
            f"{summary['flags'][3]} row(s) flagged 3, soundings left empty",
            file=__import__("sys").stderr,
        )
    rows = [{"flag": k, "rows": summary["flags"][k], "meaning": BEAM_FLAGS[k]} for k in BEAM_FLAGS]
    if args.json:
        print_json({"beams": args.beams, "output": str(out), **summary, "caution": CAUTION})
        return 0
    print(f"{summary['rows']} beams from {args.beams} -> {out}")
    if summary["depth_range"]:
        lo, hi = summary["depth_range"]
        xl, xh = summary["across_range"]
        print(f"depth {lo:.2f} to {hi:.2f} m; across-track {xl:.2f} to {xh:.2f} m")
    print_table(rows, ["flag", "rows", "meaning"])
    print(f"Caution: {CAUTION}")
    return 0
