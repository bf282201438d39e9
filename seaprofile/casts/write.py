"""Write Casts and Profiles: netCDF (CF DSG), CSV with a commented header, JSON, speed tables.

Every writer is atomic (a temporary file in the target directory, then ``os.replace``),
keeps an existing file unless ``overwrite=True``, and never modifies its input. A temporary
file is removed on any failure, on Ctrl-C (SIGINT) and on SIGTERM. Every entry into the
netCDF C library (every netCDF open and read, every netCDF-4 write) holds
:data:`NETCDF_LOCK` (the netCDF/HDF5 library must never be entered from two threads at
once); classic netCDF-3 files are written in pure Python and need no lock. :func:`refuse_input_as_output` keeps an output from
replacing one of the inputs. :func:`write` (one entry for every product, Casts and
Profiles as well as ray fans and arrivals) dispatches through the registry of
:mod:`seaprofile.io.write`.

Formats
-------
netCDF (suffixes ``.nc``, ``.netcdf``, ``.cdf``; ``.nc4`` for netCDF-4)
    CF-1.10 discrete sampling geometry, ``featureType="profile"``, contiguous ragged array:
    dimensions ``profile`` and ``obs``; ``row_size(profile)`` with ``sample_dimension="obs"``;
    ``profile_id(profile)`` with ``cf_role="profile_id"``; ``latitude``, ``longitude``,
    ``time`` per profile; data and ``<var>_qc`` flags along ``obs``. A JSON string per
    profile (``profile_attributes``) keeps each dataset's own attributes, so a collection of
    casts with different provenance reads back exactly. A single dataset is written as a
    collection of one. The file is classic netCDF-3, 64-bit offset (format ``netcdf``,
    written by :class:`scipy.io.netcdf_file`), or netCDF-4 (format ``netcdf4``,
    ``write_netcdf(..., version=4)``); the content is the same. netCDF-3 has no int64 and
    no unsigned types: such a variable is stored in an int16/int32 that holds every value
    (its own dtype listed under ``"dtypes"`` in ``profile_attributes``, so it reads back
    as it was), and int64 attributes become int32 (or float64 when they do not fit);
    values beyond that are refused by name. Text attributes are UTF-8.
CSV
    ``# key: value`` header lines (dataset kind, caution, position, time, every global
    attribute; multi-line values repeat the key), then a header row ``name [unit],...``
    and one row per sample. ``nan`` marks missing values.
JSON
    ``{"format": "seaprofile", "format_version": 1, "caution": ..., "dataset": {...}}``
    (or ``"datasets": [...]`` for a list); each dataset lists its dimension, attributes,
    coordinates and variables (attributes, dtype, values; NaN as null).
speed table (suffix ``.speed.txt``)
    Plain text for loading into acquisition systems: no header, one line per depth,
    two columns separated by one space: depth in m (3 decimals) and sound speed in m/s
    (3 decimals), depth increasing. Samples with NaN or flagged bad (3, 4) or missing (9)
    are left out.
"""

from __future__ import annotations

import io
import json
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ._atomic import NETCDF_LOCK, atomic_write, refuse_input_as_output
from .columns import DISPLAY_UNIT, KIND, checked_time

__all__ = [
    "atomic_write",
    "write",
    "write_netcdf",
    "write_csv",
    "write_json",
    "write_speed_table",
    "dataset_to_dict",
    "dataset_from_dict",
    "FORMATS",
    "NETCDF_LOCK",
    "refuse_input_as_output",
    "format_of",
]

#: format -> file suffixes; the first is the one written. ``.speed.txt`` (the plain
#: depth / sound-speed table) is told apart from ``.txt`` (CSV) by its two suffixes.
#: ``netcdf`` writes Casts and Profiles as classic netCDF-3, ``netcdf4`` as netCDF-4
#: (:func:`write_netcdf` ``version=``); gridded products are netCDF-4 in either.
FORMATS = {
    "netcdf": (".nc", ".netcdf", ".cdf"),
    "netcdf4": (".nc4",),
    "csv": (".csv", ".txt", ".tsv"),
    "json": (".json",),
    "table": (".speed.txt", ".table", ".dat"),
}

