"""Read casts (and Profiles written by seaprofile) from delimited text, netCDF and JSON.

One reader per container and one column/unit recogniser (:mod:`seaprofile.casts.columns`):

* text (CSV, TSV, ``;`` or whitespace separated): optional ``# key: value`` metadata lines,
  one header row, then numeric rows;
* netCDF: one profile, or a CF discrete-sampling-geometry ``profile`` collection (contiguous
  ragged, indexed ragged or multidimensional array; CF 1.10 chapter 9), variables found by
  ``standard_name``;
* JSON as written by :func:`seaprofile.casts.write.write_json`.

Every problem raises :class:`~seaprofile.InputFileError` naming the file, line and column.
"""

from __future__ import annotations

import csv
import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from .columns import (KIND, META_KEYS, MISSING_TOKENS, normalise_name, parse_column_mapping,
                      parse_position, parse_time, parse_unit, parse_unit_mapping,
                      recognise_column, split_header)
from .model import INSTRUMENTS, make_cast
from .xbt import DEFAULT_FALL_RATE, DEFAULT_SALINITY, add_variable, assumed_salinity
from .xbt import complete_xbt_cast

__all__ = ["read_cast", "read_casts", "read_profile", "read_profiles", "read_speed_table",
           "parse_column_mapping", "parse_unit_mapping", "guess_instrument"]

_NETCDF_MAGIC = (b"CDF\x01", b"CDF\x02", b"CDF\x05", b"\x89HDF")
_CAST_KWARGS = {"latitude", "longitude", "time", "instrument", "cast_name", "vessel",
                "source_file", "profile_id", *KIND}
