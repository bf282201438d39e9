"""Depth and across-track distance of multibeam and single-beam soundings.

Beam angles are degrees from the vertical (nadir 0, positive to starboard); across-track
distance is m, positive to starboard; depth m positive down; travel time s (two-way unless
``two_way=False``).
"""

from __future__ import annotations

import warnings

import numpy as np

from .._validate import as_float_array
from ..io.errors import ArgumentError
from ..layers import harmonic_mean_sound_speed
from ._kernels import MISSING, OK, TURNED, _soundings_kernel, _to_depth_kernel

__all__ = [
    "SOUNDING_FLAGS",
    "TurnedBeamWarning",
    "beam_to_sounding",
    "depth_from_harmonic_mean",
    "seafloor_travel_time",
    "straight_ray_sounding",
]

#: Flag values returned by ``beam_to_sounding(..., return_flags=True)``.
SOUNDING_FLAGS = {
    OK: "sounding computed",
    TURNED: "beam turned (total internal reflection) before using its travel time: NaN",
    MISSING: "travel time or beam angle missing (NaN): NaN",
}


class TurnedBeamWarning(UserWarning):
    """Some beams turned upward before using their travel time; their soundings are NaN."""


def _check_profile(profile_depth, profile_sound_speed):
    z = np.ravel(as_float_array("profile_depth", profile_depth))
    c = np.ravel(as_float_array("profile_sound_speed", profile_sound_speed))
    if z.shape != c.shape:
        raise ArgumentError(
            "profile_sound_speed", f"has {c.size} values, profile_depth has {z.size}"
        )
    if z.size < 1:
        raise ArgumentError("profile_depth", "is empty")
    if not np.all(np.isfinite(z)):
        raise ArgumentError("profile_depth", "has non-finite values")
    if not (np.all(np.isfinite(c)) and np.all(c > 0)):
        raise ArgumentError("profile_sound_speed", "must be finite and positive (m/s)")
    if np.any(np.diff(z) <= 0):
        raise ArgumentError("profile_depth", "must be strictly increasing (m, positive down)")
    return z, c


def _check_scalar(name, value, *, positive=False):
    v = float(np.asarray(as_float_array(name, value)).reshape(()))
    if not np.isfinite(v) or (positive and v <= 0):
        raise ArgumentError(name, f"must be finite{' and positive' if positive else ''}")
    return v


def _check_beams(beam_angle, travel_time):
    a = as_float_array("beam_angle", beam_angle)
    t = as_float_array("travel_time", travel_time)
    if np.any(np.isinf(a)) or np.any(np.abs(a[np.isfinite(a)]) >= 90.0):
        raise ArgumentError(
            "beam_angle", "must be finite and strictly between -90 and 90 degrees from vertical"
        )
    if np.any(np.isinf(t)) or np.any(t[np.isfinite(t)] < 0):
        raise ArgumentError("travel_time", "must be finite and not negative (s)")
    try:
        a, t = np.broadcast_arrays(a, t)
    except ValueError:
        raise ArgumentError(
            "travel_time", f"shape {t.shape} does not broadcast with beam_angle {a.shape}"
        ) from None
    return a, t


def _layers_below(z, c, transducer_depth):
    """Profile nodes from the transducer down; speed held constant above the first node."""
    c0 = float(np.interp(transducer_depth, z, c))
    below = z > transducer_depth
    zs = np.concatenate([[transducer_depth], z[below]])
    cs = np.concatenate([[c0], c[below]])
    return np.ascontiguousarray(zs), np.ascontiguousarray(cs)


