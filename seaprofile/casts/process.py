"""Processing steps: from a raw Cast to a binned Profile.

Each step takes a Dataset and returns a new one (the input is never modified) and records
itself in ``processing_steps`` / ``history`` with :func:`seaprofile._cf.record_step`.

Processing selects, quality control flags
-----------------------------------------
Steps that *select* the part of the record to work with -- :func:`remove_soak`,
:func:`select_direction`, :func:`remove_reversals` -- return a Cast holding only the
selected samples, and record how many samples they left out (and which, for the soak and
direction). The original Cast, which the caller keeps, still holds every sample. Steps that
*judge* values -- :func:`~seaprofile.casts.despike.despike` and everything in
:mod:`seaprofile.casts.qc` -- never remove anything: they raise ``<var>_qc`` flags, and
:func:`~seaprofile.casts.binning.bin_cast` leaves values flagged
3 (probably bad), 4 (bad) or 9 (missing) out of the bin averages. A sample whose pressure
is impossible (flagged, or outside -5..12000 dbar) is not judged by the selection steps:
it is kept for quality control to flag, with its reason.

:func:`add_salinity` computes salinity from conductivity (:func:`salinity_and_flags`, the
one place this is done, reading a file included) and :func:`replace_salinity` puts a given
salinity (flag 8) where the salinity channel failed. Despiking is in
:mod:`seaprofile.casts.despike`; the steps on a Profile -- ``bin_cast``, ``fill_gaps`` and
``add_sound_speed`` -- in :mod:`seaprofile.casts.binning`.
"""

from __future__ import annotations

import numpy as np

from .. import _cf
from .._validate import SeaprofileError
from ..seawater.depth import METHODS as DEPTH_METHODS
from ..seawater.depth import depth_from_pressure, pressure_from_depth
from ..seawater.state import salinity_from_conductivity
from ._common import (
    cast_latitude,
    exceeds_earlier,
    require_cast,
    vertical,
    with_variable,
)
from ._qc_tests import GLOBAL_RANGE
from .flags import worst_flag

__all__ = [
    "remove_soak",
    "select_direction",
    "remove_reversals",
    "select_descent",
    "add_salinity",
    "salinity_and_flags",
    "replace_salinity",
    "add_depth",
    "SALINITY_INPUTS",
    "SALINITY_SOURCE",
]


# --- helpers ---------------------------------------------------------------------------
def _select(cast, keep, step, **params):
    out = cast.isel(sample=np.asarray(keep))
    out.attrs = _cf.record_step(cast.attrs, step, **params)
    return out


def _turn(values):
    """Index of the deepest finite sample (the end of the descent)."""
    if not np.isfinite(values).any():
        raise SeaprofileError(
            "cast has no usable pressure or depth (all missing, flagged bad or outside -5..12000)"
        )
    return int(np.nanargmax(values))


def _selection_vertical(cast):
    """The vertical coordinate the selection steps use: pressure (dbar), else depth (m),
    NaN where it is flagged 3, 4 or 9 or lies outside the range of any ocean
    (:data:`seaprofile.casts.qc.GLOBAL_RANGE`), so that one wild value (a pressure of
    1e9 dbar) neither becomes the deepest point nor swallows the rest of the descent."""
    name, v = vertical(cast)
    low, high = GLOBAL_RANGE[name]
    with np.errstate(invalid="ignore"):
        bad = (
            (v < low)
            | (v > high)
            | _cf.flags_in(cast.variables[f"{name}_qc"].values, _cf.UNUSABLE_FLAGS)
        )
    return np.where(bad, np.nan, v), bad


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
    require_cast(cast)
    v, _ = _selection_vertical(cast)
    start, params = _soak_start(v, max_soak_pressure, min_rise)
    return _select(cast, slice(start, None), "remove_soak", **params)


