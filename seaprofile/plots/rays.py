"""Ray-fan figure: rays in range and depth beside the sound-speed profile they bend in.

The figure is meant to be read by someone planning sonar work: depth grows downward, range
is in kilometres, the sea floor is filled, the source is marked, and every ray is drawn from
one :class:`~matplotlib.collections.LineCollection` (ten thousand rays draw in a few
seconds). Rays are coloured either by launch angle or by the number of boundary
reflections (surface plus bottom) along the whole ray, each on its own perceptually uniform
sequential colour map with a labelled colour bar. Rays are opaque: a transparent line
changes its colour with what lies behind it and no longer matches the colour bar. Both
maps stop before their palest colours, so that every ray keeps at least 3:1 contrast
against white paper (W3C 2018, WCAG 2.1, success criterion 1.4.11, non-text contrast).

Not for navigation on its own: verify against the governing hydrographic standard, local
regulations and licensed practice.
"""

from __future__ import annotations

import math

import matplotlib as mpl
import numpy as np
from matplotlib.collections import LineCollection
from matplotlib.colors import BoundaryNorm, ListedColormap
from matplotlib.figure import Figure
from matplotlib.ticker import MaxNLocator

from .._cf import CAUTION
from .._validate import SeaprofileError
from ._layout import keep_texts_inside, thin_crowded_ticks

__all__ = ["plot_fan", "SHADES", "boundary_reflections", "fan_for_drawing", "reflection_bins"]

#: Ways of shading the rays.
SHADES = ("launch_angle", "reflections")

# Our own look: a neutral, earthy sea floor; a dark ink for text and the profile line.
SEAFLOOR_FILL = "#b8a58a"
SEAFLOOR_EDGE = "#5f4d38"
INK = "#222222"
SOURCE_COLOUR = "#c2185b"
CAUTION_COLOUR = "#555555"

# Launch angle: viridis up to 0.58, reflections: plasma up to 0.62; beyond those the colours
# fall under 3:1 contrast on white (tests/plots check it with the WCAG 2.1 formula).
ANGLE_CMAP = ListedColormap(
    mpl.colormaps["viridis"](np.linspace(0.0, 0.58, 256)), name="seaprofile_launch_angle"
)
REFLECTION_MAP = ("plasma", 0.0, 0.62)
MAX_REFLECTION_BINS = 9  # colour steps of the reflection colour bar, at most


#: points per ray that :func:`fan_for_drawing` asks for, and the bound on all rays together
DRAW_POINTS_PER_RAY = 2000
DRAW_POINTS_TOTAL = 1_000_000
MIN_DRAW_POINTS_PER_RAY = 100


def fan_for_drawing(fan, environment):
    """The rays of ``fan`` with points close enough along every arc to draw them smooth.

    A RayFan keeps only its event points (start, layer crossings, turning points,
    reflections) or range samples at the step the user chose. Drawn as straight segments
    between those points, an arc over a few thinned layers looks like a polygon, most of
    all at a deep turning point. This traces the same rays again through the same
    environment with :func:`seaprofile.propagation.trace_fan` at a fine range step
    (``max_range / DRAW_POINTS_PER_RAY``, coarser when the fan is large, so that all
    rays together hold at most about ``DRAW_POINTS_TOTAL`` points) and merges those
    samples with the points of ``fan`` in the order of travel time along each ray. The
    physics is untouched: every point is a point of the traced ray.

    Parameters
    ----------
    fan : xarray.Dataset
        RayFan from :func:`~seaprofile.propagation.trace_fan` (attributes
        ``source_depth`` m, ``max_range`` m, ``max_bounces``; ``launch_angle`` degrees).
    environment : Environment
        The environment ``fan`` was traced in.

    Returns
    -------
    xarray.Dataset
        ``fan`` with ``range`` and ``depth`` (m) and ``travel_time`` (s) on a longer
        ``point`` dimension (NaN padded); other per-point variables are left out, the
        per-ray variables and attributes are those of ``fan``.
    """
    from ..propagation import trace_fan

    _check_fan(fan)
    angles = np.asarray(fan["launch_angle"].values, dtype=float)
    rmax = float(fan.attrs["max_range"])
    per_ray = int(
        np.clip(
            DRAW_POINTS_TOTAL // max(angles.size, 1), MIN_DRAW_POINTS_PER_RAY, DRAW_POINTS_PER_RAY
        )
    )
    fine = trace_fan(
        environment,
        float(fan.attrs["source_depth"]),
        angles,
        rmax,
        range_step=rmax / per_ray,
        max_bounces=int(fan.attrs.get("max_bounces", 100)),
    )
    t = np.concatenate([fan["travel_time"].values, fine["travel_time"].values], axis=1)
    order = np.argsort(np.where(np.isfinite(t), t, np.inf), axis=1, kind="stable")
    merged = {}
    for name in ("range", "depth", "travel_time"):
        both = np.concatenate([fan[name].values, fine[name].values], axis=1)
        both = np.take_along_axis(both, order, axis=1)
        merged[name] = (
            ("ray", "point"),
            np.where(np.isfinite(np.take_along_axis(t, order, axis=1)), both, np.nan),
            fan[name].attrs,
        )
    per_point = [v for v in fan.data_vars if "point" in fan[v].dims]
    return fan.drop_vars(per_point).drop_dims("point", errors="ignore").assign(merged)


