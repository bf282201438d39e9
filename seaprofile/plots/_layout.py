"""Layout checks shared by the figures: tick labels that collide, text outside the figure.

Matplotlib places tick labels without looking at their neighbours, so a narrow panel of
four-digit sound speeds, or two panels side by side, can print labels on top of each other.
These helpers draw the figure once without rendering pixels, measure the labels and thin
the ticks of any axis whose labels touch. They never change the matplotlib backend.
"""

from __future__ import annotations

from matplotlib.ticker import FixedLocator, MaxNLocator

__all__ = [
    "spread",
    "boxes_overlap",
    "visible_tick_labels",
    "thin_crowded_ticks",
    "keep_texts_inside",
    "figure_texts",
]

PAD_PX = 4.0  # pixels (at 100 dpi) kept free between neighbouring labels


def spread(wanted, width, lo, hi):
    """Positions as close as possible to ``wanted`` (sorted), at least ``width`` apart.

    A one-dimensional label placer: neighbours closer than ``width`` join a cluster,
    centred on the mean of the positions its members wanted and ``width`` apart inside;
    the result is then pushed inside ``[lo, hi]``. Plain floats in, list out. When the
    labels cannot fit between ``lo`` and ``hi`` they are packed from ``lo``.
    """
    want = [float(v) for v in wanted]
    if not want:
        return []
    # clusters of labels that touch, each centred on what its members wanted
    groups = [[0]]
    for i in range(1, len(want)):
        groups.append([i])
        while len(groups) > 1:
            a, b = groups[-2], groups[-1]
            centre_a = sum(want[k] for k in a) / len(a)
            centre_b = sum(want[k] for k in b) / len(b)
            end_a = centre_a + (len(a) - 1) * width / 2
            start_b = centre_b - (len(b) - 1) * width / 2
            if start_b - end_a >= width:
                break
            groups[-2:] = [a + b]
    out = []
    for g in groups:
        centre = sum(want[k] for k in g) / len(g)
        out.extend(centre + (j - (len(g) - 1) / 2) * width for j in range(len(g)))
    # keep inside the bounds, then restore the spacing the shift may have broken
    if (len(out) - 1) * width > hi - lo:  # cannot fit: pack from lo
        return [lo + i * width for i in range(len(out))]
    out = [min(max(v, lo), hi) for v in out]
    for i in range(1, len(out)):
        out[i] = max(out[i], out[i - 1] + width)
    out[-1] = min(out[-1], hi)
    for i in range(len(out) - 2, -1, -1):
        out[i] = min(out[i], out[i + 1] - width)
    return out


def boxes_overlap(a, b, pad=0.0):
    """True when two display-space Bboxes intersect (after growing ``a`` by ``pad`` px)."""
    return a.x0 - pad < b.x1 and b.x0 < a.x1 + pad and a.y0 - pad < b.y1 and b.y0 < a.y1 + pad


def visible_tick_labels(axis, renderer=None):
    """Display-space Bboxes of the tick labels of ``axis`` that are drawn and not empty."""
    renderer = renderer or axis.figure._get_renderer()
    lo, hi = sorted(axis.get_view_interval())
    out = []
    for tick in axis.get_major_ticks():
        if not lo - 1e-9 * (abs(lo) + abs(hi) + 1) <= tick.get_loc() <= hi + 1e-9 * (abs(hi) + 1):
            continue
        for label in (tick.label1, tick.label2):
            if label.get_visible() and label.get_text() and tick.get_visible():
                out.append(label.get_window_extent(renderer))
    return out


def _crowded(boxes, pad=PAD_PX):
    return any(boxes_overlap(a, b, pad) for i, a in enumerate(boxes) for b in boxes[i + 1 :])


def thin_crowded_ticks(fig, rounds=4):
    """Use fewer ticks on every axis whose labels touch each other; returns ``fig``."""
    for _ in range(rounds):
        fig.draw_without_rendering()
        renderer = fig._get_renderer()
        changed = False
        for ax in fig.axes:
            for axis in (ax.xaxis, ax.yaxis):
                if isinstance(axis.get_major_locator(), FixedLocator):
                    continue  # ticks placed on purpose (e.g. colour-bar steps)
                boxes = visible_tick_labels(axis, renderer)
                if len(boxes) > 2 and _crowded(boxes, PAD_PX * fig.dpi / 100.0):
                    axis.set_major_locator(
                        MaxNLocator(nbins=max(len(boxes) - 2, 2), steps=[1, 2, 5, 10])
                    )
                    changed = True
        if not changed:
            break
    return fig


def figure_texts(fig):
    """Every visible, non-empty Text artist of ``fig`` (figure, axes, legends, titles)."""
    from matplotlib.text import Text

    return [t for t in fig.findobj(Text) if t.get_visible() and t.get_text().strip()]


def keep_texts_inside(fig, smallest=5.5):
    """Shrink figure-level texts that stick out of the figure, down to ``smallest`` pt."""
    fig.draw_without_rendering()
    renderer = fig._get_renderer()
    box = fig.bbox
    for text in list(fig.texts) + ([fig._suptitle] if fig._suptitle is not None else []):
        for _ in range(12):
            ext = text.get_window_extent(renderer)
            if ext.x0 >= box.x0 and ext.x1 <= box.x1 or text.get_fontsize() <= smallest:
                break
            text.set_fontsize(max(text.get_fontsize() * 0.92, smallest))
    return fig
