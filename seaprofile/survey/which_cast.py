"""Which sound-speed cast to use for each ping: nearest in time, in distance, or both.

Times are seconds (any common origin) or numpy datetime64; positions degrees north/east.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import as_float_array, check_position
from ..io.errors import ArgumentError
from .advice import DEFAULT_FRACTION, _fraction
from .budget import tvu
from .compare import profile_error

__all__ = ["EARTH_RADIUS", "RULES", "cast_for_pings", "great_circle_distance", "neighbour_check"]

#: Mean Earth radius R1 = (2a + b) / 3 of GRS 80, m (Moritz 2000, J. Geodesy 74, 128-133).
EARTH_RADIUS = 6371008.8

#: Cast choice rules of :func:`cast_for_pings`.
RULES = {
    "time": "nearest cast in time",
    "distance": "nearest cast by great-circle distance",
    "both": "smallest distance + distance_scale x |time difference in hours|",
}

_BLOCK = 65536  # pings per block of the (pings x casts) cost matrix


def _seconds(name, t):
    a = np.asarray(t)
    if np.issubdtype(a.dtype, np.datetime64):
        if np.any(np.isnat(a)):
            raise ArgumentError(name, "has missing times (NaT)")
        return np.ravel((a - np.datetime64("1970-01-01T00:00:00")) / np.timedelta64(1, "s"))
    v = np.ravel(as_float_array(name, a))
    if not np.all(np.isfinite(v)):
        raise ArgumentError(name, "has non-finite times")
    return v


def great_circle_distance(latitude1, longitude1, latitude2, longitude2):
    """Great-circle distance on a sphere of radius :data:`EARTH_RADIUS`, m.

    Parameters
    ----------
    latitude1 : array_like
        Latitude of the first points, degrees north.
    longitude1 : array_like
        Longitude of the first points, degrees east.
    latitude2 : array_like
        Latitude of the second points, degrees north (broadcast with the first).
    longitude2 : array_like
        Longitude of the second points, degrees east.

    Returns
    -------
    numpy.ndarray
        d = 2 R asin(sqrt(sin^2(dphi / 2) + cos phi1 cos phi2 sin^2(dlambda / 2))), m.

    Notes
    -----
    The haversine formula (Sinnott 1984, Sky and Telescope 68(2), 159), well conditioned
    at small distances; the sphere differs from the ellipsoid by up to about 0.5 %, far
    below what matters for choosing a cast.
    """
    p1 = np.radians(check_position("latitude", latitude1, name="latitude1"))
    l1 = np.radians(check_position("longitude", longitude1, name="longitude1"))
    p2 = np.radians(check_position("latitude", latitude2, name="latitude2"))
    l2 = np.radians(check_position("longitude", longitude2, name="longitude2"))
    h = np.sin((p2 - p1) / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin((l2 - l1) / 2) ** 2
    return 2.0 * EARTH_RADIUS * np.arcsin(np.sqrt(np.clip(h, 0.0, 1.0)))


def cast_for_pings(
    cast_times,
    cast_latitudes,
    cast_longitudes,
    ping_times,
    ping_latitudes,
    ping_longitudes,
    *,
    rule="time",
    distance_scale=None,
    only_earlier=False,
):
    """Index of the cast to use for each ping.

    Parameters
    ----------
    cast_times : array_like
        Cast times, s (any origin shared with the pings) or numpy datetime64.
    cast_latitudes : array_like
        Cast latitudes, degrees north.
    cast_longitudes : array_like
        Cast longitudes, degrees east.
    ping_times : array_like
        Ping times, s or datetime64 (the same kind as ``cast_times``).
    ping_latitudes : array_like
        Ping latitudes, degrees north.
    ping_longitudes : array_like
        Ping longitudes, degrees east.
    rule : {"time", "distance", "both"}
        See :data:`RULES`.
    distance_scale : float or None
        With ``rule="both"``: metres that one hour of time difference counts as, m/h
        (a choice of the surveyor; no default).
    only_earlier : bool
        Choose only among casts taken at or before the ping (real-time use); a ping
        before every cast gets -1.

    Returns
    -------
    numpy.ndarray of int64
        Cast index per ping (ties: the lower index).

    Notes
    -----
    Distance is great-circle (:func:`great_circle_distance`, haversine on the mean-radius
    sphere). The cost matrix is built in blocks of pings, so memory stays bounded.
    """
    if rule not in RULES:
        raise ArgumentError("rule", f"{rule!r} is not one of {', '.join(RULES)}")
    ct = _seconds("cast_times", cast_times)
    pt = _seconds("ping_times", ping_times)
    clat = np.ravel(check_position("latitude", cast_latitudes, name="cast_latitudes"))
    clon = np.ravel(check_position("longitude", cast_longitudes, name="cast_longitudes"))
    plat = np.ravel(check_position("latitude", ping_latitudes, name="ping_latitudes"))
    plon = np.ravel(check_position("longitude", ping_longitudes, name="ping_longitudes"))
    if ct.size == 0:
        raise ArgumentError("cast_times", "is empty")
    if not (ct.size == clat.size == clon.size):
        raise ArgumentError("cast_latitudes", "cast times and positions differ in size")
    if not (pt.size == plat.size == plon.size):
        raise ArgumentError("ping_latitudes", "ping times and positions differ in size")
    scale = 0.0
    if rule == "both":
        if distance_scale is None:
            raise ArgumentError("distance_scale", "is needed with rule='both' (m per hour)")
        scale = float(distance_scale)
        if not (np.isfinite(scale) and scale >= 0):
            raise ArgumentError("distance_scale", "must be finite and not negative (m/h)")
    out = np.empty(pt.size, dtype=np.int64)
    for start in range(0, pt.size, _BLOCK):  # blocks of 65536 pings, vectorised inside
        sl = slice(start, start + _BLOCK)
        dt = pt[sl, None] - ct[None, :]
        if rule == "time":
            cost = np.abs(dt)
        else:
            cost = great_circle_distance(
                plat[sl, None], plon[sl, None], clat[None, :], clon[None, :]
            )
            if rule == "both":
                cost = cost + scale * np.abs(dt) / 3600.0
        if only_earlier:
            cost = np.where(dt >= 0, cost, np.inf)
        idx = np.argmin(cost, axis=1)
        if only_earlier:
            idx = np.where(np.isfinite(cost[np.arange(idx.size), idx]), idx, -1)
        out[sl] = idx
    return out


def neighbour_check(
    profiles,
    *,
    water_depth,
    transducer_depth=0.0,
    outer_angle=60.0,
    order="1a",
    a=None,
    b=None,
    fraction=DEFAULT_FRACTION,
    path="column",
):
    """Flag neighbouring casts whose difference at the outer beam exceeds the budget share.

    Parameters
    ----------
    profiles : sequence of (depth, sound_speed)
        Casts in time order: node depths, m, positive down, and sound speed, m/s.
    water_depth : float
        Seafloor depth, m, positive down.
    transducer_depth : float
        Transducer depth, m, positive down.
    outer_angle : float
        Outer beam angle, degrees from vertical.
    order : str or None
        IHO S-44 order of the budget (or None with ``a``, ``b``).
    a : float or None
        Custom TVU part, m.
    b : float or None
        Custom TVU depth coefficient, dimensionless.
    fraction : float
        Share of the TVU (95 %), in (0, 1] (default 0.5, common practice, no source).
    path : str
        Error path of :func:`~seaprofile.survey.compare.profile_error` (default
        ``"column"``: the water column changed between casts).

    Returns
    -------
    xarray.Dataset
        Dimension ``pair`` (cast k and k + 1): ``first``, ``second`` (indices),
        ``outer_depth_error`` (m, the larger magnitude of processing each with the other),
        ``limit`` (m, fraction x TVU) and ``exceeds`` (bool): between such casts the
        water changed too much for either to stand in for the other at the outer beam.
    """
    f = _fraction(fraction)
    if len(profiles) < 2:
        raise ArgumentError("profiles", "needs at least two casts")
    if order is not None and (a is not None or b is not None):
        order = None
    limit = f * float(tvu(water_depth, order, a=a, b=b))
    errors = []
    for k in range(len(profiles) - 1):  # one pair per cast gap, each a vectorised trace
        (z1, c1), (z2, c2) = profiles[k], profiles[k + 1]
        worst = 0.0
        for used, true in (((z1, c1), (z2, c2)), ((z2, c2), (z1, c1))):
            ds = profile_error(
                *used,
                *true,
                water_depth=water_depth,
                transducer_depth=transducer_depth,
                beam_angles=[outer_angle],
            )
            e = float(ds[f"depth_error_{path}"][0])
            worst = max(worst, abs(e)) if np.isfinite(e) else np.inf
        errors.append(worst)
    n = len(errors)
    err = np.array(errors)
    attrs = _cf.record_step(
        _cf.base_attrs(
            product="cast_neighbour_check",
            water_depth=float(water_depth),
            outer_angle=float(outer_angle),
            fraction=f,
            rule="outer-beam depth error within fraction x TVU at 95 % "
            "(common practice, no source)",
        ),
        "neighbour_check",
        order=order,
        fraction=f,
        path=path,
    )
    return xr.Dataset(
        {
            "first": ("pair", np.arange(n)),
            "second": ("pair", np.arange(1, n + 1)),
            "outer_depth_error": (
                "pair",
                err,
                {"units": "m", "long_name": "outer-beam depth error between neighbouring casts"},
            ),
            "limit": (
                "pair",
                np.full(n, limit),
                {"units": "m", "long_name": "fraction of the TVU at 95 %"},
            ),
            "exceeds": ("pair", err > limit),
        },
        attrs=attrs,
    )
