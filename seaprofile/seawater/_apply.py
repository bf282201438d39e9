"""The one way numpy, dask and xarray inputs reach seaprofile's numeric functions.

Every public numeric function of :mod:`seaprofile.seawater` and :mod:`seaprofile.layers`
hands its inputs to one of two dispatchers here:

- :func:`pointwise` for functions of one point (sound speed, depth, density, ...);
- :func:`columnwise` for column diagnostics that reduce a profile along its vertical
  dimension (mixed and sonic layer depth, channels, harmonic mean, ...).

Both follow the same rules:

* **numpy** (and plain numbers): the numpy function is called directly; for the compiled
  equations that is :func:`run_loop`, a flat ``@numba.njit(cache=True)`` loop.
* **xarray** (numpy- or dask-backed) and **dask**: ``xr.apply_ufunc(...,
  dask="parallelized")``; plain dask arrays are labelled with positional dimensions first,
  so they broadcast like numpy arrays, and come back as dask arrays. Nothing is computed
  before ``.compute()``.
* **Alignment**: xarray inputs must align exactly (same dimension sizes, identical
  coordinate values); otherwise :class:`SeaprofileError` names the arguments and the
  dimension. Mixing an xarray input with a non-scalar plain array is refused (which
  dimension the plain array means would be a guess). Plain arrays broadcast as numpy does;
  shapes that do not broadcast raise :class:`SeaprofileError` naming every argument.
* **Positions**: every argument called ``latitude`` or ``longitude`` is checked by
  :func:`seaprofile._validate.check_position` (finite, -90..90 / -180..360, NaN refused)
  before any library sees it; eagerly for numpy data, block by block when dask computes.
* **Attributes**: an xarray result is named after its quantity and carries the CF
  attributes of :func:`output_attrs` (``standard_name`` where CF has one, ``long_name``,
  ``units``) plus its provenance (``equation``: the published method or library
  function, ``references``, ``seaprofile_version``); never the attributes of an input.
* **Column diagnostics**: the vertical dimension ``dim`` is the core dimension; a dask
  input split into several chunks along it raises :class:`SeaprofileError` naming the
  dimension and the rechunk that fixes it (``.chunk({dim: -1})``).
"""

from __future__ import annotations

import functools

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array, check_position, is_lazy
from .._version import __version__

__all__ = ["pointwise", "columnwise", "run_loop", "output_attrs"]

_POSITIONS = ("latitude", "longitude")
_XR = (xr.DataArray, xr.Variable)


def output_attrs(quantity, equation, references=None, **extra):
    """CF attributes of a result: the quantity's CF entry plus its provenance.

    Parameters
    ----------
    quantity : str
        A key of :data:`seaprofile._cf.VARIABLES`, or a dict of CF attributes for a
        quantity the data model does not list.
    equation : str
        The published method (a key of ``EQUATIONS`` / ``METHODS``) or library function
        that computed it.
    references : str, optional
        Citation of ``equation``.
    """
    out = dict(quantity) if isinstance(quantity, dict) else _cf.attrs_for(quantity)
    out.update(extra)
    out["equation"] = equation
    if references:
        out["references"] = references
    out["seaprofile_version"] = __version__
    return out


# --- input classification ----------------------------------------------------------------


def _prepare(named):
    """Validate eagerly what can be validated; return the values and the input kind."""
    values = []
    kind = "numpy"
    for name, v in named:
        if isinstance(v, xr.Dataset):
            raise SeaprofileError(f"{name} must be an array or a DataArray, not a Dataset")
        if isinstance(v, _XR):
            kind = "xarray"
            if not is_lazy(v):
                _check_eager(name, v.values)
            values.append(v)
        elif is_lazy(v):
            kind = "dask" if kind == "numpy" else kind
            values.append(v)
        else:
            values.append(_check_eager(name, v))
    if kind == "xarray":
        for (name, _), v in zip(named, values):
            if not isinstance(v, _XR) and np.ndim(v) != 0:
                raise SeaprofileError(
                    f"{name} must be an xarray.DataArray or a scalar when other inputs are "
                    "DataArrays (which of its dimensions is which would be a guess)"
                )
        _check_aligned([(n, v) for (n, _), v in zip(named, values) if isinstance(v, _XR)])
    return values, kind


