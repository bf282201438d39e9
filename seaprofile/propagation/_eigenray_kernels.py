"""Compiled bracketing and refinement kernels of the eigenray search (:mod:`.eigenrays`).

Each evaluates exact layered rays (:func:`seaprofile.propagation._arcs._trace_ray`) at a
receiver range: the special points (folds and kinks) between neighbouring fan rays, the
sign changes of the depth miss that bracket an eigenray, and the safeguarded Newton
refinement of each bracket on the launch angle. The method is described in the docstring
of :mod:`seaprofile.propagation.eigenrays`.
"""

from __future__ import annotations

import numba
import numpy as np
from numba import prange

from ._arcs import _trace_ray


@numba.njit(cache=True)
def _eval(
    zn,
    cn,
    gn,
    tl,
    zs,
    x,
    r,
    max_refl,
    samp,
    s_z,
    s_t,
    s_a,
    s_q,
    s_c,
    s_p,
    s_cnt,
    e_r,
    e_k,
    max_steps,
):
    """Trace one ray (launch angle x, rad) to range r; returns (depth, dz/dtheta0, count)."""
    s_z[0] = np.nan
    _trace_ray(
        zn,
        cn,
        gn,
        tl,
        zs,
        x,
        r,
        max_refl,
        samp,
        s_z,
        s_t,
        s_a,
        s_q,
        s_c,
        s_p,
        s_cnt,
        e_r,
        e_r,
        e_r,
        e_r,
        e_r,
        e_r,
        e_r,
        e_k,
        e_r,
        e_r,
        e_k,
        max_steps,
    )
    sgn = 1.0 if (s_cnt[0, 0] + s_cnt[0, 1]) % 2 == 0 else -1.0
    cosr = np.cos(np.radians(s_a[0]))
    deriv = sgn * s_q[0] / cosr if cosr > 0.0 else 0.0
    return s_z[0], deriv, s_cnt[0, 0] + s_cnt[0, 1]


