"""Reading a Cast's arrays and building a step's output Dataset without xarray overhead.

A Cast has 5000 samples or so: numpy work on it takes microseconds, while building a
DataArray on every ``ds[name]`` takes about ten and each xarray copy, alignment and merge
a few hundred. :func:`values` gives what ``ds[name].values`` gives, from the Variable;
:func:`dataset` what the public ``xr.Dataset`` constructor gives, through xarray's direct
one (the public one as fallback); :func:`with_variables` what
:meth:`xarray.Dataset.assign` gives -- same variables, order, coordinates, indexes and
encoding -- through :func:`dataset`. Used by :mod:`seaprofile.casts.despike`,
:mod:`seaprofile.casts.binning` and :mod:`seaprofile.casts.gaps`.
"""

from __future__ import annotations

import xarray as xr
from xarray.indexes import PandasIndex


def values(ds, name):
    """``ds[name].values`` without building a DataArray (numpy array, the variable's units).

    Read from ``ds.variables``; a name that is not a variable (a dimension without a
    coordinate, a missing name) goes through ``ds[name]``, so that the result, or the
    KeyError and its message, are xarray's own.
    """
    var = ds.variables.get(name)
    return ds[name].values if var is None else var.values


def dataset(data_vars, coords, attrs):
    """``xr.Dataset(data_vars, coords=coords, attrs=attrs)`` for ``xr.Variable`` objects,
    without the public constructor's merge and alignment.

    Parameters
    ----------
    data_vars, coords : dict of str to xarray.Variable
        Variables whose sizes agree; a coordinate on the dimension of its own name (a
        Profile's ``depth``) gets the pandas index the public constructor would give it
        (xarray's :class:`~xarray.indexes.PandasIndex`).
    attrs : dict
        The attributes of the result.

    Returns
    -------
    xarray.Dataset
        The same Dataset as the public constructor's (variables copied shallowly, in the
        order data variables then coordinates; ``tests/casts/test_fastds.py`` checks they
        are identical), from xarray's direct constructor; the public one is used where
        that is missing, a data variable is named like a dimension or a coordinate, or
        sizes disagree (so that its errors are the public constructor's).
    """
    construct = getattr(xr.Dataset, "_construct_direct", None)
    sizes = {}
    for var in (*data_vars.values(), *coords.values()):
        for dim, size in zip(var.dims, var.shape):
            if sizes.setdefault(dim, size) != size:
                construct = None
    named = sizes.keys() | coords.keys()  # a data variable by such a name needs merging
    if construct is None or not named.isdisjoint(data_vars):
        return xr.Dataset(data_vars, coords=coords, attrs=attrs)
    variables = {name: var.copy(deep=False) for name, var in data_vars.items()}
    indexes = {}
    for name, var in coords.items():
        if var.dims == (name,):
            indexes[name] = PandasIndex.from_variables({name: var}, options={})
            variables.update(indexes[name].create_variables({name: var}))
        else:
            variables[name] = var.copy(deep=False)
    return construct(variables, set(coords), sizes, attrs=dict(attrs), indexes=indexes)


def with_variables(ds, new, attrs):
    """A new Dataset: ``ds`` with the data variables ``new`` added or replaced, built once.

    The same Dataset as ``ds.assign(new)`` with ``attrs`` as its attributes -- variables in
    the same order (a replaced variable keeps its place, an added one comes last), the
    same coordinates, indexes and encoding -- for the cost of one Dataset construction
    (:func:`dataset`) instead of the copy, alignment and merge of
    :meth:`xarray.Dataset.assign`.

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
    coords = {name: ds.variables[name] for name in ds.coords}
    data = {name: var for name, var in ds.variables.items() if name not in coords}
    data.update(new)
    out = dataset(data, coords, attrs)
    out = out[list(ds.variables) + [name for name in new if name not in ds.variables]]
    out.encoding = dict(ds.encoding)
    return out
