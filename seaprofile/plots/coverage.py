"""Loss and coverage figures: the transmission-loss map and where a sonar detects.

Three panels share the depth axis (m, increasing downward): the sound-speed profile, the
transmission-loss map (cividis reversed: low loss bright, high loss dark; the colour bar
is labelled "transmission loss (dB re 1 m)") with the shadow zones outlined by one
contour of SE = 0, and the coverage map as two classes, detected and not detected, with a
legend. Along the right edge of the loss map, the detection intervals of every receiver
depth are drawn as short bars. The sea floor is filled when an environment is given.

Not for navigation on its own: verify against the governing hydrographic standard, local
regulations and licensed practice.
"""

from __future__ import annotations

import numpy as np
from matplotlib.colors import ListedColormap
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch

from ._layout import keep_texts_inside, thin_crowded_ticks
from .rays import (
    INK,
    SEAFLOOR_EDGE,
    SEAFLOOR_FILL,
    SOURCE_COLOUR,
    _profile_nodes,
    caution_line,
)

__all__ = ["draw_profile_panel", "plot_coverage", "plot_loss_map", "LOSS_LABEL"]

LOSS_LABEL = "transmission loss (dB re 1 m)"
LOSS_CMAP = "cividis_r"
# two classes from the ends of viridis: clearly apart in lightness, also in grey print
DETECT_COLOURS = ListedColormap(["#f2f2f2", "#31688e"], name="seaprofile_detected")
BAND_COLOUR = "#31688e"
UNREACHED_COLOUR = "#d9d9d9"
MAX_BARS = 12


def _grid(da):
    da = da.transpose("depth", "range", ...)
    return (
        np.asarray(da["range"].values, float) / 1000.0,
        np.asarray(da["depth"].values, float),
        np.asarray(da.values, float),
    )


#: the sea floor fill reaches this fraction of the bottom depth below it, so it shows
SEAFLOOR_MARGIN = 0.04
#: colour limits from these percentiles of the finite loss (dB), rounded out to 5 dB
LIMIT_PERCENTILES = (1.0, 99.0)
RECEIVER_COLOUR = "#c2185b"


def _bottom(ax, environment, r_km, z_max):
    """Fill the sea floor below the bottom (seabed name written in it); the lower y limit."""
    if environment is None:
        return z_max
    r = np.linspace(0.0, float(r_km.max()) * 1000.0, 300)
    z = np.asarray(environment.bottom_at(r), float)
    floor = max(z_max, float(z.max()) * (1.0 + SEAFLOOR_MARGIN))
    ax.fill_between(
        r / 1000.0, z, floor, color=SEAFLOOR_FILL, edgecolor=SEAFLOOR_EDGE, lw=1.0, zorder=3
    )
    name = getattr(getattr(environment, "seabed", None), "name", "")
    if name and floor - float(z.min()) > 0:
        ax.text(
            0.02 * float(r_km.max()),
            0.5 * (float(z.max()) + floor),
            f"seabed: {name}",
            ha="left",
            va="center",
            fontsize=7,
            color=INK,
            zorder=4,
        )
    return floor


def _limits(tl, limits):
    if limits is not None:
        return float(limits[0]), float(limits[1])
    finite = tl[np.isfinite(tl)]
    if not finite.size:
        return 40.0, 120.0
    lo, hi = np.percentile(finite, LIMIT_PERCENTILES)
    lo, hi = 5.0 * np.floor(lo / 5.0), 5.0 * np.ceil(hi / 5.0)
    return lo, max(hi, lo + 5.0)


def _rows_at(intervals, receiver_depths):
    """The detection rows nearest each receiver depth (m); all rows thinned when None."""
    if receiver_depths is None:
        # at most MAX_BARS receiver depths, evenly among the rows, so the map stays readable
        step = max(1, int(np.ceil(len(intervals) / MAX_BARS)))
        return intervals[::step]
    depths = np.asarray([row["depth"] for row in intervals], float)
    return [intervals[int(np.argmin(np.abs(depths - z)))] for z in np.atleast_1d(receiver_depths)]


def _detection_bars(ax, rows, labelled):
    for row in rows:
        for a, b in row["intervals"]:
            for colour, lw, zorder in (("white", 5, 4), (BAND_COLOUR, 2.5, 5)):
                ax.plot(
                    [a / 1000.0, b / 1000.0],
                    [row["depth"]] * 2,
                    color=colour,
                    lw=lw,
                    solid_capstyle="butt",
                    zorder=zorder,
                    gid="detection_band",
                )
        if labelled:
            ax.axhline(
                row["depth"], color=RECEIVER_COLOUR, lw=0.8, ls=":", zorder=4, gid="receiver"
            )