_DISPLAY = {**{v: DISPLAY_UNIT[k] for v, k in KIND.items()}, "sound_speed": "m/s"}
_TIME_UNITS = "seconds since 1970-01-01 00:00:00"


# --- dispatcher ------------------------------------------------------------------------


def format_of(path):
    """The format (a key of :data:`FORMATS`) named by the suffix of ``path``, or None."""
    name = Path(path).name.lower()
    matches = [
        (len(ext), k)
        for k, exts in FORMATS.items()
        for ext in exts
        if name.endswith(ext) and len(name) > len(ext)
    ]
    return max(matches)[1] if matches else None


def write(obj, path, format=None, *, overwrite=False, protect=()):
    """Write any product (Cast, Profile, ray fan, arrivals, ...): :func:`seaprofile.io.write.write`.

    Kept here so that ``seaprofile.casts.write.write`` goes on working; the product
    registry lives in :mod:`seaprofile.io.write` (imported on the first call, as that
    module builds on the writers of this one).
    """
    from ..io.write import write as write_product

    return write_product(obj, path, format, overwrite=overwrite, protect=protect)


def _as_list(ds):
    items = list(ds) if isinstance(ds, (list, tuple)) else [ds]
    if not items or not all(isinstance(d, xr.Dataset) for d in items):
        raise SeaprofileError("ds must be an xarray Dataset (a Cast or Profile) or a list of them")
    dims = {_dim(d) for d in items}
    if len(dims) != 1:
        raise SeaprofileError("ds: cannot mix casts and profiles in one file")
    return items


def _dim(ds):
    if "sample" in ds.dims:
        return "sample"
    if "depth" in ds.dims:
        return "depth"
    raise SeaprofileError(
        f"ds has dimensions {tuple(ds.dims)}; expected 'sample' (a Cast) or 'depth' (a Profile)"
    )


def _sample_vars(ds, dim):
    """Variables along ``dim`` in a stable order (coordinate first)."""
    names = [dim] if dim in ds.coords else []
    variables = ds.variables  # a new mapping at every access: taken once
    names += [v for v in ds.data_vars if variables[v].dims == (dim,)]
    return names


def _iso(t):
    t = checked_time(t)
    if np.isnat(t):
        return None
    s = np.datetime_as_string(t, unit="us")
    return (s[:-7] if s.endswith(".000000") else s) + "Z"


# --- netCDF ----------------------------------------------------------------------------


def write_netcdf(ds, path, *, overwrite=False, version=3):
    """Write a Cast/Profile or a list of them as one CF DSG ``profile`` collection.

    See the module docstring for the layout. The file is classic netCDF-3 by default and
    netCDF-4 on request; both hold the same variables and attributes and read back into
    the same Datasets.

    Parameters
    ----------
    ds : xarray.Dataset or list of xarray.Dataset
        A Cast or a Profile, or a list of Casts or of Profiles (not both).
    path : str or pathlib.Path
        Output file.
    overwrite : bool
        Replace an existing file.
    version : {3, 4}
        3 (default): classic netCDF-3 in its 64-bit-offset variant (CDF-2), written in
        pure Python by :class:`scipy.io.netcdf_file` (a few times faster than netCDF-4
        for files of this size). Integers wider than 32 bits, and unsigned integers, are
        stored in the next netCDF-3 integer type that holds every value (and read back in
        their own type); a value outside the int32 range raises :class:`SeaprofileError`.
        4: netCDF-4 (HDF5) through netCDF4-python, every dtype as it stands, for
        archives that ask for netCDF-4 (the ``"netcdf4"`` format, suffix ``.nc4``).

    Returns
    -------
    pathlib.Path
        The file written.
    """
    if isinstance(version, bool) or version not in (3, 4):
        raise SeaprofileError(
            f"version must be 3 (classic netCDF, 64-bit offset) or 4 (netCDF-4), got {version!r}"
        )
    items = _as_list(ds)
    layout = _dsg_layout(items, classic=version == 3)
    if version == 4:
        return atomic_write(path, overwrite, lambda tmp: _fill_netcdf4(layout, tmp, "NETCDF4"))
    if _scipy_can_write(layout):
        return atomic_write(path, overwrite, lambda tmp: _fill_classic(layout, tmp))
    # the same classic format through the netCDF C library: no samples at all (the only
    # netCDF-3 dimension of length 0 is the record dimension, which scipy's writer gets
    # wrong for more than one variable) or non-ASCII names (scipy writes them as Latin-1)
    return atomic_write(
        path, overwrite, lambda tmp: _fill_netcdf4(layout, tmp, "NETCDF3_64BIT_OFFSET")
    )


