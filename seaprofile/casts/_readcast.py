"""Assembling a Cast from what a reader found: position, instrument, flags, provenance.

Private to :mod:`seaprofile.casts.read`. Every container reader (text, netCDF) produces
:class:`_Raw` records; :func:`_finish` turns one into a Cast Dataset and derives salinity
from conductivity, expendable-probe depth, or an assumed salinity where needed.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from .columns import KIND, checked_time
from .model import INSTRUMENTS, MEASURED, _build_cast
from .xbt import DEFAULT_SALINITY, add_variable, assumed_salinity, complete_xbt_cast

_CAST_KWARGS = {
    "latitude",
    "longitude",
    "time",
    "instrument",
    "cast_name",
    "vessel",
    "source_file",
    "profile_id",
    *KIND,
}


@dataclass
class _Raw:
    """A cast as found in a file, before it becomes a Cast Dataset."""

    data: dict
    flags: dict = field(default_factory=dict)
    meta: dict = field(default_factory=dict)
    conversions: dict = field(default_factory=dict)
    column_map: dict = field(default_factory=dict)
    ignored: list = field(default_factory=list)
    file_format: str = "text"


def file_stem(path):
    """The file name without its format suffix (``deep.speed.txt`` -> ``deep``)."""
    from .write import FORMATS

    name = path.name
    ext = max(
        (
            e
            for exts in FORMATS.values()
            for e in exts
            if name.lower().endswith(e) and len(name) > len(e)
        ),
        key=len,
        default=None,
    )
    return name[: -len(ext)] if ext else path.stem


def guess_instrument(variables):
    """Guess the instrument from the variables present.

    A measured sound speed means a sound-speed probe (``"svp"``); elapsed time and
    temperature with neither pressure nor depth an expendable probe (``"xbt"``); anything
    else a CTD (``"ctd"``).
    """
    v = set(variables)
    if "measured_sound_speed" in v:
        return "svp"
    if {"elapsed_time", "temperature"} <= v and not v & {"pressure", "depth"}:
        return "xbt"
    return "ctd"


def _flag_values(values, path, t=None, j=None):
    v = np.where(np.isfinite(values), values, 0.0)
    bad = ~np.isin(v, _cf.FLAG_VALUES)
    if bad.any():
        k = int(np.flatnonzero(bad)[0])
        where = (int(t.lines[k]), t.label(j)) if t is not None else (None, j)
        raise InputFileError(
            path, f"expected an Argo flag {_cf.FLAG_VALUES.tolist()}, got {values[k]:g}", *where
        )
    return v.astype(np.int8)


def _finish(raw, path, *, instrument, latitude, longitude, salinity, fall_rate):
    """Build the Cast: position, instrument, flags, provenance, derived variables."""
    meta = dict(raw.meta)
    lat = float(meta.pop("latitude", np.nan) if latitude is None else latitude)
    lon = float(meta.pop("longitude", np.nan) if longitude is None else longitude)
    inst = str(instrument or meta.get("instrument") or guess_instrument(raw.data)).lower()
    if inst not in INSTRUMENTS:
        raise SeaprofileError(f"instrument must be one of {INSTRUMENTS}, got {inst!r}")
    _check_needs(path, inst, raw.data, salinity)
    extra = {k: v for k, v in meta.items() if k not in _CAST_KWARGS}
    try:
        name = meta.get("cast_name") or meta.get("profile_id") or file_stem(path)
        cast = _build_cast(
            {k: raw.data.get(k) for k in MEASURED},
            flags=raw.flags,
            latitude=lat,
            longitude=lon,
            time=meta.get("time"),
            instrument=inst,
            cast_name=name,
            vessel=meta.get("vessel", ""),
            source_file=str(path),
            attrs=extra,
        )
    except SeaprofileError as exc:
        raise InputFileError(path, str(exc)) from None
    cast.attrs["ignored_columns"] = ", ".join(raw.ignored)
    cast.attrs = _cf.record_step(
        cast.attrs,
        "read_cast",
        source_file=str(path),
        file_format=raw.file_format,
        columns=raw.column_map,
        unit_conversions=raw.conversions,
        ignored_columns=raw.ignored,
        missing_values={v: int(np.count_nonzero(~np.isfinite(a))) for v, a in raw.data.items()},
    )
    return _derive(cast, inst, salinity, fall_rate)


def _check_needs(path, inst, data, salinity):
    have = set(data)
    vertical = have & {"pressure", "depth"}
    found = f"; found {sorted(have)}"
    if inst == "xbt":
        if "temperature" not in have or not (vertical or "elapsed_time" in have):
            raise InputFileError(
                path,
                "an expendable-probe cast needs temperature and elapsed time (or depth)" + found,
            )
    elif inst == "svp":
        if "measured_sound_speed" not in have or not vertical:
            raise InputFileError(
                path, "a sound-speed probe cast needs sound speed and pressure or depth" + found
            )
    else:
        if "temperature" not in have or not vertical:
            raise InputFileError(path, "a CTD cast needs temperature and pressure or depth" + found)
        if not have & {"salinity", "conductivity"} and salinity is None:
            raise InputFileError(
                path,
                "a CTD cast needs salinity or conductivity (or give "
                "salinity= to assume one)" + found,
            )
        if "conductivity" in have and "salinity" not in have and "pressure" not in have:
            raise InputFileError(path, "salinity from conductivity needs pressure" + found)


def _derive(cast, inst, salinity, fall_rate):
    if "conductivity" in cast and "salinity" not in cast and "pressure" in cast:
        from .process import add_salinity  # the one place salinity and its flags are computed

        cast = add_salinity(cast)
    if inst == "xbt":
        sal = DEFAULT_SALINITY if salinity is None else salinity
        return complete_xbt_cast(cast, fall_rate=fall_rate, salinity=sal)
    if salinity is not None and "salinity" not in cast and "conductivity" not in cast:
        z, note = (
            (cast["depth"].values, "")
            if "depth" in cast
            else (cast["pressure"].values, " (pressure in dbar taken as depth in m)")
        )
        values, desc = assumed_salinity(z, salinity)
        cast = add_variable(cast, "salinity", values, comment=desc + note)
        cast.attrs.update(salinity_assumed="yes", salinity_source=desc + note)
        cast.attrs = _cf.record_step(cast.attrs, "assume_salinity", salinity_source=desc + note)
    return cast


#: Cast variables a foreign depth / sound-speed table may carry into a Profile
_PROFILE_VARIABLES = {
    "measured_sound_speed": "sound_speed",
    "temperature": "temperature",
    "salinity": "salinity",
    "pressure": "pressure",
}


def _raw_profile(raw, path, lines=None):
    """A Profile from a table of depth and sound speed (and optionally T, S, p).

    ``lines`` (text files) are the line numbers of the rows, to name the first depth that
    does not increase. The sound speed is taken as given (``equation="measured"``).
    """
    from xarray import Dataset

    if "depth" not in raw.data or "measured_sound_speed" not in raw.data:
        raise InputFileError(
            path,
            "a profile needs depth (m) and sound speed (m/s); found "
            f"{sorted(raw.data)}; map them with columns=",
        )
    z = raw.data["depth"]
    bad = np.flatnonzero(~np.isfinite(z) | (np.diff(z, prepend=-np.inf) <= 0))
    if bad.size:
        k = int(bad[0])
        what = "is missing" if not np.isfinite(z[k]) else f"{z[k]:g} does not increase"
        raise InputFileError(
            path,
            f"depth {what}: a profile needs depths increasing from row to row",
            None if lines is None else int(lines[k]),
            raw.column_map.get("depth"),
        )
    meta = dict(raw.meta)
    data = {}
    for var, name in _PROFILE_VARIABLES.items():
        if var in raw.data:
            values = raw.data[var]
            qc = raw.flags.get(var, np.zeros(z.size, np.int8))
            qc = np.where(np.isfinite(values), qc, _cf.MISSING).astype(np.int8)
            data[name] = ("depth", values, _cf.attrs_for(name, ancillary_variables=f"{name}_qc"))
            data[f"{name}_qc"] = ("depth", qc, _cf.flag_attrs(name))
    good = np.flatnonzero(np.isfinite(raw.data["measured_sound_speed"]))
    name = str(meta.pop("cast_name", "") or meta.pop("profile_id", "") or file_stem(path))
    coords = {
        "depth": ("depth", z, _cf.attrs_for("depth")),
        "latitude": ((), float(meta.pop("latitude", np.nan)), _cf.attrs_for("latitude")),
        "longitude": ((), float(meta.pop("longitude", np.nan)), _cf.attrs_for("longitude")),
        "time": ((), checked_time(meta.pop("time", None)), _cf.attrs_for("time")),
        "profile_id": ((), name, _cf.attrs_for("profile_id")),
    }
    extra = {k: v for k, v in meta.items() if k not in _CAST_KWARGS and k != "instrument"}
    attrs = _cf.base_attrs(
        featureType="profile",
        equation="measured",
        cast_name=name,
        source_file=str(path),
        cast_max_depth=float(z[good[-1]]) if good.size else float("nan"),
        **extra,
    )
    attrs = _cf.record_step(
        attrs,
        "read_profile",
        source_file=str(path),
        file_format=raw.file_format,
        columns=raw.column_map,
        unit_conversions=raw.conversions,
        ignored_columns=raw.ignored,
    )
    return Dataset(data, coords=coords, attrs=attrs)
