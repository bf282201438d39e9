"""Numba kernels behind survey/refraction.py: exact rays through constant-gradient layers.

Angles here are from the vertical (nadir 0). In a layer c = c_a + g (z - z_a) a ray with
ray parameter p = sin(theta) / c is a circular arc of radius 1 / (|g| p). The closed forms
below are written so that they stay exact and finite as g -> 0 and p -> 0.
"""

from __future__ import annotations

import math

import numba
import numpy as np

OK = 0
TURNED = 1
MISSING = 2

_FLAT = 1e-12  # 1/s: below this gradient a layer is treated as isovelocity


@numba.njit(cache=True, inline="always")
def _log_ratio(x):
    """ln(1 + x) / x, finite at x = 0."""
    if abs(x) > 1e-9:
        return math.log1p(x) / x
    return 1.0 - 0.5 * x


@numba.njit(cache=True, inline="always")
def _vertical_time(za, ca, zb, cb):
    """ln(c_b / c_a) / g (s): the part of a layer's time that does not depend on p."""
    dz = zb - za
    g = (cb - ca) / dz
    return dz / ca * _log_ratio(g * dz / ca)


@numba.njit(cache=True)
def _layer_constants(z, c):
    """Gradient (1/s) and p-independent time (s) of every layer, computed once per profile."""
    n = z.shape[0]
    g = np.empty(max(n - 1, 0))
    t1 = np.empty(max(n - 1, 0))
    for k in range(n - 1):
        g[k] = (c[k + 1] - c[k]) / (z[k + 1] - z[k])
        t1[k] = _vertical_time(z[k], c[k], z[k + 1], c[k + 1])
    return g, t1


@numba.njit(cache=True, inline="always")
def _piece(p, dz, ca, cosa, cb, cosb, t1):
    """Range (m) and time (s) of a layer of thickness dz, given its ``_vertical_time`` t1."""
    dx = p * dz * (ca + cb) / (cosa + cosb)
    inv = 1.0 / (1.0 + cosb)
    # t2 = ln((1 + cos a) / (1 + cos b)) / g, written to stay finite as g -> 0
    t2 = p * dx * inv * _log_ratio((cosa - cosb) * inv)
    return dx, t1 + t2


@numba.njit(cache=True, inline="always")
def _layer_piece(p, za, ca, cosa, zb, cb, cosb):
    """Horizontal range (m) and time (s) from (za, ca) to (zb, cb), both ends below turning.

    dx = p dz (c_a + c_b) / (cos a + cos b)   (= (cos a - cos b) / (g p), the arc chord)
    dt = [ln(c_b / c_a) + ln((1 + cos a) / (1 + cos b))] / g
    """
    return _piece(p, zb - za, ca, cosa, cb, cosb, _vertical_time(za, ca, zb, cb))


@numba.njit(cache=True, inline="always")
def _launch_cos(p, c0):
    """cos of the angle from vertical at speed c0 (m/s); -1 when the ray is turned (p c0 >= 1)."""
    u = p * c0
    if u >= 1.0:
        return -1.0
    return math.sqrt(1.0 - u * u)


@numba.njit(cache=True, inline="always")
def _point_after(p, za, ca, cosa, g, tau):
    """Depth increment (m) and range increment (m) after time tau (s) from (za, ca).

    tan(theta/2) = tan(theta_a/2) exp(g tau), hence
    c(tau) = 2 c_a E / ((1 + cos a)(1 + s_a^2 E^2)), E = exp(g tau), s_a = tan(theta_a / 2).
    """
    if abs(g) < _FLAT:
        return ca * tau * cosa, ca * tau * p * ca
    e = math.exp(g * tau)
    sa = p * ca / (1.0 + cosa)
    c = 2.0 * ca * e / ((1.0 + cosa) * (1.0 + sa * sa * e * e))
    dz = (c - ca) / g
    u = p * c
    cosb = math.sqrt(max(0.0, 1.0 - u * u))
    if cosa + cosb <= 0.0:
        return dz, 0.0
    return dz, p * dz * (ca + c) / (cosa + cosb)


@numba.njit(cache=True, inline="always")
def _one_sounding(p, tau, z, c, grad, t_vertical):
    """Depth (m), range (m), flag for one beam of ray parameter p and one-way time tau.

    ``grad`` and ``t_vertical`` are the profile's :func:`_layer_constants`.
    """
    n = z.shape[0]
    za = z[0]
    ca = c[0]
    cosa = _launch_cos(p, ca)
    if cosa < 0.0:
        return np.nan, np.nan, TURNED
    x = 0.0
    for k in range(n - 1):
        zb = z[k + 1]
        cb = c[k + 1]
        ub = p * cb
        g = grad[k]
        if ub >= 1.0:
            # the ray turns inside this layer, at p c = 1
            zt = za + (1.0 / p - ca) / g
            dx, dt = _layer_piece(p, za, ca, cosa, zt, 1.0 / p, 0.0)
            if tau <= dt:
                ddz, ddx = _point_after(p, za, ca, cosa, g, tau)
                return za + ddz, x + ddx, OK
            return np.nan, np.nan, TURNED
        cosb = math.sqrt(1.0 - ub * ub)
        dx, dt = _piece(p, zb - za, ca, cosa, cb, cosb, t_vertical[k])
        if tau <= dt:
            ddz, ddx = _point_after(p, za, ca, cosa, g, tau)
            return za + ddz, x + ddx, OK
        tau -= dt
        x += dx
        za, ca, cosa = zb, cb, cosb
    # below the deepest node the speed is held constant
    return za + ca * tau * cosa, x + ca * tau * p * ca, OK


