"""Exact ray tracing through a layered ocean: c(z) piecewise linear between nodes.

Model and closed forms
----------------------
Between two nodes the sound-speed gradient g = dc/dz is constant, so a ray is an arc of a
circle of radius 1 / (|g| p) (a straight line when g = 0), where p = cos(theta) / c is
Snell's invariant (Jensen, Kuperman, Porter & Schmidt, *Computational Ocean Acoustics*,
2nd ed., Springer 2011, ch. 3). Everything is written for a *piece* of arc along which
sin(theta) keeps its sign; mirror the depth axis for up-going pieces (g -> -g) so that
0 <= s_a = |sin theta_a|, s_b = |sin theta_b| and dz = |z_b - z_a|:

* ``K = integral of c ds = dz (c_a + c_b) / (s_a + s_b)`` (from sin^2 = 1 - p^2 c^2;
  no division by g, exact for g = 0 as well);
* range ``dr = p K`` (equivalently (s_a - s_b) / (p g));
* time ``dt = (atanh s_a - atanh s_b) / g`` = ``[ln((1+s_a)/(1+s_b)) + ln(c_b/c_a)] / g``,
  evaluated as ``q1 L(g q1) + q2 L(g q2)`` with ``q1 = p^2 K / (1 + s_b)``,
  ``q2 = dz / c_a`` and ``L(x) = log1p(x)/x`` (L(0) = 1): well conditioned for any g,
  including 0 (straight line, dt = dz / (c sin theta)) and vertical rays (p = 0);
* inside a piece ``s(r) = s_a - p g (r - r_a)`` and the chord has the mean angle:
  ``z - z_a = (r - r_a)(s_a + s)/(cos_a + cos)``, so a ray is sampled at any range exactly;
* a turning point is reached when p c = 1 inside the layer, after
  ``dz = c_a s_a^2 / (cos_a (1 + cos_a) g)``.

Dynamic ray tracing (amplitude): with q the ray-tube width per unit launch angle and P its
slowness counterpart, dq/ds = c P, dP/ds = -c_nn q / c^2 (Jensen et al. 2011, eq. 3.58);
c_nn = 0 inside a linear layer, so P is constant and ``q_b = q_a + P K``. At a node where
the gradient jumps by ``Dg = g_below - g_above``, c_zz is a delta function and P jumps by
``-q Dg cos^2(theta) / (c^2 |sin theta|)``. A flat surface or bottom is treated as the mirror
image of the water (unfolded), i.e. a gradient jump of ``2 g`` (surface) or ``-2 g``
(bottom). Start: q = 0, P = 1/c(source) (point source). A caustic is a sign change of q;
q is linear in K within a piece and continuous at nodes, so counting sign changes at piece
ends counts every caustic.

Grazing (near-horizontal rays at a node or boundary): sines come from ``1 - (p c)^2`` and
carry an absolute error of ~1e-8 there, while depths are exact. Three rules keep the
pieces consistent: (1) the sine sum of a piece never drops below its Snell bound
``p sqrt(|g| dz (c_a + c_b))`` (a source within rounding of a node, where c(z_s) rounds to
the node's c, used to give a piece of near-infinite range); (2) the turning decision uses
the turning depth from s_a^2 as well as p c_b >= 1; (3) sines below 0.01 at a node come from
the Snell increment s_b^2 = s_a^2 - p^2 g dz (c_a + c_b), not from 1 - (p c_b)^2; (4) a
ray that would stay within 1 micrometre of a sound-speed minimum node, or of the surface /
bottom where the layer bends it straight back, runs along it (sine set to 0, only
for sines below 1e-5); a ray reaching the surface or bottom with sine 0 (grazing)
continues as a horizontal ray started there, i.e. along the boundary when the layer would
bend it straight back.

All kernels are compiled with numba (``cache=True``); the fan kernels loop over rays in
parallel (``prange``).
"""

from __future__ import annotations

import numba
import numpy as np
from numba import prange

__all__ = ["fan_paths", "fan_samples", "trace_layers"]

