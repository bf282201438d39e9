"""Compiled kernels of the transmission-loss field (:mod:`.loss`): geometric-beam summation.

One serial pass over the rays of a RayFan record (event points, no range samples), in
one call or in consecutive groups of rays (:func:`_beam_add`, the same sums either way;
then :func:`_beam_power`); for each segment between two points the ray state is interpolated linearly in range at the
receiver ranges inside it and one Gaussian geometric beam is added to the receiver depths
within three beam widths. Equations in :func:`seaprofile.propagation.loss.transmission_loss`.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

SURFACE_REFLECTION = 3
BOTTOM_REFLECTION = 4

_SQRT_2PI = math.sqrt(2.0 * math.pi)


@njit(cache=True)
def _first_at_or_above(a, x):
    """Index of the first a[i] >= x in the sorted array a (len(a) if none)."""
    lo = 0
    hi = a.size
    while lo < hi:
        mid = (lo + hi) // 2
        if a[mid] < x:
            lo = mid + 1
        else:
            hi = mid
    return lo


@njit(cache=True)
def _beam_add(
    first,
    last,
    rr,
    zz,
    tt,
    ang,
    cc,
    qq,
    kind,
    count,
    refl,
    launch,
    dtheta,
    c0,
    source_depth,
    alpha_z,
    alpha_db_m,
    ranges,
    depths,
    omegas,
    mode,
    min_width,
    field,
    inten,
    beams,
):
    """Add the beams of rays ``first .. last - 1`` onto the (depth, range) grid, in place.

    ``field`` (nf, nz, nr) complex128 takes the coherent sum (``mode`` 0), ``inten``
    (nf, nz, nr) float64 the intensity sums (``mode`` 1 semicoherent, 2 incoherent),
    ``beams`` (nz, nr) int32 the beam count. Rays are added in increasing order, so
    consecutive calls over ``0 .. a``, ``a .. b``, ... leave every cell's sum in the same
    order, hence the same bits, as one call over all rays. ``refl`` is the complex
    reflection coefficient of each ray's reflections in order; ``alpha_db_m`` the
    absorption (dB/m) at depths ``alpha_z``. Finish with :func:`_beam_power`.
    """
    nf = omegas.size
    for j in range(first, last):
        n = count[j]
        cos0 = math.cos(launch[j])
        # Lloyd-mirror source weighting of the semicoherent mode, per frequency
        amp_factor = 1.0
        refl_factor = 1.0 + 0.0j
        caustic_phase = 0.0
        absorb_db = 0.0
        ir = 0
        for i in range(n - 1):
            k = kind[j, i]
            if k == SURFACE_REFLECTION or k == BOTTOM_REFLECTION:
                refl_factor *= refl[j, ir]
                ir += 1
            r1 = rr[j, i]
            r2 = rr[j, i + 1]
            q1 = qq[j, i]
            q2 = qq[j, i + 1]
            if q1 * q2 < 0.0 or (q2 == 0.0 and q1 != 0.0):
                caustic_flip = True
            else:
                caustic_flip = False
            # absorption along the segment: path length ~ c dt, alpha at the middle depth
            ds = 0.5 * (cc[j, i] + cc[j, i + 1]) * (tt[j, i + 1] - tt[j, i])
            zmid = 0.5 * (zz[j, i] + zz[j, i + 1])
            a_mid = np.interp(zmid, alpha_z, alpha_db_m)
            # a reflection point stores the reflected angle: the segment ends incident
            th_end = ang[j, i + 1]
            k_end = kind[j, i + 1]
            if k_end == SURFACE_REFLECTION or k_end == BOTTOM_REFLECTION:
                th_end = -th_end
            if r2 > r1:
                k1 = _first_at_or_above(ranges, r1)
                k2 = _first_at_or_above(ranges, r2)
                for kr in range(k1, k2):
                    rk = ranges[kr]
                    w = (rk - r1) / (r2 - r1)
                    zr = zz[j, i] + w * (zz[j, i + 1] - zz[j, i])
                    tr = tt[j, i] + w * (tt[j, i + 1] - tt[j, i])
                    th = ang[j, i] + w * (th_end - ang[j, i])
                    cr = cc[j, i] + w * (cc[j, i + 1] - cc[j, i])
                    qr = q1 + w * (q2 - q1)
                    aq = abs(qr)
                    cth = math.cos(th)
                    sth = math.sin(th)
                    if cth < 1e-6:
                        continue
                    width = aq * dtheta
                    sigma = max(width, min_width)
                    # ray amplitude |p| = sqrt(c cos(theta0) / (c0 r |q|)), times the beam
                    # normalisation width / (sigma sqrt(2 pi)) (finite at caustics)
                    amp = math.sqrt(cr * cos0 / (c0 * rk * max(aq, 1e-30)))
                    amp *= 10.0 ** (-(absorb_db + a_mid * ds * w) / 20.0)
                    amp0 = amp
                    amp *= width / (sigma * _SQRT_2PI) * amp_factor
                    caus = caustic_phase
                    if caustic_flip and w * (q2 - q1) != 0.0 and (q1 * qr) < 0.0:
                        caus += 0.5 * math.pi
                    half = 3.0 * sigma / cth
                    d1 = _first_at_or_above(depths, zr - half)
                    d2 = _first_at_or_above(depths, zr + half)
                    for kz in range(d1, d2):
                        dz = depths[kz] - zr
                        nrm = dz * cth
                        g = math.exp(-0.5 * (nrm / sigma) ** 2)
                        beams[kz, kr] += 1
                        a = amp * g
                        tau = tr + dz * sth / cr
                        for f in range(nf):
                            if mode == 0:
                                ph = omegas[f] * tau - caus
                                field[f, kz, kr] += (
                                    a * refl_factor * (math.cos(ph) + 1j * math.sin(ph))
                                )
                            else:
                                s = 1.0
                                if mode == 1:
                                    kzs = omegas[f] / c0 * source_depth * math.sin(launch[j])
                                    s = 2.0 * math.sin(kzs) ** 2
                                # intensity beams: Gaussian of the intensity, normalised
                                ai = amp0 * amp0 * width / (sigma * _SQRT_2PI) * g
                                inten[f, kz, kr] += s * ai * abs(refl_factor) ** 2
            if caustic_flip:
                caustic_phase += 0.5 * math.pi
            absorb_db += a_mid * ds


@njit(cache=True)
def _beam_power(field, inten, mode):
    """Intensity |field|^2 into ``inten`` for the coherent ``mode`` 0 (in place)."""
    if mode != 0:
        return
    nf, nz, nr = field.shape
    for f in range(nf):
        for kz in range(nz):
            for kr in range(nr):
                v = field[f, kz, kr]
                inten[f, kz, kr] = v.real * v.real + v.imag * v.imag