def _check_eager(name, value):
    if name in _POSITIONS:
        return check_position(name, value)
    return as_float_array(name, value)


def _check_aligned(named):
    """xarray inputs must align exactly: same sizes, identical coordinate values."""
    seen = {}
    for name, v in named:
        for dim in v.dims:
            index = v.indexes.get(dim) if isinstance(v, xr.DataArray) else None
            if dim not in seen:
                seen[dim] = (name, v.sizes[dim], index)
                continue
            first, size, first_index = seen[dim]
            if v.sizes[dim] != size:
                why = f"sizes {size} and {v.sizes[dim]}"
            elif index is not None and first_index is not None and not index.equals(first_index):
                why = "different coordinate values"
            else:
                if first_index is None and index is not None:
                    seen[dim] = (name, size, index)
                continue
            raise SeaprofileError(
                f"{first} and {name} do not align along dimension {dim!r} ({why}); xarray "
                "inputs must share identical coordinates: select or reindex them first "
                "(e.g. xr.align(a, b, join='inner'))"
            )


def _broadcast_shape(named_shapes):
    try:
        return np.broadcast_shapes(*(s for _, s in named_shapes))
    except ValueError:
        shapes = ", ".join(f"{n} {tuple(s)}" for n, s in named_shapes)
        raise SeaprofileError(f"input shapes do not broadcast together: {shapes}") from None


def _block_checked(func, names):
    """``func`` on blocks, checking position blocks first (lazy inputs are checked here)."""
    positions = [i for i, n in enumerate(names) if n in _POSITIONS]
    if not positions:
        return func

    def run(*blocks):
        for i in positions:
            check_position(names[i], blocks[i])
        return func(*blocks)

    return run


def _label_plain(named, values, core_ndim=(), core_dim="core"):
    """Plain (dask or numpy) arrays as xr.Variables with positional dims, numpy-style.

    The last axis of an argument with ``core_ndim[i] == 1`` is the core axis, named
    ``core_dim``; the leading (loop) axes are broadcast with numpy's rules.
    """
    core_ndim = list(core_ndim) or [0] * len(values)
    loops = [(n, np.shape(v)[: np.ndim(v) - k]) for (n, _), v, k in zip(named, values, core_ndim)]
    shape = _broadcast_shape(loops)
    dims = tuple(f"axis_{i}" for i in range(len(shape)))
    out = []
    for v, k in zip(values, core_ndim):
        lead = np.ndim(v) - k
        full = shape[len(shape) - lead :] if lead else ()
        if lead and np.shape(v)[:lead] != full:
            v = _broadcast_lead(v, full, k)
        core = (core_dim,) * k
        out.append(xr.Variable(dims[len(shape) - lead :] + core, v))
    return out, dims


def _broadcast_lead(v, lead_shape, k):
    target = tuple(lead_shape) + np.shape(v)[np.ndim(v) - k :]
    if is_lazy(v):
        import dask.array as da

        return da.broadcast_to(v, target)
    return np.broadcast_to(v, target)


# --- point-wise functions ----------------------------------------------------------------


