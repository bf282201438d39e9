"""One :func:`write` for every product: Casts, Profiles, ray fans, eigenray path tables, ...

A small registry, :data:`PRODUCTS`, maps a product kind to how it is recognised and which
writer each file format uses. :func:`write` finds the kind of what it is given (the
``product`` attribute when present, else each kind's ``detect`` rule, in registration
order), finds the format (``format=`` or the file suffix, :data:`FORMATS`) and calls the
writer. Every writer is atomic (:func:`seaprofile.casts.write.atomic_write`) and holds
:data:`~seaprofile.casts.write.NETCDF_LOCK` around netCDF work.

Product kinds
-------------
``cast``, ``profile``
    The CF discrete-sampling-geometry netCDF (classic netCDF-3 as ``netcdf``, netCDF-4 as
    ``netcdf4``), CSV and JSON of :mod:`seaprofile.casts.write` (a list of them for netCDF
    and JSON); a Profile also as the plain speed table. Recognised by their one dimension, ``sample`` or ``depth``.
``ray_fan``
    :func:`seaprofile.propagation.trace_fan` output (dimensions ``ray`` and ``point``).
``path_table``
    :func:`seaprofile.propagation.eigenrays` output (dimension ``arrival``, or ``path`` in
    the PathTable record; coordinates ``receiver_range`` and ``receiver_depth``).

``loss_field``, ``coverage``
    :func:`seaprofile.propagation.loss.transmission_loss` and
    :func:`seaprofile.propagation.coverage.coverage` output.
``soundings``, ``profile_error``, ``depth_uncertainty``, ``cast_neighbour_check``
    The survey products of :mod:`seaprofile.survey` (recognised by their ``product``
    attribute).

Gridded products (ray fans, path tables, loss fields, coverage, survey products) are written by
:func:`write_product_netcdf` (netCDF-4, under the format name ``netcdf`` or ``netcdf4``, as
the Dataset stands, with the global attributes
``product``, ``Conventions``, ``caution``, ``seaprofile_version`` and a ``history`` line
added: ``xr.open_dataset`` gives the values back) and :func:`write_product_json` (the
seaprofile JSON document, read back by :func:`seaprofile.casts.write.dataset_from_dict`).
A DataArray product is written as a Dataset of its one variable, its attributes global.

Add a product kind with :func:`register_product`.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path

import xarray as xr

from .. import _cf
from .._progress import dask_progress
from .._validate import SeaprofileError
from ..casts.write import (
    FORMATS,
    NETCDF_LOCK,
    _jsonable_attrs,
    _nc_attr,
    _variable_dict,
    atomic_write,
    format_of,
    refuse_input_as_output,
    write_csv,
    write_json,
    write_netcdf,
    write_speed_table,
)

__all__ = [
    "PRODUCTS",
    "Product",
    "product_kind",
    "register_product",
    "write",
    "write_product_json",
    "write_product_netcdf",
]


@dataclass(frozen=True)
class Product:
    """How one product kind is recognised and written.

    Attributes
    ----------
    kind : str
        The name stored in a Dataset's ``product`` attribute (``"ray_fan"``).
    description : str
        A few words for messages (``"ray fan"``).
    detect : callable
        ``detect(ds) -> bool`` for a Dataset without a ``product`` attribute.
    writers : mapping of str to callable
        Format (a key of :data:`FORMATS`) -> ``writer(obj, path, *, overwrite)``.
    """

    kind: str
    description: str
    detect: Callable[[xr.Dataset], bool]
    writers: Mapping[str, Callable]


#: product kind -> :class:`Product`, in the order their ``detect`` rules are tried
PRODUCTS: dict[str, Product] = {}


def register_product(kind, *, description, detect, writers):
    """Add (or replace) a product kind that :func:`write` writes.

    Parameters
    ----------
    kind : str
        Name stored in the Dataset's ``product`` attribute.
    description : str
        A few words for messages.
    detect : callable
        ``detect(ds) -> bool``, used when a Dataset carries no ``product`` attribute.
    writers : mapping of str to callable
        Format (a key of :data:`FORMATS`) -> ``writer(obj, path, *, overwrite)``.

    Returns
    -------
    Product
    """
    unknown = [f for f in writers if f not in FORMATS]
    if unknown or not writers:
        raise SeaprofileError(
            f"writers: formats must be among {', '.join(FORMATS)}, got {list(writers)}"
        )
    PRODUCTS[kind] = Product(str(kind), str(description), detect, dict(writers))
    return PRODUCTS[kind]


def _as_dataset(obj):
    if isinstance(obj, xr.DataArray):
        ds = obj.to_dataset(name=obj.name if obj.name is not None else "value")
        ds.attrs = dict(obj.attrs)
        return ds
    return obj


def _kind_of_one(ds):
    if not isinstance(ds, (xr.Dataset, xr.DataArray)):
        raise SeaprofileError(
            f"obj must be an xarray Dataset or DataArray (a seaprofile "
            f"product), got {type(ds).__name__}"
        )
    ds = _as_dataset(ds)
    named = ds.attrs.get("product")
    if named is not None:
        if named not in PRODUCTS:
            raise SeaprofileError(
                f"obj: product {named!r} is not one seaprofile writes; "
                f"known products: {', '.join(PRODUCTS)}"
            )
        return named
    for kind, product in PRODUCTS.items():
        if product.detect(ds):
            return kind
    raise SeaprofileError(
        f"obj: a Dataset with dimensions {tuple(ds.dims)} and variables "
        f"{sorted(map(str, ds.data_vars))[:8]} is no product seaprofile writes; known "
        f"products: {', '.join(PRODUCTS)} (set its attribute 'product' to one of them)"
    )


def product_kind(obj):
    """The product kind (a key of :data:`PRODUCTS`) of ``obj`` or of every item of a list.

    Parameters
    ----------
    obj : xarray.Dataset, xarray.DataArray or list of them
        What would be written.

    Raises
    ------
    SeaprofileError
        ``obj`` is not a known product, or a list mixes kinds.
    """
    items = list(obj) if isinstance(obj, (list, tuple)) else [obj]
    if not items:
        raise SeaprofileError("obj: an empty list; give at least one dataset to write")
    kinds = list(dict.fromkeys(_kind_of_one(d) for d in items))
    if len(kinds) > 1:
        raise SeaprofileError(f"obj: cannot mix products ({' and '.join(kinds)}) in one file")
    return kinds[0]


def write(obj, path, format=None, *, overwrite=False, protect=()):
    """Write any seaprofile product in the format named by ``format`` or the file suffix.

    Parameters
    ----------
    obj : xarray.Dataset or xarray.DataArray, or a list of them
        A Cast, a Profile (a list of either for netCDF and JSON), a ray fan, eigenray
        path table, or any kind registered in :data:`PRODUCTS`.
    path : str or pathlib.Path
        Output file.
    format : {"netcdf", "netcdf4", "csv", "json", "table"}, optional
        Default from the suffix (``.nc``, ``.nc4``, ``.csv``, ``.json``, ``.speed.txt``);
        the formats each product has are its :attr:`Product.writers`. For Casts and
        Profiles ``netcdf`` is classic netCDF-3 and ``netcdf4`` netCDF-4; gridded
        products are netCDF-4 under both names.
    overwrite : bool
        Replace an existing file.
    protect : iterable of str or pathlib.Path
        Input files that ``path`` must not be (:func:`refuse_input_as_output`).

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    SeaprofileError
        Unknown product or format, a format the product has not, an existing file without
        ``overwrite``, or ``path`` is one of ``protect``.
    """
    path = Path(path)
    refuse_input_as_output(protect, [path])
    product = PRODUCTS[product_kind(obj)]
    if format is None:
        format = format_of(path)
        if format is None:
            raise SeaprofileError(
                f"format: cannot tell the format from {path.name!r}; "
                f"give one of {', '.join(product.writers)}"
            )
    if format not in FORMATS:
        raise SeaprofileError(f"format must be one of {', '.join(FORMATS)}, got {format!r}")
    if format not in product.writers:
        *others, last = product.writers
        raise SeaprofileError(
            f"format: a {product.description} is written as "
            f"{', '.join(others) + ' or ' if others else ''}{last}, not {format}"
        )
    return product.writers[format](obj, path, overwrite=overwrite)


# --- gridded products: netCDF and JSON ---------------------------------------------------


def _one(obj, writer):
    if isinstance(obj, (list, tuple)):
        raise SeaprofileError(f"obj: {writer} writes one dataset, not a list")
    ds = _as_dataset(obj)
    return ds, product_kind(ds)


def _global_attrs(attrs, kind, writer):
    out = {str(k): _nc_attr(v) for k, v in attrs.items() if v is not None}
    out.setdefault("Conventions", "CF-1.10")
    out.setdefault("source", f"seaprofile {_cf.__version__}")
    out.update(product=kind, seaprofile_version=_cf.__version__, caution=_cf.CAUTION)
    line = f"{_cf._now()} seaprofile {_cf.__version__}: {writer}({kind})"
    out["history"] = (str(out.get("history", "")) + "\n" + line).strip()
    return out


def write_product_netcdf(obj, path, *, overwrite=False):
    """Write one gridded product (ray fan, path table, ...) to netCDF-4, atomically.

    The variables, coordinates, dtypes and encodings are written as they stand (so that
    ``xr.open_dataset`` gives the same values back); the global attributes gain
    ``product``, ``Conventions`` (CF-1.10), ``seaprofile_version``, ``caution`` and a
    ``history`` line, and keep the provenance (``processing_steps``, ``equation``, ...).
    Attributes netCDF cannot hold (booleans, lists, dicts) are stored as text / JSON.

    Parameters
    ----------
    obj : xarray.Dataset or xarray.DataArray
        A registered product.
    path : str or pathlib.Path
        Output file.
    overwrite : bool
        Replace an existing file.
    """
    ds, kind = _one(obj, "write_product_netcdf")
    for name, var in ds.variables.items():
        if var.dtype.kind == "O":
            raise SeaprofileError(
                f"obj: variable {name!r} holds Python objects, which "
                "netCDF cannot store; convert it to numbers or text"
            )
    out = ds.copy(deep=False)
    out.attrs = _global_attrs(ds.attrs, kind, "write_netcdf")
    for var in out.variables.values():
        var.attrs = {k: _nc_attr(v) for k, v in var.attrs.items()}

    def fill(tmp):
        with NETCDF_LOCK:
            if not any(v.chunks is not None for v in out.variables.values()):
                out.to_netcdf(tmp, format="NETCDF4")
                return
            # dask data: the file laid out, then its chunks computed once, streamed in
            pending = out.to_netcdf(tmp, format="NETCDF4", compute=False)
            with dask_progress():
                pending.compute()

    return atomic_write(path, overwrite, fill)


def write_product_json(obj, path, *, overwrite=False):
    """Write one gridded product as seaprofile JSON (NaN as null), atomically.

    ``{"format": "seaprofile", "format_version": 1, "caution": ..., "product": kind,
    "dataset": {"kind", "dimensions", "attributes", "coordinates", "variables"}}``;
    :func:`seaprofile.casts.write.dataset_from_dict` rebuilds the Dataset from
    ``"dataset"``. The arguments are those of :func:`write_product_netcdf`.
    """
    ds, kind = _one(obj, "write_product_json")
    doc = {
        "format": "seaprofile",
        "format_version": 1,
        "caution": _cf.CAUTION,
        "product": kind,
        "dataset": {
            "kind": kind,
            "dimensions": {str(k): int(v) for k, v in ds.sizes.items()},
            "attributes": _jsonable_attrs({**ds.attrs, "product": kind}),
            "coordinates": {str(k): _variable_dict(ds[k]) for k in ds.coords},
            "variables": {str(k): _variable_dict(ds[k]) for k in ds.data_vars},
        },
    }
    text = json.dumps(doc, indent=1, allow_nan=False)

    def fill(tmp):
        Path(tmp).write_text(text + "\n", encoding="utf-8")

    return atomic_write(path, overwrite, fill)


# --- the product kinds -----------------------------------------------------------------


def _is_cast(ds):
    return set(ds.dims) == {"sample"}


def _is_profile(ds):
    return set(ds.dims) == {"depth"}


def _is_ray_fan(ds):
    return {"ray", "point"} <= set(ds.dims) and {"range", "depth"} <= set(ds.variables)


def _is_path_table(ds):
    # one entry per eigenray along ``path`` (the PathTable record of eigenrays)
    return "path" in ds.dims and {"receiver_range", "receiver_depth"} <= set(ds.coords)


def _write_netcdf4(ds, path, *, overwrite=False):
    """:func:`seaprofile.casts.write.write_netcdf` with ``version=4`` (the ``netcdf4`` format)."""
    return write_netcdf(ds, path, overwrite=overwrite, version=4)


_CAST_WRITERS = {
    "netcdf": write_netcdf,
    "netcdf4": _write_netcdf4,
    "csv": write_csv,
    "json": write_json,
}
register_product("cast", description="cast", detect=_is_cast, writers=_CAST_WRITERS)
register_product(
    "profile",
    description="profile",
    detect=_is_profile,
    writers={**_CAST_WRITERS, "table": write_speed_table},
)
# a gridded product is netCDF-4 under either netCDF format name (.nc and .nc4 alike)
_GRIDDED = {
    "netcdf": write_product_netcdf,
    "netcdf4": write_product_netcdf,
    "json": write_product_json,
}
register_product("ray_fan", description="ray fan", detect=_is_ray_fan, writers=_GRIDDED)
register_product(
    "loss_field",
    description="transmission loss field",
    detect=lambda ds: {"depth", "range"} == set(ds.dims) and "transmission_loss" in ds,
    writers=_GRIDDED,
)
register_product(
    "coverage",
    description="detection coverage (signal excess, shadow zones, detection ranges by depth)",
    detect=lambda ds: "signal_excess" in ds,
    writers=_GRIDDED,
)
register_product(
    "path_table", description="eigenray paths (PathTable)", detect=_is_path_table, writers=_GRIDDED
)

# The survey products carry their kind in the ``product`` attribute (seaprofile.survey).
for _kind, _description in (
    ("soundings", "refraction-corrected soundings (depth and across-track distance)"),
    ("profile_error", "depth and across-track error against beam angle (cast comparison)"),
    ("depth_uncertainty", "depth uncertainty against beam angle beside the IHO S-44 budget"),
    ("cast_neighbour_check", "neighbouring casts compared against the survey budget"),
):
    register_product(
        _kind,
        description=_description,
        detect=lambda ds, k=_kind: ds.attrs.get("product") == k,
        writers=_GRIDDED,
    )