def _soak_start(v, max_soak_pressure=20.0, min_rise=2.0):
    """:func:`remove_soak` on the selection vertical ``v``: (first kept index, record)."""
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
    params = {
        "max_soak_pressure": max_soak_pressure,
        "min_rise": min_rise,
        "removed_samples": start,
        "first_kept_sample": start,
    }
    return start, params


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
    require_cast(cast)
    _check_direction(direction)
    v, _ = _selection_vertical(cast)
    keep, params = _direction_keep(v, direction)
    out = _select(cast, keep, "select_direction", **params)
    out.attrs["cast_direction"] = direction
    return out


def _check_direction(direction):
    if direction not in ("down", "up", "both"):
        raise SeaprofileError(f"direction must be 'down', 'up' or 'both', got {direction!r}")


def _direction_keep(v, direction):
    """:func:`select_direction` on the selection vertical ``v``: (slice kept, record)."""
    turn = _turn(v)
    n = v.size
    keep = {"down": slice(0, turn + 1), "up": slice(turn, n), "both": slice(0, n)}[direction]
    kept = len(range(*keep.indices(n)))
    return keep, {"direction": direction, "removed_samples": n - kept}


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

    Samples whose pressure is flagged 3, 4 or 9 or lies outside -5..12000 dbar take no
    part in the rule (they set no running maximum) and are kept, so that quality control
    flags them with its reason and binning leaves them out; the step records their
    number as ``kept_unusable_vertical``. (The soak and direction steps ignore them too.)

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
    require_cast(cast)
    v, unusable = _selection_vertical(cast)
    elapsed = (
        cast.variables["elapsed_time"].values.astype(np.float64)
        if "elapsed_time" in cast.data_vars
        else None
    )
    direction = cast.attrs.get("cast_direction", "down")
    keep, params = _reversal_keep(v, unusable, direction, elapsed, min_descent_rate, rate_window)
    return _select(cast, keep, "remove_reversals", **params)


def _reversal_keep(v, unusable, direction, elapsed, min_descent_rate=0.25, rate_window=1.0):
    """:func:`remove_reversals` on the selection vertical ``v`` and ``elapsed`` time (s,
    or None): (indices kept, record)."""
    n = v.size
    sign = np.full(n, -1.0 if direction == "up" else 1.0)
    if direction == "both":
        turn = _turn(v)
        sign[turn + 1 :] = -1.0
        keep = np.zeros(n, bool)
        keep[: turn + 1] = exceeds_earlier(v[: turn + 1])
        keep[turn + 1 :] = exceeds_earlier(-v[turn + 1 :]) & (v[turn + 1 :] < v[turn])
    else:
        keep = exceeds_earlier(sign * v)
    slow = np.zeros(n, bool)
    if min_descent_rate is not None and elapsed is not None:
        rate = sign * _rate(v, elapsed, rate_window)
        with np.errstate(invalid="ignore"):
            slow = keep & (rate < min_descent_rate)
        keep &= ~slow
    keep |= unusable  # not judged here: quality control flags them with the reason
    params = {
        "min_descent_rate": min_descent_rate,
        "removed_samples": int(n - keep.sum()),
        "slow_samples": int(slow.sum()),
        "kept_unusable_vertical": int(unusable.sum()),
    }
    return np.flatnonzero(keep), params


def select_descent(cast, direction="down", *, soak=True):
    """:func:`remove_soak` (when ``soak``), :func:`select_direction` and
    :func:`remove_reversals` (default arguments) in one selection.

    The three steps are worked out on the indices of the samples and the Cast is cut
    once: the result, its attributes and its ``processing_steps`` are those of calling
    the three in turn.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    direction : {"down", "up", "both"}
        As for :func:`select_direction`.
    soak : bool
        Leave out the surface soak first (not for expendable probes, which have none).

    Returns
    -------
    xarray.Dataset
        The selected samples.
    """
    require_cast(cast)
    _check_direction(direction)
    v, unusable = _selection_vertical(cast)
    idx = np.arange(v.size)
    attrs = dict(cast.attrs)
    if soak:
        start, params = _soak_start(v)
        idx = idx[start:]
        attrs = _cf.record_step(attrs, "remove_soak", **params)
    keep, params = _direction_keep(v[idx], direction)
    idx = idx[keep]
    attrs = _cf.record_step(attrs, "select_direction", **params)
    attrs["cast_direction"] = direction
    elapsed = None
    if "elapsed_time" in cast.data_vars:
        elapsed = cast.variables["elapsed_time"].values[idx].astype(np.float64)
    keep, params = _reversal_keep(v[idx], unusable[idx], direction, elapsed)
    idx = idx[keep]
    attrs = _cf.record_step(attrs, "remove_reversals", **params)
    contiguous = idx.size > 0 and idx[-1] - idx[0] + 1 == idx.size
    out = cast.isel(sample=slice(int(idx[0]), int(idx[-1]) + 1) if contiguous else idx)
    out.attrs = attrs
    return out


