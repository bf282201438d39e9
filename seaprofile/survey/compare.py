"""What a wrong sound-speed profile does to soundings: depth and across-track error by beam.

Two ways a wrong sound speed reaches a multibeam sounding over a flat seafloor:

* **column** (path a): the profile used to ray-trace differs from the water the beams
  crossed. The true soundings are traced with the true profile to get their travel times at
  the water depth; those times are then reprocessed with the used profile.
* **face** (path b): a flat transducer array steers each beam with the sound speed it is
  given at its face. Snell's law at the face, sin(theta_actual) / c_face =
  sin(theta_nominal) / c_sensor, sends the beam off its nominal angle when the sensor
  speed c_sensor differs from the true water at the face c_face; processing then traces
  the nominal angle through the (right) column.
* **combined**: both at once (the beam steered with the sensor speed, reprocessed with the
  used profile).

Angles are degrees from vertical (nadir 0, positive to starboard), depths m positive
down, errors m (processed minus true).
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import as_float_array
from ..io.errors import ArgumentError
from .refraction import (
    TurnedBeamWarning,
    _check_profile,
    _check_scalar,
    beam_to_sounding,
    seafloor_travel_time,
)

__all__ = ["PATHS", "profile_error", "surface_sensor_check", "face_error_rule"]

#: The error paths of :func:`profile_error` and what each means.
PATHS = {
    "column": "wrong profile in the water column (travel times reprocessed with it)",
    "face": "wrong sound speed at a flat transducer face that steers the beam",
    "combined": "both: beam steered with the sensor speed, reprocessed with the used profile",
}

_DEFAULT_ANGLES = np.linspace(0.0, 75.0, 76)

_REFERENCE = (
    "Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, 2nd ed., "
    "Springer, ch. 3 (rays in constant-gradient layers); Snell's law at a flat array face"
)


def _angles(beam_angles):
    a = np.ravel(
        as_float_array("beam_angles", _DEFAULT_ANGLES if beam_angles is None else beam_angles)
    )
    if a.size == 0 or not np.all(np.isfinite(a)) or np.any(np.abs(a) >= 90.0):
        raise ArgumentError(
            "beam_angles", "must be finite, non-empty and strictly between -90 and 90 degrees"
        )
    return a


def _trace_errors(true_z, true_c, used_z, used_c, angles, bottom, z0, steering_speed):
    """Depth and across errors (m) of beams steered with ``steering_speed`` in the true water,
    reprocessed at their nominal angle with the used profile."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", TurnedBeamWarning)
        t, x_true = seafloor_travel_time(
            true_z,
            true_c,
            angles,
            bottom,
            transducer_depth=z0,
            transducer_sound_speed=steering_speed,
        )
        d, x = beam_to_sounding(used_z, used_c, angles, t, transducer_depth=z0)
    return d - bottom, x - x_true, t, x_true