@dataclass(frozen=True)
class _Variable:
    """One netCDF variable as it will be written: dimensions, attributes, values, fill."""

    name: str
    dims: tuple
    attrs: dict
    values: np.ndarray
    fill: object = None  # the _FillValue, or None for no fill value


def _dsg_layout(items, classic):
    """The CF DSG collection of ``items``: ``(dimensions, global attributes, variables)``.

    With ``classic`` every dtype and attribute value is one netCDF-3 holds
    (:func:`_classic_values`, :func:`_classic_attr`); the original dtype of a variable
    stored in another type goes into each profile's ``profile_attributes`` (``"dtypes"``).
    """
    dim = _dim(items[0])
    counts = np.array([d.sizes[dim] for d in items], dtype=np.int32)
    names = []
    for d in items:
        names += [v for v in _sample_vars(d, dim) if v not in names]
    zvar = (
        dim
        if dim == "depth"
        else next((v for v in ("pressure", "depth") if any(v in d for d in items)), None)
    )
    tables = [d.variables for d in items]
    data = [_obs_variable(tables, items, dim, name, zvar, classic) for name in names]
    stored_as = {v.name: dtype for v, dtype in data if dtype is not None}
    # d.variables[...] rather than d[...]: a DataArray per access costs more than the rest
    ids = [
        str(d.variables["profile_id"].values.item()) if "profile_id" in d.coords else f"cast{i}"
        for i, d in enumerate(items)
    ]
    own = []
    for d in items:
        entry = {
            "dimension": dim,
            "attributes": _jsonable_attrs(d.attrs),
            "variables": _sample_vars(d, dim),
        }
        dtypes = {n: stored_as[n] for n in entry["variables"] if n in stored_as}
        if dtypes:
            entry["dtypes"] = dtypes
        own.append(json.dumps(entry))
    variables = [
        _char_variable("profile_id", ids, _cf.attrs_for("profile_id")),
        _Variable(
            "row_size",
            ("profile",),
            {"long_name": "number of samples in each profile", "sample_dimension": "obs"},
            counts,
        ),
    ]
    for c in ("latitude", "longitude"):
        values = np.array(
            [float(d.variables[c].values) if c in d.coords else np.nan for d in items]
        )
        variables.append(_Variable(c, ("profile",), _cf.attrs_for(c), values, np.nan))
    times = [
        _epoch_seconds(d.variables["time"].values) if "time" in d.coords else np.nan for d in items
    ]
    variables.append(
        _Variable(
            "time",
            ("profile",),
            {**_cf.attrs_for("time"), "units": _TIME_UNITS, "calendar": "standard", "axis": "T"},
            np.array(times, dtype=np.float64),
            np.nan,
        )
    )
    variables.append(
        _char_variable(
            "profile_attributes",
            own,
            {"long_name": "attributes of each profile as written by seaprofile (JSON)"},
        )
    )
    variables += [v for v, _ in data]
    dims = {"profile": len(items), "obs": int(counts.sum())}
    dims.update({v.dims[1]: v.values.shape[1] for v in variables if len(v.dims) == 2})
    attrs = _global_attrs(items)
    if classic:
        attrs = {k: _classic_attr(None, k, a) for k, a in attrs.items()}
        variables = [
            replace(v, attrs={k: _classic_attr(v.name, k, a) for k, a in v.attrs.items()})
            for v in variables
        ]
    return dims, attrs, variables


