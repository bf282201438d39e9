"""Numba kernels of :mod:`seaprofile.layers.channels`: whole blocks of profiles per call.

Each kernel takes the profiles as rows (``(count, n)``, or ``(1, n)`` when shared, see
:func:`seaprofile.layers._common._profile_rows`), runs without the GIL (so dask threads
run chunks side by side) and returns a status (1: the valid depths of a profile do not
strictly increase). They give bit for bit the numbers of the former one-profile-at-a-time
numpy code: the local minima, their prominence and the width of their well follow the
definitions of ``scipy.signal.find_peaks`` on ``-c`` (``prominence=min_contrast``,
``width=0``, ``rel_height=1``), in the same floating-point operations.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ._common import _valid_row


@numba.njit(cache=True, nogil=True, inline="always")
def _interp_index(x, z, m):
    """``numpy.interp(x, arange(m), z)`` for ``0 <= x <= m - 1`` (numpy's operations)."""
    if x >= m - 1:
        return z[m - 1]
    j = int(math.floor(x))
    if j == x:
        return z[j]
    slope = (z[j + 1] - z[j]) / ((j + 1.0) - j)
    return slope * (x - j) + z[j]


@numba.njit(cache=True, nogil=True)
def _channels_kernel(speed, depth, below, min_contrast, min_thickness, out, still):
    """Channel axis and secondary channel of each row; ``out`` is ``(7, count)``."""
    count = out.shape[1]
    n = speed.shape[1]
    zbuf = np.empty(n)
    cbuf = np.empty(n)
    x = np.empty(n)
    peaks = np.empty(n, dtype=np.int64)
    for r in range(count):
        for k in range(7):
            out[k, r] = np.nan
        still[r] = False
        m = _valid_row(speed, depth, r, zbuf, cbuf)
        if m < 0:
            return 1
        b = below[r if below.shape[0] > 1 else 0]
        s = 0
        if math.isfinite(b):
            while s < m and not zbuf[s] >= b:
                s += 1
        z = zbuf[s:m]
        c = cbuf[s:m]
        m = m - s
        if m < 3:
            continue
        i = 0
        for k in range(1, m):
            if c[k] < c[i]:
                i = k
        if i == m - 1:
            still[r] = True
        up = c[0]
        for k in range(1, i + 1):
            up = max(up, c[k])
        down = c[i]
        for k in range(i + 1, m):
            down = max(down, c[k])
        contrast = (down if down < up else up) - c[i]
        axis = -1
        if 0 < i < m - 1 and contrast >= min_contrast:
            axis = i
            out[0, r] = z[i]
            out[1, r] = c[i]
            out[2, r] = contrast
        for k in range(m):
            x[k] = -c[k]
        # local maxima of x (plateaus: the middle sample), the ends excluded
        npk = 0
        k = 1
        while k < m - 1:
            if x[k - 1] < x[k]:
                ahead = k + 1
                while ahead < m - 1 and x[ahead] == x[k]:
                    ahead += 1
                if x[ahead] < x[k]:
                    peaks[npk] = (k + ahead - 1) // 2
                    npk += 1
                    k = ahead
            k += 1
        best = -1
        best_prom = 0.0
        best_thick = 0.0
        for q in range(npk):
            p = peaks[q]
            xp = x[p]
            # prominence and bases
            lb = p
            lmin = xp
            k = p
            while k >= 0 and x[k] <= xp:
                if x[k] < lmin:
                    lmin = x[k]
                    lb = k
                k -= 1
            rb = p
            rmin = xp
            k = p
            while k <= m - 1 and x[k] <= xp:
                if x[k] < rmin:
                    rmin = x[k]
                    rb = k
                k += 1
            prom = xp - max(lmin, rmin)
            if not min_contrast <= prom:
                continue
            # width of the well at rel_height = 1
            height = xp - prom * 1.0
            k = p
            while lb < k and height < x[k]:
                k -= 1
            left = float(k)
            if x[k] < height:
                left += (height - x[k]) / (x[k + 1] - x[k])
            k = p
            while k < rb and height < x[k]:
                k += 1
            right = float(k)
            if x[k] < height:
                right -= (height - x[k]) / (x[k - 1] - x[k])
            if not right - left >= 0.0:
                continue
            thick = _interp_index(right, z, m) - _interp_index(left, z, m)
            if not thick >= min_thickness or p == axis:
                continue
            if axis >= 0 and not abs(c[p] - c[axis]) > 1e-9:
                continue
            if best < 0 or prom > best_prom:
                best = p
                best_prom = prom
                best_thick = thick
        if best >= 0:
            out[3, r] = z[best]
            out[4, r] = c[best]
            out[5, r] = best_prom
            out[6, r] = best_thick
    return 0


@numba.njit(cache=True, nogil=True)
def _critical_kernel(speed, depth, reference, axis_depth, out):
    """Shallowest depth below the axis where speed regains the reference, per row."""
    n = speed.shape[1]
    zbuf = np.empty(n)
    cbuf = np.empty(n)
    for r in range(out.shape[0]):
        out[r] = np.nan
        m = _valid_row(speed, depth, r, zbuf, cbuf)
        if m < 0:
            return 1
        ref = reference[r if reference.shape[0] > 1 else 0]
        ax = axis_depth[r if axis_depth.shape[0] > 1 else 0]
        if not (math.isfinite(ax) and math.isfinite(ref)):
            continue
        first = -1
        for j in range(m):
            if zbuf[j] >= ax:
                if first < 0:
                    first = j
                if cbuf[j] >= ref:
                    if j == first:
                        out[r] = zbuf[j]
                    else:
                        z0, z1, c0, c1 = zbuf[j - 1], zbuf[j], cbuf[j - 1], cbuf[j]
                        out[r] = z0 + (ref - c0) * (z1 - z0) / (c1 - c0)
                    break
    return 0
