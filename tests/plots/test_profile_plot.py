"""Tests of the profile figure: structure, labels with units, flags, estimated part."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
import xarray as xr  # noqa: E402

from seaprofile import _cf  # noqa: E402
from seaprofile._validate import SeaprofileError  # noqa: E402
from seaprofile.casts.model import make_cast  # noqa: E402
from seaprofile.plots.profile import plot_profile  # noqa: E402


def make_profile(
    depth, temperature, salinity, sound, flags=None, *, extended_below=None, name="VS31-T01"
):
    """A Profile Dataset as in DEVELOPERS.md ("The data model")."""
    z = np.asarray(depth, float)
    q = np.ones(z.size, np.int8) if flags is None else np.asarray(flags, np.int8)
    if extended_below is not None:
        q = np.where(z > extended_below, _cf.ESTIMATED, q).astype(np.int8)
    data = {
        "sound_speed": ("depth", np.asarray(sound, float), _cf.attrs_for("sound_speed")),
        "temperature": ("depth", np.asarray(temperature, float)),
        "salinity": ("depth", np.asarray(salinity, float)),
        "pressure": ("depth", z * 1.01),
    }
    for v in ("sound_speed", "temperature", "salinity", "pressure"):
        data[f"{v}_qc"] = ("depth", q.copy())
    attrs = _cf.base_attrs(
        featureType="profile",
        equation="chen_millero1977",
        cast_name=name,
        depth_method="unesco1983",
        cast_max_depth=float(extended_below if extended_below else z[-1]),
    )
    coords = {
        "depth": z,
        "latitude": 44.06,
        "longitude": -9.62,
        "time": np.datetime64("2031-07-14T09:12", "ns"),
    }
    return xr.Dataset(data, coords=coords, attrs=attrs)


def shelf(flags=None):
    z = np.arange(0.5, 120.0, 1.0)
    t = np.where(z <= 30.0, 17.0, 17.0 - 0.3 * (z - 30.0)).clip(10.5)
    s = np.full(z.size, 35.2)
    c = 1449.2 + 4.6 * t - 0.055 * t**2 + 1.34 * (s - 35) + 0.016 * z  # shape only
    return make_profile(z, t, s, c, flags, extended_below=110.0)


def munk_profile():
    z = np.arange(0.0, 5001.0, 5.0)
    eta = 2 * (z - 1300) / 1300
    c = 1500 * (1 + 0.00737 * (eta + np.exp(-eta) - 1))
    return make_profile(z, np.full(z.size, 2.0), np.full(z.size, 34.9), c, name="MUNK")


def _texts(fig):
    out = [t.get_text() for t in fig.texts]
    for ax in fig.axes:
        out += [t.get_text() for t in ax.texts]
    return out


def test_panels_labels_and_inverted_shared_depth():
    fig = plot_profile(shelf())
    axes = fig.axes
    assert len(axes) == 3  # shallow: no upper-ocean panel
    labels = [ax.get_xlabel() for ax in axes]
    assert labels == ["Temperature (°C, ITS-90)", "Salinity (PSS-78)", "Sound speed (m/s)"]
    assert axes[0].get_ylabel() == "Depth (m)"
    for ax in axes:
        assert ax.yaxis_inverted()
        assert axes[0].get_shared_y_axes().joined(axes[0], ax)
    plt.close(fig)


def test_layer_lines_are_drawn_and_labelled():
    fig = plot_profile(shelf())
    texts = _texts(fig)
    assert any(t.startswith("mixed layer 31 m") for t in texts)  # 30 + 0.2/0.3 m
    assert any(t.startswith("sonic layer") for t in texts)
    hlines = [
        ln
        for ln in fig.axes[2].get_lines()
        if len(set(ln.get_ydata())) == 1 and len(ln.get_ydata()) == 2
    ]
    assert len(hlines) >= 2
    title = fig._suptitle.get_text()
    assert "VS31-T01" in title and "chen_millero1977" in title
    assert any(t.startswith("Caution: ") and _cf.CAUTION in t for t in texts)
    plt.close(fig)


def test_estimated_part_dashed_and_in_legend():
    fig = plot_profile(shelf())
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "estimated (below 110 m)" in legend
    assert {"temperature", "salinity", "sound speed"} <= set(legend)
    est = [ln for ln in fig.axes[2].get_lines() if ln.get_label().startswith("estimated")]
    assert est and est[0].get_linestyle() == "--"
    assert np.nanmax(est[0].get_ydata()) == pytest.approx(119.5)
    plt.close(fig)


def test_flagged_bins_have_distinct_markers():
    flags = np.ones(120, np.int8)
    flags[20] = _cf.PROBABLY_BAD
    flags[60] = _cf.BAD
    prof = shelf(flags)
    before = prof.copy(deep=True)
    fig = plot_profile(prof)
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    # the legend names the flags with the Argo reference table 2 words (_cf.FLAG_MEANINGS)
    three, four = "flag 3: bad data that are potentially correctable", "flag 4: bad data"
    assert three in legend and four in legend
    markers = {ln.get_label(): ln.get_marker() for ln in fig.axes[0].get_lines()}
    assert markers[three] != markers[four]
    xr.testing.assert_identical(prof, before)  # input untouched
    plt.close(fig)


def test_deep_profile_channel_axis_critical_depth_and_upper_panel(tmp_path):
    prof = munk_profile()
    fig = plot_profile(prof, bottom_depth=5000.0)
    assert len(fig.axes) == 4  # deep: extra panel of the upper ocean
    assert "upper 300 m" in fig.axes[3].get_xlabel()
    assert fig.axes[3].yaxis_inverted()
    texts = _texts(fig)
    assert any(t.startswith("channel axis 1300 m") for t in texts)  # Munk (1974) axis
    assert any(t.startswith("critical depth") for t in texts)
    out = tmp_path / "munk.png"
    fig.savefig(out, dpi=60)
    assert out.stat().st_size > 10_000
    plt.close(fig)
    assert len(plot_profile(prof, zoom=False).axes) == 3


def test_cast_overlay_and_given_figure():
    prof = shelf()
    z = np.linspace(0.5, 110, 300)
    cast = make_cast(
        depth=z,
        temperature=np.interp(z, prof.depth, prof.temperature),
        salinity=np.full(z.size, 35.2),
        latitude=44.06,
        longitude=-9.62,
    )
    cast["temperature_qc"][:] = _cf.GOOD
    cast["temperature_qc"][40] = _cf.BAD
    cast["temperature"][40] = 99.0  # off scale: drawn at the panel edge
    fig = plt.figure()
    out = plot_profile(prof, cast=cast, fig=fig)
    assert out is fig
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "raw samples" in legend
    assert "flagged, off scale (drawn at the edge)" in legend
    assert fig.axes[0].get_xlim()[1] < 20.0  # the 99 degC sample does not set the scale
    plt.close(fig)


def test_rejects_non_profiles():
    with pytest.raises(SeaprofileError):
        plot_profile(xr.Dataset({"x": ("sample", [1.0, 2.0])}))
