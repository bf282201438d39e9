"""Flag arithmetic: flags are never lowered; derived quantities take the worst flag."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.casts.flags import raise_flags, worst_flag

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
