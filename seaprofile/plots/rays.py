"""Ray-fan figure: rays in range and depth beside the sound-speed profile they bend in.

The figure is meant to be read by someone planning sonar work: depth grows downward, range
is in kilometres, the sea floor is filled, the source is marked, and every ray is drawn from
one :class:`~matplotlib.collections.LineCollection` (ten thousand rays draw in a few
seconds). Rays are shaded either by launch angle (a perceptually uniform colour map with a
colour bar) or by how many times they were reflected at the surface and the bottom (a few
distinguishable colours taken from a perceptually uniform map, with a legend).

Not for navigation on its own: verify against the governing hydrographic standard, local
regulations and licensed practice.
"""

from __future__ import annotations

import numpy as np
from matplotlib.collections import LineCollection
from matplotlib.colors import ListedColormap
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
import matplotlib as mpl
from matplotlib.ticker import MaxNLocator

from .._cf import CAUTION
from .._validate import SeaprofileError

__all__ = ["plot_fan", "SHADES", "REFLECTION_CLASSES"]

#: Ways of shading the rays.
SHADES = ("launch_angle", "reflections")

#: Reflection classes of ``shade="reflections"``: rays that never touch a boundary, rays
#: kept up by the surface alone (a surface duct, or surface-reflected paths), and rays
#: with one, two, or three and more bottom bounces (the bottom is where a ray loses most).
REFLECTION_CLASSES = (
    "none (refracted only)",
    "surface only",
    "1 bottom",
    "2 bottom",
    "3 or more bottom",
)

# Our own look: a neutral, earthy sea floor; a dark ink for text and the profile line.
SEAFLOOR_FILL = "#b8a58a"
SEAFLOOR_EDGE = "#5f4d38"
INK = "#222222"
SOURCE_COLOUR = "#c2185b"
CAUTION_COLOUR = "#555555"

# Launch-angle colours: viridis without its palest yellow, which vanishes on white paper.
ANGLE_CMAP = ListedColormap(mpl.colormaps["viridis"](np.linspace(0.0, 0.88, 256)),
                            name="seaprofile_launch_angle")
# Reflection classes: five well separated steps of the same perceptually uniform map,
# darkest for the refracted-only rays (drawn on top), lightest for the many-bounce rays.
REFLECTION_COLOURS = tuple(tuple(c) for c in mpl.colormaps["viridis"]([0.0, 0.3, 0.52, 0.7, 0.86]))
# Opacity per class: refracted and surface-held paths solid, bottom bouncers fainter.
REFLECTION_ALPHA = (1.0, 0.9, 0.6, 0.45, 0.3)


def caution_line(fig, text=None):
    """Write the caution in small grey type along the bottom edge of ``fig``."""
    fig.text(0.01, 0.008, "Caution: " + (text or CAUTION), fontsize=7, color=CAUTION_COLOUR,
             ha="left", va="bottom", wrap=True)


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


def reflection_class(surface_reflections, bottom_reflections):
    """Index into :data:`REFLECTION_CLASSES` for each ray's surface and bottom counts."""
    s = np.asarray(surface_reflections, dtype=float)
    b = np.asarray(bottom_reflections, dtype=float)
    s, b = np.broadcast_arrays(s, b)
    out = np.select([b >= 3, b == 2, b == 1, s > 0], [4, 3, 2, 1], default=0)
    return out.astype(int)


def _counts(fan, name):
    if name in fan.variables:
        return np.nan_to_num(np.asarray(fan[name].values, dtype=float))
    return np.zeros(fan.sizes["ray"])


