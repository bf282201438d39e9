"""Sound-speed probe casts: compare the measured sound speed with one computed from T, S, p."""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError

__all__ = ["compare_measured_sound_speed"]


def compare_measured_sound_speed(cast, equation="chen_millero1977"):
    """Measured minus computed sound speed, sample by sample.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast with ``measured_sound_speed`` (m/s), ``temperature`` (degC, ITS-90),
        ``salinity`` (practical salinity) and ``pressure`` (dbar) or ``depth`` (m). Not
        modified.
    equation : str
        A key of :data:`seaprofile.seawater.soundspeed.EQUATIONS` (default
        ``"chen_millero1977"``, the UNESCO 1983 algorithm).

    Returns
    -------
    xarray.DataArray
        ``measured - computed`` along ``sample``, m/s; NaN where any input is NaN or
        flagged 3, 4 or 9. Attributes name the equation and the mean and standard
        deviation of the finite differences.

    Notes
    -----
    The computed value uses :func:`seaprofile.seawater.soundspeed.sound_speed` with the
    cast's pressure when present, else its depth (and latitude when the equation needs
    the other vertical coordinate). A steady offset points at a probe calibration or a
    salinity assumption; differences that grow with the gradients point at a lag between
    the sensors.
    """
    from ..seawater.soundspeed import sound_speed

    needed = ("measured_sound_speed", "temperature", "salinity")
    missing = [v for v in needed if v not in cast]
    if missing or not ({"pressure", "depth"} & set(cast.data_vars)):
        raise SeaprofileError(
            "cast needs measured_sound_speed, temperature, salinity and pressure or depth; "
            f"missing {missing or ['pressure/depth']}"
        )
    vertical = "pressure" if "pressure" in cast else "depth"
    lat = float(cast["latitude"]) if "latitude" in cast.coords else np.nan
    kwargs = {"equation": equation, vertical: cast[vertical].values}
    if np.isfinite(lat):
        kwargs["latitude"] = lat
    computed = np.asarray(
        sound_speed(cast["temperature"].values, cast["salinity"].values, **kwargs), dtype=np.float64
    )
    diff = cast["measured_sound_speed"].values - computed
    bad = np.zeros(diff.shape, bool)
    for v in (*needed, vertical):
        q = f"{v}_qc"
        if q in cast:
            bad |= np.isin(cast[q].values, _cf.UNUSABLE_FLAGS)
    diff = np.where(bad, np.nan, diff)
    finite = diff[np.isfinite(diff)]
    attrs = _cf.attrs_for(
        "probe_sound_speed_difference",
        equation=equation,
        mean_difference=float(finite.mean()) if finite.size else np.nan,
        std_difference=float(finite.std()) if finite.size else np.nan,
    )
    attrs["long_name"] = attrs["long_name"].format(equation=equation)
    return xr.DataArray(
        diff,
        dims=("sample",),
        coords={vertical: ("sample", cast[vertical].values)},
        name="sound_speed_difference",
        attrs=attrs,
    )
