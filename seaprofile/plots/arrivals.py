"""Arrivals chart: the eigenrays reaching a receiver, as level (or loss) against travel time.

Each arrival is a stem at its one-way travel time; its height is the level relative to 1 m
from geometric spreading alone (or, with ``quantity="loss"``, the spreading loss on a
downward-growing axis). Stems and markers are told apart by the kind of path: refracted
only, surface-reflected, bottom-reflected, or reflected at both, with colours taken from a
perceptually uniform map and a different marker shape for each, so the chart also reads in
grey.

All panels share one time axis, so the receivers can be compared: by default the time
after the first arrival at each receiver (the spread of the arrivals, which is what differs
between receivers; the first arrival time is in each panel's title), or, with
``time="travel"``, the one-way travel time itself. Launch-angle labels sit in a band at the
top of each panel, spread sideways so that no two touch, each tied to its marker by a thin
leader line.

Not for navigation on its own: verify against the governing hydrographic standard, local
regulations and licensed practice.
"""

from __future__ import annotations

import matplotlib as mpl
import numpy as np
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.transforms import blended_transform_factory

from .._validate import SeaprofileError
from ._layout import spread, thin_crowded_ticks
from .rays import INK, caution_line

__all__ = ["plot_arrivals", "PATH_KINDS", "path_kind"]

#: Path kinds, in legend order: (label, marker).
PATH_KINDS = (
    ("direct / refracted", "o"),
    ("surface-reflected", "^"),
    ("bottom-reflected", "v"),
    ("surface and bottom", "D"),
)
# Four steps of viridis, each at least 3:1 in contrast on white (WCAG 2.1, SC 1.4.11).
KIND_COLOURS = tuple(tuple(c) for c in mpl.colormaps["viridis"]([0.0, 0.22, 0.4, 0.58]))
MAX_PANELS = 6
LABEL_LIMIT = 14  # launch angles are written next to the markers up to this many arrivals
DYNAMIC_RANGE = 60.0  # dB below the strongest arrival shown to scale
DATA_TOP = 0.62  # axes fraction of the highest marker; the angle labels sit above it
LABEL_BAND = 0.70  # axes fraction of the bottom of the angle labels


def path_kind(surface_reflections, bottom_reflections):
    """Index into :data:`PATH_KINDS` from the surface and bottom reflection counts."""
    s = np.asarray(surface_reflections) > 0
    b = np.asarray(bottom_reflections) > 0
    return (s.astype(int) + 2 * b.astype(int)).astype(int)


def _receivers(arrivals):
    """Flat list of (range m, depth m, range index, depth index) of a PathTable Dataset (eigenrays)."""
    rr = np.atleast_1d(np.asarray(arrivals["receiver_range"].values, dtype=float))
    zr = np.atleast_1d(np.asarray(arrivals["receiver_depth"].values, dtype=float))
    return [(rr[i], zr[j], i, j) for i in range(rr.size) for j in range(zr.size)]


def _select(arrivals, receiver):
    recs = _receivers(arrivals)
    if receiver is None:
        return recs
    if isinstance(receiver, list):
        out = []
        for one in receiver:
            out.extend(_select(arrivals, one))
        return out
    if isinstance(receiver, (int, np.integer)):
        if not -len(recs) <= int(receiver) < len(recs):
            raise SeaprofileError(f"receiver: index {receiver} outside 0..{len(recs) - 1}")
        return [recs[int(receiver)]]
    try:
        r, z = (float(v) for v in receiver)
    except (TypeError, ValueError):
        raise SeaprofileError("receiver must be an index or a (range m, depth m) pair") from None
    for rec in recs:
        if abs(rec[0] - r) <= 0.5 and abs(rec[1] - z) <= 0.5:
            return [rec]
    have = ", ".join(f"({a:g}, {b:g})" for a, b, _, _ in recs[:8])
    raise SeaprofileError(f"receiver: no receiver at ({r:g} m, {z:g} m); the arrivals have {have}")


def _check(arrivals):
    need = (
        "travel_time",
        "spreading_loss",
        "receiver_range",
        "receiver_depth",
        "receiver_range_index",
        "receiver_depth_index",
    )
    missing = [n for n in need if n not in getattr(arrivals, "variables", {})]
    if missing:
        raise SeaprofileError(
            f"arrivals must be a PathTable Dataset from eigenrays(); missing {missing}"
        )


def _range_text(r_m):
    return f"{r_m / 1000:g} km" if r_m >= 1000 else f"{r_m:g} m"


