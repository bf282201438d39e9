"""Argument checking shared by every module: one place for errors and range warnings.

Errors name the argument (or the file, line and column); warnings about an equation's
validity range name the variable, the range seen and the range the source supports.
"""

from __future__ import annotations

import warnings

import numpy as np

__all__ = [
    "SeaprofileError",
    "InputFileError",
    "OutsideValidityWarning",
    "as_float_array",
    "is_lazy",
    "require",
    "warn_outside",
]


class SeaprofileError(ValueError):
    """Bad input to a seaprofile function; the message names the argument."""


class InputFileError(SeaprofileError):
    """A file that cannot be read; the message names the file, line and column.

    Parameters
    ----------
    path : str
        The file.
    message : str
        What was expected and what was found.
    line, column : int, optional
        1-based line and column (column may be a column name) where reading failed.
    """

    def __init__(self, path, message, line=None, column=None):
        self.path = str(path)
        self.line = line
        self.column = column
        where = self.path
        if line is not None:
            where += f", line {line}"
        if column is not None:
            where += f", column {column}"
        super().__init__(f"{where}: {message}")


class OutsideValidityWarning(UserWarning):
    """Inputs fall outside the range over which a published equation was fitted."""


def require(condition, message):
    """Raise :class:`SeaprofileError` with ``message`` unless ``condition`` holds."""
    if not condition:
        raise SeaprofileError(message)


def is_lazy(x) -> bool:
    """True for dask arrays and xarray objects backed by dask (never computed here)."""
    data = getattr(x, "data", x)
    return type(data).__module__.split(".")[0] == "dask"


def as_float_array(name, value, *, allow_none=False):
    """Return ``value`` as a float64 numpy array, or raise naming ``name``.

    Parameters
    ----------
    name : str
        Argument name used in the error message.
    value : array_like or None
        Numbers (NaN allowed).
    allow_none : bool
        Return ``None`` for ``None`` instead of raising.
    """
    if value is None:
        if allow_none:
            return None
        raise SeaprofileError(f"{name} is required")
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise SeaprofileError(f"{name} must be numeric, got {value!r:.60}") from exc
    return arr


def warn_outside(name, values, low, high, *, unit="", context="", stacklevel=3):
    """Warn when any finite value of ``values`` lies outside ``[low, high]``.

    The warning names the variable, the range seen and the valid range. Lazy (dask)
    inputs are not computed to check them; NaN is ignored. Returns True when a warning
    was issued.
    """
    if values is None or is_lazy(values):
        return False
    arr = np.asarray(values, dtype=np.float64)
    if arr.size == 0:
        return False
    finite = arr[np.isfinite(arr)] if np.isnan(arr).any() else arr
    if finite.size == 0:
        return False
    lo, hi = float(finite.min()), float(finite.max())
    if lo < low or hi > high:
        u = f" {unit}" if unit else ""
        where = f" for {context}" if context else ""
        warnings.warn(
            f"{name} spans {lo:g}..{hi:g}{u}, outside the valid range "
            f"{low:g}..{high:g}{u}{where}",
            OutsideValidityWarning,
            stacklevel=stacklevel,
        )
        return True
    return False