def _char_variable(name, texts, attrs):
    """A classic char-array string variable (profile, <name>_strlen), UTF-8 encoded."""
    raw = [t.encode("utf-8") for t in texts]
    width = max(1, max(len(b) for b in raw))
    chars = np.array(raw, dtype=f"S{width}").view("S1").reshape(len(raw), width)
    return _Variable(name, ("profile", f"{name}_strlen"), {**attrs, "_Encoding": "utf-8"}, chars)


def _obs_variable(tables, items, dim, name, zvar, classic):
    """One variable along ``obs``: ``(_Variable, original dtype or None)``.

    ``tables`` are the ``variables`` mappings of ``items``. The original dtype (as text) is
    given when ``classic`` stores the values in another integer type, else None.
    """
    first = next(t[name] for t in tables if name in t)  # no DataArray
    kind = first.dtype
    if kind.kind == "f":
        dtype, fill = np.dtype(np.float64), np.nan
    elif kind.kind in "iu":
        dtype, fill = kind, None
    else:
        raise SeaprofileError(f"ds: variable {name!r} of dtype {kind} cannot be written")
    pad = _cf.MISSING if name.endswith("_qc") else (0 if fill is None else np.nan)
    parts = [
        np.asarray(t[name].values) if name in t else np.full(d.sizes[dim], pad)
        for t, d in zip(tables, items)
    ]
    values = (parts[0] if len(parts) == 1 else np.concatenate(parts)).astype(dtype, copy=False)
    original = None
    if classic:
        values = _classic_values(name, values)
        original = None if values.dtype == dtype else dtype.str.lstrip("<>|=")
    attrs = {k: _nc_attr(a) for k, a in first.attrs.items() if k not in ("_FillValue",)}
    if "flag_values" in attrs:
        attrs["flag_values"] = np.asarray(attrs["flag_values"]).astype(values.dtype)
    if name != zvar and not name.endswith("_qc") and zvar is not None:
        attrs["coordinates"] = f"time latitude longitude {zvar}"
    return _Variable(name, ("obs",), attrs, values, fill), original


#: the integer types of netCDF-3 (byte, short, int)
_CLASSIC_INTS = (np.dtype(np.int8), np.dtype(np.int16), np.dtype(np.int32))
_INT32 = np.iinfo(np.int32)


def _fits_int32(a):
    return a.size == 0 or (int(a.min()) >= _INT32.min and int(a.max()) <= _INT32.max)


def _classic_values(name, values):
    """Integer ``values`` in a netCDF-3 type that holds every one of them, exactly.

    int8, int16, int32 and floats stay; uint8 becomes int16, uint16 int32; int64, uint32
    and uint64 become int32 when every value fits, else :class:`SeaprofileError`.
    """
    dtype = values.dtype
    if dtype.kind not in "iu" or dtype in _CLASSIC_INTS:
        return values
    if dtype.itemsize < 4 and dtype.kind == "u":
        return values.astype(np.int16 if dtype.itemsize == 1 else np.int32)
    if _fits_int32(values):
        return values.astype(np.int32)
    raise SeaprofileError(
        f"ds: variable {name!r} holds integers from {values.min()} to {values.max()}, outside "
        "the int32 range netCDF-3 stores; write it with version=4 (the netcdf4 format, .nc4)"
    )


