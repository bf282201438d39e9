"""Ray-fan and arrivals figures: axes, labels with units, depth downward, legends, segments."""

import io

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st
from matplotlib.collections import LineCollection, PolyCollection

from seaprofile import SeaprofileError
from seaprofile._cf import CAUTION
from seaprofile.plots.arrivals import PATH_KINDS, path_kind, plot_arrivals
from seaprofile.plots.rays import (
    MAX_REFLECTION_BINS,
    boundary_reflections,
    plot_fan,
    ray_segments,
    reflection_bins,
)
from seaprofile.propagation import Environment, trace_fan
from seaprofile.propagation.section import Section


# --- fakes with the documented layouts ----------------------------------------------------
def fake_fan(nray=7, npt=5, max_range=10_000.0, bottom=200.0, seed=0):
    """A RayFan-shaped Dataset: straight zig-zags, NaN padding on some rays."""
    rng = np.random.default_rng(seed)
    r = np.tile(np.linspace(0.0, max_range, npt), (nray, 1))
    z = rng.uniform(0.0, bottom, (nray, npt))
    z[:, 0] = 50.0
    count = np.full(nray, npt)
    count[::2] = npt - 2
    for i, n in enumerate(count):
        r[i, n:] = np.nan
        z[i, n:] = np.nan
    surface = np.arange(nray) % 3
    bottom_hits = np.arange(nray) % 4
    return xr.Dataset(
        {
            "range": (("ray", "point"), r),
            "depth": (("ray", "point"), z),
            "point_count": ("ray", count),
            "surface_reflections": ("ray", surface.astype(np.int32)),
            "bottom_reflections": ("ray", bottom_hits.astype(np.int32)),
            "turning_points": ("ray", np.zeros(nray, np.int32)),
            "end_reason": ("ray", np.zeros(nray, np.int8)),
        },
        coords={"launch_angle": ("ray", np.linspace(-10, 10, nray))},
        attrs={"source_depth": 50.0, "max_range": max_range, "bottom_depth": bottom},
    )


def fake_arrivals():
    """A PathTable-shaped Dataset (eigenrays output): 2 ranges x 1 depth, one of each path kind at the first."""
    return xr.Dataset(
        {
            "receiver_range_index": ("path", np.array([0, 0, 0, 0, 1], np.int32)),
            "receiver_depth_index": ("path", np.zeros(5, np.int32)),
            "travel_time": ("path", np.array([6.67, 6.70, 6.75, 6.80, 13.4])),
            "launch_angle": ("path", np.array([1.0, -3.0, 5.0, -7.0, 2.0])),
            "arrival_angle": ("path", np.array([-1.0, 3.0, -5.0, 7.0, -2.0])),
            "surface_reflections": ("path", np.array([0, 1, 0, 1, 0], np.int32)),
            "bottom_reflections": ("path", np.array([0, 0, 1, 2, 0], np.int32)),
            "turning_points": ("path", np.zeros(5, np.int32)),
            "spreading_loss": ("path", np.array([80.0, 80.2, 80.5, 81.0, 86.0])),
        },
        coords={"receiver_range": [10_000.0, 20_000.0], "receiver_depth": [100.0]},
        attrs={"source_depth": 50.0},
    )


def _fan_axes(fig):
    (ax,) = [a for a in fig.axes if a.get_xlabel() == "range (km)"]
    return ax


def _collections(ax):
    return [c for c in ax.collections if isinstance(c, LineCollection)]


# --- fan figure ----------------------------------------------------------------------------
def test_fan_axes_labels_units_and_depth_down():
    fan = fake_fan()
    env = Environment.from_arrays([0, 100, 200], [1500, 1490, 1495], 200)
    fig = plot_fan(fan, env)
    ax = _fan_axes(fig)
    assert ax.get_ylim()[0] > ax.get_ylim()[1]  # depth grows downward
    (prof,) = [a for a in fig.axes if a.get_xlabel() == "sound speed (m/s)"]
    assert prof.get_ylabel() == "depth (m)"
    assert prof.get_ylim() == ax.get_ylim()  # shared depth axis
    assert ax.get_xlim() == pytest.approx((0.0, 10.0))  # km
    assert any("launch angle (deg)" == a.get_ylabel() for a in fig.axes)  # colour bar
    texts = [t.get_text() for t in fig.texts]
    assert any(CAUTION in t for t in texts)
    assert "50 m" in fig._suptitle.get_text()


