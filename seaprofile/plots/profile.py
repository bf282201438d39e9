"""Figure of one sound-speed Profile: temperature, salinity and sound speed against depth.

Depth increases downward on a shared axis. The diagnostics of :mod:`seaprofile.layers`
(mixed and sonic layer, channel axis, critical depth) are drawn as labelled horizontal
lines; the part of the profile below the deepest measurement (the extension, flagged 8)
is dashed and labelled "estimated"; bins or samples flagged 3 or 4 are marked. For deep
profiles a fourth panel repeats the sound speed over the upper ocean, where the layers sit.
"""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg", force=False)

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib import colormaps  # noqa: E402
from matplotlib.lines import Line2D  # noqa: E402
from matplotlib.transforms import blended_transform_factory  # noqa: E402

from .. import _cf  # noqa: E402
from .._validate import SeaprofileError  # noqa: E402

__all__ = ["plot_profile", "FLAG_MARKERS", "PANEL_LABELS"]

# our own choices; colours sampled from perceptually uniform colour maps
_COLOURS = {
    "temperature": colormaps["magma"](0.55),
    "salinity": colormaps["viridis"](0.40),
    "sound_speed": colormaps["cividis"](0.05),
    "raw": "0.72",
}
#: flag value -> (marker, face colour, label); hollow triangle for "probably bad", cross for bad
FLAG_MARKERS = {
    _cf.PROBABLY_BAD: ("v", "none", "flag 3: probably bad"),
    _cf.BAD: ("X", colormaps["magma"](0.15), "flag 4: bad"),
}
PANEL_LABELS = {
    "temperature": "Temperature (°C, ITS-90)",
    "salinity": "Salinity (PSS-78)",
    "sound_speed": "Sound speed (m/s)",
}
# diagnostic key -> (short label, line style, colour position in magma)
_LINES = (
    ("mixed_layer_depth_temperature", "mixed layer", (0, (6, 2)), 0.72),
    ("sonic_layer_depth", "sonic layer", (0, (2, 1.5)), 0.35),
    ("channel_axis_depth", "channel axis", (0, (8, 2, 2, 2)), ("viridis", 0.62)),
    ("secondary_channel_depth", "2nd channel", (0, (3, 1, 1, 1)), ("viridis", 0.85)),
    ("critical_depth_surface", "critical depth", (0, (1, 1)), 0.0),
)
_ZOOM_WHEN_DEEPER = 1500.0  # m: add the upper-ocean panel below this depth
_ZOOM_DEPTH = 300.0  # m shown in that panel


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

        lat = float(cast["latitude"]) if "latitude" in cast.coords else np.nan
        if not np.isfinite(lat):
            lat = float(profile["latitude"]) if "latitude" in profile.coords else 45.0
        return np.asarray(depth_from_pressure(np.asarray(cast["pressure"].values, float), lat))
    raise SeaprofileError("cast has neither depth nor pressure to plot against")


def _draw_variable(ax, profile, name, z, est_top, *, label, linestyle="-"):
    v = np.asarray(profile[name].values, dtype=float)
    q = _flags(profile, name)
    good = np.where(np.isin(q, (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING)), np.nan, v)
    colour = _COLOURS[name]
    if est_top is None:
        ax.plot(good, z, color=colour, lw=1.3, ls=linestyle, label=label)
    else:
        meas = z <= est_top
        ax.plot(np.where(meas, good, np.nan), z, color=colour, lw=1.3, ls=linestyle,
                label=label)
        last = np.flatnonzero(meas)
        lo = last[-1] if last.size else 0
        ax.plot(good[lo:], z[lo:], color=colour, lw=1.3, ls=(0, (5, 3)),
                label=f"estimated (below {est_top:g} m)")
    lim = _limits(profile, name)
    inside = np.ones(v.size, bool) if lim is None else (v >= lim[0]) & (v <= lim[1])
    for flag, (marker, face, flabel) in FLAG_MARKERS.items():
        sel = (q == flag) & inside
        if sel.any():
            ax.plot(v[sel], z[sel], ls="none", marker=marker, ms=6, mfc=face,
                    mec=colormaps["magma"](0.15), mew=1.0, label=flabel)
    out = np.isin(q, tuple(FLAG_MARKERS)) & ~inside
    _off_scale(ax, v[out], z[out], lim)


