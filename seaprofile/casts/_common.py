"""Small helpers shared by the cast modules (process, binning, quality control).

Argument checks for Casts and Profiles, the vertical coordinate and position of a Cast, the
running-maximum rule behind both :func:`seaprofile.casts.process.remove_reversals` and the
``pressure_increasing`` QC test, and adding a variable with its flags to a Dataset.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ..io.errors import ArgumentError


def require_cast(cast, name="cast"):
    """Raise :class:`SeaprofileError` unless ``cast`` is a Cast (dimension ``sample``)."""
    if not isinstance(cast, xr.Dataset) or "sample" not in cast.dims:
        raise SeaprofileError(f"{name} must be a Cast (xarray.Dataset with dimension 'sample')")


def require_profile(profile):
    """Raise :class:`SeaprofileError` unless ``profile`` has the dimension ``depth``."""
    if "depth" not in profile.dims:
        raise SeaprofileError("profile must be a Profile (dimension 'depth')")


def vertical(cast):
    """(name, values) of the vertical coordinate: pressure (dbar), else depth (m)."""
    for name in ("pressure", "depth"):
        if name in cast.data_vars:
            return name, cast.variables[name].values.astype(np.float64)
    raise SeaprofileError("cast has neither pressure nor depth")


def scalar_coordinate(ds, name):
    """The scalar coordinate ``name`` of a Cast or Profile as a float; NaN without it."""
    return float(ds.variables[name].values) if name in ds.coords else np.nan


def position(ds):
    """(latitude, longitude) in degrees of a Cast or Profile; NaN where not recorded."""
    return scalar_coordinate(ds, "latitude"), scalar_coordinate(ds, "longitude")


def cast_latitude(ds, latitude):
    """``latitude`` (degrees north), default the Dataset's own; it must be known.

    Raises
    ------
    seaprofile.io.ArgumentError
        Naming ``latitude`` when the latitude is unknown (NaN) or outside -90..90.
    """
    if latitude is None:
        latitude = scalar_coordinate(ds, "latitude")
    try:
        lat = float(latitude)
    except (TypeError, ValueError):
        raise ArgumentError("latitude", f"must be degrees north, got {latitude!r}") from None
    if not np.isfinite(lat):
        raise ArgumentError(
            "latitude", "unknown: the cast has no position; give the latitude (degrees north)"
        )
    if abs(lat) > 90.0:
        raise ArgumentError("latitude", f"must lie within -90..90 degrees, got {lat:g}")
    return lat


def usable_sound_speed(profile):
    """Where a Profile's sound speed may be used: finite and not flagged 3, 4 or 9
    (:func:`seaprofile._cf.usable` on ``sound_speed`` and ``sound_speed_qc``).

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile with ``sound_speed`` (m/s) and, optionally, ``sound_speed_qc``.

    Returns
    -------
    numpy.ndarray of bool
        One value per depth level.
    """
    c = np.asarray(profile.variables["sound_speed"].values, np.float64)
    f = (
        profile.variables["sound_speed_qc"].values
        if "sound_speed_qc" in profile
        else np.zeros(c.size, np.int8)
    )
    return _cf.usable(c, f)


def exceeds_earlier(q):
    """True where ``q`` is finite and greater than every earlier finite value of ``q``."""
    prev = np.fmax.accumulate(np.concatenate(([-np.inf], q[:-1])))
    with np.errstate(invalid="ignore"):
        return np.isfinite(q) & (q > prev)


def with_variable(ds, dim, name, values, flags, **extra):
    """A copy of ``ds`` with variable ``name`` (CF attributes, ``extra`` added to them) and
    its flags ``<name>_qc`` along ``dim``."""
    return ds.assign(
        {
            name: (
                (dim,),
                np.asarray(values, np.float64),
                _cf.attrs_for(name, ancillary_variables=f"{name}_qc", **extra),
            ),
            f"{name}_qc": ((dim,), np.asarray(flags, np.int8), _cf.flag_attrs(name)),
        }
    )
