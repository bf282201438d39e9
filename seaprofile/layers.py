"""Profile diagnostics: mixed and sonic layers, surface duct, sound channels, critical depth.

Each diagnostic is a plain function on arrays (depth in m, positive down and increasing;
sound speed in m/s; temperature in degC; potential density anomaly in kg/m3). Missing
values are NaN and are skipped. :func:`describe` runs them all on a Profile Dataset,
ignoring bins flagged bad (Argo flags 3, 4 and 9), and returns a JSON-friendly dict;
:func:`describe_dataset` returns the same numbers as an ``xarray.Dataset`` with CF
attributes.

The mixed-layer and sonic-layer scans are numba kernels that accept many profiles at once
(depth along the last axis).
"""

from __future__ import annotations

import math

import numba
import numpy as np
import xarray as xr
from scipy.signal import find_peaks

from . import _cf
from ._validate import SeaprofileError, as_float_array

__all__ = [
    "mixed_layer_depth",
    "mixed_layer_depth_density",
    "sonic_layer_depth",
    "layer_gradients",
    "duct_cutoff_frequency",
    "sound_channels",
    "critical_depth",
    "depth_excess",
    "harmonic_mean_sound_speed",
    "speed_at",
    "describe",
    "describe_dataset",
    "TRAPPING_COEFFICIENT",
]

TRAPPING_COEFFICIENT = 8.5e-3
"""Surface-duct trapping rule lambda_max = 8.5e-3 * H**1.5 (lambda, H in m); common practice."""

BAD_FLAGS = (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING)


# --- numba kernels -------------------------------------------------------------------
@numba.njit(cache=True)
def _crossing_kernel(values, depth, ref_depth, threshold, signed, out, reached_end):
    """Depth where ``values`` first departs from its value at ``ref_depth`` by ``threshold``.

    Rows are profiles. ``signed`` 0: |v - v_ref| >= threshold; 1: v - v_ref >= threshold.
    Linear interpolation between samples. No crossing: deepest valid depth, reached_end=1.
    """
    nrow, n = values.shape
    for r in range(nrow):
        out[r] = np.nan
        reached_end[r] = False
        # reference value: linear interpolation at ref_depth between valid neighbours
        above = -1
        below = -1
        for i in range(n):
            if math.isnan(values[r, i]):
                continue
            if depth[r, i] <= ref_depth:
                above = i
            elif below < 0:
                below = i
                break
        if above < 0:
            continue
        if depth[r, above] == ref_depth or below < 0:
            if depth[r, above] != ref_depth:
                continue
            ref = values[r, above]
        else:
            za = depth[r, above]
            zb = depth[r, below]
            ref = values[r, above] + (values[r, below] - values[r, above]) * (
                (ref_depth - za) / (zb - za)
            )
        zp = ref_depth
        dp = 0.0
        last = ref_depth
        found = False
        for i in range(n):
            v = values[r, i]
            if math.isnan(v) or depth[r, i] <= ref_depth:
                continue
            d = v - ref
            if signed == 0:
                d = abs(d)
            if d >= threshold:
                zi = depth[r, i]
                if d == dp:
                    out[r] = zi
                else:
                    out[r] = zp + (threshold - dp) * (zi - zp) / (d - dp)
                found = True
                break
            zp = depth[r, i]
            dp = d
            last = zp
        if not found:
            out[r] = last
            reached_end[r] = True


@numba.njit(cache=True)
def _sonic_layer_kernel(speed, depth, tolerance, out_depth, out_speed, reached_end):
    """Depth of the near-surface sound-speed maximum, one row per profile.

    Scan downward keeping the running maximum; stop at the first valid sample more than
    ``tolerance`` below it. The layer depth is the depth of that running maximum.
    """
    nrow, n = speed.shape
    for r in range(nrow):
        best = -np.inf
        zbest = np.nan
        stopped = False
        for i in range(n):
            c = speed[r, i]
            if math.isnan(c):
                continue
            if c > best:
                best = c
                zbest = depth[r, i]
            elif c < best - tolerance:
                stopped = True
                break
        out_depth[r] = zbest
        out_speed[r] = best if not math.isnan(zbest) else np.nan
        reached_end[r] = not stopped and not math.isnan(zbest)


