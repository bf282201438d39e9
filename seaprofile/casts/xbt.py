"""Expendable probes: depth from elapsed time (fall rate) and the assumed salinity.

An expendable temperature probe measures temperature against the time since it hit the
water; depth comes from a fall-rate equation ``z = a t - b t**2`` and salinity, which the
probe does not measure, is assumed (a constant or a reference profile the user gives).
Both choices are recorded in the Cast's attributes and provenance.
"""

from __future__ import annotations

import functools

import numba
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array, is_lazy, warn_outside
from ..seawater._apply import pointwise, run_loop
from ._common import with_variable

__all__ = [
    "FALL_RATES",
    "DEFAULT_FALL_RATE",
    "DEFAULT_SALINITY",
    "resolve_fall_rate",
    "depth_from_elapsed_time",
    "fall_depth",
    "assumed_salinity",
    "complete_xbt_cast",
]

HANAWA1995 = (
    "K. Hanawa, P. Rual, R. Bailey, A. Sy & M. Szabados (1995), a new depth-time equation "
    "for expendable bathythermographs, Deep-Sea Res. I 42(8), 1423-1451; also IOC "
    "Technical Series 42"
)

#: name -> (a in m/s, b in m/s^2, reference); depth z = a t - b t^2. Named by the published
#: coefficients and, where one equation serves several probes, by the probe's depth rating.
FALL_RATES = {
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: one equation for the shallow
    # (460 m) and deep (760 m) rated probes of the common kind (ratings from memory)
    "hanawa1995": (6.691, 2.25e-3, HANAWA1995),
    "hanawa1995_460m": (6.691, 2.25e-3, HANAWA1995),
    "hanawa1995_760m": (6.691, 2.25e-3, HANAWA1995),
    # from memory: the older manufacturer-style coefficients that the 1995 equation replaced;
    # not checked against a source, offered only to reproduce old processing.
    "legacy_pre1995": (6.472, 2.16e-3, "from memory: pre-1995 manufacturer-style coefficients"),
}
DEFAULT_FALL_RATE = "hanawa1995"
DEFAULT_SALINITY = 35.0


@numba.njit(cache=True, nogil=True, error_model="numpy")
def _fall_depth_kernel(t, a, b):
    if t < 0.0:
        return np.nan
    return a * t - b * t * t


@numba.njit(cache=True, nogil=True, error_model="numpy")
def _fall_depth_loop(t, a, b, out):
    for i in range(out.size):
        out[i] = _fall_depth_kernel(t[i], a, b)


def _fall_depth(t, a, b):
    """Compiled on first use (not at import); ``t`` float64 numpy, ``a``, ``b`` floats."""
    return run_loop(_fall_depth_loop, (t,), extra=(float(a), float(b)))


def resolve_fall_rate(fall_rate=DEFAULT_FALL_RATE):
    """Return ``(a, b, name, reference)`` for a name in :data:`FALL_RATES` or a custom ``(a, b)``.

    Parameters
    ----------
    fall_rate : str or tuple of two floats
        A key of :data:`FALL_RATES`, or custom coefficients ``(a, b)`` with a in m/s (> 0)
        and b in m/s^2 (>= 0).
    """
    if isinstance(fall_rate, str):
        if fall_rate not in FALL_RATES:
            raise SeaprofileError(
                f"fall_rate must be one of {', '.join(FALL_RATES)} or (a, b), got {fall_rate!r}"
            )
        a, b, ref = FALL_RATES[fall_rate]
        return a, b, fall_rate, ref
    try:
        a, b = (float(v) for v in fall_rate)
    except (TypeError, ValueError):
        raise SeaprofileError(
            f"fall_rate must be a name in FALL_RATES or a pair (a, b), got {fall_rate!r}"
        ) from None
    if not (np.isfinite(a) and a > 0 and np.isfinite(b) and b >= 0):
        raise SeaprofileError(f"fall_rate: need a > 0 m/s and b >= 0 m/s^2, got ({a}, {b})")
    return a, b, "custom", f"custom coefficients a={a:g} m/s, b={b:g} m/s^2"