def profile_error(
    used_depth,
    used_speed,
    true_depth,
    true_speed,
    *,
    water_depth,
    transducer_depth=0.0,
    beam_angles=None,
    sensor_sound_speed=None,
):
    """Depth and across-track error by beam angle when soundings use the wrong sound speed.

    Parameters
    ----------
    used_depth : array_like
        Node depths of the profile used to process the soundings, m, positive down,
        strictly increasing.
    used_speed : array_like
        Its sound speed, m/s.
    true_depth : array_like
        Node depths of the profile of the water the beams crossed, m, positive down.
    true_speed : array_like
        Its sound speed, m/s.
    water_depth : float
        Depth of the flat seafloor below the sea surface, m, positive down, deeper than
        ``transducer_depth``.
    transducer_depth : float
        Depth of the transducer face, m, positive down (default 0).
    beam_angles : array_like or None
        Nominal beam angles, degrees from vertical, |angle| < 90 (default 0 to 75 by 1).
    sensor_sound_speed : float or None
        Sound speed the array steers with, m/s (the surface sensor). None: the used
        profile's speed at ``transducer_depth`` (the processing believes its profile).
        The true water at the face is the true profile's speed at ``transducer_depth``.

    Returns
    -------
    xarray.Dataset
        Dimension ``beam_angle`` (degrees). For each path in :data:`PATHS` (``column``,
        ``face``, ``combined``): ``depth_error_<path>`` and ``across_error_<path>``, m,
        processed minus true (positive depth error: soundings too deep); also
        ``true_across`` (m) and ``travel_time`` (two-way, s, of the combined path).
        NaN where a beam turns before the seafloor. Attributes: ``product="profile_error"``,
        ``water_depth``, ``transducer_depth``, the three face speeds, provenance
        (``processing_steps``, ``history``), ``caution``.

    Notes
    -----
    Rays are exact arcs through constant-gradient layers (:func:`beam_to_sounding`,
    :func:`seafloor_travel_time`; Jensen, Kuperman, Porter & Schmidt 2011, ch. 3).

    * column: launched at the nominal angle with the true face speed, reprocessed with
      the used profile (ray parameter sin(theta) / c_used(transducer_depth));
    * face: launched with p = sin(theta_nominal) / c_sensor (Snell at the flat face),
      reprocessed with the true profile at the nominal angle;
    * combined: launched as in face, reprocessed as in column.

    For a small face error in uniform water the depth error follows
    dz / z ~= tan^2(theta) (c_face - c_sensor) / c_sensor (derived here from Snell's law:
    :func:`face_error_rule`); the outer beams curl down when the sensor reads slow.
    If the processing ray-traces with the same sensor speed it steered with, the ray
    parameter is the true one and the face error cancels for a flat array; this function
    models processing that trusts the nominal angle in the profile's water.
    """
    uz, uc = _check_profile(used_depth, used_speed)
    tz, tc = _check_profile(true_depth, true_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    bottom = _check_scalar("water_depth", water_depth)
    if bottom <= z0:
        raise ArgumentError("water_depth", "must be deeper than transducer_depth (m)")
    angles = _angles(beam_angles)
    c_true_face = float(np.interp(z0, tz, tc))
    c_used_face = float(np.interp(z0, uz, uc))
    if sensor_sound_speed is None:
        sensor = c_used_face
    else:
        sensor = _check_scalar("sensor_sound_speed", sensor_sound_speed, positive=True)

    data = {}
    runs = {
        "column": (uz, uc, c_true_face),
        "face": (tz, tc, sensor),
        "combined": (uz, uc, sensor),
    }
    for path, (pz, pc, steer) in runs.items():
        dz, dx, t, x_true = _trace_errors(tz, tc, pz, pc, angles, bottom, z0, steer)
        data[f"depth_error_{path}"] = (
            "beam_angle",
            dz,
            {
                "long_name": f"sounding depth error, processed minus true: {PATHS[path]}",
                "units": "m",
                "positive": "down",
            },
        )
        data[f"across_error_{path}"] = (
            "beam_angle",
            dx,
            {
                "long_name": f"across-track error, processed minus true: {PATHS[path]}",
                "units": "m",
            },
        )
        if path == "column":
            data["true_across"] = (
                "beam_angle",
                x_true,
                {"long_name": "true across-track distance of the seafloor point", "units": "m"},
            )
        if path == "combined":
            data["travel_time"] = (
                "beam_angle",
                t,
                {"long_name": "two-way travel time of the combined path", "units": "s"},
            )
    attrs = _cf.base_attrs(
        product="profile_error",
        water_depth=bottom,
        transducer_depth=z0,
        sensor_sound_speed=sensor,
        true_face_sound_speed=c_true_face,
        used_face_sound_speed=c_used_face,
        references=_REFERENCE,
    )
    attrs = _cf.record_step(
        attrs,
        "profile_error",
        water_depth=bottom,
        transducer_depth=z0,
        sensor_sound_speed=sensor,
        used_nodes=int(uz.size),
        true_nodes=int(tz.size),
    )
    coords = {
        "beam_angle": (
            "beam_angle",
            angles,
            {
                "long_name": "nominal beam angle from vertical, positive to starboard",
                "units": "degree",
            },
        )
    }
    return xr.Dataset(data, coords=coords, attrs=attrs)


def face_error_rule(
    beam_angle, water_depth, sensor_sound_speed, face_sound_speed, *, transducer_depth=0.0
):
    """First-order depth error of a flat array steered with a wrong sound speed, m.

    Parameters
    ----------
    beam_angle : array_like
        Nominal beam angle, degrees from vertical, |angle| < 90.
    water_depth : float
        Seafloor depth, m, positive down.
    sensor_sound_speed : float
        Speed the array steers with, m/s.
    face_sound_speed : float
        True speed of the water at the face, m/s.
    transducer_depth : float
        Transducer depth, m, positive down.

    Returns
    -------
    numpy.ndarray
        (water_depth - transducer_depth) tan^2(theta) (c_face - c_sensor) / c_sensor, m.

    Notes
    -----
    Derived here: Snell at the face gives sin(theta') = sin(theta) (1 + e),
    e = c_face / c_sensor - 1, so d theta = tan(theta) e. The beam reaches the seafloor
    (height h below the face) at slant r = h / cos(theta'); processing puts that slant at
    theta, depth r cos(theta) = h cos(theta) / cos(theta') ~= h (1 + tan^2(theta) e).
    Uniform water; the exact isovelocity value is h (cos theta / cos theta' - 1).
    """
    a = np.radians(as_float_array("beam_angle", beam_angle))
    h = _check_scalar("water_depth", water_depth) - _check_scalar(
        "transducer_depth", transducer_depth
    )
    cs = _check_scalar("sensor_sound_speed", sensor_sound_speed, positive=True)
    cf = _check_scalar("face_sound_speed", face_sound_speed, positive=True)
    return h * np.tan(a) ** 2 * (cf - cs) / cs


def surface_sensor_check(
    profile_depth,
    profile_speed,
    sensor_sound_speed,
    *,
    water_depth,
    transducer_depth=0.0,
    beam_angle=60.0,
):
    """Compare the transducer's sound-speed sensor with the profile at transducer depth.

    Parameters
    ----------
    profile_depth : array_like
        Profile node depths, m, positive down, strictly increasing.
    profile_speed : array_like
        Profile sound speed, m/s.
    sensor_sound_speed : float
        Sound speed from the sensor at the transducer face, m/s.
    water_depth : float
        Seafloor depth for the predicted error, m, positive down.
    transducer_depth : float
        Transducer depth, m, positive down.
    beam_angle : float
        Outer beam angle for the predicted error, degrees from vertical.

    Returns
    -------
    dict
        ``profile_sound_speed`` (m/s, the profile at the transducer depth),
        ``sensor_sound_speed`` (m/s), ``difference`` (sensor minus profile, m/s),
        ``beam_angle`` (degree), ``water_depth`` (m), ``depth_error`` (m: the face path of
        :func:`profile_error`, exact, if the profile is right and the array steers with the
        sensor value), ``depth_error_rule`` (m: :func:`face_error_rule`), ``across_error``
        (m).

    Notes
    -----
    Which of the two is right is not known from the comparison alone; the prediction
    takes the profile as the truth and the sensor as the steering speed. A sensor that
    reads slower than the water curls the outer beams down (positive error).
    """
    z, c = _check_profile(profile_depth, profile_speed)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    sensor = _check_scalar("sensor_sound_speed", sensor_sound_speed, positive=True)
    angle = _check_scalar("beam_angle", beam_angle)
    ds = profile_error(
        z,
        c,
        z,
        c,
        water_depth=water_depth,
        transducer_depth=z0,
        beam_angles=[angle],
        sensor_sound_speed=sensor,
    )
    c_face = float(np.interp(z0, z, c))
    return {
        "profile_sound_speed": c_face,
        "sensor_sound_speed": sensor,
        "difference": sensor - c_face,
        "beam_angle": angle,
        "water_depth": float(water_depth),
        "depth_error": float(ds["depth_error_face"][0]),
        "depth_error_rule": float(
            face_error_rule(angle, water_depth, sensor, c_face, transducer_depth=z0)
        ),
        "across_error": float(ds["across_error_face"][0]),
    }
