"""Processing steps: from a raw Cast to a binned Profile.

Each step takes a Dataset and returns a new one (the input is never modified) and records
itself in ``processing_steps`` / ``history`` with :func:`seaprofile._cf.record_step`.

Processing selects, quality control flags
-----------------------------------------
Steps that *select* the part of the record to work with -- :func:`remove_soak`,
:func:`select_direction`, :func:`remove_reversals` -- return a Cast holding only the
selected samples, and record how many samples they left out (and which, for the soak and
direction). The original Cast, which the caller keeps, still holds every sample. Steps that
*judge* values -- :func:`despike` and everything in :mod:`seaprofile.casts.qc` -- never
remove anything: they raise ``<var>_qc`` flags, and :func:`bin_cast` leaves values flagged
3 (probably bad), 4 (bad) or 9 (missing) out of the bin averages.
"""

from __future__ import annotations

import numba
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ..seawater.depth import METHODS as DEPTH_METHODS
from ..seawater.depth import depth_from_pressure, pressure_from_depth
from ..seawater.soundspeed import EQUATIONS, sound_speed
from ..seawater.state import salinity_from_conductivity
from .qc import raise_flags, worst_flag

__all__ = [
    "remove_soak",
    "select_direction",
    "remove_reversals",
    "add_salinity",
    "despike",
    "add_depth",
    "bin_cast",
    "fill_gaps",
    "add_sound_speed",
    "DESPIKE_FLOOR",
]

_EXCLUDED = (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING)
#: smallest deviation from the running median that :func:`despike` calls a spike, in the
#: variable's units (chosen here to stay above sensor resolution and turbulent noise)
DESPIKE_FLOOR = {
    "temperature": 0.05,
    "salinity": 0.02,
    "conductivity": 0.05,
    "measured_sound_speed": 0.2,
}
_BINNED = ("pressure", "depth", "temperature", "salinity", "measured_sound_speed")


# --- helpers ---------------------------------------------------------------------------
def _require_cast(cast, name="cast"):
    if not isinstance(cast, xr.Dataset) or "sample" not in cast.dims:
        raise SeaprofileError(f"{name} must be a Cast (xarray.Dataset with dimension 'sample')")


def _vertical(cast):
    """(name, values) of the vertical coordinate: pressure (dbar), else depth (m)."""
    for name in ("pressure", "depth"):
        if name in cast.data_vars:
            return name, cast[name].values.astype(np.float64)
    raise SeaprofileError("cast has neither pressure nor depth")


def _select(cast, keep, step, **params):
    out = cast.isel(sample=np.asarray(keep))
    out.attrs = _cf.record_step(cast.attrs, step, **params)
    return out


def _turn(values):
    """Index of the deepest finite sample (the end of the descent)."""
    if not np.isfinite(values).any():
        raise SeaprofileError("cast has no finite pressure or depth")
    return int(np.nanargmax(values))


# --- selection -------------------------------------------------------------------------
def remove_soak(cast, *, max_soak_pressure=20.0, min_rise=2.0):
    """Leave out the surface soak: the samples before the final descent begins.

    Operators often hold the probe a few metres down to let its sensors settle, bring it
    back towards the surface and then start the descent. The descent is taken to start
    at the shallowest sample after the last time, shallower than ``max_soak_pressure``,
    that the probe rose by more than ``min_rise`` (that is, the last sample deeper by more
    than ``min_rise`` than some later sample before the deepest point). With no such rise
    (no soak, or a soak not followed by a rise) it starts at the shallowest sample before
    the deepest point. A soak the probe did not rise from is left in the Cast; the dwell
    it leaves is removed by :func:`remove_reversals`.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    max_soak_pressure : float
        dbar (m for a Cast with depth only); rises deeper than this are heave, not soak.
    min_rise : float
        dbar (or m); smaller rises are heave or sensor noise.

    Returns
    -------
    xarray.Dataset
        The Cast from the start of the descent on; the step records ``removed_samples`` and
        ``first_kept_sample`` (0-based index in the input).
    """
    _require_cast(cast)
    _, v = _vertical(cast)
    turn = _turn(v)
    head = v[: turn + 1]
    # shallowest pressure of the rest of the descent, seen from each sample
    rest_min = np.fmin.accumulate(np.where(np.isfinite(head), head, np.inf)[::-1])[::-1]
    with np.errstate(invalid="ignore"):
        rose = (head <= max_soak_pressure) & (head > rest_min + min_rise)
    risen = np.flatnonzero(rose)
    first = int(risen[-1]) + 1 if risen.size else 0
    segment = np.where(np.isfinite(head[first:]), head[first:], np.inf)
    start = first + int(np.argmin(segment))
    return _select(
        cast,
        slice(start, None),
        "remove_soak",
        max_soak_pressure=max_soak_pressure,
        min_rise=min_rise,
        removed_samples=start,
        first_kept_sample=start,
    )


