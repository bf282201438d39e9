"""Checks of drawn figures shared by the figure tests: overlaps, text inside, contrast.

Everything is measured on the figure itself after ``draw_without_rendering`` (the same
layout a saved PNG gets), with matplotlib's renderer bounding boxes in display pixels.
"""

import re

import numpy as np
from matplotlib.colors import to_rgba
from matplotlib.text import Text

#: W3C (2018), Web Content Accessibility Guidelines 2.1, success criterion 1.4.11 (non-text
#: contrast): graphical objects needed to understand the content need at least 3:1 against
#: adjacent colours. The figures are read on white paper or screens.
MIN_CONTRAST = 3.0


def relative_luminance(rgb):
    """W3C (2018), WCAG 2.1, definition of relative luminance (sRGB, linearised)."""
    c = np.asarray(rgb, dtype=float)[..., :3]
    lin = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    return lin @ np.array([0.2126, 0.7152, 0.0722])


def contrast_on_white(colour):
    """W3C (2018), WCAG 2.1, definition of contrast ratio, (L1 + 0.05) / (L2 + 0.05), of a
    colour (alpha composited over white) against white."""
    rgba = np.atleast_2d(np.asarray(colour, dtype=float))
    if rgba.shape[-1] == 3:
        rgba = np.concatenate([rgba, np.ones(rgba.shape[:-1] + (1,))], axis=-1)
    seen = rgba[..., :3] * rgba[..., 3:4] + (1.0 - rgba[..., 3:4])  # over white paper
    return 1.05 / (relative_luminance(seen) + 0.05)


def drawn(fig):
    fig.draw_without_rendering()
    return fig._get_renderer()


def tick_label_boxes(fig):
    """(axes, text, box) of every visible, non-empty tick label inside its axis' view."""
    renderer = drawn(fig)
    return [
        (ax, label.get_text(), label.get_window_extent(renderer))
        for ax, label, _ in _tick_labels(fig)
    ]


def _tick_labels(fig):
    out = []
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            tol = 1e-9 * (abs(lo) + abs(hi) + 1.0)
            for tick in axis.get_major_ticks():
                if not (tick.get_visible() and lo - tol <= tick.get_loc() <= hi + tol):
                    continue
                for label in (tick.label1, tick.label2):
                    if label.get_visible() and label.get_text().strip():
                        out.append((ax, label, axis))
    return out


def overlapping(boxes, pad=0.0):
    """Pairs of (name, box) items whose boxes intersect (touching edges do not count)."""
    pairs = []
    for i, (na, a) in enumerate(boxes):
        for nb, b in boxes[i + 1 :]:
            if a.x0 - pad < b.x1 and b.x0 < a.x1 + pad and a.y0 - pad < b.y1 and b.y0 < a.y1 + pad:
                pairs.append((na, nb))
    return pairs


def colliding_tick_labels(fig):
    """Tick labels, over all axes of the figure, that print on top of each other."""
    return overlapping([(text, box) for _, text, box in tick_label_boxes(fig)])


def visible_texts(fig):
    """Texts that get drawn: tick labels only for ticks inside their axis' view."""
    ticks = set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            for tick in axis.get_major_ticks() + axis.get_minor_ticks():
                ticks.update((id(tick.label1), id(tick.label2)))
    shown = {id(label) for _, label, _ in _tick_labels(fig)}
    return [
        t
        for t in fig.findobj(Text)
        if t.get_visible() and t.get_text().strip() and (id(t) not in ticks or id(t) in shown)
    ]


def texts_outside(fig, tolerance_px=1.0):
    """Texts whose drawn box leaves the figure."""
    renderer = drawn(fig)
    box = fig.bbox
    out = []
    for t in visible_texts(fig):
        e = t.get_window_extent(renderer)
        if (
            e.x0 < box.x0 - tolerance_px
            or e.x1 > box.x1 + tolerance_px
            or e.y0 < box.y0 - tolerance_px
            or e.y1 > box.y1 + tolerance_px
        ):
            out.append(t.get_text())
    return out


def texts_with_nan(fig):
    """Texts that print a missing number as the word nan (or NaT)."""
    return [
        t.get_text()
        for t in visible_texts(fig)
        if re.search(r"\bna[nt]\b", t.get_text(), flags=re.IGNORECASE)
    ]


def line_colours(ax):
    """Colours of the drawn (not marker-only) lines of ``ax``, alpha included."""
    return [
        to_rgba(ln.get_color(), ln.get_alpha())
        for ln in ax.get_lines()
        if ln.get_linestyle() not in ("None", "none", "", " ") and ln.get_visible()
    ]
