"""Compiled loop behind :func:`seaprofile.casts.binning.bin_cast`: per-bin counts, means
and highest flags in one pass over the samples.

The sums add the samples in their order, as :func:`numpy.bincount` does, so the bin means
are the same to the last bit.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True)
def _bin_stats(idx, binned, placed, ok, values, flags, nb, empty_flag):
    """Per bin, over the samples ``binned & ok``: their count, mean (NaN if none) and
    highest flag (``empty_flag`` if none); and the count of the samples ``placed & ~ok``.

    ``idx`` (int64, 0..nb-1 where ``binned``): the bin of each sample; ``values``
    (float64, any units) summed in sample order and divided by the count, as
    ``numpy.bincount`` sums and numpy divides; ``flags`` int8.
    """
    count = np.zeros(nb, np.int64)
    total = np.zeros(nb)
    highest = np.zeros(nb, np.int8)
    left_out = 0
    for i in range(idx.size):
        if ok[i]:
            if binned[i]:
                k = idx[i]
                count[k] += 1
                total[k] += values[i]
                if flags[i] > highest[k]:
                    highest[k] = flags[i]
        elif placed[i]:
            left_out += 1
    mean = np.empty(nb)
    for k in range(nb):
        if count[k] > 0:
            mean[k] = total[k] / count[k]
        else:
            mean[k] = np.nan
            highest[k] = empty_flag
    return count, mean, highest, left_out


@numba.njit(cache=True)
def _isolated_in_order(x, placed, distance, out):
    """Set ``out`` True at the samples ``placed`` whose nearest placed neighbours above and
    below are both farther than ``distance`` (finite; a missing neighbour is far), when
    the placed values of ``x`` (finite) are in order; return False, ``out`` untouched,
    when they are not."""
    prev = -1
    for i in range(x.size):
        if placed[i]:
            if prev >= 0 and x[i] < x[prev]:
                return False
            prev = i
    before, here = -1, -1  # the last two placed samples seen
    for i in range(x.size + 1):
        if i < x.size and not placed[i]:
            continue
        if here >= 0:
            above = x[here] - x[before] if before >= 0 else np.inf
            below = x[i] - x[here] if i < x.size else np.inf
            out[here] = above > distance and below > distance
        before, here = here, i
    return True


@numba.njit(cache=True)
def _bin_numbers_kernel(x, placed, step):
    """``(lo, hi, k, kmin, kmax, fits)`` for the samples ``placed`` of ``x`` (finite): their
    smallest and largest value and their bin numbers ``floor(x / step + 0.5)`` (``k``,
    int64, 0 elsewhere; bin step ``step`` in the units of ``x``), computed as numpy
    computes them. ``fits`` is False when a bin number reaches 2**62 (then ``k`` is not
    to be used).
    """
    k = np.zeros(x.size, np.int64)
    lo, hi = np.inf, -np.inf
    kmin, kmax = 0, 0
    first, fits = True, True
    for i in range(x.size):
        if not placed[i]:
            continue
        v = x[i]
        if v < lo:
            lo = v
        if v > hi:
            hi = v
        f = np.floor(v / step + 0.5)
        if not abs(f) < 2.0**62:
            fits = False
            continue
        k[i] = int(f)
        if first or k[i] < kmin:
            kmin = k[i]
        if first or k[i] > kmax:
            kmax = k[i]
        first = False
    return lo, hi, k, kmin, kmax, fits
