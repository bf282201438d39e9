"""Cheap access to the arrays of a Cast or Profile for the per-cast steps.

A Cast has 5000 samples or so: numpy work on it takes microseconds, while building an
``xarray.DataArray`` on every ``ds[name]`` or testing flags with :func:`numpy.isin` takes
tens of them. The steps of :mod:`seaprofile.casts.despike`, :mod:`seaprofile.casts.binning`
and :mod:`seaprofile.casts.gaps` read their arrays with ``ds.variables[name].values`` and test flags with
:func:`usable`, which gives exactly what :func:`seaprofile._cf.usable` gives.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf

# flag byte -> unusable (3, 4, 9): one table look-up per sample
_UNUSABLE = np.zeros(256, dtype=bool)
_UNUSABLE[np.array(_cf.UNUSABLE_FLAGS, dtype=np.int8).view(np.uint8)] = True


def usable(values, flags):
    """Where ``values`` may be used: :func:`seaprofile._cf.usable`, by table look-up.

    Parameters
    ----------
    values : numpy.ndarray of float
        Values of any variable, in its own units.
    flags : numpy.ndarray of int
        Their Argo flags (same shape). Flags stored as int8 or uint8 (every Cast and
        Profile) are looked up in a 256-entry table; any other dtype goes through
        :func:`seaprofile._cf.usable` itself.

    Returns
    -------
    numpy.ndarray of bool
        True where the value is finite and its flag is not 3, 4 or 9.
    """
    flags = np.asarray(flags)
    if flags.dtype == np.int8 or flags.dtype == np.uint8:
        return np.isfinite(values) & ~_UNUSABLE[flags.view(np.uint8)]
    return _cf.usable(values, flags)


def with_variables(ds, new, attrs):
    """A new Dataset: ``ds`` with the data variables ``new`` added or replaced, built once.

    The same Dataset as ``ds.assign(new)`` with ``attrs`` as its attributes -- variables in
    the same order (a replaced variable keeps its place, an added one comes last), the
    same coordinates, indexes and encoding -- for the cost of one Dataset construction
    instead of the copy, alignment and merge of :meth:`xarray.Dataset.assign`.

    Parameters
    ----------
    ds : xarray.Dataset
        Not modified; its Variables are shared, not copied (as :meth:`~xarray.Dataset.assign`
        shares them).
    new : dict of str to xarray.Variable
        Data variables (not coordinates) on dimensions of ``ds``, in their own units.
    attrs : dict
        The attributes of the result.

    Returns
    -------
    xarray.Dataset
    """
    coords = ds.coords
    data = {name: var for name, var in ds.variables.items() if name not in coords}
    data.update(new)
    out = xr.Dataset(data, coords=coords, attrs=attrs)
    out = out[list(ds.variables) + [name for name in new if name not in ds.variables]]
    out.encoding = dict(ds.encoding)
    return out
