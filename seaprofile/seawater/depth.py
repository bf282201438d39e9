"""Pressure <-> depth conversions.

Four published methods, each as a pair of public numpy functions (pressure -> depth and
depth -> pressure) registered in :data:`METHODS`, and two entry points that accept numpy,
dask and xarray inputs: :func:`depth_from_pressure` and :func:`pressure_from_depth`.

Units: sea pressure in dbar (zero at the sea surface), depth in m, positive down, latitude
in degrees north. Small negative pressures or depths (a sensor just above the surface) are
computed as they are; NaN in gives NaN out.
"""

from __future__ import annotations

import functools
from typing import Callable, NamedTuple

import gsw
import numba
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array, is_lazy

__all__ = [
    "METHODS",
    "DepthMethod",
    "depth_from_pressure",
    "pressure_from_depth",
    "unesco1983_depth",
    "unesco1983_pressure",
    "leroy_parthiot1998_depth",
    "leroy_parthiot1998_pressure",
    "saunders1981_depth",
    "saunders1981_pressure",
    "teos10_depth",
    "teos10_pressure",
]

_DEG = np.pi / 180.0
_NEWTON_STEPS = 4  # from a first guess good to ~1 m, 2 steps already reach < 1e-9 m

# --- layer 1: numba kernels -----------------------------------------------------------


@numba.njit(cache=True)
def _saunders_c1(lat):
    s = np.sin(lat * _DEG)
    return (5.92 + 5.25 * s * s) * 1e-3


@numba.vectorize(["float64(float64, float64)"], cache=True)
def _saunders_depth_kernel(p, lat):
    c1 = _saunders_c1(lat)
    return (1.0 - c1) * p - 2.21e-6 * p * p


@numba.vectorize(["float64(float64, float64)"], cache=True)
def _saunders_pressure_kernel(z, lat):
    # root of 2.21e-6 p^2 - (1 - c1) p + z = 0 near p = z, in the cancellation-free form
    a = 1.0 - _saunders_c1(lat)
    return 2.0 * z / (a + np.sqrt(a * a - 4.0 * 2.21e-6 * z))


@numba.njit(cache=True)
def _unesco_parts(p, lat):
    """UNESCO 1983 depth and d(depth)/d(pressure) at pressure p (dbar)."""
    s = np.sin(lat / 57.29578)
    x = s * s
    gr = 9.780318 * (1.0 + (5.2788e-3 + 2.36e-5 * x) * x) + 1.092e-6 * p
    num = (((-1.82e-15 * p + 2.279e-10) * p - 2.2512e-5) * p + 9.72659) * p
    dnum = ((-4.0 * 1.82e-15 * p + 3.0 * 2.279e-10) * p - 2.0 * 2.2512e-5) * p + 9.72659
    return num / gr, (dnum * gr - num * 1.092e-6) / (gr * gr)


@numba.vectorize(["float64(float64, float64)"], cache=True)
def _unesco_depth_kernel(p, lat):
    return _unesco_parts(p, lat)[0]


@numba.vectorize(["float64(float64, float64)"], cache=True)
def _unesco_pressure_kernel(z, lat):
    p = _saunders_pressure_kernel(z, lat)  # first guess, within ~1 m
    for _ in range(_NEWTON_STEPS):
        f, df = _unesco_parts(p, lat)
        p -= (f - z) / df
    return p


@numba.njit(cache=True)
def _leroy_parts(z, lat, common_ocean):
    """Leroy & Parthiot (1998) pressure (dbar) and d(pressure)/d(depth) at depth z (m)."""
    s = np.sin(lat * _DEG)
    g = 9.7803 * (1.0 + 5.3e-3 * s * s)
    h = ((2.8e-19 * z - 1.25e-13) * z + 2.465e-8) * z * z + 1.00818e-2 * z  # MPa
    dh = ((4.0 * 2.8e-19 * z - 3.0 * 1.25e-13) * z + 2.0 * 2.465e-8) * z + 1.00818e-2
    den = 9.80612 - 2e-5 * z
    k = (g - 2e-5 * z) / den
    dk = 2e-5 * (g - 9.80612) / (den * den)
    pr = h * k
    dpr = dh * k + h * dk
    if common_ocean:
        pr -= 1e-2 * z / (z + 100.0) + 6.2e-6 * z
        dpr -= 1.0 / ((z + 100.0) * (z + 100.0)) + 6.2e-6
    return 100.0 * pr, 100.0 * dpr  # MPa -> dbar


