"""Shared helpers of the seawater modules: latitude check and point-wise dispatch.

:func:`apply_pointwise` runs a point-wise numpy function on numpy, dask or xarray inputs
(xarray through ``xr.apply_ufunc(..., dask="parallelized")``, dask through
``map_blocks``); :func:`check_latitude` validates a latitude argument before any work is
queued. Used by :mod:`.depth` and :mod:`.state`.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .._validate import SeaprofileError, as_float_array, is_lazy

__all__ = ["apply_pointwise", "check_latitude"]


def check_latitude(latitude):
    """Raise :class:`SeaprofileError` naming ``latitude`` if it is missing or invalid.

    Lazy (dask-backed) latitudes are not computed to check them.
    """
    if latitude is None:
        raise SeaprofileError(
            "latitude is required (degrees north); give the cast position, "
            "or 45 for a mid-latitude default"
        )
    if is_lazy(latitude):
        return
    lat = as_float_array("latitude", getattr(latitude, "values", latitude))
    if lat.size and np.isnan(lat).all():
        raise SeaprofileError(
            "latitude is NaN (unknown position); give a latitude in degrees north"
        )
    with np.errstate(invalid="ignore"):
        bad = np.abs(lat) > 90.0
    if bad.any():
        raise SeaprofileError(
            f"latitude must lie within -90..90 degrees, got {lat[bad].ravel()[0]:g}"
        )


def apply_pointwise(func, named_args, attrs, out_name):
    """Run a point-wise numpy function on numpy, dask or xarray arguments.

    Parameters
    ----------
    func : callable
        Takes float64 numpy arrays (broadcastable) and returns one float64 array.
    named_args : list of (str, object)
        Argument names (for error messages) and values, in call order.
    attrs : dict
        Attributes of an xarray result.
    out_name : str
        Name of an xarray result.
    """
    values = []
    for name, v in named_args:
        if isinstance(v, (xr.DataArray, xr.Variable)) or is_lazy(v):
            values.append(v)
        else:
            values.append(as_float_array(name, v))
    if any(isinstance(v, xr.DataArray) for v in values):
        out = xr.apply_ufunc(
            lambda *a: func(*[np.asarray(x, dtype=np.float64) for x in a]),
            *values,
            dask="parallelized",
            output_dtypes=[np.float64],
        )
        out.attrs = dict(attrs)
        out.name = out_name
        return out
    if any(is_lazy(v) for v in values):
        import dask.array as da

        arrs = da.broadcast_arrays(*[da.asarray(v) for v in values])
        return da.map_blocks(
            lambda *a: func(*[np.asarray(x, dtype=np.float64) for x in a]),
            *arrs,
            dtype=np.float64,
        )
    return func(*values)
