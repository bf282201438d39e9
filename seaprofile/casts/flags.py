"""Flag arithmetic: merging the flags of a test, and the flag of a derived quantity.

Flags follow Argo reference table 2 (:mod:`seaprofile._cf`). :func:`raise_flags` merges a
test's flags into the current ones so that none is ever lowered, comparing by severity
``0 < 1 < 2 < 5 < 3 < 4`` (Argo's order 0 < 1 < 2 < 3 < 4, with 5 "changed" counted as
usable data below "probably bad") and never changing 8 (estimated) or 9 (missing).
:func:`worst_flag` gives a quantity derived from several inputs the most severe of their
flags in the order ``0 < 1 < 2 < 5 < 8 < 3 < 4 < 9``; :func:`derived_variables` says which
variables of a Dataset were computed from which, and :func:`pass_on_failed` passes the
flags of failed inputs on to them (used by quality control and despiking).
"""

from __future__ import annotations

import numba
import numpy as np

from .. import _cf
from ..io.errors import ArgumentError

__all__ = ["raise_flags", "raise_where", "worst_flag", "derived_variables", "pass_on_failed"]

# severity rank indexed by the flag value 0..9 (6 and 7 are unused by Argo table 2)
_RAISE_RANK = np.array([0, 1, 2, 4, 5, 3, 0, 0, 0, 0], dtype=np.int8)
_DERIVED_RANK = np.array([0, 1, 2, 5, 6, 3, 0, 0, 4, 7], dtype=np.int8)
# flags a test never changes (compile-time constants of the kernels below)
_KEPT_A, _KEPT_B = _cf.ESTIMATED, _cf.MISSING


def raise_flags(old, new):
    """Merge flags so that none is ever lowered.

    Parameters
    ----------
    old : array_like of int
        Current Argo flags (0..9).
    new : array_like of int
        Flags a test proposes (0 where it has nothing to say).

    Returns
    -------
    numpy.ndarray of int8
        ``new`` where it is more severe than ``old`` (order 0 < 1 < 2 < 5 < 3 < 4), else
        ``old``; flags 8 (estimated) and 9 (missing) in ``old`` are kept as they are.

    Raises
    ------
    seaprofile.io.ArgumentError
        Naming ``old`` or ``new`` when it holds a value outside 0..9.
    """
    old = np.asarray(old, dtype=np.int8)
    new = np.broadcast_to(np.asarray(new, dtype=np.int8), old.shape)
    _check_flag_values(old, "old")
    _check_flag_values(new, "new")
    out = _raise_kernel(old.ravel(), np.ascontiguousarray(new).ravel(), _RAISE_RANK)
    return out.reshape(old.shape)


def raise_where(old, mask, flag):
    """:func:`raise_flags` of ``old`` and ``flag`` where ``mask``, 0 elsewhere (one pass).

    Parameters
    ----------
    old : numpy.ndarray of int8
        Current Argo flags (0..9), 1-D.
    mask : numpy.ndarray of bool
        Where the test failed, same shape.
    flag : int
        The flag the test gives a failure (0..9).

    Returns
    -------
    numpy.ndarray of int8
        Equal to ``raise_flags(old, numpy.where(mask, flag, 0))``.

    Raises
    ------
    seaprofile.io.ArgumentError
        Naming ``old`` or ``flag`` when a value lies outside 0..9.
    """
    old = np.ascontiguousarray(old, dtype=np.int8)
    _check_flag_values(old, "old")
    if not 0 <= int(flag) <= 9:
        raise ArgumentError("flag", f"must be an Argo flag 0..9, got {flag}")
    return _raise_where_kernel(
        old, np.ascontiguousarray(mask, dtype=np.bool_), np.int8(flag), _RAISE_RANK
    )


def _check_flag_values(flags, name):
    """Flags outside 0..9 have no severity: an error naming the argument."""
    if flags.size and (flags.min() < 0 or flags.max() > 9):
        raise ArgumentError(name, "Argo flags are 0..9, got values outside that range")


