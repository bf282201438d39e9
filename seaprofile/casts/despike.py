"""Despiking a Cast: a running-median test that scales with the sample spacing.

:func:`despike` flags (never deletes) values that stand out from a running median of their
neighbours, where the neighbours are close enough for the median to mean something. It
runs after the Argo tests of
:mod:`seaprofile.casts.qc`, to catch what their thresholds let through on dense records.
"""

from __future__ import annotations

import numba
import numpy as np

from .. import _cf
from .._validate import SeaprofileError
from ..io.errors import ArgumentError
from ._common import require_cast, vertical
from ._fastds import values
from .flags import pass_on_failed, raise_where

__all__ = ["despike", "DESPIKE_FLOOR", "DESPIKE_MAX_SPAN"]

#: smallest deviation from the running median that :func:`despike` calls a spike, in the
#: variable's units (chosen here to stay above sensor resolution and turbulent noise)
DESPIKE_FLOOR = {
    "temperature": 0.05,
    "salinity": 0.02,
    "conductivity": 0.05,
    "measured_sound_speed": 0.2,
}

#: dbar (or m): the longest vertical span of a :func:`despike` window. About twice the
#: span of 15 samples of a CTD lowered at 1 m/s and sampled at 1 Hz (our choice): a window
#: spanning more than this is too coarse for a running median to tell a spike from the
#: water's own structure, and is left to the Argo spike test.
DESPIKE_MAX_SPAN = 30.0


# --- despiking -------------------------------------------------------------------------
@numba.njit(cache=True)
def _insert_sorted(buf, m, v):
    """Insert ``v`` into the sorted ``buf[:m]``, after the values equal to it."""
    k = m
    while k > 0 and buf[k - 1] > v:
        buf[k] = buf[k - 1]
        k -= 1
    buf[k] = v


