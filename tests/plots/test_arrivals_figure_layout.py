"""Arrivals figure, inspected after drawing: one time axis for every panel, angle labels
that never overlap each other, the markers' panel title or the figure edge."""

import numpy as np
import pytest
import xarray as xr
from figure_checks import (
    MIN_CONTRAST,
    colliding_tick_labels,
    contrast_on_white,
    drawn,
    overlapping,
    texts_outside,
)

from seaprofile import SeaprofileError
from seaprofile.plots.arrivals import KIND_COLOURS, plot_arrivals


def crowded_arrivals():
    """Arrivals-shaped Dataset: 3 receivers; 12 arrivals within 40 ms at the second."""
    t = [
        [20.87, 20.90, 20.95, 21.00, 23.78],
        list(40.146 + np.linspace(0.0, 0.04, 12)) + [41.83],
        [30.30, 30.32, 30.65, 30.68, 32.31],
    ]
    n = [len(v) for v in t]
    rng = np.random.default_rng(4)
    total = sum(n)
    return xr.Dataset(
        {
            "receiver_range_index": ("arrival", np.repeat([0, 1, 2], n).astype(np.int32)),
            "receiver_depth_index": ("arrival", np.zeros(total, np.int32)),
            "travel_time": ("arrival", np.concatenate(t)),
            "launch_angle": ("arrival", rng.uniform(-20, 20, total).round(1)),
            "surface_reflections": ("arrival", rng.integers(0, 3, total).astype(np.int32)),
            "bottom_reflections": ("arrival", rng.integers(0, 3, total).astype(np.int32)),
            "spreading_loss": ("arrival", rng.uniform(86.0, 110.0, total)),
        },
        coords={"receiver_range": [30_000.0, 60_000.0, 45_000.0], "receiver_depth": [100.0]},
        attrs={"source_depth": 100.0},
    )


def _angle_labels(ax):
    return [t for t in ax.texts if t.get_text().endswith("\N{DEGREE SIGN}")]


@pytest.mark.parametrize("time", ["delay", "travel"])
def test_panels_share_one_time_axis(time):
    fig = plot_arrivals(crowded_arrivals(), time=time)
    first, *others = fig.axes
    assert len(others) == 2
    for ax in others:
        assert first.get_shared_x_axes().joined(first, ax)
        assert ax.get_xlim() == first.get_xlim()
    lo, hi = first.get_xlim()
    t = crowded_arrivals()["travel_time"].values
    if time == "travel":
        assert lo < t.min() and hi > t.max()  # every arrival on the one axis
    else:
        assert lo < 0.0 < hi and hi > 41.83 - 40.146  # delays of every receiver
        assert "first at 40.146 s" in fig.axes[1].get_title(loc="left")


@pytest.mark.parametrize("quantity", ["level", "loss"])
def test_angle_labels_do_not_overlap(quantity):
    fig = plot_arrivals(crowded_arrivals(), quantity=quantity)
    renderer = drawn(fig)
    for ax in fig.axes:
        labels = _angle_labels(ax)
        assert labels, "every panel has at most LABEL_LIMIT arrivals, so all are labelled"
        boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in labels]
        assert overlapping(boxes) == []
        inner = ax.get_window_extent(renderer)
        title = ax.title if ax.title.get_text() else ax._left_title
        for _, b in boxes:  # inside the panel, clear of its title
            eps = 0.5  # px, rounding of the transforms
            assert inner.x0 - eps <= b.x0 and b.x1 <= inner.x1 + eps and b.y1 <= inner.y1 + eps
            assert overlapping([("label", b), ("title", title.get_window_extent(renderer))]) == []
        leaders = [ln for ln in ax.lines if ln.get_label() == "_leader"]
        assert len(leaders) == len(labels)
    assert texts_outside(fig) == []
    assert colliding_tick_labels(fig) == []


def test_labels_follow_their_arrivals_in_time_order():
    fig = plot_arrivals(crowded_arrivals(), receiver=1)
    (ax,) = fig.axes
    x = [t.get_position()[0] for t in _angle_labels(ax)]
    assert np.all(np.diff(x) > 0)  # left to right, as the arrivals
    leaders = [ln for ln in ax.lines if ln.get_label() == "_leader"]
    starts = [ln.get_xdata()[0] for ln in leaders]
    np.testing.assert_allclose(
        np.sort(starts), np.sort(crowded_arrivals()["travel_time"].values[5:18] - 40.146), atol=1e-9
    )


def test_stem_colours_visible_on_white():
    assert contrast_on_white(np.array(KIND_COLOURS)).min() >= MIN_CONTRAST


def test_unknown_time_axis_is_refused():
    with pytest.raises(SeaprofileError, match="time"):
        plot_arrivals(crowded_arrivals(), time="reduced")
