"""Profile figure, inspected after drawing: speed-only and two-node profiles, flag markers,
texts inside the figure, tick labels apart, colours visible on white, backend untouched."""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from figure_checks import (
    MIN_CONTRAST,
    colliding_tick_labels,
    contrast_on_white,
    drawn,
    line_colours,
    overlapping,
    texts_outside,
    texts_with_nan,
)
from matplotlib.figure import Figure

from seaprofile import _cf
from seaprofile.casts.read import read_casts
from seaprofile.plots.profile import FLAG_MARKERS, FLAG_WORDS, plot_profile
from seaprofile.profile import build_profile

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"


def speed_only(depth, speed, **coords):
    """A Profile with sound speed only (as from a sound-speed probe or a speed table)."""
    z = np.asarray(depth, float)
    c = np.asarray(speed, float)
    base = {"latitude": np.nan, "longitude": np.nan, "time": np.datetime64("NaT", "ns")}
    base.update(coords)
    return xr.Dataset(
        {
            "sound_speed": ("depth", c, _cf.attrs_for("sound_speed")),
            "sound_speed_qc": ("depth", np.ones(z.size, np.int8), _cf.flag_attrs("sound_speed")),
        },
        coords={"depth": ("depth", z, _cf.attrs_for("depth")), **base},
        attrs=_cf.base_attrs(featureType="profile"),
    )


def _check_layout(fig):
    assert texts_with_nan(fig) == []
    assert texts_outside(fig) == []
    assert colliding_tick_labels(fig) == []
    # the legend, the summary columns, the title lines and the caution never overlap
    renderer = drawn(fig)
    boxes = [(t.get_text()[:30], t.get_window_extent(renderer)) for t in fig.texts]
    boxes += [("legend", lg.get_window_extent(renderer)) for lg in fig.legends]
    boxes += [(ax.get_xlabel(), ax.get_tightbbox(renderer)) for ax in fig.axes]
    assert overlapping(boxes) == []


def test_speed_only_profile_no_nan_texts_inside_one_panel():
    z = np.arange(1.0, 300.0)
    prof = speed_only(z, 1510.0 - 0.05 * z)
    prof.attrs["cast_name"] = float("nan")  # a name lost on the way (e.g. an empty CSV cell)
    prof = prof.assign_coords(profile_id="nan")
    fig = plot_profile(prof)
    assert len(fig.axes) == 1
    assert fig.axes[0].get_xlabel() == "Sound speed (m/s)"
    assert "(unnamed)" in fig._suptitle.get_text()
    _check_layout(fig)


def test_speed_only_with_nan_diagnostics_and_position_half_known():
    z = np.arange(0.0, 120.0)
    prof = speed_only(z, 1500.0 + 0.017 * z, latitude=44.1)  # longitude unknown
    prof.attrs["cast_name"] = "VS31-P01"
    d = {
        "surface_sound_speed": 1500.0,
        "below_layer_gradient": np.nan,
        "critical_depth_surface": np.nan,
        "sonic_layer_depth": np.nan,
        "harmonic_mean_sound_speed": 1501.0,
        "harmonic_mean_to_depth": np.nan,
    }
    fig = plot_profile(prof, diagnostics=d)
    _check_layout(fig)
    assert any("44.1000° N" in t.get_text() for t in fig.texts)


def test_two_node_planning_profile_shows_its_nodes_and_no_upper_panel():
    prof = speed_only([0.0, 5000.0], [1500.0, 1540.0])
    fig = plot_profile(prof, bottom_depth=5000.0)
    assert len(fig.axes) == 1  # deep, but nothing in the upper 300 m to zoom into
    (line,) = [ln for ln in fig.axes[0].get_lines() if ln.get_label() == "sound speed"]
    assert line.get_marker() == "o" and np.isfinite(line.get_xdata()).sum() == 2
    _check_layout(fig)