def caution_line(fig, text=None):
    """Write the caution in small grey type along the bottom edge of ``fig``."""
    fig.text(
        0.01,
        0.008,
        "Caution: " + (text or CAUTION),
        fontsize=7,
        color=CAUTION_COLOUR,
        ha="left",
        va="bottom",
        wrap=True,
    )


def _normalise_shade(shade):
    s = str(shade).strip().lower().replace("-", "_").replace(" ", "_")
    if s in ("angle", "launch"):
        s = "launch_angle"
    if s in ("bounces", "reflection"):
        s = "reflections"
    if s not in SHADES:
        raise SeaprofileError(f"shade must be one of {SHADES}, got {shade!r}")
    return s


def _check_fan(fan):
    for name in ("range", "depth"):
        if name not in getattr(fan, "variables", {}):
            raise SeaprofileError(f"fan must be a RayFan Dataset with {name!r} on (ray, point)")
    if tuple(fan["depth"].dims) != ("ray", "point"):
        raise SeaprofileError("fan: 'depth' must have dimensions ('ray', 'point')")


def ray_segments(fan):
    """Ray paths as one ``(ray, point, 2)`` array of (range in km, depth in m).

    NaN padding after a ray's last point is kept: matplotlib breaks a path at NaN, so the
    array goes straight into a :class:`~matplotlib.collections.LineCollection` without a
    Python loop over rays. Trailing columns that are NaN for every ray are dropped.
    """
    r = np.asarray(fan["range"].values, dtype=float) / 1000.0
    z = np.asarray(fan["depth"].values, dtype=float)
    valid = np.isfinite(r) & np.isfinite(z)
    used = np.flatnonzero(valid.any(axis=0))
    n = used[-1] + 1 if used.size else 0
    return np.stack([r[:, :n], z[:, :n]], axis=-1)


def boundary_reflections(fan):
    """Surface plus bottom reflections of every ray of a RayFan (int array on ``ray``)."""
    return (_counts(fan, "surface_reflections") + _counts(fan, "bottom_reflections")).astype(int)


def reflection_bins(counts):
    """Colour steps for reflection counts: edges (between integers) and a label per step.

    Rays that never touch a boundary keep a step of their own; above that, steps of 1, 2,
    5, 10, 20 ... reflections so that at most :data:`MAX_REFLECTION_BINS` steps cover the
    largest count.

    Returns
    -------
    edges : ndarray
        Step edges, half-way between integers (``-0.5, 0.5, ...``).
    labels : list of str
        ``"0"``, ``"1"`` ... or ``"1-5"``, ``"6-10"`` ...
    """
    counts = np.asarray(counts)
    top = int(counts.max()) if counts.size else 0
    top = max(top, 1)
    width = 1
    for w in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000):
        width = w
        if math.ceil(top / w) <= MAX_REFLECTION_BINS - 1:
            break
    n = math.ceil(top / width)
    edges = np.concatenate([[-0.5, 0.5], 0.5 + width * np.arange(1, n + 1)])
    labels = ["0"] + [
        str(1 + width * k) if width == 1 else f"{1 + width * k}-{width * (k + 1)}" for k in range(n)
    ]
    return edges, labels


def _counts(fan, name):
    if name in fan.variables:
        return np.nan_to_num(np.asarray(fan[name].values, dtype=float))
    return np.zeros(fan.sizes["ray"])


def _line_width(crossings):
    """Line width (pt) that keeps a dense fan readable.

    The width follows ``crossings``, the ink: the number of times rays cross the water
    column (one per ray plus one per reflection or turning point), so a shallow-water fan
    of many bounces is drawn finer than a deep-water fan of the same number of rays.
    Lines stay opaque, so their colour always matches the colour bar.
    """
    return float(np.clip(1.3 * np.sqrt(600.0 / max(float(crossings), 1.0)), 0.3, 1.3))