def depth_from_elapsed_time(elapsed_time, fall_rate=DEFAULT_FALL_RATE):
    """Depth of an expendable probe from the time since it entered the water.

    Parameters
    ----------
    elapsed_time : array_like
        Time since the probe hit the water, s. Negative times give NaN.
    fall_rate : str or (float, float)
        A key of :data:`FALL_RATES` (default ``"hanawa1995"``) or custom coefficients
        ``(a, b)``: a in m/s, b in m/s^2.

    Returns
    -------
    numpy.ndarray
        Depth, m, positive down.

    Notes
    -----
    The fall-rate equation of Hanawa et al. (1995), Deep-Sea Res. I 42(8), 1423-1451
    (also IOC Technical Series 42):

    .. math:: z = a t - b t^2, \\quad a = 6.691\\ \\mathrm{m\\,s^{-1}},
              \\quad b = 2.25 \\times 10^{-3}\\ \\mathrm{m\\,s^{-2}}

    for the common 460 m and 760 m rated probes. The parabola turns over at ``t = a / (2 b)``
    (about 1487 s for these coefficients); later times give an
    :class:`~seaprofile.OutsideValidityWarning`. The fit itself is only as good as the
    probe's wire and depth rating; depth errors of a few percent are usual.
    """
    a, b, name, _ = resolve_fall_rate(fall_rate)
    t = as_float_array("elapsed_time", elapsed_time)
    if b > 0:
        warn_outside(
            "elapsed_time",
            t,
            0.0,
            a / (2.0 * b),
            unit="s",
            context=f"the fall-rate equation {name} (negative times give NaN)",
        )
    elif t.size and np.nanmin(t, initial=0.0) < 0:
        warn_outside("elapsed_time", t, 0.0, np.inf, unit="s", context=name)
    return _fall_depth(t, a, b)


def fall_depth(elapsed_time, fall_rate=DEFAULT_FALL_RATE):
    """xarray wrapper of :func:`depth_from_elapsed_time` (dask-parallel, CF attributes)."""
    if not isinstance(elapsed_time, xr.DataArray):
        return depth_from_elapsed_time(elapsed_time, fall_rate)
    a, b, name, ref = resolve_fall_rate(fall_rate)
    if not is_lazy(elapsed_time):
        depth_from_elapsed_time(elapsed_time.values[:0], fall_rate)  # validation only
    return pointwise(
        functools.partial(_fall_depth, a=a, b=b),
        [("elapsed_time", elapsed_time)],
        name="depth",
        attrs=_cf.attrs_for("depth", comment=f"from elapsed time with fall rate {name}: {ref}"),
    )


def assumed_salinity(depth, salinity=DEFAULT_SALINITY):
    """Salinity assumed for samples whose salinity was not measured.

    Parameters
    ----------
    depth : array_like
        Depth of the samples, m, positive down.
    salinity : float or (array_like, array_like)
        A constant practical salinity, or a reference profile ``(depths_m, salinities)``
        interpolated linearly in depth and held constant beyond its ends.

    Returns
    -------
    values : numpy.ndarray
        Practical salinity at ``depth`` (NaN where depth is NaN for a reference profile).
    description : str
        A sentence for the ``salinity_source`` attribute.
    """
    z = as_float_array("depth", depth)
    if not isinstance(salinity, (tuple, list)) and np.ndim(salinity) == 0:
        s = float(as_float_array("salinity", salinity))
        if not (np.isfinite(s) and 0.0 <= s <= 42.0):
            raise SeaprofileError(f"salinity must be a practical salinity in 0..42, got {s}")
        return np.full(z.shape, s), f"assumed constant {s:g}"
    try:
        ref_z, ref_s = salinity
    except (TypeError, ValueError):
        raise SeaprofileError(
            "salinity must be a number or a pair (depths_m, salinities)"
        ) from None
    ref_z = as_float_array("salinity reference depth", ref_z).ravel()
    ref_s = as_float_array("salinity reference values", ref_s).ravel()
    if ref_z.size == 0 or ref_z.size != ref_s.size:
        raise SeaprofileError(
            f"salinity reference profile: {ref_z.size} depths but {ref_s.size} salinities"
        )
    if not (np.all(np.isfinite(ref_z)) and np.all(np.isfinite(ref_s))):
        raise SeaprofileError("salinity reference profile must not contain NaN")
    if np.any(np.diff(ref_z) <= 0):
        raise SeaprofileError("salinity reference depths must increase strictly")
    values = np.interp(z, ref_z, ref_s)
    values[~np.isfinite(z)] = np.nan
    desc = (
        f"assumed from a reference profile ({ref_z.size} points, "
        f"{ref_z[0]:g}..{ref_z[-1]:g} m, linear in depth, constant beyond the ends)"
    )
    return values, desc


