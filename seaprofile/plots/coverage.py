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
from matplotlib.patches import Patch

from ._layout import keep_texts_inside, thin_crowded_ticks
from .rays import INK, SEAFLOOR_EDGE, SEAFLOOR_FILL, _profile_nodes, caution_line

__all__ = ["draw_profile_panel", "plot_coverage", "plot_loss_map", "LOSS_LABEL"]

LOSS_LABEL = "transmission loss (dB re 1 m)"
LOSS_CMAP = "cividis_r"
# two classes from the ends of viridis: clearly apart in lightness, also in grey print
DETECT_COLOURS = ListedColormap(["#f2f2f2", "#31688e"], name="seaprofile_detected")
BAND_COLOUR = "#31688e"
MAX_BARS = 12


def _grid(da):
    da = da.transpose("depth", "range", ...)
    return (
        np.asarray(da["range"].values, float) / 1000.0,
        np.asarray(da["depth"].values, float),
        np.asarray(da.values, float),
    )


def _bottom(ax, environment, r_km):
    if environment is None:
        return
    r = np.linspace(0.0, float(r_km.max()) * 1000.0, 300)
    z = np.asarray(environment.bottom_at(r), float)
    lo, hi = ax.get_ylim()
    ax.fill_between(
        r / 1000.0,
        z,
        max(lo, hi, float(z.max())),
        color=SEAFLOOR_FILL,
        edgecolor=SEAFLOOR_EDGE,
        zorder=3,
    )


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


def plot_loss_map(loss, *, signal_excess=None, intervals=None, environment=None, ax=None):
    """Draw a transmission-loss map into ``ax`` (new figure when None); returns the figure.

    Parameters
    ----------
    loss : xarray.DataArray
        dB re 1 m, dims ``("depth", "range")`` (m, m).
    signal_excess : xarray.DataArray, optional
        dB; its 0 contour outlines the shadow zones.
    intervals : list of dict, optional
        From :func:`seaprofile.propagation.coverage.detection_intervals`: drawn as bars at
        each receiver depth.
    environment : Environment, optional
        Sea floor to fill (m).
    ax : matplotlib.axes.Axes, optional
    """
    fig = ax.figure if ax is not None else Figure(figsize=(8, 5), layout="constrained")
    ax = ax if ax is not None else fig.add_subplot()
    r, z, tl = _grid(loss)
    finite = tl[np.isfinite(tl)]
    vmin, vmax = np.percentile(finite, [1, 99]) if finite.size else (40.0, 120.0)
    mesh = ax.pcolormesh(
        r, z, np.ma.masked_invalid(tl), cmap=LOSS_CMAP, vmin=vmin, vmax=vmax, shading="nearest"
    )
    cb = fig.colorbar(mesh, ax=ax, pad=0.01)
    cb.set_label(LOSS_LABEL)
    if signal_excess is not None and z.size > 1 and r.size > 1:
        _, _, se = _grid(signal_excess)
        se = np.where(np.isfinite(se), se, -1e3)
        if (se >= 0).any() and (se < 0).any():
            ax.contour(r, z, se, levels=[0.0], colors=INK, linewidths=1.0)
    if intervals:
        # at most MAX_BARS receiver depths, evenly among the rows, so the map stays readable
        step = max(1, int(np.ceil(len(intervals) / MAX_BARS)))
        for row in intervals[::step]:
            for a, b in row["intervals"]:
                ax.plot(
                    [a / 1000.0, b / 1000.0],
                    [row["depth"]] * 2,
                    color="white",
                    lw=4,
                    solid_capstyle="butt",
                    zorder=4,
                )
                ax.plot(
                    [a / 1000.0, b / 1000.0],
                    [row["depth"]] * 2,
                    color=BAND_COLOUR,
                    lw=2,
                    solid_capstyle="butt",
                    zorder=5,
                )
    ax.set_ylim(float(z.max()), float(z.min()))
    _bottom(ax, environment, r)
    ax.set_ylim(float(z.max()), float(z.min()))
    ax.set_xlabel("range (km)")
    ax.set_ylabel("depth (m)")
    return fig


def plot_coverage(cov, loss, *, environment=None, profile=None, title=None, caution=True):
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

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig = Figure(figsize=(12, 5.4), layout="constrained")
    if caution:  # room for the caution line under the panels
        fig.get_layout_engine().set(rect=(0.0, 0.045, 1.0, 0.955))
    gs = fig.add_gridspec(1, 3, width_ratios=[1, 4, 4])
    ax_p = fig.add_subplot(gs[0])
    ax_l = fig.add_subplot(gs[1], sharey=ax_p)
    ax_c = fig.add_subplot(gs[2], sharey=ax_p)
    plot_loss_map(
        loss,
        signal_excess=cov.signal_excess,
        intervals=cov.intervals,
        environment=environment,
        ax=ax_l,
    )
    r, z, se = _grid(cov.signal_excess)
    detected = (np.nan_to_num(se, nan=-1.0) >= 0).astype(float)
    ax_c.pcolormesh(r, z, detected, cmap=DETECT_COLOURS, vmin=0, vmax=1, shading="nearest")
    _bottom(ax_c, environment, r)
    ax_c.set_xlabel("range (km)")
    fom = cov.terms.figure_of_merit
    ax_c.legend(
        handles=[
            Patch(facecolor="#31688e", edgecolor=INK, label="detected (signal excess >= 0 dB)"),
            Patch(facecolor="#f2f2f2", edgecolor=INK, label="not detected"),
        ],
        loc="lower right",
        fontsize=8,
        framealpha=0.9,
    )
    ax_c.set_title(f"coverage, figure of merit {fom:.1f} dB", fontsize=10)
    ax_l.set_title("transmission loss; shadow outlined, detection bars", fontsize=10)
    draw_profile_panel(ax_p, profile, environment)
    ax_p.set_ylabel("depth (m)")
    ax_l.set_ylabel("")
    ax_p.set_ylim(float(z.max()), float(z.min()))
    for ax in (ax_l, ax_c):
        ax.tick_params(labelleft=False)
    if title:
        fig.suptitle(title)
    if caution:
        caution_line(fig)
    thin_crowded_ticks(fig)
    keep_texts_inside(fig)
    return fig