def _classic_attr(owner, key, value):
    """An attribute value (after :func:`_nc_attr`) as netCDF-3 holds it.

    Text becomes UTF-8 bytes (a char attribute, read back as text); int8/int16/int32
    and float32/float64 stay; other integers become int32 when every value fits, else
    float64 when that is exact (up to 2**53), else :class:`SeaprofileError`; Python
    floats are float64 (the writer would otherwise take float32).
    """
    if isinstance(value, str):
        return value.encode("utf-8")
    if isinstance(value, bytes):
        return value
    a = np.asarray(value)
    if a.dtype.kind in "US" and a.ndim == 0:
        return _classic_attr(owner, key, a.item())
    if a.dtype.kind == "f":
        return a.astype(np.float32 if a.dtype == np.float32 else np.float64)
    if a.dtype.kind in "iu":
        if a.dtype in _CLASSIC_INTS:
            return a
        if _fits_int32(a):
            return a.astype(np.int32)
        if int(a.min()) >= -(2**53) and int(a.max()) <= 2**53:
            return a.astype(np.float64)
    where = "global attribute" if owner is None else f"attribute of variable {owner!r}:"
    raise SeaprofileError(
        f"ds: {where} {key!r} = {value!r} cannot be stored in netCDF-3 (text, booleans, "
        "numbers, lists and dicts can); write it with version=4 (the netcdf4 format, .nc4)"
    )


def _scipy_can_write(layout):
    """True when :func:`_fill_classic` writes ``layout`` correctly (see write_netcdf)."""
    dims, attrs, variables = layout
    names = list(dims) + list(attrs) + [n for v in variables for n in (v.name, *v.attrs)]
    return dims["obs"] > 0 and all(str(n).isascii() for n in names)


def _fill_classic(layout, tmp):
    """Write ``layout`` as classic netCDF-3 (64-bit offset) with scipy.io.netcdf_file.

    scipy's writer is pure Python and never enters the netCDF C library, so
    :data:`NETCDF_LOCK` is not needed (nor held: threads writing classic files run
    side by side). The file is built in memory and written in one call.
    """
    from scipy.io import netcdf_file

    dims, attrs, variables = layout
    buffer = io.BytesIO()
    nc = netcdf_file(buffer, "w", version=2)  # version 2: the 64-bit-offset format
    try:
        for name, size in dims.items():
            nc.createDimension(name, size)
        # attributes go into the writer's own dicts: as Python attributes, names such as
        # "mode" or "dimensions" would replace fields of the writer itself
        nc._attributes.update(attrs)
        for v in variables:
            var = nc.createVariable(v.name, v.values.dtype, v.dims)
            if v.fill is not None:
                var._attributes["_FillValue"] = np.asarray(v.fill, v.values.dtype)
            var._attributes.update(v.attrs)
            var[:] = v.values
        nc.flush()
        data = buffer.getvalue()
    finally:
        buffer.close()  # after this, netcdf_file.close() (also run on garbage collection) is a no-op
    Path(tmp).write_bytes(data)


def _fill_netcdf4(layout, tmp, file_format):
    """Write ``layout`` through netCDF4-python (``"NETCDF4"`` or a classic format)."""
    import netCDF4

    dims, attrs, variables = layout
    # every variable and attribute is defined first and the data written after: each
    # data write ends the netCDF-4 define mode, and going back and forth between the
    # two costs about 40 % of the write. No pre-fill: every variable is written in full.
    with NETCDF_LOCK, netCDF4.Dataset(tmp, "w", format=file_format) as nc:
        nc.set_fill_off()
        for name, size in dims.items():
            nc.createDimension(name, size)
        nc.setncatts(attrs)
        pending = []
        for v in variables:
            fill = False if v.fill is None else v.fill
            var = nc.createVariable(v.name, v.values.dtype, v.dims, fill_value=fill)
            var.setncatts(v.attrs)
            pending.append((var, v.values))
        for var, values in pending:
            var[:] = values


def _global_attrs(items):
    common = dict(items[0].attrs)
    for d in items[1:]:
        common = {k: v for k, v in common.items() if k in d.attrs and _same(d.attrs[k], v)}
    g = {k: _nc_attr(v) for k, v in common.items() if v is not None}
    g.update(Conventions="CF-1.10", featureType="profile", caution=_cf.CAUTION)
    g.setdefault("title", f"{len(items)} profile(s) written by seaprofile")
    line = f"{_cf._now()} seaprofile {_cf.__version__}: write_netcdf({len(items)} profiles)"
    g["history"] = (str(g.get("history", "")) + "\n" + line).strip()
    return g