def _profile_nodes(profile, environment):
    """Depth (m) and sound speed (m/s) to draw in the side panel, or None."""
    if profile is not None:
        if not hasattr(profile, "variables") and hasattr(profile, "sound_speed"):  # Environment
            z, c = np.asarray(profile.depth, float), np.asarray(profile.sound_speed, float)
        else:
            try:
                z = np.asarray(profile["depth"].values, dtype=float)
                c = np.asarray(profile["sound_speed"].values, dtype=float)
            except (KeyError, AttributeError, TypeError) as exc:
                raise SeaprofileError("profile must provide 'depth' and 'sound_speed'") from exc
        ok = np.isfinite(z) & np.isfinite(c)
        return z[ok], c[ok]
    if environment is not None:
        return np.asarray(environment.depth, float), np.asarray(environment.sound_speed, float)
    return None


def _bottom_line(environment, fan, rmax_m):
    """Ranges (km) and bottom depths (m) to fill below, or None when unknown."""
    r = np.linspace(0.0, rmax_m, 400)
    if environment is not None:
        if environment.bathymetry is not None:
            br = np.asarray(environment.bathymetry.ranges, float)
            inside = br[(br > 0) & (br < rmax_m)]
            r = np.unique(np.concatenate([r, inside]))
        return r / 1000.0, np.asarray(environment.bottom_at(r), float)
    bottom = fan.attrs.get("bottom_depth")
    if bottom is None or not np.isfinite(float(bottom)):
        return None
    return r / 1000.0, np.full(r.shape, float(bottom))