@numba.vectorize(["float64(float64, float64, boolean)"], cache=True)
def _leroy_pressure_kernel(z, lat, common_ocean):
    return _leroy_parts(z, lat, common_ocean)[0]


@numba.vectorize(["float64(float64, float64, boolean)"], cache=True)
def _leroy_depth_kernel(p, lat, common_ocean):
    z = _saunders_depth_kernel(p, lat)  # first guess, within a few m
    for _ in range(_NEWTON_STEPS):
        f, df = _leroy_parts(z, lat, common_ocean)
        z -= (f - p) / df
    return z


# --- layer 2: public numpy functions, one pair per method ------------------------------


def unesco1983_depth(pressure, latitude):
    """Depth from pressure, UNESCO 1983 (Saunders & Fofonoff 1976 refit).

    Parameters
    ----------
    pressure : array_like
        Sea pressure, dbar.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Depth, m, positive down.

    Notes
    -----
    N.P. Fofonoff & R.C. Millard Jr., "Algorithms for computation of fundamental properties
    of seawater", Unesco Tech. Pap. Mar. Sci. 44 (1983), after P.M. Saunders & N.P. Fofonoff,
    Deep-Sea Res. 23, 109-111 (1976). Integrates the hydrostatic equation for the standard
    ocean (0 degC, S = 35) with gravity varying with latitude (International Gravity
    Formula) and averaged over the water column above (the ``1.092e-6 p`` term, half the
    mean vertical gradient of gravity per dbar):

    ``z = (((-1.82e-15 p + 2.279e-10) p - 2.2512e-5) p + 9.72659) p / g(phi, p)``,
    ``g = 9.780318 (1 + (5.2788e-3 + 2.36e-5 x) x) + 1.092e-6 p``, ``x = sin^2(phi)``.

    Check value 9712.653 m at 10000 dbar, latitude 30. Real (warmer, fresher) water makes
    the true depth differ from the standard-ocean depth by up to about 0.1 % (geopotential
    anomaly ignored). Valid 0..10000 dbar.
    """
    return _unesco_depth_kernel(_arr(pressure), _arr(latitude))


def unesco1983_pressure(depth, latitude):
    """Pressure from depth, the inverse of :func:`unesco1983_depth`.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Sea pressure, dbar.

    Notes
    -----
    Newton iteration (4 steps from the Saunders 1981 closed form, itself within ~1 m) on the
    Fofonoff & Millard (1983) polynomial; the round trip is exact to far below 1 mm.
    """
    return _unesco_pressure_kernel(_arr(depth), _arr(latitude))


def leroy_parthiot1998_depth(pressure, latitude, correction=None):
    """Depth from pressure, Leroy & Parthiot (1998), by Newton inversion.

    Parameters
    ----------
    pressure : array_like
        Sea pressure, dbar.
    latitude : array_like
        Latitude, degrees north.
    correction : {None, "common_ocean"}
        None (default) for the standard-ocean formula; ``"common_ocean"`` subtracts the
        paper's correction for the common oceans (see :func:`leroy_parthiot1998_pressure`).

    Returns
    -------
    numpy.ndarray
        Depth, m, positive down.

    Notes
    -----
    Inverts :func:`leroy_parthiot1998_pressure` with 4 Newton steps from the Saunders (1981)
    depth; the round trip is exact to far below 1 mm.
    """
    corr = _leroy_correction(correction)
    return _leroy_depth_kernel(_arr(pressure), _arr(latitude), corr)