# point kinds (see rays.POINT_KINDS)
_START, _CROSS, _TURN, _SURF, _BOT, _SAMPLE, _END = 0, 1, 2, 3, 4, 5, 6
# end reasons (see rays.END_REASONS)
_REACHED, _ABSORBED, _LEFT, _STEPLIMIT = 0, 1, 2, 3
MAX_STEPS = 20_000_000
# value-safe fast-math: fused multiply-add and reciprocal only (no NaN/inf assumptions)
_FM = {"contract", "arcp"}
MAX_STORED_POINTS = 40_000_000  # per array (320 MB of float64)
# Sines below 0.01 at the end of a piece come from the Snell increment, larger ones from
# 1 - (p c)^2 (whose rounding error, ~1e-16 / s, is then below 1e-14).
_SMALL_SINE2 = 1e-4
# A ray trapped at a sound-speed minimum node, or against the surface / bottom by a layer
# that bends it straight back, so flat that it would never move more than this (m) away
# from it, runs along it (the eigenray depth tolerance, 1 micrometre). Without this a
# near-horizontal ray there is traced as ~1e6 tiny arcs or bounces per km.
_RIDE_DEPTH = 1e-6
# ... and only when its sine is below this: setting it to 0 changes cos(theta) / c by at
# most 5e-11 relative (Snell's invariant stays exact to that).
_RIDE_SINE = 1e-5


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _l1(x):
    """log1p(x) / x; Taylor series (error < 2e-17) for |x| < 0.01, 1 at x = 0."""
    if abs(x) < 0.01:
        return 1.0 + x * (-0.5 + x * (1.0 / 3.0 + x * (-0.25 + x * (0.2 + x * (
            -1.0 / 6.0 + x * (1.0 / 7.0 + x * (-0.125 + x * (1.0 / 9.0))))))))
    return np.log1p(x) / x


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _sine_sum(dz, ca, cb, sa, sb, gm, p):
    """s_a + s_b of a piece, never below its geometric lower bound.

    Along a piece ``|s_b^2 - s_a^2| = p^2 |g| dz (c_a + c_b)`` (Snell), so
    ``s_a + s_b >= p sqrt(|g| dz (c_a + c_b))``. The sines are computed from
    ``cos = p c`` and lose their accuracy near grazing (absolute error ~ 1e-8), while dz is
    exact: a piece a few ulp thick next to a boundary (a source within rounding of a node,
    where c(z_s) rounds to the node's c) then has s_a + s_b ~ 0 for dz > 0, and
    K = dz (c_a + c_b) / (s_a + s_b) explodes. The bound restores the consistent range,
    sqrt(dz (c_a + c_b) / |g|), and is inactive (up to rounding) otherwise.
    """
    den = sa + sb
    low2 = p * p * abs(gm) * dz * (ca + cb)
    if den * den < low2:
        return np.sqrt(low2)
    return den


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _piece(dz, ca, cb, sa, sb, gm, p):
    """Same-sign piece of arc (mirrored to go down): returns (K = int c ds, dt)."""
    if dz <= 0.0:
        return 0.0, 0.0
    den = _sine_sum(dz, ca, cb, sa, sb, gm, p)
    if den <= 0.0:
        # horizontal at both ends in a layer without gradient: no range, no time
        return 0.0, 0.0
    k = dz * (ca + cb) / den
    q1 = p * p * k / (1.0 + sb)
    q2 = dz / ca
    dt = q1 * _l1(gm * q1) + q2 * _l1(gm * q2)
    return k, dt


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _piece_full(dz, ca, cb, sa, sb, gm, p, tl):
    """As _piece for a whole layer crossing; ``tl`` = int dz / c across the layer."""
    k = dz * (ca + cb) / _sine_sum(dz, ca, cb, sa, sb, gm, p)
    q1 = p * p * k / (1.0 + sb)
    return k, q1 * _l1(gm * q1) + tl


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _sin_from_cos(cosv):
    x = (1.0 - cosv) * (1.0 + cosv)
    if x <= 0.0:
        return 0.0
    return np.sqrt(x)


@numba.njit(cache=True)
def _start_direction(zn, gn, j, n):
    """Direction of a horizontal ray at node j: +1 down, -1 up, 0 stays (local minimum)."""
    if j < n and gn[j] < 0.0:
        return 1
    if j > 0 and gn[j - 1] > 0.0:
        return -1
    return 0