def _source(ax, depth):
    """The source (its depth, m, from the loss field's attributes) at range 0."""
    if depth is None or not np.isfinite(float(depth)):
        return
    ax.plot(
        [0.0],
        [float(depth)],
        marker=">",
        ms=9,
        color=SOURCE_COLOUR,
        mec="white",
        clip_on=False,
        zorder=6,
        gid="source",
        ls="none",
    )


def depth_panels(width_ratios, *, width, caution):
    """A figure of side-by-side panels sharing the depth axis with the first (the profile).

    Parameters
    ----------
    width_ratios : sequence of float
        Relative panel widths, the profile panel first.
    width : float
        Figure width, inches (height 5.4).
    caution : bool
        Leave room for the caution line under the panels.

    Returns
    -------
    fig : matplotlib.figure.Figure
    axes : list of matplotlib.axes.Axes
    """
    fig = Figure(figsize=(width, 5.4), layout="constrained")
    if caution:  # room for the caution line under the panels
        fig.get_layout_engine().set(rect=(0.0, 0.045, 1.0, 0.955))
    gs = fig.add_gridspec(1, len(width_ratios), width_ratios=list(width_ratios))
    first = fig.add_subplot(gs[0])
    return fig, [first] + [fig.add_subplot(g, sharey=first) for g in list(gs)[1:]]


def draw_profile_panel(ax, profile=None, environment=None, source_depth=None):
    """The sound-speed side panel: the profile (m/s against depth, m), or every cast of a
    section, or a note that there is none; a dotted line at ``source_depth`` (m)."""
    speed = getattr(environment, "speed", None)
    nodes = _profile_nodes(profile, speed if hasattr(speed, "sound_speed") else None)
    if nodes is None:
        ax.text(0.5, 0.5, "no single profile", transform=ax.transAxes, ha="center", fontsize=8)
        ax.tick_params(axis="x", bottom=False, labelbottom=False)
    else:
        zz, cc = nodes
        if np.ndim(cc) == 2:  # the casts of a section, one line each
            ax.plot(np.asarray(cc).T, zz, color=INK, lw=0.6, alpha=0.7)
        else:
            ax.plot(cc, zz, color=INK, lw=1.2)
        if source_depth is not None and np.isfinite(source_depth):
            ax.axhline(source_depth, color=INK, lw=0.8, ls=":")
    ax.set_xlabel("sound speed (m/s)")


def plot_loss_map(
    loss,
    *,
    signal_excess=None,
    intervals=None,
    environment=None,
    ax=None,
    receiver_depths=None,
    limits=None,
    colorbar=True,
):
    """Draw a transmission-loss map into ``ax`` (new figure when None); returns the figure.

    Parameters
    ----------
    loss : xarray.DataArray
        dB re 1 m, dims ``("depth", "range")`` (m, m).
    signal_excess : xarray.DataArray, optional
        dB; its 0 contour outlines the shadow zones (cells no beam reaches count as shadow).
    intervals : list of dict, optional
        From :func:`seaprofile.propagation.coverage.detection_intervals`: drawn as bars at
        each receiver depth.
    environment : Environment, optional
        Sea floor to fill (m), a margin below the bottom, with the seabed's name.
    ax : matplotlib.axes.Axes, optional
    receiver_depths : sequence of float, optional
        Receiver depths, m: detection bars only at the rows nearest these, each marked by a
        dotted line. Default: at most ``MAX_BARS`` rows spread over the grid.
    limits : (float, float), optional
        Colour limits, dB. Default: the 1st and 99th percentiles of the finite loss,
        rounded out to 5 dB.
    colorbar : bool
        Draw the labelled colour bar (default True).
    """
    fig = ax.figure if ax is not None else Figure(figsize=(8, 5), layout="constrained")
    ax = ax if ax is not None else fig.add_subplot()
    r, z, tl = _grid(loss)
    vmin, vmax = _limits(tl, limits)
    mesh = ax.pcolormesh(
        r, z, np.ma.masked_invalid(tl), cmap=LOSS_CMAP, vmin=vmin, vmax=vmax, shading="nearest"
    )
    # cells with no value (no beam reaches): a light grey, not the axes' white
    ax.set_facecolor(UNREACHED_COLOUR)
    if colorbar:
        cb = fig.colorbar(mesh, ax=ax, pad=0.01, extend="both")
        cb.set_label(LOSS_LABEL)
    if signal_excess is not None and z.size > 1 and r.size > 1:
        _, _, se = _grid(signal_excess)
        se = np.where(np.isfinite(se), se, -1e3)
        if (se >= 0).any() and (se < 0).any():
            ax.contour(r, z, se, levels=[0.0], colors=INK, linewidths=1.0)
    if intervals:
        _detection_bars(ax, _rows_at(intervals, receiver_depths), receiver_depths is not None)
    _source(ax, loss.attrs.get("source_depth"))
    ax.set_ylim(float(z.max()), float(z.min()))
    floor = _bottom(ax, environment, r, float(z.max()))
    ax.set_ylim(floor, float(z.min()))
    ax.set_xlim(0.0, float(r.max()))
    ax.set_xlabel("range (km)")
    ax.set_ylabel("depth (m)")
    return fig


