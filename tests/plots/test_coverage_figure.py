"""The coverage figure: labels, colour bar, legend, no overlapping or 'nan' texts.

Loss fields are built in the test (spherical spreading plus a convergence-zone band laid
out by hand); the figure is inspected after a full layout.
"""

import numpy as np
import pytest
import xarray as xr
from figure_checks import (
    colliding_tick_labels,
    drawn,
    overlapping,
    texts_outside,
    texts_with_nan,
    visible_texts,
)
from matplotlib.collections import PolyCollection, QuadMesh
from matplotlib.contour import ContourSet

from seaprofile.plots.coverage import LOSS_LABEL, plot_coverage, plot_loss_map
from seaprofile.propagation.boundaries import Seabed
from seaprofile.propagation.coverage import coverage, figure_of_merit
from seaprofile.propagation.environment import Environment


def synthetic_loss():
    r = np.arange(200.0, 70001.0, 200.0)
    z = np.linspace(0.0, 4000.0, 81)
    tl = 20 * np.log10(r)[None, :] + 0.2 * r[None, :] / 1000 + 0.004 * z[:, None]
    cz = (r > 50000) & (r < 56000)
    tl[:, cz] -= 25.0 * np.exp(-(((z - 300.0) / 400.0) ** 2))[:, None]
    beams = np.ones(tl.shape, dtype=int)
    beams[60:, 100:200] = 0
    tl = np.where(beams == 0, np.nan, tl)
    return xr.DataArray(
        tl,
        dims=("depth", "range"),
        coords={"depth": z, "range": r, "beam_count": (("depth", "range"), beams)},
        name="transmission_loss",
    )


@pytest.fixture(scope="module")
def fig():
    loss = synthetic_loss()
    env = Environment.from_arrays(
        [0.0, 1000.0, 4000.0], [1520.0, 1490.0, 1540.0], bottom_depth=4000.0
    )
    cov = coverage(loss, figure_of_merit(150.0, 60.0, 10.0, directivity_index=10.0))
    return plot_coverage(cov, loss, environment=env)


def test_labels_and_colour_bar(fig):
    texts = [t.get_text() for t in visible_texts(fig)]
    assert LOSS_LABEL in texts
    assert "sound speed (m/s)" in texts
    assert texts.count("range (km)") == 2
    assert any("detected (signal excess" in t for t in texts)
    assert any(t.startswith("Caution:") for t in texts)


def test_no_overlaps_nothing_outside_no_nan(fig):
    assert colliding_tick_labels(fig) == []
    assert texts_outside(fig) == []
    assert texts_with_nan(fig) == []
    renderer = drawn(fig)
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in visible_texts(fig)]
    assert overlapping(boxes) == []


def test_shadow_contour_and_detection_bars_drawn(fig):
    ax_loss = fig.axes[1]
    assert ax_loss.collections  # mesh + contour
    assert len(ax_loss.get_lines()) >= 4  # detection bars (direct zone + convergence zone)


def test_png_written(fig, tmp_path):
    path = tmp_path / "coverage.png"
    fig.savefig(path, dpi=100)
    assert path.stat().st_size > 10_000


RECEIVERS = (300.0, 2000.0)


@pytest.fixture(scope="module")
def marked():
    loss = synthetic_loss()
    env = Environment.from_arrays(
        [0.0, 1000.0, 4000.0],
        [1520.0, 1490.0, 1540.0],
        bottom_depth=4000.0,
        seabed=Seabed.named("clay"),
    )
    cov = coverage(loss, figure_of_merit(figure_of_merit=90.0))
    fig = plot_coverage(cov, loss, environment=env, receiver_depths=RECEIVERS)
    drawn(fig)
    return fig, cov


def _mesh(ax):
    return next(c for c in ax.collections if isinstance(c, QuadMesh))