def pointwise(func, named, *, name=None, attrs=None, dtype=np.float64):
    """Run a point-wise numpy function on numpy, dask or xarray inputs (the one route).

    Parameters
    ----------
    func : callable
        ``func(*arrays)``: float64 numpy arrays (broadcastable) in, one ``dtype`` array out.
    named : sequence of (str, object)
        Argument names (for messages; ``latitude``/``longitude`` are position-checked)
        and values, in call order.
    name : str, optional
        Name of an xarray result.
    attrs : dict, optional
        Attributes of an xarray result (see :func:`output_attrs`); none when omitted.
    dtype : numpy dtype
        Output dtype.

    Returns
    -------
    numpy.ndarray or scalar, dask array or xarray.DataArray
        As the inputs: any xarray input gives a DataArray, else any dask input a dask array.
    """
    names = [n for n, _ in named]
    values, kind = _prepare(named)
    if kind == "numpy":
        _broadcast_shape([(n, np.shape(v)) for n, v in zip(names, values)])
        return func(*values)
    block = _block_checked(functools.partial(_as_numpy, func), names)
    if kind == "dask":
        values, _ = _label_plain(named, values)
    out = xr.apply_ufunc(
        block, *values, dask="parallelized", output_dtypes=[dtype], join="exact", keep_attrs=False
    )
    if kind == "dask":
        return out.data
    if isinstance(out, xr.DataArray):
        out.name = name
    out.attrs = dict(attrs or {})
    return out


def _as_numpy(func, *blocks):
    return func(*[np.asarray(b, dtype=np.float64) for b in blocks])