# --- derived variables -----------------------------------------------------------------
#: the inputs of practical salinity computed from conductivity, in the order of gsw.SP_from_C
SALINITY_INPUTS = ("conductivity", "temperature", "pressure")
#: what :func:`add_salinity` writes to the Cast's ``salinity_source`` attribute
SALINITY_SOURCE = "computed from conductivity (PSS-78)"


def salinity_and_flags(cast):
    """Practical salinity from a Cast's conductivity, temperature and pressure, and its flags.

    The one place salinity is computed from conductivity: reading a file and
    :func:`add_salinity` both use it.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``conductivity`` (mS/cm), ``temperature`` (degC, ITS-90) and
        ``pressure`` (sea pressure, dbar), each with its ``_qc`` flags.

    Returns
    -------
    salinity : numpy.ndarray of float64
        Practical salinity (PSS-78), dimensionless.
    flags : numpy.ndarray of int8
        The worst of the three inputs' flags (:func:`~seaprofile.casts.flags.worst_flag`:
        a bad or estimated input makes the salinity bad or estimated), 9 (missing) where
        the salinity is NaN.

    Notes
    -----
    Practical Salinity Scale 1978 (Unesco 1981, Unesco Tech. Pap. Mar. Sci. 36), evaluated
    with ``gsw.SP_from_C`` (:func:`seaprofile.seawater.state.salinity_from_conductivity`).
    """
    for v in SALINITY_INPUTS:
        if v not in cast.data_vars:
            raise SeaprofileError(f"cast needs {v} to compute salinity from conductivity")
    values = np.asarray(
        salinity_from_conductivity(*[cast.variables[v].values for v in SALINITY_INPUTS]),
        dtype=np.float64,
    )
    flags = worst_flag(*[cast.variables[f"{v}_qc"].values for v in SALINITY_INPUTS])
    return values, np.where(np.isfinite(values), flags, _cf.MISSING).astype(np.int8)


def add_salinity(cast):
    """Practical salinity from conductivity, temperature and pressure (PSS-78, via gsw).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``conductivity`` (mS/cm), ``temperature`` (degC) and ``pressure`` (dbar).

    Returns
    -------
    xarray.Dataset
        A new Cast with ``salinity`` and its flags from :func:`salinity_and_flags`. The
        salinity's attribute ``derived_from`` names its inputs, so that quality control
        and :func:`despike` pass a bad conductivity, temperature or pressure flag found
        later on to it; the Cast's ``salinity_source`` says where it came from. A Cast that
        already has salinity is returned unchanged.
    """
    require_cast(cast)
    if "salinity" in cast.data_vars:
        return cast.copy()
    values, flags = salinity_and_flags(cast)
    out = with_variable(
        cast,
        "sample",
        "salinity",
        values,
        flags,
        comment="computed from conductivity, temperature and pressure (PSS-78 via gsw.SP_from_C)",
        derived_from=" ".join(SALINITY_INPUTS),
    )
    out.attrs = _cf.record_step(cast.attrs, "add_salinity", method="PSS-78 (gsw.SP_from_C)")
    out.attrs["salinity_source"] = SALINITY_SOURCE
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
    require_cast(cast)
    if method not in DEPTH_METHODS:
        raise SeaprofileError(
            f"method {method!r} is unknown; choose one of {', '.join(DEPTH_METHODS)}"
        )
    lat = cast_latitude(cast, latitude)
    if "pressure" in cast.data_vars:
        with np.errstate(over="ignore", invalid="ignore"):  # wild values: flagged by QC
            z = depth_from_pressure(cast.variables["pressure"].values, lat, method)
        out = with_variable(
            cast,
            "sample",
            "depth",
            z,
            cast.variables["pressure_qc"].values.copy(),
            comment=f"from pressure, method {method}",
        )
        src = "pressure"
    elif "depth" in cast.data_vars:
        with np.errstate(over="ignore", invalid="ignore"):
            p = pressure_from_depth(cast.variables["depth"].values, lat, method)
        out = with_variable(
            cast,
            "sample",
            "pressure",
            p,
            cast.variables["depth_qc"].values.copy(),
            comment=f"from depth, method {method}",
        )
        src = "depth"
    else:
        raise SeaprofileError("cast has neither pressure nor depth")
    out.attrs = _cf.record_step(
        cast.attrs, "add_depth", method=method, latitude=lat, computed_from=src
    )
    out.attrs.update(depth_method=method, depth_latitude=lat)
    return out


