"""Sound channels (deep axis and a secondary channel), critical depth, depth excess and
the sound speed at a given depth.

Each takes ``(sound_speed, depth, ..., dim="depth")``: sound speed in m/s along the last
axis (numpy, many profiles at once) or along ``dim`` (xarray, dask), depth in m, positive
down and strictly increasing; NaN values are skipped. They go through the core-dimension
dispatcher :func:`seaprofile.seawater._apply.columnwise`.
"""

from __future__ import annotations

import functools

import numpy as np
import xarray as xr

from .. import _cf
from ..seawater._apply import columnwise, pointwise
from ._common import _columns, _per_profile, _scalar, _valid_1d

__all__ = ["sound_channels", "critical_depth", "depth_excess", "speed_at"]


def sound_channels(
    sound_speed, depth=None, *, below=None, min_contrast=1.0, min_thickness=10.0, dim="depth"
):
    """Deep sound channel axis and a secondary channel, if present.

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s (along the last axis / ``dim``, NaN = missing).
    depth : array_like, dask array, xarray.DataArray or None
        Depth, m, positive down, strictly increasing (None: the DataArray's ``dim``
        coordinate).
    below : float or array over the profile axes, optional
        Search only at and below this depth, m (normally the sonic layer depth; default
        or NaN: the whole profile).
    min_contrast : float
        Smallest rise of sound speed, m/s, on both sides of a minimum for it to count as
        a channel (default 1 m/s, i.e. rays within about 2 degrees of horizontal trapped).
    min_thickness : float
        Smallest thickness of the trapping region of a secondary channel, m (default 10).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    dict or xarray.Dataset
        ``axis_depth`` (m), ``axis_speed`` (m/s), ``axis_contrast`` (m/s),
        ``secondary_depth`` (m), ``secondary_speed`` (m/s), ``secondary_contrast`` (m/s),
        ``secondary_thickness`` (m); NaN where absent. ``still_decreasing`` is True when
        the global minimum is the deepest valid sample (the axis may lie deeper). Floats
        for one numpy profile, arrays over the profile axes for many (dask arrays for
        dask input), an ``xarray.Dataset`` of these variables for DataArray input.

    Notes
    -----
    Axis: the global minimum of sound speed at or below ``below``, accepted only if sound
    speed rises by at least ``min_contrast`` both above it (up to ``below``) and below it.
    Secondary channel (our rule): among the other local minima whose topographic
    prominence (the rise of sound speed needed, on the lower side, to escape the minimum;
    scipy.signal.find_peaks on -c) is at least ``min_contrast`` and whose trapping region
    (the width of the well at that rise) is at least ``min_thickness`` thick, the most
    prominent one. One numpy profile at a time (a loop over profiles, not samples).
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    func = functools.partial(_channels_1d, float(min_contrast), float(min_thickness))
    outputs = [(k, _CHANNEL_ATTRS[k]) for k in _CHANNEL_KEYS]
    out = columnwise(
        lambda c, z, b: _per_profile(func, _CHANNEL_DTYPES, [c, z], [b]),
        columns,
        dim=dim,
        params=[("below", np.nan if below is None else below)],
        outputs=outputs,
        dtypes=_CHANNEL_DTYPES,
    )
    if isinstance(out[0], xr.DataArray):
        return xr.Dataset(dict(zip(_CHANNEL_KEYS, out)))
    return dict(zip(_CHANNEL_KEYS, out))


_CHANNEL_KEYS = (
    "axis_depth",
    "axis_speed",
    "axis_contrast",
    "secondary_depth",
    "secondary_speed",
    "secondary_contrast",
    "secondary_thickness",
    "still_decreasing",
)
_CHANNEL_DTYPES = [np.float64] * 7 + [np.bool_]
_CHANNEL_ATTRS = {
    "axis_depth": {"long_name": "deep sound channel axis depth", "units": "m"},
    "axis_speed": _cf.attrs_for("sound_speed", long_name="sound speed on the channel axis"),
    "axis_contrast": {
        "long_name": "rise of sound speed needed to escape the channel",
        "units": "m s-1",
    },
    "secondary_depth": {"long_name": "secondary sound channel depth", "units": "m"},
    "secondary_speed": _cf.attrs_for(
        "sound_speed", long_name="sound speed on the secondary channel"
    ),
    "secondary_contrast": {
        "long_name": "sound speed rise bounding the secondary channel",
        "units": "m s-1",
    },
    "secondary_thickness": {
        "long_name": "thickness of the secondary channel's trapping region",
        "units": "m",
    },
    "still_decreasing": {
        "long_name": "sound speed still decreases at the deepest valid "
        "sample (the axis may lie deeper)",
        "units": "1",
    },
}


def _channels_1d(min_contrast, min_thickness, sound_speed, depth, below):
    z, c = _valid_1d(depth, sound_speed)
    nan = float("nan")
    out = dict(
        axis_depth=nan,
        axis_speed=nan,
        axis_contrast=nan,
        secondary_depth=nan,
        secondary_speed=nan,
        secondary_contrast=nan,
        secondary_thickness=nan,
        still_decreasing=False,
    )
    if np.isfinite(below):
        keep = z >= below
        z, c = z[keep], c[keep]
    if z.size < 3:
        return tuple(out.values())
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
            out.update(
                secondary_depth=float(z[j]),
                secondary_speed=float(c[j]),
                secondary_contrast=float(props["prominences"][k]),
                secondary_thickness=float(thick[k]),
            )
    return tuple(out.values())


def speed_at(sound_speed, depth, at, *, dim="depth"):
    """Sound speed at depth ``at``, m/s, by linear interpolation (NaN outside the profile).

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s (along the last axis / ``dim``, NaN = missing).
    depth : array_like, dask array, xarray.DataArray or None
        Depth, m, positive down, strictly increasing (None: the DataArray's ``dim``
        coordinate).
    at : array_like
        Depths to evaluate, m: any shape for one numpy profile, else one value per
        profile (broadcast over the profile axes).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    numpy.ndarray or float, dask array or xarray.DataArray
        Sound speed, m/s (``numpy.interp`` between valid samples).
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    out = columnwise(
        lambda c, z, a: _per_profile(_speed_at_1d, [np.float64], [c, z], [a], vectorised=True),
        columns,
        dim=dim,
        params=[("at", at)],
        outputs=[("sound_speed", _cf.attrs_for("sound_speed"))],
    )
    return out[0] if isinstance(out, tuple) else out


