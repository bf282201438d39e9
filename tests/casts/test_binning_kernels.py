"""The compiled per-bin loop of bin_cast gives what numpy.bincount and numpy division give."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.casts._binning_kernels import _bin_stats


@settings(max_examples=200, deadline=None)
@given(st.integers(1, 12), st.integers(0, 200), st.integers(0, 2**32 - 1))
def test_bin_stats_match_bincount_bit_for_bit(nb, n, seed):
    # invariant: sums in sample order (as numpy.bincount adds them), mean = sum / count
    rng = np.random.default_rng(seed)
    idx = rng.integers(0, nb, n).astype(np.int64)
    values = rng.normal(10.0, 5.0, n) * 10.0 ** rng.integers(-8, 8, n)
    flags = rng.choice(np.array([0, 1, 2, 3, 4, 5, 8, 9], np.int8), n)
    placed = rng.random(n) < 0.9
    binned = placed & (rng.random(n) < 0.9)
    ok = rng.random(n) < 0.8
    use = binned & ok
    count = np.bincount(idx[use], minlength=nb)
    total = np.bincount(idx[use], weights=values[use], minlength=nb)
    highest = np.zeros(nb, np.int8)
    np.maximum.at(highest, idx[use], flags[use])
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, total / count, np.nan)
    c, m, f, left = _bin_stats(idx, binned, placed, ok, values, flags, nb, 9)
    assert c.tolist() == count.tolist()
    assert m.tobytes() == mean.tobytes()
    assert f.tolist() == np.where(count > 0, highest, 9).tolist()
    assert left == int(np.count_nonzero(placed & ~ok))