def add_variable(cast, name, values, qc=None, **extra_attrs):
    """Return a copy of ``cast`` with a measured/derived variable and its ``_qc`` flags added.

    Flags are 0 (no QC) except 9 (missing) where the value is NaN, unless ``qc`` is given.
    """
    values = np.asarray(values, dtype=np.float64)
    if qc is None:
        qc = np.where(np.isfinite(values), _cf.NO_QC, _cf.MISSING).astype(np.int8)
    return with_variable(cast, "sample", name, values, qc, **extra_attrs)


def complete_xbt_cast(cast, *, fall_rate=DEFAULT_FALL_RATE, salinity=DEFAULT_SALINITY):
    """Add depth (from the fall rate), assumed salinity and pressure to an expendable-probe Cast.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``elapsed_time`` (s) and ``temperature``; not modified.
    fall_rate : str or (float, float)
        See :func:`depth_from_elapsed_time`. Used only when the Cast has no ``depth`` yet.
    salinity : float or (array_like, array_like) or None
        See :func:`assumed_salinity`; None keeps the Cast without salinity. Used only when
        the Cast has neither salinity nor conductivity.

    Returns
    -------
    xarray.Dataset
        A new Cast. Pressure is added from depth (UNESCO 1983 via
        :func:`seaprofile.seawater.depth.pressure_from_depth`) only when the latitude is
        known. The assumed salinity keeps flag 0 (no QC) and is marked by the attributes
        ``salinity_assumed="yes"`` and ``salinity_source``.
    """
    out = cast.copy()
    attrs = dict(out.attrs)
    if "depth" not in out:
        if "elapsed_time" not in out:
            raise SeaprofileError("an expendable-probe cast needs elapsed_time or depth")
        a, b, name, ref = resolve_fall_rate(fall_rate)
        z = depth_from_elapsed_time(out["elapsed_time"].values, (a, b))
        qc = np.maximum(
            out["elapsed_time_qc"].values, np.where(np.isfinite(z), _cf.NO_QC, _cf.MISSING)
        ).astype(np.int8)
        out = add_variable(
            out, "depth", z, qc, comment=f"from elapsed time with fall rate {name}: {ref}"
        )
        attrs["fall_rate"] = name
        attrs["fall_rate_coefficients"] = f"a={a:g} m/s, b={b:g} m/s^2"
        attrs = _cf.record_step(
            attrs, "depth_from_fall_rate", fall_rate=name, a=a, b=b, reference=ref
        )
    if "salinity" not in out and "conductivity" not in out and salinity is not None:
        values, desc = assumed_salinity(out["depth"].values, salinity)
        out = add_variable(out, "salinity", values, comment=desc)
        attrs["salinity_assumed"] = "yes"
        attrs["salinity_source"] = desc
        attrs = _cf.record_step(attrs, "assume_salinity", salinity_source=desc)
    lat = float(out["latitude"])
    if "pressure" not in out and np.isfinite(lat):
        from ..seawater.depth import pressure_from_depth

        p = np.asarray(pressure_from_depth(out["depth"].values, lat), dtype=np.float64)
        out = add_variable(
            out,
            "pressure",
            p,
            out["depth_qc"].values.copy(),
            comment="from depth (UNESCO 1983) at the cast latitude",
        )
        attrs = _cf.record_step(attrs, "pressure_from_depth", method="unesco1983", latitude=lat)
    out.attrs = attrs
    return out