def leroy_parthiot1998_pressure(depth, latitude, correction=None):
    """Pressure from depth, Leroy & Parthiot (1998).

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    latitude : array_like
        Latitude, degrees north.
    correction : {None, "common_ocean"}
        None (default): the formula for the standard ocean (0 degC, S = 35), comparable
        with UNESCO 1983 and TEOS-10 ``p_from_z``. ``"common_ocean"``: subtract the
        correction ``h0Z`` the paper gives for the common (non-polar, open) oceans.

    Returns
    -------
    numpy.ndarray
        Sea pressure, dbar.

    Notes
    -----
    C.C. Leroy & F. Parthiot, "Depth-pressure relationships in the oceans and seas",
    J. Acoust. Soc. Am. 103(3), 1346-1352 (1998), doi:10.1121/1.421275. With ``Z`` in m and
    ``P`` in MPa:

    ``P(Z, phi) = h(Z, 45) k(Z, phi)``,
    ``h(Z, 45) = 1.00818e-2 Z + 2.465e-8 Z^2 - 1.25e-13 Z^3 + 2.8e-19 Z^4``,
    ``k(Z, phi) = (g(phi) - 2e-5 Z) / (9.80612 - 2e-5 Z)``,
    ``g(phi) = 9.7803 (1 + 5.3e-3 sin^2 phi)``;

    common-ocean correction ``h0Z = 1e-2 Z / (Z + 100) + 6.2e-6 Z`` (MPa), subtracted from
    ``P``. The paper also gives corrections for particular seas (Mediterranean, Red Sea,
    Baltic, ...): those are not implemented.

    Provenance of the coefficients: written from the paper's equations as recalled, not
    re-read. The standard-ocean form is checked by the tests to agree with UNESCO 1983
    within 0.07 m to 11000 m at all latitudes, which pins every coefficient of ``h`` and
    ``g`` (the smallest term is worth 0.28 dbar at 10 km). The common-ocean correction is
    only sanity-checked (it brings the formula closer to gsw with the dynamic height of a
    warm invented profile); verify it against the paper before relying on it. It diverges
    at ``Z = -100`` m; only small negative depths are meaningful.
    """
    corr = _leroy_correction(correction)
    return _leroy_pressure_kernel(_arr(depth), _arr(latitude), corr)


def saunders1981_depth(pressure, latitude):
    """Depth from pressure, Saunders (1981) quadratic.

    Parameters
    ----------
    pressure : array_like
        Sea pressure, dbar.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Depth, m, positive down.

    Notes
    -----
    P.M. Saunders, "Practical conversion of pressure to depth", J. Phys. Oceanogr. 11,
    573-574 (1981), doi:10.1175/1520-0485(1981)011<0573:PCOPTD>2.0.CO;2:

    ``z = (1 - c1) p - c2 p^2``, ``c1 = (5.92 + 5.25 sin^2 phi) 1e-3``, ``c2 = 2.21e-6``.

    Stated to agree with the full (standard-ocean) integration within about 1 m down to
    5000 dbar; it drifts further in the trenches.
    """
    return _saunders_depth_kernel(_arr(pressure), _arr(latitude))


def saunders1981_pressure(depth, latitude):
    """Pressure from depth, the closed-form inverse of :func:`saunders1981_depth`.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Sea pressure, dbar.

    Notes
    -----
    The small root of ``c2 p^2 - (1 - c1) p + z = 0`` written as
    ``p = 2 z / ((1 - c1) + sqrt((1 - c1)^2 - 4 c2 z))`` (no cancellation near the surface).
    """
    return _saunders_pressure_kernel(_arr(depth), _arr(latitude))


def teos10_depth(pressure, latitude):
    """Depth from pressure with TEOS-10 (``gsw.z_from_p``), depth = -z.

    Parameters
    ----------
    pressure : array_like
        Sea pressure, dbar.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Depth, m, positive down.

    Notes
    -----
    IOC, SCOR & IAPSO, The international thermodynamic equation of seawater - 2010
    (TEOS-10), via the gsw library: hydrostatic integration for the standard ocean
    (SA = 35.16504 g/kg, CT = 0 degC) with latitude- and depth-dependent gravity; no
    dynamic height anomaly is applied.
    """
    return -np.asarray(gsw.z_from_p(_arr(pressure), _arr(latitude)), dtype=np.float64)


