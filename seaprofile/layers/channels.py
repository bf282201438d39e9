"""Sound channels (deep axis and a secondary channel), critical depth, depth excess and
the sound speed at a given depth.

Plain functions on 1-D arrays: depth in m, positive down and strictly increasing; sound
speed in m/s; NaN values are skipped.
"""

from __future__ import annotations

import numpy as np

from .._validate import as_float_array
from ._common import _scalar, _valid_1d

__all__ = ["sound_channels", "critical_depth", "depth_excess", "speed_at"]


def sound_channels(depth, sound_speed, *, below=None, min_contrast=1.0, min_thickness=10.0):
    """Deep sound channel axis and a secondary channel, if present.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down, strictly increasing (1-D).
    sound_speed : array_like
        Sound speed, m/s (1-D, NaN = missing).
    below : float, optional
        Search only at and below this depth, m (normally the sonic layer depth; default:
        the whole profile).
    min_contrast : float
        Smallest rise of sound speed, m/s, on both sides of a minimum for it to count as
        a channel (default 1 m/s, i.e. rays within about 2 degrees of horizontal trapped).
    min_thickness : float
        Smallest thickness of the trapping region of a secondary channel, m (default 10).

    Returns
    -------
    dict
        ``axis_depth`` (m), ``axis_speed`` (m/s), ``axis_contrast`` (m/s),
        ``secondary_depth`` (m), ``secondary_speed`` (m/s), ``secondary_contrast`` (m/s),
        ``secondary_thickness`` (m); NaN where absent. ``still_decreasing`` is True when
        the global minimum is the deepest valid sample (the axis may lie deeper).

    Notes
    -----
    Axis: the global minimum of sound speed at or below ``below``, accepted only if sound
    speed rises by at least ``min_contrast`` both above it (up to ``below``) and below it.
    Secondary channel (our rule): among the other local minima whose topographic
    prominence (the rise of sound speed needed, on the lower side, to escape the minimum;
    scipy.signal.find_peaks on -c) is at least ``min_contrast`` and whose trapping region
    (the width of the well at that rise) is at least ``min_thickness`` thick, the most
    prominent one.
    """
    z, c = _valid_1d(depth, sound_speed)
    nan = float("nan")
    out = dict(axis_depth=nan, axis_speed=nan, axis_contrast=nan, secondary_depth=nan,
               secondary_speed=nan, secondary_contrast=nan, secondary_thickness=nan,
               still_decreasing=False)
    if below is not None and np.isfinite(below):
        keep = z >= below
        z, c = z[keep], c[keep]
    if z.size < 3:
        return out
    i = int(np.argmin(c))
    if i == z.size - 1:
        out["still_decreasing"] = True
    contrast = min(c[: i + 1].max(), c[i:].max()) - c[i]
    axis = None
    if 0 < i < z.size - 1 and contrast >= min_contrast:
        axis = i
        out.update(axis_depth=float(z[i]), axis_speed=float(c[i]), axis_contrast=float(contrast))
    from scipy.signal import find_peaks  # here, not at import: scipy.signal is slow to load

    peaks, props = find_peaks(-c, prominence=min_contrast, width=0, rel_height=1.0)
    if peaks.size:
        idx = np.arange(z.size, dtype=float)
        top = np.interp(props["left_ips"], idx, z)
        bottom = np.interp(props["right_ips"], idx, z)
        thick = bottom - top
        ok = (thick >= min_thickness) & (peaks != (axis if axis is not None else -1))
        if axis is not None:  # the same well as the axis (a plateau) is not a second channel
            ok &= np.abs(c[peaks] - c[axis]) > 1e-9
        if ok.any():
            k = np.flatnonzero(ok)[np.argmax(props["prominences"][ok])]
            j = peaks[k]
            out.update(secondary_depth=float(z[j]), secondary_speed=float(c[j]),
                       secondary_contrast=float(props["prominences"][k]),
                       secondary_thickness=float(thick[k]))
    return out


def speed_at(depth, sound_speed, at):
    """Sound speed at depth ``at``, m/s, by linear interpolation (NaN outside the profile).

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down, strictly increasing (1-D).
    sound_speed : array_like
        Sound speed, m/s (1-D, NaN = missing).
    at : array_like
        Depths to evaluate, m.
    """
    z, c = _valid_1d(depth, sound_speed)
    a = as_float_array("at", at)
    if z.size == 0:
        return _scalar(np.full(a.shape, np.nan))
    return _scalar(np.interp(a, z, c, left=np.nan, right=np.nan))


def critical_depth(depth, sound_speed, reference_speed, axis_depth):
    """Critical (conjugate) depth: where sound speed below the axis regains a reference, m.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down, strictly increasing (1-D).
    sound_speed : array_like
        Sound speed, m/s (1-D, NaN = missing).
    reference_speed : float
        The speed to regain, m/s: the surface speed, the sonic-layer maximum, or the
        speed at a source depth.
    axis_depth : float
        Depth of the sound channel axis, m.

    Returns
    -------
    float
        The shallowest depth below ``axis_depth`` where sound speed reaches
        ``reference_speed`` (linear interpolation), m; NaN when it is not reached within
        the profile or there is no axis.

    Notes
    -----
    By Snell's law a ray that is horizontal where the sound speed equals the reference
    speed turns again where the speed regains it, so this is the deepest turning depth of
    rays horizontal at the reference depth (the plain geometric definition).
    """
    z, c = _valid_1d(depth, sound_speed)
    if not (np.isfinite(axis_depth) and np.isfinite(reference_speed)):
        return float("nan")
    k = z >= axis_depth
    z, c = z[k], c[k]
    hit = np.flatnonzero(c >= reference_speed)
    if hit.size == 0:
        return float("nan")
    j = hit[0]
    if j == 0:
        return float(z[0])
    return float(z[j - 1] + (reference_speed - c[j - 1]) * (z[j] - z[j - 1]) / (c[j] - c[j - 1]))


def depth_excess(bottom_depth, critical):
    """Depth excess = bottom depth - critical depth, m (None when there is no critical depth).

    Parameters
    ----------
    bottom_depth : float
        Sea floor depth, m.
    critical : float
        Critical depth, m (NaN when not reached).

    Returns
    -------
    float or None
        Positive when the water is deeper than the critical depth (a deep sound channel
        with refracted-refracted paths), negative when the bottom is shallower.
    """
    if bottom_depth is None or critical is None or not np.isfinite(critical):
        return None
    return float(bottom_depth) - float(critical)
