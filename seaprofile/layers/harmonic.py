"""Harmonic mean sound speed between two depths of a piecewise-linear profile."""

from __future__ import annotations

import numpy as np

from .._validate import SeaprofileError, as_float_array
from ..seawater._apply import columnwise
from ._common import _columns, _per_profile, _scalar, _valid_1d

__all__ = ["harmonic_mean_sound_speed"]


def _log_ratio_factor(x):
    """ln(1 + x) / x, by its series 1 - x/2 where |x| <= 1e-9 (avoids 0/0)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.abs(x) > 1e-9, np.log1p(x) / x, 1.0 - x / 2.0)


def _slowness_segments(z, c):
    """Exact integral of 1/c over each linear segment, s."""
    dz = np.diff(z)
    x = np.diff(c) / c[:-1]
    return dz / c[:-1] * _log_ratio_factor(x)


def harmonic_mean_sound_speed(sound_speed, depth, top, bottom, *, dim="depth"):
    """Harmonic mean sound speed between depths ``top`` and ``bottom``, m/s.

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s (along the last axis / ``dim``, NaN = missing).
    depth : array_like, dask array, xarray.DataArray or None
        Depth, m, positive down, strictly increasing (None: the DataArray's ``dim``
        coordinate).
    top, bottom : array_like
        Depths, m, broadcast against each other: any shape for one numpy profile (e.g. a
        transducer depth and many bottom depths), else one value per profile (broadcast
        over the profile axes). Above the shallowest sample the shallowest speed is held
        constant up to the sea surface; below the deepest sample the result is NaN.
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    numpy.ndarray or float, dask array or xarray.DataArray
        ``(bottom - top) / integral(dz / c)``, m/s; the speed at ``top`` when
        ``bottom`` and ``top`` are less than 1e-6 m apart.

    Notes
    -----
    The profile is taken as piecewise linear between samples, and each segment is
    integrated exactly: for c = c_a + g (z - z_a), integral dz/c = ln(c_b / c_a) / g
    (and dz / c_a when g = 0). Fully vectorised over ``top`` and ``bottom`` for one
    profile; many profiles are taken one at a time.
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    attrs = {"long_name": "harmonic mean sound speed between two depths", "units": "m s-1"}
    out = columnwise(
        lambda c, z, t, b: _per_profile(
            _harmonic_1d, [np.float64], [c, z], [t, b], vectorised=True
        ),
        columns,
        dim=dim,
        params=[("top", top), ("bottom", bottom)],
        outputs=[("harmonic_mean_sound_speed", attrs)],
    )
    return out[0] if isinstance(out, tuple) else out


def _harmonic_1d(sound_speed, depth, top, bottom):
    return (_harmonic_value(sound_speed, depth, top, bottom),)


def _harmonic_value(sound_speed, depth, top, bottom):
    z, c = _valid_1d(depth, sound_speed)
    return _harmonic_valid(z, c, top, bottom)


def _harmonic_valid(z, c, top, bottom):
    """The harmonic mean of one profile's valid samples (``_valid_1d``'s output)."""
    t = as_float_array("top", top)
    b = as_float_array("bottom", bottom)
    t, b = np.broadcast_arrays(t, b)
    if np.any(t < 0) or np.any(b < 0):
        raise SeaprofileError("top and bottom must be depths >= 0 m")
    if z.size == 0:
        return _scalar(np.full(t.shape, np.nan))
    if z[0] > 0:  # hold the shallowest speed constant up to the surface
        z = np.concatenate(([0.0], z))
        c = np.concatenate(([c[0]], c))
    if z.size == 1:
        z = np.array([0.0, np.inf])
        c = np.array([c[0], c[0]])
    cum = np.concatenate(([0.0], np.cumsum(_slowness_segments(z, c))))

    def integral_to(d):
        k = np.clip(np.searchsorted(z, d, side="right") - 1, 0, z.size - 2)
        cd = c[k] + (c[k + 1] - c[k]) * (d - z[k]) / (z[k + 1] - z[k])
        x = (cd - c[k]) / c[k]
        res = cum[k] + (d - z[k]) / c[k] * _log_ratio_factor(x)
        return np.where(d <= z[-1], res, np.nan), k, cd

    lo, hi = np.minimum(t, b), np.maximum(t, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        (to_hi, k_hi, c_hi), (to_lo, k_lo, c_lo) = integral_to(hi), integral_to(lo)
        slowness = to_hi - to_lo
        # both ends in one segment: integrate from lo to hi directly, as a difference of
        # two integrals from the surface cancels to ~1e-11 relative over short spans
        one = (k_hi == k_lo) & np.isfinite(slowness)
        if np.any(one):
            direct = (hi - lo) / c_lo * _log_ratio_factor((c_hi - c_lo) / c_lo)
            slowness = np.where(one, direct, slowness)
        hm = (hi - lo) / slowness
    same = hi - lo < 1e-6  # thinner than a micrometre: the local speed
    if np.any(same):
        hm = np.where(same, np.interp(lo, z, c, right=np.nan), hm)
    return _scalar(hm)
