"""Profile figure of sparse casts and planning files: measured levels marked among the
interpolated bins, the flag-8 band, a one-panel figure without a blank right half, a title
that claims no instrument, and the duct cut-off printed as `inspect` prints it."""

from pathlib import Path

import numpy as np
import pytest
from figure_checks import drawn
from test_profile_figure_layout import _check_layout, speed_only

from seaprofile import _cf
from seaprofile.casts.read import read_casts
from seaprofile.plots._numbers import cutoff_text
from seaprofile.plots.profile import FLAG_MARKERS, MEASURED_LABEL, plot_profile
from seaprofile.profile import build_profile

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"
LEVELS = [2.0, 40.0, 120.0, 300.0, 600.0]  # m, the levels of the invented sparse cast


@pytest.fixture(scope="module")
def sparse(tmp_path_factory):
    path = tmp_path_factory.mktemp("sparse") / "sparse.csv"
    rows = "\n".join(
        f"{z:g},{t},{s}"
        for z, t, s in zip(LEVELS, [18.0, 17.5, 14.0, 11.0, 8.0], [35.5, 35.5, 35.3, 35.2, 35.1])
    )
    path.write_text(
        "# synthetic sparse cast (invented)\n# latitude: 40.0\n"
        f"depth (m),temperature (degC),salinity\n{rows}\n"
    )
    (cast,) = read_casts(path)
    return cast, build_profile(cast)


def _lines(ax, label):
    return [ln for ln in ax.get_lines() if ln.get_label() == label]


def test_sparse_cast_marks_its_measured_levels_in_every_panel(sparse):
    cast, prof = sparse
    fig = plot_profile(prof, cast=cast)
    assert len(fig.axes) == 3
    for ax in fig.axes:
        (marks,) = _lines(ax, MEASURED_LABEL)
        np.testing.assert_array_equal(marks.get_ydata(), LEVELS)
        assert marks.get_marker() == "o" and marks.get_linestyle() == "None"
        # the profile line itself carries no marker: only measured levels are marked
        assert all(
            ln.get_marker() in ("None", "", None)
            for ln in ax.get_lines()
            if ln.get_label() in ("temperature", "salinity", "sound speed")
        )
    assert MEASURED_LABEL in [t.get_text() for t in fig.legends[0].get_texts()]
    _check_layout(fig)


def test_flag8_band_leaves_the_measured_levels_out(sparse):
    cast, prof = sparse
    fig = plot_profile(prof, cast=cast)
    (band,) = _lines(fig.axes[-1], FLAG_MARKERS[_cf.ESTIMATED][2])
    y = np.asarray(band.get_ydata(), float)
    assert band.get_linestyle() == "-" and band.get_marker() == "None"
    # one (top, bottom) span per run of filled bins, NaN between: four runs between the
    # five levels, each ending half a bin from a measured level
    spans = np.append(y, np.nan).reshape(-1, 3)[:, :2]
    np.testing.assert_allclose(
        spans, [[z0 + 0.5, z1 - 0.5] for z0, z1 in zip(LEVELS[:-1], LEVELS[1:])]
    )


def test_dense_cast_gets_no_level_markers():
    (cast,) = read_casts(DEMO / "shelf_summer_ctd.csv")
    fig = plot_profile(build_profile(cast), cast=cast)
    assert not any(_lines(ax, MEASURED_LABEL) for ax in fig.axes)


def test_one_panel_figure_has_no_blank_right_half():
    z = np.arange(0.0, 400.0)
    table = speed_only(z, 1510.0 - 0.04 * z)  # a depth / sound-speed table
    two = speed_only([0.0, 200.0], [1500.0, 1490.0])  # a two-node planning profile
    for p in (table, two):
        fig = plot_profile(p)
        assert len(fig.axes) == 1
        renderer = drawn(fig)
        width_px = fig.bbox.width
        used = [fig.axes[0].get_tightbbox(renderer).x1]
        used += [lg.get_window_extent(renderer).x1 for lg in fig.legends]
        used += [
            t.get_window_extent(renderer).x1
            for t in fig.texts
            if not t.get_text().startswith("Caution")
        ]
        # the widest of panel (with its labels), legend and summary reaches within half
        # an inch of the right edge
        assert width_px - max(used) < 0.5 * fig.dpi
        _check_layout(fig)


def test_speed_only_title_claims_no_instrument():
    two = speed_only([0.0, 200.0], [1500.0, 1490.0])
    two.attrs.update(equation="measured", instrument="svp", cast_name="PLAN-1")
    title = plot_profile(two)._suptitle.get_text()
    assert "sound speed given directly" in title and "probe" not in title
    # a file (or the user) that declares the instrument is named as such
    two.attrs["instrument_source"] = "file"
    assert "sound-speed probe" in plot_profile(two)._suptitle.get_text()


def test_duct_cutoff_in_the_figure_is_the_two_figure_value():
    (cast,) = read_casts(DEMO / "shelf_summer_ctd.csv")
    prof = build_profile(cast)
    d = {
        "surface_duct": True,
        "sonic_layer_depth": 30.0,
        "in_layer_gradient": 0.01,
        "duct_cutoff_frequency": 1444.3,
        "surface_sound_speed": 1510.0,
    }
    fig = plot_profile(prof, diagnostics=d)
    text = "\n".join(t.get_text() for t in fig.texts)
    assert "duct cut-off*: 1400 Hz" in text and "1444" not in text


@pytest.mark.parametrize(
    "value, text",
    [
        (1444.3, "1400"),
        (683.63, "680"),
        (96.0, "96"),
        (98.97, "99"),
        (2549.0, "2500"),
        (float("nan"), None),
        (None, None),
    ],
)
def test_cutoff_text_two_significant_figures(value, text):
    # common practice, no source: a rule of thumb printed to two significant figures
    assert cutoff_text(value) == text
