"""A map of one 2-D product of a gridded field (e.g. sonic layer depth from layer_maps).

Like the other figures of this package: a matplotlib ``Figure`` object (no pyplot, the
backend is never changed), a perceptually uniform colour map (viridis by default), a
colour bar labelled with the variable's name and units, and latitude/longitude axes.
"""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from .._cf import CAUTION
from .._validate import SeaprofileError

__all__ = ["map_figure"]

#: perceptually uniform colour maps accepted by :func:`map_figure`
COLORMAPS = ("viridis", "cividis", "magma", "inferno", "plasma")


def map_figure(da, *, title=None, cmap="viridis"):
    """A latitude/longitude map of a 2-D DataArray.

    Parameters
    ----------
    da : xarray.DataArray
        Values on ``(latitude, longitude)`` (any order; a ``time`` dimension must be
        selected first), e.g. ``layer_maps(...)["sonic_layer_depth"]`` (m).
    title : str, optional
        Figure title (default: the variable's long name).
    cmap : str
        One of :data:`COLORMAPS`.

    Returns
    -------
    matplotlib.figure.Figure
    """
    if cmap not in COLORMAPS:
        raise SeaprofileError(f"cmap: expected one of {', '.join(COLORMAPS)}, got {cmap!r}")
    lat = next((d for d in da.dims if str(d).startswith("lat")), None)
    lon = next((d for d in da.dims if str(d).startswith("lon")), None)
    if da.ndim != 2 or lat is None or lon is None:
        raise SeaprofileError(
            f"map: {da.name!r} must be 2-D on latitude and longitude, it has dims {da.dims}"
        )
    values = np.asarray(da.transpose(lat, lon).values, dtype=float)
    units = da.attrs.get("units", "")
    label = str(da.name or "value").replace("_", " ")
    long_name = str(da.attrs.get("long_name") or label)
    fig = Figure(figsize=(7.5, 5.2))
    ax = fig.add_subplot(1, 1, 1)
    mesh = ax.pcolormesh(
        da[lon].values, da[lat].values, np.ma.masked_invalid(values), cmap=cmap, shading="auto"
    )
    bar = fig.colorbar(mesh, ax=ax)
    bar.set_label(f"{label} ({units})" if units else label)
    ax.set_xlabel("longitude (degrees east)")
    ax.set_ylabel("latitude (degrees north)")
    ax.set_title(title or long_name)
    fig.text(0.01, 0.01, f"Caution: {CAUTION}", fontsize=6, wrap=True)
    fig.subplots_adjust(bottom=0.16)
    return fig
