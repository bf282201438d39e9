"""Filling gaps without data inside a Profile (flag 8), and reporting those left (flag 9).

:func:`fill_gaps` (also importable from :mod:`seaprofile.casts.binning`) interpolates
linearly in depth across the empty levels between measured ones; which gaps it fills is
set by ``max_gap`` -- by default in :func:`seaprofile.profile.build_profile` the rule
``"auto"``, joining sparse casts but leaving lost data in dense casts missing. Every gap
is recorded in the Profile's attributes and a wide one warns (:class:`LargeGapWarning`).
"""

from __future__ import annotations

import warnings

import numpy as np

from .. import _cf
from ..io.errors import ArgumentError
from ._common import require_profile
from ._fastds import values

__all__ = ["fill_gaps", "LargeGapWarning", "AUTO_GAP_FLOOR", "AUTO_GAP_SPACINGS", "LARGE_GAP"]


def _profile_vars(profile):
    return [
        v
        for v in ("temperature", "salinity", "pressure", "measured_sound_speed", "sound_speed")
        if v in profile.data_vars
    ]


#: m: the smallest gap :func:`fill_gaps` leaves unfilled with ``max_gap="auto"`` (our
#: choice: a few bins of a dense cast, well under a seasonal thermocline)
AUTO_GAP_FLOOR = 5.0
#: with ``max_gap="auto"``, a gap is filled up to this many times the spacing of the
#: measured levels next to it (our choice: sparse bottle and float casts stay joined)
AUTO_GAP_SPACINGS = 3.0
#: m: a gap wider than this warns (:class:`LargeGapWarning`) when it is left missing, or
#: when it was filled only because ``max_gap`` asked for it (not by the "auto" rule);
#: common practice, no source
LARGE_GAP = 20.0


class LargeGapWarning(UserWarning):
    """A Profile has a gap without data wider than :data:`LARGE_GAP` (20 m), filled by a
    straight line or left missing."""


def _gap_spans(text_gaps):
    return ", ".join(f"{a:g}-{b:g} m" for a, b in sorted(text_gaps)) or "none"


