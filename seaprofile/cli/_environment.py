"""The environment of the loss commands (``loss``, ``coverage``): bottom, seabed, receivers.

One place for the options that say what the sound travels through below the profile: a
flat ``--bottom-depth`` or a ``--bathymetry`` file, the seabed (a named sediment of
:data:`seaprofile.propagation.reflection.SEDIMENTS` or its own values), and the receiver
depths of a loss grid. :func:`prepare` reads the input into an
:class:`~seaprofile.propagation.environment.Environment` after checking the output paths,
so a bad option or an existing output fails before any work.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import SeaprofileError
from ..io import check_figure_path, check_output, expand_paths, load_environment
from ..propagation.reflection import SEDIMENT_SOURCE, SEDIMENTS
from ._common import parse_length
from ._options import optional_length, parse_source_depth, reading_options

BATHYMETRY_HELP = (
    "bottom along the track: a text file whose first line names the columns with units "
    "(range_km,depth_m or 'range (m), depth (m)'), then one range, depth point per line"
)


def add_bottom_options(p):
    """``--bottom-depth`` or ``--bathymetry FILE`` (one of them, or the profile's bottom)."""
    bottom = p.add_mutually_exclusive_group()
    bottom.add_argument(
        "--bottom-depth",
        help="flat bottom depth, m (default: the profile's bottom depth if it carries one, "
        "else its deepest level)",
    )
    bottom.add_argument("--bathymetry", metavar="FILE", help=BATHYMETRY_HELP)
    return bottom


def add_seabed_options(p, default=None):
    """``--seabed NAME`` or ``--seabed-speed``/``--seabed-density``/``--seabed-attenuation``.

    ``default`` is the sediment name used when none is given (None: the bottom is a rigid,
    lossless reflector, R = +1).
    """
    g = p.add_argument_group("seabed (a fluid half-space below the bottom)")
    tail = f"; default {default}" if default else "; default none: a rigid lossless bottom (R = +1)"
    g.add_argument(
        "--seabed",
        metavar="NAME",
        help="sediment type: " + ", ".join(SEDIMENTS) + " (values from memory of a published "
        "table; give the site's own values when known)" + tail,
    )
    g.add_argument("--seabed-speed", type=float, help="sediment sound speed, m/s")
    g.add_argument("--seabed-density", type=float, help="sediment density, kg m-3")
    g.add_argument(
        "--seabed-attenuation", type=float, help="sediment attenuation, dB per wavelength"
    )
    return g


def parse_seabed(args, default=None):
    """The Seabed the options give, and one line saying where its values come from.

    Returns
    -------
    seabed : Seabed or None
        None: a rigid lossless bottom.
    note : str
    """
    from ..propagation.boundaries import Seabed

    # a command without the seabed options (fan) has none of these attributes
    named = getattr(args, "seabed", None)
    own = {
        "--seabed-speed": getattr(args, "seabed_speed", None),
        "--seabed-density": getattr(args, "seabed_density", None),
        "--seabed-attenuation": getattr(args, "seabed_attenuation", None),
    }
    given = [k for k, v in own.items() if v is not None]
    if given:
        if named is not None:
            raise SeaprofileError(
                f"--seabed: give either a sediment name or {', '.join(own)}, not both"
            )
        missing = [k for k, v in own.items() if v is None]
        if missing:
            raise SeaprofileError(f"{missing[0]}: needed with {', '.join(given)}")
        try:
            bed = Seabed(*own.values(), name="given")
        except SeaprofileError as exc:
            raise SeaprofileError(
                f"--seabed-speed/--seabed-density/--seabed-attenuation: {exc}"
            ) from None
        return bed, (
            f"given: {bed.sound_speed:g} m/s, {bed.density:g} kg m-3, "
            f"{bed.attenuation:g} dB per wavelength"
        )
    name = named if named is not None else default
    if name is None:
        return None, "none given: a rigid lossless bottom (R = +1)"
    try:
        bed = Seabed.named(name)
    except SeaprofileError:
        raise SeaprofileError(
            f"--seabed: unknown sediment {name!r}; known: {', '.join(SEDIMENTS)}"
        ) from None
    how = "default" if named is None else "named"
    return bed, (
        f"{bed.name} ({how}): {bed.sound_speed:g} m/s, {bed.density:g} kg m-3, "
        f"{bed.attenuation:g} dB per wavelength, {SEDIMENT_SOURCE}"
    )


def parse_receiver_depths(text, bottom, default_count):
    """``--receiver-depths A,B,...`` (m, km accepted), or ``default_count`` from 0 to the bottom.

    The default's first depth is 1 m (or the bottom if shallower), not the pressure-release
    surface itself.
    """
    if text:
        depths = np.array([parse_length(x, "--receiver-depths") for x in str(text).split(",")])
        if np.any(depths < 0):
            raise SeaprofileError("--receiver-depths must be at or below the surface")
        return depths
    depths = np.linspace(0.0, bottom, default_count)
    depths[0] = min(1.0, bottom)
    return depths


@dataclass(frozen=True)
class Prepared:
    """What :func:`prepare` gives a loss command."""

    environment: object
    loaded: object
    source_depth: float
    bottom: float  # m, at the source (range 0)
    plot_path: object
    out_path: object
    seabed_note: str


def prepare(args, *, seabed_default=None):
    """Check the options and output paths, then read the input into an Environment.

    Reads ``args.profile``, ``source_depth``, ``bottom_depth``, ``bathymetry``,
    ``thin_tolerance``, the reading options, the seabed options, ``plot``, ``out`` and
    ``overwrite``. Raises SeaprofileError naming the option or file.
    """
    source_depth = parse_source_depth(args.source_depth)
    bottom_depth = optional_length(args.bottom_depth, "--bottom-depth")
    if bottom_depth is not None and bottom_depth <= 0:
        raise SeaprofileError(f"--bottom-depth must be positive, got {args.bottom_depth!r}")
    seabed, note = parse_seabed(args, seabed_default)
    read = reading_options(args)
    inputs = [*expand_paths(args.profile), *([args.bathymetry] if args.bathymetry else [])]
    plot_path = check_figure_path(
        args.plot, overwrite=args.overwrite, inputs=inputs, argument="--plot"
    )
    out_path = check_output(
        args.out,
        overwrite=args.overwrite,
        inputs=inputs + ([args.plot] if args.plot else []),
        argument="--out",
    )
    env, loaded = load_environment(
        args.profile,
        bottom_depth=bottom_depth,
        thin_tolerance=args.thin_tolerance,
        bathymetry=args.bathymetry,
        seabed=seabed,
        **read,
    )
    bottom = float(env.bottom_at(0.0))
    if source_depth > bottom:
        raise SeaprofileError(
            f"--source-depth {source_depth:g} m lies below the bottom ({bottom:g} m at the source)"
        )
    return Prepared(env, loaded, source_depth, bottom, plot_path, out_path, note)
