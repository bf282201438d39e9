"""Compiled arc kernels of the exact layered ray solver (:mod:`.kernels`).

One ray traced piece by piece along circular arcs (:func:`_trace_ray`), and a fan of
them in parallel (:func:`_fan_kernel`). The loop calls one helper per job, each inlined
into it (``inline="always"``, numba IR level; left to LLVM's inlining an early split ran
~40% slower): the launch (:func:`_launch`), one piece to the layer's node or turning point
(:func:`_layer_piece`), a point inside a piece for samples and the end
(:func:`_inside_piece`), a reflection at the surface or the bottom (:func:`_reflect`,
:func:`_store_reflection`) and the writing of path points and samples. The crossing of an
inner node stays in the loop: as a helper it cost ~7% of the fan kernel. The closed
forms (range, travel time, dynamic ray q and P per piece) and the grazing rules they
implement are written out in the docstring of :mod:`seaprofile.propagation.kernels`,
which also holds the numpy entry points.
"""

from __future__ import annotations

import numba
import numpy as np
from numba import prange

# point kinds, end reasons, the grazing rule (see there) and the step limit
from .codes import (
    ABSORBED,
    AT_BOTTOM,
    AT_SURFACE,
    BOTTOM_REFLECTION,
    END,
    LAYER_CROSSING,
    RANGE_REACHED,
    RIDE_DEPTH,
    RIDE_SINE,
    START,
    STEP_LIMIT,
    SURFACE_REFLECTION,
    TURNING_POINT,
)

# value-safe fast-math: fused multiply-add and reciprocal only (no NaN/inf assumptions)
_FM = {"contract", "arcp"}
# Sines below 0.01 at the end of a piece come from the Snell increment, larger ones from
# 1 - (p c)^2 (whose rounding error, ~1e-16 / s, is then below 1e-14).
_SMALL_SINE2 = 1e-4


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _l1(x):
    """log1p(x) / x; Taylor series (error < 2e-17) for |x| < 0.01, 1 at x = 0."""
    if abs(x) < 0.01:
        return 1.0 + x * (
            -0.5
            + x
            * (
                1.0 / 3.0
                + x
                * (
                    -0.25
                    + x
                    * (0.2 + x * (-1.0 / 6.0 + x * (1.0 / 7.0 + x * (-0.125 + x * (1.0 / 9.0)))))
                )
            )
        )
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


@numba.njit(cache=True, inline="always")
def _store_reflection(rf_r, rf_a, rf_k, m, r, sa, cosv, boundary):
    """Reflection number m (from 0) of the ray: range, grazing angle (degrees), boundary."""
    if m < rf_r.size:
        rf_r[m] = r
        rf_a[m] = np.degrees(np.arctan2(sa, cosv))
        rf_k[m] = boundary


@numba.njit(cache=True, inline="always")
def _start_direction(zn, gn, j, n):
    """Direction of a horizontal ray at node j: +1 down, -1 up, 0 stays (local minimum)."""
    if j < n and gn[j] < 0.0:
        return 1
    if j > 0 and gn[j - 1] > 0.0:
        return -1
    return 0


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _launch(zn, cn, gn, zs, theta):
    """Start of a ray: (layer, direction +1 down / -1 up / 0 level, c, p, |sin|)."""
    n = zn.size - 1  # layers
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
    return i, d, cs, p, sa


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _layer_piece(z, c, sa, p, gm, zb, cb, tli, on_node):
    """The arc from depth z (sound speed c, |sin| sa) towards the node zb (cb) of its layer.

    ``gm``: the layer gradient in the direction of travel; ``tli``: int dz / c across the
    layer (used when the piece crosses it whole). Ends at the node or at the turning point
    inside the layer. Returns (turning, dz, |sin| at the end, c at the end, K, dt).
    """
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
        kk, dt = _piece_full(dz, c, ce, sa, sb, gm, p, tli)
    else:
        kk, dt = _piece(dz, c, ce, sa, sb, gm, p)
    return turning, dz, sb, ce, kk, dt


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _inside_piece(drk, c, sa, p, gm, dz):
    """A point ``drk`` m in range into a piece that starts with (c, sa) and is dz deep.

    Returns (depth offset along the piece, |sin|, c, K, dt) there.
    """
    sk = sa - p * gm * drk
    if sk < 0.0:
        sk = 0.0
    elif sk > 1.0:
        sk = 1.0
    cok = _sin_from_cos(sk)
    den = p * c + cok
    dzk = drk * (sa + sk) / den if den > 0.0 else 0.0
    if dzk > dz:
        dzk = dz
    ck = c + gm * dzk
    kk2, dt2 = _piece(dzk, c, ck, sa, sk, gm, p)
    return dzk, sk, ck, kk2, dt2


