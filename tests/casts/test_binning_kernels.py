"""The compiled per-bin loop of bin_cast gives what numpy.bincount and numpy division give."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.casts._binning_kernels import _bin_numbers_kernel, _bin_stats, _isolated_in_order


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


@settings(max_examples=200, deadline=None)
@given(
    st.lists(st.floats(0.0, 100.0), min_size=0, max_size=40),
    st.floats(0.0, 20.0),
    st.integers(0, 2**32 - 1),
)
def test_isolated_in_order_matches_the_sorted_gaps(values, distance, seed):
    # invariant: in a sorted run the gaps to the previous and next placed value decide,
    # as numpy.diff of the placed values does (a missing neighbour is infinitely far)
    rng = np.random.default_rng(seed)
    x = np.sort(np.array(values, np.float64))
    placed = rng.random(x.size) < 0.8
    xs = x[placed]
    gap = np.diff(xs)
    expected = np.zeros(x.size, bool)
    expected[placed] = (np.concatenate(([np.inf], gap)) > distance) & (
        np.concatenate((gap, [np.inf])) > distance
    )
    out = np.zeros(x.size, bool)
    assert _isolated_in_order(x, placed, distance, out)
    np.testing.assert_array_equal(out, expected)
    if xs.size > 1 and xs[0] < xs[-1]:  # out of order: refused, out untouched
        shuffled = x[::-1].copy()
        untouched = np.zeros(x.size, bool)
        assert not _isolated_in_order(shuffled, placed[::-1].copy(), distance, untouched)
        assert not untouched.any()


@settings(max_examples=200, deadline=None)
@given(
    st.lists(st.floats(-1e3, 1e22), min_size=1, max_size=40),
    st.sampled_from([0.1, 0.25, 1.0, 5.0, 1e-300]),
    st.integers(0, 2**32 - 1),
)
def test_bin_numbers_kernel_matches_numpy(values, step, seed):
    # invariant: floor(x / step + 0.5) as numpy computes it, with the extremes of the
    # placed values; bin numbers too large for int64 are reported, not converted
    x = np.array(values, np.float64)
    placed = np.random.default_rng(seed).random(x.size) < 0.8
    placed[0] = True
    lo, hi, k, kmin, kmax, fits = _bin_numbers_kernel(x, placed, step)
    assert (lo, hi) == (x[placed].min(), x[placed].max())
    with np.errstate(over="ignore"):
        f = np.floor(x[placed] / step + 0.5)
    assert fits == bool((np.abs(f) < 2.0**62).all())
    if fits:
        assert k[placed].tolist() == f.astype(np.int64).tolist() and not k[~placed].any()
        assert (kmin, kmax) == (int(f.min()), int(f.max()))