def plot_arrivals(
    arrivals, *, receiver=None, quantity="level", time="delay", title=None, caution=True
):
    """Draw the arrivals at one receiver (or one panel per receiver, on one time axis).

    Parameters
    ----------
    arrivals : xr.Dataset
        From :func:`seaprofile.propagation.eigenrays`: ``travel_time`` (s),
        ``spreading_loss`` (dB re 1 m), ``launch_angle`` (degrees),
        ``surface_reflections`` / ``bottom_reflections`` per arrival, with
        ``receiver_range_index`` / ``receiver_depth_index`` into the coordinates
        ``receiver_range`` and ``receiver_depth`` (m).
    receiver : int, (float, float) or list of them, optional
        The receiver to draw: a flat index (range-major over the range x depth grid) or a
        ``(range m, depth m)`` pair; a list draws several. Default: every receiver. One
        panel per receiver, at most :data:`MAX_PANELS`.
    quantity : {"level", "loss"}
        ``"level"``: minus the spreading loss, dB re 1 m, stems rising to the strongest
        arrival; ``"loss"``: the spreading loss, dB re 1 m, on an axis growing downward.
    time : {"delay", "travel"}
        Time axis shared by every panel: ``"delay"``, time after the first arrival at the
        panel's receiver (s); ``"travel"``, the one-way travel time (s).
    title : str, optional
        Figure title.
    caution : bool
        Write the caution line along the bottom (default True).

    Returns
    -------
    matplotlib.figure.Figure
    """
    _check(arrivals)
    if quantity not in ("level", "loss"):
        raise SeaprofileError(f"quantity must be 'level' or 'loss', got {quantity!r}")
    if time not in ("delay", "travel"):
        raise SeaprofileError(f"time must be 'delay' or 'travel', got {time!r}")
    recs = _select(arrivals, receiver)
    shown = recs[:MAX_PANELS]
    n = len(shown)
    fig = Figure(figsize=(9.0, 1.2 + 3.2 * n), dpi=110)
    top_in = 1.0  # inches above the first panel: title, note and legend, panel title
    bottom_in = 0.85
    height = fig.get_figheight()
    gap = 0.95 / height
    panel = (1.0 - (top_in + bottom_in) / height - gap * (n - 1)) / n

    ti = np.asarray(arrivals["travel_time"].values, dtype=float)
    loss = np.asarray(arrivals["spreading_loss"].values, dtype=float)
    ri = np.asarray(arrivals["receiver_range_index"].values)
    di = np.asarray(arrivals["receiver_depth_index"].values)
    nray = ti.size
    s = (
        arrivals["surface_reflections"].values
        if "surface_reflections" in arrivals
        else np.zeros(nray)
    )
    b = (
        arrivals["bottom_reflections"].values
        if "bottom_reflections" in arrivals
        else np.zeros(nray)
    )
    kind = path_kind(s, b)
    launch = (
        np.asarray(arrivals["launch_angle"].values, dtype=float)
        if "launch_angle" in arrivals
        else np.full(nray, np.nan)
    )
    kinds_seen = set()
    clipped_total = 0
    axes, labelled = [], []
    spans = []  # (first, last) time on the shared axis, per panel with arrivals
    for p, (r, z, i, j) in enumerate(shown):
        y0 = 1.0 - top_in / height - (p + 1) * panel - p * gap
        ax = fig.add_axes([0.1, y0, 0.86, panel], sharex=axes[0] if axes else None)
        axes.append(ax)
        sel = (ri == i) & (di == j) & np.isfinite(ti)
        t, L, k, a = ti[sel], loss[sel], kind[sel], launch[sel]
        where = f"receiver at {_range_text(r)} range, {z:g} m depth"
        count = f"{sel.sum()} arrival{'s' if sel.sum() != 1 else ''}"
        if sel.any() and time == "delay":
            t0 = float(t.min())
            t = t - t0
            count += f", first at {t0:.3f} s"
        ax.set_title(where + ": " + count, fontsize=9.5, color=INK, loc="left")
        ax.set_xlabel("time after the first arrival (s)" if time == "delay" else "travel time (s)")
        ax.set_ylabel(
            "level, spreading only\n(dB re 1 m)"
            if quantity == "level"
            else "spreading loss\n(dB re 1 m)"
        )
        ax.grid(True, color="#999999", lw=0.4, alpha=0.5)
        ax.set_axisbelow(True)
        if not sel.any():
            ax.text(
                0.5,
                0.5,
                "no arrivals found",
                transform=ax.transAxes,
                ha="center",
                va="center",
                color=INK,
            )
            ax.set_yticks([])
            continue
        spans.append((float(t.min()), float(t.max())))
        # Arrivals weaker than the strongest by more than DYNAMIC_RANGE dB sit on the axis
        # floor with open markers, so one near-caustic outlier cannot squash the others.
        finite = np.isfinite(L)
        level = -L
        floor = float(np.max(level[finite])) - DYNAMIC_RANGE if finite.any() else -np.inf
        clipped = finite & (level < floor)
        level = np.where(clipped, floor, level)
        y = level if quantity == "level" else -level
        clipped_total += int(clipped.sum())
        ylo, yhi = (float(np.min(y[finite])), float(np.max(y[finite]))) if finite.any() else (0, 1)
        span = max(yhi - ylo, 6.0)
        # the highest marker sits at DATA_TOP of the panel; the label band is above it
        head = (
            (1.0 - DATA_TOP) / DATA_TOP * 1.25 * span if sel.sum() <= LABEL_LIMIT else 0.15 * span
        )
        if quantity == "level":
            base = ylo - 0.25 * span
            ax.set_ylim(base, yhi + head)
        else:
            base = yhi + 0.25 * span
            ax.set_ylim(base, ylo - head)
        for kk, (_label, marker) in enumerate(PATH_KINDS):
            m = (k == kk) & finite
            if not m.any():
                continue
            kinds_seen.add(kk)
            ax.vlines(t[m], base, y[m], colors=[KIND_COLOURS[kk]], lw=1.8, zorder=3)
            for part, face in ((m & ~clipped, KIND_COLOURS[kk]), (m & clipped, "white")):
                if part.any():
                    ax.plot(
                        t[part],
                        y[part],
                        ls="none",
                        marker=marker,
                        ms=7,
                        color=KIND_COLOURS[kk],
                        mfc=face,
                        mec=INK,
                        mew=0.5,
                        zorder=4,
                    )
        if sel.sum() <= LABEL_LIMIT:
            labelled.append((ax, t[finite], y[finite], a[finite]))
    if spans:  # one time axis for every panel
        lo, hi = min(v[0] for v in spans), max(v[1] for v in spans)
        tspan = max(hi - lo, 0.02 * max(hi, 1e-3), 1e-3)
        axes[0].set_xlim(lo - 0.08 * tspan, hi + 0.08 * tspan)
    handles = [
        Line2D(
            [],
            [],
            color=KIND_COLOURS[kk],
            marker=PATH_KINDS[kk][1],
            mec=INK,
            mew=0.5,
            lw=1.6,
            ms=7,
            label=PATH_KINDS[kk][0],
        )
        for kk in range(len(PATH_KINDS))
        if kk in kinds_seen
    ]
    if handles:
        fig.legend(
            handles=handles,
            loc="upper left",
            ncols=len(handles),
            fontsize=8,
            frameon=False,
            bbox_to_anchor=(0.09, 1.0 - 0.4 / height),
            handletextpad=0.4,
            columnspacing=1.4,
        )
    if title is None:
        zs = arrivals.attrs.get("source_depth")
        title = "Arrivals" + (f" from a source at {float(zs):g} m" if zs is not None else "")
    fig.suptitle(title, x=0.1, ha="left", y=1.0 - 0.1 / height, va="top", fontsize=12, color=INK)
    thin_crowded_ticks(fig)
    for ax, t, y, a in labelled:
        _label_angles(ax, t, y, a)
    notes = []
    if any(len(ax.texts) for ax in axes):
        notes.append("labels: launch angle, + toward the bottom")
    if clipped_total:
        notes.append(
            f"open markers: more than {DYNAMIC_RANGE:g} dB below the strongest "
            "arrival, drawn at that floor"
        )
    if len(recs) > n:
        notes.append(f"first {n} of {len(recs)} receivers shown")
    if notes:
        fig.text(
            0.96,
            1.0 - 0.12 / height,
            "\n".join(notes),
            fontsize=7.5,
            color="#555555",
            ha="right",
            va="top",
        )
    if caution:
        caution_line(fig)
    return fig


