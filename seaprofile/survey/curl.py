"""Surface sound-speed offset from the across-track curl of soundings over a flat seabed.

A flat array steered with a sound speed that differs from the water at its face bends
the outer beams up or down symmetrically (the "curl"). Over a flat (or evenly sloping)
seabed the offset that straightens the swath can be found by least squares.
"""

from __future__ import annotations

import warnings

import numpy as np
from scipy.optimize import minimize_scalar

from ..io.errors import ArgumentError
from .refraction import (
    TurnedBeamWarning,
    _check_beams,
    _check_profile,
    _check_scalar,
    beam_to_sounding,
)

__all__ = ["surface_speed_from_curl"]


def _line_residuals(depth, across):
    """Residuals of a straight-line fit depth = a + b across per ping (rows), m."""
    ok = np.isfinite(depth) & np.isfinite(across)
    n = ok.sum(axis=-1, keepdims=True)
    x = np.where(ok, across, 0.0)
    d = np.where(ok, depth, 0.0)
    xm = x.sum(axis=-1, keepdims=True) / n
    dm = d.sum(axis=-1, keepdims=True) / n
    dx = np.where(ok, x - xm, 0.0)
    dd = np.where(ok, d - dm, 0.0)
    slope = (dx * dd).sum(axis=-1, keepdims=True) / (dx * dx).sum(axis=-1, keepdims=True)
    return np.where(ok, dd - slope * dx, np.nan)


def surface_speed_from_curl(
    profile_depth,
    profile_sound_speed,
    beam_angle,
    travel_time,
    *,
    transducer_depth=0.0,
    search=20.0,
    two_way=True,
):
    """Offset of the steering sound speed from the profile, fitted from the swath curl.

    Parameters
    ----------
    profile_depth : array_like
        Profile node depths, m, positive down, strictly increasing (taken as right).
    profile_sound_speed : array_like
        Sound speed at the nodes, m/s.
    beam_angle : array_like
        Nominal beam angles, degrees from vertical, positive to starboard (beams, or
        pings x beams).
    travel_time : array_like
        Travel times, s (two-way unless ``two_way=False``), over a flat or evenly sloping
        seabed, broadcast with ``beam_angle`` (pings x beams).
    transducer_depth : float
        Transducer depth, m, positive down.
    search : float
        Half-width of the offset search, m/s (default 20).
    two_way : bool
        Two-way travel times.

    Returns
    -------
    dict
        ``offset`` (m/s: steering speed minus the profile's speed at the transducer),
        ``offset_uncertainty`` (m/s, 1-sigma), ``steering_sound_speed`` (m/s),
        ``profile_sound_speed`` (m/s at the transducer), ``rms_before`` and
        ``rms_after`` (m: residual of the per-ping straight-line fit with no offset and
        with the fitted one), ``beams`` (count used).

    Notes
    -----
    Model: each ping's soundings, reprocessed with ray parameter
    p = sin(theta) / (c_profile + offset) (Snell at a flat steered face: then p is the
    true one, :func:`seaprofile.survey.compare.profile_error`), lie on a straight line
    across track (flat seabed, possibly sloping or with a small roll). The offset
    minimises the sum of squared residuals of those per-ping line fits (bounded scalar
    minimisation, scipy ``minimize_scalar``). Its 1-sigma uncertainty is the Gauss-Newton
    one, sigma^2 = s^2 / (J^T J), s^2 = RSS / (n - 2 pings - 1), J the derivative of
    the residuals by the offset (central difference of 0.01 m/s). Seabed roughness, a
    wrong profile below the transducer and roll errors also curl the swath; the estimate
    is only as good as the flat-seabed assumption (derived here; the curl itself is the
    trade's usual diagnosis, common practice, no source).
    """
    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    half = _check_scalar("search", search, positive=True)
    a, t = _check_beams(beam_angle, travel_time)
    a = np.atleast_2d(a)
    t = np.atleast_2d(t)
    c0 = float(np.interp(z0, z, c))
    if half >= c0:
        raise ArgumentError("search", "must be smaller than the sound speed (m/s)")

    def residuals(offset):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", TurnedBeamWarning)
            d, x = beam_to_sounding(
                z,
                c,
                a,
                t,
                transducer_depth=z0,
                transducer_sound_speed=c0 + offset,
                two_way=two_way,
            )
        return _line_residuals(d, x)

    def cost(offset):
        r = residuals(offset)
        return float(np.nansum(r * r))

    base = residuals(0.0)
    used = np.isfinite(base)
    n = int(used.sum())
    pings = a.shape[0]
    if n - 2 * pings - 1 < 1:
        raise ArgumentError("travel_time", "needs at least 4 valid beams per ping to fit")
    best = minimize_scalar(cost, bounds=(-half, half), method="bounded", options={"xatol": 1e-6})
    off = float(best.x)
    h = 0.01
    jac = (residuals(off + h) - residuals(off - h)) / (2 * h)
    r = residuals(off)
    s2 = np.nansum(r * r) / (n - 2 * pings - 1)
    jj = float(np.nansum(jac * jac))
    sigma = float(np.sqrt(s2 / jj)) if jj > 0 else float("inf")
    return {
        "offset": off,
        "offset_uncertainty": sigma,
        "steering_sound_speed": c0 + off,
        "profile_sound_speed": c0,
        "rms_before": float(np.sqrt(np.nanmean(base * base))),
        "rms_after": float(np.sqrt(np.nanmean(r * r))),
        "beams": n,
    }
