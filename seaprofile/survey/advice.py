"""Does the cast still hold? The widest beam angle within a share of the IHO S-44 budget.

The rule (common practice, no source): a sound-speed profile is good enough out to the
widest beam angle at which the refraction depth error it causes stays within a chosen
fraction (default 0.5) of the IHO S-44 total vertical uncertainty (TVU, 95 %) at the water
depth, leaving the rest of the budget to the other error sources.
"""

from __future__ import annotations

import numpy as np

from ..io.errors import ArgumentError
from .budget import S44_ORDERS, _order, tvu
from .compare import PATHS

__all__ = ["DEFAULT_FRACTION", "angle_limits", "cast_advice", "widest_angle"]

#: Share of the TVU budget the refraction error may take (common practice, no source).
DEFAULT_FRACTION = 0.5


def _fraction(fraction):
    f = float(fraction)
    if not (np.isfinite(f) and 0.0 < f <= 1.0):
        raise ArgumentError("fraction", "must be in (0, 1] (share of the TVU budget)")
    return f


def _path(path):
    if path not in PATHS:
        raise ArgumentError("path", f"{path!r} is not one of {', '.join(PATHS)}")
    return path


def _budget(depth, order, a, b):
    if order is None and a is None and b is None:
        raise ArgumentError("order", "give an IHO S-44 order, or both a and b")
    return float(tvu(depth, order, a=a, b=b))


def _widest(angles, error, limit):
    """Widest |angle| (degrees) from nadir outward with |error| <= limit, interpolated."""
    a = np.abs(np.asarray(angles, dtype=float))
    e = np.abs(np.asarray(error, dtype=float))
    order = np.argsort(a, kind="stable")
    a, e = a[order], e[order]
    # the worse of the port/starboard pair at each |angle|
    abs_angle, inv = np.unique(a, return_inverse=True)
    worst_err = np.full(abs_angle.size, -np.inf)
    np.maximum.at(worst_err, inv, np.where(np.isfinite(e), e, np.inf))
    bad = ~(worst_err <= limit)
    if not bad.any():
        return float(abs_angle[-1]), False
    k = int(np.argmax(bad))
    if k == 0:
        return float("nan"), True
    a0, a1, e0, e1 = abs_angle[k - 1], abs_angle[k], worst_err[k - 1], worst_err[k]
    if np.isfinite(e1) and e1 > e0:
        return float(a0 + (a1 - a0) * (limit - e0) / (e1 - e0)), True
    return float(a0), True


def widest_angle(errors, *, order=None, a=None, b=None, fraction=DEFAULT_FRACTION, path="combined"):
    """Widest beam angle whose depth error stays within ``fraction`` of the TVU, degrees.

    Parameters
    ----------
    errors : xarray.Dataset
        A result of :func:`seaprofile.survey.compare.profile_error`.
    order : str or None
        IHO S-44 order (``"exclusive"``, ``"special"``, ``"1a"``, ``"1b"``, ``"2"``).
    a : float or None
        Custom TVU depth-independent part, m (with ``b``, instead of ``order``).
    b : float or None
        Custom TVU depth-dependent coefficient, dimensionless.
    fraction : float
        Share of the TVU (95 %) allowed for the refraction error, in (0, 1]
        (default 0.5, common practice, no source).
    path : str
        Which error of :data:`~seaprofile.survey.compare.PATHS` to judge (default
        ``"combined"``).

    Returns
    -------
    float
        Degrees from vertical. The error is taken as the worse of port and starboard at
        each |angle|, checked from nadir outward; the crossing is interpolated linearly
        between the two bracketing angles of ``errors``. The widest angle computed when no
        angle exceeds; NaN when even the innermost angle exceeds.

    Notes
    -----
    TVU = sqrt(a^2 + (b d)^2) at 95 % (IHO S-44 Edition 6.0.0, 2020, Table 1) with d the
    dataset's ``water_depth``. A refraction error is a bias, not a random error; comparing
    it with a share of a 95 % budget is the trade's rule of thumb (common practice, no
    source).
    """
    f = _fraction(fraction)
    p = _path(path)
    depth = float(errors.attrs["water_depth"])
    limit = f * _budget(depth, order, a, b)
    angle, _ = _widest(errors["beam_angle"].values, errors[f"depth_error_{p}"].values, limit)
    return angle