def select_direction(cast, direction="down"):
    """Keep the descent, the ascent or both.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    direction : {"down", "up", "both"}
        ``"down"``: samples up to and including the deepest one; ``"up"``: from the deepest
        one on; ``"both"``: everything.

    Returns
    -------
    xarray.Dataset
        The selected samples, with attribute ``cast_direction``; the step records
        ``removed_samples``.
    """
    _require_cast(cast)
    if direction not in ("down", "up", "both"):
        raise SeaprofileError(f"direction must be 'down', 'up' or 'both', got {direction!r}")
    _, v = _vertical(cast)
    turn = _turn(v)
    n = v.size
    keep = {"down": slice(0, turn + 1), "up": slice(turn, n), "both": slice(0, n)}[direction]
    kept = len(range(*keep.indices(n)))
    out = _select(cast, keep, "select_direction", direction=direction,
                  removed_samples=n - kept)
    out.attrs["cast_direction"] = direction
    return out


def _exceeds_running_max(q):
    prev = np.fmax.accumulate(np.concatenate(([-np.inf], q[:-1])))
    with np.errstate(invalid="ignore"):
        return np.isfinite(q) & (q > prev)


def _rate(v, t, window):
    """Rate of change of ``v`` (per s) over about ``window`` seconds, centred."""
    n = v.size
    dt = np.diff(t)
    dt = dt[np.isfinite(dt) & (dt > 0)]
    if dt.size == 0:
        return np.full(n, np.nan)
    half = max(1, int(round(0.5 * window / np.median(dt))))
    i = np.arange(n)
    lo, hi = np.clip(i - half, 0, n - 1), np.clip(i + half, 0, n - 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return (v[hi] - v[lo]) / (t[hi] - t[lo])


def remove_reversals(cast, min_descent_rate=0.25, *, rate_window=1.0):
    """Leave out samples taken while the probe went back up or stalled (ship heave).

    A sample is kept when its pressure exceeds every earlier pressure of the descent (for
    an upcast: is below every earlier one). When the Cast has ``elapsed_time`` and
    ``min_descent_rate`` is not None, samples where the descent rate (over about
    ``rate_window`` seconds) is below ``min_descent_rate`` are left out too: water dragged
    along by a slowed probe spoils them.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified). Its ``cast_direction`` attribute (from
        :func:`select_direction`; default ``"down"``) sets the expected direction; for
        ``"both"`` the descent is checked up to the deepest sample and the ascent after it.
    min_descent_rate : float or None
        dbar/s (about m/s); default 0.25 (common practice, no source). None: pressure rule
        only.
    rate_window : float
        s, the span over which the rate is measured.

    Returns
    -------
    xarray.Dataset
        The kept samples; the step records ``removed_samples`` and ``slow_samples``.
    """
    _require_cast(cast)
    _, v = _vertical(cast)
    direction = cast.attrs.get("cast_direction", "down")
    n = v.size
    sign = np.full(n, -1.0 if direction == "up" else 1.0)
    if direction == "both":
        turn = _turn(v)
        sign[turn + 1:] = -1.0
        keep = np.zeros(n, bool)
        keep[: turn + 1] = _exceeds_running_max(v[: turn + 1])
        keep[turn + 1:] = _exceeds_running_max(-v[turn + 1:]) & (v[turn + 1:] < v[turn])
    else:
        keep = _exceeds_running_max(sign * v)
    slow = np.zeros(n, bool)
    if min_descent_rate is not None and "elapsed_time" in cast.data_vars:
        rate = sign * _rate(v, cast["elapsed_time"].values.astype(np.float64), rate_window)
        with np.errstate(invalid="ignore"):
            slow = keep & (rate < min_descent_rate)
        keep &= ~slow
    return _select(cast, np.flatnonzero(keep), "remove_reversals",
                   min_descent_rate=min_descent_rate, removed_samples=int(n - keep.sum()),
                   slow_samples=int(slow.sum()))


# --- derived variables -----------------------------------------------------------------
def _with(ds, dim, name, values, flags, **extra):
    out = ds.copy()
    out[name] = ((dim,), np.asarray(values, np.float64),
                 _cf.attrs_for(name, ancillary_variables=f"{name}_qc", **extra))
    out[f"{name}_qc"] = ((dim,), np.asarray(flags, np.int8), _cf.flag_attrs(name))
    return out


def add_salinity(cast):
    """Practical salinity from conductivity, temperature and pressure (PSS-78, via gsw).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``conductivity`` (mS/cm), ``temperature`` (degC) and ``pressure`` (dbar).

    Returns
    -------
    xarray.Dataset
        A new Cast with ``salinity``; its flags are the worst of the three inputs' flags.
        A Cast that already has salinity is returned unchanged.
    """
    _require_cast(cast)
    if "salinity" in cast.data_vars:
        return cast.copy()
    for v in ("conductivity", "temperature", "pressure"):
        if v not in cast.data_vars:
            raise SeaprofileError(f"cast needs {v} to compute salinity from conductivity")
    s = salinity_from_conductivity(cast["conductivity"].values, cast["temperature"].values,
                                   cast["pressure"].values)
    flags = worst_flag(cast["conductivity_qc"].values, cast["temperature_qc"].values,
                       cast["pressure_qc"].values)
    out = _with(cast, "sample", "salinity", s, flags,
                comment="computed from conductivity, temperature and pressure (PSS-78)")
    out.attrs = _cf.record_step(cast.attrs, "add_salinity", method="PSS-78 (gsw.SP_from_C)")
    return out


def add_depth(cast, latitude=None, method="unesco1983"):
    """Depth from pressure (or, for a Cast with depth only, pressure from depth).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    latitude : float, optional
        Degrees north; default the Cast's ``latitude`` coordinate.
    method : str
        A key of :data:`seaprofile.seawater.depth.METHODS` (default ``"unesco1983"``).

    Returns
    -------
    xarray.Dataset
        A new Cast with both ``depth`` (m) and ``pressure`` (dbar), attributes
        ``depth_method`` and ``depth_latitude``. Depth is always recomputed from a measured
        pressure so that one method holds for the whole Cast. The derived variable takes
        the flags of the one it came from.

    Raises
    ------
    SeaprofileError
        When no latitude is given and the Cast's latitude is unknown (NaN): no default is
        assumed, since depth and pressure differ by up to ~0.5 % with latitude.
    """
    _require_cast(cast)
    if method not in DEPTH_METHODS:
        raise SeaprofileError(
            f"method {method!r} is unknown; choose one of {', '.join(DEPTH_METHODS)}")
    lat = _latitude(cast, latitude)
    if "pressure" in cast.data_vars:
        z = depth_from_pressure(cast["pressure"].values, lat, method)
        out = _with(cast, "sample", "depth", z, cast["pressure_qc"].values,
                    comment=f"from pressure, method {method}")
        src = "pressure"
    elif "depth" in cast.data_vars:
        p = pressure_from_depth(cast["depth"].values, lat, method)
        out = _with(cast, "sample", "pressure", p, cast["depth_qc"].values,
                    comment=f"from depth, method {method}")
        src = "depth"
    else:
        raise SeaprofileError("cast has neither pressure nor depth")
    out.attrs = _cf.record_step(cast.attrs, "add_depth", method=method, latitude=lat,
                                computed_from=src)
    out.attrs.update(depth_method=method, depth_latitude=lat)
    return out


def _latitude(ds, latitude):
    if latitude is None:
        latitude = float(ds["latitude"]) if "latitude" in ds.coords else np.nan
    lat = float(latitude)
    if not np.isfinite(lat):
        raise SeaprofileError(
            "latitude is unknown: the cast has no position; give latitude (degrees north)"
        )
    if abs(lat) > 90.0:
        raise SeaprofileError(f"latitude must lie within -90..90 degrees, got {lat:g}")
    return lat


# --- despiking -------------------------------------------------------------------------
@numba.njit(cache=True)
def _running_median(x, half):
    """Median of the finite values of x[i-half : i+half+1] for every i (NaN if none).

    The window is kept sorted as it slides: one value leaves, one enters.
    """
    n = x.size
    out = np.full(n, np.nan)
    buf = np.empty(2 * half + 1)
    m = 0
    for j in range(-half, n):
        enter = j + half  # the sample entering the window of sample j
        if enter < n and np.isfinite(x[enter]):
            v = x[enter]
            k = m
            while k > 0 and buf[k - 1] > v:
                buf[k] = buf[k - 1]
                k -= 1
            buf[k] = v
            m += 1
        if j < 0:
            continue
        if m > 0:
            out[j] = buf[m // 2] if m % 2 == 1 else 0.5 * (buf[m // 2 - 1] + buf[m // 2])
        leave = j - half  # the sample leaving before the window of sample j + 1
        if leave >= 0 and np.isfinite(x[leave]):
            v = x[leave]
            k = 0
            while buf[k] != v:
                k += 1
            for q in range(k, m - 1):
                buf[q] = buf[q + 1]
            m -= 1
    return out


def despike(cast, variables=None, window=15, threshold=5.0, floor=None):
    """Flag spikes as bad (4) with a running median and median absolute deviation.

    Residual ``r = x - median(x)`` over a centred window of ``window`` samples; the
    scale is the running median of ``|r|`` times 1.4826 (the MAD of a normal
    distribution). A value is a spike when ``|r| > max(threshold * scale, floor)``.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified); values already flagged 3, 4 or 9 are ignored.
    variables : sequence of str, optional
        Default: temperature, salinity, conductivity and measured sound speed (those present).
    window : int
        Samples in the running window (odd; at least 3).
    threshold : float
        Robust standard deviations (dimensionless).
    floor : dict, optional
        ``{variable: smallest spike}`` in the variable's units; default
        :data:`DESPIKE_FLOOR`.

    Returns
    -------
    xarray.Dataset
        A new Cast with raised flags (nothing deleted); the step records the counts.

    Notes
    -----
    The running median follows steps and gradients (it is edge-preserving), so the
    residual and its scale stay small in a thermocline; the MAD is the robust scale
    estimate of Hampel (1974), J. Am. Stat. Assoc. 69, 383-393.
    """
    _require_cast(cast)
    window = int(window)
    if window < 3:
        raise SeaprofileError(f"window must be at least 3 samples, got {window}")
    half = window // 2
    floor = DESPIKE_FLOOR if floor is None else {**DESPIKE_FLOOR, **floor}
    if variables is None:
        variables = [v for v in DESPIKE_FLOOR if v in cast.data_vars]
    out = cast.copy()
    counts = {}
    for var in variables:
        if var not in cast.data_vars:
            raise SeaprofileError(f"variables: {var!r} is not in the cast")
        x = cast[var].values.astype(np.float64)
        flags = cast[f"{var}_qc"].values
        xv = np.where(np.isin(flags, _EXCLUDED), np.nan, x)
        r = xv - _running_median(xv, half)
        scale = 1.4826 * _running_median(np.abs(r), half)
        limit = np.maximum(threshold * scale, floor.get(var, 0.0))
        with np.errstate(invalid="ignore"):
            hit = np.abs(r) > limit
        counts[var] = int(hit.sum())
        out.variables[f"{var}_qc"].data = raise_flags(flags, np.where(hit, _cf.BAD, 0))
    out.attrs = _cf.record_step(cast.attrs, "despike", window=window, threshold=threshold,
                                flagged=counts)
    return out


# --- binning ---------------------------------------------------------------------------
def bin_cast(cast, step=1.0, axis="depth", *, latitude=None, depth_method=None):
    """Average a Cast into regular bins: the Profile.

    Bin ``k`` holds the samples with ``(k - 1/2) step <= x < (k + 1/2) step`` on the chosen
    axis and is centred at ``k step``. Samples whose axis value is missing or flagged
    3, 4 or 9 are not placed in any bin (nor those above ``-step/2``, i.e. out of the water).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``depth`` (see :func:`add_depth`), not modified.
    step : float
        Bin size, m for ``axis="depth"``, dbar for ``axis="pressure"``.
    axis : {"depth", "pressure"}
        The variable to bin on.
    latitude : float, optional
        Degrees north, to convert bin centres between depth and pressure; default the
        Cast's ``depth_latitude`` attribute (set by :func:`add_depth`) or position.
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
    _require_cast(cast)
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
    lat = _latitude(cast, lat)

    x = cast[axis].values.astype(np.float64)
    xflag = cast[f"{axis}_qc"].values
    with np.errstate(invalid="ignore"):
        placed = np.isfinite(x) & ~np.isin(xflag, _EXCLUDED) & (x >= -0.5 * step)
    if not placed.any():
        raise SeaprofileError(f"cast has no usable {axis} samples to bin")
    k = np.zeros(x.size, np.int64)
    k[placed] = np.floor(x[placed] / step + 0.5).astype(np.int64)
    kmin = int(k[placed].min())
    nb = int(k[placed].max()) - kmin + 1
    idx = k - kmin
    counts = np.bincount(idx[placed], minlength=nb)
    centres = (kmin + np.arange(nb)) * step

    dim = ("depth",)
    data = {}
    for var in [v for v in _BINNED if v in cast.data_vars and v not in (axis, other)]:
        vals = cast[var].values.astype(np.float64)
        fl = cast[f"{var}_qc"].values
        use = placed & np.isfinite(vals) & ~np.isin(fl, _EXCLUDED)
        n = np.bincount(idx[use], minlength=nb)
        total = np.bincount(idx[use], weights=vals[use], minlength=nb)
        with np.errstate(invalid="ignore", divide="ignore"):
            mean = np.where(n > 0, total / n, np.nan)
        bflag = np.zeros(nb, np.int8)
        np.maximum.at(bflag, idx[use], fl[use].astype(np.int8))
        bflag[n == 0] = _cf.MISSING
        data[var] = (dim, mean, _cf.attrs_for(var, ancillary_variables=f"{var}_qc"))
        data[f"{var}_qc"] = (dim, bflag, _cf.flag_attrs(var))
    axis_flag = np.zeros(nb, np.int8)
    np.maximum.at(axis_flag, idx[placed], xflag[placed].astype(np.int8))
    axis_flag[counts == 0] = _cf.ESTIMATED
    if axis == "depth":
        depth = centres
        p = np.asarray(pressure_from_depth(centres, lat, method), np.float64)
        data["pressure"] = (dim, p, _cf.attrs_for(
            "pressure", ancillary_variables="pressure_qc",
            comment=f"at the bin-centre depth, method {method}"))
        data["pressure_qc"] = (dim, axis_flag, _cf.flag_attrs("pressure"))
    else:
        depth = np.asarray(depth_from_pressure(centres, lat, method), np.float64)
        data["pressure"] = (dim, centres, _cf.attrs_for(
            "pressure", ancillary_variables="pressure_qc", comment="pressure-bin centre"))
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
    if "depth" not in profile.dims:
        raise SeaprofileError("profile must be a Profile (dimension 'depth')")
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
    if "depth" not in profile.dims:
        raise SeaprofileError("profile must be a Profile (dimension 'depth')")
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
    out = _with(out, "depth", "sound_speed", c, flags,
                comment=f"computed with equation {equation}")
    out.attrs = _cf.record_step(profile.attrs, "add_sound_speed", equation=equation)
    out.attrs["equation"] = equation
    return out


def _equation_sound_speed(ds, equation, t, s, p, z):
    """Sound speed by ``equation`` from numpy arrays, with the position when it is used."""
    eq = EQUATIONS[equation]
    lat = float(ds["latitude"]) if "latitude" in ds.coords else np.nan
    lon = float(ds["longitude"]) if "longitude" in ds.coords else np.nan
    kw = {"pressure": p} if eq.needs == "pressure" else {"depth": z}
    if eq.needs_latitude:
        kw["latitude"] = _latitude(ds, ds.attrs.get("depth_latitude", None))
    elif eq.uses_position and np.isfinite(lat) and np.isfinite(lon):
        kw.update(latitude=lat, longitude=lon)
    return np.asarray(sound_speed(t, s, equation=equation, **kw), np.float64)