def _line_style(nray, crossings):
    """Line width (pt) and opacity that keep a dense fan readable.

    The width follows the number of rays; the opacity follows ``crossings``, the ink: the
    number of times rays cross the water column (one per ray plus one per reflection or
    turning point), so a shallow-water fan of many bounces is drawn lighter than a
    deep-water fan of the same number of rays.
    """
    lw = float(np.clip(1.6 / np.sqrt(max(nray, 1) / 20.0), 0.25, 1.3))
    alpha = float(np.clip(0.95 * np.sqrt(300.0 / max(float(crossings), 1.0)), 0.14, 0.95))
    return lw, alpha


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
            br = np.asarray(environment.bathymetry[0], float)
            inside = br[(br > 0) & (br < rmax_m)]
            r = np.unique(np.concatenate([r, inside]))
        return r / 1000.0, np.asarray(environment.bottom_at(r), float)
    bottom = fan.attrs.get("bottom_depth")
    if bottom is None or not np.isfinite(float(bottom)):
        return None
    return r / 1000.0, np.full(r.shape, float(bottom))


def plot_fan(fan, environment=None, *, shade="launch_angle", profile=None, ax=None,
             title=None, caution=True):
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
        angles at its bottom) or by their reflections (:data:`REFLECTION_CLASSES`: refracted
        only, surface only, 1, 2, 3+ bottom reflections; with a legend of ray counts).
        ``"launch-angle"`` is accepted too.
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
        left, bot, top = 0.07, 0.13, 0.90
        right = 0.875 if shade == "launch_angle" else 0.775
        if nodes is not None:
            ax_prof = fig.add_axes([left, bot, 0.13, top - bot])
            ax = fig.add_axes([left + 0.145, bot, right - left - 0.145, top - bot],
                              sharey=ax_prof)
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
    crossings = nray + float(np.sum(_counts(fan, "surface_reflections"))
                             + np.sum(_counts(fan, "bottom_reflections"))
                             + np.sum(_counts(fan, "turning_points")))
    lw, alpha = _line_style(nray, crossings)
    if shade == "launch_angle":
        _rays_by_angle(fig, ax, fan, segs, lw, alpha, cbar_box)
    else:
        _rays_by_reflections(ax, fan, segs, lw, alpha, outside=cbar_box is not None)

    # --- sea floor, source, section casts -------------------------------------------
    if bottom is not None:
        br, bz = bottom
        ax.fill_between(br, bz, zmax * 1.5, color=SEAFLOOR_FILL, zorder=3, lw=0)
        ax.plot(br, bz, color=SEAFLOOR_EDGE, lw=1.2, zorder=4)
    if np.isfinite(zs):
        ax.plot([0.0], [zs], marker="*", ms=13, color=SOURCE_COLOUR, mec="white", mew=0.9,
                zorder=6, ls="none", label="_source", clip_on=False)
    section = getattr(environment, "section", None) if environment is not None else None
    if section is not None:
        for rk in np.asarray(section.ranges, float) / 1000.0:
            if 0.0 <= rk <= rmax_m / 1000.0:
                ax.axvline(rk, color=INK, lw=0.7, ls=(0, (2, 3)), alpha=0.6, zorder=5)
                ax.text(rk, 0.0, "cast", rotation=90, fontsize=7, color=INK, ha="right",
                        va="top", zorder=7,
                        bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.7))

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
    else:
        ax.set_title(title, fontsize=10, color=INK)
    return fig


def _rays_by_angle(fig, ax, fan, segs, lw, alpha, cbar_box):
    """One LineCollection coloured by launch angle, and its colour bar (down at the bottom)."""
    nray = segs.shape[0]
    if "launch_angle" in fan.variables:
        angle = np.asarray(fan["launch_angle"].values, dtype=float)
    else:
        angle = np.zeros(nray)
    lo, hi = (float(np.nanmin(angle)), float(np.nanmax(angle))) if nray else (-1.0, 1.0)
    if not hi > lo:
        lo, hi = lo - 1.0, hi + 1.0
    lc = LineCollection(segs, cmap=ANGLE_CMAP, linewidths=lw, alpha=alpha, zorder=2)
    lc.set_array(angle)
    lc.set_clim(lo, hi)
    ax.add_collection(lc, autolim=False)
    if cbar_box is not None:
        cb = fig.colorbar(lc, cax=fig.add_axes(cbar_box))
    else:
        cb = fig.colorbar(lc, ax=ax, pad=0.01, fraction=0.04)
    cb.solids.set_alpha(1.0)
    cb.set_label("launch angle (deg)")
    # Positive angles point down, so put them at the bottom of the bar, like the rays.
    cb.ax.invert_yaxis()
    cb.ax.text(0.5, 1.01, "up", transform=cb.ax.transAxes, ha="center", va="bottom",
               fontsize=8, color=INK)
    cb.ax.text(0.5, -0.01, "down", transform=cb.ax.transAxes, ha="center", va="top",
               fontsize=8, color=INK)
    return lc


