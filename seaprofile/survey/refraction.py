"""Depth and across-track distance of multibeam and single-beam soundings.

Beam angles are degrees from the vertical (nadir 0, positive to starboard); across-track
distance is m, positive to starboard; depth m positive down; travel time s (two-way unless
``two_way=False``).
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .._validate import as_float_array
from ..io.errors import ArgumentError
from ..layers import harmonic_mean_sound_speed
from ._kernels import (
    MISSING,
    OK,
    TURNED,
    _fan_tables,
    _layer_constants,
    _soundings_kernel,
    _to_depth_kernel,
)

__all__ = [
    "SOUNDING_FLAGS",
    "TurnedBeamWarning",
    "beam_to_sounding",
    "JOINS",
    "depth_from_harmonic_mean",
    "join_transducer_speed",
    "seafloor_travel_time",
    "swath_soundings",
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


#: How :func:`join_transducer_speed` puts the transducer's sound speed into the profile.
JOINS = {
    "launch": "sensor speed sets the ray parameter only; the profile is unchanged",
    "node": "profile at and above the transducer replaced by the sensor speed (a node at the "
    "transducer), linear to the next profile node below",
    "blend": "sensor speed at the transducer, the difference to the profile tapered "
    "linearly to zero over join_distance below it",
}


def join_transducer_speed(
    profile_depth,
    profile_sound_speed,
    transducer_sound_speed,
    *,
    transducer_depth=0.0,
    method="blend",
    join_distance=5.0,
):
    """Profile with the transducer's measured sound speed joined in at the transducer.

    Parameters
    ----------
    profile_depth : array_like
        Profile node depths, m, positive down, strictly increasing.
    profile_sound_speed : array_like
        Sound speed at the nodes, m/s.
    transducer_sound_speed : float
        Sound speed measured at the transducer face, m/s.
    transducer_depth : float
        Transducer depth, m, positive down.
    method : {"launch", "node", "blend"}
        See :data:`JOINS` (default ``"blend"``).
    join_distance : float
        With ``"blend"``: depth below the transducer over which the difference tapers to
        zero, m (default 5 m, common practice, no source).

    Returns
    -------
    depth, sound_speed : numpy.ndarray
        The joined profile (nodes from the transducer down; the profile itself for
        ``"launch"``).
    description : str
        One line saying what was done (for ``attrs["transducer_join"]``).
    """
    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    cs = _check_scalar("transducer_sound_speed", transducer_sound_speed, positive=True)
    if method not in JOINS:
        raise ArgumentError("method", f"{method!r} is not one of {', '.join(JOINS)}")
    c_prof = float(np.interp(z0, z, c))
    diff = cs - c_prof
    if method == "launch":
        return z, c, f"launch: ray parameter from {cs:.2f} m/s (profile {c_prof:.2f} m/s)"
    zs, cc = _layers_below(z, c, z0)
    if method == "node":
        cc = cc.copy()
        cc[0] = cs
        return (
            zs,
            cc,
            (
                f"node: {cs:.2f} m/s at {z0:g} m replaces the profile ({c_prof:.2f} m/s) at and "
                "above the transducer, linear to the next node"
            ),
        )
    length = _check_scalar("join_distance", join_distance, positive=True)
    end = z0 + length
    if not np.any(np.isclose(zs, end)):
        at_end = float(np.interp(end, zs, cc))
        k = int(np.searchsorted(zs, end))
        zs = np.insert(zs, k, end)
        cc = np.insert(cc, k, at_end)
    w = np.clip(1.0 - (zs - z0) / length, 0.0, 1.0)
    return (
        zs,
        cc + diff * w,
        (
            f"blend: {cs:.2f} m/s at {z0:g} m (profile {c_prof:.2f} m/s), difference "
            f"{diff:+.2f} m/s tapered linearly to zero over {length:g} m"
        ),
    )


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
    join="launch",
    join_distance=5.0,
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
    join : {"launch", "node", "blend"}
        How ``transducer_sound_speed`` enters the profile (:data:`JOINS`,
        :func:`join_transducer_speed`); default ``"launch"``: the ray parameter only.
    join_distance : float
        Taper length of ``join="blend"``, m.

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
        if join != "launch":
            zs, cs, _ = join_transducer_speed(
                z, c, launch, transducer_depth=z0, method=join, join_distance=join_distance
            )
    shape = a.shape
    one_way = np.ascontiguousarray(t.ravel() * (0.5 if two_way else 1.0))
    depth = np.empty(one_way.size)
    across = np.empty(one_way.size)
    flags = np.empty(one_way.size, dtype=np.int8)
    _trace_soundings(beam_angle, shape, one_way, launch, zs, cs, depth, across, flags)
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


#: Largest fan table (distinct angles x profile nodes) built; two float64 tables of this
#: many cells take 128 MB
_TABLE_CELLS = 8_000_000


def _trace_soundings(beam_angle, shape, one_way, launch, zs, cs, depth, across, flags):
    """Fill depth, across, flags: by fan tables when the beams share a few angles.

    A fan of angles broadcast against many pings (``beam_angle`` smaller than the
    travel times) is traced once per distinct angle down every node, then each beam is a
    binary search; otherwise each beam walks down the layers. Both accumulate time and
    range the same way, so the two give identical numbers.
    """
    a0 = as_float_array("beam_angle", beam_angle)
    sin0 = np.sin(np.radians(a0))
    grad, t_vertical = _layer_constants(zs, cs)
    distinct = None
    if 4 * sin0.size <= one_way.size:
        distinct, which = np.unique(sin0.ravel(), return_inverse=True)
        cells = distinct.size * zs.size
        if cells > min(2 * one_way.size, _TABLE_CELLS):  # tables would cost more than a walk
            distinct = None
    if distinct is not None:
        sin_values = distinct
        which = np.broadcast_to(which.reshape(sin0.shape), shape).ravel()
        tables = _fan_tables(sin_values, launch, zs, cs, grad, t_vertical)
    else:
        sin_values = np.broadcast_to(sin0, shape).ravel()
        which = np.arange(sin_values.size)
        tables = (np.empty((0, 0)), np.empty((0, 0)), np.empty(0, np.int64), np.empty(0))
    _soundings_kernel(
        np.ascontiguousarray(sin_values),
        np.ascontiguousarray(which, dtype=np.int64),
        one_way,
        launch,
        zs,
        cs,
        grad,
        t_vertical,
        tables,
        depth,
        across,
        flags,
    )


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


def _swath_block(z, c, angle, time, z0, launch, two_way):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", TurnedBeamWarning)
        return beam_to_sounding(
            z,
            c,
            angle,
            time,
            transducer_depth=z0,
            transducer_sound_speed=launch,
            two_way=two_way,
        )


def swath_soundings(
    profile_depth,
    profile_sound_speed,
    beam_angle,
    travel_time,
    *,
    transducer_depth=0.0,
    transducer_sound_speed=None,
    join="launch",
    join_distance=5.0,
    two_way=True,
):
    """:func:`beam_to_sounding` over (ping, beam) numpy, dask or xarray arrays, as a Dataset.

    Parameters
    ----------
    profile_depth : array_like
        Profile node depths, m, positive down, strictly increasing (one profile).
    profile_sound_speed : array_like
        Sound speed at the nodes, m/s.
    beam_angle : array_like, dask array or xarray.DataArray
        Beam angles, degrees from vertical, positive to starboard (e.g. dims
        ``(ping, beam)`` or ``(beam,)``).
    travel_time : array_like, dask array or xarray.DataArray
        Travel times, s (two-way unless ``two_way=False``), aligned with ``beam_angle``.
    transducer_depth : float
        Transducer depth, m, positive down.
    transducer_sound_speed : float or None
        Sound speed at the transducer face, m/s; joined in by ``join``.
    join : {"launch", "node", "blend"}
        How the transducer speed enters (:data:`JOINS`); ignored without it.
    join_distance : float
        Taper length of ``"blend"``, m.
    two_way : bool
        Two-way travel times.

    Returns
    -------
    xarray.Dataset or tuple of arrays
        For xarray inputs a Dataset with ``depth`` and ``across_track_distance`` (m; lazy
        for dask-backed inputs, computed block by block with ``dask="parallelized"``
        through the package's one dispatcher), attributes ``transducer_join``,
        provenance and caution; for numpy or dask inputs the pair ``(depth, across)``.
        Turned beams are NaN (no warning per block; use :func:`beam_to_sounding` with
        ``return_flags=True`` to count them).
    """
    from .. import _cf
    from ..seawater._apply import columnwise

    z, c = _check_profile(profile_depth, profile_sound_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    launch = None
    how = "profile speed at the transducer"
    if transducer_sound_speed is not None:
        z, c, how = join_transducer_speed(
            z,
            c,
            transducer_sound_speed,
            transducer_depth=z0,
            method=join,
            join_distance=join_distance,
        )
        launch = float(transducer_sound_speed)

    def func(za, ca, angle, time):
        return _swath_block(za, ca, angle, time, z0, launch, two_way)

    depth_attrs = {
        "standard_name": "depth",
        "long_name": "sounding depth below the sea surface",
        "units": "m",
        "positive": "down",
    }
    across_attrs = {"long_name": "across-track distance, positive to starboard", "units": "m"}
    labelled = any(isinstance(v, xr.DataArray) for v in (beam_angle, travel_time))
    zc = [xr.DataArray(v, dims="profile_node") if labelled else v for v in (z, c)]
    out = columnwise(
        func,
        [("profile_depth", zc[0]), ("profile_sound_speed", zc[1])],
        dim="profile_node",
        params=[("beam_angle", beam_angle), ("travel_time", travel_time)],
        outputs=[("depth", depth_attrs), ("across_track_distance", across_attrs)],
    )
    if not isinstance(out[0], xr.DataArray):
        return out
    attrs = _cf.record_step(
        _cf.base_attrs(product="soundings", transducer_join=how, transducer_depth=z0),
        "swath_soundings",
        transducer_depth=z0,
        join=join,
        two_way=two_way,
    )
    order = []
    for v in (travel_time, beam_angle):
        order += [d for d in getattr(v, "dims", ()) if d not in order]
    ds = xr.Dataset({"depth": out[0], "across_track_distance": out[1]}, attrs=attrs)
    return ds.transpose(*order, ...)