def _label_angles(ax, t, y, angle):
    """Write each arrival's launch angle in a band at the top of the panel.

    The labels (rotated upright) start at their stems' times and are spread sideways just
    enough that none touches its neighbour (measured on the drawn figure); a thin leader
    line joins each label to its marker. The figure must be laid out (axis limits set).
    """
    ok = np.isfinite(angle) & np.isfinite(t) & np.isfinite(y)
    if not ok.any():
        return []
    order = np.flatnonzero(ok)[np.argsort(t[ok], kind="stable")]
    band = blended_transform_factory(ax.transData, ax.transAxes)
    texts = [
        ax.text(
            t[i],
            LABEL_BAND,
            f"{angle[i]:+.1f}\N{DEGREE SIGN}",
            transform=band,
            fontsize=7,
            rotation=90,
            ha="center",
            va="bottom",
            color=INK,
            zorder=5,
        )
        for i in order
    ]
    fig = ax.figure
    fig.draw_without_rendering()
    renderer = fig._get_renderer()
    width = max(tx.get_window_extent(renderer).width for tx in texts)
    x_px = ax.transData.transform(np.column_stack([t[order], y[order]]))[:, 0]
    box = ax.get_window_extent(renderer)
    placed = spread(x_px, width + 3.0 * fig.dpi / 100.0, box.x0 + width / 2, box.x1 - width / 2)
    x_new = ax.transData.inverted().transform(np.column_stack([placed, np.zeros(len(placed))]))[
        :, 0
    ]
    y0, y1 = ax.get_ylim()
    foot = y0 + (LABEL_BAND - 0.015) * (y1 - y0)  # just below the label band, in data units
    for tx, xn, i in zip(texts, x_new, order):
        tx.set_x(xn)
        ax.plot(
            [t[i], xn],
            [y[i], foot],
            color="#777777",
            lw=0.5,
            zorder=2,
            solid_capstyle="butt",
            label="_leader",
        )
    return texts