# --- helpers -------------------------------------------------------------------------
def _rows(name, values, depth):
    """Values as 2-D rows (profiles x depth) and depth broadcast to the same shape."""
    v = as_float_array(name, values)
    z = as_float_array("depth", depth)
    if v.ndim == 0 or v.shape[-1] < 2:
        raise SeaprofileError(f"{name} needs at least two samples along its last axis")
    try:
        z = np.broadcast_to(z, v.shape)
    except ValueError as exc:
        raise SeaprofileError(
            f"depth of shape {z.shape} does not match {name} of shape {v.shape}"
        ) from exc
    zz = z.reshape(-1, v.shape[-1])
    if not np.all(np.diff(zz, axis=-1) > 0):
        raise SeaprofileError("depth must be strictly increasing along the last axis")
    return (
        np.ascontiguousarray(v.reshape(-1, v.shape[-1])),
        np.ascontiguousarray(zz),
        v.shape[:-1],
    )


def _valid_1d(depth, sound_speed):
    z = as_float_array("depth", depth)
    c = as_float_array("sound_speed", sound_speed)
    if z.ndim != 1 or c.shape != z.shape:
        raise SeaprofileError(
            f"depth and sound_speed must be 1-D of one length, got {z.shape} and {c.shape}"
        )
    ok = np.isfinite(z) & np.isfinite(c)
    z, c = z[ok], c[ok]
    if z.size and not np.all(np.diff(z) > 0):
        raise SeaprofileError("depth must be strictly increasing")
    return z, c


def _scalar(x):
    return x.item() if isinstance(x, np.ndarray) and x.ndim == 0 else x


# --- mixed layer ---------------------------------------------------------------------
def mixed_layer_depth(temperature, depth="depth", *, threshold=0.2, reference_depth=10.0,
                      return_reached_end=False):
    """Mixed layer depth by the temperature criterion, m.

    Parameters
    ----------
    temperature : array_like or xarray.DataArray
        In-situ temperature, degC; depth along the last axis; NaN = missing. A DataArray
        (numpy- or dask-backed) is reduced along its ``depth`` dimension and returns a
        DataArray with CF attributes.
    depth : array_like or str
        Depth, m, positive down, strictly increasing (1-D, or the shape of
        ``temperature``); for a DataArray, the name of the depth dimension (default
        ``"depth"``).
    threshold : float
        Temperature difference from the reference depth, degC (default 0.2).
    reference_depth : float
        Reference depth, m (default 10).
    return_reached_end : bool
        Also return a boolean array, True where no sample departed by ``threshold``
        (the result is then the deepest valid depth: a lower bound).

    Returns
    -------
    numpy.ndarray or float
        Mixed layer depth, m; NaN where no valid sample lies at or above the reference
        depth or none lies below it.

    Notes
    -----
    de Boyer Montégut, C., Madec, G., Fischer, A. S., Lazar, A. & Iudicone, D. (2004),
    Mixed layer depth over the global ocean: an examination of profile data and a
    profile-based climatology, J. Geophys. Res. 109, C12003, doi:10.1029/2004JC002378:
    the mixed layer depth is the depth where |T(z) - T(10 m)| first reaches 0.2 degC,
    found by linear interpolation between samples. The reference value is linearly
    interpolated at 10 m.
    """
    return _crossing("temperature", temperature, depth, threshold, reference_depth, 0,
                     return_reached_end)