def teos10_pressure(depth, latitude):
    """Pressure from depth with TEOS-10 (``gsw.p_from_z``), z = -depth.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Sea pressure, dbar.

    Notes
    -----
    See :func:`teos10_depth`.
    """
    return np.asarray(gsw.p_from_z(-_arr(depth), _arr(latitude)), dtype=np.float64)


class DepthMethod(NamedTuple):
    """One pressure <-> depth method: ``forward`` maps pressure (dbar) to depth (m),
    ``inverse`` maps depth to pressure; both take ``(values, latitude)``."""

    forward: Callable
    inverse: Callable
    needs_latitude: bool
    reference: str


METHODS = {
    "unesco1983": DepthMethod(
        unesco1983_depth,
        unesco1983_pressure,
        True,
        "Fofonoff & Millard (1983), Unesco Tech. Pap. Mar. Sci. 44; "
        "Saunders & Fofonoff (1976), Deep-Sea Res. 23, 109-111",
    ),
    "leroy_parthiot1998": DepthMethod(
        leroy_parthiot1998_depth,
        leroy_parthiot1998_pressure,
        True,
        "Leroy & Parthiot (1998), J. Acoust. Soc. Am. 103(3), 1346-1352",
    ),
    "saunders1981": DepthMethod(
        saunders1981_depth,
        saunders1981_pressure,
        True,
        "Saunders (1981), J. Phys. Oceanogr. 11, 573-574",
    ),
    "teos10": DepthMethod(
        teos10_depth,
        teos10_pressure,
        True,
        "IOC, SCOR & IAPSO (2010), TEOS-10 manual; gsw z_from_p / p_from_z",
    ),
}


# --- layer 3: entry points for numpy, dask and xarray ---------------------------------


def depth_from_pressure(pressure, latitude, method="unesco1983", *, correction=None):
    """Depth (m, positive down) from sea pressure (dbar).

    Parameters
    ----------
    pressure : array_like, dask array or xarray.DataArray
        Sea pressure, dbar (zero at the surface; small negative values are computed as-is).
    latitude : float, array_like or xarray.DataArray
        Latitude, degrees north, -90..90; broadcast against ``pressure``.
    method : str
        A key of :data:`METHODS`: ``"unesco1983"`` (default), ``"leroy_parthiot1998"``,
        ``"saunders1981"`` or ``"teos10"``.
    correction : {None, "common_ocean"}
        Only for ``"leroy_parthiot1998"``; see :func:`leroy_parthiot1998_pressure`.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Depth, m, positive down, same shape as the broadcast inputs. An xarray result carries
        the CF attributes of ``depth`` and a ``comment`` naming the method.

    Raises
    ------
    SeaprofileError
        Unknown ``method``; ``latitude`` missing, all NaN or outside -90..90; ``pressure``
        not numeric; ``correction`` given for a method other than Leroy & Parthiot.

    Notes
    -----
    The equations and their sources are in the per-method functions listed in
    :data:`METHODS`. NaN in gives NaN out.
    """
    func = _pick(method, correction, 0)
    return _dispatch(func, "pressure", pressure, latitude, "depth", method)


def pressure_from_depth(depth, latitude, method="unesco1983", *, correction=None):
    """Sea pressure (dbar) from depth (m, positive down).

    Parameters
    ----------
    depth : array_like, dask array or xarray.DataArray
        Depth, m, positive down (small negative values are computed as-is).
    latitude : float, array_like or xarray.DataArray
        Latitude, degrees north, -90..90; broadcast against ``depth``.
    method : str
        A key of :data:`METHODS` (default ``"unesco1983"``).
    correction : {None, "common_ocean"}
        Only for ``"leroy_parthiot1998"``; see :func:`leroy_parthiot1998_pressure`.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Sea pressure, dbar. An xarray result carries the CF attributes of ``pressure``.

    Raises
    ------
    SeaprofileError
        As :func:`depth_from_pressure`.

    Notes
    -----
    For every method the two directions are consistent to far better than 1 mm
    (closed form for Saunders 1981, Newton iteration for UNESCO 1983 and Leroy & Parthiot
    1998, gsw's own inverse for TEOS-10).
    """
    func = _pick(method, correction, 1)
    return _dispatch(func, "depth", depth, latitude, "pressure", method)


