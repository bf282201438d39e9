"""Argument checking shared by every module: one place for errors and range warnings.

Errors name the argument (or the file, line and column); warnings about an equation's
validity range name the variable, the range seen and the range the source supports.
"""

from __future__ import annotations

import math
import warnings

import numba
import numpy as np

__all__ = [
    "SeaprofileError",
    "InputFileError",
    "OutsideValidityWarning",
    "as_float_array",
    "check_position",
    "is_lazy",
    "require",
    "value_range",
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
            f"{name} spans {lo:g}..{hi:g}{u}, outside the valid range {low:g}..{high:g}{u}{where}",
            OutsideValidityWarning,
            stacklevel=stacklevel,
        )
        return True
    return False


# --- positions ------------------------------------------------------------------------

#: Accepted ranges of the position arguments, degrees (east longitudes up to 360 allowed).
POSITION_RANGES = {"latitude": (-90.0, 90.0), "longitude": (-180.0, 360.0)}


@numba.njit(cache=True, nogil=True)
def value_range(flat, with_bad=True):
    """(min, max, bad) of a 1-D float64 array in one vectorisable pass, NaN skipped.

    ``bad`` is NaN when any value is NaN or infinite (``x * 0`` is NaN exactly for those)
    and 0 otherwise (always 0 with ``with_bad=False``, a slightly faster pass: the
    validity-range warnings need only min and max); four independent accumulators let the
    compiler vectorise the loop.
    """
    n = flat.size
    lo0 = lo1 = lo2 = lo3 = math.inf
    hi0 = hi1 = hi2 = hi3 = -math.inf
    bad0 = bad1 = bad2 = bad3 = 0.0
    m = n - n % 4
    for i in range(0, m, 4):
        a = flat[i]
        b = flat[i + 1]
        c = flat[i + 2]
        d = flat[i + 3]
        lo0 = a if a < lo0 else lo0
        hi0 = a if a > hi0 else hi0
        lo1 = b if b < lo1 else lo1
        hi1 = b if b > hi1 else hi1
        lo2 = c if c < lo2 else lo2
        hi2 = c if c > hi2 else hi2
        lo3 = d if d < lo3 else lo3
        hi3 = d if d > hi3 else hi3
        if with_bad:
            bad0 += a * 0.0
            bad1 += b * 0.0
            bad2 += c * 0.0
            bad3 += d * 0.0
    for i in range(m, n):
        a = flat[i]
        lo0 = a if a < lo0 else lo0
        hi0 = a if a > hi0 else hi0
        bad0 += a * 0.0
    return (
        min(min(lo0, lo1), min(lo2, lo3)),
        max(max(hi0, hi1), max(hi2, hi3)),
        bad0 + bad1 + bad2 + bad3,
    )


def check_position(kind, value, *, name=None):
    """Raise :class:`SeaprofileError` unless a latitude or longitude is usable everywhere.

    The one position rule of seaprofile: a given latitude (degrees north) must be finite
    and within -90..90, a given longitude (degrees east) finite and within -180..360, at
    every point. NaN is an unknown position and is refused like any other bad value (it
    never turns into NaN results or a silent fallback); ``None`` means "not given" and is
    left to the caller (some functions need a position, others have a documented use
    without one).

    Parameters
    ----------
    kind : {"latitude", "longitude"}
        Which coordinate ``value`` is.
    value : float or array_like
        The coordinate, degrees. Must not be lazy (check blocks of dask arrays when they
        are computed).
    name : str, optional
        How the message names the argument (default ``kind``; the CLI passes its option,
        e.g. ``"--longitude"``).

    Returns
    -------
    numpy.ndarray
        ``value`` as float64.
    """
    name = name or kind
    low, high = POSITION_RANGES[kind]
    arr = as_float_array(name, value)
    if arr.size == 0:
        return arr
    flat = arr.reshape(-1) if arr.flags.c_contiguous else np.ravel(arr)
    if flat.size <= 8:
        numbers = flat[~np.isnan(flat)]
        lo, hi = (numbers.min(), numbers.max()) if numbers.size else (math.inf, -math.inf)
        with np.errstate(invalid="ignore"):
            bad = flat.sum() * 0.0
    else:
        lo, hi, bad = value_range(flat)
    nan = int(np.isnan(flat).sum()) if bad != 0.0 else 0  # slow count only on bad input
    unit = "degrees north" if kind == "latitude" else "degrees east"
    if nan:
        where = "" if arr.size == 1 else f" at {nan} of {arr.size} points"
        raise SeaprofileError(f"{name} is NaN{where} (unknown position); give a {kind} in {unit}")
    if not (math.isfinite(lo) and math.isfinite(hi)):
        raise SeaprofileError(f"{name} must be finite, got {lo if math.isinf(lo) else hi:g}")
    if lo < low or hi > high:
        bad = lo if lo < low else hi
        raise SeaprofileError(f"{name} must lie within {low:g}..{high:g} {unit}, got {bad:g}")
    return arr