def mixed_layer_depth_density(potential_density, depth="depth", *, threshold=0.03,
                              reference_depth=10.0, return_reached_end=False):
    """Mixed layer depth by the density criterion, m.

    Parameters
    ----------
    potential_density : array_like or xarray.DataArray
        Potential density (or its anomaly sigma-theta), kg/m3, referred to the sea
        surface; depth along the last axis; NaN = missing (DataArray: as in
        :func:`mixed_layer_depth`).
    depth : array_like or str
        Depth, m, positive down, strictly increasing (or the DataArray's depth dimension).
    threshold : float
        Increase of potential density over its value at the reference depth, kg/m3
        (default 0.03).
    reference_depth : float
        Reference depth, m (default 10).
    return_reached_end : bool
        Also return the "no crossing" mask (see :func:`mixed_layer_depth`).

    Returns
    -------
    numpy.ndarray or float
        Mixed layer depth, m.

    Notes
    -----
    de Boyer Montégut et al. (2004), J. Geophys. Res. 109, C12003,
    doi:10.1029/2004JC002378: sigma-theta(z) - sigma-theta(10 m) = 0.03 kg/m3, linear
    interpolation between samples.
    """
    return _crossing("potential_density", potential_density, depth, threshold,
                     reference_depth, 1, return_reached_end)


def _on_dataarray(func, values, depth, attrs, **kwargs):
    """xarray layer: apply ``func`` along the ``depth`` dimension (dask="parallelized")."""
    dim = depth if isinstance(depth, str) else "depth"
    if dim not in values.dims:
        raise SeaprofileError(f"the DataArray has no dimension {dim!r}")
    out = xr.apply_ufunc(
        lambda v, z: func(v, z, **kwargs), values, values[dim],
        input_core_dims=[[dim], [dim]], dask="parallelized", output_dtypes=[np.float64])
    out.attrs.update(attrs)
    return out


def _crossing(name, values, depth, threshold, reference_depth, signed, return_end):
    if isinstance(values, xr.DataArray) and not return_end:
        kind = "temperature" if signed == 0 else "density"
        attrs = _cf.attrs_for("mixed_layer_depth",
                              comment=f"{kind} criterion {threshold:g} from {reference_depth:g} "
                              "m (de Boyer Montegut et al. 2004)")
        return _on_dataarray(
            lambda v, z: _crossing(name, v, z, threshold, reference_depth, signed, False),
            values, depth, attrs)
    v, z, shape = _rows(name, values, depth)
    if not threshold > 0:
        raise SeaprofileError(f"threshold must be positive, got {threshold!r}")
    out = np.empty(v.shape[0])
    end = np.zeros(v.shape[0], dtype=np.bool_)
    _crossing_kernel(v, z, float(reference_depth), float(threshold), signed, out, end)
    out = _scalar(out.reshape(shape))
    end = _scalar(end.reshape(shape))
    return (out, end) if return_end else out


# --- sonic layer and gradients -------------------------------------------------------
def sonic_layer_depth(sound_speed, depth="depth", *, tolerance=0.2, return_reached_end=False):
    """Sonic layer depth: the depth of the near-surface sound-speed maximum, m.

    Parameters
    ----------
    sound_speed : array_like or xarray.DataArray
        Sound speed, m/s; depth along the last axis; NaN = missing. A DataArray is reduced
        along its depth dimension and only the layer depth is returned (a DataArray).
    depth : array_like or str
        Depth, m, positive down, strictly increasing (or the DataArray's depth dimension).
    tolerance : float
        Decrease below the running maximum, m/s, that ends the near-surface layer
        (default 0.2 m/s; keeps sensor noise from ending the layer early).
    return_reached_end : bool
        Also return a boolean array, True where sound speed never fell by ``tolerance``
        (the layer reaches the deepest valid sample, e.g. an isothermal winter column).

    Returns
    -------
    depth : numpy.ndarray or float
        Sonic layer depth, m. Equal to the shallowest valid depth when sound speed
        decreases from the surface (no surface duct).
    speed : numpy.ndarray or float
        Sound speed at that depth, m/s.

    Notes
    -----
    Helber, R. W., Barron, C. N., Carnes, M. R. & Zingarelli, R. A. (2008), Evaluating
    the sonic layer depth relative to the mixed layer depth, J. Geophys. Res. 113,
    C07033 (title and article number from memory): the sonic layer depth is the depth of
    the near-surface sound-speed maximum.
    Our rule for "near-surface": scan downward from the shallowest valid sample and stop
    at the first sample more than ``tolerance`` below the running maximum.
    """
    if isinstance(sound_speed, xr.DataArray) and not return_reached_end:
        attrs = {"long_name": "sonic layer depth (near-surface sound speed maximum)",
                 "units": "m", "positive": "down"}
        return _on_dataarray(lambda c, z, **kw: sonic_layer_depth(c, z, **kw)[0],
                             sound_speed, depth, attrs, tolerance=tolerance)
    c, z, shape = _rows("sound_speed", sound_speed, depth)
    if not tolerance >= 0:
        raise SeaprofileError(f"tolerance must be >= 0, got {tolerance!r}")
    zd = np.empty(c.shape[0])
    cs = np.empty(c.shape[0])
    end = np.zeros(c.shape[0], dtype=np.bool_)
    _sonic_layer_kernel(c, z, float(tolerance), zd, cs, end)
    out = (_scalar(zd.reshape(shape)), _scalar(cs.reshape(shape)))
    return out + (_scalar(end.reshape(shape)),) if return_reached_end else out