def _limits(profile, name):
    """x limits from the Profile's bins not flagged bad (raw samples beyond are clipped)."""
    v = np.asarray(profile[name].values, dtype=float)
    ok = np.isfinite(v) & ~np.isin(_flags(profile, name), (_cf.PROBABLY_BAD, _cf.BAD,
                                                            _cf.MISSING))
    if not ok.any():
        return None
    lo, hi = float(v[ok].min()), float(v[ok].max())
    pad = max(0.06 * (hi - lo), 0.05)
    return lo - pad, hi + pad


def _cast_name(name):
    return "measured_sound_speed" if name == "sound_speed" else name


def _off_scale(ax, v, z, lim):
    """Draw values beyond the x limits at the panel edge with an arrow-head marker."""
    if lim is None:
        return
    for side, sel, marker in ((lim[0], v < lim[0], "<"), (lim[1], v > lim[1], ">")):
        if sel.any():
            ax.plot(np.full(sel.sum(), side), z[sel], ls="none", marker=marker, ms=6,
                    mfc=colormaps["magma"](0.15), mec="none", clip_on=False, zorder=4,
                    label="flagged, off scale (drawn at the edge)")


def _draw_cast(ax, cast, zc, name, lim=None):
    src = _cast_name(name)
    if src not in cast:
        return
    v = np.asarray(cast[src].values, dtype=float)
    q = _flags(cast, src)
    bad = np.isin(q, tuple(FLAG_MARKERS))
    ax.plot(np.where(bad, np.nan, v), zc, ls="none", marker=".", ms=2.0,
            color=_COLOURS["raw"], zorder=0, label="raw samples")
    inside = np.ones(v.size, bool) if lim is None else (v >= lim[0]) & (v <= lim[1])
    for flag, (marker, face, flabel) in FLAG_MARKERS.items():
        sel = (q == flag) & inside
        if sel.any():
            ax.plot(v[sel], zc[sel], ls="none", marker=marker, ms=6, mfc=face,
                    mec=colormaps["magma"](0.15), mew=1.0, label=f"{flabel} (raw)")
    _off_scale(ax, v[bad & ~inside], zc[bad & ~inside], lim)


def _dress(ax, label):
    ax.set_xlabel(label)
    ax.xaxis.set_label_position("top")
    ax.xaxis.tick_top()
    ax.grid(True, color="0.9", lw=0.6)
    ax.margins(x=0.08)


def _critical_construction(ax, d):
    """Thin vertical at the surface sound speed, from the surface to the critical depth."""
    zc, c0 = d.get("critical_depth_surface"), d.get("surface_sound_speed")
    if zc is None or c0 is None:
        return
    ax.plot([c0, c0], [d.get("surface_depth") or 0.0, zc], color="0.45", lw=0.8,
            ls=(0, (1, 2)), zorder=1)
    ax.plot([c0], [zc], marker="o", ms=4, mfc="white", mec="0.3", zorder=3)


def _hm_label(d):
    top, bottom = d.get("transducer_depth") or 0.0, d.get("harmonic_mean_to_depth")
    if bottom is None:
        return "harmonic mean sound speed"
    return f"harmonic mean, {top:g}-{bottom:g} m"


def _summary(d):
    """A few lines of numbers for the margin of the figure."""
    def num(key, fmt):
        v = d.get(key)
        return None if v is None else fmt.format(v)

    rows = [("surface sound speed", num("surface_sound_speed", "{:.1f} m/s"))]
    if d.get("surface_duct"):
        rows += [("surface duct", num("sonic_layer_depth", "{:.0f} m thick")),
                 ("in-layer gradient", num("in_layer_gradient", "{:+.3f} 1/s")),
                 ("duct cut-off*", num("duct_cutoff_frequency", "{:.0f} Hz"))]
    else:
        rows.append(("surface duct", "none"))
    rows += [("below-layer gradient", num("below_layer_gradient", "{:+.3f} 1/s")),
             ("speed on the channel axis", num("channel_axis_sound_speed", "{:.1f} m/s")),
             ("critical depth", num("critical_depth_surface", "{:.0f} m")),
             ("depth excess", num("depth_excess_surface", "{:.0f} m")),
             (_hm_label(d), num("harmonic_mean_sound_speed", "{:.1f} m/s"))]
    lines = [f"{k}: {v}" for k, v in rows if v is not None]
    if d.get("surface_duct"):
        lines.append("* rule of thumb, order of magnitude")
    return lines