def plot_fan(
    fan, environment=None, *, shade="launch_angle", profile=None, ax=None, title=None, caution=True
):
    """Draw a ray fan: rays in range and depth, the sea floor, and the sound-speed profile.

    Parameters
    ----------
    fan : xr.Dataset
        RayFan from :func:`seaprofile.propagation.trace_fan` (``range`` and ``depth`` in m
        on ``(ray, point)``, NaN padded; ``launch_angle`` in degrees, positive down;
        ``surface_reflections`` / ``bottom_reflections`` counts).
    environment : Environment, optional
        The environment traced: gives the bottom depth or bathymetry (m) to fill, the
        sound-speed nodes (m/s) of the side panel when ``profile`` is not given, and, for a
        section, the cast ranges (m) marked along the top.
    shade : {"launch_angle", "reflections"}
        Colour rays by launch angle (degrees; continuous map with a colour bar, positive
        angles at its bottom) or by the number of boundary reflections along the whole ray,
        surface plus bottom (steps of :func:`reflection_bins` on a sequential map, a colour
        bar naming the steps and how many rays fall in each; rays with fewer reflections
        are drawn on top). ``"launch-angle"`` is accepted too.
    profile : xr.Dataset, optional
        Profile (``depth`` m, ``sound_speed`` m/s) drawn in the side panel instead of the
        environment's nodes.
    ax : matplotlib.axes.Axes, optional
        Draw only the rays into this axes (no side panel); its figure is returned.
    title : str, optional
        Figure title; default says how many rays and the source depth.
    caution : bool
        Write the caution line along the bottom of a new figure (default True).

    Returns
    -------
    matplotlib.figure.Figure

    Notes
    -----
    Range is plotted in km, depth in m increasing downward. The drawing is vectorised: the
    rays form one ``(ray, point, 2)`` array handed to a single LineCollection; matplotlib
    breaks each path at its NaN padding.
    """
    _check_fan(fan)
    shade = _normalise_shade(shade)
    segs = ray_segments(fan)
    nray = segs.shape[0]
    rmax_m = float(fan.attrs.get("max_range", np.nan))
    if not np.isfinite(rmax_m) or rmax_m <= 0:
        rr = segs[..., 0]
        rmax_m = float(np.nanmax(rr)) * 1000.0 if np.isfinite(rr).any() else 1000.0
    zs = float(fan.attrs.get("source_depth", np.nan))
    bottom = _bottom_line(environment, fan, rmax_m)
    nodes = _profile_nodes(profile, environment)

    zmax_candidates = [np.nanmax(segs[..., 1]) if np.isfinite(segs[..., 1]).any() else 0.0]
    if bottom is not None:
        zmax_candidates.append(float(np.max(bottom[1])))
    zmax = max(max(zmax_candidates), 1.0) * 1.04

    if ax is None:
        fig = Figure(figsize=(11.0, 5.8), dpi=110)
        left, bot, top = 0.07, 0.10, 0.84
        right = 0.875 if shade == "launch_angle" else 0.835
        if nodes is not None:
            ax_prof = fig.add_axes([left, bot, 0.13, top - bot])
            ax = fig.add_axes([left + 0.145, bot, right - left - 0.145, top - bot], sharey=ax_prof)
        else:
            ax_prof = None
            ax = fig.add_axes([left, bot, right - left, top - bot])
        cbar_box = [right + 0.02, bot + 0.03, 0.014, top - bot - 0.06]
        new_figure = True
    else:
        fig = ax.figure
        ax_prof = None
        cbar_box = None
        new_figure = False

    # --- rays -----------------------------------------------------------------------
    crossings = nray + float(
        np.sum(_counts(fan, "surface_reflections"))
        + np.sum(_counts(fan, "bottom_reflections"))
        + np.sum(_counts(fan, "turning_points"))
    )
    lw = _line_width(crossings)
    if shade == "launch_angle":
        _rays_by_angle(fig, ax, fan, segs, lw, cbar_box)
    else:
        _rays_by_reflections(fig, ax, fan, segs, lw, cbar_box)

    # --- sea floor, source, section casts -------------------------------------------
    if bottom is not None:
        br, bz = bottom
        ax.fill_between(br, bz, zmax * 1.5, color=SEAFLOOR_FILL, zorder=3, lw=0)
        ax.plot(br, bz, color=SEAFLOOR_EDGE, lw=1.2, zorder=4)
    if np.isfinite(zs):
        ax.plot(
            [0.0],
            [zs],
            marker="*",
            ms=13,
            color=SOURCE_COLOUR,
            mec="white",
            mew=0.9,
            zorder=6,
            ls="none",
            label="_source",
            clip_on=False,
        )
    section = getattr(environment, "section", None) if environment is not None else None
    if section is not None:
        for rk in np.asarray(section.ranges, float) / 1000.0:
            if 0.0 <= rk <= rmax_m / 1000.0:
                ax.axvline(rk, color=INK, lw=0.7, ls=(0, (2, 3)), alpha=0.6, zorder=5)
                ax.text(
                    rk,
                    0.0,
                    "cast",
                    rotation=90,
                    fontsize=7,
                    color=INK,
                    ha="right",
                    va="top",
                    zorder=7,
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.7),
                )

    ax.set_xlim(0.0, rmax_m / 1000.0)
    ax.set_ylim(zmax, 0.0)
    ax.set_xlabel("range (km)")
    ax.grid(True, color="#999999", lw=0.4, alpha=0.5, zorder=1)
    ax.set_axisbelow(True)

    # --- sound-speed panel ------------------------------------------------------------
    if ax_prof is not None:
        _profile_panel(ax_prof, nodes, section, bottom, zs, zmax)
        ax.tick_params(labelleft=False)
    else:
        ax.set_ylabel("depth (m)")

    if title is None:
        where = f" from a source at {zs:g} m" if np.isfinite(zs) else ""
        title = f"Ray fan: {nray} ray{'s' if nray != 1 else ''}{where}"
        if rmax_m:
            title += f", out to {rmax_m / 1000:g} km"
    if new_figure:
        fig.suptitle(title, x=0.07, ha="left", fontsize=12, color=INK, y=0.975)
        if caution:
            caution_line(fig)
        thin_crowded_ticks(fig)
        keep_texts_inside(fig)
    else:
        ax.set_title(title, fontsize=10, color=INK)
    return fig


def _colour_bar(fig, ax, mappable, cbar_box, label):
    if cbar_box is not None:
        cb = fig.colorbar(mappable, cax=fig.add_axes(cbar_box))
    else:
        cb = fig.colorbar(mappable, ax=ax, pad=0.01, fraction=0.04)
    cb.set_label(label)
    return cb


