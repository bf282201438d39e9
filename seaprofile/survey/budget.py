"""IHO S-44 survey orders: total vertical and horizontal uncertainty allowed at 95 %."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import as_float_array
from ..io.errors import ArgumentError

__all__ = ["S44_ORDERS", "SurveyOrder", "thu", "tvu"]

_REFERENCE = "IHO S-44, Standards for Hydrographic Surveys, Edition 6.0.0 (2020), Table 1"


@dataclass(frozen=True)
class SurveyOrder:
    """One IHO S-44 order: TVU coefficients a (m), b (-) and THU fixed (m) + fraction."""

    name: str
    a: float
    b: float
    thu_fixed: float
    thu_fraction: float
    reference: str = _REFERENCE


#: IHO S-44 Edition 6.0.0 (2020), Table 1, maximum allowable uncertainties at 95 %.
S44_ORDERS = {
    "exclusive": SurveyOrder("Exclusive", 0.15, 0.0075, 1.0, 0.0),
    "special": SurveyOrder("Special", 0.25, 0.0075, 2.0, 0.0),
    "1a": SurveyOrder("1a", 0.5, 0.013, 5.0, 0.05),
    "1b": SurveyOrder("1b", 0.5, 0.013, 5.0, 0.05),
    "2": SurveyOrder("2", 1.0, 0.023, 20.0, 0.10),
}


def _order(order):
    key = str(order).strip().lower().removeprefix("order").strip()
    if key not in S44_ORDERS:
        raise ArgumentError(
            "order", f"{order!r} is not an IHO S-44 order (one of {', '.join(S44_ORDERS)})"
        )
    return S44_ORDERS[key]


def _depth(depth):
    d = as_float_array("depth", depth)
    if np.any(d[np.isfinite(d)] < 0):
        raise ArgumentError("depth", "must not be negative (m, positive down)")
    return d


def tvu(depth, order=None, *, a=None, b=None):
    """Maximum allowable total vertical uncertainty at 95 %, m.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    order : str or None
        An IHO S-44 order: ``"exclusive"``, ``"special"``, ``"1a"``, ``"1b"``, ``"2"``
        (case-insensitive, "Order 1a" accepted).
    a : float or None
        Depth-independent part, m (a custom budget, instead of ``order``).
    b : float or None
        Depth-dependent coefficient, dimensionless (with ``a``).

    Returns
    -------
    numpy.ndarray or float
        sqrt(a^2 + (b d)^2), m.

    Notes
    -----
    IHO S-44, Standards for Hydrographic Surveys, Edition 6.0.0 (2020), Table 1.
    """
    d = _depth(depth)
    if order is not None:
        if a is not None or b is not None:
            raise ArgumentError("order", "give either order or both a and b, not both")
        o = _order(order)
        a, b = o.a, o.b
    elif a is None or b is None:
        raise ArgumentError("order", "give an IHO S-44 order, or both a and b")
    a, b = float(a), float(b)
    if not (np.isfinite(a) and a >= 0):
        raise ArgumentError("a", "must be finite and not negative (m)")
    if not (np.isfinite(b) and b >= 0):
        raise ArgumentError("b", "must be finite and not negative")
    return np.sqrt(a * a + (b * d) ** 2)


def thu(depth, order):
    """Maximum allowable total horizontal uncertainty at 95 %, m.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    order : str
        An IHO S-44 order (see :func:`tvu`).

    Returns
    -------
    numpy.ndarray or float
        fixed + fraction * depth, m.

    Notes
    -----
    IHO S-44, Standards for Hydrographic Surveys, Edition 6.0.0 (2020), Table 1.
    """
    d = _depth(depth)
    o = _order(order)
    return o.thu_fixed + o.thu_fraction * d