def _hlines(axes, diagnostics, label_ax, ylim, est_top=None):
    """Horizontal lines across every panel; one label per line in the right margin."""
    drawn = []
    for key, text, style, pos in _LINES:
        d = diagnostics.get(key)
        if d is None or not np.isfinite(d) or not (min(ylim) <= d <= max(ylim)):
            continue
        cmap, pos = pos if isinstance(pos, tuple) else ("magma", pos)
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
    out = []
    for (d, text, colour), f in zip(drawn, placed):
        ylab = top + f * (bottom - top)
        out.append(label_ax.annotate(
            text, xy=(1.0, d), xycoords=trans, xytext=(1.06, ylab), textcoords=trans,
            va="center", ha="left", fontsize=8.5, color="0.1",
            arrowprops=dict(arrowstyle="-", color=colour, lw=0.9), annotation_clip=False))
    return out


def plot_profile(profile, *, diagnostics=None, cast=None, fig=None, zoom=None,
                 bottom_depth=None):
    """Draw temperature, salinity and sound speed of a Profile against depth.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (dimension ``depth`` in m; ``sound_speed`` in m/s; ``temperature`` in
        degC and ``salinity`` when present; ``<var>_qc`` flags).
    diagnostics : dict, optional
        The output of :func:`seaprofile.layers.describe`; computed when not given.
    cast : xarray.Dataset, optional
        The Cast the Profile came from (after QC): its samples are drawn as light dots,
        and its samples flagged 3 or 4 are marked.
    fig : matplotlib.figure.Figure, optional
        Figure to draw into (cleared first); a new one otherwise.
    zoom : float or bool, optional
        Depth, m, of an extra panel with the sound speed of the upper ocean. Default:
        300 m when the profile is deeper than 1500 m, none otherwise; ``False`` for none.
    bottom_depth : float, optional
        Sea floor depth, m, drawn as a line and passed to ``describe``.

    Returns
    -------
    matplotlib.figure.Figure
        Three panels (four with the upper-ocean panel) sharing an inverted depth axis.
    """
    from ..layers import _estimated_top, describe

    if not hasattr(profile, "dims") or "depth" not in profile.dims or \
            "sound_speed" not in profile:
        raise SeaprofileError("profile must be a Profile Dataset with depth and sound_speed")
    z = np.asarray(profile["depth"].values, dtype=float)
    est_top = _estimated_top(profile)
    if diagnostics is None:
        diagnostics = describe(profile, bottom_depth=bottom_depth)
    names = [n for n in ("temperature", "salinity", "sound_speed") if n in profile]
    if zoom is None:
        zoom = _ZOOM_DEPTH if np.nanmax(z) > _ZOOM_WHEN_DEEPER else False
    n_full = len(names)
    # full-depth panels | room for line labels | upper-ocean panel | room for its labels
    widths = [1.0] * n_full + ([0.62, 1.0, 0.62] if zoom else [0.62])
    if fig is None:
        fig = plt.figure(figsize=(2.9 * sum(widths) + 1.2, 8.0))
    else:
        fig.clear()
    gs = fig.add_gridspec(1, len(widths), width_ratios=widths, wspace=0.06,
                          left=0.07, right=0.995, top=0.86, bottom=0.20)
    axes = []
    for i, name in enumerate(names):
        ax = fig.add_subplot(gs[0, i], sharey=axes[0] if axes else None)
        axes.append(ax)
    zc = _cast_depth(cast, profile) if cast is not None else None
    assumed_s = str(profile.attrs.get("salinity_assumed", "")).lower() in ("yes", "true", "1")
    for ax, name in zip(axes, names):
        lim = _limits(profile, name)
        if zc is not None:
            _draw_cast(ax, cast, zc, name, lim)
        label = {"temperature": "temperature", "salinity": "salinity",
                 "sound_speed": "sound speed"}[name]
        style = "-"
        if name == "salinity" and assumed_s:
            label = f"salinity ({profile.attrs.get('salinity_source', 'assumed')})"
            style = ":"
        _draw_variable(ax, profile, name, z, est_top, label=label, linestyle=style)
        _dress(ax, PANEL_LABELS[name])
        if lim is not None:
            ax.set_xlim(*lim)
    axes[0].set_ylabel("Depth (m)")
    zmax = max(np.nanmax(z), bottom_depth or 0.0)
    axes[0].set_ylim(zmax * 1.01 + 1.0, min(0.0, np.nanmin(z)))
    for ax in axes[1:]:
        ax.tick_params(labelleft=False)
    ylim = axes[0].get_ylim()
    if bottom_depth is not None:
        for ax in axes:
            ax.axhspan(bottom_depth, ylim[0], color="0.85", zorder=0, label="sea floor")
    upper = ("mixed_layer_depth_temperature", "sonic_layer_depth")
    if zoom:
        zoom = float(zoom)
        zax = fig.add_subplot(gs[0, n_full + 1])
        near = z <= zoom * 1.2
        _draw_variable(zax, profile.isel(depth=np.flatnonzero(near)), "sound_speed", z[near],
                       est_top, label="sound speed")
        if zc is not None:
            _draw_cast(zax, cast, zc, "sound_speed")
        zax.set_ylim(zoom, 0.0)
        _dress(zax, f"Sound speed (m/s), upper {zoom:g} m")
        zax.set_ylabel("Depth (m)", labelpad=2)
        zax.autoscale(axis="x")
        for ax in axes:  # shade the range the upper-ocean panel shows
            ax.axhspan(0.0, zoom, color=colormaps["cividis"](0.95), alpha=0.25, zorder=0,
                       label=f"shown in the upper-ocean panel (0-{zoom:g} m)")
        _hlines([zax], {k: diagnostics.get(k) for k in upper}, zax, zax.get_ylim())
        _hlines(axes, {k: v for k, v in diagnostics.items() if k not in upper}, axes[-1], ylim,
                est_top)
        axes.append(zax)
    else:
        _hlines(axes, diagnostics, axes[-1], ylim, est_top)
    _critical_construction(axes[len(names) - 1], diagnostics)
    lines = _summary(diagnostics)
    per = 4
    chunks = [lines[i:i + per] for i in range(0, len(lines), per)]
    x0, x1 = 0.50, 0.99
    for k, chunk in enumerate(chunks):
        fig.text(x0 + k * (x1 - x0) / len(chunks), 0.15, "\n".join(chunk), ha="left",
                 va="top", fontsize=8, color="0.15", linespacing=1.45)

    # legend: lines and markers actually drawn, once each
    handles, seen = [], set()
    for ax in axes:
        for h, lab in zip(*ax.get_legend_handles_labels()):
            key = "salinity" if lab.startswith("salinity") else lab
            if lab.startswith("estimated"):
                h = Line2D([], [], color="0.3", ls=(0, (5, 3)), lw=1.3)
            if lab in seen or key in ("temperature", "salinity", "sound speed") and key in seen:
                continue
            seen.add(lab)
            seen.add(key)
            handles.append((h, lab))
    fig.legend([h for h, _ in handles], [lab for _, lab in handles], loc="upper left",
               ncol=2, fontsize=8, frameon=False, bbox_to_anchor=(0.06, 0.16))

    name = profile.attrs.get("cast_name") or (
        str(profile["profile_id"].values) if "profile_id" in profile.coords else "profile")
    eq = profile.attrs.get("equation", "unknown")
    eq_text = "measured by a sound-speed probe" if eq == "measured" else f"equation {eq}"
    where = []
    if "latitude" in profile.coords and np.isfinite(float(profile["latitude"])):
        lat, lon = float(profile["latitude"]), float(profile["longitude"])
        where.append(f"{abs(lat):.4f}° {'N' if lat >= 0 else 'S'}, "
                     f"{abs(lon):.4f}° {'E' if lon >= 0 else 'W'}")
    if "time" in profile.coords and not np.isnat(profile["time"].values):
        where.append(str(profile["time"].values)[:16].replace("T", " ") + " UTC")
    fig.suptitle(f"Sound-speed profile {name} ({eq_text})", fontsize=12, y=0.975)
    if where:
        fig.text(0.5, 0.935, "  ·  ".join(where), ha="center", fontsize=9, color="0.25")
    fig.text(0.5, 0.012, "Caution: " + _cf.CAUTION, ha="center", fontsize=7.5,
             color="0.3", wrap=True)
    return fig
