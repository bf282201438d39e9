"""Figure of one sound-speed Profile: temperature, salinity and sound speed against depth.

Depth increases downward on a shared axis. The diagnostics of :mod:`seaprofile.layers`
(mixed and sonic layer, channel axis, critical depth) are drawn as labelled horizontal
lines; the part of the profile below the deepest measurement (the extension, flagged 8)
is dashed and labelled "estimated"; flagged bins or samples are marked, one marker shape
per Argo flag, named in the legend with the Argo flag words. For deep profiles a fourth
panel repeats the sound speed over the upper ocean, where the layers sit. Profiles with
sound speed only (a sound-speed probe, a depth / sound-speed table, a planning profile of
a few nodes) get one panel; profiles of few nodes show the nodes.

The figure is a plain :class:`matplotlib.figure.Figure`: importing this module or drawing
never changes the matplotlib backend, and nothing is registered with pyplot.
"""

from __future__ import annotations

import math

import numpy as np
from matplotlib import colormaps
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.ticker import MaxNLocator
from matplotlib.transforms import blended_transform_factory

from .. import _cf
from .._validate import SeaprofileError
from ._layout import keep_texts_inside, thin_crowded_ticks
from ._numbers import cutoff_text

__all__ = ["plot_profile", "FLAG_MARKERS", "FLAG_WORDS", "PANEL_LABELS"]

#: Argo reference table 2 words of each flag value, as stored in ``flag_meanings``.
FLAG_WORDS = {
    int(v): w.replace("_", " ") for v, w in zip(_cf.FLAG_VALUES, _cf.FLAG_MEANINGS.split())
}

INK = colormaps["magma"](0.15)
# our own choices; colours sampled from perceptually uniform colour maps, each at least
# 3:1 in contrast against white (W3C 2018, WCAG 2.1, success criterion 1.4.11)
_COLOURS = {
    "temperature": colormaps["magma"](0.55),
    "salinity": colormaps["viridis"](0.40),
    "sound_speed": colormaps["cividis"](0.05),
    "raw": "0.72",  # background dots of the raw cast, light on purpose
}
_BAND = "0.45"  # the flag-8 band: mid grey, 4.7:1 on white (WCAG 2.1, 1.4.11)
#: flag value -> (marker, face colour, legend label). Flags 3, 4 and 5 are marked on the
#: value; flag 8 (estimated, inside the measured part) as a thin band along the right edge
#: of the panel over each run of filled bins, flag 9 (missing) as ticks there, since their
#: values are interpolated or absent.
FLAG_MARKERS = {
    _cf.PROBABLY_BAD: ("v", "none", f"flag 3: {FLAG_WORDS[_cf.PROBABLY_BAD]}"),
    _cf.BAD: ("X", INK, f"flag 4: {FLAG_WORDS[_cf.BAD]}"),
    _cf.CHANGED: ("D", "none", f"flag 5: {FLAG_WORDS[_cf.CHANGED]}"),
    _cf.ESTIMATED: (
        "None",
        _BAND,
        f"flag 8: {FLAG_WORDS[_cf.ESTIMATED]} (interpolated, band at the right edge)",
    ),
    _cf.MISSING: ("x", INK, f"flag 9: {FLAG_WORDS[_cf.MISSING]} (tick at the right edge)"),
}
_ON_VALUE = (_cf.PROBABLY_BAD, _cf.BAD, _cf.CHANGED)
_RUG = (_cf.ESTIMATED, _cf.MISSING)
_NOT_DRAWN = _cf.UNUSABLE_FLAGS  # left out of the profile line
PANEL_LABELS = {
    "temperature": "Temperature (°C, ITS-90)",
    "salinity": "Salinity (PSS-78)",
    "sound_speed": "Sound speed (m/s)",
}
# diagnostic key -> (short label, line style, (colour map, position))
_LINES = (
    ("mixed_layer_depth_temperature", "mixed layer", (0, (6, 2)), ("magma", 0.62)),
    ("sonic_layer_depth", "sonic layer", (0, (2, 1.5)), ("magma", 0.35)),
    ("channel_axis_depth", "channel axis", (0, (8, 2, 2, 2)), ("viridis", 0.55)),
    ("secondary_channel_depth", "2nd channel", (0, (3, 1, 1, 1)), ("cividis", 0.45)),
    ("critical_depth_surface", "critical depth", (0, (1, 1)), ("magma", 0.0)),
)
MEASURED_LABEL = "measured level (bin with samples)"
_ZOOM_WHEN_DEEPER = 1500.0  # m: add the upper-ocean panel below this depth
_ZOOM_DEPTH = 300.0  # m shown in that panel
_FEW_NODES = 40  # profiles with at most this many points show their nodes
# layout, inches
_PANEL_IN, _GAP_IN, _LEFT_IN, _LABELS_IN, _ZOOM_GAP_IN = 2.35, 0.12, 0.85, 1.55, 0.6
_MIN_WIDTH_IN, _PANELS_HEIGHT_IN, _TOP_IN = 6.8, 5.9, 1.05


