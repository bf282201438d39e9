"""Shared helpers of the seawater modules: latitude check and point-wise dispatch.

:func:`apply_pointwise` runs a point-wise numpy function on numpy, dask or xarray inputs
(xarray through ``xr.apply_ufunc(..., dask="parallelized")``, dask through
``map_blocks``); :func:`check_latitude` validates a latitude argument before any work is
queued. Used by :mod:`.depth` and :mod:`.state`.

:func:`run_loop` is the bridge from a public numpy function to its compiled kernel: it
broadcasts the inputs like a numpy ufunc, flattens them to contiguous float64 arrays and
calls a ``@numba.njit(cache=True)`` loop that fills a flat output. The kernels are
compiled (or loaded from numba's on-disk cache) on first use, never at import, so
``import seaprofile`` stays fast.
"""

from __future__ import annotations

import functools

import numpy as np
import xarray as xr

from .._validate import SeaprofileError, as_float_array, is_lazy

__all__ = ["apply_pointwise", "check_latitude", "run_loop"]


def check_latitude(latitude):
    """Raise :class:`SeaprofileError` naming ``latitude`` if it is missing or invalid.

    Lazy (dask-backed) latitudes are not computed to check them.
    """
    if latitude is None:
        raise SeaprofileError(
            "latitude is required (degrees north); give the cast position"
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


def run_loop(loop, arrays, extra=(), dtype=np.float64):
    """Call a compiled point-wise loop on broadcast inputs, the way a numpy ufunc would.

    Parameters
    ----------
    loop : numba dispatcher
        ``loop(*flat_inputs, *extra, out)``: reads 1-D contiguous read-only float64 arrays
        of equal length and writes ``out`` (1-D, same length, ``dtype``) element by element.
    arrays : sequence of array_like, dask arrays or xarray objects
        The point-wise inputs (any units; the loop knows them), broadcast together.
    extra : tuple
        Scalars passed after the flat inputs (same type on every call, so that the loop
        compiles once).
    dtype : numpy dtype
        Output dtype.

    Returns
    -------
    numpy.ndarray, numpy scalar, dask array or xarray.DataArray
        Shaped like the broadcast inputs; a numpy scalar for 0-d inputs. xarray and dask
        inputs give xarray and (lazy) dask results, as a numpy ufunc would.

    Raises
    ------
    TypeError
        An input that cannot be cast safely to float64 (as a float64-only ufunc).
    ValueError
        Shapes that do not broadcast together.
    """
    if not all(type(a) in _PLAIN for a in arrays) and any(
        isinstance(a, (xr.DataArray, xr.Dataset, xr.Variable)) or is_lazy(a) for a in arrays
    ):
        return _run_duck(functools.partial(_run_numpy, loop, extra=extra, dtype=dtype),
                         arrays, dtype)
    return _run_numpy(loop, *arrays, extra=extra, dtype=dtype)


_PLAIN = (np.ndarray, float, int, np.float64)  # types that need no xarray/dask check


def _run_numpy(loop, *arrays, extra, dtype):
    arrs = [_float64(a) for a in arrays]
    shape = np.broadcast(*arrs).shape  # ValueError naming the shapes when they clash
    n = 1
    for k in shape:
        n *= k
    # keep Fortran order when every full-size input has it (numpy's order="K", roughly)
    full = [a for a in arrs if a.shape == shape] if len(shape) > 1 else ()
    order = "F" if full and all(
        a.flags.f_contiguous and not a.flags.c_contiguous for a in full) else "C"
    flat = []
    for a in arrs:
        if a.size == n and (a.flags.c_contiguous if order == "C" else a.flags.f_contiguous):
            f = a.reshape(-1, order=order)  # a view, no copy
        elif a.size == 1:
            f = np.full(n, a.reshape(-1)[0])
        else:
            f = np.ravel(np.broadcast_to(a, shape), order=order)
        f = f.view()
        f.flags.writeable = False  # one array type per argument: the loop compiles once
        flat.append(f)
    out = np.empty(n, dtype=dtype)
    loop(*flat, *extra, out)
    if len(shape) == 1:
        return out
    out = out.reshape(shape, order=order)
    return out[()] if out.ndim == 0 else out


def _float64(a):
    arr = np.asarray(a)
    if arr.dtype != np.float64:
        if not np.can_cast(arr.dtype, np.float64):
            raise TypeError(
                f"expected numbers that convert safely to float64, got dtype {arr.dtype}"
            )
        arr = arr.astype(np.float64)
    return arr


def _run_duck(func, arrays, dtype):
    """``func`` over xarray (``apply_ufunc``) or dask (``map_blocks``) inputs, lazily."""
    if any(isinstance(a, (xr.DataArray, xr.Dataset, xr.Variable)) for a in arrays):
        options = xr.get_options()
        # the result is a new quantity: never the attributes of an input (callers set CF ones)
        return xr.apply_ufunc(
            func,
            *arrays,
            join=options["arithmetic_join"],
            dataset_join=options["arithmetic_join"],
            dataset_fill_value=np.nan,
            dask="parallelized",
            output_dtypes=[dtype],
            keep_attrs=False,
        )
    import dask.array as da

    blocks = da.broadcast_arrays(*[da.asarray(a) for a in arrays])
    meta = np.empty((0,) * blocks[0].ndim, dtype=dtype)
    return da.map_blocks(func, *blocks, dtype=dtype, meta=meta)
