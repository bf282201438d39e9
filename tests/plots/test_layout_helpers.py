"""Invariants of the label placer and the crowded-tick thinning used by every figure."""

import numpy as np
from figure_checks import colliding_tick_labels
from hypothesis import given
from hypothesis import strategies as st
from matplotlib.figure import Figure
from matplotlib.ticker import MaxNLocator

from seaprofile.plots._layout import spread, thin_crowded_ticks

positions = st.lists(st.floats(0.0, 1000.0, allow_nan=False), min_size=1, max_size=40)


@given(positions, st.floats(1.0, 40.0))
def test_spread_keeps_order_spacing_and_bounds(wanted, width):
    wanted = sorted(wanted)
    lo, hi = 0.0, 1000.0
    out = spread(wanted, width, lo, hi)
    assert len(out) == len(wanted)
    gaps = np.diff(out)
    assert np.all(gaps >= width * (1 - 1e-9))  # never closer than one label width
    if (len(out) - 1) * width <= hi - lo:  # they fit: all inside the bounds
        assert min(out) >= lo - 1e-9 and max(out) <= hi + 1e-9


@given(positions)
def test_spread_leaves_uncrowded_labels_where_they_are(wanted):
    wanted = sorted(set(round(v) * 50.0 for v in wanted))[:20]  # 50 apart, width 10
    out = spread(wanted, 10.0, -1e6, 1e6)
    np.testing.assert_allclose(out, wanted)


def test_thin_crowded_ticks_thins_automatic_ticks_only():
    fig = Figure(figsize=(1.2, 3.0))
    ax = fig.add_subplot()
    ax.plot([1490.0, 1550.0], [0.0, 1.0])
    ax.set_xticks(np.arange(1490.0, 1551.0, 5.0))  # fixed, far too many on purpose
    thin_crowded_ticks(fig)
    assert colliding_tick_labels(fig)  # ticks placed on purpose are left alone
    ax.xaxis.set_major_locator(MaxNLocator(nbins=12))
    thin_crowded_ticks(fig)  # automatic ones are thinned until they part
    assert colliding_tick_labels(fig) == []
