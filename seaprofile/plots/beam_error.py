"""Figure: depth error (and uncertainty) by beam angle over the TVU budget band."""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from .._cf import CAUTION

__all__ = ["plot_beam_error"]


def plot_beam_error(result, budget, fraction, order, water_depth):
    """Depth error vs beam angle with the order's TVU band shaded.

    Parameters
    ----------
    result : dict
        ``beam_angle`` (degrees) and any of ``depth_error``, ``uncertainty_95`` (m).
    budget : float
        TVU at the water depth, m (95 %).
    fraction : float
        Share of the TVU allowed for the sound-speed error.
    order : str
        IHO S-44 order, for the labels.
    water_depth : float
        Water depth, m, for the title.

    Returns
    -------
    matplotlib.figure.Figure
    """
    import matplotlib as mpl

    colours = mpl.colormaps["viridis"](np.array([0.15, 0.55]))
    fig = Figure(figsize=(7.5, 4.5))
    ax = fig.add_subplot()
    a = np.asarray(result["beam_angle"], dtype=float)
    ax.axhspan(-budget, budget, color="0.9", label=f"TVU Order {order} (95 %): ±{budget:.2f} m")
    ax.axhspan(
        -fraction * budget,
        fraction * budget,
        color="0.78",
        label=f"{fraction * 100:g} % of the TVU: ±{fraction * budget:.2f} m",
    )
    if "depth_error" in result:
        ax.plot(a, result["depth_error"], color=colours[0], lw=2, label="depth error")
    if "uncertainty_95" in result:
        u = np.asarray(result["uncertainty_95"], dtype=float)
        ax.plot(a, u, color=colours[1], lw=1.5, ls="--", label="uncertainty (95 %)")
        ax.plot(a, -u, color=colours[1], lw=1.5, ls="--")
    ax.set_xlabel("beam angle from vertical (degrees)")
    ax.set_ylabel("depth error, processed minus true (m)")
    ax.set_xlim(a.min(), a.max())
    ax.set_title(f"Depth error by beam angle, water depth {water_depth:g} m")
    ax.legend(loc="lower left", fontsize=8)
    ax.grid(True, lw=0.3)
    fig.text(0.01, 0.01, CAUTION, fontsize=6, color="0.35", wrap=True)
    fig.subplots_adjust(bottom=0.2)
    return fig