# --- helpers --------------------------------------------------------------------------


def _arr(x):
    return np.asarray(x, dtype=np.float64)


def _leroy_correction(correction):
    if correction is None:
        return False
    if correction == "common_ocean":
        return True
    raise SeaprofileError(
        f"correction must be None or 'common_ocean', got {correction!r}"
    )


def _pick(method, correction, which):
    if method not in METHODS:
        raise SeaprofileError(
            f"method {method!r} is unknown; choose one of {', '.join(METHODS)}"
        )
    func = METHODS[method][which]
    if correction is None:
        return func
    if method != "leroy_parthiot1998":
        raise SeaprofileError(
            f"correction applies only to method 'leroy_parthiot1998', not {method!r}"
        )
    _leroy_correction(correction)  # validate now, not inside a dask task
    return functools.partial(func, correction=correction)


def check_latitude(latitude):
    """Raise :class:`SeaprofileError` naming ``latitude`` if it is missing or invalid.

    Lazy (dask-backed) latitudes are not computed to check them.
    """
    if latitude is None:
        raise SeaprofileError(
            "latitude is required (degrees north); give the cast position, "
            "or 45 for a mid-latitude default"
        )
    if is_lazy(latitude):
        return
    lat = as_float_array("latitude", getattr(latitude, "values", latitude))
    if lat.size and np.isnan(lat).all():
        raise SeaprofileError(
            "latitude is NaN (unknown position); give a latitude in degrees north"
        )
    with np.errstate(invalid="ignore"):
        bad = np.abs(lat) > 90.0
    if bad.any():
        raise SeaprofileError(
            f"latitude must lie within -90..90 degrees, got {lat[bad].ravel()[0]:g}"
        )


def _dispatch(func, in_name, values, latitude, out_name, method):
    """Apply the numpy function ``func(values, latitude)`` to numpy, dask or xarray."""
    check_latitude(latitude)
    if values is None:
        raise SeaprofileError(f"{in_name} is required")
    return apply_pointwise(
        func,
        [(in_name, values), ("latitude", latitude)],
        _cf.attrs_for(out_name, comment=f"computed from {in_name} with method {method}"),
        out_name,
    )


def apply_pointwise(func, named_args, attrs, out_name):
    """Run a point-wise numpy function on numpy, dask or xarray arguments.

    Parameters
    ----------
    func : callable
        Takes float64 numpy arrays (broadcastable) and returns one float64 array.
    named_args : list of (str, object)
        Argument names (for error messages) and values, in call order.
    attrs : dict
        Attributes of an xarray result.
    out_name : str
        Name of an xarray result.
    """
    values = []
    for name, v in named_args:
        if isinstance(v, (xr.DataArray, xr.Variable)) or is_lazy(v):
            values.append(v)
        else:
            values.append(as_float_array(name, v))
    if any(isinstance(v, xr.DataArray) for v in values):
        out = xr.apply_ufunc(
            lambda *a: func(*[np.asarray(x, dtype=np.float64) for x in a]),
            *values,
            dask="parallelized",
            output_dtypes=[np.float64],
        )
        out.attrs = dict(attrs)
        out.name = out_name
        return out
    if any(is_lazy(v) for v in values):
        import dask.array as da

        arrs = da.broadcast_arrays(*[da.asarray(v) for v in values])
        return da.map_blocks(
            lambda *a: func(*[np.asarray(x, dtype=np.float64) for x in a]),
            *arrs,
            dtype=np.float64,
        )
    return func(*values)
