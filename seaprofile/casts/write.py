"""Write Casts and Profiles: netCDF (CF DSG), CSV with a commented header, JSON, speed tables.

Every writer is atomic (a temporary file in the target directory, then ``os.replace``),
keeps an existing file unless ``overwrite=True``, and never modifies its input. A temporary
file is removed on any failure, on Ctrl-C (SIGINT) and on SIGTERM. Every netCDF open, read
and write of the package holds :data:`NETCDF_LOCK` (the netCDF/HDF5 library must never be
entered from two threads at once). :func:`refuse_input_as_output` keeps an output from
replacing one of the inputs. :func:`write` (one entry for every product, Casts and
Profiles as well as ray fans and arrivals) dispatches through the registry of
:mod:`seaprofile.io.write`.

Formats
-------
netCDF
    CF-1.10 discrete sampling geometry, ``featureType="profile"``, contiguous ragged array:
    dimensions ``profile`` and ``obs``; ``row_size(profile)`` with ``sample_dimension="obs"``;
    ``profile_id(profile)`` with ``cf_role="profile_id"``; ``latitude``, ``longitude``,
    ``time`` per profile; data and ``<var>_qc`` flags along ``obs``. A JSON string per
    profile (``profile_attributes``) keeps each dataset's own attributes, so a collection of
    casts with different provenance reads back exactly. A single dataset is written as a
    collection of one.
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

import json
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
FORMATS = {
    "netcdf": (".nc", ".nc4", ".netcdf", ".cdf"),
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
    names += [v for v in ds.data_vars if ds.variables[v].dims == (dim,)]
    return names


def _iso(t):
    t = checked_time(t)
    if np.isnat(t):
        return None
    s = np.datetime_as_string(t, unit="us")
    return (s[:-7] if s.endswith(".000000") else s) + "Z"


# --- netCDF ----------------------------------------------------------------------------


def write_netcdf(ds, path, *, overwrite=False):
    """Write a Cast/Profile or a list of them as one CF DSG ``profile`` collection (netCDF-4).

    See the module docstring for the layout. Returns the path written.
    """
    import netCDF4

    items = _as_list(ds)
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

    def fill(tmp):
        # every variable and attribute is defined first and the data written after: each
        # data write ends the netCDF-4 define mode, and going back and forth between the
        # two costs about 40 % of the write. No pre-fill: every variable is written in full.
        with NETCDF_LOCK, netCDF4.Dataset(tmp, "w", format="NETCDF4") as nc:
            nc.set_fill_off()
            nc.createDimension("profile", len(items))
            nc.createDimension("obs", int(counts.sum()))
            g = _global_attrs(items)
            nc.setncatts(g)
            ids = [
                str(d["profile_id"].item()) if "profile_id" in d.coords else f"cast{i}"
                for i, d in enumerate(items)
            ]
            pending = [_char_variable(nc, "profile_id", ids, _cf.attrs_for("profile_id"))]
            v = nc.createVariable("row_size", "i4", ("profile",))
            v.setncatts(
                {"long_name": "number of samples in each profile", "sample_dimension": "obs"}
            )
            pending.append((v, counts))
            for c in ("latitude", "longitude"):
                v = nc.createVariable(c, "f8", ("profile",), fill_value=np.nan)
                v.setncatts(_cf.attrs_for(c))
                pending.append((v, [float(d[c]) if c in d.coords else np.nan for d in items]))
            v = nc.createVariable("time", "f8", ("profile",), fill_value=np.nan)
            v.setncatts(
                {**_cf.attrs_for("time"), "units": _TIME_UNITS, "calendar": "standard", "axis": "T"}
            )
            pending.append(
                (
                    v,
                    [
                        _epoch_seconds(d["time"].values) if "time" in d.coords else np.nan
                        for d in items
                    ],
                )
            )
            own = [
                json.dumps(
                    {
                        "dimension": dim,
                        "attributes": _jsonable_attrs(d.attrs),
                        "variables": _sample_vars(d, dim),
                    }
                )
                for d in items
            ]
            pending.append(
                _char_variable(
                    nc,
                    "profile_attributes",
                    own,
                    {"long_name": "attributes of each profile as written by seaprofile (JSON)"},
                )
            )
            pending += [_nc_variable(nc, items, dim, name, zvar) for name in names]
            for v, values in pending:
                v[:] = values

    return atomic_write(path, overwrite, fill)


def _char_variable(nc, name, texts, attrs):
    """A classic char-array string variable (profile, <name>_strlen), UTF-8 encoded.

    Returns ``(variable, characters)``; the caller writes the characters.
    """
    import netCDF4

    raw = [t.encode("utf-8") for t in texts]
    width = max(1, max(len(b) for b in raw))
    nc.createDimension(f"{name}_strlen", width)
    v = nc.createVariable(name, "S1", ("profile", f"{name}_strlen"))
    v.setncatts(attrs)
    v._Encoding = "utf-8"
    return v, netCDF4.stringtochar(np.array(raw, dtype=f"S{width}"))


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


def _nc_variable(nc, items, dim, name, zvar):
    """Define one variable along ``obs``; returns ``(variable, values)`` for the caller."""
    first = next(d.variables[name] for d in items if name in d.variables)  # no DataArray
    kind = first.dtype
    if kind.kind == "f":
        dtype, fill = "f8", np.nan
    elif kind.kind in "iu":
        dtype, fill = kind.str.lstrip("<>|"), None
    else:
        raise SeaprofileError(f"ds: variable {name!r} of dtype {kind} cannot be written")
    pad = _cf.MISSING if name.endswith("_qc") else (0 if dtype != "f8" else np.nan)
    parts = [
        np.asarray(d.variables[name].values) if name in d.variables else np.full(d.sizes[dim], pad)
        for d in items
    ]
    if fill is None:
        v = nc.createVariable(name, dtype, ("obs",), fill_value=False)
    else:
        v = nc.createVariable(name, dtype, ("obs",), fill_value=fill)
    attrs = {k: _nc_attr(a) for k, a in first.attrs.items() if k not in ("_FillValue",)}
    if "flag_values" in attrs:
        attrs["flag_values"] = np.asarray(attrs["flag_values"], dtype=dtype)
    if name != zvar and not name.endswith("_qc") and zvar is not None:
        attrs["coordinates"] = f"time latitude longitude {zvar}"
    v.setncatts(attrs)
    return v, np.concatenate(parts).astype(dtype) if parts else []


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