@numba.njit(cache=True, inline="always")
def _put_point(p_r, p_z, p_t, p_a, p_c, p_q, p_p, p_k, m, r, z, t, a, c, q, pp, kind):
    """Write path point m (the caller checks m < len(p_r))."""
    p_r[m] = r
    p_z[m] = z
    p_t[m] = t
    p_a[m] = a
    p_c[m] = c
    p_q[m] = q
    p_p[m] = pp
    p_k[m] = kind


@numba.njit(cache=True, inline="always")
def _put_sample(s_z, s_t, s_a, s_q, s_c, s_p, s_cnt, k, z, t, a, q, c, pp, ns, nb, nt, nc):
    """Write sample k, and its counts when ``s_cnt`` has rows."""
    s_z[k] = z
    s_t[k] = t
    s_a[k] = a
    s_q[k] = q
    s_c[k] = c
    s_p[k] = pp
    if s_cnt.shape[0] > 0:
        s_cnt[k, 0] = ns
        s_cnt[k, 1] = nb
        s_cnt[k, 2] = nt
        s_cnt[k, 3] = nc


@numba.njit(cache=True, inline="always")
def _sign_change(qn, qsign):
    """1 when q changes sign against ``qsign`` (a caustic), else 0."""
    return 1 if (qn > 0.0 and qsign < 0) or (qn < 0.0 and qsign > 0) else 0


@numba.njit(cache=True, inline="always", fastmath=_FM)
def _reflect(gin, c, sa, q, p2, pp):
    """Reflection at the surface or the bottom, whose gradient ``gin`` (> 0 bends the ray
    back into the water) holds a ray this near grazing along it (|sin| 0 then).

    Returns (|sin|, P after the reflection); ``p2`` = p^2.
    """
    if gin > 0.0 and sa < RIDE_SINE and c * sa * sa < 2.0 * gin * RIDE_DEPTH:
        sa = 0.0
    if sa > 0.0:
        pp -= q * 2.0 * gin * p2 / sa
    return sa, pp


