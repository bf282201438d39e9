"""netCDF casts: one profile, or a CF discrete-sampling-geometry ``profile`` collection.

Private to :mod:`seaprofile.casts.read`. Contiguous ragged, indexed ragged and
multidimensional layouts (CF 1.10 chapter 9); variables are found by ``standard_name``
(:data:`STANDARD_NAMES`), else by name and units through the column recogniser.
"""

from __future__ import annotations

import json
import os
import struct

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from ._readcast import _flag_values, _Raw, _raw_profile
from .columns import KIND, checked_time, parse_unit, recognise_column
from .model import INSTRUMENTS
from .write import NETCDF_LOCK

#: what an unexpected file layout raises deep inside the split (turned into one
#: InputFileError naming the file: a batch never stops on a traceback)
_LAYOUT_ERRORS = (KeyError, IndexError, ValueError, TypeError, AttributeError, OverflowError)

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


#: bytes per value of each classic netCDF type code
_TYPE_SIZE = {1: 1, 2: 1, 3: 2, 4: 4, 5: 4, 6: 8, 7: 1, 8: 2, 9: 4, 10: 8, 11: 8}


def _classic_data_end(head):
    """Bytes a classic netCDF file (CDF-1, -2, -5) needs to hold all its data, from its header.

    Follows the classic format specification (netCDF Users Guide, "The NetCDF Classic
    Format Specification"); returns None when the header itself cannot be parsed.
    """
    version = head[3]
    wide = version == 5  # CDF-5: 8-byte counts and sizes
    pos = 4

    def take(fmt):
        nonlocal pos
        value = struct.unpack_from(">" + fmt, head, pos)
        pos += struct.calcsize(">" + fmt)
        return value[0]

    def count():
        return take("Q" if wide else "I")

    def name():
        nonlocal pos
        n = count()
        pos += (n + 3) // 4 * 4
        return n

    def attributes():
        nonlocal pos
        tag, n = take("I"), count()
        for _ in range(n if tag else 0):
            name()
            kind, m = take("I"), count()
            pos += (m * _TYPE_SIZE[kind] + 3) // 4 * 4

    try:
        numrecs = count()
        tag, ndims = take("I"), count()
        dims = []
        for _ in range(ndims if tag else 0):
            name()
            dims.append(count())
        attributes()
        tag, nvars = take("I"), count()
        variables = []
        for _ in range(nvars if tag else 0):
            name()
            ids = [count() for _ in range(count())]
            attributes()
            kind, vsize = take("I"), count()
            begin = take("Q" if version in (2, 5) else "I")
            shape = [dims[i] for i in ids]
            is_record = bool(shape) and shape[0] == 0
            size = _TYPE_SIZE[kind]
            for n in shape[1:] if is_record else shape:
                size *= n
            variables.append((is_record, begin, size, vsize))
    except (struct.error, KeyError, IndexError):
        return None
    if numrecs == (2**64 - 1 if wide else 2**32 - 1):  # streaming: length unknown
        return None
    rec = [v for v in variables if v[0]]
    recsize = rec[0][2] if len(rec) == 1 else sum(v[3] for v in rec)
    ends = [b + s for r, b, s, _ in variables if not r]
    ends += [b + (numrecs - 1) * recsize + s for r, b, s, _ in variables if r and numrecs]
    return max(ends, default=0)


def _check_not_truncated(path):
    """A truncated classic file reads as zeros past its end: refuse it instead."""
    with open(path, "rb") as f:
        head = f.read(1 << 20)
        size = os.fstat(f.fileno()).st_size
    if not head.startswith((b"CDF\x01", b"CDF\x02", b"CDF\x05")):
        return
    end = _classic_data_end(head)
    if end is not None and size < end:
        raise InputFileError(
            path,
            f"truncated netCDF file: its header describes {end} bytes of data, the file has {size}",
        )


def _open_netcdf(path):
    """The whole file, loaded, under the process-wide netCDF lock (HDF5 is not thread-safe)."""
    _check_not_truncated(path)
    # a time outside datetime64[ns] arrives as a cftime object (xarray warns) and is
    # refused by name in _instance_meta (columns.checked_time), never wrapped around
    try:
        with NETCDF_LOCK, xr.open_dataset(path, decode_timedelta=False) as f:
            return f.load()
    except Exception as exc:  # netCDF4/HDF5 raise many kinds
        raise InputFileError(path, f"cannot read as netCDF: {exc}") from None