def _same(a, b):
    try:
        return bool(np.all(np.asarray(a) == np.asarray(b)))
    except Exception:  # noqa: BLE001 - incomparable values are different
        return False


def _nc_attr(v):
    if isinstance(v, (bool, np.bool_)):
        return str(bool(v)).lower()
    if isinstance(v, (list, tuple, dict)):
        return json.dumps(_cf._jsonable(v))
    return v


def _epoch_seconds(t):
    t = checked_time(t)
    if np.isnat(t):
        return np.nan
    return (t - np.datetime64("1970-01-01T00:00:00", "ns")) / np.timedelta64(1, "s")


def _jsonable_attrs(attrs):
    return {str(k): _cf._jsonable(v) for k, v in attrs.items()}


# --- CSV -------------------------------------------------------------------------------


def write_csv(ds, path, *, overwrite=False):
    """Write one Cast or Profile as CSV with a commented header (units and provenance).

    The header lines are ``# key: value``: the dataset kind, the caution, position, time,
    profile id and every global attribute (including ``processing_steps``, ``equation``,
    ``history``); then the header row ``name [unit],...`` that
    :func:`seaprofile.casts.read.read_cast` / ``read_profile`` read back.
    """
    if isinstance(ds, (list, tuple)):
        raise SeaprofileError("ds: write_csv writes one dataset; use write_netcdf for a list")
    dim = _dim(ds)
    lines = [
        "# seaprofile CSV file",
        f"# dataset: {'cast' if dim == 'sample' else 'profile'}",
        f"# caution: {_cf.CAUTION}",
    ]
    for c in ("latitude", "longitude"):
        if c in ds.coords:
            value = float(ds[c])
            lines.append(f"# {c}: {value!r}" if np.isfinite(value) else f"# {c}: unknown")
    if "time" in ds.coords:
        lines.append(f"# time: {_iso(ds['time'].values) or 'unknown'}")
    if "profile_id" in ds.coords:
        lines.append(f"# profile_id: {ds['profile_id'].item()}")
    for k, v in ds.attrs.items():
        if k == "caution":
            continue
        text = (
            json.dumps(_cf._jsonable(v))
            if isinstance(v, (list, tuple, dict, np.ndarray))
            else str(v)
        )
        for part in text.split("\n") or [""]:
            lines.append(f"# {k}: {part}")
    names = _sample_vars(ds, dim)
    header = [f"{n} [{_DISPLAY[n]}]" if n in _DISPLAY else n for n in names]
    cols = []
    for n in names:
        values = np.asarray(ds[n].values)
        cols.append([repr(x) if isinstance(x, float) else str(x) for x in values.tolist()])
    body = [",".join(row) for row in zip(*cols)]
    text = "\n".join(lines + [",".join(header)] + body) + "\n"

    def fill(tmp):
        Path(tmp).write_text(text, encoding="utf-8")

    return atomic_write(path, overwrite, fill)


# --- JSON ------------------------------------------------------------------------------


def dataset_to_dict(ds):
    """A Cast or Profile as a JSON-ready dict (the ``dataset`` entry of a seaprofile JSON)."""
    dim = _dim(ds)
    return {
        "kind": "cast" if dim == "sample" else "profile",
        "dimension": dim,
        "attributes": _jsonable_attrs(ds.attrs),
        "coordinates": {k: _variable_dict(ds[k]) for k in ds.coords},
        "variables": {k: _variable_dict(ds[k]) for k in ds.data_vars},
    }


