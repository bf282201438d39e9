"""Arguments shared by the commands, in one place: reading, building, angles, outputs.

The library names a bad argument by its Python keyword (``ArgumentError.argument``);
:data:`OPTION_NAMES` turns it into the command-line option shown to the user.
"""

from __future__ import annotations

import re

import numpy as np

from .._validate import SeaprofileError
from ..casts.xbt import DEFAULT_FALL_RATE, FALL_RATES
from ..io.options import check_read_options
from ..seawater.depth import METHODS
from ..seawater.soundspeed import EQUATIONS
from ._common import parse_length

#: Python keyword of the library -> command-line option
OPTION_NAMES = {
    "bin_size": "--bin",
    "extend_to": "--extend-to",
    "reference": "--reference",
    "columns": "--columns",
    "units": "--units",
    "latitude": "--latitude",
    "longitude": "--longitude",
    "salinity": "--salinity",
    "fall_rate": "--fall-rate",
    "instrument": "--instrument",
    "equation": "--equation",
    "depth_method": "--depth-method",
    "scheduler": "--scheduler",
    "format": "--format",
    "out_dir": "--out",
    "bottom_depth": "--bottom-depth",
    "thin_tolerance": "--thin-tolerance",
    "bathymetry": "--bathymetry",
    "range_step": "--range-step",
    "paths": "PROFILE",
    "replacement_salinity": "--replace-salinity",
    "max_gap": "--max-gap",
    "replace_salinity": "--replace-salinity-where",
}


def option_name(argument):
    """The command-line option of a library argument (the argument itself if unknown)."""
    return OPTION_NAMES.get(argument, argument)


# "columns=", "columns={'temperature': ...}", "give reference=": a Python keyword in a
# library message, as the caller of a function would write it
_KEYWORDS = "|".join(k for k in OPTION_NAMES if not k.startswith("paths"))
_KEYWORD_USE = re.compile(rf"\b({_KEYWORDS})=(\{{[^}}]*\}})?(?![\w'\"\-.])")


def in_option_terms(message):
    """``message`` with Python keywords written as arguments (``columns=``) shown as options.

    Display only: nothing is decided from the text. Library messages that name an
    argument by attribute (:class:`~seaprofile.io.ArgumentError`) need none of this.
    """
    return _KEYWORD_USE.sub(lambda m: OPTION_NAMES[m.group(1)], str(message))


# a value argparse already reads as a number: plain negative integers and decimals
_PLAIN_NEGATIVE = re.compile(r"^-\d+$|^-\d*\.\d+$")
# a value starting with a minus sign and a digit (no option of ours starts with a digit)
_NEGATIVE_VALUE = re.compile(r"^-\.?\d")


def join_negative_values(argv):
    """``argv`` with ``--option -1km,20`` written as ``--option=-1km,20``.

    argparse reads plain negative numbers (``--angles -15 15``, ``--extend-to -5``) as
    values, but takes ``-1km,20`` or ``-1e3`` for an unknown option. Written as
    ``--option=VALUE`` (the form the argparse documentation gives for values that start
    with a minus sign) they are values again, and the option's own check can refuse them
    with its own message. Only a token right after a long option is joined; plain numbers
    are left alone, so options taking two values (``--angles LOW HIGH``) are unaffected.
    """
    out = []
    for token in argv:
        prev = out[-1] if out else ""
        if (
            _NEGATIVE_VALUE.match(token)
            and not _PLAIN_NEGATIVE.match(token)
            and prev.startswith("--")
            and len(prev) > 2
            and "=" not in prev
        ):
            out[-1] = f"{prev}={token}"
        else:
            out.append(token)
    return out


# --- reading and building casts ----------------------------------------------------------