def test_each_flag_class_has_its_own_marker_at_the_flagged_depths():
    z = np.arange(0.0, 100.0)
    prof = speed_only(z, 1500.0 - 0.02 * z)
    q = np.ones(z.size, np.int8)
    where = {
        _cf.PROBABLY_BAD: [10, 11],
        _cf.BAD: [30],
        _cf.CHANGED: [50],
        _cf.ESTIMATED: [60, 61, 62],
        _cf.MISSING: [80],
    }
    for flag, idx in where.items():
        q[idx] = flag
    prof["sound_speed_qc"] = ("depth", q)
    c = prof["sound_speed"].values.copy()
    c[80] = np.nan  # a missing value is missing
    prof["sound_speed"] = ("depth", c)
    fig = plot_profile(prof)
    ax = fig.axes[0]
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    shapes = set()
    for flag, idx in where.items():
        label = FLAG_MARKERS[flag][2]
        # Argo reference table 2 words, as the files store them in flag_meanings
        assert FLAG_WORDS[flag] in label and label in legend
        (ln,) = [ln for ln in ax.get_lines() if ln.get_label() == label]
        if flag == _cf.ESTIMATED:  # a band over the run of filled bins, half a bin beyond
            np.testing.assert_array_equal(ln.get_ydata(), [z[idx[0]] - 0.5, z[idx[-1]] + 0.5])
        else:
            np.testing.assert_array_equal(np.sort(ln.get_ydata()), z[idx])
        shapes.add(ln.get_marker())
    assert len(shapes) == len(where)  # one marker shape per flag class
    # bad values stay out of the profile line; changed and estimated ones stay in it
    (main,) = [ln for ln in ax.get_lines() if ln.get_label() == "sound speed"]
    drawn = np.isfinite(np.asarray(main.get_xdata(), float))
    assert not drawn[[10, 11, 30, 80]].any() and drawn[[50, 60]].all()
    _check_layout(fig)


def test_deep_demo_cast_layout_and_line_colours():
    (cast,) = read_casts(DEMO / "deep_ocean_ctd.csv")
    prof = build_profile(cast, extend_to=5012.0)
    fig = plot_profile(prof, cast=cast, bottom_depth=5012.0)
    assert len(fig.axes) == 4
    _check_layout(fig)
    for ax in fig.axes:
        for colour in line_colours(ax):
            assert contrast_on_white(colour)[0] >= MIN_CONTRAST, (ax.get_xlabel(), colour)


def test_given_figure_is_reused():
    fig = Figure()
    out = plot_profile(speed_only([0.0, 50.0, 100.0], [1500.0, 1495.0, 1497.0]), fig=fig)
    assert out is fig and len(fig.axes) == 1


def test_one_valid_value_is_refused():
    from seaprofile import SeaprofileError

    with pytest.raises(SeaprofileError, match="two valid"):
        plot_profile(speed_only([0.0, 50.0], [1500.0, np.nan]))


def test_contrast_formula_end_points():
    # W3C (2018), WCAG 2.1, contrast ratio: black on white is 21:1, white on white 1:1
    assert contrast_on_white([0, 0, 0])[0] == pytest.approx(21.0)
    assert contrast_on_white([1, 1, 1])[0] == pytest.approx(1.0)
    # a colour drawn at alpha 0 is the paper itself
    assert contrast_on_white([0, 0, 0, 0])[0] == pytest.approx(1.0)


def test_importing_and_drawing_never_change_the_backend():
    code = """
import matplotlib
matplotlib.use("svg")
import numpy as np, xarray as xr
import seaprofile.plots.profile, seaprofile.plots.rays, seaprofile.plots.arrivals
import seaprofile.cli.plot
from seaprofile.plots.profile import plot_profile
ds = xr.Dataset({"sound_speed": ("depth", [1500.0, 1490.0])}, coords={"depth": [0.0, 200.0]})
plot_profile(ds)
import matplotlib.pyplot as plt
assert matplotlib.get_backend() == "svg", matplotlib.get_backend()
assert plt.get_fignums() == [], plt.get_fignums()  # nothing left open in pyplot
print("ok")
"""
    env = {k: v for k, v in __import__("os").environ.items() if k != "MPLBACKEND"}
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, env=env, check=False
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip().endswith("ok")