@numba.njit(cache=True, parallel=True)
def _find_specials(
    zn,
    cn,
    gn,
    tl,
    zs,
    th,
    Z,
    Q,
    A,
    CNT,
    ranges,
    zr,
    bottom,
    max_refl,
    sp_th,
    sp_z,
    sp_th_far,
    max_steps,
):
    """Between neighbouring fan rays, locate a fold (dz/dtheta0 = 0 inside one family) or a
    kink (a surface / bottom reflection at the receiver range) and its depth.

    ``sp_th`` is the launch angle on the side of ray a, ``sp_th_far`` on the side of ray
    a + 1: the same angle for a fold, the two ends of the final bisection interval of a
    kink (the rays that reflect just after and just before the receiver range).
    """
    nray, nr = Z.shape
    zr_min = zr.min()
    zr_max = zr.max()
    for k in prange(nr):
        r = ranges[k]
        samp = np.empty(1)
        samp[0] = r
        s_z = np.empty(1)
        s_t = np.empty(1)
        s_a = np.empty(1)
        s_q = np.empty(1)
        s_c = np.empty(1)
        s_p = np.empty(1)
        s_cnt = np.zeros((1, 4), dtype=np.int32)
        e_r = np.empty(0)
        e_k = np.empty(0, dtype=np.int8)
        for a in range(nray - 1):
            za = Z[a, k]
            zb = Z[a + 1, k]
            if not (za == za and zb == zb):
                continue
            na = CNT[a, k, 0] + CNT[a, k, 1]
            nb_ = CNT[a + 1, k, 0] + CNT[a + 1, k, 1]
            if CNT[a, k, 0] == CNT[a + 1, k, 0] and CNT[a, k, 1] == CNT[a + 1, k, 1]:
                sg = 1.0 if na % 2 == 0 else -1.0
                da = sg * Q[a, k]
                db = sg * Q[a + 1, k]
                if da == 0.0 or db == 0.0 or (da > 0.0) == (db > 0.0):
                    continue
                # fold: root of dz/dtheta0 by Illinois, bisection as the fallback
                lo = th[a]
                hi = th[a + 1]
                dlo = da / np.cos(np.radians(A[a, k]))
                dhi = db / np.cos(np.radians(A[a + 1, k]))
                # the extremum lies within (angle step) x (largest end slope) of the ends
                # (mean-value bound); search only if a receiver could lie in that bulge
                bound = (th[a + 1] - th[a]) * max(abs(dlo), abs(dhi))
                need = False
                for jd in range(zr.size):
                    if dlo > 0.0:  # maximum
                        if max(za, zb) < zr[jd] <= max(za, zb) + bound:
                            need = True
                    elif min(za, zb) - bound <= zr[jd] < min(za, zb):
                        need = True
                if not need:
                    continue
                x = 0.5 * (lo + hi)
                zx = np.nan
                side = 0
                for _it in range(60):
                    if dhi != dlo:
                        x = hi - dhi * (hi - lo) / (dhi - dlo)
                    if not (lo < x < hi):
                        x = 0.5 * (lo + hi)
                    zx, dx, nx = _eval(
                        zn,
                        cn,
                        gn,
                        tl,
                        zs,
                        x,
                        r,
                        max_refl,
                        samp,
                        s_z,
                        s_t,
                        s_a,
                        s_q,
                        s_c,
                        s_p,
                        s_cnt,
                        e_r,
                        e_k,
                        max_steps,
                    )
                    if zx != zx or nx != na:
                        break
                    if (dx > 0.0) == (dlo > 0.0):
                        lo = x
                        dlo = dx
                        if side == -1:
                            dhi *= 0.5
                        side = -1
                    else:
                        hi = x
                        dhi = dx
                        if side == 1:
                            dlo *= 0.5
                        side = 1
                    if hi - lo < 1e-13:
                        break
                if zx == zx:
                    sp_th[a, k] = x
                    sp_z[a, k] = zx
                    sp_th_far[a, k] = x
            elif abs(na - nb_) == 1:
                surface = CNT[a, k, 0] != CNT[a + 1, k, 0]
                # only needed when a receiver lies between the kink and both neighbours
                # (or on a neighbour that lies on the boundary itself: a receiver on the
                # surface or the bottom next to a ray launched along it)
                if surface and not zr_min <= min(za, zb):
                    continue
                if (not surface) and not zr_max >= max(za, zb):
                    continue
                lo = th[a]
                hi = th[a + 1]
                for _it in range(45):
                    x = 0.5 * (lo + hi)
                    zx, dx, nx = _eval(
                        zn,
                        cn,
                        gn,
                        tl,
                        zs,
                        x,
                        r,
                        max_refl,
                        samp,
                        s_z,
                        s_t,
                        s_a,
                        s_q,
                        s_c,
                        s_p,
                        s_cnt,
                        e_r,
                        e_k,
                        max_steps,
                    )
                    if nx == na:
                        lo = x
                    else:
                        hi = x
                    if hi - lo < 1e-14:
                        break
                # depth on the family-a side of the boundary: 0 or the bottom for a true
                # reflection kink, the grazing depth when the ray just touches the boundary
                zx, dx, nx = _eval(
                    zn,
                    cn,
                    gn,
                    tl,
                    zs,
                    lo,
                    r,
                    max_refl,
                    samp,
                    s_z,
                    s_t,
                    s_a,
                    s_q,
                    s_c,
                    s_p,
                    s_cnt,
                    e_r,
                    e_k,
                    max_steps,
                )
                if zx == zx:
                    sp_th[a, k] = lo
                    sp_z[a, k] = zx
                    sp_th_far[a, k] = hi


@numba.njit(cache=True)
def _pair_changes(za, zb, zsp, zt, out, on_boundary, tol):
    """Sign changes of the miss on [a, a+1] split at a special point: out[0..2] flags.

    ``on_boundary``: the receiver lies on the surface or the bottom, where the depth never
    changes sign. There a special point within ``tol`` of the receiver depth is a kink whose
    boundary ray reflects exactly at the receiver: it counts on both of its sides (the
    incident and the reflected path, see :mod:`.eigenrays`).
    """
    out[0] = 0
    out[1] = 0
    out[2] = 0
    if on_boundary:
        if zsp == zsp and abs(zsp - zt) <= tol:
            out[1] = 1
            out[2] = 1
        return
    if zsp == zsp:
        if (za - zt < 0.0) != (zsp - zt < 0.0):
            out[1] = 1
        if (zsp - zt < 0.0) != (zb - zt < 0.0):
            out[2] = 1
    elif (za - zt < 0.0) != (zb - zt < 0.0):
        out[0] = 1


@numba.njit(cache=True, parallel=True)
def _brackets(Z, sp_z, zr, bottom, tol, offsets, fill, counts, bk, bj, ba, bs):
    """Count (fill=False) or list (fill=True) the brackets of every receiver."""
    nray, nr = Z.shape
    nd = zr.size
    for k in prange(nr):
        flags = np.zeros(3, dtype=np.int64)
        for jd in range(nd):
            on_boundary = zr[jd] <= 0.0 or zr[jd] >= bottom
            m = offsets[k, jd]
            c = 0
            for a in range(nray - 1):
                za = Z[a, k]
                zb = Z[a + 1, k]
                if not (za == za and zb == zb):
                    continue
                _pair_changes(za, zb, sp_z[a, k], zr[jd], flags, on_boundary, tol)
                for sub in range(3):
                    if flags[sub]:
                        if fill:
                            bk[m + c] = k
                            bj[m + c] = jd
                            ba[m + c] = a
                            bs[m + c] = sub
                        c += 1
            counts[k, jd] = c