def _slope(z, c):
    if z.size < 2 or np.ptp(z) == 0:
        return np.nan
    zm = z - z.mean()
    return float(np.dot(zm, c - c.mean()) / np.dot(zm, zm))


def layer_gradients(depth, sound_speed, layer_depth, *, below_thickness=50.0):
    """Sound-speed gradients in and below a surface layer, 1/s ((m/s)/m).

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down, strictly increasing (1-D).
    sound_speed : array_like
        Sound speed, m/s (1-D, NaN = missing).
    layer_depth : float
        Depth of the layer's base (usually the sonic layer depth), m.
    below_thickness : float
        Thickness below the layer over which the below-layer gradient is fitted, m
        (default 50 m, clipped to the deepest valid sample).

    Returns
    -------
    in_layer, below_layer : float
        Least-squares slopes dc/dz, 1/s, of the samples in [surface, layer_depth] and in
        [layer_depth, layer_depth + below_thickness]; NaN with fewer than two samples.

    Notes
    -----
    A least-squares slope is used rather than end-point differences so that sensor noise
    in single bins does not dominate. For reference, isothermal, isohaline water has a
    gradient of about +0.016 1/s from pressure alone (common practice, no source).
    """
    z, c = _valid_1d(depth, sound_speed)
    if not np.isfinite(layer_depth):
        return np.nan, np.nan
    inside = z <= layer_depth
    below = (z >= layer_depth) & (z <= layer_depth + below_thickness)
    return _slope(z[inside], c[inside]), _slope(z[below], c[below])


def duct_cutoff_frequency(layer_depth, sound_speed=1500.0):
    """Lowest frequency trapped in a surface duct of thickness ``layer_depth``, Hz.

    Parameters
    ----------
    layer_depth : array_like
        Duct thickness (sonic layer depth), m; must be positive.
    sound_speed : array_like
        Sound speed in the duct, m/s (default 1500).

    Returns
    -------
    numpy.ndarray or float
        ``f_min = c / lambda_max`` with ``lambda_max = 8.5e-3 * H**1.5`` (lambda, H in
        m), Hz. About 1.07 kHz for a 30 m layer at 1500 m/s.

    Notes
    -----
    The trapping rule lambda_max ~ 8.5e-3 H^1.5 is a textbook rule of thumb (common
    practice; not traced here to a primary source). It assumes the gradient of an
    isothermal layer; treat the result as an order of magnitude.
    """
    h = as_float_array("layer_depth", layer_depth)
    c = as_float_array("sound_speed", sound_speed)
    with np.errstate(divide="ignore", invalid="ignore"):
        f = c / (TRAPPING_COEFFICIENT * np.where(h > 0, h, np.nan) ** 1.5)
    return _scalar(f)


# --- sound channels and critical depth -----------------------------------------------
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