def _speed_at_1d(sound_speed, depth, at):
    z, c = _valid_1d(depth, sound_speed)
    a = np.asarray(at, dtype=np.float64)
    if z.size == 0:
        return (_scalar(np.full(a.shape, np.nan)),)
    return (_scalar(np.interp(a, z, c, left=np.nan, right=np.nan)),)


def critical_depth(sound_speed, depth, reference_speed, axis_depth, *, dim="depth"):
    """Critical (conjugate) depth: where sound speed below the axis regains a reference, m.

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s (along the last axis / ``dim``, NaN = missing).
    depth : array_like, dask array, xarray.DataArray or None
        Depth, m, positive down, strictly increasing (None: the DataArray's ``dim``
        coordinate).
    reference_speed : float or array over the profile axes
        The speed to regain, m/s: the surface speed, the sonic-layer maximum, or the
        speed at a source depth.
    axis_depth : float or array over the profile axes
        Depth of the sound channel axis, m.
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    float, numpy.ndarray, dask array or xarray.DataArray
        The shallowest depth below ``axis_depth`` where sound speed reaches
        ``reference_speed`` (linear interpolation), m; NaN when it is not reached within
        the profile or there is no axis.

    Notes
    -----
    By Snell's law a ray that is horizontal where the sound speed equals the reference
    speed turns again where the speed regains it, so this is the deepest turning depth of
    rays horizontal at the reference depth (the plain geometric definition).
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    attrs = {
        "long_name": "critical depth: below the axis, where sound speed regains the "
        "reference speed",
        "units": "m",
        "positive": "down",
    }
    out = columnwise(
        lambda c, z, r, a: _per_profile(_critical_1d, [np.float64], [c, z], [r, a]),
        columns,
        dim=dim,
        params=[("reference_speed", reference_speed), ("axis_depth", axis_depth)],
        outputs=[("critical_depth", attrs)],
    )
    return out[0] if isinstance(out, tuple) else out


def _critical_1d(sound_speed, depth, reference_speed, axis_depth):
    return (_critical_value(sound_speed, depth, reference_speed, axis_depth),)


def _critical_value(sound_speed, depth, reference_speed, axis_depth):
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
    """Depth excess = bottom depth - critical depth, m (NaN when there is no critical depth).

    Parameters
    ----------
    bottom_depth : array_like, dask array or xarray.DataArray
        Sea floor depth, m.
    critical : array_like, dask array or xarray.DataArray
        Critical depth, m (NaN when not reached).

    Returns
    -------
    float, numpy.ndarray, dask array or xarray.DataArray
        Positive when the water is deeper than the critical depth (a deep sound channel
        with refracted-refracted paths), negative when the bottom is shallower; NaN where
        either is NaN. A point-wise function (bottom first, as in the definition).
    """
    attrs = {"long_name": "depth excess: bottom depth minus critical depth", "units": "m"}
    return pointwise(
        lambda b, c: _scalar(np.asarray(b - c)),
        [("bottom_depth", bottom_depth), ("critical", critical)],
        name="depth_excess",
        attrs=attrs,
    )
