"""Binning a Cast into a Profile, filling short gaps, and the Profile's sound speed.

:func:`bin_cast` averages the usable samples of a Cast into regular depth (or pressure)
bins -- the Profile; :func:`fill_gaps` interpolates across short runs of empty bins
(flagged 8, estimated); :func:`add_sound_speed` adds sound speed, computed by a published
equation or taken from a sound-speed probe. All three are also importable from
:mod:`seaprofile.casts.process`, the steps that come before them. Inputs are never
modified; each step records itself with :func:`seaprofile._cf.record_step`.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ..seawater.depth import depth_from_pressure, pressure_from_depth
from ..seawater.soundspeed import EQUATIONS, sound_speed
from ._common import (
    EXCLUDED,
    cast_latitude,
    position,
    require_cast,
    require_profile,
    with_variable,
)
from .flags import worst_flag

__all__ = ["bin_cast", "fill_gaps", "add_sound_speed"]

#: variables a Cast may hold that :func:`bin_cast` averages (or converts, for the axis pair)
_BINNED = ("pressure", "depth", "temperature", "salinity", "measured_sound_speed")


def bin_cast(cast, step=1.0, axis="depth", *, latitude=None, depth_method=None):
    """Average a Cast into regular bins: the Profile.

    Bin ``k`` holds the samples with ``(k - 1/2) step <= x < (k + 1/2) step`` on the chosen
    axis and is centred at ``k step``. Samples whose axis value is missing or flagged
    3, 4 or 9 are not placed in any bin (nor those above ``-step/2``, i.e. out of the water).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``depth`` (see :func:`~seaprofile.casts.process.add_depth`), not
        modified.
    step : float
        Bin size, m for ``axis="depth"``, dbar for ``axis="pressure"``.
    axis : {"depth", "pressure"}
        The variable to bin on.
    latitude : float, optional
        Degrees north, to convert bin centres between depth and pressure; default the
        Cast's ``depth_latitude`` attribute (set by
        :func:`~seaprofile.casts.process.add_depth`) or position.
    depth_method : str, optional
        Default the Cast's ``depth_method`` attribute, else ``"unesco1983"``.

    Returns
    -------
    xarray.Dataset
        A Profile on dimension ``depth`` (bin centres, m; for ``axis="pressure"`` the depths
        of the pressure-bin centres), from the shallowest to the deepest occupied bin:

        - each measured variable: the mean of its usable samples in the bin (flags 0, 1, 2,
          5 or 8 -- values flagged 3, 4 or 9 are left out);
        - ``<var>_qc``: the highest flag among the samples averaged (with only usable flags
          present this is the least trustworthy of them); 9 and NaN where a bin has no
          usable sample;
        - the variable paired with the axis (pressure for depth bins, and the reverse) is
          converted from the bin centre, flagged like the axis samples in the bin and 8
          (estimated) in empty bins;
        - ``samples_per_bin``: the samples placed in the bin;
        - attributes ``bin_size``, ``bin_axis``, ``depth_method``, ``cast_max_depth``.
    """
    require_cast(cast)
    if axis not in ("depth", "pressure"):
        raise SeaprofileError(f"axis must be 'depth' or 'pressure', got {axis!r}")
    step = float(step)
    if not step > 0:
        raise SeaprofileError(f"step must be a positive bin size, got {step}")
    other = "pressure" if axis == "depth" else "depth"
    for v in (axis, other):
        if v not in cast.data_vars:
            raise SeaprofileError(f"cast has no {v}: run add_depth(cast, latitude=...) first")
    method = depth_method or cast.attrs.get("depth_method", "unesco1983")
    lat = latitude if latitude is not None else cast.attrs.get("depth_latitude", None)
    lat = cast_latitude(cast, lat)

    x = cast[axis].values.astype(np.float64)
    xflag = cast[f"{axis}_qc"].values
    placed, idx, centres = _bin_numbers(x, xflag, step, axis)
    nb = centres.size
    counts = np.bincount(idx[placed], minlength=nb)

    dim = ("depth",)
    data = {}
    for var in [v for v in _BINNED if v in cast.data_vars and v not in (axis, other)]:
        mean, bflag = _bin_means(cast, var, placed, idx, nb)
        data[var] = (dim, mean, _cf.attrs_for(var, ancillary_variables=f"{var}_qc"))
        data[f"{var}_qc"] = (dim, bflag, _cf.flag_attrs(var))
    # the axis pair: converted from the bin centres, flagged like the axis samples
    axis_flag = _highest_flag(idx, placed, xflag, nb)
    axis_flag[counts == 0] = _cf.ESTIMATED
    if axis == "depth":
        depth = centres
        pressure = np.asarray(pressure_from_depth(centres, lat, method), np.float64)
        comment = f"at the bin-centre depth, method {method}"
    else:
        depth = np.asarray(depth_from_pressure(centres, lat, method), np.float64)
        pressure = centres
        comment = "pressure-bin centre"
    data["pressure"] = (dim, pressure, _cf.attrs_for(
        "pressure", ancillary_variables="pressure_qc", comment=comment))
    data["pressure_qc"] = (dim, axis_flag, _cf.flag_attrs("pressure"))
    data["samples_per_bin"] = (dim, counts.astype(np.int32), _cf.attrs_for("samples_per_bin"))

    coords = {"depth": ("depth", depth, _cf.attrs_for("depth"))}
    for c in ("latitude", "longitude", "time", "profile_id"):
        if c in cast.coords:
            coords[c] = cast.coords[c].variable
    attrs = {k: v for k, v in cast.attrs.items() if k not in ("cast_direction",)}
    attrs.update(bin_size=step, bin_axis=axis, depth_method=method,
                 cast_max_depth=float(depth[-1]))
    attrs = _cf.record_step(attrs, "bin_cast", bin_size=step, axis=axis, bins=nb,
                            samples_binned=int(counts.sum()))
    return xr.Dataset(data, coords=coords, attrs=attrs)


def _bin_numbers(x, flags, step, axis):
    """Which samples go into a bin, the bin (from 0) of each, and the bin centres.

    A sample is placed when its axis value ``x`` is finite, not flagged 3, 4 or 9 and not
    above ``-step/2``; bin ``k`` is centred at ``k step``. Returns ``(placed, index,
    centres)`` covering the shallowest to the deepest occupied bin.
    """
    with np.errstate(invalid="ignore"):
        placed = np.isfinite(x) & ~np.isin(flags, EXCLUDED) & (x >= -0.5 * step)
    if not placed.any():
        raise SeaprofileError(f"cast has no usable {axis} samples to bin")
    k = np.zeros(x.size, np.int64)
    k[placed] = np.floor(x[placed] / step + 0.5).astype(np.int64)
    kmin = int(k[placed].min())
    nb = int(k[placed].max()) - kmin + 1
    return placed, k - kmin, (kmin + np.arange(nb)) * step


def _highest_flag(idx, use, flags, nb):
    """The highest of the flags ``flags[use]`` in each of ``nb`` bins (0 where none)."""
    out = np.zeros(nb, np.int8)
    np.maximum.at(out, idx[use], flags[use].astype(np.int8))
    return out


def _bin_means(cast, var, placed, idx, nb):
    """Mean of the usable samples of ``var`` in each bin, and the bin flags (9 if none)."""
    vals = cast[var].values.astype(np.float64)
    fl = cast[f"{var}_qc"].values
    use = placed & np.isfinite(vals) & ~np.isin(fl, EXCLUDED)
    n = np.bincount(idx[use], minlength=nb)
    total = np.bincount(idx[use], weights=vals[use], minlength=nb)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(n > 0, total / n, np.nan)
    bflag = _highest_flag(idx, use, fl, nb)
    bflag[n == 0] = _cf.MISSING
    return mean, bflag


def _profile_vars(profile):
    return [v for v in ("temperature", "salinity", "pressure", "measured_sound_speed",
                        "sound_speed") if v in profile.data_vars]


def fill_gaps(profile, max_gap=5.0):
    """Interpolate linearly across short runs of empty bins, flagged 8 (estimated).

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (not modified).
    max_gap : float
        m: the largest gap filled, measured as the depth span of the missing bins
        (distance between the bins on either side, less one bin). Gaps at the top or bottom
        of the profile are not filled.

    Returns
    -------
    xarray.Dataset
        A new Profile; filled values are flagged 8 and keep ``samples_per_bin`` 0.
    """
    require_profile(profile)
    z = profile["depth"].values.astype(np.float64)
    step = float(np.median(np.diff(z))) if z.size > 1 else 0.0
    out = profile.copy()
    filled = {}
    for var in _profile_vars(profile):
        v = profile[var].values.astype(np.float64)
        good = np.isfinite(v)
        iv = np.flatnonzero(good)
        if iv.size < 2:
            filled[var] = 0
            continue
        j = np.flatnonzero(~good)
        j = j[(j > iv[0]) & (j < iv[-1])]
        pos = np.searchsorted(iv, j)
        span = z[iv[pos]] - z[iv[pos - 1]] - step
        j = j[span <= max_gap + 1e-9 * max(1.0, abs(max_gap))]
        new = v.copy()
        new[j] = np.interp(z[j], z[iv], v[iv])
        flags = profile[f"{var}_qc"].values.copy()
        flags[j] = _cf.ESTIMATED
        out.variables[var].data = new  # the copy's own Variables: the input is untouched
        out.variables[f"{var}_qc"].data = flags.astype(np.int8)
        filled[var] = int(j.size)
    out.attrs = _cf.record_step(profile.attrs, "fill_gaps", max_gap=max_gap, filled=filled)
    return out


def add_sound_speed(profile, equation="chen_millero1977", *, prefer_measured=True):
    """Sound speed of a Profile, computed by a published equation or measured.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (not modified) with temperature, salinity and pressure, or with
        ``measured_sound_speed``.
    equation : str
        A key of :data:`seaprofile.seawater.soundspeed.EQUATIONS`; the equation gets pressure
        or depth as it is written in, and latitude/longitude when it uses them.
    prefer_measured : bool
        When the Profile has ``measured_sound_speed`` (a sound-speed probe), use it as
        ``sound_speed`` and set ``equation="measured"``.

    Returns
    -------
    xarray.Dataset
        A new Profile with ``sound_speed`` (m/s) and ``sound_speed_qc`` (the worst of the
        temperature, salinity and pressure flags; 9 where the result is NaN) and the
        attribute ``equation``.
    """
    require_profile(profile)
    out = profile.copy()
    if prefer_measured and "measured_sound_speed" in profile.data_vars:
        out = out.rename({"measured_sound_speed": "sound_speed",
                          "measured_sound_speed_qc": "sound_speed_qc"})
        out["sound_speed"].attrs = _cf.attrs_for(
            "sound_speed", ancillary_variables="sound_speed_qc",
            comment="measured by a sound-speed probe")
        out["sound_speed_qc"].attrs = _cf.flag_attrs("sound_speed")
        out.attrs = _cf.record_step(profile.attrs, "add_sound_speed", equation="measured")
        out.attrs["equation"] = "measured"
        return out
    if equation not in EQUATIONS:
        raise SeaprofileError(
            f"equation {equation!r} is unknown; choose one of {', '.join(EQUATIONS)}")
    for v in ("temperature", "salinity", "pressure"):
        if v not in profile.data_vars:
            raise SeaprofileError(f"profile has no {v}, needed for equation {equation!r}")
    c = _equation_sound_speed(profile, equation, profile["temperature"].values,
                              profile["salinity"].values, profile["pressure"].values,
                              profile["depth"].values)
    flags = worst_flag(profile["temperature_qc"].values, profile["salinity_qc"].values,
                       profile["pressure_qc"].values)
    flags = np.where(np.isfinite(c), flags, _cf.MISSING).astype(np.int8)
    out = with_variable(out, "depth", "sound_speed", c, flags,
                        comment=f"computed with equation {equation}")
    out.attrs = _cf.record_step(profile.attrs, "add_sound_speed", equation=equation)
    out.attrs["equation"] = equation
    return out


def _equation_sound_speed(ds, equation, t, s, p, z):
    """Sound speed by ``equation`` from numpy arrays, with the position when it is used."""
    eq = EQUATIONS[equation]
    lat, lon = position(ds)
    kw = {"pressure": p} if eq.needs == "pressure" else {"depth": z}
    if eq.needs_latitude:
        kw["latitude"] = cast_latitude(ds, ds.attrs.get("depth_latitude", None))
    elif eq.uses_position and np.isfinite(lat) and np.isfinite(lon):
        kw.update(latitude=lat, longitude=lon)
    return np.asarray(sound_speed(t, s, equation=equation, **kw), np.float64)