def _variable_dict(da):
    """One variable as JSON-ready ``{"dims", "dtype", "attributes", "values"}`` (NaN as None)."""
    values = da.values
    if values.dtype.kind == "M":
        vals = [_iso(t) for t in np.atleast_1d(values)]
        vals = vals if da.ndim else vals[0]
    elif values.dtype.kind == "f":
        vals = np.where(np.isfinite(values), values, None).tolist()
    else:
        vals = values.tolist()
    return {
        "dims": list(da.dims),
        "dtype": values.dtype.str.lstrip("<>|"),
        "attributes": _jsonable_attrs(da.attrs),
        "values": vals,
    }


def dataset_from_dict(d):
    """Rebuild the Dataset from :func:`dataset_to_dict` output."""

    def var(entry):
        dtype = np.dtype(entry["dtype"])
        values = entry["values"]
        if dtype.kind == "M":  # never through a silently wrapping datetime64[ns] cast
            arr = np.array(
                [checked_time(None if x is None else x.rstrip("Z")) for x in np.atleast_1d(values)],
                dtype="datetime64[ns]",
            )
            arr = arr if entry["dims"] else arr[0]
        elif dtype.kind == "f":
            arr = np.array(values, dtype=object)
            arr = np.where(arr == None, np.nan, arr).astype(dtype)  # noqa: E711
        elif dtype.kind in "US":
            arr = np.array(values, dtype=str)
        else:
            arr = np.array(values, dtype=dtype)
        attrs = {}
        for k, a in entry["attributes"].items():
            if k == "flag_values":
                a = np.asarray(a, dtype=np.int8)
            elif isinstance(a, list):
                a = np.asarray(a)
            attrs[k] = a
        return (tuple(entry["dims"]), arr, attrs)

    return xr.Dataset(
        {k: var(e) for k, e in d["variables"].items()},
        coords={k: var(e) for k, e in d["coordinates"].items()},
        attrs=dict(d["attributes"]),
    )


def write_json(ds, path, *, overwrite=False):
    """Write a Cast/Profile (or a list of them) as seaprofile JSON; NaN becomes null."""
    items = _as_list(ds)
    doc = {"format": "seaprofile", "format_version": 1, "caution": _cf.CAUTION}
    if isinstance(ds, (list, tuple)):
        doc["datasets"] = [dataset_to_dict(d) for d in items]
    else:
        doc["dataset"] = dataset_to_dict(items[0])
    text = json.dumps(doc, indent=1, allow_nan=False)

    def fill(tmp):
        Path(tmp).write_text(text + "\n", encoding="utf-8")

    return atomic_write(path, overwrite, fill)


# --- speed table -----------------------------------------------------------------------


def write_speed_table(profile, path, *, overwrite=False):
    """Write the plain depth / sound-speed table for loading into acquisition systems.

    No header; each line ``depth sound_speed`` (m, m/s; 3 decimals, one space), depth
    increasing. Samples with NaN or flagged 3/4 (bad) or 9 (missing) are left out; the
    Profile itself is unchanged.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (dimension ``depth``, variable ``sound_speed`` in m/s).
    path : str or pathlib.Path
        Output file.
    overwrite : bool
        Replace an existing file.
    """
    if (
        not isinstance(profile, xr.Dataset)
        or "depth" not in profile.dims
        or "sound_speed" not in profile
    ):
        raise SeaprofileError(
            "profile must be a Profile with dimension 'depth' and variable 'sound_speed'"
        )
    z = np.asarray(profile["depth"].values, dtype=np.float64)
    c = np.asarray(profile["sound_speed"].values, dtype=np.float64)
    keep = np.isfinite(z) & np.isfinite(c)
    if "sound_speed_qc" in profile:
        keep &= ~np.isin(profile["sound_speed_qc"].values, _cf.UNUSABLE_FLAGS)
    order = np.argsort(z[keep], kind="stable")
    z, c = z[keep][order], c[keep][order]
    if z.size == 0:
        raise SeaprofileError("profile: no usable sound-speed samples to write")
    text = "".join(f"{a:.3f} {b:.3f}\n" for a, b in zip(z.tolist(), c.tolist()))

    def fill(tmp):
        Path(tmp).write_text(text, encoding="utf-8")

    return atomic_write(path, overwrite, fill)
