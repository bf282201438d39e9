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
import os
import stat
from pathlib import Path

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from ._readcast import _finish, _raw_profile, guess_instrument
from ._readnetcdf import _netcdf_own_datasets, _netcdf_raw_casts
from ._readtext import _decode, _parse_text, _text_profile, _text_raw_cast
from .columns import parse_column_mapping, parse_unit_mapping
from .model import INSTRUMENTS, measured_variables
from .xbt import DEFAULT_FALL_RATE

__all__ = [
    "read_cast",
    "read_casts",
    "read_profile",
    "read_profiles",
    "read_speed_table",
    "parse_column_mapping",
    "parse_unit_mapping",
    "guess_instrument",
    "check_input_file",
]

_NETCDF_MAGIC = (b"CDF\x01", b"CDF\x02", b"CDF\x05", b"\x89HDF")
_UNICODE_BOMS = (
    (b"\x00\x00\xfe\xff", "utf-32"),
    (b"\xff\xfe\x00\x00", "utf-32"),
    (b"\xfe\xff", "utf-16"),
    (b"\xff\xfe", "utf-16"),
)


# --- public API ------------------------------------------------------------------------


def read_cast(
    path,
    *,
    columns=None,
    units=None,
    instrument=None,
    latitude=None,
    longitude=None,
    salinity=None,
    fall_rate=DEFAULT_FALL_RATE,
    delimiter=None,
):
    """Read one cast from a text, netCDF or JSON file.

    Parameters
    ----------
    path : str or pathlib.Path
        The file; its kind is found from its first bytes (netCDF, JSON, else text).
    columns : dict or str, optional
        Explicit mapping ``{"temperature": "T_deg", ...}`` or ``"temperature=T_deg,..."``;
        values are header cells (text) or variable names (netCDF). Overrides the guess.
        Text files may also be mapped by 1-based column position, ``"1=depth,2=sound_speed"``
        or ``{1: "depth", 2: "sound_speed"}`` (with or without a header row); see
        :func:`~seaprofile.casts.columns.parse_column_mapping`.
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
        :data:`seaprofile.casts.xbt.FALL_RATES` (default ``"hanawa1995"``) or ``(a, b)``.
    delimiter : str, optional
        Text files: ``","``, ``"\\t"``, ``";"`` or ``"whitespace"``; default: guessed from
        the header (or first) row: tab, else semicolon, else comma, else whitespace.

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
    ``instrument``, ``vessel``, ``bottom_depth`` (m), ``operator``, ``cruise``,
    ``missing_value`` and the other spellings of
    :data:`~seaprofile.casts.columns.META_KEYS`). Any other comment line (free text, with a
    colon or not) goes, as written, into one ``comment`` attribute; only files written by
    :func:`~seaprofile.casts.write.write_csv` bring back every attribute they hold.
    A file whose first row holds only numbers has no header row: two columns are depth (m)
    and sound speed (m/s), as the plain speed table is written; more columns need a
    positional ``columns=`` mapping. ``""``, ``nan``, ``NA``, ``N/A``, ``null``, ``-`` are
    missing; a numeric sentinel such as -9999 only when declared by ``missing_value``.
    Where the delimiter is not a comma, decimal commas (``12,5``) are read as decimal
    points. Text is UTF-8 (with or without BOM) or UTF-16/32 with a BOM. In
    whitespace-separated files the header cells cannot contain spaces (write
    ``Temp[degC]``). ``<name>_qc`` columns give Argo flags. Cast times must lie within
    1678-09-22..2262-04-11 (numpy datetime64[ns]); others are refused, naming the line.
    Only regular files are read (a directory, device or named pipe is refused without
    being opened). JSON files written by seaprofile are returned exactly as written.
    """
    casts = read_casts(
        path,
        columns=columns,
        units=units,
        instrument=instrument,
        latitude=latitude,
        longitude=longitude,
        salinity=salinity,
        fall_rate=fall_rate,
        delimiter=delimiter,
    )
    if len(casts) != 1:
        raise InputFileError(path, f"holds {len(casts)} casts; use read_casts to read them all")
    return casts[0]


def read_casts(
    path,
    *,
    columns=None,
    units=None,
    instrument=None,
    latitude=None,
    longitude=None,
    salinity=None,
    fall_rate=DEFAULT_FALL_RATE,
    delimiter=None,
):
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
        if _is_own_profile(table):
            raise InputFileError(path, "holds a Profile, not a cast; use read_profile")
        raws = [_text_raw_cast(table, columns, units)]
    if not raws:
        raise InputFileError(path, "holds no casts")
    return [
        _finish(
            raw,
            path,
            instrument=instrument,
            latitude=latitude,
            longitude=longitude,
            salinity=salinity,
            fall_rate=fall_rate,
        )
        for raw in raws
    ]