def fill_gaps(profile, max_gap=5.0):
    """Interpolate linearly in depth across empty levels inside a Profile, flagged 8.

    Every variable -- temperature and salinity, or the measured sound speed of a probe --
    is interpolated linearly in depth between the nearest levels with a usable value above
    and below; sound speed is then computed from the interpolated temperature and
    salinity by :func:`add_sound_speed` (so the pressure term is exact at every level),
    and a probe's measured sound speed is interpolated itself. Levels with data are never
    changed.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (not modified).
    max_gap : float, "auto" or None
        m: the largest gap filled, measured as the depth span of the missing levels
        (distance between the levels with data on either side, less one bin).
        ``"auto"`` (what :func:`seaprofile.profile.build_profile` uses by default): a gap
        is filled when it is at most ``max(AUTO_GAP_FLOOR, AUTO_GAP_SPACINGS * spacing)``
        (5 m, or 3 times ``spacing``), ``spacing`` being the larger of the distances
        between the measured levels on either side of the gap and their next measured
        neighbours (a gap with no such neighbour on either side -- a two-level profile --
        is filled): a bottle or float cast stays joined, while lost data in a dense cast
        stays missing. None: fill every interior gap, whatever its length. Gaps at the
        top or bottom of the profile are never filled.

    Returns
    -------
    xarray.Dataset
        A new Profile; filled values are flagged 8 and keep ``samples_per_bin`` 0; gaps
        left are NaN, flagged 9. Attributes: ``largest_gap`` (m, the widest distance
        between two levels with data around a gap, filled or not; 0 with no gap),
        ``filled_gaps`` and ``unfilled_gaps`` (text, ``"100-400 m, ..."``: the levels
        with data around each gap, any variable; ``"none"``). The step records them
        and ``filled`` (per variable). A gap wider than :data:`LARGE_GAP` warns
        (:class:`LargeGapWarning`).

    Notes
    -----
    Ray tracing (:meth:`seaprofile.propagation.Environment.from_profile`) leaves out the
    missing levels, so across an unfilled gap its sound speed is still a straight line
    between the levels on either side: the gap is reported, in these attributes, the
    warning and :func:`seaprofile.profile.describe_assumptions`, for the user to judge.
    """
    require_profile(profile)
    auto = isinstance(max_gap, str) and max_gap == "auto"
    if max_gap is not None and not auto:
        try:
            max_gap = float(max_gap)
        except (TypeError, ValueError):
            raise ArgumentError(
                "max_gap", f"must be a depth >= 0 m, 'auto' or None, got {max_gap!r}"
            ) from None
        if not max_gap >= 0:
            raise ArgumentError("max_gap", f"must be a depth >= 0 m, 'auto' or None, got {max_gap}")
    z = values(profile, "depth").astype(np.float64)
    step = profile.attrs.get("bin_size")
    step = float(step) if step else (float(np.median(np.diff(z))) if z.size > 1 else 0.0)
    out = profile.copy()
    filled, widest, done, left = {}, 0.0, set(), set()
    for var in _profile_vars(profile):
        v = values(profile, var).astype(np.float64)
        good = np.isfinite(v)
        iv = np.flatnonzero(good)
        if iv.size < 2:
            filled[var] = 0
            continue
        j = np.flatnonzero(~good)
        j = j[(j > iv[0]) & (j < iv[-1])]
        if j.size:  # dense casts mostly have none: skip the gap arithmetic
            pos = np.searchsorted(iv, j)
            top, bottom = z[iv[pos - 1]], z[iv[pos]]
            width = bottom - top
            if auto:
                zi = z[iv]
                spacing = np.diff(zi)  # spacing[k]: level k to level k + 1
                above = np.where(pos >= 2, spacing[np.maximum(pos - 2, 0)], np.nan)
                below = np.where(
                    pos + 1 < iv.size, spacing[np.minimum(pos, spacing.size - 1)], np.nan
                )
                near = np.fmax(above, below)
                limit = np.where(
                    np.isfinite(near), np.maximum(AUTO_GAP_FLOOR, AUTO_GAP_SPACINGS * near), np.inf
                )
                keep = width - step <= limit + 1e-9
            elif max_gap is not None:
                keep = width - step <= max_gap + 1e-9 * max(1.0, abs(max_gap))
            else:
                keep = np.ones(j.size, bool)
            widest = max(widest, float(width.max()))
            done.update(zip(top[keep].tolist(), bottom[keep].tolist()))
            left.update(zip(top[~keep].tolist(), bottom[~keep].tolist()))
            j = j[keep]
        flags = values(profile, f"{var}_qc").astype(np.int8)  # a copy, as v is
        if j.size:
            v[j] = np.interp(z[j], z[iv], v[iv])
            flags[j] = _cf.ESTIMATED
        out.variables[var].data = v  # the copy's own Variables: the input is untouched
        out.variables[f"{var}_qc"].data = flags
        filled[var] = int(j.size)
    attrs = dict(largest_gap=widest, filled_gaps=_gap_spans(done), unfilled_gaps=_gap_spans(left))
    out.attrs = _cf.record_step(
        profile.attrs,
        "fill_gaps",
        max_gap="auto" if auto else max_gap,
        filled=filled,
        method="linear in depth",
        **attrs,
    )
    out.attrs.update(attrs)
    # a gap the "auto" rule filled is the ordinary spacing of a sparse cast (bottles,
    # floats, planning nodes): no warning. Data loss left missing warns, and so does a wide
    # gap filled only because the caller asked for it (max_gap given or None).
    wide = left if auto else done | left
    large = sorted(g for g in wide if g[1] - g[0] > LARGE_GAP)
    if large:
        name = profile.attrs.get("cast_name", "the profile")
        kinds = [("filled with a straight line", done), ("left missing (flag 9)", left)]
        said = "; ".join(
            f"{_gap_spans([g for g in large if g in gaps])} {how}"
            for how, gaps in kinds
            if any(g in gaps for g in large)
        )
        warnings.warn(
            f"{name} has no data over {said}: check the cast before using its profile there",
            LargeGapWarning,
            stacklevel=2,
        )
    return out