@numba.njit(cache=True)
def _middle(buf, m):
    """Median of the sorted ``buf[:m]`` (m > 0)."""
    return buf[m // 2] if m % 2 == 1 else 0.5 * (buf[m // 2 - 1] + buf[m // 2])


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
            _insert_sorted(buf, m, x[enter])
            m += 1
        if j < 0:
            continue
        if m > 0:
            out[j] = _middle(buf, m)
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


@numba.njit(cache=True)
def _median_at(x, half, at):
    """:func:`_running_median` at the samples ``at`` only: the median of the finite values
    of x[i-half : i+half+1] for each i in ``at`` (NaN if none), the window sorted afresh."""
    n = x.size
    out = np.full(at.size, np.nan)
    buf = np.empty(2 * half + 1)
    for q in range(at.size):
        i = at[q]
        m = 0
        for j in range(max(i - half, 0), min(i + half + 1, n)):
            if np.isfinite(x[j]):
                _insert_sorted(buf, m, x[j])
                m += 1
        if m > 0:
            out[q] = _middle(buf, m)
    return out


@numba.njit(cache=True)
def _full_windows(v, half, max_span):
    """True where the centred window v[i-half : i+half+1] lies inside v and spans (largest
    minus smallest value) at most ``max_span``.

    The window extremes come from running extremes within blocks of the window's length,
    from the left and from the right: three passes, whatever the window length (M. van
    Herk 1992, Pattern Recognit. Lett. 13, 517-521; J. Gil & M. Werman 1993, IEEE Trans.
    Pattern Anal. Mach. Intell. 15, 504-507; references from memory). Extremes are input
    values, so the spans are exactly those of a direct maximum minus minimum.
    """
    m = v.size
    w = 2 * half + 1
    full = np.zeros(m, np.bool_)
    if m < w:
        return full
    hi_l, lo_l = np.empty(m), np.empty(m)  # from the start of the block to i
    hi_r, lo_r = np.empty(m), np.empty(m)  # from i to the end of the block
    for start in range(0, m, w):
        end = min(start + w, m)
        hi_l[start] = lo_l[start] = v[start]
        for i in range(start + 1, end):
            hi_l[i] = v[i] if v[i] > hi_l[i - 1] else hi_l[i - 1]
            lo_l[i] = v[i] if v[i] < lo_l[i - 1] else lo_l[i - 1]
        hi_r[end - 1] = lo_r[end - 1] = v[end - 1]
        for i in range(end - 2, start - 1, -1):
            hi_r[i] = v[i] if v[i] > hi_r[i + 1] else hi_r[i + 1]
            lo_r[i] = v[i] if v[i] < lo_r[i + 1] else lo_r[i + 1]
    for i in range(half, m - half):
        a, b = i - half, i + half  # the window's first and last sample
        hi = hi_r[a] if hi_r[a] > hi_l[b] else hi_l[b]
        lo = lo_r[a] if lo_r[a] < lo_l[b] else lo_l[b]
        full[i] = hi - lo <= max_span
    return full


def _positive(name, value, what, whole=False):
    """``value`` as a finite number > 0 (an int when ``whole``), else an
    :class:`~seaprofile.io.ArgumentError` naming ``name``."""
    if isinstance(value, bool):
        raise ArgumentError(name, f"must be {what}, got {value!r}")
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise ArgumentError(name, f"must be {what}, got {value!r}") from None
    if not (np.isfinite(number) and number > 0) or (whole and number != int(number)):
        raise ArgumentError(name, f"must be {what}, got {value!r}")
    return int(number) if whole else number


def despike(cast, variables=None, window=15, threshold=5.0, floor=None, max_span=DESPIKE_MAX_SPAN):
    """Flag spikes as bad (4) with a running median and median absolute deviation.

    Residual ``r = x - median(x)`` over a centred window of ``window`` usable samples; the
    scale is the running median of ``|r|`` times 1.4826 (the MAD of a normal
    distribution). A value is a spike when ``|r| > max(threshold * scale, floor)``.

    The test scales with the sample spacing: a value is tested only when its window is
    full -- ``window // 2`` usable samples on each side -- and spans at most ``max_span``
    vertically. Elsewhere (the ends of the record, a cast sampled every few metres, bottle
    stations, floats) the running median cannot tell a spike from the water's own
    structure: a truncated window at the surface or a window spanning a whole
    thermocline has a median far from the value even on a smooth profile. Those values
    are left to the Argo spike test (:func:`seaprofile.casts.qc.spike`), a three-point
    test on adjacent values that is valid at any spacing, and counted as not tested.

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
    max_span : float
        dbar (m for a Cast with depth only): the longest vertical span of a window that is
        tested; default :data:`DESPIKE_MAX_SPAN` (30).

    Returns
    -------
    xarray.Dataset
        A new Cast with raised flags (nothing deleted); a spike in an input of a derived
        variable (conductivity under salinity computed from it) flags the derived value
        too (:func:`seaprofile.casts.flags.pass_on_failed`). The step records ``flagged``
        (count per variable), ``flagged_at`` (pressures, or depths, of the first 20
        flagged values per variable), ``not_tested`` (count per variable) and the reason,
        and ``bad_input`` (derived values flagged because of a flagged input).

    Notes
    -----
    The running median follows steps and gradients (it is edge-preserving): on a
    monotone stretch the median of a full centred window is the centre value itself, so
    the residual and its scale stay small in a thermocline; the MAD is the robust scale
    estimate of Hampel (1974), J. Am. Stat. Assoc. 69, 383-393. The Argo spike test is in
    Wong et al., Argo Quality Control Manual for CTD and Trajectory Data,
    doi:10.13155/33951, real-time test 9.
    """
    require_cast(cast)
    window = _positive("window", window, "an odd whole number of samples >= 3", whole=True)
    if window < 3 or window % 2 == 0:
        raise ArgumentError("window", f"must be an odd whole number of samples >= 3, got {window}")
    threshold = _positive("threshold", threshold, "a number of robust standard deviations > 0")
    max_span = _positive("max_span", max_span, "a vertical span > 0 (dbar or m)")
    half = window // 2
    floor = DESPIKE_FLOOR if floor is None else {**DESPIKE_FLOOR, **floor}
    if variables is None:
        variables = [v for v in DESPIKE_FLOOR if v in cast.data_vars]
    _, vert = vertical(cast)
    counts, where, untested = {}, {}, {}
    raised = {}  # name of a flag variable -> its new flags
    for var in variables:
        if var not in cast.data_vars:
            raise SeaprofileError(f"variables: {var!r} is not in the cast")
        flags = values(cast, f"{var}_qc")
        idx, hit, tested = _despike_one(
            values(cast, var).astype(np.float64),
            flags,
            vert,
            half,
            threshold,
            floor.get(var, 0.0),
            max_span,
        )
        counts[var] = int(hit.sum())
        where[var] = [float(v) for v in vert[idx[hit]][:20]]
        untested[var] = int(idx.size - tested)
        spike = np.zeros(flags.size, bool)
        spike[idx[hit]] = True
        raised[f"{var}_qc"] = raise_where(flags, spike, _cf.BAD)

    def current(v):
        return raised.get(f"{v}_qc", values(cast, f"{v}_qc"))

    passed = {}
    for var, f in pass_on_failed(cast, current).items():
        passed[var] = int(np.count_nonzero(f != current(var)))
        raised[f"{var}_qc"] = f
    out = cast.copy()
    for name, f in raised.items():
        out.variables[name].data = f  # the copy's own Variables: the input is untouched
    out.attrs = _cf.record_step(
        cast.attrs,
        "despike",
        window=window,
        threshold=threshold,
        max_span=max_span,
        flagged=counts,
        flagged_at=where,
        not_tested=untested,
        bad_input=passed,
        not_tested_reason=f"fewer than {half} usable samples on a side, or the window spans "
        f"more than {max_span:g}: left to the Argo spike test",
    )
    return out


def _despike_one(x, flags, vert, half, threshold, floor, max_span):
    """Indices of the usable values, which of them are spikes, and how many were tested."""
    idx = np.flatnonzero(_cf.usable(x, flags) & np.isfinite(vert))
    full = _full_windows(vert[idx], half, max_span)
    xs = x[idx]
    r = xs - _running_median(xs, half)
    r = np.where(full, r, np.nan)  # biased residuals must not set the scale either
    a = np.abs(r)
    with np.errstate(invalid="ignore"):
        # |r| <= floor is never a spike, whatever the scale: the scale is needed only at
        # the other tested samples, usually few (NaN elsewhere gives no spike either)
        need = np.flatnonzero(full & ~(a <= floor))
    if need.size > a.size // 8:
        scale = 1.4826 * _running_median(a, half)
    else:
        scale = np.full(a.size, np.nan)
        scale[need] = 1.4826 * _median_at(a, half, need)
    with np.errstate(invalid="ignore"):
        hit = full & (a > np.maximum(threshold * scale, floor))
    return idx, hit, int(full.sum())