def _finite(value):
    """``value`` as a float when it is a finite number, else None."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def _word(value):
    """A printable name, or None for missing values (None, NaN, '', 'nan', 'None')."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return None
    if hasattr(value, "values"):
        value = value.values
    if isinstance(value, np.ndarray):
        value = value.item() if value.size == 1 else None
    s = str(value).strip() if value is not None else ""
    return None if s.lower() in ("", "nan", "none", "nat", "null") else s


def _flags(ds, name):
    q = f"{name}_qc"
    if q in ds:
        return np.asarray(ds[q].values)
    return np.zeros(ds.sizes[next(iter(ds.dims))], dtype=np.int8)


def _cast_depth(cast, profile):
    if "depth" in cast:
        return np.asarray(cast["depth"].values, dtype=float)
    if "pressure" in cast:
        from ..seawater.depth import depth_from_pressure

        lat = _finite(cast["latitude"]) if "latitude" in cast.coords else None
        if lat is None and "latitude" in profile.coords:
            lat = _finite(profile["latitude"])
        return np.asarray(
            depth_from_pressure(
                np.asarray(cast["pressure"].values, float), 45.0 if lat is None else lat
            )
        )
    raise SeaprofileError("cast has neither depth nor pressure to plot against")


def _limits(profile, name):
    """x limits from the Profile's bins not flagged bad (raw samples beyond are clipped)."""
    v = np.asarray(profile[name].values, dtype=float)
    ok = np.isfinite(v) & ~np.isin(_flags(profile, name), _NOT_DRAWN)
    if not ok.any():
        return None
    lo, hi = float(v[ok].min()), float(v[ok].max())
    pad = max(0.06 * (hi - lo), 0.05)
    return lo - pad, hi + pad


def _mark_flags(ax, v, z, q, lim, suffix=""):
    """Markers for flagged values (3, 4, 5), rugs for flags 8 and 9, off-scale arrows."""
    inside = np.ones(v.size, bool) if lim is None else (v >= lim[0]) & (v <= lim[1])
    for flag in _ON_VALUE:
        marker, face, label = FLAG_MARKERS[flag]
        sel = (q == flag) & inside & np.isfinite(v)
        if sel.any():
            ax.plot(
                v[sel],
                z[sel],
                ls="none",
                marker=marker,
                ms=6,
                mfc=face,
                mec=INK,
                mew=1.0,
                zorder=4,
                label=label + suffix,
            )
    if not suffix:  # the rug belongs to the Profile's bins
        edge = blended_transform_factory(ax.transAxes, ax.transData)
        for flag in _RUG:
            marker, face, label = FLAG_MARKERS[flag]
            sel = q == flag
            if not sel.any():
                continue
            if flag == _cf.ESTIMATED:  # one band per run of filled bins, NaN between runs
                zz = _runs(z, sel)
                ax.plot(
                    np.full(zz.size, 0.985),
                    zz,
                    ls="-",
                    lw=3.0,
                    color=face,
                    solid_capstyle="butt",
                    transform=edge,
                    zorder=4,
                    label=label,
                )
            else:
                ax.plot(
                    np.full(sel.sum(), 0.985),
                    z[sel],
                    ls="none",
                    marker=marker,
                    ms=4,
                    mew=0.6,
                    color=face,
                    transform=edge,
                    zorder=4,
                    clip_on=True,
                    label=label,
                )
    out = np.isin(q, _ON_VALUE) & ~inside & np.isfinite(v)
    if lim is None or not out.any():
        return
    for side, sel, marker in ((lim[0], v < lim[0], "<"), (lim[1], v > lim[1], ">")):
        sel = sel & out
        if sel.any():
            ax.plot(
                np.full(sel.sum(), side),
                z[sel],
                ls="none",
                marker=marker,
                ms=6,
                mfc=INK,
                mec="none",
                clip_on=False,
                zorder=4,
                label="flagged, off scale (drawn at the edge)",
            )