def add_reading_options(p):
    """How raw casts are read, for every command that reads one (one list for all).

    ``--columns``, ``--units``, ``--latitude``, ``--longitude``, ``--instrument``,
    ``--salinity`` and ``--fall-rate``; :func:`reading_options` checks them.
    """
    g = p.add_argument_group("reading raw casts")
    g.add_argument(
        "--columns",
        help="explicit column mapping, by header name or by 1-based "
        "position, e.g. 'temperature=temperature [degC],pressure=pressure [dbar]' "
        "or '1=depth,2=sound_speed'",
    )
    g.add_argument("--units", help="unit overrides, e.g. pressure=MPa,temperature=degC")
    g.add_argument("--latitude", type=float, help="latitude, degrees north (overrides the file)")
    g.add_argument("--longitude", type=float, help="longitude, degrees east (overrides the file)")
    g.add_argument(
        "--instrument",
        choices=["ctd", "xbt", "svp"],
        help="instrument kind (default: from the file)",
    )
    g.add_argument(
        "--salinity",
        type=float,
        help="salinity assumed for casts without one (expendable probes: default 35)",
    )
    g.add_argument(
        "--fall-rate",
        help="expendable-probe fall rate: "
        + ", ".join(sorted(FALL_RATES))
        + f" or A,B for depth = A t - B t^2 (m, s); default {DEFAULT_FALL_RATE}",
    )
    return g


def add_building_options(p):
    """Reading options plus how a cast is built into a profile (the ``build`` command)."""
    add_reading_options(p)
    b = p.add_argument_group("building profiles")
    b.add_argument(
        "--equation",
        default="chen_millero1977",
        choices=sorted(EQUATIONS),
        help="sound-speed equation (default chen_millero1977)",
    )
    b.add_argument(
        "--depth-method",
        default="unesco1983",
        choices=sorted(METHODS),
        help="pressure-to-depth method (default unesco1983)",
    )
    b.add_argument("--bin", type=float, default=1.0, help="bin size, m (default 1)")
    b.add_argument(
        "--max-gap",
        default="auto",
        metavar="METRES",
        help="widest gap between measured levels filled by interpolation (flag 8): "
        "'auto' (default: up to 5 m or 3 times the spacing of the levels beside "
        "it), a depth in m, or 'all'",
    )
    b.add_argument(
        "--replace-salinity",
        type=float,
        metavar="SALINITY",
        help="practical salinity to use in place of a failed salinity channel "
        "(flagged 8 'estimated' and stated in each profile's assumptions)",
    )
    b.add_argument(
        "--replace-salinity-where",
        choices=["bad", "all"],
        default="bad",
        help="where --replace-salinity goes: samples whose salinity is flagged bad "
        "or missing (default), or all samples",
    )
    return b


def parse_fall_rate(text):
    """``--fall-rate``: a name, or ``A,B`` (m/s, m/s^2) for depth = A t - B t^2."""
    if text is None or text in FALL_RATES:
        return text
    try:
        a, b = (float(x) for x in text.split(","))
    except ValueError:
        raise SeaprofileError(
            f"--fall-rate: expected one of {', '.join(sorted(FALL_RATES))} or A,B, got {text!r}"
        ) from None
    return (a, b)


def reading_options(args):
    """The reading options of ``args``, checked (raises ``ArgumentError`` naming one)."""
    return check_read_options(
        columns=args.columns,
        units=args.units,
        latitude=args.latitude,
        longitude=args.longitude,
        instrument=getattr(args, "instrument", None),
        salinity=getattr(args, "salinity", None),
        fall_rate=parse_fall_rate(getattr(args, "fall_rate", None)),
    )


# --- lengths and angles ------------------------------------------------------------------


def optional_length(text, option):
    """A length option (m, or with a ``km`` suffix) or None when not given."""
    return None if text is None else parse_length(text, option)


def parse_source_depth(text):
    """``--source-depth``: a length (m, or with a km suffix) at or below the surface."""
    depth = parse_length(text, "--source-depth")
    if depth < 0:
        raise SeaprofileError(
            f"--source-depth must be at or below the surface (>= 0 m), got {text!r}"
        )
    return depth