def _layout_guard(read):
    """Run ``read(path, ...)``; an unexpected layout error becomes one InputFileError."""

    def guarded(path, *args):
        try:
            return read(path, *args)
        except SeaprofileError:
            raise
        except _LAYOUT_ERRORS as exc:
            raise InputFileError(
                path, f"unexpected netCDF layout ({type(exc).__name__}: {exc})"
            ) from None

    guarded.__doc__ = read.__doc__
    return guarded


def _netcdf_split(ds, path, data_names=()):
    """Split a netCDF profile file into per-profile ``(samples, instance values)`` dicts.

    ``data_names`` are variables taken as data besides those with a recognised
    ``standard_name`` (names mapped with ``columns=`` or recognised by name and units).
    """
    role = [v for v in ds.variables if ds[v].attrs.get("cf_role") == "profile_id"]
    count = [v for v in ds.variables if "sample_dimension" in ds[v].attrs]
    index = [v for v in ds.variables if "instance_dimension" in ds[v].attrs]
    if count:
        if ds[count[0]].ndim != 1:
            raise InputFileError(
                path,
                f"{count[0]!r} must have one dimension (profiles), has {ds[count[0]].dims}",
                column=count[0],
            )
        inst, obs = ds[count[0]].dims[0], ds[count[0]].attrs["sample_dimension"]
        sizes = np.asarray(ds[count[0]].values, dtype=np.float64)
        if not sizes.size:
            raise InputFileError(
                path, f"holds no profiles (dimension {inst!r} is empty)", column=count[0]
            )
        if not np.all(np.isfinite(sizes) & (sizes >= 0) & (sizes == np.round(sizes))):
            raise InputFileError(
                path, f"row sizes in {count[0]!r} must be whole numbers 0 or more", column=count[0]
            )
        ends = np.cumsum(sizes.astype(np.int64))
        if obs not in ds.dims or ends[-1] != ds.sizes[obs]:
            raise InputFileError(
                path,
                f"row sizes in {count[0]!r} add up to {ends[-1]}, but "
                f"dimension {obs!r} has {ds.sizes.get(obs)} samples",
                column=count[0],
            )
        select = [slice(int(e - n), int(e)) for e, n in zip(ends, ds[count[0]].values)]
    elif index:
        if ds[index[0]].ndim != 1:
            raise InputFileError(
                path,
                f"{index[0]!r} must have one dimension (samples), has {ds[index[0]].dims}",
                column=index[0],
            )
        inst, obs = ds[index[0]].attrs["instance_dimension"], ds[index[0]].dims[0]
        idx = np.asarray(ds[index[0]].values)
        if inst not in ds.dims:
            raise InputFileError(
                path, f"instance dimension {inst!r} not in the file", column=index[0]
            )
        select = [np.flatnonzero(idx == i) for i in range(ds.sizes[inst])]
    else:
        inst = ds[role[0]].dims[0] if role and ds[role[0]].ndim == 1 else None
        two_d = [
            v for v in ds.data_vars if inst is not None and ds[v].ndim == 2 and inst in ds[v].dims
        ]
        if two_d:
            obs = [d for d in ds[two_d[0]].dims if d != inst][0]
            select = [i for i in range(ds.sizes[inst])]
        else:
            for name in data_names:
                if ds[name].ndim != 1:
                    raise InputFileError(
                        path,
                        f"{name!r} has dimensions {ds[name].dims}; "
                        "expected one dimension of samples (or a CF "
                        "discrete-sampling-geometry profile collection)",
                        column=name,
                    )
            data = [
                v
                for v in ds.variables
                if ds[v].ndim == 1
                and ds[v].dims[0] != inst
                and (ds[v].attrs.get("standard_name") in STANDARD_NAMES or v in data_names)
            ]
            if not data:
                raise InputFileError(
                    path,
                    "no variable with a recognised standard_name ("
                    + ", ".join(STANDARD_NAMES)
                    + "); map variables with "
                    "columns=, e.g. temperature=TEMP,pressure=PRES",
                )
            obs = ds[data[0]].dims[0]
            inst, select = None, [slice(None)]
    if inst is not None and not select:
        raise InputFileError(path, f"holds no profiles (dimension {inst!r} is empty)")
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
            rows = [
                v for k, v in s.items() if set(ds[k].dims) == {inst, obs} and v.dtype.kind == "f"
            ]
            keep = np.any(np.isfinite(np.vstack(rows)), axis=0) if rows else None
            if keep is not None and keep.any():
                last = int(np.flatnonzero(keep)[-1]) + 1
                s = {k: v[:last] for k, v in s.items()}
        samples.append(s)
        instances.append(inst_vals)
    return samples, instances, role[0] if role else None