def _runs(z, sel):
    """Top and bottom depth of each run of neighbouring flagged bins ``sel``, NaN between.

    Each run spans its bins out to half a bin beyond its end bins: the band is as long as
    the depth the filled bins cover, so scattered single filled bins of a dense cast show
    as a faint haze and a sparse cast, interpolated nearly everywhere, as a full band.
    """
    idx = np.flatnonzero(sel)
    first = idx[np.r_[True, np.diff(idx) > 1]]
    last = idx[np.r_[np.diff(idx) > 1, True]]
    zf = z.astype(float)
    half = 0.5 * np.diff(zf).min() if zf.size > 1 else 0.5
    return np.column_stack(
        [zf[first] - half, zf[last] + half, np.full(first.size, np.nan)]
    ).ravel()[:-1]


def _measured_levels(profile, shown):
    """Bins holding samples, when few enough to mark one by one among filled bins."""
    if "samples_per_bin" not in profile:
        return None
    measured = (np.asarray(profile["samples_per_bin"].values) > 0) & np.isfinite(shown)
    if measured.all() or not measured.any() or measured.sum() > _FEW_NODES:
        return None
    return measured


def _draw_variable(ax, profile, name, z, est_top, *, label, linestyle="-"):
    v = np.asarray(profile[name].values, dtype=float)
    q = _flags(profile, name)
    shown = np.where(np.isin(q, _NOT_DRAWN), np.nan, v)
    colour = _COLOURS[name]
    measured = _measured_levels(profile, shown)
    few = measured is None and np.isfinite(shown).sum() <= _FEW_NODES
    nodes = dict(marker="o", ms=3.5) if few else {}
    # a measured part of the profile, and below est_top the extension, dashed
    meas = np.ones(z.size, bool) if est_top is None else z <= est_top
    ax.plot(
        np.where(meas, shown, np.nan), z, color=colour, lw=1.3, ls=linestyle, label=label, **nodes
    )
    if est_top is not None:
        last = np.flatnonzero(meas)
        lo = last[-1] if last.size else 0
        ax.plot(
            shown[lo:],
            z[lo:],
            color=colour,
            lw=1.3,
            ls=(0, (5, 3)),
            label=f"estimated (below {est_top:g} m)",
        )
    if measured is not None:  # the levels actually measured, among interpolated bins
        ax.plot(
            v[measured],
            z[measured],
            ls="none",
            marker="o",
            ms=4.5,
            mfc="white",
            mec=colour,
            mew=1.3,
            zorder=3,
            label=MEASURED_LABEL,
        )
    est = (q == _cf.ESTIMATED) & meas  # filled bins inside the measured part only
    _mark_flags(
        ax, v, z, np.where((q == _cf.ESTIMATED) & ~est, _cf.GOOD, q), _limits(profile, name)
    )


def _draw_cast(ax, cast, zc, name, lim=None):
    src = "measured_sound_speed" if name == "sound_speed" else name
    if src not in cast:
        return
    v = np.asarray(cast[src].values, dtype=float)
    q = _flags(cast, src)
    ax.plot(
        np.where(np.isin(q, _ON_VALUE), np.nan, v),
        zc,
        ls="none",
        marker=".",
        ms=2.0,
        color=_COLOURS["raw"],
        zorder=0,
        label="raw samples",
    )
    _mark_flags(ax, v, zc, q, lim, suffix=" (raw)")


def _dress(ax, label):
    ax.set_xlabel(label)
    ax.xaxis.set_major_locator(MaxNLocator(nbins=5, steps=[1, 2, 5, 10]))
    ax.xaxis.set_label_position("top")
    ax.xaxis.tick_top()
    ax.grid(True, color="0.9", lw=0.6)
    ax.margins(x=0.08)