def read_profile(path, *, columns=None, units=None, delimiter=None):
    """Read one Profile (see :func:`read_profiles`)."""
    out = read_profiles(path, columns=columns, units=units, delimiter=delimiter)
    if len(out) != 1:
        raise InputFileError(path, f"holds {len(out)} profiles; use read_profiles")
    return out[0]


def read_profiles(path, *, columns=None, units=None, delimiter=None):
    """Read every Profile in a file.

    Files written by :mod:`seaprofile.casts.write` (netCDF, CSV, JSON) come back as written.
    Any other table of depth and sound speed becomes a Profile with the sound speed as given
    (``equation="measured"``, flags 0): a headerless two-column text file (depth m, sound
    speed m/s, such as the plain speed table), or a text or netCDF file whose columns or
    variables are recognised or mapped with ``columns=`` / ``units=`` (the same mappings as
    :func:`read_cast`; e.g. ``columns="depth=DEPTH,sound_speed=SVEL"`` for netCDF, or
    ``"1=depth,2=sound_speed"`` by position for text). Depths must increase row by row.

    Returns
    -------
    list of xarray.Dataset
        Profiles (dimension ``depth``, m, positive down; ``sound_speed`` m/s).
    """
    path = _check_path(path)
    columns = parse_column_mapping(columns) if columns else {}
    units = parse_unit_mapping(units) if units else {}
    kind = _sniff(path)
    if kind == "json":
        out = _read_json(path)
    elif kind == "netcdf":
        out = _netcdf_own_datasets(path, columns, units)
    else:
        t = _parse_text(path, delimiter)
        if _is_own_profile(t) and not columns:
            out = [_text_profile(t)]
        else:
            out = [_raw_profile(_text_raw_cast(t, columns, units), path, t.lines)]
    if not out:
        raise InputFileError(path, "holds no profiles")
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
        raise InputFileError(
            path,
            f"expected 2 columns (depth, sound speed), found {len(t.headers)}",
            int(t.lines[0]) if t.lines.size else None,
        )
    return t.numbers(0), t.numbers(1)


# --- JSON ------------------------------------------------------------------------------


def _read_json(path):
    from .write import dataset_from_dict

    try:
        doc = json.loads(_decode(path, path.read_bytes())[0])
    except json.JSONDecodeError as exc:
        line = getattr(exc, "lineno", None)
        col = getattr(exc, "colno", None)
        raise InputFileError(
            path, f"not valid JSON: {getattr(exc, 'msg', exc)}", line, col
        ) from None
    except RecursionError:
        raise InputFileError(path, "not valid JSON: nested too deeply") from None
    if not isinstance(doc, dict) or doc.get("format") != "seaprofile":
        raise InputFileError(path, 'not a seaprofile JSON file (no "format": "seaprofile")')
    key = "datasets" if "datasets" in doc else "dataset"
    items = doc.get("datasets", [doc["dataset"]] if "dataset" in doc else None)
    if not items:
        raise InputFileError(path, "no datasets in the JSON file")
    if not isinstance(items, list) or not all(isinstance(d, dict) for d in items):
        what = "a list of objects" if key == "datasets" else "an object"
        raise InputFileError(path, f'malformed seaprofile JSON: "{key}" must be {what}', column=key)
    out = []
    for k, d in enumerate(items):
        where = f"datasets[{k}]"
        try:
            ds = dataset_from_dict(d)
        except SeaprofileError as exc:
            raise InputFileError(path, f"{where}: {exc}", column=where) from None
        except KeyError as exc:
            raise InputFileError(
                path, f"malformed seaprofile JSON: no key {exc}", column=where
            ) from None
        except (
            TypeError,
            ValueError,
            AttributeError,
            IndexError,
            OverflowError,
            RecursionError,
        ) as exc:
            raise InputFileError(
                path, f"malformed seaprofile JSON: {type(exc).__name__}: {exc}", column=where
            ) from None
        _check_json_dataset(path, ds, where)
        out.append(ds)
    return out


