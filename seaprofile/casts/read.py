"""Read casts (and Profiles written by seaprofile) from delimited text, netCDF and JSON.

One reader per container and one column/unit recogniser (:mod:`seaprofile.casts.columns`):

* text (CSV, TSV, ``;`` or whitespace separated): optional ``# key: value`` metadata lines,
  one header row, then numeric rows;
* netCDF: one profile, or a CF discrete-sampling-geometry ``profile`` collection (contiguous
  ragged, indexed ragged or multidimensional array; CF 1.10 chapter 9), variables found by
  ``standard_name``;
* JSON as written by :func:`seaprofile.casts.write.write_json`.

Every problem raises :class:`~seaprofile.InputFileError` naming the file, line and column.

The work is split by topic into private modules: ``_readtext`` (delimited text; plain
numeric blocks go through the compiled exact parser of ``_readnumbers`` in one pass),
``_readnetcdf`` (netCDF), ``_readcast`` (assembling a Cast); this module holds the public
functions, the JSON reader and the file sniffing.
"""

from __future__ import annotations

import json
from pathlib import Path

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from .columns import parse_column_mapping, parse_unit_mapping
from .xbt import DEFAULT_FALL_RATE
from ._readcast import _finish, guess_instrument
from ._readnetcdf import STANDARD_NAMES, _netcdf_own_datasets, _netcdf_raw_casts
from ._readtext import _parse_text, _text_profile, _text_raw_cast

__all__ = ["read_cast", "read_casts", "read_profile", "read_profiles", "read_speed_table",
           "parse_column_mapping", "parse_unit_mapping", "guess_instrument"]

_NETCDF_MAGIC = (b"CDF\x01", b"CDF\x02", b"CDF\x05", b"\x89HDF")


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

