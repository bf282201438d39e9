"""Numba kernel of the beam summation behind :func:`seaprofile.propagation.loss.transmission_loss`.

One pass over the rays (split into one chunk per thread, each with its own field buffer, so
no two threads write the same cell): along each ray, at each grid range, the ray point is
interpolated from the traced samples, the reflection coefficients met so far are multiplied
in, caustics counted (sign changes of q), absorption integrated (alpha(z) ds, ds = c dt),
and the beam is added to the depth cells within three beam widths.
"""

from __future__ import annotations

import math

import numba
import numpy as np

#: beams are cut at this many widths (Gaussian amplitude exp(-4.5), about 1.1 %)
CUT = 3.0


@numba.njit(cache=True, parallel=True)
def _beam_sum(
    sr,
    sz,
    st,
    sth,
    sc,
    sq,
    sp,  # samples (ray, sample): m, m, s, rad, m/s, m/rad, s/m/rad
    refl_r,
    refl_re,
    refl_im,  # reflections (ray, reflection): range m, complex R
    launch,
    dtheta,
    c0,
    zs,  # launch angle rad (ray,), spacing rad, source speed m/s, depth m
    grid_r,
    grid_z,
    bottom,  # grid ranges m, depths m, bottom depth at grid ranges m
    alpha_z,
    alpha_v,  # absorption table: depths m, dB/m
    omega,
    mode,
    nchunk,
):
    nray, ns = sr.shape
    nr = grid_r.size
    nz = grid_z.size
    fre = np.zeros((nchunk, nz, nr))
    fim = np.zeros((nchunk, nz, nr))
    inten = np.zeros((nchunk, nz, nr))
    count = np.zeros((nchunk, nz, nr), dtype=np.int32)
    per = (nray + nchunk - 1) // nchunk
    sq2pi = math.sqrt(2.0 * math.pi)
    for ch in numba.prange(nchunk):
        lo = ch * per
        hi = min(nray, lo + per)
        for j in range(lo, hi):
            cos0 = math.cos(launch[j])
            weight = 1.0
            if mode == 2:  # semicoherent: Lloyd's-mirror source pattern
                s = math.sin(omega / c0 * zs * math.sin(launch[j]))
                weight = 2.0 * s * s
            i = 0  # sample index: sr[j, i] <= r < sr[j, i + 1]
            nrefl = 0
            rre = 1.0
            rim = 0.0
            ncaus = 0
            qprev = 0.0
            att = 0.0  # dB
            tprev = 0.0
            zprev = zs
            cprev = c0
            for k in range(nr):
                r = grid_r[k]
                while i + 1 < ns and sr[j, i + 1] < r - 1e-9:
                    i += 1
                if i + 1 >= ns or not np.isfinite(sr[j, i + 1]) or not np.isfinite(sz[j, i]):
                    if not (abs(sr[j, i] - r) <= 1e-9 and np.isfinite(sz[j, i])):
                        break
                    w = 0.0
                    i1 = i
                else:
                    i1 = i + 1
                    dr = sr[j, i1] - sr[j, i]
                    w = 0.0 if dr <= 0 else (r - sr[j, i]) / dr
                    if w < 0.0:
                        w = 0.0
                    if not np.isfinite(sz[j, i1]):
                        if w > 1e-9:
                            break
                        i1 = i
                z = sz[j, i] + w * (sz[j, i1] - sz[j, i])
                t = st[j, i] + w * (st[j, i1] - st[j, i])
                th = sth[j, i] + w * (sth[j, i1] - sth[j, i])
                c = sc[j, i] + w * (sc[j, i1] - sc[j, i])
                q = sq[j, i] + w * (sq[j, i1] - sq[j, i])
                p = sp[j, i] + w * (sp[j, i1] - sp[j, i])
                # reflections up to this range
                while (
                    nrefl < refl_r.shape[1]
                    and np.isfinite(refl_r[j, nrefl])
                    and (refl_r[j, nrefl] <= r + 1e-9)
                ):
                    a = rre * refl_re[j, nrefl] - rim * refl_im[j, nrefl]
                    b = rre * refl_im[j, nrefl] + rim * refl_re[j, nrefl]
                    rre = a
                    rim = b
                    nrefl += 1
                if q * qprev < 0.0:
                    ncaus += 1
                if q != 0.0:
                    qprev = q
                # absorption: alpha at the mid depth times the path length c dt
                zm = 0.5 * (z + zprev)
                am = np.interp(zm, alpha_z, alpha_v)
                att += am * 0.5 * (c + cprev) * abs(t - tprev)
                tprev = t
                zprev = z
                cprev = c
                aq = abs(q)
                lam = 2.0 * math.pi * c / omega
                width = aq * dtheta
                if width < lam:
                    width = lam
                reff = r if r > 1.0 else 1.0
                amp = math.sqrt(c * abs(cos0) * aq / (c0 * reff)) * dtheta / (sq2pi * width)
                amp *= 10.0 ** (-att / 20.0)
                amp *= math.sqrt(rre * rre + rim * rim)
                # intensity beam: A^2 (|q| d theta) exp(-n^2 / W^2) / (sqrt(pi) W)
                ia = amp * amp * 2.0 * width / (aq * dtheta) * math.sqrt(math.pi) if aq > 0 else 0.0
                cth = abs(math.cos(th))
                if cth < 1e-6:
                    cth = 1e-6
                ext = CUT * width / cth
                sth_ = math.sin(th) / c  # along-ray slowness offset per metre of depth
                ka = np.searchsorted(grid_z, z - ext)
                kb = np.searchsorted(grid_z, z + ext, side="right")
                phase0 = math.atan2(rim, rre) - 0.5 * math.pi * ncaus + omega * t
                curv = 0.0 if q == 0.0 else 0.5 * p / q
                for m in range(ka, kb):
                    zz = grid_z[m]
                    if zz > bottom[k]:
                        break
                    n = (zz - z) * cth
                    count[ch, m, k] += 1
                    if mode == 0:
                        a = amp * math.exp(-0.5 * (n / width) ** 2)
                        ph = phase0 + omega * ((zz - z) * sth_ + curv * n * n)
                        fre[ch, m, k] += a * math.cos(ph)
                        fim[ch, m, k] += a * math.sin(ph)
                    else:
                        inten[ch, m, k] += weight * ia * math.exp(-((n / width) ** 2))
    out = np.zeros((nz, nr))
    cnt = np.zeros((nz, nr), dtype=np.int32)
    for m in range(nz):
        for k in range(nr):
            sre = 0.0
            sim = 0.0
            si = 0.0
            sc_ = 0
            for ch in range(nchunk):
                sre += fre[ch, m, k]
                sim += fim[ch, m, k]
                si += inten[ch, m, k]
                sc_ += count[ch, m, k]
            out[m, k] = sre * sre + sim * sim if mode == 0 else si
            cnt[m, k] = sc_
    return out, cnt