def beam_to_sounding(
    profile_depth,
    profile_sound_speed,
    beam_angle,
    travel_time,
    *,
    transducer_depth=0.0,
    transducer_sound_speed=None,
    two_way=True,
    return_flags=False,
):
    """Depth and across-track distance of each beam by exact ray tracing, m.

    Parameters
    ----------
    profile_depth : array_like
        Depths of the sound-speed profile nodes, m, positive down, strictly increasing.
    profile_sound_speed : array_like
        Sound speed at those nodes, m/s (linear in depth between nodes).
    beam_angle : array_like
        Beam angle at the transducer, degrees from vertical (nadir 0, positive to
        starboard), |angle| < 90; NaN marks a missing beam.
    travel_time : array_like
        Travel time of each beam, s (two-way unless ``two_way=False``), >= 0;
        broadcast with ``beam_angle`` (e.g. pings x beams against one fan of angles).
        NaN marks a missing beam.
    transducer_depth : float
        Depth of the transducer face, m, positive down (default 0).
    transducer_sound_speed : float or None
        Sound speed measured at the transducer face, m/s. When given, it sets the ray
        parameter p = sin(beam_angle) / transducer_sound_speed; None: the profile's speed
        at ``transducer_depth``.
    two_way : bool
        ``travel_time`` is two-way (halved inside) or one-way.
    return_flags : bool
        Also return an int8 array of flags (``SOUNDING_FLAGS``).

    Returns
    -------
    depth, across : numpy.ndarray
        Depth below the sea surface, m, positive down, and across-track distance from the
        transducer, m, positive to starboard; the broadcast shape of the inputs.
    flags : numpy.ndarray of int8
        Only with ``return_flags=True``: 0 computed, 1 turned, 2 missing input.

    Warns
    -----
    TurnedBeamWarning
        With the count of beams that turned upward (total internal reflection in a speed
        increase) before using their travel time. Those soundings are NaN, never a number.

    Notes
    -----
    The profile is linear in depth between nodes; above the shallowest node and below the
    deepest one the speed is held constant. In each layer c = c_a + g (z - z_a) a ray
    keeps Snell's constant p = sin(theta) / c and follows a circular arc of radius
    R = 1 / (|g| p); range and time across a layer are the closed forms

        dx = (cos theta_a - cos theta_b) / (g p),
        dt = (1 / g) ln[tan(theta_b / 2) / tan(theta_a / 2)],

    and the point reached after a remaining time tau follows from
    tan(theta / 2) = tan(theta_a / 2) exp(g tau) (Jensen, Kuperman, Porter & Schmidt,
    *Computational Ocean Acoustics*, 2nd ed., Springer 2011, ch. 3). They are evaluated
    in forms that stay exact as g -> 0 and p -> 0 (nadir).

    When ``transducer_sound_speed`` differs from the profile at the transducer depth, the
    launch uses it: the surface sensor at a flat transducer face sets the ray parameter
    (common practice, no source). The ray then enters the profile with
    sin(theta) = p c(transducer_depth); if that reaches 1 the beam is flagged turned.

    Beams are traced in parallel in a compiled kernel (pings x beams flattened).
    Not for navigation on its own: verify against the governing hydrographic standard.
    """
    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    a, t = _check_beams(beam_angle, travel_time)
    zs, cs = _layers_below(z, c, z0)
    if transducer_sound_speed is None:
        launch = float(cs[0])
    else:
        launch = _check_scalar("transducer_sound_speed", transducer_sound_speed, positive=True)
    shape = a.shape
    sin_a = np.ascontiguousarray(np.sin(np.radians(a)).ravel())
    one_way = np.ascontiguousarray(t.ravel() * (0.5 if two_way else 1.0))
    depth = np.empty(sin_a.size)
    across = np.empty(sin_a.size)
    flags = np.empty(sin_a.size, dtype=np.int8)
    _soundings_kernel(sin_a, one_way, launch, zs, cs, depth, across, flags)
    turned = int(np.count_nonzero(flags == TURNED))
    if turned:
        warnings.warn(
            f"{turned} beam(s) turned (total internal reflection) before using their "
            "travel time; their soundings are NaN",
            TurnedBeamWarning,
            stacklevel=2,
        )
    depth, across, flags = depth.reshape(shape), across.reshape(shape), flags.reshape(shape)
    if return_flags:
        return depth, across, flags
    return depth, across


def straight_ray_sounding(
    beam_angle, travel_time, sound_speed, *, transducer_depth=0.0, two_way=True
):
    """Depth and across-track distance of a straight ray at one sound speed, m.

    Parameters
    ----------
    beam_angle : array_like
        Beam angle, degrees from vertical (nadir 0, positive to starboard), |angle| < 90.
    travel_time : array_like
        Travel time, s (two-way unless ``two_way=False``), >= 0.
    sound_speed : float
        Sound speed along the whole ray, m/s (e.g. the transducer's).
    transducer_depth : float
        Depth of the transducer face, m, positive down.
    two_way : bool
        ``travel_time`` is two-way (halved inside) or one-way.

    Returns
    -------
    depth, across : numpy.ndarray
        ``transducer_depth + c t cos(angle)`` and ``c t sin(angle)``, m (t one-way).

    Notes
    -----
    The isovelocity limit of :func:`beam_to_sounding`; a comparison that shows what
    refraction changes.
    """
    a, t = _check_beams(beam_angle, travel_time)
    c = _check_scalar("sound_speed", sound_speed, positive=True)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    r = c * t * (0.5 if two_way else 1.0)
    theta = np.radians(a)
    return z0 + r * np.cos(theta), r * np.sin(theta)