@numba.njit(cache=True, fastmath=_FM)
def _trace_ray(
    zn,
    cn,
    gn,
    tl,
    zs,
    theta,
    rmax,
    max_bounces,
    samp_r,
    s_z,
    s_t,
    s_a,
    s_q,
    s_c,
    s_p,
    s_cnt,
    p_r,
    p_z,
    p_t,
    p_a,
    p_c,
    p_q,
    p_p,
    p_k,
    rf_r,
    rf_a,
    rf_k,
    max_steps,
):
    """Trace one ray exactly; write samples at ``samp_r`` and (up to len(p_r)) path points.

    Per sample (``s_*``, length of ``samp_r`` or 0) and per path point (``p_*``): depth,
    time, angle (degrees), sound speed, the dynamic-ray q and P; path points also range and
    kind; ``s_cnt`` (0 rows, or one per sample) the counts of reflections, turning points
    and caustics so far; per reflection (up to len(rf_r)) its range, grazing angle and
    boundary (``REFLECTION_BOUNDARIES``).

    Returns (npoints, surface, bottom, turning, caustics, end_reason, steps).
    """
    n = zn.size - 1  # layers
    maxpts = p_r.size
    nsamp = samp_r.size
    i, d, c, p, sa = _launch(zn, cn, gn, zs, theta)
    z = zs
    r = 0.0
    t = 0.0
    q = 0.0
    pp = 1.0 / c
    qsign = 0
    ns = 0
    nb = 0
    nt = 0
    nc = 0
    reason = RANGE_REACHED
    npts = 0
    k = 0
    # start point and samples at r = 0
    if npts < maxpts:
        _put_point(
            p_r,
            p_z,
            p_t,
            p_a,
            p_c,
            p_q,
            p_p,
            p_k,
            npts,
            0.0,
            z,
            0.0,
            np.degrees(theta),
            c,
            0.0,
            pp,
            START,
        )
    npts += 1
    while k < nsamp and samp_r[k] <= 0.0:
        _put_sample(
            s_z,
            s_t,
            s_a,
            s_q,
            s_c,
            s_p,
            s_cnt,
            k,
            z,
            0.0,
            np.degrees(theta),
            0.0,
            c,
            pp,
            0,
            0,
            0,
            0,
        )
        k += 1
    steps = 0
    on_node = False
    while True:
        steps += 1
        if steps > max_steps:
            reason = STEP_LIMIT
            break
        if d == 0:
            # horizontal straight travel along a node or in an isovelocity layer
            while k < nsamp:
                dr = samp_r[k] - r
                _put_sample(
                    s_z,
                    s_t,
                    s_a,
                    s_q,
                    s_c,
                    s_p,
                    s_cnt,
                    k,
                    z,
                    t + dr / c,
                    0.0,
                    q + pp * c * dr,
                    c,
                    pp,
                    ns,
                    nb,
                    nt,
                    nc,
                )
                k += 1
            dr = rmax - r
            t += dr / c
            q += pp * c * dr
            r = rmax
            if npts < maxpts:
                _put_point(
                    p_r, p_z, p_t, p_a, p_c, p_q, p_p, p_k, npts, r, z, t, 0.0, c, q, pp, END
                )
            npts += 1
            reason = RANGE_REACHED
            break
        gm = gn[i] * d
        if d > 0:
            zb = zn[i + 1]
            cb = cn[i + 1]
        else:
            zb = zn[i]
            cb = cn[i]
        turning, dz, sb, ce, kk, dt = _layer_piece(z, c, sa, p, gm, zb, cb, tl[i], on_node)
        # samples inside this piece (and the end of the ray)
        rend = r + p * kk
        while k < nsamp and samp_r[k] <= rend:
            dzk, sk, ck, kk2, dt2 = _inside_piece(samp_r[k] - r, c, sa, p, gm, dz)
            qk = q + pp * kk2
            _put_sample(
                s_z,
                s_t,
                s_a,
                s_q,
                s_c,
                s_p,
                s_cnt,
                k,
                z + d * dzk,
                t + dt2,
                d * np.degrees(np.arctan2(sk, p * ck)),
                qk,
                ck,
                pp,
                ns,
                nb,
                nt,
                nc + _sign_change(qk, qsign),
            )
            k += 1
        if rend >= rmax:
            dzk, sa, c, kk2, dt2 = _inside_piece(rmax - r, c, sa, p, gm, dz)
            q = q + pp * kk2
            nc += _sign_change(q, qsign)
            r = rmax
            z = z + d * dzk
            t = t + dt2
            if npts < maxpts:
                _put_point(
                    p_r,
                    p_z,
                    p_t,
                    p_a,
                    p_c,
                    p_q,
                    p_p,
                    p_k,
                    npts,
                    r,
                    z,
                    t,
                    d * np.degrees(np.arctan2(sa, p * c)),
                    c,
                    q,
                    pp,
                    END,
                )
            npts += 1
            reason = RANGE_REACHED
            break
        # advance to the end of the piece
        q = q + pp * kk
        nc += _sign_change(q, qsign)
        if q > 0.0:
            qsign = 1
        elif q < 0.0:
            qsign = -1
        r = rend
        t += dt
        z = z + d * dz
        c = ce
        sa = sb
        stop = False
        if turning:
            on_node = False
            nt += 1
            d = -d
            sa = 0.0
            kind = TURNING_POINT
        else:
            z = zb
            c = cb
            p2 = p * p  # cos^2(theta) / c^2 at the node
            on_node = True
            if d > 0 and i == n - 1:
                nb += 1
                kind = BOTTOM_REFLECTION
                _store_reflection(rf_r, rf_a, rf_k, ns + nb - 1, r, sa, p * c, AT_BOTTOM)
                sa, pp = _reflect(-gn[n - 1], c, sa, q, p2, pp)
                d = -1
                if not sa > 0.0:
                    # grazing the bottom (horizontal within rounding): the ray goes on as
                    # a horizontal ray started there (along the bottom when the layer above
                    # would bend it straight back down)
                    on_node = False
                    d = _start_direction(zn, gn, n, n)
            elif d < 0 and i == 0:
                ns += 1
                kind = SURFACE_REFLECTION
                _store_reflection(rf_r, rf_a, rf_k, ns + nb - 1, r, sa, p * c, AT_SURFACE)
                sa, pp = _reflect(gn[0], c, sa, q, p2, pp)
                d = 1
                if not sa > 0.0:
                    on_node = False  # grazing the surface: likewise
                    d = _start_direction(zn, gn, 0, n)
            else:
                kind = LAYER_CROSSING
                # an inner node (kept inline: as a helper it cost ~7% of the fan kernel)
                j = i + 1 if d > 0 else i
                if sa > 0.0 and gn[j - 1] < 0.0 < gn[j]:
                    # a sound-speed minimum: the ray oscillates about the node, rising and
                    # sinking c s^2 / (2 |g|) at most; below RIDE_DEPTH it is a ray along
                    # the node (else ~1e6 tiny arcs per km)
                    gmin = min(-gn[j - 1], gn[j])
                    if sa < RIDE_SINE and c * sa * sa < 2.0 * gmin * RIDE_DEPTH:
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
            stop = ns + nb > max_bounces
        if npts < maxpts:
            _put_point(
                p_r,
                p_z,
                p_t,
                p_a,
                p_c,
                p_q,
                p_p,
                p_k,
                npts,
                r,
                z,
                t,
                d * np.degrees(np.arctan2(sa, p * c)),
                c,
                q,
                pp,
                kind,
            )
        npts += 1
        if stop:
            reason = ABSORBED
            break
    return npts, ns, nb, nt, nc, reason, steps


@numba.njit(cache=True, parallel=True)
def _fan_kernel(
    zn,
    cn,
    gn,
    tl,
    zs,
    thetas,
    rmax,
    max_bounces,
    samp_r,
    S_z,
    S_t,
    S_a,
    S_q,
    S_c,
    S_p,
    S_cnt,
    P_r,
    P_z,
    P_t,
    P_a,
    P_c,
    P_q,
    P_p,
    P_k,
    RF_r,
    RF_a,
    RF_k,
    out_int,
    max_steps,
):
    nray = thetas.size
    for j in prange(nray):
        cnt = S_cnt[j]
        res = _trace_ray(
            zn,
            cn,
            gn,
            tl,
            zs,
            thetas[j],
            rmax,
            max_bounces,
            samp_r,
            S_z[j],
            S_t[j],
            S_a[j],
            S_q[j],
            S_c[j],
            S_p[j],
            cnt,
            P_r[j],
            P_z[j],
            P_t[j],
            P_a[j],
            P_c[j],
            P_q[j],
            P_p[j],
            P_k[j],
            RF_r[j],
            RF_a[j],
            RF_k[j],
            max_steps,
        )
        for m in range(7):
            out_int[j, m] = res[m]
