"""The loss figure: a transmission-loss map beside the sound-speed profile it came from.

Two panels share the depth axis (m, increasing downward): the sound-speed profile (m/s) and
the transmission-loss map drawn by :func:`seaprofile.plots.coverage.plot_loss_map` (cividis
reversed, perceptually uniform: low loss, i.e. loud, bright; colour bar "transmission loss
(dB re 1 m)"; limits the 1st and 99th percentiles of the finite loss), with the sea floor
filled and the source marked. The title gives the source depth and the frequency or band.

Not for navigation on its own: verify against the governing hydrographic standards, local
regulations and licensed practice.
"""

from __future__ import annotations

import numpy as np

from ._layout import keep_texts_inside, thin_crowded_ticks
from .coverage import depth_panels, draw_profile_panel, plot_loss_map
from .rays import caution_line

__all__ = ["plot_loss_figure"]


def _title(loss):
    a = loss.attrs
    if "band_low" in a:
        freq = f"band {a['band_low']:g}-{a['band_high']:g} Hz"
    else:
        freq = f"{float(a.get('frequency', np.nan)):g} Hz"
    return (
        f"transmission loss, source at {float(a.get('source_depth', np.nan)):g} m, {freq}, "
        f"{a.get('mode', '')}"
    )


def plot_loss_figure(loss_da, environment=None, *, profile=None, title=None, caution=True):
    """Sound-speed profile and transmission-loss map side by side, sharing depth.

    Parameters
    ----------
    loss_da : xarray.DataArray
        From :func:`seaprofile.propagation.loss.transmission_loss`: dB re 1 m, dims
        ``("depth", "range")`` (m, m); its attributes give the source depth (m), the
        frequency (Hz) or band and the mode for the title.
    environment : Environment, optional
        Sea floor to fill (m) and, without ``profile``, the sound-speed nodes (m/s).
    profile : xarray.Dataset, optional
        Profile (``depth`` m, ``sound_speed`` m/s) for the side panel.
    title : str, optional
        Instead of the one made from the attributes.
    caution : bool
        Write the caution line (default True).

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (ax_p, ax_l) = depth_panels((1, 4), width=10.0, caution=caution)
    plot_loss_map(loss_da, environment=environment, ax=ax_l)  # marks the source too
    depth_limits = ax_l.get_ylim()  # down to the filled sea floor
    zs = float(loss_da.attrs.get("source_depth", np.nan))
    r_km = np.asarray(loss_da["range"].values, float) / 1000.0
    half = 0.5 * (r_km[1] - r_km[0]) if r_km.size > 1 else 0.0
    ax_l.set_xlim(0.0, float(r_km.max()) + half)
    draw_profile_panel(ax_p, profile, environment, source_depth=zs)
    ax_p.set_ylabel("depth (m)")
    ax_l.set_ylabel("")
    ax_l.tick_params(labelleft=False)
    ax_p.set_ylim(*depth_limits)
    fig.suptitle(title or _title(loss_da))
    if caution:
        caution_line(fig)
    thin_crowded_ticks(fig)
    keep_texts_inside(fig)
    return fig
