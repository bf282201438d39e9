"""Pressure <-> depth conversions.

Four published methods, each as a pair of public numpy functions (pressure -> depth and
depth -> pressure) registered in :data:`METHODS`, and two entry points that accept numpy,
dask and xarray inputs: :func:`depth_from_pressure` and :func:`pressure_from_depth`.
The compiled kernels behind the numpy functions are in :mod:`._depth_kernels`; every
function (per method or entry point) takes numpy, dask or xarray inputs through the one
dispatcher of :mod:`._apply` (latitude finite and within -90..90 everywhere, NaN refused;
xarray inputs aligned exactly; CF attributes and the method on an xarray result).

Units: sea pressure in dbar (zero at the sea surface), depth in m, positive down, latitude
in degrees north. Small negative pressures or depths (a sensor just above the surface) are
computed as they are; NaN in gives NaN out.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import NamedTuple

import gsw
import numpy as np

from .._validate import SeaprofileError
from ._apply import output_attrs, pointwise, run_loop
from ._depth_kernels import (
    _leroy_depth_loop,
    _leroy_pressure_loop,
    _saunders_depth_loop,
    _saunders_pressure_loop,
    _unesco_depth_loop,
    _unesco_pressure_loop,
)

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

_REFERENCES = {
    "unesco1983": "Fofonoff & Millard (1983), Unesco Tech. Pap. Mar. Sci. 44; "
    "Saunders & Fofonoff (1976), Deep-Sea Res. 23, 109-111",
    "leroy_parthiot1998": "Leroy & Parthiot (1998), J. Acoust. Soc. Am. 103(3), 1346-1352",
    "saunders1981": "Saunders (1981), J. Phys. Oceanogr. 11, 573-574",
    "teos10": "IOC, SCOR & IAPSO (2010), TEOS-10 manual; gsw z_from_p / p_from_z",
}
_OUTPUT = {"pressure": "depth", "depth": "pressure"}


def _attrs(out_name, method):
    return output_attrs(out_name, method, _REFERENCES[method])


def _run(loop, method, in_name, values, latitude, extra=()):
    """A method's compiled loop through the dispatcher (numpy, dask or xarray)."""
    out = _OUTPUT[in_name]
    return run_loop(
        loop,
        (values, latitude),
        extra,
        names=(in_name, "latitude"),
        name=out,
        attrs=_attrs(out, method),
    )


def _teos10_depth(pressure, latitude):
    return -np.asarray(gsw.z_from_p(pressure, latitude), dtype=np.float64)


def _teos10_pressure(depth, latitude):
    return np.asarray(gsw.p_from_z(-depth, latitude), dtype=np.float64)


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
    return _run(_unesco_depth_loop, "unesco1983", "pressure", pressure, latitude)


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
    return _run(_unesco_pressure_loop, "unesco1983", "depth", depth, latitude)


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
    return _run(_leroy_depth_loop, "leroy_parthiot1998", "pressure", pressure, latitude, (corr,))


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
    within 0.07 m to 11000 m at all latitudes, which pins the formula to about 1e-5 of
    depth (a last-digit slip in the smallest term, worth ~0.01 m, would pass). The
    common-ocean correction is
    only sanity-checked (it brings the formula closer to gsw with the dynamic height of a
    warm invented profile); verify it against the paper before relying on it. It diverges
    at ``Z = -100`` m; only small negative depths are meaningful.
    """
    corr = _leroy_correction(correction)
    return _run(_leroy_pressure_loop, "leroy_parthiot1998", "depth", depth, latitude, (corr,))


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
    return _run(_saunders_depth_loop, "saunders1981", "pressure", pressure, latitude)


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
    return _run(_saunders_pressure_loop, "saunders1981", "depth", depth, latitude)


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
    return pointwise(
        _teos10_depth,
        [("pressure", pressure), ("latitude", latitude)],
        name="depth",
        attrs=_attrs("depth", "teos10"),
    )


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
    return pointwise(
        _teos10_pressure,
        [("depth", depth), ("latitude", latitude)],
        name="pressure",
        attrs=_attrs("pressure", "teos10"),
    )


class DepthMethod(NamedTuple):
    """One pressure <-> depth method: ``forward`` maps pressure (dbar) to depth (m),
    ``inverse`` maps depth to pressure; both take ``(values, latitude)``."""

    forward: Callable
    inverse: Callable
    needs_latitude: bool
    reference: str


METHODS = {
    name: DepthMethod(forward, inverse, True, _REFERENCES[name])
    for name, forward, inverse in (
        ("unesco1983", unesco1983_depth, unesco1983_pressure),
        ("leroy_parthiot1998", leroy_parthiot1998_depth, leroy_parthiot1998_pressure),
        ("saunders1981", saunders1981_depth, saunders1981_pressure),
        ("teos10", teos10_depth, teos10_pressure),
    )
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
        the CF attributes of ``depth``, the method (``equation``) and its ``references``.

    Raises
    ------
    SeaprofileError
        Unknown ``method``; ``latitude`` missing, NaN anywhere (an unknown position),
        infinite or outside -90..90 (dask: when computed); ``pressure`` not numeric;
        xarray inputs that do not align exactly; ``correction`` given for a method other than Leroy & Parthiot.

    Notes
    -----
    The equations and their sources are in the per-method functions listed in
    :data:`METHODS`. NaN in gives NaN out.
    """
    func = _pick(method, correction, 0)
    return _dispatch(func, "pressure", pressure, latitude)


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
    return _dispatch(func, "depth", depth, latitude)


# --- helpers --------------------------------------------------------------------------


def _leroy_correction(correction):
    if correction is None:
        return False
    if correction == "common_ocean":
        return True
    raise SeaprofileError(f"correction must be None or 'common_ocean', got {correction!r}")


def _pick(method, correction, which):
    if method not in METHODS:
        raise SeaprofileError(f"method {method!r} is unknown; choose one of {', '.join(METHODS)}")
    func = METHODS[method][which]
    if correction is None:
        return func
    if method != "leroy_parthiot1998":
        raise SeaprofileError(
            f"correction applies only to method 'leroy_parthiot1998', not {method!r}"
        )
    _leroy_correction(correction)  # validate now, not inside a dask task
    return functools.partial(func, correction=correction)


def _dispatch(func, in_name, values, latitude):
    """Presence checks; ``func`` (a per-method function) dispatches numpy/dask/xarray."""
    if latitude is None:
        raise SeaprofileError("latitude is required (degrees north); give the cast position")
    if values is None:
        raise SeaprofileError(f"{in_name} is required")
    return func(values, latitude)
