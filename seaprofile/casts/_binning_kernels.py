"""Compiled loop behind :func:`seaprofile.casts.binning.bin_cast`: per-bin counts, sums
and highest flags in one pass over the samples.

The sums add the samples in their order, as :func:`numpy.bincount` does, so the bin means
are the same to the last bit.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True)
def _bin_totals(idx, use, values, flags, nb):
    """Count, sum and highest flag of the samples ``use`` in each of ``nb`` bins.

    ``idx`` (int64, 0..nb-1 where ``use``): the bin of each sample; ``values`` (float64,
    any units) summed in sample order; ``flags`` (int8): the highest of them and 0 per bin.
    """
    count = np.zeros(nb, np.int64)
    total = np.zeros(nb)
    highest = np.zeros(nb, np.int8)
    for i in range(idx.size):
        if use[i]:
            k = idx[i]
            count[k] += 1
            total[k] += values[i]
            if flags[i] > highest[k]:
                highest[k] = flags[i]
    return count, total, highest
