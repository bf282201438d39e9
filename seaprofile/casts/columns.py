"""The column recogniser: one table of names and one table of unit spellings.

A header cell such as ``Temp [degC]``, ``PRES (dbar)``, ``depth_m``, ``cond mS/cm`` or
``SV m/s`` is split into a *name* and a *unit*; the name is looked up in :data:`NAMES`
(regular expressions, case-insensitive, matched against the whole normalised name) and the
unit in :data:`UNITS`. When a name could mean several variables (``t`` is temperature or
elapsed time, ``c`` is sound speed or conductivity) the unit decides; without a unit the first
candidate wins. Flag columns are ``<name>_qc`` / ``<name> flag``.

Everything here is data; adding a spelling means adding a row, not a branch.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .._validate import SeaprofileError
from ._metadata import META_KEYS, TIME_RANGE, checked_time, parse_position, parse_time

__all__ = [
    "NAMES",
    "UNITS",
    "KIND",
    "CANONICAL_UNIT",
    "DISPLAY_UNIT",
    "Unit",
    "ColumnGuess",
    "normalise_name",
    "parse_unit",
    "recognise_column",
    "parse_column_mapping",
    "parse_unit_mapping",
    "split_header",
    "META_KEYS",
    "MISSING_TOKENS",
    "parse_position",
    "parse_time",
    "checked_time",
    "TIME_RANGE",
    "ALIASES",
]

# --- names: pattern (full match on the normalised name) -> candidate variables ----------
# The normalised name is lower case with runs of spaces, '-', '.', '_' turned into one '_'.
NAMES = (
    (
        r"temperature|temp|t|water_temp(erature)?|sea_(water_)?temperature|in_situ_temp(erature)?",
        ("temperature", "elapsed_time"),
    ),
    (r"pressure|pres|press|p|sea_pressure|sea_water_pressure", ("pressure",)),
    (r"depth|dep|z|depth_below_surface", ("depth",)),
    (r"salinity|sal|psal|s|practical_salinity|sea_water_(practical_)?salinity", ("salinity",)),
    (r"conductivity|cond|sea_water_(electrical_)?conductivity", ("conductivity",)),
    (
        r"sound_speed|soundspeed|sound_velocity|speed_of_sound(_in_sea_water)?|sv|svel|c"
        r"|measured_sound_speed",
        ("measured_sound_speed", "conductivity"),
    ),
    (r"elapsed_time|time_elapsed|elapsed|time|time_since_(launch|entry)", ("elapsed_time",)),
)
_NAMES = tuple((re.compile(p), c) for p, c in NAMES)

# --- what physical kind each variable is (to match against a unit) ------------------------
KIND = {
    "temperature": "temperature",
    "pressure": "pressure",
    "depth": "length",
    "salinity": "salinity",
    "conductivity": "conductivity",
    "measured_sound_speed": "speed",
    "elapsed_time": "time",
}
CANONICAL_UNIT = {  # as written in CF files (see seaprofile._cf.VARIABLES)
    "temperature": "degree_Celsius",
    "pressure": "dbar",
    "length": "m",
    "salinity": "1",
    "conductivity": "mS cm-1",
    "speed": "m s-1",
    "time": "s",
}
DISPLAY_UNIT = {  # as written in CSV header rows
    "temperature": "degC",
    "pressure": "dbar",
    "length": "m",
    "salinity": "PSS-78",
    "conductivity": "mS/cm",
    "speed": "m/s",
    "time": "s",
}

# --- unit spellings (normalised: lower case, no spaces) -> (kind, scale, offset) ----------
# value_in_canonical_unit = value * scale + offset
UNITS = {
    # temperature -> degC (ITS-90)
    "degc": ("temperature", 1.0, 0.0),
    "c": ("temperature", 1.0, 0.0),
    "celsius": ("temperature", 1.0, 0.0),
    "degreec": ("temperature", 1.0, 0.0),
    "degreesc": ("temperature", 1.0, 0.0),
    "deg_c": ("temperature", 1.0, 0.0),
    "degree_celsius": ("temperature", 1.0, 0.0),
    "degrees_celsius": ("temperature", 1.0, 0.0),
    "degrees_c": ("temperature", 1.0, 0.0),
    "degree_c": ("temperature", 1.0, 0.0),
    "its-90": ("temperature", 1.0, 0.0),
    "its90": ("temperature", 1.0, 0.0),
    "k": ("temperature", 1.0, -273.15),
    "kelvin": ("temperature", 1.0, -273.15),
    # pressure -> dbar (sea pressure)
    "dbar": ("pressure", 1.0, 0.0),
    "db": ("pressure", 1.0, 0.0),
    "decibar": ("pressure", 1.0, 0.0),
    "decibars": ("pressure", 1.0, 0.0),
    "bar": ("pressure", 10.0, 0.0),
    "kpa": ("pressure", 0.1, 0.0),
    "mpa": ("pressure", 100.0, 0.0),
    "pa": ("pressure", 1.0e-4, 0.0),
    # length -> m
    "m": ("length", 1.0, 0.0),
    "meter": ("length", 1.0, 0.0),
    "meters": ("length", 1.0, 0.0),
    "metre": ("length", 1.0, 0.0),
    "metres": ("length", 1.0, 0.0),
    "ft": ("length", 0.3048, 0.0),
    "feet": ("length", 0.3048, 0.0),
    # practical salinity (dimensionless)
    "psu": ("salinity", 1.0, 0.0),
    "pss-78": ("salinity", 1.0, 0.0),
    "pss78": ("salinity", 1.0, 0.0),
    "pss": ("salinity", 1.0, 0.0),
    "1": ("salinity", 1.0, 0.0),
    "-": ("salinity", 1.0, 0.0),
    "unitless": ("salinity", 1.0, 0.0),
    "dimensionless": ("salinity", 1.0, 0.0),
    # conductivity -> mS/cm   (1 S/m = 10 mS/cm)
    "ms/cm": ("conductivity", 1.0, 0.0),
    "mscm-1": ("conductivity", 1.0, 0.0),
    "ms_cm": ("conductivity", 1.0, 0.0),
    "s/m": ("conductivity", 10.0, 0.0),
    "sm-1": ("conductivity", 10.0, 0.0),
    "s_m": ("conductivity", 10.0, 0.0),
    "us/cm": ("conductivity", 1.0e-3, 0.0),
    "µs/cm": ("conductivity", 1.0e-3, 0.0),
    # speed -> m/s
    "m/s": ("speed", 1.0, 0.0),
    "ms-1": ("speed", 1.0, 0.0),
    "m_s": ("speed", 1.0, 0.0),
    "mps": ("speed", 1.0, 0.0),
    "ft/s": ("speed", 0.3048, 0.0),
    # time -> s
    "s": ("time", 1.0, 0.0),
    "sec": ("time", 1.0, 0.0),
    "second": ("time", 1.0, 0.0),
    "seconds": ("time", 1.0, 0.0),
    "min": ("time", 60.0, 0.0),
    "minutes": ("time", 60.0, 0.0),
}

_FLAG_SUFFIX = re.compile(r"^(.*?)(?:_| )?(?:qc|flag|flags|quality)$", re.IGNORECASE)
_BRACKET_UNIT = re.compile(r"^(.*?)\s*[\[(]\s*([^\])]*?)\s*[\])]\s*$")


@dataclass(frozen=True)
class Unit:
    """A recognised unit: its spelling, physical kind, and conversion to the canonical unit."""

    text: str
    kind: str
    scale: float
    offset: float

    @property
    def identity(self):
        return self.scale == 1.0 and self.offset == 0.0

    def describe(self):
        target = DISPLAY_UNIT[self.kind]
        if self.identity:
            return f"{self.text} (no change)"
        parts = f"x {self.scale:g}" + (f" {self.offset:+g}" if self.offset else "")
        return f"{self.text} -> {target} ({parts})"


@dataclass(frozen=True)
class ColumnGuess:
    """What a header cell was recognised as."""

    header: str
    variable: str  # canonical variable name
    unit: Unit | None  # None when the header gave no unit
    is_flag: bool = False


def normalise_name(text):
    """Lower-case ``text`` and turn runs of spaces, '-', '.' and '_' into one '_'."""
    return re.sub(r"[\s\-._]+", "_", str(text).strip().lower()).strip("_")


def _unit_key(text):
    t = str(text).strip().lower().replace("°", "deg").replace("º", "deg").replace("^", "")
    t = re.sub(r"\s+", "", t)
    return t


def parse_unit(text):
    """Return the :class:`Unit` for a spelling such as ``'degC'``, ``'MPa'`` or ``'S m-1'``.

    Returns None for an unknown spelling.
    """
    entry = UNITS.get(_unit_key(text))
    if entry is None:
        return None
    kind, scale, offset = entry
    return Unit(str(text).strip(), kind, scale, offset)


def _match_name(name):
    key = normalise_name(name)
    for pattern, candidates in _NAMES:
        if pattern.fullmatch(key):
            return candidates
    return None


def _choose(candidates, unit):
    if unit is None:
        return candidates[0]
    for c in candidates:
        if KIND[c] == unit.kind:
            return c
    return None


def split_header(header):
    """Split a header cell into ``(name, unit_text)``; ``unit_text`` is None when absent.

    Units are taken from brackets or parentheses (``Temp [degC]``, ``PRES (dbar)``) or from a
    trailing word that is a known unit (``depth_m``, ``cond mS/cm``, ``time_s``).
    """
    h = str(header).strip()
    m = _BRACKET_UNIT.match(h)
    if m and m.group(1):
        return m.group(1).strip(), m.group(2).strip()
    if _match_name(h) is not None:
        return h, None
    tokens = re.split(r"[\s_]+", h)
    for k in (1, 2):
        if len(tokens) > k:
            unit_text = " ".join(tokens[-k:])
            name = " ".join(tokens[:-k])
            if parse_unit(unit_text) is not None and _match_name(name) is not None:
                return name, unit_text
    return h, None


def recognise_column(header, *, unit_override=None):
    """Recognise one header cell.

    Parameters
    ----------
    header : str
        The header cell as written in the file.
    unit_override : str, optional
        A unit spelling given by the user, replacing the one in the header.

    Returns
    -------
    ColumnGuess or None
        None when the name is not in :data:`NAMES`.

    Raises
    ------
    SeaprofileError
        When the name is recognised but its unit is unknown or of the wrong kind.
    """
    name, unit_text = split_header(header)
    is_flag = False
    candidates = _match_name(name)
    if candidates is None:
        m = _FLAG_SUFFIX.match(normalise_name(name).replace("_", " ").strip())
        if m and m.group(1):
            candidates = _match_name(m.group(1))
            is_flag = candidates is not None
        if candidates is None:
            return None
    if unit_override is not None:
        unit_text = unit_override
    unit = None
    if unit_text is not None and not is_flag:
        unit = parse_unit(unit_text)
        if unit is None:
            kinds = {KIND[c] for c in candidates}
            known = ", ".join(sorted(k for k, v in UNITS.items() if v[0] in kinds))
            raise SeaprofileError(
                f"unit {unit_text!r} of column {header!r} is not recognised; known spellings: "
                + known
            )
    variable = _choose(candidates, unit)
    if variable is None:
        kinds = " or ".join(sorted({KIND[c] for c in candidates}))
        raise SeaprofileError(
            f"column {header!r} looks like {candidates[0]} but its unit {unit_text!r} is a "
            f"{unit.kind} unit, not a {kinds} unit"
        )
    if unit is not None and KIND[variable] != unit.kind:  # pragma: no cover - guarded above
        raise SeaprofileError(f"unit {unit_text!r} does not fit {variable}")
    return ColumnGuess(str(header), variable, unit, is_flag)


#: other names accepted for a variable in ``columns=`` and ``units=`` mappings
ALIASES = {"sound_speed": "measured_sound_speed"}


def _variable(key, what):
    key = ALIASES.get(key, key)
    if key not in KIND:
        raise SeaprofileError(
            f"{what}: unknown variable {key!r}; expected one of {', '.join([*KIND, *ALIASES])}"
        )
    return key


def _position(text):
    """A 1-based column position written as ``3`` (or ``#3``), else None."""
    t = str(text).strip().lstrip("#")
    return int(t) if t.isdigit() else None


def _parse_pairs(text, what, positions=False):
    """``VARIABLE=VALUE`` pairs (or a dict) -> ``{variable: value}``.

    With ``positions``, a pair whose key is a 1-based column position (``2=depth``, or a
    dict ``{2: "depth"}``) maps that column to the variable: the result holds the int.
    """
    if isinstance(text, dict):
        items = [(str(k), v) for k, v in text.items()]
    elif isinstance(text, str):
        items = []
        for item in text.split(","):
            item = item.strip()
            if not item:
                continue
            if "=" not in item:
                raise SeaprofileError(
                    f"{what}: expected VARIABLE=VALUE pairs separated by commas "
                    f"(e.g. temperature=T_deg,pressure=P"
                    + (", or 1=depth,2=sound_speed by position" if positions else "")
                    + f"), got {item!r}"
                )
            items.append(tuple(s.strip() for s in item.split("=", 1)))
    else:
        raise SeaprofileError(f"{what}: expected a str or dict, got {type(text).__name__}")
    out = {}
    for key, value in items:
        if not key or value is None or not str(value).strip():
            raise SeaprofileError(f"{what}: empty variable or value in {key}={value!r}")
        where = _position(key) if positions else None
        if where is not None:  # position=variable
            if where < 1:
                raise SeaprofileError(f"{what}: column positions start at 1, got {key!r}")
            key, value = str(value).strip(), where
        elif not isinstance(value, (str, int)) or isinstance(value, bool):
            raise SeaprofileError(f"{what}: value for {key!r} must be text, got {value!r}")
        key = _variable(key, what)
        if key in out:
            raise SeaprofileError(f"{what}: {key!r} given twice")
        out[key] = value if isinstance(value, int) else str(value).strip()
    if not out:
        raise SeaprofileError(f"{what}: no VARIABLE=VALUE pairs in {text!r}")
    return out


def parse_column_mapping(text):
    """Parse a column mapping into ``{variable: header cell or 1-based position}``.

    Two spellings, which may be mixed:

    * by name, ``"temperature=T_deg,pressure=P"`` (or ``{"temperature": "T_deg"}``): the
      value is a header cell (text) or a variable name (netCDF) exactly as in the file;
    * by position, ``"1=depth,2=sound_speed"`` (or ``{1: "depth", 2: "sound_speed"}``):
      the key is the 1-based column position, the value the variable; for text files,
      with or without a header row.

    Variables are ``temperature``, ``pressure``, ``depth``, ``salinity``, ``conductivity``,
    ``measured_sound_speed`` (also spelled ``sound_speed``) and ``elapsed_time``.
    """
    out = _parse_pairs(text, "columns", positions=True)
    if len(set(out.values())) != len(out):
        raise SeaprofileError("columns: one file column is mapped to two variables")
    return out


def parse_unit_mapping(text):
    """Parse ``"pressure=MPa,depth=ft"`` into ``{"pressure": "MPa", "depth": "ft"}``.

    Every unit must be a known spelling of the variable's kind.
    """
    out = _parse_pairs(text, "units")
    for var, spelling in out.items():
        if isinstance(spelling, int):
            raise SeaprofileError(f"units: {var}={spelling} is not a unit spelling")
        unit = parse_unit(spelling)
        if unit is None or unit.kind != KIND[var]:
            known = ", ".join(sorted(k for k, v in UNITS.items() if v[0] == KIND[var]))
            raise SeaprofileError(
                f"units: {spelling!r} is not a {KIND[var]} unit for {var}; known: {known}"
            )
    return out


#: spellings read as missing (case-insensitive) in numeric columns
MISSING_TOKENS = ("", "nan", "na", "n/a", "null", "none", "-")