def _critical_construction(ax, d):
    """Thin vertical at the surface sound speed, from the surface to the critical depth."""
    zc, c0 = _finite(d.get("critical_depth_surface")), _finite(d.get("surface_sound_speed"))
    if zc is None or c0 is None:
        return
    ax.plot(
        [c0, c0],
        [_finite(d.get("surface_depth")) or 0.0, zc],
        color="0.45",
        lw=0.8,
        ls=(0, (1, 2)),
        zorder=1,
    )
    ax.plot([c0], [zc], marker="o", ms=4, mfc="white", mec="0.3", zorder=3)


def _summary(d):
    """A few lines of numbers for the margin of the figure (missing or NaN values left out)."""

    def num(key, fmt):
        v = _finite(d.get(key))
        return None if v is None else fmt.format(v)

    top = _finite(d.get("transducer_depth")) or 0.0
    bottom = _finite(d.get("harmonic_mean_to_depth"))
    hm = "harmonic mean sound speed" if bottom is None else f"harmonic mean, {top:g}-{bottom:g} m"
    rows = [("surface sound speed", num("surface_sound_speed", "{:.1f} m/s"))]
    if d.get("surface_duct"):
        rows += [
            ("surface duct", num("sonic_layer_depth", "{:.0f} m thick")),
            ("in-layer gradient", num("in_layer_gradient", "{:+.3f} 1/s")),
            ("duct cut-off*", _cutoff(d)),
        ]
    else:
        rows.append(("surface duct", "none"))
    rows += [
        ("below-layer gradient", num("below_layer_gradient", "{:+.3f} 1/s")),
        ("speed on the channel axis", num("channel_axis_sound_speed", "{:.1f} m/s")),
        ("critical depth", num("critical_depth_surface", "{:.0f} m")),
        ("depth excess", num("depth_excess_surface", "{:.0f} m")),
        (hm, num("harmonic_mean_sound_speed", "{:.1f} m/s")),
    ]
    lines = [f"{k}: {v}" for k, v in rows if v is not None]
    if d.get("surface_duct") and _cutoff(d):
        lines.append("* rule of thumb, order of magnitude")
    return lines


def _cutoff(d):
    text = cutoff_text(d.get("duct_cutoff_frequency"))
    return None if text is None else f"{text} Hz"


def _hlines(axes, diagnostics, label_ax, ylim, est_top=None):
    """Horizontal lines across every panel; one label per line in the right margin."""
    drawn = []
    for key, text, style, (cmap, pos) in _LINES:
        d = _finite(diagnostics.get(key))
        if d is None or not (min(ylim) <= d <= max(ylim)):
            continue
        if key == "sonic_layer_depth" and not diagnostics.get("surface_duct"):
            continue  # without a duct the "sonic layer" is the top bin: nothing to mark
        colour = colormaps[cmap](pos)
        for ax in axes:
            ax.axhline(d, color=colour, ls=style, lw=1.1, zorder=1)
        note = "\n(estimated part)" if est_top is not None and d > est_top else ""
        drawn.append((d, f"{text} {d:.0f} m{note}", colour))
    if not drawn:
        return []
    # place labels in axes-fraction units, pushed apart so they never overlap
    top, bottom = min(ylim), max(ylim)
    drawn.sort()
    frac = [(d - top) / (bottom - top) for d, _, _ in drawn]
    gap = 0.045
    placed = []
    for f in frac:
        placed.append(max(f, placed[-1] + gap) if placed else f)
    overflow = placed[-1] - 0.98
    if overflow > 0:
        placed = [p - overflow for p in placed]
        for i in range(len(placed) - 2, -1, -1):
            placed[i] = min(placed[i], placed[i + 1] - gap)
    trans = blended_transform_factory(label_ax.transAxes, label_ax.transData)
    return [
        label_ax.annotate(
            text,
            xy=(1.0, d),
            xycoords=trans,
            xytext=(1.06, top + f * (bottom - top)),
            textcoords=trans,
            va="center",
            ha="left",
            fontsize=8.5,
            color="0.1",
            arrowprops=dict(arrowstyle="-", color=colour, lw=0.9),
            annotation_clip=False,
        )
        for (d, text, colour), f in zip(drawn, placed)
    ]


def _zoom_depth(zoom, z, c):
    """Depth (m) of the upper-ocean panel, or 0 for none."""
    if zoom is False or zoom == 0:
        return 0.0
    if zoom is None or zoom is True:
        deep = np.nanmax(z) > _ZOOM_WHEN_DEEPER
        enough = np.sum(np.isfinite(c) & (z <= _ZOOM_DEPTH)) >= 5  # a shape worth a panel
        return _ZOOM_DEPTH if deep and enough else 0.0
    zoom = _finite(zoom)
    if zoom is None or zoom <= 0:
        raise SeaprofileError("zoom must be a positive depth in m, or False")
    return zoom