@numba.njit(cache=True, parallel=True)
def _refine(
    zn,
    cn,
    gn,
    tl,
    zs,
    th,
    Z,
    sp_th,
    sp_z,
    sp_th_far,
    ranges,
    zr,
    bk,
    bj,
    ba,
    bs,
    max_refl,
    ftol,
    out_f,
    out_i,
    max_steps,
):
    nb = bk.size
    for b in prange(nb):
        k = bk[b]
        jd = bj[b]
        a = ba[b]
        r = ranges[k]
        zt = zr[jd]
        samp = np.empty(1)
        samp[0] = r
        s_z = np.empty(1)
        s_t = np.empty(1)
        s_a = np.empty(1)
        s_q = np.empty(1)
        s_c = np.empty(1)
        s_p = np.empty(1)
        s_cnt = np.zeros((1, 4), dtype=np.int32)
        e_r = np.empty(0)
        e_k = np.empty(0, dtype=np.int8)
        lo = th[a]
        hi = th[a + 1]
        flo = Z[a, k] - zt
        fhi = Z[a + 1, k] - zt
        if bs[b] == 1:
            hi = sp_th[a, k]
            fhi = sp_z[a, k] - zt
        elif bs[b] == 2:
            lo = sp_th_far[a, k]
            flo = sp_z[a, k] - zt
        if fhi != flo:
            x = lo - flo * (hi - lo) / (fhi - flo)
        else:
            x = 0.5 * (lo + hi)
        if not (lo <= x <= hi):
            x = 0.5 * (lo + hi)
        # a special point that is itself on the receiver (a kink reflecting exactly at a
        # receiver on the surface or the bottom) is the root: start there
        if bs[b] == 1 and abs(fhi) <= ftol:
            x = hi
        elif bs[b] == 2 and abs(flo) <= ftol:
            x = lo
        ok = 0
        f = np.nan
        for _it in range(80):
            s_z[0] = np.nan
            _trace_ray(
                zn,
                cn,
                gn,
                tl,
                zs,
                x,
                r,
                max_refl,
                samp,
                s_z,
                s_t,
                s_a,
                s_q,
                s_c,
                s_p,
                s_cnt,
                e_r,
                e_r,
                e_r,
                e_r,
                e_r,
                e_r,
                e_r,
                e_k,
                e_r,
                e_r,
                e_k,
                max_steps,
            )
            f = s_z[0] - zt
            if f != f:
                # absorbed before the receiver: shrink towards the valid end points
                x = 0.5 * (lo + hi)
                continue
            if abs(f) < ftol:
                ok = 1
                break
            if (f < 0.0) == (flo < 0.0):
                lo = x
                flo = f
            else:
                hi = x
                fhi = f
            sgn = 1.0 if (s_cnt[0, 0] + s_cnt[0, 1]) % 2 == 0 else -1.0
            cosr = np.cos(np.radians(s_a[0]))
            deriv = sgn * s_q[0] / cosr if cosr > 0.0 else 0.0
            xn = x - f / deriv if deriv != 0.0 else 0.5 * (lo + hi)
            if not (lo < xn < hi):
                xn = 0.5 * (lo + hi)
            if abs(xn - x) < 1e-15 or hi - lo < 1e-15:
                x = xn
                ok = 1
                s_z[0] = np.nan
                _trace_ray(
                    zn,
                    cn,
                    gn,
                    tl,
                    zs,
                    x,
                    r,
                    max_refl,
                    samp,
                    s_z,
                    s_t,
                    s_a,
                    s_q,
                    s_c,
                    s_p,
                    s_cnt,
                    e_r,
                    e_r,
                    e_r,
                    e_r,
                    e_r,
                    e_r,
                    e_r,
                    e_k,
                    e_r,
                    e_r,
                    e_k,
                    max_steps,
                )
                f = s_z[0] - zt
                # a collapsed bracket is a root only if the miss is small (not a jump)
                if not abs(f) < 1e3 * ftol:
                    ok = 0
                break
            x = xn
        out_f[b, 0] = np.degrees(x)
        out_f[b, 1] = s_t[0]
        out_f[b, 2] = s_a[0]
        out_f[b, 3] = s_q[0]
        out_f[b, 4] = f
        out_i[b, 0] = ok
        out_i[b, 1] = s_cnt[0, 0]
        out_i[b, 2] = s_cnt[0, 1]
        out_i[b, 3] = s_cnt[0, 2]
        out_i[b, 4] = s_cnt[0, 3]
