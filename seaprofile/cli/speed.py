"""Sound speed at one point from temperature, salinity and depth or pressure.

Prints the sound speed of every published equation (or of one, with --equation), with a
column that says whether the point lies inside the equation's validity range.
"""

from __future__ import annotations

import math
import warnings

from .._cf import CAUTION
from .._validate import OutsideValidityWarning, SeaprofileError, check_position
from ..seawater.soundspeed import EQUATIONS, sound_speed, validity_mask
from ._common import parse_length, print_json, print_table

NAME = "speed"
HELP = "sound speed at one point, by every published equation"
EXAMPLE = """example:
  seaprofile speed --temperature 12.5 --salinity 35.1 --depth 250 --latitude 54
  seaprofile speed --temperature 2 --salinity 34.7 --pressure 4000 --latitude 30 --json"""


def add_arguments(p):
    p.add_argument(
        "--temperature", type=float, required=True, help="in-situ temperature, degC (ITS-90)"
    )
    p.add_argument("--salinity", type=float, required=True, help="practical salinity (PSS-78)")
    where = p.add_mutually_exclusive_group(required=True)
    where.add_argument("--depth", help="depth, m positive down (a 'km' suffix is accepted)")
    where.add_argument("--pressure", type=float, help="sea pressure, dbar")
    p.add_argument(
        "--latitude",
        type=float,
        help="latitude, degrees north (needed to convert depth and pressure)",
    )
    p.add_argument(
        "--longitude", type=float, help="longitude, degrees east (TEOS-10 absolute salinity)"
    )
    p.add_argument("--equation", choices=sorted(EQUATIONS), help="one equation instead of all")
    p.add_argument("--json", action="store_true", help="print a machine-readable result")


def run(args):
    depth = parse_length(args.depth, "--depth") if args.depth is not None else None
    _check_options(args)
    names = [args.equation] if args.equation else list(EQUATIONS)
    rows = []
    for name in names:
        point = dict(pressure=args.pressure, depth=depth, latitude=args.latitude, equation=name)
        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                c = float(
                    sound_speed(args.temperature, args.salinity, longitude=args.longitude, **point)
                )
                inside = bool(validity_mask(args.temperature, args.salinity, **point))
            said = [
                str(w.message) for w in caught if issubclass(w.category, OutsideValidityWarning)
            ]
            note = "" if inside else ("; ".join(said) or "outside the fitted range")
        except SeaprofileError as exc:
            if args.equation:
                raise
            c, inside, note = float("nan"), None, str(exc)
        rows.append(
            {
                "equation": name,
                "sound_speed": c,
                "valid": {True: "yes", False: "no", None: "-"}[inside],
                "note": note,
                "reference": EQUATIONS[name].reference,
            }
        )
    if args.json:
        print_json(
            {
                "inputs": {
                    "temperature_degC": args.temperature,
                    "salinity": args.salinity,
                    "depth_m": depth,
                    "pressure_dbar": args.pressure,
                    "latitude": args.latitude,
                    "longitude": args.longitude,
                },
                "units": {"sound_speed": "m/s"},
                "results": rows,
                "caution": CAUTION,
            }
        )
    else:
        print_table(rows, ["equation", "sound_speed", "valid", "note"])
        print("sound speed in m/s; 'valid' = inside the range the equation was fitted to")
        print(f"Caution: {CAUTION}")
    return 0


def _check_options(args):
    """Every number finite, the position in range: one line naming the option, exit 2."""
    for option in ("temperature", "salinity", "pressure"):
        value = getattr(args, option)
        if value is not None and not math.isfinite(value):
            raise SeaprofileError(f"--{option} must be a finite number, got {value}")
    for kind in ("latitude", "longitude"):
        value = getattr(args, kind)
        if value is not None:
            check_position(kind, value, name=f"--{kind}")
    if args.longitude is not None and args.latitude is None:
        raise SeaprofileError("--longitude needs --latitude (TEOS-10 absolute salinity)")