def _title(profile):
    name = (
        _word(profile.attrs.get("cast_name"))
        or (_word(profile["profile_id"]) if "profile_id" in profile.coords else None)
        or _word(profile.attrs.get("profile_id"))
        or "(unnamed)"
    )
    eq = _word(profile.attrs.get("equation"))
    if eq == "measured":
        # the instrument is named only when the file (or the user) declared it; a reader's
        # guess from the columns is no claim about where the numbers came from
        declared = _word(profile.attrs.get("instrument_source")) in ("file", "option")
        eq_text = (
            " (measured by a sound-speed probe)"
            if declared and _word(profile.attrs.get("instrument")) == "svp"
            else " (sound speed given directly)"
        )
    else:
        eq_text = f" (equation {eq})" if eq else ""
    where = []
    lat = _finite(profile["latitude"]) if "latitude" in profile.coords else None
    lon = _finite(profile["longitude"]) if "longitude" in profile.coords else None
    if lat is not None:
        where.append(f"{abs(lat):.4f}° {'N' if lat >= 0 else 'S'}")
    if lon is not None:
        where.append(f"{abs(lon):.4f}° {'E' if lon >= 0 else 'W'}")
    if "time" in profile.coords:
        t = np.asarray(profile["time"].values)
        if t.size == 1 and np.issubdtype(t.dtype, np.datetime64) and not np.isnat(t):
            where.append(str(t.astype("datetime64[m]")).replace("T", " ") + " UTC")
    return f"Sound-speed profile {name}{eq_text}", "  ·  ".join(where)