def add_angle_options(p, prefix="", default=None, rays=None, what="launch angles"):
    """``--{prefix}angles LOW HIGH`` and ``--{prefix}rays COUNT`` (evenly spaced, ends kept)."""
    span = f"--{prefix}angles"
    count = f"--{prefix}rays"
    tail = f" (default {default[0]} {default[1]})" if default else ""
    p.add_argument(
        span,
        nargs=2,
        metavar=("LOW", "HIGH"),
        default=default,
        help=f"{what}: the lowest and the highest, degrees from horizontal, "
        f"positive toward the bottom, strictly inside -90..90{tail}",
    )
    p.add_argument(
        count,
        metavar="COUNT",
        default=rays,
        help="number of rays from LOW to HIGH, both included"
        + (f" (default {rays})" if rays else ""),
    )


def parse_angles(span, count, span_option="--angles", count_option="--rays"):
    """Launch angles, degrees, from ``LOW HIGH`` and ``COUNT`` (``numpy.linspace``).

    Returns
    -------
    numpy.ndarray
        ``COUNT`` angles from LOW to HIGH, degrees from horizontal, positive down, each
        strictly inside (-90, 90).
    """
    try:
        low, high = (float(v) for v in span)
    except (TypeError, ValueError):
        raise SeaprofileError(
            f"{span_option}: expected two angles LOW HIGH in degrees (e.g. "
            f"-15 15), got {' '.join(map(str, span))!r}"
        ) from None
    if not (np.isfinite(low) and np.isfinite(high)) or max(abs(low), abs(high)) >= 90:
        raise SeaprofileError(
            f"{span_option}: launch angles must lie strictly between -90 and "
            f"90 degrees, got {low:g} {high:g}"
        )
    if low > high:
        raise SeaprofileError(f"{span_option}: LOW must not exceed HIGH, got {low:g} {high:g}")
    try:
        n = int(str(count))
    except ValueError:
        raise SeaprofileError(
            f"{count_option}: expected a whole number of rays, got {count!r}"
        ) from None
    if n < 1 or (n == 1 and low != high):
        raise SeaprofileError(
            f"{count_option}: need at least 2 rays from {low:g} to {high:g} "
            f"degrees (1 only when LOW equals HIGH), got {n}"
        )
    return np.linspace(low, high, n)


def parse_receiver(text, name="--receiver"):
    """Parse ``RANGE,DEPTH`` (``12km,200``): range and depth in m (``km`` accepted)."""
    parts = [p.strip() for p in str(text).split(",")]
    if len(parts) != 2 or not all(parts):
        raise SeaprofileError(f"{name}: expected RANGE,DEPTH (e.g. 12km,200), got {text!r}")
    r = parse_length(parts[0], f"{name} range")
    z = parse_length(parts[1], f"{name} depth")
    if r <= 0:
        raise SeaprofileError(f"{name}: the range must be positive, got {text!r}")
    if z < 0:
        raise SeaprofileError(f"{name}: the depth must be at or below the surface, got {text!r}")
    return r, z


# --- the ray commands ---------------------------------------------------------------------


def add_ray_input_options(p, metavar, help_text):
    """What ``fan`` and ``paths`` share: the input, reading options and node thinning."""
    from ..io import DEFAULT_THIN_TOLERANCE

    p.add_argument("profile", nargs="+", metavar=metavar, help=help_text)
    p.add_argument(
        "--source-depth", required=True, help="source depth, m (a 'km' suffix is accepted)"
    )
    p.add_argument(
        "--thin-tolerance",
        type=float,
        default=DEFAULT_THIN_TOLERANCE,
        help="drop profile nodes that a straight segment matches to within this "
        "sound speed, m/s (default %(default)s; 0 keeps every bin)",
    )
    add_reading_options(p)


def add_quiet_option(p, work="the long computation"):
    """``--quiet``: no progress bar and no first-run notice on stderr (``fan``, ``loss`` ...).

    ``work`` names what the bar follows in the help text. The command passes
    ``progress=not args.quiet`` to the library; a bar only ever appears when stderr is a
    terminal (:mod:`seaprofile._progress`).
    """
    p.add_argument(
        "--quiet",
        action="store_true",
        help=f"no progress bar for {work} and no first-run notice on stderr (a bar is "
        "only ever shown when stderr is a terminal and the work is large)",
    )