@numba.njit(cache=True, parallel=True)
def _soundings_kernel(sin_angle, one_way_time, launch_speed, z, c, depth, across, flag):
    """Fill depth, across (m) and flag for every beam (flattened pings x beams)."""
    grad, t_vertical = _layer_constants(z, c)
    for i in numba.prange(sin_angle.shape[0]):
        tau = one_way_time[i]
        s = sin_angle[i]
        if not (math.isfinite(tau) and math.isfinite(s)):
            depth[i] = np.nan
            across[i] = np.nan
            flag[i] = MISSING
            continue
        p = abs(s) / launch_speed
        d, x, f = _one_sounding(p, tau, z, c, grad, t_vertical)
        depth[i] = d
        across[i] = x if s >= 0.0 else -x
        flag[i] = f


@numba.njit(cache=True, inline="always")
def _one_to_depth(p, z_end, z, c):
    """One-way time (s), range (m), flag of a ray of ray parameter p from z[0] to z_end."""
    n = z.shape[0]
    za = z[0]
    ca = c[0]
    cosa = _launch_cos(p, ca)
    if cosa < 0.0:
        return np.nan, np.nan, TURNED
    x = 0.0
    t = 0.0
    for k in range(n - 1):
        zb = z[k + 1]
        cb = c[k + 1]
        last = zb >= z_end
        if last:
            cb = ca + (cb - ca) * (z_end - za) / (zb - za)
            zb = z_end
        ub = p * cb
        if ub >= 1.0:
            return np.nan, np.nan, TURNED
        cosb = math.sqrt(1.0 - ub * ub)
        if zb > za:
            dx, dt = _layer_piece(p, za, ca, cosa, zb, cb, cosb)
            x += dx
            t += dt
        if last:
            return t, x, OK
        za, ca, cosa = zb, cb, cosb
    dz = z_end - za
    return t + dz / (ca * cosa), x + dz * p * ca / cosa, OK


@numba.njit(cache=True, parallel=True)
def _to_depth_kernel(sin_angle, launch_speed, z_end, z, c, one_way, across, flag):
    """Fill one-way time (s), across (m), flag of every beam reaching the depth z_end."""
    for i in numba.prange(sin_angle.shape[0]):
        s = sin_angle[i]
        if not math.isfinite(s):
            one_way[i] = np.nan
            across[i] = np.nan
            flag[i] = MISSING
            continue
        t, x, f = _one_to_depth(abs(s) / launch_speed, z_end, z, c)
        one_way[i] = t
        across[i] = x if s >= 0.0 else -x
        flag[i] = f


@numba.njit(cache=True, parallel=True)
def _many_profiles_kernel(sin_angle, one_way_time, z0, z, c, depth, across):
    """Depth, across (m) of the same beams (m,) reprocessed with each of k profiles (k, n).

    Each profile starts at the transducer depth z0 with its own speed there (linear
    interpolation, held constant beyond the ends), which also sets the ray parameter.
    """
    nk, n = z.shape
    for k in numba.prange(nk):
        if z0 <= z[k, 0]:
            c0 = c[k, 0]
        elif z0 >= z[k, n - 1]:
            c0 = c[k, n - 1]
        else:
            j = 0
            while z[k, j + 1] <= z0:
                j += 1
            w = (z0 - z[k, j]) / (z[k, j + 1] - z[k, j])
            c0 = c[k, j] + w * (c[k, j + 1] - c[k, j])
        zs = np.empty(n + 1)
        cs = np.empty(n + 1)
        zs[0] = z0
        cs[0] = c0
        m = 1
        for j in range(n):
            if z[k, j] > z0:
                zs[m] = z[k, j]
                cs[m] = c[k, j]
                m += 1
        zz = zs[:m]
        cc = cs[:m]
        grad, t_vertical = _layer_constants(zz, cc)
        for i in range(sin_angle.shape[0]):
            s = sin_angle[i]
            tau = one_way_time[i]
            if not (math.isfinite(s) and math.isfinite(tau)):
                depth[k, i] = np.nan
                across[k, i] = np.nan
                continue
            d, x, f = _one_sounding(abs(s) / c0, tau, zz, cc, grad, t_vertical)
            depth[k, i] = d
            across[k, i] = x if s >= 0.0 else -x
