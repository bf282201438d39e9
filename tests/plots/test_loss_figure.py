"""The loss figure (profile beside the loss map): axes, labels, colour map and limits.

The loss field is laid out by hand in the test (spherical spreading, a hole no beam
reached, a sloping bottom); the figure is inspected after a full layout.
"""

import numpy as np
import pytest
import xarray as xr
from figure_checks import colliding_tick_labels, drawn, overlapping, texts_outside, visible_texts
from matplotlib.collections import PolyCollection, QuadMesh

from seaprofile._cf import CAUTION
from seaprofile.plots.coverage import LOSS_LABEL
from seaprofile.plots.loss import plot_loss_figure
from seaprofile.propagation.environment import Environment


def _loss(**attrs):
    r = np.arange(100.0, 20001.0, 100.0)
    z = np.linspace(0.0, 300.0, 61)
    tl = 20 * np.log10(np.hypot(r[None, :], z[:, None] - 40.0)) + 0.001 * r[None, :]
    tl[40:, :20] = np.inf  # reached by no beam
    return xr.DataArray(
        tl,
        dims=("depth", "range"),
        coords={"depth": z, "range": r},
        name="transmission_loss",
        attrs={"source_depth": 40.0, "frequency": 3000.0, "mode": "coherent", **attrs},
    )


@pytest.fixture(scope="module")
def case():
    loss = _loss()
    env = Environment.from_arrays(
        [0.0, 50.0, 300.0],
        [1510.0, 1495.0, 1498.0],
        bathymetry=([0.0, 10000.0, 20000.0], [300.0, 180.0, 250.0]),
    )
    return loss, plot_loss_figure(loss, environment=env)


def test_axes_labels_and_title(case):
    _, fig = case
    assert len(fig.axes) == 3  # profile, loss map, colour bar
    ax_p, ax_l, cbar = fig.axes
    assert ax_p.get_xlabel() == "sound speed (m/s)" and ax_p.get_ylabel() == "depth (m)"
    assert ax_l.get_xlabel() == "range (km)"
    assert cbar.get_ylabel() == LOSS_LABEL == "transmission loss (dB re 1 m)"
    title = fig._suptitle.get_text()
    assert "40 m" in title and "3000 Hz" in title
    texts = [t.get_text() for t in visible_texts(fig)]
    assert any(t.startswith("Caution:") and CAUTION.split(".")[0] in t for t in texts)


def test_depth_shared_and_increasing_down(case):
    _, fig = case
    ax_p, ax_l, _ = fig.axes
    # depth down, from the surface to the filled sea floor just below the 300 m bottom
    # (SEAFLOOR_MARGIN of the bottom depth)
    from seaprofile.plots.coverage import SEAFLOOR_MARGIN

    assert ax_p.get_ylim() == ax_l.get_ylim() == (300.0 * (1 + SEAFLOOR_MARGIN), 0.0)
    assert ax_l.get_xlim()[0] == 0.0


def test_colour_map_and_limits(case):
    loss, fig = case
    mesh = next(c for c in fig.axes[1].collections if isinstance(c, QuadMesh))
    # cividis (Nunez, Anderton & Renslow 2018, PLoS ONE 13, e0199239): perceptually uniform
    assert mesh.get_cmap().name == "cividis_r"
    finite = loss.values[np.isfinite(loss.values)]
    # the 1st and 99th percentiles, rounded out to whole 5 dB steps
    lo, hi = np.percentile(finite, [1, 99])
    np.testing.assert_allclose(mesh.get_clim(), [5 * np.floor(lo / 5), 5 * np.ceil(hi / 5)])


def test_sea_floor_filled_and_profile_drawn(case):
    _, fig = case
    ax_p, ax_l, _ = fig.axes
    assert any(isinstance(c, PolyCollection) for c in ax_l.collections)
    (line,) = ax_p.get_lines()[:1]
    np.testing.assert_allclose(line.get_xdata(), [1510.0, 1495.0, 1498.0])


def test_band_title_and_layout():
    fig = plot_loss_figure(_loss(band_low=2000.0, band_high=4000.0))
    assert "band 2000-4000 Hz" in fig._suptitle.get_text()
    # no environment or profile: the side panel says so, with no meaningless speed ticks
    assert "no single profile" in [t.get_text() for t in fig.axes[0].texts]
    drawn(fig)
    assert not any(t.get_visible() and t.get_text() for t in fig.axes[0].get_xticklabels())
    assert colliding_tick_labels(fig) == []
    assert texts_outside(fig) == []
    renderer = drawn(fig)
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in visible_texts(fig)]
    assert overlapping(boxes) == []