@numba.njit(cache=True, nogil=True)
def _raise_kernel(old, new, rank):
    """One pass of :func:`raise_flags` over 1-D int8 flags (values checked to be 0..9)."""
    out = np.empty(old.size, np.int8)
    for i in range(old.size):
        o = old[i]
        if o == _KEPT_A or o == _KEPT_B or rank[new[i]] <= rank[o]:
            out[i] = o
        else:
            out[i] = new[i]
    return out


@numba.njit(cache=True, nogil=True)
def _raise_where_kernel(old, mask, flag, rank):
    """:func:`_raise_kernel` with ``new = flag where mask else 0``."""
    out = np.empty(old.size, np.int8)
    for i in range(old.size):
        o = old[i]
        if mask[i] and o != _KEPT_A and o != _KEPT_B and rank[flag] > rank[o]:
            out[i] = flag
        else:
            out[i] = o
    return out


def worst_flag(*flags):
    """Flag of a quantity derived from inputs with the given flags.

    The most severe input flag in the order 0 < 1 < 2 < 5 < 8 < 3 < 4 < 9 (estimated
    inputs give an estimated result; bad or missing inputs a bad or missing one).
    """
    arrays = np.broadcast_arrays(*[np.asarray(f, dtype=np.int8) for f in flags])
    out = arrays[0].copy()
    for f in arrays[1:]:
        out = np.where(_DERIVED_RANK[f] > _DERIVED_RANK[out], f, out)
    return out.astype(np.int8)


def derived_variables(ds):
    """The variables of ``ds`` computed from others, with the inputs present in ``ds``.

    A variable is derived when its attribute ``derived_from`` names its inputs (separated
    by spaces; :func:`seaprofile.casts.process.add_salinity` writes it). Datasets made
    without that attribute follow two rules: salinity next to conductivity was computed
    from it (a CTD's salinity channel is), and a ``sound_speed`` whose ``equation``
    attribute is not ``"measured"`` from temperature, salinity and pressure.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile.

    Returns
    -------
    list of (str, tuple of str)
        ``(variable, inputs)`` pairs, in the order of ``ds``'s variables.
    """
    out = []
    for var in ds.data_vars:
        named = str(ds.variables[var].attrs.get("derived_from", "")).split()
        if not named and var == "salinity" and "conductivity" in ds.data_vars:
            named = ["conductivity", "temperature", "pressure"]
        if not named and var == "sound_speed" and ds.attrs.get("equation", "") != "measured":
            named = ["temperature", "salinity", "pressure"]
        inputs = tuple(v for v in named if v in ds.data_vars and v != var)
        if inputs:
            out.append((str(var), inputs))
    return out


def pass_on_failed(ds, flag):
    """Flags of the derived variables of ``ds`` after passing on failed input flags.

    Where an input of a derived variable (:func:`derived_variables`) is flagged 3 or 4
    (:data:`seaprofile._cf.FAILED_FLAGS`) the derived value is raised to that flag
    (:func:`worst_flag` of the inputs, merged with :func:`raise_flags`: never lowered;
    8 and 9 kept).

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile.
    flag : callable
        ``flag(variable)`` returns the current flags (int array) of a variable of ``ds``.

    Returns
    -------
    dict
        ``{variable: new flags}`` for every derived variable (a derived variable that is
        the input of another is done first).
    """
    pairs = derived_variables(ds)
    # inputs first: salinity before the sound speed computed from it
    pairs.sort(key=lambda pair: -sum(pair[0] in inputs for _, inputs in pairs))
    out = {}
    for var, inputs in pairs:
        src = worst_flag(*[out[v] if v in out else flag(v) for v in inputs])
        failed = _cf.flags_in(src, _cf.FAILED_FLAGS)
        out[var] = raise_flags(out[var] if var in out else flag(var), np.where(failed, src, 0))
    return out