def test_fan_one_line_per_ray_in_km():
    fan = fake_fan(nray=9, npt=6)
    fig = plot_fan(fan)
    (lc,) = _collections(_fan_axes(fig))
    segs = lc.get_segments()
    assert len(segs) == 9
    assert np.nanmax([np.nanmax(s[:, 0]) for s in segs]) == pytest.approx(10.0)
    np.testing.assert_allclose(lc.get_array(), fan["launch_angle"].values)


def test_fan_bottom_filled_to_the_bottom_depth():
    fan = fake_fan(bottom=200.0)
    fig = plot_fan(fan)  # bottom from the fan's attributes
    ax = _fan_axes(fig)
    fills = [c for c in ax.collections if isinstance(c, PolyCollection)]
    assert fills
    top_of_fill = min(p.vertices[:, 1].min() for p in fills[0].get_paths())
    assert top_of_fill == pytest.approx(200.0)
    assert ax.get_ylim()[0] > 200.0


def test_fan_bathymetry_follows_the_slope():
    env = Environment.from_arrays(
        [0, 100, 300], [1500, 1490, 1495], bathymetry=([0, 10_000], [150, 300])
    )
    fig = plot_fan(fake_fan(bottom=300.0), env)
    ax = _fan_axes(fig)
    line = [ln for ln in ax.lines if len(ln.get_xdata()) > 10][0]
    x, y = np.asarray(line.get_xdata()), np.asarray(line.get_ydata())
    np.testing.assert_allclose(y, 150 + 15 * x, rtol=1e-9)  # 150 m at 0 km, 300 m at 10 km


def test_fan_reflection_shading_has_stepped_colour_bar_with_counts():
    fan = fake_fan(nray=12)
    fig = plot_fan(fan, shade="reflections")
    ax = _fan_axes(fig)
    (cbar,) = [a for a in fig.axes if a.get_ylabel().startswith("boundary reflections")]
    assert "surface + bottom" in cbar.get_ylabel()
    labels = [t.get_text() for t in cbar.get_yticklabels()]
    counts = [int(t.split(": ")[1].split()[0]) for t in labels]
    assert sum(counts) == 12  # every ray counted in exactly one step
    assert not any(a.get_ylabel() == "launch angle (deg)" for a in fig.axes)
    (lc,) = _collections(ax)
    assert len(lc.get_segments()) == 12
    total = boundary_reflections(fan)
    np.testing.assert_array_equal(np.sort(lc.get_array()), np.sort(total))
    # fewest reflections drawn last (on top)
    assert lc.get_array()[-1] == total.min()


def test_fan_accepts_hyphenated_shade_and_rejects_unknown():
    plot_fan(fake_fan(), shade="launch-angle")
    with pytest.raises(SeaprofileError, match="shade"):
        plot_fan(fake_fan(), shade="rainbow")


def test_fan_rejects_non_fan():
    with pytest.raises(SeaprofileError, match="RayFan"):
        plot_fan(xr.Dataset({"x": ("a", [1.0])}))


def test_fan_into_given_axes():
    from matplotlib.figure import Figure

    fig = Figure()
    ax = fig.add_subplot()
    out = plot_fan(fake_fan(), ax=ax)
    assert out is fig
    assert ax.get_ylim()[0] > ax.get_ylim()[1]
    assert ax.get_ylabel() == "depth (m)"
    assert len(_collections(ax)[0].get_segments()) == 7


def test_real_fan_draws_and_saves_png():
    env = Environment.from_arrays([0, 50, 200], [1510, 1500, 1495], 200)
    fan = trace_fan(env, 30.0, np.linspace(-8, 8, 11), 5000.0)
    fig = plot_fan(fan, env, shade="reflections")
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    assert buf.getvalue()[:8] == b"\x89PNG\r\n\x1a\n"


def test_ten_thousand_rays_form_one_collection():
    # vectorised drawing: a (ray, point, 2) array, one LineCollection, no per-ray artists
    fan = fake_fan(nray=10_000, npt=40)
    segs = ray_segments(fan)
    assert segs.shape == (10_000, 40, 2)
    fig = plot_fan(fan)
    ax = _fan_axes(fig)
    (lc,) = _collections(ax)
    assert len(lc.get_segments()) == 10_000
    assert len(ax.lines) < 10


def test_section_casts_marked_and_profiles_drawn():
    sec = Section(
        [0.0, 4000.0, 8000.0],
        [0.0, 100.0, 200.0],
        [[1500, 1490, 1495], [1502, 1491, 1495], [1504, 1492, 1495]],
    )
    env = Environment.from_section(sec, 200.0)
    fig = plot_fan(fake_fan(), env)
    (prof,) = [a for a in fig.axes if a.get_xlabel() == "sound speed (m/s)"]
    assert len([ln for ln in prof.lines if len(ln.get_xdata()) == 3]) == 3
    ax = _fan_axes(fig)
    assert sum(t.get_text() == "cast" for t in ax.texts) == 3


