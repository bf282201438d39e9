"""Mixed layer depth (temperature and density criteria), sonic layer depth, layer
gradients and the surface-duct cut-off frequency.

Each diagnostic takes ``(profile variable, depth, ..., dim="depth")`` (depth in m, positive
down and increasing; sound speed in m/s; temperature in degC; potential density anomaly in
kg/m3) as numpy arrays (many profiles at once, depth along the last axis), xarray
DataArrays or dask arrays, through the core-dimension dispatcher
:func:`seaprofile.seawater._apply.columnwise`. Missing values are NaN and are skipped. The
mixed-layer and sonic-layer scans are numba kernels.
"""

from __future__ import annotations

import functools
import math

import numba
import numpy as np

from .. import _cf
from .._validate import SeaprofileError, as_float_array
from ..seawater._apply import columnwise, pointwise
from ._common import _columns, _per_profile, _scalar, _valid_1d

__all__ = [
    "mixed_layer_depth",
    "mixed_layer_depth_density",
    "sonic_layer_depth",
    "layer_gradients",
    "duct_cutoff_frequency",
    "TRAPPING_COEFFICIENT",
]

TRAPPING_COEFFICIENT = 8.5e-3
"""Surface-duct trapping rule lambda_max = 8.5e-3 * H**1.5 (lambda, H in m); common practice."""


# --- numba kernels -------------------------------------------------------------------
@numba.njit(cache=True, nogil=True)
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


@numba.njit(cache=True, nogil=True)
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
    if v.ndim == 1 and z.shape == v.shape:  # one profile: read-only views, no broadcast
        if not np.all(np.diff(z) > 0):
            raise SeaprofileError("depth must be strictly increasing along the last axis")
        return _readonly_row(v), _readonly_row(z), ()
    try:
        shape = np.broadcast_shapes(v.shape, z.shape)
        if shape[-1] != v.shape[-1]:
            raise ValueError
    except ValueError:
        raise SeaprofileError(
            f"depth of shape {z.shape} does not match {name} of shape {v.shape}"
        ) from None
    n = shape[-1]
    zz = np.broadcast_to(z, shape).reshape(-1, n)
    if not np.all(np.diff(zz, axis=-1) > 0):
        raise SeaprofileError("depth must be strictly increasing along the last axis")
    return (
        np.ascontiguousarray(np.broadcast_to(v, shape).reshape(-1, n)),
        np.ascontiguousarray(zz),
        shape[:-1],
    )


def _readonly_row(a):
    """One profile as a read-only ``(1, n)`` C-contiguous row (the broadcast rows' type,
    so the kernels keep one compiled signature)."""
    row = np.ascontiguousarray(a).reshape(1, -1)
    if row.base is None or row.flags.writeable:
        row = row.view()
        row.flags.writeable = False
    return row


_END_ATTRS = {
    "long_name": "no crossing within the profile: the value is the deepest valid "
    "depth (a lower bound)",
    "units": "1",
}


# --- mixed layer ---------------------------------------------------------------------
def mixed_layer_depth(
    temperature,
    depth=None,
    *,
    threshold=0.2,
    reference_depth=10.0,
    return_reached_end=False,
    dim="depth",
):
    """Mixed layer depth by the temperature criterion, m.

    Parameters
    ----------
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC; numpy/dask: depth along the last axis, xarray: along
        ``dim``; NaN = missing.
    depth : array_like, dask array or xarray.DataArray, optional
        Depth, m, positive down, strictly increasing (1-D, or the shape of
        ``temperature``). Default for a DataArray: its ``dim`` coordinate. (A string is
        read as ``dim``, the former calling form.)
    threshold : float
        Temperature difference from the reference depth, degC (default 0.2).
    reference_depth : float
        Reference depth, m (default 10).
    return_reached_end : bool
        Also return a boolean array, True where no sample departed by ``threshold``
        (the result is then the deepest valid depth: a lower bound).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    numpy.ndarray or float, dask array or xarray.DataArray
        Mixed layer depth, m, over the profile axes; NaN where no valid sample lies at or
        above the reference depth or none lies below it. A DataArray carries the CF
        attributes of ``ocean_mixed_layer_thickness``.

    Notes
    -----
    de Boyer Montégut, C., Madec, G., Fischer, A. S., Lazar, A. & Iudicone, D. (2004),
    Mixed layer depth over the global ocean: an examination of profile data and a
    profile-based climatology, J. Geophys. Res. 109, C12003, doi:10.1029/2004JC002378:
    the mixed layer depth is the depth where |T(z) - T(10 m)| first reaches 0.2 degC,
    found by linear interpolation between samples. The reference value is linearly
    interpolated at 10 m.
    """
    return _crossing(
        "temperature", temperature, depth, dim, threshold, reference_depth, 0, return_reached_end
    )