def test_loss_map_colour_map_and_limits(marked):
    fig, _ = marked
    ax = fig.axes[1]
    mesh = _mesh(ax)
    # a perceptually uniform map (cividis: Nunez, Anderton & Renslow 2018, PLoS ONE 13,
    # e0199239), light for low loss
    assert mesh.get_cmap().name == "cividis_r"
    lo, hi = mesh.get_clim()
    assert lo % 5 == 0 and hi % 5 == 0 and hi > lo
    finite = synthetic_loss().values
    finite = finite[np.isfinite(finite)]
    # limits are the 1st/99th percentiles rounded out to 5 dB: at most 5 dB outside them
    p1, p99 = np.percentile(finite, [1, 99])
    assert p1 - 5 < lo <= p1 and p99 <= hi < p99 + 5
    colour_bars = [a for a in fig.axes if a.get_ylabel() == LOSS_LABEL]
    assert len(colour_bars) == 1


def test_axes_share_depth_and_show_the_seabed(marked):
    fig, _ = marked
    ax_p, ax_l, ax_c = fig.axes[:3]
    assert ax_p.get_ylabel() == "depth (m)" and ax_p.get_xlabel() == "sound speed (m/s)"
    assert ax_l.get_xlabel() == "range (km)" and ax_c.get_xlabel() == "range (km)"
    # one shared depth axis, increasing downward, reaching below the 4000 m bottom
    assert ax_l.get_ylim() == ax_p.get_ylim() == ax_c.get_ylim()
    low, top = ax_l.get_ylim()
    assert low > 4000.0 and top == 0.0
    for ax in (ax_l, ax_c):
        fills = [c for c in ax.collections if isinstance(c, PolyCollection)]
        assert fills, "sea floor not filled"
        assert "seabed: clay" in [t.get_text() for t in ax.texts]


def test_shadow_outline_and_bands_at_the_receivers(marked):
    fig, cov = marked
    ax = fig.axes[1]
    outlines = [c for c in ax.collections if isinstance(c, ContourSet)]
    assert len(outlines) == 1 and list(outlines[0].levels) == [0.0]  # SE = 0: shadow edge
    bars = [ln for ln in ax.get_lines() if ln.get_gid() == "detection_band"]
    depths = sorted({ln.get_ydata()[0] for ln in bars})
    grid = cov.signal_excess["depth"].values
    want = sorted({float(grid[np.argmin(abs(grid - z))]) for z in RECEIVERS})
    assert depths == want  # bands only at the receiver depths asked for
    # every interval of those rows drawn (twice: white edge and colour)
    rows = [r for r in cov.intervals if r["depth"] in want]
    assert len(bars) == 2 * sum(len(r["intervals"]) for r in rows)
    for panel in fig.axes[:3]:
        marks = [ln for ln in panel.get_lines() if ln.get_gid() == "receiver"]
        assert sorted(ln.get_ydata()[0] for ln in marks) == want


def test_marked_figure_tidy(marked):
    fig, _ = marked
    assert colliding_tick_labels(fig) == []
    assert texts_outside(fig) == []
    assert texts_with_nan(fig) == []


def test_plot_loss_map_old_call_still_works():
    loss = synthetic_loss()
    fig = plot_loss_map(loss)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "range (km)" and ax.get_ylabel() == "depth (m)"
    assert _mesh(ax).get_clim() != (None, None)
    fig = plot_loss_map(loss, limits=(40.0, 120.0), colorbar=False)
    assert _mesh(fig.axes[0]).get_clim() == (40.0, 120.0)
    assert len(fig.axes) == 1


def test_source_marked_when_the_loss_field_records_it():
    loss = synthetic_loss().assign_attrs(source_depth=50.0)
    fig = plot_loss_map(loss)
    marks = [ln for ln in fig.axes[0].get_lines() if ln.get_gid() == "source"]
    assert len(marks) == 1 and marks[0].get_ydata()[0] == 50.0 and marks[0].get_xdata()[0] == 0.0
    assert not [ln for ln in plot_loss_map(synthetic_loss()).axes[0].get_lines()]
