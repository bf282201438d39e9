"""Metadata of text casts: ``# key: value`` keys, positions, times (and their range).

Private to :mod:`seaprofile.casts`; :mod:`seaprofile.casts.columns` re-exports every name.
"""

from __future__ import annotations

import re

import numpy as np

from .._validate import SeaprofileError

# --- header metadata: "# key: value" lines ---------------------------------------------
#: metadata key spellings (normalised) -> the Cast field they fill
META_KEYS = {
    "latitude": "latitude",
    "lat": "latitude",
    "longitude": "longitude",
    "lon": "longitude",
    "long": "longitude",
    "time": "time",
    "date": "time",
    "datetime": "time",
    "cast_time": "time",
    "start_time": "time",
    "date_time": "time",
    "cast_name": "cast_name",
    "cast": "cast_name",
    "name": "cast_name",
    "station": "cast_name",
    "profile_id": "profile_id",
    "instrument": "instrument",
    "probe": "instrument",
    "instrument_type": "instrument",
    "vessel": "vessel",
    "ship": "vessel",
    "platform": "vessel",
    "missing_value": "missing_value",
    "missing": "missing_value",
    "fill_value": "missing_value",
    "bottom_depth": "bottom_depth",
    "water_depth": "bottom_depth",
    "depth_of_water": "bottom_depth",
    "sea_floor_depth": "bottom_depth",
    "sounding": "bottom_depth",
    "operator": "operator",
    "observer": "operator",
    "cruise": "cruise",
    "project": "project",
    "survey": "cruise",
    "serial_number": "serial_number",
    "sensor_serial_number": "serial_number",
    "comment": "comment",
    "comments": "comment",
    "note": "comment",
    "notes": "comment",
    "dataset": "dataset",
}


_POSITION = re.compile(
    r"^\s*([+-]?\d+(?:\.\d*)?)\s*(?:[°º\s:]\s*(\d+(?:\.\d*)?)\s*'?)?\s*([NSEWnsew])?\s*$"
)


def parse_position(text, which):
    """Parse a latitude/longitude: decimal degrees or degrees and decimal minutes.

    Accepts ``54.5``, ``-3.25``, ``54.5 N``, ``54 30.5 N``, ``54°30.5'N``, ``3 15 W``.

    Parameters
    ----------
    text : str
        The value as written.
    which : {"latitude", "longitude"}
        Decides the allowed hemisphere letters and range.

    Returns
    -------
    float
        Degrees north (latitude) or east (longitude); NaN for ``""``, ``"nan"``,
        ``"unknown"``.

    Raises
    ------
    SeaprofileError
        Unparsable text, minutes >= 60, a wrong hemisphere letter, or out of range.
    """
    if str(text).strip().lower() in ("", "nan", "unknown", "none"):
        return float("nan")
    m = _POSITION.match(str(text))
    if not m:
        raise SeaprofileError(
            f"expected {which} in decimal degrees (54.5) or degrees and minutes "
            f"(54 30.5 N), got {text!r}"
        )
    deg = float(m.group(1))
    minutes = float(m.group(2)) if m.group(2) else 0.0
    if minutes >= 60.0:
        raise SeaprofileError(f"{which}: minutes must be below 60, got {text!r}")
    value = abs(deg) + minutes / 60.0
    negative = m.group(1).startswith("-")
    hemi = (m.group(3) or "").upper()
    allowed = "NS" if which == "latitude" else "EW"
    if hemi and hemi not in allowed:
        raise SeaprofileError(f"{which}: hemisphere must be {' or '.join(allowed)}, got {text!r}")
    if hemi in ("S", "W"):
        if negative:
            raise SeaprofileError(f"{which}: both a minus sign and {hemi} in {text!r}")
        negative = True
    value = -value if negative else value
    limit = 90.0 if which == "latitude" else 360.0
    if not -limit <= value <= limit:
        raise SeaprofileError(f"{which} must lie in -{limit:g}..{limit:g}, got {text!r}")
    return value


def parse_time(text):
    """Parse an ISO 8601 date/time (``2024-05-01T12:30:00Z``, ``2024-05-01 12:30``).

    Offsets such as ``+02:00`` are converted to UTC. Returns ``numpy.datetime64`` (ns) or
    None for ``""``, ``"unknown"``, ``"NaT"``.
    """
    import datetime as dt

    t = str(text).strip()
    if t.lower() in ("", "unknown", "nat", "none", "nan"):
        return None
    t2 = t[:-1] + "+00:00" if t.endswith(("Z", "z")) else t
    try:
        value = dt.datetime.fromisoformat(t2.replace(" ", "T", 1) if "T" not in t2 else t2)
    except ValueError:
        raise SeaprofileError(
            f"expected an ISO 8601 time such as 2024-05-01T12:30:00Z, got {text!r}"
        ) from None
    if value.tzinfo is not None:
        value = value.astimezone(dt.timezone.utc).replace(tzinfo=None)
    return checked_time(np.datetime64(value, "us"))


#: the times a cast may carry: the span of numpy datetime64[ns], which xarray and every
#: reader and writer here use (outside it a time would silently become another date)
TIME_RANGE = (np.datetime64("1678-09-22", "s"), np.datetime64("2262-04-11", "s"))


def checked_time(value):
    """``value`` as ``numpy.datetime64[ns]`` (NaT stays NaT), never wrapped to another date.

    Parameters
    ----------
    value : str, datetime.datetime, numpy.datetime64, cftime datetime or None
        A time (UTC). ``None`` gives NaT.

    Raises
    ------
    SeaprofileError
        When the time lies outside :data:`TIME_RANGE` (1678-09-22..2262-04-11).
    """
    if value is None:
        return np.datetime64("NaT", "ns")
    if hasattr(value, "isoformat") and not isinstance(value, np.datetime64):
        value = value.isoformat()  # datetime, cftime: never through int nanoseconds
    t = np.datetime64(value)
    if np.isnat(t):
        return np.datetime64("NaT", "ns")
    coarse = t.astype("datetime64[s]")
    if not TIME_RANGE[0] <= coarse < TIME_RANGE[1]:
        raise SeaprofileError(
            f"time {np.datetime_as_string(coarse)} is outside the range seaprofile can hold "
            f"({TIME_RANGE[0]}..{TIME_RANGE[1]}, numpy datetime64[ns]); correct the time"
        )
    return t.astype("datetime64[ns]")