def replace_salinity(cast, salinity, *, where="bad"):
    """Replace a failed salinity channel by a given salinity, flagged 8 (estimated).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``depth`` (m; see :func:`add_depth`), not modified. It may lack
        salinity altogether.
    salinity : float or (array_like, array_like)
        The replacement: a constant practical salinity, or a profile ``(depths_m,
        salinities)`` interpolated linearly in depth and held constant beyond its ends
        (:func:`seaprofile.casts.xbt.assumed_salinity`).
    where : {"bad", "all"}
        ``"bad"``: only where salinity is missing (NaN, or no salinity at all) or flagged
        3, 4 or 9 -- run quality control first; ``"all"``: the whole cast (a channel that
        drifted without failing a test).

    Returns
    -------
    xarray.Dataset
        A new Cast. Replaced values are flagged 8, "estimated value" of Argo reference
        table 2: the value is not the sensor's, corrected (which flag 5, "value changed",
        would say), but one taken from outside the cast. Quality-control tests do not
        test flag-8 values, and sound speed computed from them is flagged 8 too. The
        attribute ``salinity_replaced`` says what was used where; the step records the
        source, ``where`` and the number replaced.
    """
    from .xbt import assumed_salinity

    require_cast(cast)
    if where not in ("bad", "all"):
        raise SeaprofileError(f"where must be 'bad' or 'all', got {where!r}")
    if "depth" not in cast.data_vars:
        raise SeaprofileError("cast has no depth: run add_depth(cast, latitude=...) first")
    values, desc = assumed_salinity(cast.variables["depth"].values, salinity)
    n = cast.sizes["sample"]
    if "salinity" in cast.data_vars:
        old = cast.variables["salinity"].values.astype(np.float64)
        old_flags = cast.variables["salinity_qc"].values
    else:
        old, old_flags = np.full(n, np.nan), np.full(n, _cf.MISSING, np.int8)
    if where == "all":
        mask = np.ones(n, bool)
    else:
        mask = ~_cf.usable(old, old_flags)
    mask &= np.isfinite(values)
    new = np.where(mask, values, old)
    flags = np.where(mask, _cf.ESTIMATED, old_flags).astype(np.int8)
    out = with_variable(
        cast, "sample", "salinity", new, flags, comment=f"replaced where {where}: {desc} (flag 8)"
    )
    scope = "everywhere" if where == "all" else "where flagged bad or missing"
    out.attrs = _cf.record_step(
        cast.attrs,
        "replace_salinity",
        salinity_source=desc,
        where=where,
        replaced=int(mask.sum()),
        samples=n,
    )
    out.attrs["salinity_replaced"] = f"{desc}, {scope}: {int(mask.sum())} of {n} samples (flag 8)"
    return out