@numba.njit(cache=True, fastmath=_FM)
def _trace_ray(zn, cn, gn, tl, zs, theta, rmax, max_bounces, samp_r,
               s_z, s_t, s_a, s_q, s_cnt, p_r, p_z, p_t, p_a, p_k, max_steps):
    """Trace one ray exactly; write samples at ``samp_r`` and (up to len(p_r)) path points.

    Returns (npoints, surface, bottom, turning, caustics, end_reason, steps).
    """
    n = zn.size - 1  # layers
    maxpts = p_r.size
    nsamp = samp_r.size
    want_cnt = s_cnt.shape[0] > 0
    # source sound speed and layer
    jr = np.searchsorted(zn, zs, side="right") - 1
    if jr > n - 1:
        jr = n - 1
    if jr < 0:
        jr = 0
    cs = cn[jr] + gn[jr] * (zs - zn[jr])
    cth = np.cos(theta)
    sth = np.sin(theta)
    if cth < 0.0:
        cth = 0.0
    p = cth / cs
    sa = abs(sth)
    d = 1 if sth > 0.0 else (-1 if sth < 0.0 else 0)
    z = zs
    c = cs
    r = 0.0
    t = 0.0
    q = 0.0
    pp = 1.0 / cs
    qsign = 0
    ns = 0
    nb = 0
    nt = 0
    nc = 0
    reason = _REACHED
    # layer and direction
    jl = np.searchsorted(zn, zs, side="left")  # first node >= zs
    at_node = jl <= n and zn[jl] == zs
    if d > 0:
        i = jr
    elif d < 0:
        i = jl - 1
        if i < 0:
            i = 0
    else:
        if at_node:
            d = _start_direction(zn, gn, jl, n)
            i = jl if d > 0 else (jl - 1 if d < 0 else min(jl, n - 1))
        else:
            i = jr
            if gn[i] > 0.0:
                d = -1
            elif gn[i] < 0.0:
                d = 1
            else:
                d = 0
    if i > n - 1:
        i = n - 1
    npts = 0
    k = 0
    # start point and samples at r = 0
    if npts < maxpts:
        p_r[npts] = 0.0
        p_z[npts] = z
        p_t[npts] = 0.0
        p_a[npts] = np.degrees(theta)
        p_k[npts] = _START
    npts += 1
    while k < nsamp and samp_r[k] <= 0.0:
        s_z[k] = z
        s_t[k] = 0.0
        s_a[k] = np.degrees(theta)
        s_q[k] = 0.0
        if want_cnt:
            s_cnt[k, 0] = 0
            s_cnt[k, 1] = 0
            s_cnt[k, 2] = 0
            s_cnt[k, 3] = 0
        k += 1
    steps = 0
    on_node = False
    while True:
        steps += 1
        if steps > max_steps:
            reason = _STEPLIMIT
            break
        if d == 0:
            # horizontal straight travel along a node or in an isovelocity layer
            while k < nsamp:
                dr = samp_r[k] - r
                s_z[k] = z
                s_t[k] = t + dr / c
                s_a[k] = 0.0
                s_q[k] = q + pp * c * dr
                if want_cnt:
                    s_cnt[k, 0] = ns
                    s_cnt[k, 1] = nb
                    s_cnt[k, 2] = nt
                    s_cnt[k, 3] = nc
                k += 1
            dr = rmax - r
            t += dr / c
            q += pp * c * dr
            r = rmax
            if npts < maxpts:
                p_r[npts] = r
                p_z[npts] = z
                p_t[npts] = t
                p_a[npts] = 0.0
                p_k[npts] = _END
            npts += 1
            reason = _REACHED
            break
        g = gn[i]
        gm = g * d
        if d > 0:
            zb = zn[i + 1]
            cb = cn[i + 1]
        else:
            zb = zn[i]
            cb = cn[i]
        cosa = p * c
        cosb = p * cb
        dzb = abs(zb - z)
        turning = False
        dzt = 0.0
        if gm > 0.0 and cosa > 0.0:
            # depth to the turning point, from s_a^2 (accurate near grazing, where
            # 1 - p c_b is not): the ray turns inside the layer when it is shorter than the
            # way to the node, or when p c_b >= 1
            dzt = c * sa * sa / (cosa * (1.0 + cosa) * gm)
            turning = cosb >= 1.0 or dzt < dzb
        if not turning:
            # small sines from Snell's law as an increment, s_b^2 = s_a^2 - p^2 g dz
            # (c_a + c_b): exact where 1 - (p c_b)^2 has lost its digits (it rounds a sine
            # below ~1e-8 to 0 or to noise; a near-horizontal ray in an isovelocity layer
            # then got twice its range)
            sb2 = sa * sa - p * p * gm * dzb * (c + cb)
            if sb2 < _SMALL_SINE2:
                sb = np.sqrt(sb2) if sb2 > 0.0 else 0.0
            else:
                sb = _sin_from_cos(cosb)
            dz = dzb
            ce = cb
        else:
            dz = dzt
            if dz > dzb:
                dz = dzb
            sb = 0.0
            ce = c + gm * dz
        if on_node and not turning and sa + sb > 0.0:
            kk, dt = _piece_full(dz, c, ce, sa, sb, gm, p, tl[i])
        else:
            kk, dt = _piece(dz, c, ce, sa, sb, gm, p)
        dr = p * kk
        # samples inside this piece (and the end of the ray)
        rend = r + dr
        hit_end = rend >= rmax
        while k < nsamp and samp_r[k] <= rend:
            drk = samp_r[k] - r
            sk = sa - p * gm * drk
            if sk < 0.0:
                sk = 0.0
            elif sk > 1.0:
                sk = 1.0
            cok = _sin_from_cos(sk)
            den = cosa + cok
            dzk = drk * (sa + sk) / den if den > 0.0 else 0.0
            if dzk > dz:
                dzk = dz
            ck = c + gm * dzk
            kk2, dt2 = _piece(dzk, c, ck, sa, sk, gm, p)
            s_z[k] = z + d * dzk
            s_t[k] = t + dt2
            s_a[k] = d * np.degrees(np.arctan2(sk, p * ck))
            s_q[k] = q + pp * kk2
            if want_cnt:
                qk = q + pp * kk2
                extra = 0
                if (qk > 0.0 and qsign < 0) or (qk < 0.0 and qsign > 0):
                    extra = 1
                s_cnt[k, 0] = ns
                s_cnt[k, 1] = nb
                s_cnt[k, 2] = nt
                s_cnt[k, 3] = nc + extra
            k += 1
        if hit_end:
            drk = rmax - r
            sk = sa - p * gm * drk
            if sk < 0.0:
                sk = 0.0
            elif sk > 1.0:
                sk = 1.0
            cok = _sin_from_cos(sk)
            den = cosa + cok
            dzk = drk * (sa + sk) / den if den > 0.0 else 0.0
            if dzk > dz:
                dzk = dz
            ck = c + gm * dzk
            kk2, dt2 = _piece(dzk, c, ck, sa, sk, gm, p)
            qn = q + pp * kk2
            if (qn > 0.0 and qsign < 0) or (qn < 0.0 and qsign > 0):
                nc += 1
            r = rmax
            z = z + d * dzk
            t = t + dt2
            c = ck
            sa = sk
            q = qn
            if npts < maxpts:
                p_r[npts] = r
                p_z[npts] = z
                p_t[npts] = t
                p_a[npts] = d * np.degrees(np.arctan2(sa, p * c))
                p_k[npts] = _END
            npts += 1
            reason = _REACHED
            break
        # advance to the end of the piece
        qn = q + pp * kk
        if qn > 0.0:
            if qsign < 0:
                nc += 1
            qsign = 1
        elif qn < 0.0:
            if qsign > 0:
                nc += 1
            qsign = -1
        q = qn
        r = rend
        t += dt
        z = z + d * dz
        c = ce
        sa = sb
        kind = _CROSS
        stop = False
        on_node = not turning
        if turning:
            nt += 1
            d = -d
            sa = 0.0
            kind = _TURN
        else:
            z = zb
            c = cb
            p2 = p * p  # cos^2(theta) / c^2 at the node
            if d > 0 and i == n - 1:
                nb += 1
                d = -1
                kind = _BOT
                if (gn[n - 1] < 0.0 and sa < _RIDE_SINE
                        and c * sa * sa < -2.0 * gn[n - 1] * _RIDE_DEPTH):
                    sa = 0.0
                if sa > 0.0:
                    pp += q * 2.0 * gn[n - 1] * p2 / sa
                else:
                    # grazing the bottom (horizontal within rounding): the ray goes on
                    # as a horizontal ray started there (along the bottom when the layer
                    # above would bend it straight back down)
                    on_node = False
                    d = _start_direction(zn, gn, n, n)
            elif d < 0 and i == 0:
                ns += 1
                d = 1
                kind = _SURF
                if (gn[0] > 0.0 and sa < _RIDE_SINE
                        and c * sa * sa < 2.0 * gn[0] * _RIDE_DEPTH):
                    sa = 0.0
                if sa > 0.0:
                    pp -= q * 2.0 * gn[0] * p2 / sa
                else:
                    # grazing the surface: likewise
                    on_node = False
                    d = _start_direction(zn, gn, 0, n)
            else:
                j = i + 1 if d > 0 else i
                if sa > 0.0 and gn[j - 1] < 0.0 < gn[j]:
                    # a sound-speed minimum: the ray oscillates about the node, rising
                    # and sinking c s^2 / (2 |g|) at most; below _RIDE_DEPTH it is a ray
                    # along the node (else ~1e6 tiny arcs per km)
                    gmin = min(-gn[j - 1], gn[j])
                    if sa < _RIDE_SINE and c * sa * sa < 2.0 * gmin * _RIDE_DEPTH:
                        sa = 0.0
                if sa > 0.0:
                    pp -= q * (gn[j] - gn[j - 1]) * p2 / sa
                    i += d
                else:
                    on_node = False
                    d = _start_direction(zn, gn, j, n)
                    if d > 0:
                        i = j
                    elif d < 0:
                        i = j - 1
            if ns + nb > max_bounces:
                stop = True
        if npts < maxpts:
            p_r[npts] = r
            p_z[npts] = z
            p_t[npts] = t
            p_a[npts] = d * np.degrees(np.arctan2(sa, p * c))
            p_k[npts] = kind
        npts += 1
        if stop:
            reason = _ABSORBED
            break
    return npts, ns, nb, nt, nc, reason, steps