def _instance_meta(ds, inst_vals, samples, role, path):
    meta = {}
    for name, value in list(inst_vals.items()) + list(samples.items()):
        sn = ds[name].attrs.get("standard_name")
        v = np.asarray(value).ravel()
        if sn in ("latitude", "longitude", "time") and sn not in meta and v.size:
            if sn == "time":
                try:
                    t = checked_time(v[0]) if v[0] is not None else None
                except SeaprofileError as exc:
                    raise InputFileError(path, str(exc), column=name) from None
                except (TypeError, ValueError):  # undecoded numbers: no usable time
                    t = None
                meta["time"] = None if t is None or np.isnat(t) else t
            else:
                try:
                    meta[sn] = float(v[0])
                except (TypeError, ValueError):
                    raise InputFileError(path, f"{sn} is not a number", column=name) from None
    if role is not None:
        meta["cast_name"] = _text(inst_vals.get(role, ""))
    return meta


def _text(value):
    v = np.asarray(value).item()
    return v.decode("utf-8").rstrip("\x00") if isinstance(v, bytes) else str(v)


def _own_attrs(inst_vals, path):
    text = inst_vals.get("profile_attributes")
    if text is None:
        return None
    try:
        own = json.loads(_text(text))
    except (ValueError, RecursionError):
        own = None
    if not (
        isinstance(own, dict)
        and isinstance(own.get("attributes"), dict)
        and isinstance(own.get("variables"), list)
    ):
        raise InputFileError(
            path,
            "profile_attributes is not the JSON seaprofile writes",
            column="profile_attributes",
        )
    return own


@_layout_guard
def _netcdf_raw_casts(path, columns, units):
    """Casts found in a netCDF file (``columns``/``units`` map variable names, as for text)."""
    positional = [f"{p}={v}" for v, p in columns.items() if isinstance(p, int)]
    if positional:
        raise InputFileError(
            path,
            f"columns: {', '.join(positional)} maps by position, which "
            "applies to text files; name the netCDF variables, e.g. "
            "temperature=TEMP",
            column=positional[0],
        )
    ds = _open_netcdf(path)
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
            raise InputFileError(
                path,
                f"variables {chosen[guess]!r} and {name!r} are both "
                f"{guess}; choose one with columns={{'{guess}': ...}}",
                column=name,
            )
        chosen[guess] = name
    for var, name in columns.items():
        if name not in ds.variables:
            raise InputFileError(path, f"columns: no variable {name!r} for {var}", column=name)
        chosen[var] = name
    samples, instances, role = _netcdf_split(ds, path, tuple(chosen.values()))
    raws = []
    for s, inst_vals in zip(samples, instances):
        own = _own_attrs(inst_vals, path)
        if own is not None and own.get("dimension") != "sample":
            raise InputFileError(path, "holds profiles, not casts; use read_profiles")
        raw = _Raw({}, file_format="netcdf")
        meta = {k: v for k, v in ds.attrs.items() if k not in ("featureType",)}
        meta.update(own["attributes"] if own else {})
        for var, name in chosen.items():
            if name not in s and var in columns:
                raise InputFileError(
                    path,
                    f"columns: {var}={name!r} has dimensions "
                    f"{ds[name].dims}, not those of the samples",
                    column=name,
                )
            if name not in s or (own is not None and var not in own["variables"]):
                continue
            values = np.asarray(s[name], dtype=np.float64)
            unit_text = units.get(var, ds[name].attrs.get("units"))
            unit = parse_unit(unit_text) if unit_text is not None else None
            if unit_text is not None and (unit is None or unit.kind != KIND[var]):
                raise InputFileError(
                    path, f"units {unit_text!r} of {name!r} are not a {KIND[var]} unit", column=name
                )
            if unit is not None and not unit.identity:
                values = values * unit.scale + unit.offset
                raw.conversions[var] = unit.describe()
            raw.data[var] = values
            raw.column_map[var] = name
            for anc in ds[name].attrs.get("ancillary_variables", "").split():
                if anc in s and (
                    "flag_values" in ds[anc].attrs
                    or "status_flag" in ds[anc].attrs.get("standard_name", "")
                ):
                    raw.flags[var] = _flag_values(np.asarray(s[anc], np.float64), path, None, anc)
                    break
        raw.meta = {k: v for k, v in meta.items() if k not in ("latitude", "longitude")}
        raw.meta.update(_instance_meta(ds, inst_vals, s, role, path))
        inst = str(raw.meta.get("instrument", "")).lower()
        if "instrument" in raw.meta and inst not in INSTRUMENTS:
            raw.meta["instrument_description"] = raw.meta.pop("instrument")
        raws.append(raw)
    return raws


