"""Binning a Cast into a Profile, filling short gaps, and the Profile's sound speed.

:func:`bin_cast` averages the usable samples of a Cast into regular depth (or pressure)
bins -- the Profile; :func:`fill_gaps` (in :mod:`seaprofile.casts.gaps`) interpolates
across short runs of empty bins (flagged 8, estimated); :func:`add_sound_speed` adds sound speed, computed by a published
equation or taken from a sound-speed probe. The steps before them are in
:mod:`seaprofile.casts.process`. Inputs are never modified; each step records itself with :func:`seaprofile._cf.record_step`.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError
from ..io.errors import ArgumentError, MemoryLimitError
from ..io.outputs import BYTES_PER_BIN, MEMORY_LIMIT, format_bytes
from ..seawater.depth import depth_from_pressure, pressure_from_depth
from ..seawater.soundspeed import EQUATIONS, sound_speed
from ._binning_kernels import _bin_numbers_kernel, _bin_stats, _isolated_in_order
from ._common import (
    cast_latitude,
    position,
    require_cast,
    require_profile,
)
from ._fastds import dataset, values, with_variables
from .flags import worst_flag
from .gaps import (  # fill_gaps and its settings: public here too
    AUTO_GAP_FLOOR,
    AUTO_GAP_SPACINGS,
    LARGE_GAP,
    LargeGapWarning,
    fill_gaps,
)

__all__ = [
    "bin_cast",
    "fill_gaps",
    "add_sound_speed",
    "LargeGapWarning",
    "AUTO_GAP_FLOOR",
    "AUTO_GAP_SPACINGS",
    "LARGE_GAP",
    "MAX_BINS",
    "check_bin_count",
    "check_step",
]

#: variables a Cast may hold that :func:`bin_cast` averages (or converts, for the axis pair)
_BINNED = ("pressure", "depth", "temperature", "salinity", "measured_sound_speed")


#: a sample farther than this many bins from the nearest usable sample on each side keeps
#: its own level instead of being binned (our choice: at least one empty bin on each side)
SPARSE_SPACING = 2.0

#: most bins one Profile may have: the one memory model of :mod:`seaprofile.io`
#: (:data:`~seaprofile.io.MEMORY_LIMIT` / :data:`~seaprofile.io.outputs.BYTES_PER_BIN`),
#: the same the command line checks before reading any cast
MAX_BINS = MEMORY_LIMIT // BYTES_PER_BIN


def check_bin_count(count, step, span, name="step", unit="m"):
    """Raise :class:`~seaprofile.io.MemoryLimitError` naming ``name`` when ``count`` bins
    would need more than :data:`~seaprofile.io.MEMORY_LIMIT` (:data:`MAX_BINS` bins).

    The estimate is :func:`seaprofile.io.profile_bytes` -- the one the command line uses
    up front -- so a bin size accepted there is accepted here. ``step`` and ``span`` are in
    ``unit`` (m for depth bins, dbar for pressure bins).
    """
    bins = float(count) if np.isfinite(count) else np.inf
    requested = bins * BYTES_PER_BIN
    if requested > MEMORY_LIMIT:
        raise MemoryLimitError(
            name,
            f"a bin size of {step:g} {unit} over {span:g} {unit} needs {bins:.3g} bins, "
            f"about {format_bytes(requested)}, more than the {format_bytes(MEMORY_LIMIT)} of "
            f"memory allowed (at most {MAX_BINS:,} bins); use a larger bin size",
            min(requested, 2.0**62),
            MEMORY_LIMIT,
        )


def check_step(step, name="step", unit="m"):
    """``step`` as a float, or :class:`~seaprofile.io.ArgumentError` naming ``name``
    unless it is a finite number > 0 (``unit``: m, or dbar for pressure bins)."""
    try:
        value = float(step)
    except (TypeError, ValueError):
        raise ArgumentError(name, f"must be a bin size in {unit}, got {step!r}") from None
    if not (np.isfinite(value) and value > 0):
        raise ArgumentError(name, f"must be a finite bin size > 0 {unit}, got {step!r}")
    return value


def bin_cast(
    cast,
    step=1.0,
    axis="depth",
    *,
    latitude=None,
    depth_method=None,
    sparse_spacing=SPARSE_SPACING,
    argument="step",
):
    """Average a Cast into regular bins where it is dense; keep its own levels where sparse.

    Bin ``k`` holds the samples with ``(k - 1/2) step <= x < (k + 1/2) step`` on the chosen
    axis and is centred at ``k step``. Samples whose axis value is missing or flagged
    3, 4 or 9 are not placed in any bin (nor those above ``-step/2``, i.e. out of the water).

    Binning applies where the data are denser than the bins. A usable sample whose
    nearest usable neighbours above *and* below are more than ``sparse_spacing`` bins away
    (at least one empty bin on each side: bottle stations, floats, archived low-resolution
    casts, planning nodes) is not moved to a bin centre: it keeps its own level -- its
    measured depth, pressure and values -- in the Profile. Between such levels the
    Profile still has the regular bin centres, empty here (NaN, flagged 9), for
    :func:`fill_gaps` to interpolate; empty bin centres within a tenth of a bin of a kept
    level are left out, and none lies above the shallowest or below the deepest level with
    data.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``depth`` (see :func:`~seaprofile.casts.process.add_depth`), not
        modified.
    step : float
        Bin size, m for ``axis="depth"``, dbar for ``axis="pressure"``: finite, > 0, and
        no more than :data:`MAX_BINS` bins over the cast.
    axis : {"depth", "pressure"}
        The variable to bin on.
    latitude : float, optional
        Degrees north, to convert bin centres between depth and pressure; default the
        Cast's ``depth_latitude`` attribute (set by
        :func:`~seaprofile.casts.process.add_depth`) or position.
    depth_method : str, optional
        Default the Cast's ``depth_method`` attribute, else ``"unesco1983"``.
    sparse_spacing : float
        Bins (dimensionless): the gap to the nearest usable sample on both sides beyond
        which a sample keeps its own level (default :data:`SPARSE_SPACING`, 2). ``inf``:
        bin everything.
    argument : str
        The name error messages give the bin size (``build_profile`` passes
        ``"bin_size"``).

    Returns
    -------
    xarray.Dataset
        A Profile on dimension ``depth`` (m, increasing; for ``axis="pressure"`` the depths
        of the pressure-bin centres):

        - each measured variable: the mean of its usable samples in the bin (flags 0, 1, 2,
          5 or 8 -- values flagged 3, 4 or 9 are left out), or the sample's own value at
          a kept level;
        - ``<var>_qc``: the highest flag among the samples averaged (with only usable flags
          present this is the least trustworthy of them); 9 and NaN where a bin has no
          usable sample;
        - the variable paired with the axis (pressure for depth bins, and the reverse) is
          converted from the bin centre, flagged like the axis samples in the bin and 8
          (estimated) in empty bins; a kept level has the sample's own pair and flags;
        - ``samples_per_bin``: the samples placed in the bin (1 at a kept level);
        - attributes ``bin_size``, ``bin_axis``, ``depth_method``, ``cast_max_depth`` (the
          deepest level with data). The step records the bins, the kept levels and
          ``left_out``: per variable, the samples placed at a depth whose value was not
          used (flagged 3, 4 or 9, or NaN) -- the flags and the quality-control summary
          say why.
    """
    require_cast(cast)
    if axis not in ("depth", "pressure"):
        raise SeaprofileError(f"axis must be 'depth' or 'pressure', got {axis!r}")
    unit = "m" if axis == "depth" else "dbar"
    step = check_step(step, argument, unit)
    other = "pressure" if axis == "depth" else "depth"
    for v in (axis, other):
        if v not in cast.data_vars:
            raise SeaprofileError(f"cast has no {v}: run add_depth(cast, latitude=...) first")
    method = depth_method or cast.attrs.get("depth_method", "unesco1983")
    lat = latitude if latitude is not None else cast.attrs.get("depth_latitude", None)
    no_pressure = axis == "depth" and not np.isfinite(values(cast, "pressure")).any()
    lat = None if no_pressure else cast_latitude(cast, lat)

    x = values(cast, axis).astype(np.float64)
    xflag = values(cast, f"{axis}_qc")
    placed, idx, centres = _bin_numbers(x, xflag, step, axis, argument, unit)
    levels = placed & _isolated(x, placed, float(sparse_spacing) * step)
    nl = int(levels.sum())
    binned = placed & ~levels
    nb = centres.size
    # the axis samples per bin, and their highest flag for the axis pair (8 if none)
    counts, _, axis_flag, _ = _bin_stats(
        idx, binned, placed, placed, x, xflag.astype(np.int8, copy=False), nb, _cf.ESTIMATED
    )

    variables = [v for v in _BINNED if v in cast.data_vars and v not in (axis, other)]
    rows = {}  # name -> (values, flags) on the bins, then the kept levels
    left_out = {}
    for var in variables:
        vals = values(cast, var).astype(np.float64)
        fl = values(cast, f"{var}_qc")
        ok = _cf.usable(vals, fl)
        _, mean, bflag, left = _bin_stats(
            idx, binned, placed, ok, vals, fl.astype(np.int8, copy=False), nb, _cf.MISSING
        )
        if nl:
            val, lfl = _level_values(vals, fl, levels)
            mean, bflag = np.concatenate([mean, val]), np.concatenate([bflag, lfl])
        rows[var] = (mean, bflag)
        left_out[var] = int(left)
    # the axis pair: converted from the bin centres, flagged like the axis samples
    with np.errstate(over="ignore", invalid="ignore"):
        if axis == "depth" and no_pressure:  # a speed-against-depth cast, no position
            depth = centres
            pressure = np.full(centres.size, np.nan)
            comment = "unknown: the cast gave depth and no position"
        elif axis == "depth":
            depth = centres
            pressure = np.asarray(pressure_from_depth(centres, lat, method), np.float64)
            comment = f"at the bin-centre depth, method {method}"
        else:
            depth = np.asarray(depth_from_pressure(centres, lat, method), np.float64)
            pressure = centres
            comment = "pressure-bin centre"
    depth = np.concatenate([depth, values(cast, "depth")[levels]])
    pressure = np.concatenate([pressure, values(cast, "pressure")[levels]])
    # the pressure column's flags: a kept level has the cast's own pressure_qc (on
    # either axis); a bin has its axis samples' flags (pressure bins: their pressure_qc;
    # depth bins: the depth_qc of the depths the pressure was converted from)
    pair_flag = np.concatenate([axis_flag, values(cast, "pressure_qc")[levels]])
    if no_pressure:
        pair_flag[:] = _cf.MISSING
    counts = np.concatenate([counts, np.ones(nl, np.int64)])
    position = np.concatenate([centres, x[levels]])
    order = _keep_rows(position, counts, nb, step)

    dim = ("depth",)
    data = {}
    for var, (val, fl) in rows.items():
        data[var] = xr.Variable(
            dim, val[order], _cf.attrs_for(var, ancillary_variables=f"{var}_qc")
        )
        data[f"{var}_qc"] = xr.Variable(dim, fl[order].astype(np.int8), _cf.flag_attrs(var))
    data["pressure"] = xr.Variable(
        dim,
        pressure[order],
        _cf.attrs_for(
            "pressure",
            ancillary_variables="pressure_qc",
            comment=comment + ("; the sample's own pressure at a kept level" if nl else ""),
        ),
    )
    data["pressure_qc"] = xr.Variable(
        dim, pair_flag[order].astype(np.int8), _cf.flag_attrs("pressure")
    )
    data["samples_per_bin"] = xr.Variable(
        dim, counts[order].astype(np.int32), _cf.attrs_for("samples_per_bin")
    )

    depth = depth[order]
    coords = {"depth": xr.Variable(dim, depth, _cf.attrs_for("depth"))}
    for c in ("latitude", "longitude", "time", "profile_id"):
        if c in cast.coords:
            coords[c] = cast.variables[c]
    attrs = {k: v for k, v in cast.attrs.items() if k not in ("cast_direction",)}
    with_data = counts[order] > 0
    attrs.update(
        bin_size=step,
        bin_axis=axis,
        depth_method=method,
        cast_max_depth=float(depth[with_data][-1]),
    )
    attrs = _cf.record_step(
        attrs,
        "bin_cast",
        bin_size=step,
        axis=axis,
        bins=int(np.count_nonzero(order < nb)),
        levels_kept=nl,
        sparse_spacing=float(sparse_spacing),
        samples_binned=int(counts[:nb].sum()),
        left_out=left_out,
        not_placed=int(np.count_nonzero(~placed)),
    )
    return dataset(data, coords, attrs)


def _isolated(x, placed, distance):
    """Placed samples whose nearest placed neighbours above and below are both farther
    than ``distance`` along the axis (a missing neighbour counts as far)."""
    out = np.zeros(x.size, bool)
    if not np.isfinite(distance):
        return out
    if _isolated_in_order(x, placed, distance, out):  # a down cast: one compiled pass
        return out
    where = np.flatnonzero(placed)
    xs = x[where]
    order = np.argsort(xs, kind="stable")
    where, xs = where[order], xs[order]
    gap = np.diff(xs)
    above = np.concatenate(([np.inf], gap))
    below = np.concatenate((gap, [np.inf]))
    out[where] = (above > distance) & (below > distance)
    return out


def _level_values(vals, flags, levels):
    """Own values and flags of the kept levels (NaN and 9 where not usable)."""
    vals, fl = vals[levels], flags[levels].astype(np.int8)
    ok = _cf.usable(vals, fl)
    return np.where(ok, vals, np.nan), np.where(ok, fl, _cf.MISSING).astype(np.int8)


def _keep_rows(position, counts, nb, step):
    """Row order of the Profile: bins and kept levels sorted along the axis, without the
    empty bins outside the levels with data or within a tenth of a bin of a kept level."""
    has = counts > 0
    lo, hi = position[has].min(), position[has].max()
    keep = has.copy()
    empty = ~has
    keep[empty] = (position[empty] > lo) & (position[empty] < hi)
    level_pos = np.sort(position[nb:])
    if level_pos.size:
        j = np.clip(np.searchsorted(level_pos, position[:nb]), 1, level_pos.size) - 1
        near = np.minimum(
            np.abs(position[:nb] - level_pos[j]),
            np.abs(position[:nb] - level_pos[np.minimum(j + 1, level_pos.size - 1)]),
        )
        keep[:nb] &= has[:nb] | (near >= 0.1 * step)
    rows = np.flatnonzero(keep)
    return rows[np.argsort(position[rows], kind="stable")]


def _bin_numbers(x, flags, step, axis, argument="step", unit="m"):
    """Which samples go into a bin, the bin (from 0) of each, and the bin centres.

    A sample is placed when its axis value ``x`` is finite, not flagged 3, 4 or 9 and not
    above ``-step/2``; bin ``k`` is centred at ``k step``. Returns ``(placed, index,
    centres)`` covering the shallowest to the deepest occupied bin.
    """
    with np.errstate(invalid="ignore"):
        placed = _cf.usable(x, flags) & (x >= -0.5 * step)
    if not placed.any():
        raise SeaprofileError(f"cast has no usable {axis} samples to bin")
    lo, hi, k, kmin, kmax, fits = _bin_numbers_kernel(x, placed, float(step))
    with np.errstate(over="ignore", invalid="ignore"):
        count = np.floor(hi / step + 0.5) - np.floor(lo / step + 0.5) + 1
    check_bin_count(count if np.isfinite(count) else np.inf, step, hi - lo, argument, unit)
    if not fits:  # bin numbers beyond 2**62: numpy's own conversion, whatever it gives
        kp = np.floor(x[placed] / step + 0.5).astype(np.int64)
        kmin, kmax = int(kp.min()), int(kp.max())
        k[placed] = kp
    nb = kmax - kmin + 1
    k -= kmin
    return placed, k, (kmin + np.arange(nb)) * step


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
    if prefer_measured and "measured_sound_speed" in profile.data_vars:
        out = profile.copy().rename(
            {"measured_sound_speed": "sound_speed", "measured_sound_speed_qc": "sound_speed_qc"}
        )
        out["sound_speed"].attrs = _cf.attrs_for(
            "sound_speed",
            ancillary_variables="sound_speed_qc",
            comment="measured by a sound-speed probe",
        )
        out["sound_speed_qc"].attrs = _cf.flag_attrs("sound_speed")
        out.attrs = _cf.record_step(profile.attrs, "add_sound_speed", equation="measured")
        out.attrs["equation"] = "measured"
        return out
    if equation not in EQUATIONS:
        raise SeaprofileError(
            f"equation {equation!r} is unknown; choose one of {', '.join(EQUATIONS)}"
        )
    for v in ("temperature", "salinity", "pressure"):
        if v not in profile.data_vars:
            raise SeaprofileError(f"profile has no {v}, needed for equation {equation!r}")
    c = _equation_sound_speed(
        profile,
        equation,
        values(profile, "temperature"),
        values(profile, "salinity"),
        values(profile, "pressure"),
        values(profile, "depth"),
    )
    flags = worst_flag(
        values(profile, "temperature_qc"),
        values(profile, "salinity_qc"),
        values(profile, "pressure_qc"),
    )
    flags = np.where(np.isfinite(c), flags, _cf.MISSING).astype(np.int8)
    dim = ("depth",)
    attrs = _cf.record_step(profile.attrs, "add_sound_speed", equation=equation)
    attrs["equation"] = equation
    speed_attrs = _cf.attrs_for(
        "sound_speed",
        ancillary_variables="sound_speed_qc",
        comment=f"computed with equation {equation}",
    )
    new = {
        "sound_speed": xr.Variable(dim, np.asarray(c, np.float64), speed_attrs),
        "sound_speed_qc": xr.Variable(dim, flags, _cf.flag_attrs("sound_speed")),
    }
    return with_variables(profile, new, attrs)


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