@numba.njit(cache=True, parallel=True)
def _fan_kernel(zn, cn, gn, tl, zs, thetas, rmax, max_bounces, samp_r,
                S_z, S_t, S_a, S_q, S_cnt, P_r, P_z, P_t, P_a, P_k, out_int, max_steps):
    nray = thetas.size
    for j in prange(nray):
        cnt = S_cnt[j]
        res = _trace_ray(zn, cn, gn, tl, zs, thetas[j], rmax, max_bounces, samp_r,
                         S_z[j], S_t[j], S_a[j], S_q[j], cnt,
                         P_r[j], P_z[j], P_t[j], P_a[j], P_k[j], max_steps)
        for m in range(7):
            out_int[j, m] = res[m]


def _gradients(zn, cn):
    return np.diff(cn) / np.diff(zn)


def _layer_times(zn, cn):
    """Vertical slowness integral int dz / c across each layer, s (ln(c_b/c_a)/g)."""
    dz = np.diff(zn)
    g = _gradients(zn, cn)
    x = g * dz / cn[:-1]
    with np.errstate(divide="ignore", invalid="ignore"):
        l1 = np.where(x == 0.0, 1.0, np.log1p(x) / np.where(x == 0.0, 1.0, x))
    return dz / cn[:-1] * l1