def angle_limits(errors, *, fraction=DEFAULT_FRACTION, path="combined", a=None, b=None):
    """Widest beam angle within ``fraction`` of the TVU for every IHO S-44 order, degrees.

    Parameters
    ----------
    errors : xarray.Dataset
        A result of :func:`seaprofile.survey.compare.profile_error`.
    fraction : float
        Share of the TVU (95 %) allowed, in (0, 1] (default 0.5, common practice, no source).
    path : str
        Error path judged (default ``"combined"``).
    a : float or None
        Custom TVU part, m: adds a ``"custom"`` entry with ``b``.
    b : float or None
        Custom TVU depth coefficient, dimensionless.

    Returns
    -------
    dict
        Order key -> widest angle (degrees, NaN when none holds); ``"custom"`` when given.
    """
    out = {key: widest_angle(errors, order=key, fraction=fraction, path=path) for key in S44_ORDERS}
    if a is not None or b is not None:
        out["custom"] = widest_angle(errors, a=a, b=b, fraction=fraction, path=path)
    return out


def cast_advice(
    errors,
    *,
    order="1a",
    a=None,
    b=None,
    fraction=DEFAULT_FRACTION,
    path="combined",
    swath_angle=None,
):
    """One plain-words line: how far out the cast holds, or why a new cast is needed.

    Parameters
    ----------
    errors : xarray.Dataset
        A result of :func:`seaprofile.survey.compare.profile_error`.
    order : str or None
        IHO S-44 order (default ``"1a"``); None with ``a`` and ``b`` for a custom budget.
    a : float or None
        Custom TVU part, m.
    b : float or None
        Custom TVU depth coefficient, dimensionless.
    fraction : float
        Share of the TVU (95 %) allowed, in (0, 1] (default 0.5, common practice, no source).
    path : str
        Error path judged (default ``"combined"``).
    swath_angle : float or None
        Outermost beam angle in use, degrees; when the cast holds less far a new cast is
        advised. None: the widest angle in ``errors``.

    Returns
    -------
    str
        E.g. ``"the cast still holds to 62 degrees for Order 1a at 85 m (depth error within
        50 % of the TVU budget, 0.70 m of 1.39 m at 95 %; ...)"``.
    """
    if a is not None or b is not None:
        order = None
        label = f"a custom budget (a = {float(a):g} m, b = {float(b):g})"
    else:
        name = _order(order).name
        label = f"{name} Order" if name in ("Exclusive", "Special") else f"Order {name}"
    f = _fraction(fraction)
    p = _path(path)
    depth = float(errors.attrs["water_depth"])
    budget = _budget(depth, order, a, b)
    limit = f * budget
    angles = errors["beam_angle"].values
    err = errors[f"depth_error_{p}"].values
    widest, exceeded = _widest(angles, err, limit)
    outer = float(np.max(np.abs(angles))) if swath_angle is None else float(swath_angle)
    source = "IHO S-44 Ed. 6.0.0 Table 1" if order is not None else "sqrt(a^2 + (b d)^2)"
    rule = (
        f"depth error within {f * 100:g} % of the TVU budget, {limit:.2f} m of "
        f"{budget:.2f} m at 95 % ({source}; the {f * 100:g} % share is "
        f"common practice, no source; error path: {p})"
    )
    inside = np.abs(angles) <= outer
    worst = np.nanmax(np.abs(err[inside])) if np.any(np.isfinite(err[inside])) else np.nan
    if np.isnan(widest):
        return (
            f"a new cast is needed for {label} at {depth:g} m: even the innermost beam "
            f"misses the rule ({rule})"
        )
    if widest >= outer:
        return (
            f"the cast still holds to {outer:.0f} degrees for {label} at {depth:g} m "
            f"(largest error {worst:.2f} m; {rule})"
        )
    return (
        f"a new cast is needed for {label} at {depth:g} m beyond {widest:.0f} degrees: the "
        f"cast holds to {widest:.0f} degrees but the swath reaches {outer:.0f} degrees ({rule})"
    )