def plot_profile(profile, *, diagnostics=None, cast=None, fig=None, zoom=None, bottom_depth=None):
    """Draw temperature, salinity and sound speed of a Profile against depth.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (dimension ``depth`` in m; ``sound_speed`` in m/s; ``temperature`` in
        degC and ``salinity`` when present; ``<var>_qc`` flags). Sound speed alone, and
        as few as two valid nodes, are enough.
    diagnostics : dict, optional
        The output of :func:`seaprofile.layers.describe`; computed when not given.
    cast : xarray.Dataset, optional
        The Cast the Profile came from (after QC): its samples are drawn as light dots,
        and its samples flagged 3, 4 or 5 are marked.
    fig : matplotlib.figure.Figure, optional
        Figure to draw into (cleared and resized first); a new one otherwise.
    zoom : float or bool, optional
        Depth, m, of an extra panel with the sound speed of the upper ocean. Default:
        300 m when the profile is deeper than 1500 m and has at least 5 points in the
        upper 300 m, none otherwise; ``False`` for none.
    bottom_depth : float, optional
        Sea floor depth, m, drawn as a line and passed to ``describe``.

    Returns
    -------
    matplotlib.figure.Figure
        One to three panels (one more with the upper-ocean panel) sharing an inverted
        depth axis. A plain Figure: the matplotlib backend is never changed.
    """
    from ..layers.summary import _estimated_top, describe

    if not hasattr(profile, "dims") or "depth" not in profile.dims or "sound_speed" not in profile:
        raise SeaprofileError("profile must be a Profile Dataset with depth and sound_speed")
    z = np.asarray(profile["depth"].values, dtype=float)
    c = np.asarray(profile["sound_speed"].values, dtype=float)
    if np.sum(np.isfinite(c) & np.isfinite(z)) < 2:
        raise SeaprofileError("profile has fewer than two valid sound-speed values to draw")
    if bottom_depth is not None and _finite(bottom_depth) is None:
        raise SeaprofileError(f"bottom_depth must be a finite depth in m, got {bottom_depth!r}")
    est_top = _estimated_top(profile)
    if diagnostics is None:
        diagnostics = describe(profile, bottom_depth=bottom_depth)
    names = [
        n
        for n in ("temperature", "salinity", "sound_speed")
        if n in profile and np.isfinite(np.asarray(profile[n].values, float)).any()
    ]
    zoom = _zoom_depth(zoom, z, c)
    n_full = len(names)

    # --- layout in inches (heights fixed once the legend is known) ---------------------
    width_in = _LEFT_IN + n_full * _PANEL_IN + (n_full - 1) * _GAP_IN + _LABELS_IN
    if zoom:
        width_in += _ZOOM_GAP_IN + _PANEL_IN + _LABELS_IN
    if n_full > 1 or zoom:
        width_in = max(width_in, _MIN_WIDTH_IN)
    if fig is None:
        fig = Figure(figsize=(width_in, 9.0))
    else:
        fig.clear()
    lefts = [_LEFT_IN + i * (_PANEL_IN + _GAP_IN) for i in range(n_full)]
    axes = []
    for _ in lefts:
        axes.append(fig.add_subplot(sharey=axes[0] if axes else None))
    zoom_left = lefts[-1] + _PANEL_IN + _LABELS_IN + _ZOOM_GAP_IN

    # --- panels -------------------------------------------------------------------------
    zc = _cast_depth(cast, profile) if cast is not None else None
    assumed_s = str(profile.attrs.get("salinity_assumed", "")).lower() in ("yes", "true", "1")
    for ax, name in zip(axes, names):
        lim = _limits(profile, name)
        if zc is not None:
            _draw_cast(ax, cast, zc, name, lim)
        label = {
            "temperature": "temperature",
            "salinity": "salinity",
            "sound_speed": "sound speed",
        }[name]
        style = "-"
        if name == "salinity" and assumed_s:
            label = f"salinity ({_word(profile.attrs.get('salinity_source')) or 'assumed'})"
            style = ":"
        _draw_variable(ax, profile, name, z, est_top, label=label, linestyle=style)
        _dress(ax, PANEL_LABELS[name])
        if lim is not None:
            ax.set_xlim(*lim)
    axes[0].set_ylabel("Depth (m)")
    zmax = max(np.nanmax(z), _finite(bottom_depth) or 0.0)
    axes[0].set_ylim(zmax * 1.01 + 1.0, min(0.0, np.nanmin(z)))
    for ax in axes[1:]:
        ax.tick_params(labelleft=False)
    ylim = axes[0].get_ylim()
    if bottom_depth is not None:
        for ax in axes:
            ax.axhspan(bottom_depth, ylim[0], color="0.85", zorder=0, label="sea floor")
    upper = ("mixed_layer_depth_temperature", "sonic_layer_depth")
    if zoom:
        zax = fig.add_subplot()
        lefts.append(zoom_left)
        last = min(int(np.searchsorted(z, zoom, side="right")) + 1, z.size)
        _draw_variable(
            zax,
            profile.isel(depth=slice(0, last)),
            "sound_speed",
            z[:last],
            est_top,
            label="sound speed",
        )
        if zc is not None:
            _draw_cast(zax, cast, zc, "sound_speed")
        zax.set_ylim(zoom, 0.0)
        _dress(zax, f"Sound speed (m/s), upper {zoom:g} m")
        zax.set_ylabel("Depth (m)", labelpad=2)
        top_c = c[:last][np.isfinite(c[:last]) & (z[:last] <= zoom)]
        if top_c.size:
            pad = max(0.06 * (top_c.max() - top_c.min()), 0.05)
            zax.set_xlim(top_c.min() - pad, top_c.max() + pad)
        for ax in axes:  # shade the range the upper-ocean panel shows
            ax.axhspan(
                0.0,
                zoom,
                color=colormaps["cividis"](0.95),
                alpha=0.25,
                zorder=0,
                label=f"shown in the upper-ocean panel (0-{zoom:g} m)",
            )
        _hlines(
            [zax], {k: diagnostics.get(k) for k in upper + ("surface_duct",)}, zax, zax.get_ylim()
        )
        _hlines(
            axes, {k: v for k, v in diagnostics.items() if k not in upper}, axes[-1], ylim, est_top
        )
        axes.append(zax)
    else:
        _hlines(axes, diagnostics, axes[-1], ylim, est_top)
    _critical_construction(axes[n_full - 1], diagnostics)

    # --- summary, legend, title, caution --------------------------------------------------
    handles, seen = [], set()
    for ax in axes:
        for hd, lab in zip(*ax.get_legend_handles_labels()):
            key = "salinity" if lab.startswith("salinity") else lab
            if lab.startswith("estimated"):
                hd = Line2D([], [], color="0.3", ls=(0, (5, 3)), lw=1.3)
            if lab in seen or key in ("temperature", "salinity", "sound speed") and key in seen:
                continue
            seen.update((lab, key))
            handles.append((hd, lab))
    summary = _summary(diagnostics)
    # one panel: the legend and the summary stacked under it, the figure as narrow as the
    # panel and its labels allow; several panels: the summary beside the legend
    stacked = n_full == 1 and not zoom
    ncol_summary = 1 if stacked else max(1, min(3, int((width_in * 0.5 - 0.1) // 2.5)))
    ncol_legend = 1 if width_in < 11 else 2
    per = math.ceil(len(summary) / ncol_summary) if summary else 0
    if stacked:
        rows = len(handles) + len(summary) + 1
    else:
        rows = max(per, math.ceil(len(handles) / ncol_legend), 3)
    bottom_in = 0.35 + rows * 0.165 + 0.45
    height_in = _TOP_IN + _PANELS_HEIGHT_IN + bottom_in
    top_text = (bottom_in - 0.35) / height_in

    def place(width_in):
        fig.set_size_inches(width_in, height_in)
        for ax, left in zip(axes, lefts):
            ax.set_position(
                [
                    left / width_in,
                    bottom_in / height_in,
                    _PANEL_IN / width_in,
                    _PANELS_HEIGHT_IN / height_in,
                ]
            )

    place(width_in)
    title, where = _title(profile)
    heads = [fig.suptitle(title, fontsize=12, y=1.0 - 0.12 / height_in, va="top")]
    if where:
        heads.append(
            fig.text(
                0.5, 1.0 - 0.45 / height_in, where, ha="center", va="top", fontsize=9, color="0.25"
            )
        )
    legend = fig.legend(
        [hd for hd, _ in handles],
        [lab for _, lab in handles],
        loc="upper left",
        ncol=ncol_legend,
        fontsize=7.5,
        frameon=False,
        borderaxespad=0.0,
        bbox_to_anchor=(0.3 / width_in, top_text),
    )
    chunks = [summary[i : i + per] for i in range(0, len(summary), per)] if per else []
    notes = [
        fig.text(
            0.5,
            top_text,
            "\n".join(chunk),
            ha="left",
            va="top",
            fontsize=8,
            color="0.15",
            linespacing=1.45,
        )
        for chunk in chunks
    ]
    fig.draw_without_rendering()
    renderer = fig._get_renderer()
    legend_box = legend.get_window_extent(renderer) if handles else None
    legend_in = legend_box.width / fig.dpi if handles else 0.0
    widths = [t.get_window_extent(renderer).width / fig.dpi for t in notes]
    if stacked:
        # as wide as the panel with its labels, the legend, the summary or the title,
        # whichever is widest
        panel_in = max(ax.get_tightbbox(renderer).x1 for ax in axes) / fig.dpi
        head_in = max(t.get_window_extent(renderer).width for t in heads) / fig.dpi
        width_in = max(
            panel_in + 0.2,
            0.3 + legend_in + 0.15,
            0.3 + max(widths, default=0) + 0.15,
            head_in + 0.3,
        )
        place(width_in)
        legend.set_bbox_to_anchor((0.3 / width_in, top_text), transform=fig.transFigure)
        below = top_text - (legend_box.height / fig.dpi + 0.12) / height_in if handles else top_text
        for t in notes:
            t.set_position((0.3 / width_in, below))
    else:
        # the summary starts right of the legend; the figure widens when both do not fit
        x_in = max(0.5 * width_in, 0.3 + legend_in + 0.35)
        need = x_in + sum(widths) + 0.3 * max(len(widths) - 1, 0) + 0.15
        if need > width_in:
            width_in = need
            place(width_in)
            legend.set_bbox_to_anchor((0.3 / width_in, top_text), transform=fig.transFigure)
        gap = min(max((width_in - 0.15 - x_in - sum(widths)) / max(len(widths) - 1, 1), 0.3), 1.2)
        for t, w in zip(notes, widths):
            t.set_x(x_in / width_in)
            x_in += w + gap
    fig.text(
        0.5,
        0.06 / height_in,
        "Caution: " + _cf.CAUTION,
        ha="center",
        va="bottom",
        fontsize=7,
        color="0.3",
        wrap=True,
    )
    thin_crowded_ticks(fig)
    return keep_texts_inside(fig)