def trace_layers(zn, cn, zs, angles_deg, rmax, max_bounces, samp_r=None, *,
                 max_points=0, counts=False, max_steps=MAX_STEPS):
    """Run the fan kernel; plain arrays in and out (no validation: callers validate).

    Parameters
    ----------
    zn, cn : ndarray
        Layer nodes from 0 to the bottom (m) and sound speed there (m/s).
    zs : float
        Source depth, m.
    angles_deg : ndarray
        Launch angles, degrees, positive down.
    rmax : float
        Range where tracing stops, m.
    max_bounces : int
        Stop after more surface + bottom reflections than this.
    samp_r : ndarray, optional
        Sorted ranges (m, <= rmax) where each ray is sampled.
    max_points : int
        Path points kept per ray (0: none).
    counts : bool
        Also return reflection/turning/caustic counts at each sample.

    Returns
    -------
    dict of ndarrays
    """
    zn = np.ascontiguousarray(zn, dtype=np.float64)
    cn = np.ascontiguousarray(cn, dtype=np.float64)
    gn = _gradients(zn, cn)
    th = np.radians(np.ascontiguousarray(angles_deg, dtype=np.float64))
    nray = th.size
    samp = np.zeros(0) if samp_r is None else np.ascontiguousarray(samp_r, dtype=np.float64)
    ns = samp.size
    S_z = np.full((nray, ns), np.nan)
    S_t = np.full((nray, ns), np.nan)
    S_a = np.full((nray, ns), np.nan)
    S_q = np.full((nray, ns), np.nan)
    S_cnt = np.full((nray, ns if counts else 0, 4), -1, dtype=np.int32)
    mp = int(max_points)
    P_r = np.full((nray, mp), np.nan)
    P_z = np.full((nray, mp), np.nan)
    P_t = np.full((nray, mp), np.nan)
    P_a = np.full((nray, mp), np.nan)
    P_k = np.full((nray, mp), -1, dtype=np.int8)
    out_int = np.zeros((nray, 7), dtype=np.int64)
    _fan_kernel(zn, cn, gn, _layer_times(zn, cn), float(zs), th, float(rmax), int(max_bounces), samp,
                S_z, S_t, S_a, S_q, S_cnt, P_r, P_z, P_t, P_a, P_k, out_int, int(max_steps))
    return {
        "sample_depth": S_z, "sample_time": S_t, "sample_angle": S_a, "sample_q": S_q,
        "sample_counts": S_cnt if counts else None,
        "path_range": P_r, "path_depth": P_z, "path_time": P_t, "path_angle": P_a,
        "path_kind": P_k,
        "points": out_int[:, 0], "surface_reflections": out_int[:, 1],
        "bottom_reflections": out_int[:, 2], "turning_points": out_int[:, 3],
        "caustics": out_int[:, 4], "end_reason": out_int[:, 5].astype(np.int8),
        "steps": out_int[:, 6],
    }


