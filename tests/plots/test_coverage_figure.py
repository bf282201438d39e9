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

from seaprofile.plots.coverage import LOSS_LABEL, plot_coverage
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
