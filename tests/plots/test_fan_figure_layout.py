"""Fan figure, inspected after drawing: tick labels of the two panels apart, every ray
colour visible on white, reflection colouring that separates range-dependent fans."""

from pathlib import Path

import numpy as np
import pytest
from figure_checks import (
    MIN_CONTRAST,
    colliding_tick_labels,
    contrast_on_white,
    line_colours,
    texts_outside,
)
from matplotlib.collections import LineCollection

from seaprofile.casts.read import read_casts
from seaprofile.plots.rays import ANGLE_CMAP, REFLECTION_MAP, boundary_reflections, plot_fan
from seaprofile.profile import build_profile
from seaprofile.propagation import Environment, trace_fan
from seaprofile.propagation.section import Section

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"


def _rays(fig):
    (ax,) = [a for a in fig.axes if a.get_xlabel() == "range (km)"]
    (lc,) = [c for c in ax.collections if isinstance(c, LineCollection)]
    return ax, lc


def _drawn_colours(lc):
    """The colours the rays are painted with (colour map and alpha applied)."""
    if lc.get_array() is not None:
        return lc.to_rgba(lc.get_array(), alpha=lc.get_alpha())
    return lc.get_colors()


@pytest.fixture(scope="module")
def deep_fan():
    # the deep demo cast: speeds 1487..1550 m/s, whose "1550" label used to print over the
    # range axis' "0"
    (cast,) = read_casts(DEMO / "deep_ocean_ctd.csv")
    prof = build_profile(cast, extend_to=5012.0)
    env = Environment.from_profile(prof, bottom_depth=5012.0, thin_tolerance=0.05)
    return env, trace_fan(env, 100.0, np.linspace(-12, 12, 25), 100e3), prof


@pytest.fixture(scope="module")
def section_fan():
    # a shelf section: every ray is reflected many times over 30 km in 200 m of water
    sec = Section(
        [0.0, 10_000.0, 20_000.0],
        [0.0, 40.0, 200.0],
        [[1512, 1500, 1497], [1510, 1499, 1497], [1508, 1498, 1497]],
    )
    env = Environment.from_section(sec, 200.0)
    return env, trace_fan(env, 30.0, np.linspace(-10, 10, 31), 30_000.0)


@pytest.mark.parametrize("shade", ["launch_angle", "reflections"])
def test_tick_labels_of_the_panels_never_collide(deep_fan, shade):
    env, fan, prof = deep_fan
    fig = plot_fan(fan, env, shade=shade, profile=prof)
    assert colliding_tick_labels(fig) == []
    assert texts_outside(fig) == []


@pytest.mark.parametrize(
    "shade, label",
    [("launch_angle", "launch angle (deg)"), ("reflections", "boundary reflections per ray")],
)
def test_colour_bar_is_labelled(deep_fan, shade, label):
    env, fan, _ = deep_fan
    fig = plot_fan(fan, env, shade=shade)
    assert any(a.get_ylabel().startswith(label) for a in fig.axes)


@pytest.mark.parametrize("shade", ["launch_angle", "reflections"])
def test_every_ray_colour_is_visible_on_white(section_fan, shade):
    env, fan = section_fan
    fig = plot_fan(fan, env, shade=shade)
    ax, lc = _rays(fig)
    ratio = contrast_on_white(_drawn_colours(lc))
    assert ratio.min() >= MIN_CONTRAST
    prof = [a for a in fig.axes if a.get_xlabel() == "sound speed (m/s)"][0]
    for colour in line_colours(prof):  # the casts of the section
        assert contrast_on_white(colour)[0] >= MIN_CONTRAST


def test_colour_maps_stop_before_their_pale_ends():
    assert contrast_on_white(ANGLE_CMAP(np.linspace(0, 1, 64))).min() >= MIN_CONTRAST
    import matplotlib as mpl

    name, lo, hi = REFLECTION_MAP
    steps = mpl.colormaps[name](np.linspace(lo, hi, 64))
    assert contrast_on_white(steps).min() >= MIN_CONTRAST


def test_range_dependent_fan_is_told_apart_by_reflections(section_fan):
    env, fan = section_fan
    assert fan.attrs["solver"] == "integrated"
    counts = boundary_reflections(fan)
    # the integrated solver's counts reach the figure: its reflection point kinds agree
    kinds = fan["point_kind"].values
    np.testing.assert_array_equal(counts, ((kinds == 3) | (kinds == 4)).sum(axis=1))
    assert counts.min() >= 3  # the old "3 or more bottom" class held every ray
    fig = plot_fan(fan, env, shade="reflections")
    _, lc = _rays(fig)
    colours = {tuple(np.round(c, 4)) for c in _drawn_colours(lc)}
    assert len(colours) >= 3
    # more reflections never get the same colour as fewer, across the colour steps
    order = np.argsort(lc.get_array())
    assert len({tuple(np.round(c, 4)) for c in _drawn_colours(lc)[order[[0, -1]]]}) == 2


def test_fewest_reflections_on_top_and_rays_opaque(section_fan):
    env, fan = section_fan
    _, lc = _rays(plot_fan(fan, env, shade="reflections"))
    arr = np.asarray(lc.get_array())
    assert np.all(np.diff(arr) <= 0)  # drawn from most to fewest reflections
    assert lc.get_alpha() in (None, 1.0)
