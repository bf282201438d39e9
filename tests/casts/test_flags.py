"""Flag arithmetic: flags are never lowered; derived quantities take the worst flag."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import _cf
from seaprofile.casts.flags import raise_flags, raise_where, worst_flag
from seaprofile.io.errors import ArgumentError

FLAGS = [0, 1, 2, 3, 4, 5, 8, 9]
# severity used by raise_flags: Argo order 0 < 1 < 2 < 3 < 4, with 5 between 2 and 3
RANK = {0: 0, 1: 1, 2: 2, 5: 3, 3: 4, 4: 5}


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.sampled_from(FLAGS), min_size=1, max_size=40),
    st.lists(st.sampled_from(FLAGS), min_size=1, max_size=40),
)
def test_raise_flags_never_lowers(old, new):
    n = min(len(old), len(new))
    old, new = np.array(old[:n], np.int8), np.array(new[:n], np.int8)
    out = raise_flags(old, new)
    for o, r in zip(old, out):
        if o in (8, 9):
            assert r == o
        else:
            assert RANK.get(int(r), 0) >= RANK[int(o)]


def test_worst_flag_order():
    # derived values: 0 < 1 < 2 < 5 < 8 < 3 < 4 < 9
    assert worst_flag([1, 1, 8, 8, 4], [2, 8, 3, 9, 9]).tolist() == [2, 8, 3, 9, 9]


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.sampled_from(FLAGS), min_size=0, max_size=40),
    st.data(),
    st.sampled_from(FLAGS),
)
def test_raise_where_is_raise_flags_of_the_masked_flag(old, data, flag):
    # internal consistency: the one-pass kernel quality control uses must equal the
    # definition raise_flags(old, where(mask, flag, 0))
    old = np.array(old, np.int8)
    mask = np.array(data.draw(st.lists(st.booleans(), min_size=old.size, max_size=old.size)))
    mask = mask.astype(bool).reshape(old.shape)
    expected = raise_flags(old, np.where(mask, flag, 0))
    assert np.array_equal(raise_where(old, mask, flag), expected)
    assert raise_where(old, mask, flag).dtype == np.int8


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.integers(-128, 127), max_size=30),
    st.sampled_from([_cf.UNUSABLE_FLAGS, _cf.NOT_MEASURED_FLAGS, _cf.FAILED_FLAGS, (0,)]),
)
def test_flags_in_is_isin(flags, which):
    # the look-up table against numpy.isin, for every int8 value and other int types
    f = np.array(flags, dtype=np.int8)
    assert np.array_equal(_cf.flags_in(f, which), np.isin(f, which))
    assert np.array_equal(_cf.flags_in(f.astype(np.int64), which), np.isin(f, which))


def test_raise_flags_refuses_values_that_are_not_flags():
    with pytest.raises(ArgumentError, match="new"):
        raise_flags(np.array([1, 1], np.int8), np.array([1, 12], np.int8))
    with pytest.raises(ArgumentError, match="flag"):
        raise_where(np.array([1], np.int8), np.array([True]), 11)