def mixed_layer_depth_density(
    potential_density,
    depth=None,
    *,
    threshold=0.03,
    reference_depth=10.0,
    return_reached_end=False,
    dim="depth",
):
    """Mixed layer depth by the density criterion, m.

    Parameters
    ----------
    potential_density : array_like, dask array or xarray.DataArray
        Potential density (or its anomaly sigma-theta), kg/m3, referred to the sea
        surface; along the last axis / ``dim``; NaN = missing.
    depth : array_like, dask array or xarray.DataArray, optional
        Depth, m, positive down, strictly increasing (default for a DataArray: its
        ``dim`` coordinate).
    threshold : float
        Increase of potential density over its value at the reference depth, kg/m3
        (default 0.03).
    reference_depth : float
        Reference depth, m (default 10).
    return_reached_end : bool
        Also return the "no crossing" mask (see :func:`mixed_layer_depth`).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    numpy.ndarray or float, dask array or xarray.DataArray
        Mixed layer depth, m.

    Notes
    -----
    de Boyer Montégut et al. (2004), J. Geophys. Res. 109, C12003,
    doi:10.1029/2004JC002378: sigma-theta(z) - sigma-theta(10 m) = 0.03 kg/m3, linear
    interpolation between samples.
    """
    return _crossing(
        "potential_density",
        potential_density,
        depth,
        dim,
        threshold,
        reference_depth,
        1,
        return_reached_end,
    )


def _crossing(name, values, depth, dim, threshold, reference_depth, signed, return_end):
    if not threshold > 0:
        raise SeaprofileError(f"threshold must be positive, got {threshold!r}")
    kind = "temperature" if signed == 0 else "density"
    attrs = _cf.attrs_for(
        "mixed_layer_depth",
        comment=f"{kind} criterion {threshold:g} from {reference_depth:g} "
        "m (de Boyer Montegut et al. 2004)",
    )
    columns, dim = _columns(name, values, depth, dim)
    func = functools.partial(
        _crossing_numpy, name, float(threshold), float(reference_depth), signed
    )
    out = columnwise(
        func,
        columns,
        dim=dim,
        outputs=[("mixed_layer_depth", attrs), ("reached_end", _END_ATTRS)],
        dtypes=[np.float64, np.bool_],
    )
    return tuple(out) if return_end else out[0]


def _crossing_numpy(name, threshold, reference_depth, signed, values, depth):
    v, z, shape = _rows(name, values, depth)
    out = np.empty(v.shape[0])
    end = np.zeros(v.shape[0], dtype=np.bool_)
    _crossing_kernel(v, z, reference_depth, threshold, signed, out, end)
    return _scalar(out.reshape(shape)), _scalar(end.reshape(shape))