def _rays_by_reflections(ax, fan, segs, lw, alpha, outside):
    """One LineCollection coloured by reflection class, and a legend with ray counts."""
    klass = reflection_class(_counts(fan, "surface_reflections"),
                             _counts(fan, "bottom_reflections"))
    order = np.argsort(-klass, kind="stable")  # refracted-only rays drawn last (on top)
    colours = np.array(REFLECTION_COLOURS)[klass[order]]
    # Paths that stay in the water (refracted, or held up by the surface) are drawn solid
    # and at least 0.9 pt wide; the bottom-bouncing classes fade with the ink.
    stays = klass[order] <= 1
    colours[:, 3] = np.where(stays, 1.0, np.minimum(
        np.array(REFLECTION_ALPHA)[klass[order]], max(alpha, 0.2) * 1.3))
    widths = np.where(stays, max(lw, 0.9), lw)
    lc = LineCollection(segs[order], colors=colours, linewidths=widths, zorder=2)
    ax.add_collection(lc, autolim=False)
    handles = []
    for k, label in enumerate(REFLECTION_CLASSES):
        n = int(np.sum(klass == k))
        if n:
            handles.append(Line2D([], [], color=REFLECTION_COLOURS[k], lw=2.2,
                                  label=f"{label}: {n} ray{'s' if n != 1 else ''}"))
    leg_kw = dict(fontsize=8, framealpha=0.92, title="reflections", title_fontsize=8)
    if outside:
        ax.legend(handles=handles, loc="upper left", bbox_to_anchor=(1.005, 1.0),
                  borderaxespad=0.0, **leg_kw)
    else:
        ax.legend(handles=handles, loc="lower right", **leg_kw)
    return lc


def _profile_panel(ax_prof, nodes, section, bottom, zs, zmax):
    """The narrow sound-speed panel: one profile, or every cast of a section."""
    z, c = nodes
    if section is not None:
        n = section.ranges.size
        cols = mpl.colormaps["cividis"](np.linspace(0.0, 0.85, n))
        show = set(range(n)) if n <= 6 else {0, n - 1}
        for k in range(n):
            label = f"{section.ranges[k] / 1000:.1f} km" if k in show else None
            ax_prof.plot(section.sound_speed[k], section.depth, color=cols[k], lw=1.1,
                         label=label)
        ax_prof.legend(fontsize=6.5, loc="lower left", framealpha=0.85,
                       title="cast at" if n <= 6 else f"{n} casts, from", title_fontsize=6.5)
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
        ax_prof.text(0.96, zs, "source", transform=ax_prof.get_yaxis_transform(),
                     color=SOURCE_COLOUR, fontsize=7.5, ha="right", va="bottom", zorder=5,
                     bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.8))
    ax_prof.set_ylim(zmax, 0.0)
    ax_prof.set_xlabel("sound speed (m/s)")
    ax_prof.set_ylabel("depth (m)")
    ax_prof.grid(True, color="#999999", lw=0.4, alpha=0.5)
    ax_prof.tick_params(axis="x", labelsize=8)
    ax_prof.xaxis.set_major_locator(MaxNLocator(3, prune="upper"))
    ax_prof.set_title("sound speed", fontsize=9, color=INK)