def plot_coverage(
    cov,
    loss,
    *,
    environment=None,
    profile=None,
    title=None,
    caution=True,
    receiver_depths=None,
    limits=None,
):
    """Sound-speed profile, loss map with shadow outlines and detection bars, coverage map.

    Parameters
    ----------
    cov : seaprofile.propagation.coverage.Coverage
        From :func:`seaprofile.propagation.coverage.coverage`.
    loss : xarray.DataArray
        The loss field it was made from, dB re 1 m.
    environment : Environment, optional
        Sea floor (m) and, without ``profile``, the sound-speed nodes (m/s).
    profile : xarray.Dataset, optional
        Profile (``depth`` m, ``sound_speed`` m/s) for the side panel.
    title : str, optional
    caution : bool
        Write the caution line (default True).
    receiver_depths : sequence of float, optional
        Receiver depths, m: their detection bands are drawn (on both maps) and their depths
        marked on all three panels. Default: bands at up to ``MAX_BARS`` depths.
    limits : (float, float), optional
        Colour limits of the loss map, dB (default from its percentiles).

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (ax_p, ax_l, ax_c) = depth_panels((1, 4, 4), width=12.0, caution=caution)
    plot_loss_map(
        loss,
        signal_excess=cov.signal_excess,
        intervals=cov.intervals,
        environment=environment,
        ax=ax_l,
        receiver_depths=receiver_depths,
        limits=limits,
    )
    r, z, se = _grid(cov.signal_excess)
    detected = (np.nan_to_num(se, nan=-1.0) >= 0).astype(float)
    ax_c.pcolormesh(r, z, detected, cmap=DETECT_COLOURS, vmin=0, vmax=1, shading="nearest")
    floor = _bottom(ax_c, environment, r, float(z.max()))
    ax_c.set_xlim(0.0, float(r.max()))
    handles = [
        Patch(facecolor=BAND_COLOUR, edgecolor=INK, label="detected (signal excess >= 0 dB)"),
        Patch(facecolor="#f2f2f2", edgecolor=INK, label="not detected (shadow)"),
    ]
    if "source_depth" in loss.attrs:
        _source(ax_c, loss.attrs["source_depth"])
        handles.append(
            Line2D([], [], color=SOURCE_COLOUR, marker=">", ls="none", mec="white", label="source")
        )
    if receiver_depths is not None:
        rows = _rows_at(cov.intervals, receiver_depths)
        for row in rows:
            ax_c.axhline(row["depth"], color=RECEIVER_COLOUR, lw=1.0, ls=":", gid="receiver")
            ax_p.axhline(row["depth"], color=RECEIVER_COLOUR, lw=1.0, ls=":", gid="receiver")
        handles.append(
            Line2D([], [], color=RECEIVER_COLOUR, ls=":", label="receiver depth (bands on left)")
        )
    ax_c.set_xlabel("range (km)")
    fom = cov.terms.figure_of_merit
    ax_c.legend(handles=handles, loc="lower right", fontsize=8, framealpha=0.9)
    ax_c.set_title(f"coverage, figure of merit {fom:.1f} dB", fontsize=10)
    ax_l.set_title("transmission loss; shadow outlined, detection bands", fontsize=10)
    draw_profile_panel(ax_p, profile, environment)
    ax_p.set_ylabel("depth (m)")
    ax_l.set_ylabel("")
    ax_p.set_ylim(floor, float(z.min()))
    for ax in (ax_l, ax_c):
        ax.tick_params(labelleft=False)
    if title:
        fig.suptitle(title)
    if caution:
        caution_line(fig)
    thin_crowded_ticks(fig)
    keep_texts_inside(fig)
    return fig
