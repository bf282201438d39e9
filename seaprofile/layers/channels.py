"""Sound channels (deep axis and a secondary channel), critical depth, depth excess and
the sound speed at a given depth.

Each takes ``(sound_speed, depth, ..., dim="depth")``: sound speed in m/s along the last
axis (numpy, many profiles at once) or along ``dim`` (xarray, dask), depth in m, positive
down and strictly increasing; NaN values are skipped. They go through the core-dimension
dispatcher :func:`seaprofile.seawater._apply.columnwise`.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import xarray as xr

from .. import _cf
from ..seawater._apply import columnwise, pointwise
from ._channel_kernels import _channels_kernel, _critical_kernel
from ._common import _columns, _per_profile, _profile_rows, _raise_unsorted, _scalar, _valid_1d

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
    prominent one. All profiles of a block in one numba kernel (no GIL held).
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    func = functools.partial(_channels_rows, float(min_contrast), float(min_thickness))
    outputs = [(k, _CHANNEL_ATTRS[k]) for k in _CHANNEL_KEYS]
    out = columnwise(
        func,
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


def _channels_rows(min_contrast, min_thickness, sound_speed, depth, below):
    (c, z), (b,), loop = _profile_rows([sound_speed, depth], [below])
    count = math.prod(loop)
    out = np.empty((7, count))
    still = np.empty(count, dtype=np.bool_)
    _raise_unsorted(_channels_kernel(c, z, b, min_contrast, min_thickness, out, still))
    return tuple(_scalar(o.reshape(loop)) for o in (*out, still))


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
        _critical_rows,
        columns,
        dim=dim,
        params=[("reference_speed", reference_speed), ("axis_depth", axis_depth)],
        outputs=[("critical_depth", attrs)],
    )
    return out[0] if isinstance(out, tuple) else out


def _critical_rows(sound_speed, depth, reference_speed, axis_depth):
    (c, z), (r, a), loop = _profile_rows([sound_speed, depth], [reference_speed, axis_depth])
    out = np.empty(math.prod(loop))
    _raise_unsorted(_critical_kernel(c, z, r, a, out))
    return (_scalar(out.reshape(loop)),)


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