def _rays_by_angle(fig, ax, fan, segs, lw, cbar_box):
    """One LineCollection coloured by launch angle, and its colour bar (down at the bottom)."""
    nray = segs.shape[0]
    if "launch_angle" in fan.variables:
        angle = np.asarray(fan["launch_angle"].values, dtype=float)
    else:
        angle = np.zeros(nray)
    lo, hi = (float(np.nanmin(angle)), float(np.nanmax(angle))) if nray else (-1.0, 1.0)
    if not hi > lo:
        lo, hi = lo - 1.0, hi + 1.0
    lc = LineCollection(segs, cmap=ANGLE_CMAP, linewidths=lw, zorder=2)
    lc.set_array(angle)
    lc.set_clim(lo, hi)
    ax.add_collection(lc, autolim=False)
    cb = _colour_bar(fig, ax, lc, cbar_box, "launch angle (deg)")
    # Positive angles point down, so put them at the bottom of the bar, like the rays.
    cb.ax.invert_yaxis()
    cb.ax.text(
        0.5, 1.01, "up", transform=cb.ax.transAxes, ha="center", va="bottom", fontsize=8, color=INK
    )
    cb.ax.text(
        0.5, -0.01, "down", transform=cb.ax.transAxes, ha="center", va="top", fontsize=8, color=INK
    )
    return lc


def _rays_by_reflections(fig, ax, fan, segs, lw, cbar_box):
    """One LineCollection coloured by boundary reflections, and a stepped colour bar."""
    counts = boundary_reflections(fan)
    edges, labels = reflection_bins(counts)
    name, lo, hi = REFLECTION_MAP
    cmap = ListedColormap(
        mpl.colormaps[name](np.linspace(lo, hi, len(labels))), name="seaprofile_reflections"
    )
    norm = BoundaryNorm(edges, cmap.N)
    order = np.argsort(-counts, kind="stable")  # fewest reflections drawn last, on top
    lc = LineCollection(segs[order], cmap=cmap, norm=norm, linewidths=lw, zorder=2)
    lc.set_array(counts[order].astype(float))
    ax.add_collection(lc, autolim=False)
    cb = _colour_bar(fig, ax, lc, cbar_box, "boundary reflections per ray\n(surface + bottom)")
    step = np.digitize(counts, edges[1:-1])
    rays = np.bincount(step, minlength=len(labels))
    cb.set_ticks(0.5 * (edges[:-1] + edges[1:]))
    cb.set_ticklabels([f"{lab}: {n} ray{'s' if n != 1 else ''}" for lab, n in zip(labels, rays)])
    cb.ax.tick_params(labelsize=8, length=0)
    cb.minorticks_off()
    return lc


def _profile_panel(ax_prof, nodes, section, bottom, zs, zmax):
    """The narrow sound-speed panel: one profile, or every cast of a section."""
    z, c = nodes
    if section is not None:
        n = section.ranges.size
        cols = mpl.colormaps["cividis"](np.linspace(0.0, 0.55, n))  # >= 3:1 on white
        show = set(range(n)) if n <= 6 else {0, n - 1}
        for k in range(n):
            label = f"{section.ranges[k] / 1000:.1f} km" if k in show else None
            ax_prof.plot(section.sound_speed[k], section.depth, color=cols[k], lw=1.1, label=label)
        ax_prof.legend(
            fontsize=6.5,
            loc="lower left",
            framealpha=0.85,
            title="cast at" if n <= 6 else f"{n} casts, from",
            title_fontsize=6.5,
        )
        cmin, cmax = float(np.min(section.sound_speed)), float(np.max(section.sound_speed))
    else:
        ax_prof.plot(c, z, color=INK, lw=1.4, marker="." if z.size <= 40 else None, ms=3)
        cmin, cmax = float(np.min(c)), float(np.max(c))
    pad = max(0.08 * (cmax - cmin), 1.0)
    ax_prof.set_xlim(cmin - pad, cmax + pad)
    if bottom is not None:
        ax_prof.axhspan(float(bottom[1][0]), zmax * 1.5, color=SEAFLOOR_FILL, lw=0, zorder=3)
    if np.isfinite(zs):
        ax_prof.axhline(zs, color=SOURCE_COLOUR, lw=1.0, ls="--", zorder=4)
        ax_prof.text(
            0.96,
            zs,
            "source",
            transform=ax_prof.get_yaxis_transform(),
            color=SOURCE_COLOUR,
            fontsize=7.5,
            ha="right",
            va="bottom",
            zorder=5,
            bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.8),
        )
    ax_prof.set_ylim(zmax, 0.0)
    # range (km) labels the fan panel's bottom edge, so the sound speed is labelled on top
    ax_prof.set_xlabel("sound speed (m/s)")
    ax_prof.xaxis.set_label_position("top")
    ax_prof.xaxis.tick_top()
    ax_prof.set_ylabel("depth (m)")
    ax_prof.grid(True, color="#999999", lw=0.4, alpha=0.5)
    ax_prof.tick_params(axis="x", labelsize=8)
    ax_prof.xaxis.set_major_locator(MaxNLocator(3, steps=[1, 2, 5, 10]))