# --- sonic layer and gradients -------------------------------------------------------
def sonic_layer_depth(
    sound_speed, depth=None, *, tolerance=0.2, return_reached_end=False, dim="depth"
):
    """Sonic layer depth: the depth of the near-surface sound-speed maximum, m.

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s; along the last axis / ``dim``; NaN = missing.
    depth : array_like, dask array or xarray.DataArray, optional
        Depth, m, positive down, strictly increasing (default for a DataArray: its
        ``dim`` coordinate).
    tolerance : float
        Decrease below the running maximum, m/s, that ends the near-surface layer
        (default 0.2 m/s; keeps sensor noise from ending the layer early).
    return_reached_end : bool
        Also return a boolean array, True where sound speed never fell by ``tolerance``
        (the layer reaches the deepest valid sample, e.g. an isothermal winter column).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    depth : numpy.ndarray or float, dask array or xarray.DataArray
        Sonic layer depth, m. Equal to the shallowest valid depth when sound speed
        decreases from the surface (no surface duct).
    speed : numpy.ndarray or float, dask array or xarray.DataArray
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
    if not tolerance >= 0:
        raise SeaprofileError(f"tolerance must be >= 0, got {tolerance!r}")
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    outputs = [
        ("sonic_layer_depth", _cf.attrs_for("sonic_layer_depth")),
        (
            "sonic_layer_sound_speed",
            _cf.attrs_for("sound_speed", long_name="sound speed at the sonic layer depth"),
        ),
        ("reached_end", _END_ATTRS),
    ]
    out = columnwise(
        functools.partial(_sonic_numpy, float(tolerance)),
        columns,
        dim=dim,
        outputs=outputs,
        dtypes=[np.float64, np.float64, np.bool_],
    )
    return tuple(out) if return_reached_end else tuple(out[:2])


def _sonic_numpy(tolerance, sound_speed, depth):
    c, z, shape = _rows("sound_speed", sound_speed, depth)
    zd = np.empty(c.shape[0])
    cs = np.empty(c.shape[0])
    end = np.zeros(c.shape[0], dtype=np.bool_)
    _sonic_layer_kernel(c, z, tolerance, zd, cs, end)
    return tuple(_scalar(a.reshape(shape)) for a in (zd, cs, end))


def _slope(z, c):
    if z.size < 2 or np.ptp(z) == 0:
        return np.nan
    zm = z - z.mean()
    return float(np.dot(zm, c - c.mean()) / np.dot(zm, zm))


def layer_gradients(sound_speed, depth, layer_depth, *, below_thickness=50.0, dim="depth"):
    """Sound-speed gradients in and below a surface layer, 1/s ((m/s)/m).

    Parameters
    ----------
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed, m/s (along the last axis / ``dim``, NaN = missing).
    depth : array_like, dask array or xarray.DataArray or None
        Depth, m, positive down, strictly increasing (None: the DataArray's ``dim``
        coordinate).
    layer_depth : float or array over the profile axes
        Depth of the layer's base (usually the sonic layer depth), m.
    below_thickness : float
        Thickness below the layer over which the below-layer gradient is fitted, m
        (default 50 m, clipped to the deepest valid sample).
    dim : str
        Vertical dimension of xarray inputs (default ``"depth"``).

    Returns
    -------
    in_layer, below_layer : float, numpy.ndarray, dask array or xarray.DataArray
        Least-squares slopes dc/dz, 1/s, of the samples in [surface, layer_depth] and in
        [layer_depth, layer_depth + below_thickness]; NaN with fewer than two samples.

    Notes
    -----
    A least-squares slope is used rather than end-point differences so that sensor noise
    in single bins does not dominate. For reference, isothermal, isohaline water has a
    gradient of about +0.016 1/s from pressure alone (common practice, no source).
    """
    columns, dim = _columns("sound_speed", sound_speed, depth, dim)
    attrs = {"units": "s-1"}
    outputs = [
        ("in_layer_gradient", dict(attrs, long_name="sound speed gradient within the layer")),
        ("below_layer_gradient", dict(attrs, long_name="sound speed gradient below the layer")),
    ]
    func = functools.partial(
        _per_profile, functools.partial(_gradients_1d, float(below_thickness)), [np.float64] * 2
    )
    out = columnwise(
        lambda c, z, h: func([c, z], [h]),
        columns,
        dim=dim,
        params=[("layer_depth", layer_depth)],
        outputs=outputs,
    )
    return tuple(out)


def _gradients_1d(below_thickness, sound_speed, depth, layer_depth):
    z, c = _valid_1d(depth, sound_speed)
    return _gradients_valid(below_thickness, z, c, layer_depth)


def _gradients_valid(below_thickness, z, c, layer_depth):
    """:func:`layer_gradients` of one profile's valid samples (``_valid_1d``'s output)."""
    if not np.isfinite(layer_depth):
        return np.nan, np.nan
    inside = z <= layer_depth
    below = (z >= layer_depth) & (z <= layer_depth + below_thickness)
    return _slope(z[inside], c[inside]), _slope(z[below], c[below])


def duct_cutoff_frequency(layer_depth, sound_speed=1500.0):
    """Lowest frequency trapped in a surface duct of thickness ``layer_depth``, Hz.

    Parameters
    ----------
    layer_depth : array_like, dask array or xarray.DataArray
        Duct thickness (sonic layer depth), m; must be positive.
    sound_speed : array_like, dask array or xarray.DataArray
        Sound speed in the duct, m/s (default 1500).

    Returns
    -------
    numpy.ndarray or float, dask array or xarray.DataArray
        ``f_min = c / lambda_max`` with ``lambda_max = 8.5e-3 * H**1.5`` (lambda, H in
        m), Hz. About 1.07 kHz for a 30 m layer at 1500 m/s. NaN where H <= 0.

    Notes
    -----
    The trapping rule lambda_max ~ 8.5e-3 H^1.5 is a textbook rule of thumb (common
    practice; not traced here to a primary source). It assumes the gradient of an
    isothermal layer; treat the result as an order of magnitude. A point-wise function:
    its argument order follows the duct (thickness first), not the column diagnostics.
    """
    attrs = {
        "long_name": "lowest frequency trapped in the surface duct",
        "units": "Hz",
        "comment": "trapping rule lambda_max = 8.5e-3 H^1.5 (common practice)",
    }
    return pointwise(
        _cutoff_numpy,
        [("layer_depth", layer_depth), ("sound_speed", sound_speed)],
        name="duct_cutoff_frequency",
        attrs=attrs,
    )


def _cutoff_numpy(h, c):
    with np.errstate(divide="ignore", invalid="ignore"):
        f = c / (TRAPPING_COEFFICIENT * np.where(h > 0, h, np.nan) ** 1.5)
    return _scalar(f)