def _fan_common(out):
    return {k: out[k] for k in ("surface_reflections", "bottom_reflections", "turning_points",
                                 "caustics", "end_reason")}


def fan_paths(zn, cn, zs, angles_deg, rmax, max_bounces):
    """Every event point of every ray (two passes: count, then store)."""
    first = trace_layers(zn, cn, zs, angles_deg, rmax, max_bounces, max_points=0)
    mp = int(first["points"].max()) if first["points"].size else 1
    if mp * first["points"].size > MAX_STORED_POINTS:
        from .._validate import SeaprofileError

        raise SeaprofileError(
            f"range_step: keeping every event point needs {mp} points x "
            f"{first['points'].size} rays; give range_step to sample the rays instead")
    out = trace_layers(zn, cn, zs, angles_deg, rmax, max_bounces, max_points=mp)
    res = _fan_common(out)
    res.update(range=out["path_range"], depth=out["path_depth"], travel_time=out["path_time"],
               angle=out["path_angle"], point_kind=out["path_kind"],
               point_count=np.minimum(out["points"], mp), steps=out["steps"])
    return res


def fan_samples(zn, cn, zs, angles_deg, ranges, max_bounces):
    """Each ray sampled at the given ranges (m); NaN after the ray ended."""
    rmax = float(ranges[-1])
    out = trace_layers(zn, cn, zs, angles_deg, rmax, max_bounces, samp_r=ranges)
    nray = out["sample_depth"].shape[0]
    rr = np.broadcast_to(np.asarray(ranges, dtype=np.float64), (nray, len(ranges))).copy()
    valid = np.isfinite(out["sample_depth"])
    rr[~valid] = np.nan
    kind = np.where(valid, _SAMPLE, -1).astype(np.int8)
    res = _fan_common(out)
    res.update(range=rr, depth=out["sample_depth"], travel_time=out["sample_time"],
               angle=out["sample_angle"], point_kind=kind,
               point_count=valid.sum(axis=1).astype(np.int32), steps=out["steps"])
    return res
