"""Constructors for the Cast and Profile Datasets (layout in DEVELOPERS.md, "The data model").

Readers, tests and the demo all build their Datasets here so that every Cast has the same
variables, CF attributes, flags and provenance.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ._fastds import dataset as _dataset
from .columns import checked_time

MEASURED = (
    "pressure",
    "depth",
    "temperature",
    "salinity",
    "conductivity",
    "measured_sound_speed",
    "elapsed_time",
)
INSTRUMENTS = ("ctd", "xbt", "svp")


def make_cast(
    *,
    pressure=None,
    depth=None,
    temperature=None,
    salinity=None,
    conductivity=None,
    measured_sound_speed=None,
    elapsed_time=None,
    latitude=np.nan,
    longitude=np.nan,
    time=None,
    instrument="ctd",
    cast_name="cast",
    vessel="",
    source_file="",
    **attrs,
):
    """Build a Cast Dataset from 1-D arrays (all of one length, along dimension ``sample``).

    Parameters
    ----------
    pressure : array_like, optional
        Sea pressure, dbar.
    depth : array_like, optional
        Depth, m, positive down.
    temperature : array_like, optional
        In-situ temperature, degC (ITS-90).
    salinity : array_like, optional
        Practical salinity (PSS-78), dimensionless.
    conductivity : array_like, optional
        Electrical conductivity, mS/cm.
    measured_sound_speed : array_like, optional
        Sound speed measured by a probe, m/s.
    elapsed_time : array_like, optional
        Time since the probe entered the water, s.
    latitude, longitude : float
        Position of the cast, degrees north / east (NaN when unknown).
    time : str or numpy.datetime64, optional
        Time of the cast (UTC), within 1678-09-22..2262-04-11 (numpy datetime64[ns]; a
        time outside it is refused, never wrapped to another date).
    instrument : {"ctd", "xbt", "svp"}
        Instrument kind.
    cast_name, vessel, source_file : str
        Metadata kept as attributes.
    **attrs
        Further global attributes (strings or numbers).

    Returns
    -------
    xarray.Dataset
        The Cast, with ``<var>_qc`` flags set to 0 (no QC performed).
    """
    given = {
        "pressure": pressure,
        "depth": depth,
        "temperature": temperature,
        "salinity": salinity,
        "conductivity": conductivity,
        "measured_sound_speed": measured_sound_speed,
        "elapsed_time": elapsed_time,
    }
    return _build_cast(
        given,
        latitude=latitude,
        longitude=longitude,
        time=time,
        instrument=instrument,
        cast_name=cast_name,
        vessel=vessel,
        source_file=source_file,
        attrs=attrs,
    )


def _build_cast(
    given,
    *,
    flags=None,
    latitude,
    longitude,
    time,
    instrument,
    cast_name,
    vessel,
    source_file,
    attrs,
):
    """The work of :func:`make_cast` (``given``: its measured arguments, in its order).

    ``flags`` (the readers): variable -> the Argo flags read with it; every variable then
    gets them (0 where none were read) with its NaN values flagged 9 (missing).
    """
    given = {k: v for k, v in given.items() if v is not None}
    if not given:
        raise SeaprofileError("a cast needs at least one measured variable")
    if instrument not in INSTRUMENTS:
        raise SeaprofileError(f"instrument must be one of {INSTRUMENTS}, got {instrument!r}")
    n = None
    data_vars = {}
    for name, values in given.items():
        arr = np.array(values, dtype=np.float64, copy=True)
        if arr.ndim != 1:
            raise SeaprofileError(f"{name} must be 1-D, got shape {arr.shape}")
        if n is None:
            n = arr.size
        elif arr.size != n:
            raise SeaprofileError(f"{name} has {arr.size} samples, expected {n}")
        data_vars[name] = xr.Variable(
            "sample", arr, _cf.attrs_for(name, ancillary_variables=f"{name}_qc")
        )
        data_vars[f"{name}_qc"] = xr.Variable("sample", np.zeros(n, np.int8), _cf.flag_attrs(name))
    t = checked_time(time)
    if flags is not None:
        for name in given:
            qc = flags.get(name, np.zeros(n, np.int8))
            missing = ~np.isfinite(data_vars[name].values)
            data_vars[f"{name}_qc"].values[...] = np.where(missing, _cf.MISSING, qc)
    coords = {
        "latitude": xr.Variable((), float(latitude), _cf.attrs_for("latitude")),
        "longitude": xr.Variable((), float(longitude), _cf.attrs_for("longitude")),
        "time": _time_variable(t, _cf.attrs_for("time")),
        "profile_id": xr.Variable((), str(cast_name), _cf.attrs_for("profile_id")),
    }
    global_attrs = _cf.base_attrs(
        featureType="profile",
        instrument=instrument,
        cast_name=str(cast_name),
        vessel=str(vessel),
        source_file=str(source_file),
        title=f"{instrument.upper()} cast {cast_name}",
    )
    global_attrs.update(attrs)
    return _dataset(data_vars, coords, global_attrs)


def _time_variable(t, attrs):
    """A scalar time Variable; a datetime64[ns] value is taken as it is (xarray would only
    round-trip it through pandas to the same value)."""
    t = np.asarray(t)
    if t.dtype == np.dtype("datetime64[ns]") and t.ndim == 0:
        return xr.Variable((), t, attrs, fastpath=True)
    return xr.Variable((), t, attrs)


def measured_variables(cast):
    """Names of the measured variables present in a Cast, in a fixed order."""
    return [v for v in MEASURED if v in cast.data_vars]