@given(st.lists(st.integers(0, 5000), min_size=1, max_size=60))
def test_reflection_bins_cover_every_count_once(counts):
    edges, labels = reflection_bins(counts)
    assert len(labels) == len(edges) - 1 <= MAX_REFLECTION_BINS
    assert labels[0] == "0" and edges[0] == -0.5 and edges[1] == 0.5  # no contact: own step
    assert np.all(np.diff(edges) > 0)
    step = np.digitize(counts, edges) - 1
    assert np.all((step >= 0) & (step < len(labels)))  # every count inside one step
    for c, k in zip(counts, step):  # the label names the step the count falls in
        lo, _, hi = labels[k].partition("-")
        assert int(lo) <= c <= int(hi or lo)


# --- arrivals figure --------------------------------------------------------------------------
def test_arrivals_one_panel_per_receiver_with_units():
    fig = plot_arrivals(fake_arrivals())
    panels = [a for a in fig.axes if a.get_xlabel() == "time after the first arrival (s)"]
    assert len(panels) == 2
    for ax in panels:
        assert "dB" in ax.get_ylabel()
    assert "10 km" in panels[0].get_title(loc="left")
    assert "4 arrivals" in panels[0].get_title(loc="left")
    (legend,) = fig.legends
    assert [t.get_text() for t in legend.get_texts()] == [k for k, _ in PATH_KINDS]
    assert any(CAUTION in t.get_text() for t in fig.texts)


def test_arrivals_stems_at_travel_times_and_levels():
    fig = plot_arrivals(fake_arrivals(), receiver=(10_000, 100), time="travel")
    (ax,) = fig.axes
    assert ax.get_xlabel() == "travel time (s)"
    markers = [ln for ln in ax.lines if ln.get_label() != "_leader"]
    x = np.sort(np.concatenate([ln.get_xdata() for ln in markers]))
    np.testing.assert_allclose(x, [6.67, 6.70, 6.75, 6.80])
    y = np.concatenate([ln.get_ydata() for ln in markers])
    np.testing.assert_allclose(np.sort(y), np.sort(-np.array([80.0, 80.2, 80.5, 81.0])))
    stems = [c for c in ax.collections if isinstance(c, LineCollection)]
    assert sum(len(c.get_segments()) for c in stems) == 4


def test_arrivals_loss_axis_grows_downward():
    fig = plot_arrivals(fake_arrivals(), receiver=1, quantity="loss")
    (ax,) = fig.axes
    assert ax.get_ylim()[0] > ax.get_ylim()[1]
    assert "loss" in ax.get_ylabel()


def test_arrivals_bad_receiver_and_quantity():
    with pytest.raises(SeaprofileError, match="receiver"):
        plot_arrivals(fake_arrivals(), receiver=(123.0, 4.0))
    with pytest.raises(SeaprofileError, match="receiver"):
        plot_arrivals(fake_arrivals(), receiver=7)
    with pytest.raises(SeaprofileError, match="quantity"):
        plot_arrivals(fake_arrivals(), quantity="pressure")
    with pytest.raises(SeaprofileError, match="eigenrays"):
        plot_arrivals(xr.Dataset())


def test_arrivals_empty_receiver_says_so():
    ds = fake_arrivals().isel(path=slice(0, 4))  # nothing at the second range
    fig = plot_arrivals(ds, receiver=1)
    assert any(t.get_text() == "no arrivals found" for t in fig.axes[0].texts)


def test_path_kind_codes():
    np.testing.assert_array_equal(path_kind([0, 1, 0, 3], [0, 0, 2, 1]), [0, 1, 2, 3])


def test_arrivals_far_below_the_strongest_sit_on_the_floor():
    ds = fake_arrivals()
    loss = ds["spreading_loss"].values.copy()
    loss[1] = 200.0  # 120 dB weaker than the strongest arrival
    ds["spreading_loss"] = ("path", loss)
    fig = plot_arrivals(ds, receiver=0)
    (ax,) = fig.axes
    y = np.concatenate([ln.get_ydata() for ln in ax.lines if ln.get_label() != "_leader"])
    assert y.min() == pytest.approx(-80.0 - 60.0)  # strongest level minus 60 dB
    assert ax.get_ylim()[0] < -140.0
    assert any("open markers" in t.get_text() for t in fig.texts)