#: CF standard names -> Cast variables (netCDF files)
STANDARD_NAMES = {
    "sea_water_temperature": "temperature",
    "sea_water_practical_salinity": "salinity",
    "sea_water_salinity": "salinity",
    "sea_water_pressure": "pressure",
    "sea_water_pressure_due_to_sea_water": "pressure",
    "depth": "depth",
    "sea_water_electrical_conductivity": "conductivity",
    "speed_of_sound_in_sea_water": "measured_sound_speed",
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


# --- public API ------------------------------------------------------------------------


def read_cast(path, *, columns=None, units=None, instrument=None, latitude=None,
              longitude=None, salinity=None, fall_rate=DEFAULT_FALL_RATE, delimiter=None):
    """Read one cast from a text, netCDF or JSON file.

    Parameters
    ----------
    path : str or pathlib.Path
        The file; its kind is found from its first bytes (netCDF, JSON, else text).
    columns : dict or str, optional
        Explicit mapping ``{"temperature": "T_deg", ...}`` or ``"temperature=T_deg,..."``;
        values are header cells (text) or variable names (netCDF). Overrides the guess.
    units : dict or str, optional
        Unit overrides such as ``{"pressure": "MPa"}`` or ``"pressure=MPa"``.
    instrument : {"ctd", "xbt", "svp"}, optional
        Default: the file's ``instrument`` metadata, else :func:`guess_instrument`.
    latitude, longitude : float, optional
        Position, degrees north / east; overrides the file's metadata.
    salinity : float or (array_like, array_like), optional
        Salinity assumed when the cast has neither salinity nor conductivity: a constant,
        or a reference profile ``(depths_m, salinities)``. Expendable probes default to
        35.0; a CTD cast without salinity/conductivity needs it; a sound-speed probe uses
        it only when given.
    fall_rate : str or (float, float)
        Expendable probes without a depth column: a key of
        :data:`seaprofile.casts.xbt.FALL_RATES` (default ``"hanawa1995_t7"``) or ``(a, b)``.
    delimiter : str, optional
        Text files: ``","``, ``"\\t"``, ``";"`` or ``"whitespace"``; default: guessed from
        the header row (comma, tab, semicolon, else whitespace).

    Returns
    -------
    xarray.Dataset
        A Cast (DEVELOPERS.md, "The data model"): missing values NaN and flagged 9,
        ``attrs["ignored_columns"]`` lists unrecognised columns, the column mapping and
        unit conversions are recorded in ``processing_steps`` and ``history``.

    Raises
    ------
    InputFileError
        The message names the file, line and column and what was expected.

    Notes
    -----
    Text: ``# key: value`` lines before the header give metadata (``latitude``,
    ``longitude`` in decimal degrees or ``54 30.5 N``; ``time`` ISO 8601; ``cast_name``,
    ``instrument``, ``vessel``, ``missing_value``; other keys are kept as attributes).
    ``""``, ``nan``, ``NA``, ``N/A``, ``null``, ``-`` are missing; a numeric sentinel such as
    -9999 only when declared by ``missing_value``. In whitespace-separated files the header
    cells cannot contain spaces (write ``Temp[degC]``). ``<name>_qc`` columns give Argo flags.
    JSON files written by seaprofile are returned exactly as written.
    """
    casts = read_casts(path, columns=columns, units=units, instrument=instrument,
                       latitude=latitude, longitude=longitude, salinity=salinity,
                       fall_rate=fall_rate, delimiter=delimiter)
    if len(casts) != 1:
        raise InputFileError(path, f"holds {len(casts)} casts; use read_casts to read them all")
    return casts[0]


def read_casts(path, *, columns=None, units=None, instrument=None, latitude=None,
               longitude=None, salinity=None, fall_rate=DEFAULT_FALL_RATE, delimiter=None):
    """Read every cast in a file (netCDF/JSON collections hold several; text holds one).

    Parameters are those of :func:`read_cast`; returns a list of Casts.
    """
    path = _check_path(path)
    columns = parse_column_mapping(columns) if columns else {}
    units = parse_unit_mapping(units) if units else {}
    kind = _sniff(path)
    if kind == "json":
        out = _read_json(path)
        _require_dim(path, out, "sample", "read_profiles")
        return [_override_position(ds, latitude, longitude) for ds in out]
    if kind == "netcdf":
        raws = _netcdf_raw_casts(path, columns, units)
    else:
        table = _parse_text(path, delimiter)
        if table.meta.get("dataset", ("cast",))[0].strip().lower() == "profile":
            raise InputFileError(path, "holds a Profile, not a cast; use read_profile")
        raws = [_text_raw_cast(table, columns, units)]
    return [_finish(raw, path, instrument=instrument, latitude=latitude, longitude=longitude,
                    salinity=salinity, fall_rate=fall_rate) for raw in raws]


def read_profile(path):
    """Read one Profile written by :mod:`seaprofile.casts.write` (netCDF, CSV or JSON)."""
    out = read_profiles(path)
    if len(out) != 1:
        raise InputFileError(path, f"holds {len(out)} profiles; use read_profiles")
    return out[0]


def read_profiles(path):
    """Read every Profile in a file written by :mod:`seaprofile.casts.write`."""
    path = _check_path(path)
    kind = _sniff(path)
    if kind == "json":
        out = _read_json(path)
    elif kind == "netcdf":
        out = _netcdf_own_datasets(path)
    else:
        out = [_text_profile(_parse_text(path, None))]
    _require_dim(path, out, "depth", "read_casts")
    return out


def read_speed_table(path):
    """Read a depth / sound-speed table as written by ``write_speed_table``.

    Returns
    -------
    depth : numpy.ndarray
        Depth, m, positive down.
    sound_speed : numpy.ndarray
        Sound speed, m/s.
    """
    path = _check_path(path)
    t = _parse_text(path, None, header=False)
    if len(t.headers) != 2:
        raise InputFileError(path, f"expected 2 columns (depth, sound speed), found "
                             f"{len(t.headers)}", int(t.lines[0]) if t.lines.size else None)
    return t.numbers(0), t.numbers(1)


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


# --- delimited text ----------------------------------------------------------------------


@dataclass
class _Table:
    path: Path
    meta: dict  # key -> (value, line)
    headers: list
    header_line: int
    rows: list  # list of lists of str
    lines: np.ndarray  # line number of each row

    def label(self, j):
        return f"{j + 1} ({self.headers[j]})"

    def numbers(self, j, missing_value=None):
        """Column ``j`` as float64; missing spellings -> NaN; errors name line and column."""
        cells = np.array([r[j] for r in self.rows], dtype=str)
        lowered = np.char.lower(np.char.strip(cells))
        missing = np.isin(lowered, MISSING_TOKENS)
        cells = np.where(missing, "nan", cells)
        try:
            values = cells.astype(np.float64)
        except ValueError:
            values = None
        if values is None or not np.all(np.isfinite(values) | missing):
            for k, s in enumerate(cells):
                try:
                    ok = np.isfinite(float(s)) or missing[k]
                except ValueError:
                    ok = False
                if not ok:
                    raise InputFileError(self.path, f"expected a number, got {str(s)!r}",
                                         int(self.lines[k]), self.label(j))
        if missing_value is not None:
            values[values == missing_value] = np.nan
        return values


def _parse_text(path, delimiter, header=True):
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputFileError(path, f"not UTF-8 text (undecodable byte at offset {exc.start})")
    if not text.strip():
        raise InputFileError(path, "the file is empty")
    meta, head, rows, lines = {}, None, [], []
    for i, line in enumerate(text.splitlines(), 1):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            if head is None and not rows:
                _meta_line(s[1:], i, meta)
            continue
        if head is None and header:
            head = (i, s)
        else:
            rows.append(s)
            lines.append(i)
    if header and head is None:
        raise InputFileError(path, "no header row (only comment lines)", len(text.splitlines()))
    if not rows:
        where = head[0] if head else None
        raise InputFileError(path, "no data rows" + (" after the header" if head else ""), where)
    delim = _delimiter(path, delimiter, head[1] if head else rows[0])
    split = (lambda items: [s.split() for s in items]) if delim is None else (
        lambda items: [[c.strip() for c in r] for r in csv.reader(items, delimiter=delim)])
    cells = split(rows)
    if head:
        headers = split([head[1]])[0]
        for j, h in enumerate(headers):
            if not h:
                raise InputFileError(path, "empty header cell", head[0], j + 1)
    else:
        headers = [f"column {j + 1}" for j in range(len(cells[0]))]
    n = len(headers)
    lengths = np.fromiter((len(r) for r in cells), dtype=np.int64, count=len(cells))
    bad = np.flatnonzero(lengths != n)
    if bad.size:
        k = int(bad[0])
        raise InputFileError(path, f"expected {n} fields as in the header, got {lengths[k]} "
                             "(ragged row)", lines[k], min(int(lengths[k]), n) + 1)
    return _Table(path, meta, headers, head[0] if head else 0, cells,
                  np.asarray(lines, dtype=np.int64))


def _delimiter(path, given, line):
    names = {",": ",", "comma": ",", "\t": "\t", "tab": "\t", ";": ";", "semicolon": ";",
             "whitespace": None, " ": None, "space": None}
    if given is not None:
        if given not in names:
            raise SeaprofileError(f"delimiter must be one of {sorted(names)}, got {given!r}")
        return names[given]
    for d in (",", "\t", ";"):
        if d in line:
            return d
    return None


def _meta_line(text, lineno, meta):
    if ":" not in text:
        return
    key, value = (s.strip() for s in text.split(":", 1))
    if not key:
        return
    norm = normalise_name(key)
    name = META_KEYS.get(norm, key.replace(" ", "_"))
    if name in meta:
        meta[name] = (meta[name][0] + "\n" + value, meta[name][1])
    else:
        meta[name] = (value, lineno)


def _meta_values(path, meta):
    """Turn ``# key: value`` metadata into Cast fields and attributes."""
    out = {}
    for key, (value, line) in meta.items():
        try:
            if key in ("latitude", "longitude"):
                out[key] = parse_position(value, key)
            elif key == "time":
                out[key] = parse_time(value)
            elif key == "instrument":
                if value.strip().lower() in INSTRUMENTS:
                    out[key] = value.strip().lower()
                else:
                    out["instrument_description"] = value
            elif key == "missing_value":
                out[key] = float(value)
            elif key == "processing_steps":
                steps = json.loads(value)
                if not isinstance(steps, list):
                    raise ValueError
                out[key] = json.dumps(steps)
            elif key != "dataset":
                out[key] = value
        except (SeaprofileError, ValueError) as exc:
            msg = str(exc) if isinstance(exc, SeaprofileError) else f"bad value {value!r}"
            raise InputFileError(path, f"metadata {key!r}: {msg}", line) from None
    return out


def _text_raw_cast(t, columns, units):
    path = t.path
    used, flags, ignored = {}, {}, []
    for var, head in columns.items():
        idx = [j for j, h in enumerate(t.headers) if h == head] or [
            j for j, h in enumerate(t.headers) if h.lower() == head.lower()]
        if len(idx) != 1:
            raise InputFileError(path, f"columns: {var}={head!r} matches {len(idx)} header "
                                 f"cells; the header has {t.headers}", t.header_line)
        unit_text = units.get(var, split_header(head)[1])
        unit = None if unit_text is None else parse_unit(unit_text)
        if unit_text is not None and (unit is None or unit.kind != KIND[var]):
            raise InputFileError(path, f"unit {unit_text!r} is not a {KIND[var]} unit for {var}",
                                 t.header_line, t.label(idx[0]))
        used[var] = (idx[0], unit)
    taken = {j for j, _ in used.values()}
    for j, h in enumerate(t.headers):
        if j in taken:
            continue
        try:
            g = recognise_column(h)
        except SeaprofileError as exc:
            raise InputFileError(path, str(exc), t.header_line, t.label(j)) from None
        if g is None or (not g.is_flag and g.variable in columns):
            ignored.append(h)
        elif g.is_flag:
            if g.variable in flags:
                raise InputFileError(path, f"two flag columns for {g.variable}",
                                     t.header_line, t.label(j))
            flags[g.variable] = j
        elif g.variable in used:
            first = t.label(used[g.variable][0])
            raise InputFileError(
                path, f"columns {first} and {t.label(j)} both look like {g.variable}; choose "
                f"one with columns={{'{g.variable}': ...}}", t.header_line, t.label(j))
        else:
            unit = parse_unit(units[g.variable]) if g.variable in units else g.unit
            used[g.variable] = (j, unit)
    if not used:
        raise InputFileError(path, f"no recognisable columns in the header {t.headers}; map "
                             "them with columns=", t.header_line)
    meta = _meta_values(path, t.meta)
    missing_value = meta.pop("missing_value", None)
    raw = _Raw({}, meta=meta, ignored=ignored, file_format="text")
    for var, (j, unit) in used.items():
        values = t.numbers(j, missing_value)
        if unit is not None and not unit.identity:
            values = values * unit.scale + unit.offset
            raw.conversions[var] = unit.describe()
        raw.data[var] = values
        raw.column_map[var] = t.headers[j]
    for var, j in flags.items():
        if var not in raw.data:
            ignored.append(t.headers[j])
            continue
        raw.flags[var] = _flag_values(t.numbers(j), path, t, j)
    return raw


def _flag_values(values, path, t=None, j=None):
    v = np.where(np.isfinite(values), values, 0.0)
    bad = ~np.isin(v, _cf.FLAG_VALUES)
    if bad.any():
        k = int(np.flatnonzero(bad)[0])
        where = (int(t.lines[k]), t.label(j)) if t is not None else (None, j)
        raise InputFileError(path, f"expected an Argo flag {_cf.FLAG_VALUES.tolist()}, got "
                             f"{values[k]:g}", *where)
    return v.astype(np.int8)


def _text_profile(t):
    """A Profile from a CSV written by ``write_csv`` (columns named ``name [unit]``)."""
    names = [split_header(h)[0].strip() for h in t.headers]
    if "depth" not in names:
        raise InputFileError(t.path, "a profile file needs a 'depth [m]' column", t.header_line)
    meta = _meta_values(t.path, t.meta)
    meta.pop("missing_value", None)
    variables = {}
    for j, name in enumerate(names):
        values = t.numbers(j)
        if name.endswith("_qc"):
            variables[name] = (_flag_values(values, t.path, t, j), _cf.flag_attrs(name[:-3]))
        elif name == "samples_per_bin":
            variables[name] = (np.nan_to_num(values).astype(np.int32), _cf.attrs_for(name))
        else:
            variables[name] = (values, _cf.attrs_for(name))
    depth = variables.pop("depth")
    coords = {"depth": ("depth", depth[0], depth[1])}
    for c in ("latitude", "longitude"):
        coords[c] = ((), float(meta.pop(c, np.nan)), _cf.attrs_for(c))
    t0 = meta.pop("time", None)
    coords["time"] = ((), np.datetime64("NaT", "ns") if t0 is None else t0, _cf.attrs_for("time"))
    coords["profile_id"] = ((), str(meta.pop("profile_id", meta.get("cast_name", t.path.stem))),
                            {"cf_role": "profile_id", "long_name": "cast name"})
    data = {k: ("depth", v, a) for k, (v, a) in variables.items()}
    return xr.Dataset(data, coords=coords, attrs=meta)


# --- netCDF ----------------------------------------------------------------------------


def _open_netcdf(path):
    try:
        with xr.open_dataset(path, decode_timedelta=False) as f:
            return f.load()
    except Exception as exc:  # netCDF4/HDF5 raise many kinds
        raise InputFileError(path, f"cannot read as netCDF: {exc}") from None


def _netcdf_split(ds, path):
    """Split a netCDF profile file into per-profile ``(samples, instance values)`` dicts."""
    role = [v for v in ds.variables if ds[v].attrs.get("cf_role") == "profile_id"]
    count = [v for v in ds.variables if "sample_dimension" in ds[v].attrs]
    index = [v for v in ds.variables if "instance_dimension" in ds[v].attrs]
    if count:
        inst, obs = ds[count[0]].dims[0], ds[count[0]].attrs["sample_dimension"]
        ends = np.cumsum(np.asarray(ds[count[0]].values, dtype=np.int64))
        if obs not in ds.dims or ends[-1] != ds.sizes[obs]:
            raise InputFileError(path, f"row sizes in {count[0]!r} add up to {ends[-1]}, but "
                                 f"dimension {obs!r} has {ds.sizes.get(obs)} samples",
                                 column=count[0])
        select = [slice(int(e - n), int(e)) for e, n in zip(ends, ds[count[0]].values)]
    elif index:
        inst, obs = ds[index[0]].attrs["instance_dimension"], ds[index[0]].dims[0]
        idx = np.asarray(ds[index[0]].values)
        if inst not in ds.dims:
            raise InputFileError(path, f"instance dimension {inst!r} not in the file",
                                 column=index[0])
        select = [np.flatnonzero(idx == i) for i in range(ds.sizes[inst])]
    else:
        inst = ds[role[0]].dims[0] if role and ds[role[0]].ndim == 1 else None
        two_d = [v for v in ds.data_vars if inst is not None and ds[v].ndim == 2
                 and inst in ds[v].dims]
        if two_d:
            obs = [d for d in ds[two_d[0]].dims if d != inst][0]
            select = [i for i in range(ds.sizes[inst])]
        else:
            data = [v for v in ds.variables if ds[v].ndim == 1 and ds[v].dims[0] != inst
                    and ds[v].attrs.get("standard_name") in STANDARD_NAMES]
            if not data:
                raise InputFileError(path, "no variable with a recognised standard_name ("
                                     + ", ".join(STANDARD_NAMES) + ")")
            obs = ds[data[0]].dims[0]
            inst, select = None, [slice(None)]
    samples, instances = [], []
    for i, sel in enumerate(select):
        s, inst_vals = {}, {}
        for name, var in ds.variables.items():
            dims = var.dims
            if dims == (obs,):
                s[name] = var.values[sel] if (count or index) else var.values
            elif set(dims) == {inst, obs}:
                s[name] = var.transpose(inst, obs).values[i]
            elif inst is not None and dims == (inst,):
                inst_vals[name] = var.values[i]
            elif dims == ():
                inst_vals[name] = var.values[()]
        if not (count or index) and inst is not None:  # drop trailing padding
            rows = [v for k, v in s.items() if set(ds[k].dims) == {inst, obs}
                    and v.dtype.kind == "f"]
            keep = np.any(np.isfinite(np.vstack(rows)), axis=0) if rows else None
            if keep is not None and keep.any():
                last = int(np.flatnonzero(keep)[-1]) + 1
                s = {k: v[:last] for k, v in s.items()}
        samples.append(s)
        instances.append(inst_vals)
    return samples, instances, role[0] if role else None


def _instance_meta(ds, inst_vals, samples, role):
    meta = {}
    for name, value in list(inst_vals.items()) + list(samples.items()):
        sn = ds[name].attrs.get("standard_name")
        v = np.asarray(value).ravel()
        if sn in ("latitude", "longitude", "time") and sn not in meta and v.size:
            if sn == "time":
                try:
                    t = np.asarray(v[0]).astype("datetime64[ns]") if v[0] is not None else None
                except (TypeError, ValueError):
                    t = None
                meta["time"] = None if t is None or np.isnat(t) else t
            else:
                meta[sn] = float(v[0])
    if role is not None:
        meta["cast_name"] = _text(inst_vals.get(role, ""))
    return meta


def _text(value):
    v = np.asarray(value).item()
    return v.decode("utf-8").rstrip("\x00") if isinstance(v, bytes) else str(v)


def _own_attrs(inst_vals):
    text = inst_vals.get("profile_attributes")
    if text is None:
        return None
    return json.loads(_text(text))


def _netcdf_raw_casts(path, columns, units):
    ds = _open_netcdf(path)
    samples, instances, role = _netcdf_split(ds, path)
    chosen = {}
    for name, var in ds.variables.items():
        if name in columns.values() or "flag_values" in var.attrs or "flag_meanings" in var.attrs:
            continue
        sn = var.attrs.get("standard_name")
        guess = STANDARD_NAMES.get(sn)
        if guess is None and sn is None and name not in ds.dims:
            try:
                g = recognise_column(name, unit_override=var.attrs.get("units"))
            except SeaprofileError:
                g = None
            guess = g.variable if g is not None and not g.is_flag and g.unit else None
        if guess is None or guess in columns:
            continue
        if guess in chosen:
            raise InputFileError(path, f"variables {chosen[guess]!r} and {name!r} are both "
                                 f"{guess}; choose one with columns={{'{guess}': ...}}",
                                 column=name)
        chosen[guess] = name
    for var, name in columns.items():
        if name not in ds.variables:
            raise InputFileError(path, f"columns: no variable {name!r} for {var}", column=name)
        chosen[var] = name
    raws = []
    for s, inst_vals in zip(samples, instances):
        own = _own_attrs(inst_vals)
        if own is not None and own.get("dimension") != "sample":
            raise InputFileError(path, "holds profiles, not casts; use read_profiles")
        raw = _Raw({}, file_format="netcdf")
        meta = {k: v for k, v in ds.attrs.items() if k not in ("featureType",)}
        meta.update(own["attributes"] if own else {})
        for var, name in chosen.items():
            if name not in s or (own is not None and var not in own["variables"]):
                continue
            values = np.asarray(s[name], dtype=np.float64)
            unit_text = units.get(var, ds[name].attrs.get("units"))
            unit = parse_unit(unit_text) if unit_text is not None else None
            if unit_text is not None and (unit is None or unit.kind != KIND[var]):
                raise InputFileError(path, f"units {unit_text!r} of {name!r} are not a "
                                     f"{KIND[var]} unit", column=name)
            if unit is not None and not unit.identity:
                values = values * unit.scale + unit.offset
                raw.conversions[var] = unit.describe()
            raw.data[var] = values
            raw.column_map[var] = name
            for anc in ds[name].attrs.get("ancillary_variables", "").split():
                if anc in s and ("flag_values" in ds[anc].attrs or "status_flag"
                                 in ds[anc].attrs.get("standard_name", "")):
                    raw.flags[var] = _flag_values(np.asarray(s[anc], np.float64), path, None, anc)
                    break
        raw.meta = {k: v for k, v in meta.items() if k not in ("latitude", "longitude")}
        raw.meta.update(_instance_meta(ds, inst_vals, s, role))
        inst = str(raw.meta.get("instrument", "")).lower()
        if "instrument" in raw.meta and inst not in INSTRUMENTS:
            raw.meta["instrument_description"] = raw.meta.pop("instrument")
        raws.append(raw)
    return raws


def _netcdf_own_datasets(path):
    """Datasets written by ``write_netcdf``, rebuilt variable by variable."""
    ds = _open_netcdf(path)
    samples, instances, role = _netcdf_split(ds, path)
    out = []
    for s, inst_vals in zip(samples, instances):
        own = _own_attrs(inst_vals)
        if own is None:
            raise InputFileError(path, "not written by seaprofile (no profile_attributes)")
        dim = own["dimension"]
        meta = _instance_meta(ds, inst_vals, s, role)
        t = meta.get("time")
        coords = {
            "latitude": ((), meta.get("latitude", np.nan), _cf.attrs_for("latitude")),
            "longitude": ((), meta.get("longitude", np.nan), _cf.attrs_for("longitude")),
            "time": ((), np.datetime64("NaT", "ns") if t is None else t, _cf.attrs_for("time")),
            "profile_id": ((), meta.get("cast_name", ""), dict(ds[role].attrs)),
        }
        data = {}
        for name in own["variables"]:
            attrs = {k: v for k, v in ds[name].attrs.items() if k != "coordinates"}
            values = np.asarray(s[name]).astype(ds[name].dtype)
            if name == dim:
                coords[name] = (dim, values, attrs)
            else:
                data[name] = (dim, values, attrs)
        out.append(xr.Dataset(data, coords=coords, attrs=own["attributes"]))
    return out


# --- JSON ------------------------------------------------------------------------------


def _read_json(path):
    from .write import dataset_from_dict

    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        line = getattr(exc, "lineno", None)
        col = getattr(exc, "colno", None)
        raise InputFileError(path, f"not valid JSON: {getattr(exc, 'msg', exc)}", line, col)
    if not isinstance(doc, dict) or doc.get("format") != "seaprofile":
        raise InputFileError(path, "not a seaprofile JSON file (no \"format\": \"seaprofile\")")
    items = doc.get("datasets", [doc["dataset"]] if "dataset" in doc else None)
    if not items:
        raise InputFileError(path, "no datasets in the JSON file")
    try:
        return [dataset_from_dict(d) for d in items]
    except (KeyError, TypeError, ValueError) as exc:
        raise InputFileError(path, f"malformed seaprofile JSON: {exc!r}") from None


# --- assembling a Cast -------------------------------------------------------------------


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
        cast = make_cast(**raw.data, latitude=lat, longitude=lon, time=meta.get("time"),
                         instrument=inst,
                         cast_name=meta.get("cast_name") or meta.get("profile_id") or path.stem,
                         vessel=meta.get("vessel", ""), source_file=str(path), **extra)
    except SeaprofileError as exc:
        raise InputFileError(path, str(exc)) from None
    for var in raw.data:
        qc = raw.flags.get(var, np.zeros(cast.sizes["sample"], np.int8))
        missing = ~np.isfinite(cast[var].values)
        cast[f"{var}_qc"].values[...] = np.where(missing, _cf.MISSING, qc)
    cast.attrs["ignored_columns"] = ", ".join(raw.ignored)
    cast.attrs = _cf.record_step(
        cast.attrs, "read_cast", source_file=str(path), file_format=raw.file_format,
        columns=raw.column_map, unit_conversions=raw.conversions, ignored_columns=raw.ignored,
        missing_values={v: int(np.count_nonzero(~np.isfinite(a))) for v, a in raw.data.items()})
    return _derive(cast, inst, salinity, fall_rate)


def _check_needs(path, inst, data, salinity):
    have = set(data)
    vertical = have & {"pressure", "depth"}
    found = f"; found {sorted(have)}"
    if inst == "xbt":
        if "temperature" not in have or not (vertical or "elapsed_time" in have):
            raise InputFileError(path, "an expendable-probe cast needs temperature and "
                                 "elapsed time (or depth)" + found)
    elif inst == "svp":
        if "measured_sound_speed" not in have or not vertical:
            raise InputFileError(path, "a sound-speed probe cast needs sound speed and "
                                 "pressure or depth" + found)
    else:
        if "temperature" not in have or not vertical:
            raise InputFileError(path, "a CTD cast needs temperature and pressure or depth"
                                 + found)
        if not have & {"salinity", "conductivity"} and salinity is None:
            raise InputFileError(path, "a CTD cast needs salinity or conductivity (or give "
                                 "salinity= to assume one)" + found)
        if "conductivity" in have and "salinity" not in have and "pressure" not in have:
            raise InputFileError(path, "salinity from conductivity needs pressure" + found)


def _derive(cast, inst, salinity, fall_rate):
    if "conductivity" in cast and "salinity" not in cast and "pressure" in cast:
        from ..seawater.state import salinity_from_conductivity

        sal = np.asarray(salinity_from_conductivity(cast["conductivity"].values,
                                                    cast["temperature"].values,
                                                    cast["pressure"].values), dtype=np.float64)
        qc = np.maximum.reduce([cast[f"{v}_qc"].values
                                for v in ("conductivity", "temperature", "pressure")])
        qc = np.where(np.isfinite(sal), qc, _cf.MISSING).astype(np.int8)
        cast = add_variable(cast, "salinity", sal, qc, comment="computed from conductivity, "
                            "temperature and pressure (PSS-78 via gsw.SP_from_C)")
        cast.attrs["salinity_source"] = "computed from conductivity (PSS-78)"
        cast.attrs = _cf.record_step(cast.attrs, "salinity_from_conductivity", method="PSS-78")
    if inst == "xbt":
        sal = DEFAULT_SALINITY if salinity is None else salinity
        return complete_xbt_cast(cast, fall_rate=fall_rate, salinity=sal)
    if salinity is not None and "salinity" not in cast and "conductivity" not in cast:
        z, note = ((cast["depth"].values, "") if "depth" in cast else
                   (cast["pressure"].values, " (pressure in dbar taken as depth in m)"))
        values, desc = assumed_salinity(z, salinity)
        cast = add_variable(cast, "salinity", values, comment=desc + note)
        cast.attrs.update(salinity_assumed="yes", salinity_source=desc + note)
        cast.attrs = _cf.record_step(cast.attrs, "assume_salinity", salinity_source=desc + note)
    return cast


# --- helpers ---------------------------------------------------------------------------


def _check_path(path):
    if not isinstance(path, (str, Path)):
        raise SeaprofileError(f"path must be a str or pathlib.Path, got {type(path).__name__}")
    p = Path(path)
    if not p.is_file():
        raise InputFileError(p, "is a directory, not a file" if p.is_dir() else "no such file")
    return p


def _sniff(path):
    try:
        with open(path, "rb") as f:
            head = f.read(64)
    except OSError as exc:
        raise InputFileError(path, f"cannot open: {exc.strerror}") from None
    if head.startswith(_NETCDF_MAGIC):
        return "netcdf"
    if head.lstrip(b"\xef\xbb\xbf \t\r\n").startswith((b"{", b"[")):
        return "json"
    return "text"


def _require_dim(path, datasets, dim, other):
    for ds in datasets:
        if dim not in ds.dims:
            what = "casts" if dim == "depth" else "profiles"
            raise InputFileError(path, f"holds {what}, not the kind asked for; use {other}")


def _override_position(ds, latitude, longitude):
    ds = ds.copy()
    for name, value in (("latitude", latitude), ("longitude", longitude)):
        if value is not None:
            ds = ds.assign_coords({name: ((), float(value), _cf.attrs_for(name))})
    return ds