def run_loop(loop, arrays, extra=(), dtype=np.float64, *, names=None, name=None, attrs=None):
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
    names : sequence of str, optional
        Argument names for messages (and position checks); default ``argument 1``, ...
    name, attrs : optional
        Name and attributes of an xarray result (see :func:`pointwise`).

    Returns
    -------
    numpy.ndarray, numpy scalar, dask array or xarray.DataArray
        Shaped like the broadcast inputs; a numpy scalar for 0-d inputs. Numpy inputs run
        the loop directly; any dask or xarray input goes through :func:`pointwise`.

    Raises
    ------
    TypeError
        A numpy input that cannot be cast safely to float64 (as a float64-only ufunc).
    ValueError
        Numpy shapes that do not broadcast together.
    """
    if all(type(a) in _PLAIN for a in arrays) or not any(
        isinstance(a, (xr.DataArray, xr.Dataset, xr.Variable)) or is_lazy(a) for a in arrays
    ):
        if names:  # a public function: errors name its arguments
            arrays = [_check_eager(n, a) for n, a in zip(names, arrays)]
            _broadcast_shape([(n, np.shape(a)) for n, a in zip(names, arrays)])
        return _run_numpy(loop, *arrays, extra=extra, dtype=dtype)
    names = list(names or (f"argument {i + 1}" for i in range(len(arrays))))
    func = functools.partial(_run_numpy, loop, extra=extra, dtype=dtype)
    return pointwise(func, list(zip(names, arrays)), name=name, attrs=attrs, dtype=dtype)


_PLAIN = (np.ndarray, float, int, np.float64)  # types that need no xarray/dask check


def _run_numpy(loop, *arrays, extra, dtype):
    arrs = [_float64(a) for a in arrays]
    shape = np.broadcast(*arrs).shape  # ValueError naming the shapes when they clash
    n = 1
    for k in shape:
        n *= k
    # keep Fortran order when every full-size input has it (numpy's order="K", roughly)
    full = [a for a in arrs if a.shape == shape] if len(shape) > 1 else ()
    order = (
        "F"
        if full and all(a.flags.f_contiguous and not a.flags.c_contiguous for a in full)
        else "C"
    )
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


# --- column diagnostics ------------------------------------------------------------------


def columnwise(func, columns, *, dim="depth", params=(), outputs, dtypes=None, new_dim=None):
    """Run a column diagnostic on numpy, dask or xarray profiles (the core-dimension route).

    Parameters
    ----------
    func : callable
        ``func(*columns, *params)`` on numpy arrays: each column has the vertical axis last
        (shape ``(..., n)`` or ``(n,)``, broadcast over the leading profile axes) and the
        per-profile ``params`` broadcast against those leading axes. Returns a tuple of
        ``len(outputs)`` arrays shaped like the profile axes (plus a last axis
        ``new_dim`` when given).
    columns : sequence of (str, object)
        Names and values of the arrays along the vertical (numpy: last axis; xarray: the
        dimension ``dim``), e.g. ``[("sound_speed", c), ("depth", z)]``. Plain 1-D arrays
        next to DataArrays are taken to lie along ``dim``.
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).
    params : sequence of (str, object)
        Per-profile arguments (scalars, or arrays over the profile axes / dimensions).
    outputs : sequence of (str, dict)
        Name and attributes of each output (used for xarray results).
    dtypes : sequence of numpy dtype, optional
        Output dtypes (default all float64).
    new_dim : (str, int), optional
        Name and length of a vertical dimension of the outputs that replaces ``dim``
        (e.g. mid-points between samples).

    Returns
    -------
    tuple
        One numpy array (or scalar), dask array or xarray.DataArray per output.
    """
    dtypes = list(dtypes or [np.float64] * len(outputs))
    if any(isinstance(v, _XR) for _, v in columns):
        columns = [(n, _along(n, v, dim)) for n, v in columns]
    named = [*columns, *params]
    names = [n for n, _ in named]
    values, kind = _prepare(named)
    if kind == "numpy":
        return func(*values)
    # a scalar among the columns (e.g. one salinity for the whole column) is broadcast
    core_ndim = [min(np.ndim(v), 1) for v in values[: len(columns)]] + [0] * len(params)
    if not core_ndim[0]:
        raise SeaprofileError(f"{names[0]} needs a vertical axis")
    if kind == "dask":
        values, _ = _label_plain(named, values, core_ndim, dim)
    for n, v, k in zip(names, values, core_ndim):
        if k and dim not in v.dims:
            raise SeaprofileError(
                f"{n} has no dimension {dim!r} (dims {list(v.dims)}); "
                "pass dim= the vertical dimension"
            )
        _check_core_chunks(n, v, dim, kind == "dask")
    block = _block_checked(functools.partial(_columns_numpy, func, len(outputs)), names)
    extra = {}
    out_core = [[]] * len(outputs)
    if new_dim is not None:
        out_core = [[new_dim[0]]] * len(outputs)
        extra = {
            "exclude_dims": {dim},
            "dask_gufunc_kwargs": {"output_sizes": {new_dim[0]: new_dim[1]}},
        }
    out = xr.apply_ufunc(
        block,
        *values,
        input_core_dims=[[dim] if k else [] for k in core_ndim],
        output_core_dims=out_core,
        dask="parallelized",
        output_dtypes=dtypes,
        join="exact",
        keep_attrs=False,
        **extra,
    )
    out = out if isinstance(out, tuple) else (out,)
    if kind == "dask":
        return tuple(o.data for o in out)
    for o, (oname, attrs) in zip(out, outputs):
        o.name = oname
        o.attrs = dict(attrs)
    return out


def _along(name, v, dim):
    """A column argument next to DataArrays: a plain 1-D array lies along ``dim``."""
    if isinstance(v, _XR) or np.ndim(v) == 0:
        return v
    if np.ndim(v) != 1:
        raise SeaprofileError(f"{name} must be 1-D or a DataArray when other inputs are DataArrays")
    return xr.Variable((dim,), as_float_array(name, v))


def _check_core_chunks(name, v, dim, plain):
    chunks = getattr(v, "chunksizes", None) if isinstance(v, _XR) else None
    if chunks and dim in chunks and len(chunks[dim]) > 1:
        where, fix = (
            ("its last (vertical) axis", ".rechunk({-1: -1})")
            if plain
            else (f"the vertical dimension {dim!r}", f".chunk({{{dim!r}: -1}})")
        )
        raise SeaprofileError(
            f"{name} is split into {len(chunks[dim])} chunks along {where}; a column "
            f"diagnostic needs each profile in one chunk: rechunk with {fix}"
        )


def _columns_numpy(func, n_out, *blocks):
    out = func(*[np.asarray(b, dtype=np.float64) for b in blocks])
    out = out if isinstance(out, tuple) else (out,)
    return tuple(np.asarray(o) for o in out) if n_out > 1 else np.asarray(out[0])
