"""Reading a Cast's arrays and building a step's output Dataset without xarray overhead.

A Cast has 5000 samples or so: numpy work on it takes microseconds, while building a
DataArray on every ``ds[name]`` takes about ten and each xarray copy, alignment and merge
a few hundred. :func:`values` gives what ``ds[name].values`` gives, from the Variable;
:func:`with_variables` gives what :meth:`xarray.Dataset.assign` gives -- same variables,
order, coordinates, indexes and encoding -- through one Dataset construction. Used by
:mod:`seaprofile.casts.despike`, :mod:`seaprofile.casts.binning` and
:mod:`seaprofile.casts.gaps`.
"""

from __future__ import annotations

import xarray as xr


def values(ds, name):
    """``ds[name].values`` without building a DataArray (numpy array, the variable's units).

    Read from ``ds.variables``; a name that is not a variable (a dimension without a
    coordinate, a missing name) goes through ``ds[name]``, so that the result, or the
    KeyError and its message, are xarray's own.
    """
    var = ds.variables.get(name)
    return ds[name].values if var is None else var.values


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