def depth_from_harmonic_mean(
    profile_depth,
    profile_sound_speed,
    travel_time,
    *,
    transducer_depth=0.0,
    two_way=True,
    tolerance=1e-6,
):
    """Depth of a vertical single-beam sounding from the harmonic mean sound speed, m.

    Parameters
    ----------
    profile_depth : array_like
        Profile node depths, m, positive down, strictly increasing.
    profile_sound_speed : array_like
        Sound speed at those nodes, m/s (linear in depth between nodes).
    travel_time : array_like
        Vertical travel time, s (two-way unless ``two_way=False``), >= 0.
    transducer_depth : float
        Depth of the transducer face, m, positive down.
    two_way : bool
        ``travel_time`` is two-way (halved inside) or one-way.
    tolerance : float
        Convergence of the depth, m.

    Returns
    -------
    numpy.ndarray
        Depth d solving d = z0 + c_h(z0, d) t, m; NaN below the deepest profile node
        (cast deeper, or use :func:`beam_to_sounding`, which holds the last speed).

    Notes
    -----
    c_h is the exact harmonic mean of the piecewise-linear profile
    (``seaprofile.layers.harmonic_mean_sound_speed``); the fixed point is reached by
    iteration (the map contracts: |dc_h/dd| t << 1 in the ocean).
    """
    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    t = as_float_array("travel_time", travel_time)
    if np.any(np.isinf(t)) or np.any(t[np.isfinite(t)] < 0):
        raise ArgumentError("travel_time", "must be finite and not negative (s)")
    tau = t * (0.5 if two_way else 1.0)
    d = z0 + float(np.interp(z0, z, c)) * tau
    for _ in range(100):
        bottom = np.minimum(d, z[-1])
        new = z0 + harmonic_mean_sound_speed(c, z, z0, bottom) * tau
        done = np.all(~(np.abs(new - d) > tolerance))
        d = new
        if done:
            break
    return np.where(d > z[-1] + tolerance, np.nan, d)


def seafloor_travel_time(
    profile_depth,
    profile_sound_speed,
    beam_angle,
    seafloor_depth,
    *,
    transducer_depth=0.0,
    transducer_sound_speed=None,
    two_way=True,
    return_flags=False,
):
    """Travel time and across-track distance of each beam down to a flat seafloor.

    The forward problem of :func:`beam_to_sounding`: where and when a beam of a given
    angle meets the depth ``seafloor_depth`` (used to synthesise soundings and to compare
    profiles).

    Parameters
    ----------
    profile_depth : array_like
        Depths of the sound-speed profile nodes, m, positive down, strictly increasing.
    profile_sound_speed : array_like
        Sound speed at those nodes, m/s (linear in depth between nodes).
    beam_angle : array_like
        Beam angle at the transducer, degrees from vertical (nadir 0, positive to
        starboard), |angle| < 90; NaN marks a missing beam.
    seafloor_depth : float
        Depth of the flat seafloor, m, positive down, deeper than ``transducer_depth``.
    transducer_depth : float
        Depth of the transducer face, m, positive down (default 0).
    transducer_sound_speed : float or None
        Sound speed that sets the ray parameter p = sin(beam_angle) / speed, m/s (the
        speed a flat array steers with); None: the profile's speed at the transducer.
    two_way : bool
        Return two-way (default) or one-way travel time.
    return_flags : bool
        Also return the int8 flags of :data:`SOUNDING_FLAGS`.

    Returns
    -------
    travel_time, across : numpy.ndarray
        Travel time, s, and across-track distance of the seafloor point, m, positive to
        starboard; NaN (flag 1) for a beam that turns before reaching the seafloor.

    Notes
    -----
    The same constant-gradient-layer closed forms as :func:`beam_to_sounding` (Jensen,
    Kuperman, Porter & Schmidt, *Computational Ocean Acoustics*, 2nd ed., Springer 2011,
    ch. 3), summed layer by layer down to the seafloor; below the deepest node the speed is
    held constant. Feeding the result back to :func:`beam_to_sounding` with the same
    profile returns ``seafloor_depth`` to rounding.
    """
    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    bottom = _check_scalar("seafloor_depth", seafloor_depth)
    if bottom <= z0:
        raise ArgumentError("seafloor_depth", "must be deeper than transducer_depth (m)")
    a = as_float_array("beam_angle", beam_angle)
    if np.any(np.isinf(a)) or np.any(np.abs(a[np.isfinite(a)]) >= 90.0):
        raise ArgumentError(
            "beam_angle", "must be finite and strictly between -90 and 90 degrees from vertical"
        )
    zs, cs = _layers_below(z, c, z0)
    if transducer_sound_speed is None:
        launch = float(cs[0])
    else:
        launch = _check_scalar("transducer_sound_speed", transducer_sound_speed, positive=True)
    sin_a = np.ascontiguousarray(np.sin(np.radians(a)).ravel())
    t = np.empty(sin_a.size)
    x = np.empty(sin_a.size)
    f = np.empty(sin_a.size, dtype=np.int8)
    _to_depth_kernel(sin_a, launch, bottom, zs, cs, t, x, f)
    t = t.reshape(a.shape) * (2.0 if two_way else 1.0)
    x, f = x.reshape(a.shape), f.reshape(a.shape)
    if return_flags:
        return t, x, f
    return t, x