def _check_json_dataset(path, ds, where):
    """A JSON dataset must have the layout of a Cast or Profile (DEVELOPERS.md)."""
    dims = tuple(ds.dims)
    if dims not in (("sample",), ("depth",)):
        raise InputFileError(
            path,
            f"malformed seaprofile JSON: dimensions {dims}; expected "
            "('sample',) for a cast or ('depth',) for a profile",
            column=where,
        )
    for name, var in ds.variables.items():
        scalar_coord = name in ds.coords and var.ndim == 0
        if var.dims != dims and not scalar_coord:
            raise InputFileError(
                path,
                f"malformed seaprofile JSON: {name!r} has dimensions {var.dims}",
                column=f"{where}.{name}",
            )
        if var.dtype.kind not in ("fiu" if not scalar_coord else "fiuMUS"):
            raise InputFileError(
                path,
                f"malformed seaprofile JSON: {name!r} holds {var.dtype} values, expected numbers",
                column=f"{where}.{name}",
            )
    for name, kinds in (("latitude", "fi"), ("longitude", "fi"), ("time", "M")):
        if name in ds.variables and (ds[name].ndim or ds[name].dtype.kind not in kinds):
            raise InputFileError(
                path,
                f"malformed seaprofile JSON: {name!r} must be one "
                f"{'time' if kinds == 'M' else 'number'}",
                column=f"{where}.{name}",
            )
    try:
        steps = json.loads(ds.attrs.get("processing_steps", "[]"))
    except (TypeError, ValueError, RecursionError):
        steps = None
    if not isinstance(steps, list) or not isinstance(ds.attrs.get("history", ""), str):
        raise InputFileError(
            path,
            "malformed seaprofile JSON: processing_steps must be a JSON "
            "list in a string, history a string",
            column=f"{where}.attributes",
        )
    if dims == ("sample",):  # a Cast: flags beside every measured variable, a known kind
        for name in measured_variables(ds):
            if f"{name}_qc" not in ds.data_vars:
                raise InputFileError(
                    path,
                    f"malformed seaprofile JSON: {name!r} has no flags ({name}_qc)",
                    column=f"{where}.{name}",
                )
        if ds.attrs.get("instrument", "ctd") not in INSTRUMENTS:
            raise InputFileError(
                path,
                f"malformed seaprofile JSON: instrument "
                f"{ds.attrs.get('instrument')!r} is not one of {INSTRUMENTS}",
                column=f"{where}.attributes.instrument",
            )


# --- helpers ---------------------------------------------------------------------------


_KINDS = (
    (stat.S_ISDIR, "is a directory, not a file"),
    (stat.S_ISFIFO, "is a named pipe (FIFO), not a regular file"),
    (stat.S_ISCHR, "is a character device (such as /dev/null), not a regular file"),
    (stat.S_ISBLK, "is a block device, not a regular file"),
    (stat.S_ISSOCK, "is a socket, not a regular file"),
)


def _refuse_special(path, mode):
    if not stat.S_ISREG(mode):
        why = next((text for test, text in _KINDS if test(mode)), "is not a regular file")
        raise InputFileError(path, why + "; give a cast file")


def check_input_file(path):
    """``path`` as a :class:`pathlib.Path` when it is an existing regular file.

    Nothing is opened: a named pipe is refused without blocking, like a directory or a
    device (``/dev/null``).

    Raises
    ------
    SeaprofileError
        ``path`` is not a str or Path.
    InputFileError
        No such file, not a regular file, or not accessible.
    """
    if not isinstance(path, (str, Path)):
        raise SeaprofileError(f"path must be a str or pathlib.Path, got {type(path).__name__}")
    p = Path(path)
    try:
        mode = os.stat(p).st_mode
    except FileNotFoundError:
        raise InputFileError(p, "no such file") from None
    except OSError as exc:
        raise InputFileError(p, f"cannot open: {exc.strerror or exc}") from None
    _refuse_special(p, mode)
    return p


_check_path = check_input_file


def _sniff(path):
    try:  # non-blocking: a file swapped for a FIFO since the check must not hang us
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise InputFileError(path, f"cannot open: {exc.strerror or exc}") from None
    try:
        _refuse_special(path, os.fstat(fd).st_mode)
        head = os.read(fd, 64)
    except OSError as exc:
        raise InputFileError(path, f"cannot read: {exc.strerror or exc}") from None
    finally:
        os.close(fd)
    if head.startswith(_NETCDF_MAGIC):
        return "netcdf"
    for bom, enc in _UNICODE_BOMS:  # UTF-16/32 JSON: look at the text, not the bytes
        if head.startswith(bom):
            head = head[: len(head) // 4 * 4].decode(enc, errors="ignore").encode()
            break
    if head.lstrip(b"\xef\xbb\xbf \t\r\n").startswith((b"{", b"[")):
        return "json"
    return "text"


def _is_own_profile(table):
    return table.meta.get("dataset", ("cast",))[0].strip().lower() == "profile"


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