@_layout_guard
def _netcdf_own_datasets(path, columns=None, units=None):
    """Datasets written by ``write_netcdf``, rebuilt variable by variable.

    A file not written by seaprofile (no ``profile_attributes``) is read as a table of
    depth and sound speed (:func:`._readcast._raw_profile`), its variables recognised or
    mapped by ``columns``/``units``.
    """
    ds = _open_netcdf(path)
    if "profile_attributes" not in ds.variables:
        return [
            _raw_profile(raw, path) for raw in _netcdf_raw_casts(path, columns or {}, units or {})
        ]
    if columns or units:
        raise InputFileError(
            path,
            "written by seaprofile: its variables are known, read it without columns= or units=",
        )
    samples, instances, role = _netcdf_split(ds, path)
    out = []
    for s, inst_vals in zip(samples, instances):
        own = _own_attrs(inst_vals, path)
        if own is None:
            raise InputFileError(path, "not written by seaprofile (no profile_attributes)")
        dim = own["dimension"]
        if dim not in ("sample", "depth") or role is None:
            raise InputFileError(
                path,
                "profile_attributes is not the JSON seaprofile writes",
                column="profile_attributes",
            )
        meta = _instance_meta(ds, inst_vals, s, role, path)
        t = meta.get("time")
        coords = {
            "latitude": ((), meta.get("latitude", np.nan), _cf.attrs_for("latitude")),
            "longitude": ((), meta.get("longitude", np.nan), _cf.attrs_for("longitude")),
            "time": ((), np.datetime64("NaT", "ns") if t is None else t, _cf.attrs_for("time")),
            "profile_id": ((), meta.get("cast_name", ""), dict(ds[role].attrs)),
        }
        data = {}
        stored_as = own.get("dtypes") if isinstance(own.get("dtypes"), dict) else {}
        for name in own["variables"]:
            attrs = {k: v for k, v in ds[name].attrs.items() if k != "coordinates"}
            # a netCDF-3 file keeps an integer dtype it has not (int64, unsigned) in a
            # wider or narrower one, the original named in profile_attributes["dtypes"]
            dtype = np.dtype(stored_as.get(name, ds[name].dtype))
            values = np.asarray(s[name]).astype(dtype)
            if name in stored_as:
                if dtype.kind not in "iu" or not np.array_equal(values, s[name]):
                    raise InputFileError(
                        path,
                        f"profile_attributes gives {name!r} the dtype {dtype}, which does not "
                        "hold its values",
                        column="profile_attributes",
                    )
                if "flag_values" in attrs:
                    attrs["flag_values"] = np.asarray(attrs["flag_values"]).astype(dtype)
            if name == dim:
                coords[name] = (dim, values, attrs)
            else:
                data[name] = (dim, values, attrs)
        out.append(xr.Dataset(data, coords=coords, attrs=own["attributes"]))
    return out