def _slowness_segments(z, c):
    """Exact integral of 1/c over each linear segment, s."""
    dz = np.diff(z)
    x = np.diff(c) / c[:-1]
    with np.errstate(divide="ignore", invalid="ignore"):
        f = np.where(np.abs(x) > 1e-9, np.log1p(x) / x, 1.0 - x / 2.0)
    return dz / c[:-1] * f


def harmonic_mean_sound_speed(depth, sound_speed, top, bottom):
    """Harmonic mean sound speed between depths ``top`` and ``bottom``, m/s.

    Parameters
    ----------
    depth : array_like
        Depth, m, positive down, strictly increasing (1-D).
    sound_speed : array_like
        Sound speed, m/s (1-D, NaN = missing).
    top, bottom : array_like
        Depths, m, broadcast against each other (e.g. a transducer depth and many
        bottom depths). Above the shallowest sample the shallowest speed is held
        constant up to the sea surface; below the deepest sample the result is NaN.

    Returns
    -------
    numpy.ndarray or float
        ``(bottom - top) / integral(dz / c)``, m/s; the speed at ``top`` when
        ``bottom`` and ``top`` are less than 1e-6 m apart.

    Notes
    -----
    The profile is taken as piecewise linear between samples, and each segment is
    integrated exactly: for c = c_a + g (z - z_a), integral dz/c = ln(c_b / c_a) / g
    (and dz / c_a when g = 0). Fully vectorised over ``top`` and ``bottom``.
    """
    z, c = _valid_1d(depth, sound_speed)
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
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(np.abs(x) > 1e-9, np.log1p(x) / x, 1.0 - x / 2.0)
        res = cum[k] + (d - z[k]) / c[k] * f
        return np.where(d <= z[-1], res, np.nan)

    lo, hi = np.minimum(t, b), np.maximum(t, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        hm = (hi - lo) / (integral_to(hi) - integral_to(lo))
    same = hi - lo < 1e-6  # thinner than a micrometre: the local speed
    if np.any(same):
        hm = np.where(same, np.interp(lo, z, c, right=np.nan), hm)
    return _scalar(hm)


# --- the whole set on a Profile ------------------------------------------------------
# name -> (units, long_name)
_FIELDS = {
    'surface_depth': ('m', 'depth of the shallowest valid bin'),
    'surface_sound_speed': ('m s-1', 'sound speed in the shallowest valid bin'),
    'min_sound_speed': ('m s-1', 'minimum sound speed'),
    'min_sound_speed_depth': ('m', 'depth of minimum sound speed'),
    'max_sound_speed': ('m s-1', 'maximum sound speed'),
    'max_sound_speed_depth': ('m', 'depth of maximum sound speed'),
    'mixed_layer_depth_temperature': ('m', 'mixed layer depth (0.2 degC from 10 m)'),
    'mixed_layer_depth_density': ('m', 'mixed layer depth (0.03 kg m-3 from 10 m)'),
    'sonic_layer_depth': ('m', 'sonic layer depth (near-surface sound speed maximum)'),
    'sonic_layer_sound_speed': ('m s-1', 'sound speed at the sonic layer depth'),
    'in_layer_gradient': ('s-1', 'sound speed gradient within the sonic layer'),
    'below_layer_gradient': ('s-1', 'sound speed gradient below the sonic layer'),
    'duct_cutoff_frequency': ('Hz', 'lowest frequency trapped in the surface duct'),
    'channel_axis_depth': ('m', 'deep sound channel axis depth'),
    'channel_axis_sound_speed': ('m s-1', 'sound speed on the channel axis'),
    'channel_axis_contrast': ('m s-1', 'rise of sound speed needed to escape the channel'),
    'secondary_channel_depth': ('m', 'secondary sound channel depth'),
    'secondary_channel_sound_speed': ('m s-1', 'sound speed on the secondary channel'),
    'secondary_channel_contrast': ('m s-1', 'sound speed rise bounding the secondary channel'),
    'secondary_channel_thickness': ('m', "thickness of the secondary channel's trapping region"),
    'critical_depth_surface': ('m', 'depth below the axis where c equals the surface c'),
    'critical_depth_layer': ('m', 'depth below the axis where c equals the layer maximum'),
    'source_depth': ('m', 'source depth'),
    'source_sound_speed': ('m s-1', 'sound speed at the source depth'),
    'critical_depth_source': ('m', 'conjugate depth of the source across the channel axis'),
    'bottom_depth': ('m', 'sea floor depth below the sea surface'),
    'depth_excess_surface': ('m', 'bottom depth minus critical depth (surface reference)'),
    'depth_excess_layer': ('m', 'bottom depth minus critical depth (layer reference)'),
    'transducer_depth': ('m', 'transducer depth'),
    'harmonic_mean_to_depth': ('m', 'lower depth of the harmonic mean'),
    'harmonic_mean_sound_speed': ('m s-1', 'harmonic mean sound speed, transducer to lower depth'),
    'deepest_valid_depth': ('m', 'depth of the deepest valid bin'),
}
_UNITS = {k: v[0] for k, v in _FIELDS.items()}
_LONG_NAMES = {k: v[1] for k, v in _FIELDS.items()}


def _masked(profile, name, flags, include_estimated):
    if name not in profile:
        return None
    v = np.array(profile[name].values, dtype=np.float64, copy=True)
    bad = set(BAD_FLAGS) | (set() if include_estimated else {_cf.ESTIMATED})
    for f in flags:
        q = f"{f}_qc"
        if q in profile:
            v[np.isin(np.asarray(profile[q].values), list(bad))] = np.nan
    return v


def _estimated_top(profile):
    """Depth below which the Profile was extended (``cast_max_depth``), or None."""
    z = np.asarray(profile["depth"].values, dtype=np.float64)
    top = profile.attrs.get("cast_max_depth")
    if top is None and "sound_speed_qc" in profile:
        q = np.asarray(profile["sound_speed_qc"].values)
        measured = z[q != _cf.ESTIMATED]
        top = measured.max() if measured.size else None
    if top is None or not np.any(z > float(top)):
        return None
    return float(top)


def _num(x):
    if x is None:
        return None
    x = float(x)
    return x if np.isfinite(x) else None


def describe(profile, *, bottom_depth=None, source_depth=None, transducer_depth=0.0,
             include_estimated=True, min_contrast=1.0):
    """All diagnostics of one Profile, as a JSON-friendly dict.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (dimension ``depth`` in m; ``sound_speed`` m/s; ``temperature`` degC,
        ``salinity``, ``pressure`` dbar and ``<var>_qc`` flags when present).
    bottom_depth : float, optional
        Sea floor depth, m, for the depth excess and the harmonic mean (default: the
        deepest valid bin; said in ``notes``).
    source_depth : float, optional
        Source depth, m, for the source's conjugate depth.
    transducer_depth : float
        Upper depth of the harmonic mean, m (default 0).
    include_estimated : bool
        Use bins flagged 8 (estimated, e.g. the extension to the bottom); default True.
        Bins flagged 3, 4 or 9 and NaN values are always ignored.
    min_contrast : float
        Smallest sound-speed rise, m/s, that makes a channel (see :func:`sound_channels`).

    Returns
    -------
    dict
        Numbers (float or None when not defined) under the keys of ``units``; plus
        ``units``, ``long_names``, ``cast_name``, ``equation``, ``surface_duct``
        (bool), ``notes`` (list of str) and ``caution``.

    Notes
    -----
    Critical depths: ``critical_depth_surface`` uses the sound speed in the shallowest
    valid bin as reference, ``critical_depth_layer`` the sonic-layer maximum (the larger
    speed, so the deeper or equal depth). ``critical_depth_source`` uses the speed at
    ``source_depth``, searched below the axis when the source is above it and above the
    axis when the source is below it.
    """
    if not isinstance(profile, xr.Dataset) or "depth" not in profile.dims:
        raise SeaprofileError("profile must be a Profile Dataset with a 'depth' dimension")
    if "sound_speed" not in profile:
        raise SeaprofileError("profile has no 'sound_speed' variable")
    z = np.asarray(profile["depth"].values, dtype=np.float64)
    c = _masked(profile, "sound_speed", ["sound_speed", "temperature", "salinity"],
                include_estimated)
    temp = _masked(profile, "temperature", ["temperature"], include_estimated)
    notes = []
    res = {k: None for k in _UNITS}
    res.update(cast_name=str(profile.attrs.get("cast_name", "")),
               equation=profile.attrs.get("equation"), surface_duct=False)
    ok = np.isfinite(c)
    if ok.sum() < 2:
        raise SeaprofileError("profile has fewer than two valid sound-speed bins")
    zv, cv = z[ok], c[ok]
    res.update(surface_depth=zv[0], surface_sound_speed=cv[0], deepest_valid_depth=zv[-1],
               min_sound_speed=cv.min(), min_sound_speed_depth=zv[np.argmin(cv)],
               max_sound_speed=cv.max(), max_sound_speed_depth=zv[np.argmax(cv)])

    # mixed layer
    if temp is not None:
        mld, end = mixed_layer_depth(temp, z, return_reached_end=True)
        res["mixed_layer_depth_temperature"] = mld
        if end:
            notes.append("temperature never departs 0.2 degC from its 10 m value: the mixed "
                         "layer reaches the deepest valid bin (a lower bound)")
    sal = _masked(profile, "salinity", ["salinity"], include_estimated)
    if temp is not None and sal is not None and "pressure" in profile:
        from .seawater.state import potential_density_anomaly

        lat = float(profile["latitude"]) if "latitude" in profile.coords else np.nan
        lon = float(profile["longitude"]) if "longitude" in profile.coords else np.nan
        sigma = potential_density_anomaly(
            temp, sal, np.asarray(profile["pressure"].values, dtype=np.float64),
            lat if np.isfinite(lat) else None, lon if np.isfinite(lon) else None)
        mld, end = mixed_layer_depth_density(np.asarray(sigma, dtype=np.float64), z,
                                             return_reached_end=True)
        res["mixed_layer_depth_density"] = mld
        if end:
            notes.append("density never rises 0.03 kg/m3 above its 10 m value: the mixed "
                         "layer reaches the deepest valid bin (a lower bound)")

    # sonic layer, gradients, surface duct
    sld, sld_c, sld_end = sonic_layer_depth(c, z, return_reached_end=True)
    res.update(sonic_layer_depth=sld, sonic_layer_sound_speed=sld_c)
    if sld > zv[0]:
        res["surface_duct"] = True
        g_in, g_below = layer_gradients(z, c, sld)
        res.update(in_layer_gradient=g_in, below_layer_gradient=g_below,
                   duct_cutoff_frequency=duct_cutoff_frequency(sld, sld_c))
        if sld_end:
            notes.append("sound speed increases to the deepest valid bin: the whole "
                         "column is a surface duct")
    else:
        _, g_below = layer_gradients(z, c, sld)
        res["below_layer_gradient"] = g_below
        notes.append("sound speed decreases from the surface: no surface duct")

    # channels
    ch = sound_channels(z, c, below=sld, min_contrast=min_contrast)
    res.update(channel_axis_depth=ch["axis_depth"], channel_axis_sound_speed=ch["axis_speed"],
               channel_axis_contrast=ch["axis_contrast"],
               secondary_channel_depth=ch["secondary_depth"],
               secondary_channel_sound_speed=ch["secondary_speed"],
               secondary_channel_contrast=ch["secondary_contrast"],
               secondary_channel_thickness=ch["secondary_thickness"])
    if ch["still_decreasing"]:
        notes.append("sound speed still decreases at the deepest valid bin: no channel axis "
                     "within the profile")
    axis = ch["axis_depth"]
    res["critical_depth_surface"] = critical_depth(z, c, cv[0], axis)
    res["critical_depth_layer"] = critical_depth(z, c, sld_c, axis)
    if np.isfinite(axis) and res["critical_depth_layer"] is not None \
            and not np.isfinite(res["critical_depth_layer"]):
        notes.append("sound speed below the axis never regains the near-surface speed "
                     "within the profile: no critical depth (no depth excess)")

    if source_depth is not None:
        cs = speed_at(z, c, source_depth)
        res.update(source_depth=source_depth, source_sound_speed=cs)
        if np.isfinite(axis) and np.isfinite(cs):
            if source_depth <= axis:
                res["critical_depth_source"] = critical_depth(z, c, cs, axis)
            else:  # mirror: search upward from the axis
                keep = (z <= axis) & np.isfinite(c)
                zu, cu = z[keep][::-1], c[keep][::-1]
                res["critical_depth_source"] = -critical_depth(-zu, cu, cs, -axis)

    # bottom, depth excess, harmonic mean
    lower = zv[-1] if bottom_depth is None else float(bottom_depth)
    if bottom_depth is None:
        notes.append("no bottom depth given: harmonic mean taken to the deepest valid bin, "
                     "no depth excess")
    else:
        res["bottom_depth"] = float(bottom_depth)
        res["depth_excess_surface"] = depth_excess(bottom_depth, res["critical_depth_surface"])
        res["depth_excess_layer"] = depth_excess(bottom_depth, res["critical_depth_layer"])
        if lower > zv[-1]:
            notes.append("bottom depth lies below the deepest valid bin: extend the profile "
                         "to the bottom first; no harmonic mean")
    res["transducer_depth"] = float(transducer_depth)
    res["harmonic_mean_to_depth"] = lower
    res["harmonic_mean_sound_speed"] = harmonic_mean_sound_speed(z, c, transducer_depth, lower)
    est_top = _estimated_top(profile)
    if include_estimated and est_top is not None:
        for k in ("critical_depth_surface", "critical_depth_layer", "channel_axis_depth"):
            v = res[k]
            if v is not None and np.isfinite(v) and v > est_top:
                notes.append(f"{k} lies in the estimated (extended) part below {est_top:g} m")

    for k in _UNITS:
        if k in res and not isinstance(res[k], str):
            res[k] = _num(res[k])
    res["units"] = dict(_UNITS)
    res["long_names"] = dict(_LONG_NAMES)
    res["notes"] = notes
    res["caution"] = _cf.CAUTION
    return res


def describe_dataset(profile, **kwargs):
    """The diagnostics of :func:`describe` as an ``xarray.Dataset`` of scalars with CF attrs.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile.
    **kwargs
        Passed to :func:`describe` (``bottom_depth`` m, ``source_depth`` m,
        ``transducer_depth`` m, ...).

    Returns
    -------
    xarray.Dataset
        One scalar variable per number (NaN when not defined), with ``units`` and
        ``long_name``; the mixed layer depths and bottom depth carry their CF standard
        names. The Profile's scalar coordinates and provenance are kept.
    """
    d = describe(profile, **kwargs)
    data = {}
    for k, unit in _UNITS.items():
        attrs = {"long_name": _LONG_NAMES[k], "units": unit}
        if k.startswith("mixed_layer_depth"):
            attrs["standard_name"] = "ocean_mixed_layer_thickness"
        elif k == "bottom_depth":
            attrs["standard_name"] = "sea_floor_depth_below_sea_surface"
        elif k.endswith("sound_speed") and not k.startswith("harmonic"):
            attrs["standard_name"] = "speed_of_sound_in_sea_water"
        v = d[k]
        data[k] = ((), np.nan if v is None else v, attrs)
    coords = {k: profile.coords[k] for k in ("latitude", "longitude", "time", "profile_id")
              if k in profile.coords}
    attrs = _cf.base_attrs(
        processing_steps=profile.attrs.get("processing_steps", "[]"),
        history=profile.attrs.get("history", ""),
        equation=str(d["equation"]), surface_duct=int(d["surface_duct"]),
        notes="\n".join(d["notes"]),
    )
    attrs = _cf.record_step(attrs, "describe", **{k: v for k, v in kwargs.items()})
    return xr.Dataset(data, coords=coords, attrs=attrs)
