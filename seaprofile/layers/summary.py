"""All diagnostics of one Profile: :func:`describe` (a JSON-friendly dict) and
:func:`describe_dataset` (an ``xarray.Dataset`` with CF attributes).

Bins flagged bad (Argo flags 3, 4 and 9) and NaN values are ignored.
"""

from __future__ import annotations

import math

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array, check_position
from ..seawater._apply import _broadcast_shape
from ._common import _scalar
from .channels import (
    _CHANNEL_KEYS,
    _channels_rows,
    _critical_rows,
    critical_depth,
    depth_excess,
    speed_at,
)
from .harmonic import _harmonic_valid
from .mixed import _crossing_numpy, _cutoff_numpy, _gradients_valid, _sonic_numpy

__all__ = ["describe", "describe_dataset", "BAD_FLAGS"]

BAD_FLAGS = _cf.UNUSABLE_FLAGS


# name -> (units, long_name)
_FIELDS = {
    "surface_depth": ("m", "depth of the shallowest valid bin"),
    "surface_sound_speed": ("m s-1", "sound speed in the shallowest valid bin"),
    "min_sound_speed": ("m s-1", "minimum sound speed"),
    "min_sound_speed_depth": ("m", "depth of minimum sound speed"),
    "max_sound_speed": ("m s-1", "maximum sound speed"),
    "max_sound_speed_depth": ("m", "depth of maximum sound speed"),
    "mixed_layer_depth_temperature": ("m", "mixed layer depth (0.2 degC from 10 m)"),
    "mixed_layer_depth_density": ("m", "mixed layer depth (0.03 kg m-3 from 10 m)"),
    "sonic_layer_depth": ("m", "sonic layer depth (near-surface sound speed maximum)"),
    "sonic_layer_sound_speed": ("m s-1", "sound speed at the sonic layer depth"),
    "in_layer_gradient": ("s-1", "sound speed gradient within the sonic layer"),
    "below_layer_gradient": ("s-1", "sound speed gradient below the sonic layer"),
    "duct_cutoff_frequency": ("Hz", "lowest frequency trapped in the surface duct"),
    "channel_axis_depth": ("m", "deep sound channel axis depth"),
    "channel_axis_sound_speed": ("m s-1", "sound speed on the channel axis"),
    "channel_axis_contrast": ("m s-1", "rise of sound speed needed to escape the channel"),
    "secondary_channel_depth": ("m", "secondary sound channel depth"),
    "secondary_channel_sound_speed": ("m s-1", "sound speed on the secondary channel"),
    "secondary_channel_contrast": ("m s-1", "sound speed rise bounding the secondary channel"),
    "secondary_channel_thickness": ("m", "thickness of the secondary channel's trapping region"),
    "critical_depth_surface": ("m", "depth below the axis where c equals the surface c"),
    "critical_depth_layer": ("m", "depth below the axis where c equals the layer maximum"),
    "source_depth": ("m", "source depth"),
    "source_sound_speed": ("m s-1", "sound speed at the source depth"),
    "critical_depth_source": ("m", "conjugate depth of the source across the channel axis"),
    "bottom_depth": ("m", "sea floor depth below the sea surface"),
    "depth_excess_surface": ("m", "bottom depth minus critical depth (surface reference)"),
    "depth_excess_layer": ("m", "bottom depth minus critical depth (layer reference)"),
    "transducer_depth": ("m", "transducer depth"),
    "harmonic_mean_to_depth": ("m", "lower depth of the harmonic mean"),
    "harmonic_mean_sound_speed": ("m s-1", "harmonic mean sound speed, transducer to lower depth"),
    "deepest_valid_depth": ("m", "depth of the deepest valid bin"),
}
_UNITS = {k: v[0] for k, v in _FIELDS.items()}
_LONG_NAMES = {k: v[1] for k, v in _FIELDS.items()}


def _bad_masks(variables, include_estimated):
    """Flag variable -> where its bins are unusable, for the flags ``describe`` reads."""
    bad = _cf.UNUSABLE_FLAGS if include_estimated else _cf.NOT_MEASURED_FLAGS
    out = {}
    for f in ("sound_speed", "temperature", "salinity"):
        q = f"{f}_qc"
        if q in variables:
            out[f] = _cf.flags_in(variables[q].values, bad)
    return out


def _masked(variables, name, flags, bad):
    """Values of ``name`` as a float64 copy, NaN where any of ``flags`` is bad."""
    if name not in variables:
        return None
    v = np.array(variables[name].values, dtype=np.float64, copy=True)
    for f in flags:
        if f in bad:
            v[bad[f]] = np.nan
    return v


def _estimated_top(profile):
    """Depth below which the Profile was extended (``cast_max_depth``), or None."""
    return _estimated_top_of(profile.attrs, profile.variables, _depth(profile))


def _depth(profile):
    """The Profile's depth as float64 (its coordinate, or the dimension's 0, 1, ...)."""
    variables = profile.variables
    d = variables["depth"] if "depth" in variables else profile["depth"]
    return np.asarray(d.values, dtype=np.float64)


def _estimated_top_of(attrs, variables, z):
    top = attrs.get("cast_max_depth")
    if top is None and "sound_speed_qc" in variables:
        q = np.asarray(variables["sound_speed_qc"].values)
        measured = z[q != _cf.ESTIMATED]
        top = measured.max() if measured.size else None
    if top is None or not np.any(z > float(top)):
        return None
    return float(top)


_DENSITY_HEAD = 128


def _density_mixed_layer(temp, sal, pres, position, z):
    """Density-criterion mixed layer depth and "reached the end", sigma0 computed only as
    deep as the crossing needs.

    sigma0 is point-wise (gsw), so its first ``_DENSITY_HEAD`` bins are the same numbers
    as those of the whole column; the scan stops at the first crossing, so a crossing
    found there (finite, not the end) is the whole column's. Otherwise the rest of the
    column is computed and the whole scanned.
    """
    from ..seawater.state import _sigma0

    def sigma(part):
        return np.asarray(_sigma0(temp[part], sal[part], pres[part], *position), dtype=np.float64)

    head = _DENSITY_HEAD
    if not (z.size > head and temp.shape == sal.shape == pres.shape == z.shape):
        return _crossing_numpy("potential_density", 0.03, 10.0, 1, sigma(...), z)
    top = sigma(slice(None, head))
    mld, end = _crossing_numpy("potential_density", 0.03, 10.0, 1, top, z[:head])
    if not end and np.isfinite(mld):
        return mld, end
    whole = np.concatenate((top, sigma(slice(head, None))))
    return _crossing_numpy("potential_density", 0.03, 10.0, 1, whole, z)


def _num(x):
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None  # a Python float: no numpy call needed


def describe(
    profile,
    *,
    bottom_depth=None,
    source_depth=None,
    transducer_depth=0.0,
    include_estimated=True,
    min_contrast=1.0,
):
    """All diagnostics of one Profile, as a JSON-friendly dict.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (dimension ``depth`` in m; ``sound_speed`` m/s; ``temperature`` degC,
        ``salinity``, ``pressure`` dbar and ``<var>_qc`` flags when present).
    bottom_depth : float, optional
        Sea floor depth, m, for the depth excess and the harmonic mean (default: the
        deepest valid bin; said in ``notes``).
    source_depth : float, optional
        Source depth, m, for the source's conjugate depth.
    transducer_depth : float
        Upper depth of the harmonic mean, m (default 0).
    include_estimated : bool
        Use bins flagged 8 (estimated, e.g. the extension to the bottom); default True.
        Bins flagged 3, 4 or 9 and NaN values are always ignored.
    min_contrast : float
        Smallest sound-speed rise, m/s, that makes a channel (see :func:`sound_channels`).

    Returns
    -------
    dict
        Numbers (float or None when not defined) under the keys of ``units``; plus
        ``units``, ``long_names``, ``cast_name``, ``equation``, ``surface_duct``
        (bool), ``notes`` (list of str) and ``caution``.

    Notes
    -----
    Critical depths: ``critical_depth_surface`` uses the sound speed in the shallowest
    valid bin as reference, ``critical_depth_layer`` the sonic-layer maximum (the larger
    speed, so the deeper or equal depth). ``critical_depth_source`` uses the speed at
    ``source_depth``, searched below the axis when the source is above it and above the
    axis when the source is below it.
    """
    if not isinstance(profile, xr.Dataset) or "depth" not in profile.dims:
        raise SeaprofileError("profile must be a Profile Dataset with a 'depth' dimension")
    if "sound_speed" not in profile:
        raise SeaprofileError("profile has no 'sound_speed' variable")
    # numpy arrays read once (each ``profile[name]`` builds a DataArray); the numpy layer
    # of each diagnostic is called directly: the inputs are float64 arrays along depth
    variables = profile.variables
    z = _depth(profile)
    bad = _bad_masks(variables, include_estimated)
    c = _masked(variables, "sound_speed", ["sound_speed", "temperature", "salinity"], bad)
    temp = _masked(variables, "temperature", ["temperature"], bad)
    notes = []
    res = {k: None for k in _UNITS}
    res.update(
        cast_name=str(profile.attrs.get("cast_name", "")),
        equation=profile.attrs.get("equation"),
        surface_duct=False,
    )
    ok = np.isfinite(c)
    if ok.sum() < 2:
        raise SeaprofileError("profile has fewer than two valid sound-speed bins")
    zv, cv = z[ok], c[ok]
    res.update(
        surface_depth=zv[0],
        surface_sound_speed=cv[0],
        deepest_valid_depth=zv[-1],
        min_sound_speed=cv.min(),
        min_sound_speed_depth=zv[np.argmin(cv)],
        max_sound_speed=cv.max(),
        max_sound_speed_depth=zv[np.argmax(cv)],
    )

    # mixed layer
    if temp is not None:
        mld, end = _crossing_numpy("temperature", 0.2, 10.0, 0, temp, z)
        res["mixed_layer_depth_temperature"] = mld
        if end:
            notes.append(
                "temperature never departs 0.2 degC from its 10 m value: the mixed "
                "layer reaches the deepest valid bin (a lower bound)"
            )
    sal = _masked(variables, "salinity", ["salinity"], bad)
    if temp is not None and sal is not None and "pressure" in variables:
        coords = profile.coords
        lat = float(variables["latitude"].values) if "latitude" in coords else np.nan
        lon = float(variables["longitude"].values) if "longitude" in coords else np.nan
        # TEOS-10 needs both coordinates for absolute salinity; with one unknown (a
        # latitude alone is common), reference salinity is used, as for no position
        known = bool(np.isfinite(lat) and np.isfinite(lon))
        pres = np.asarray(variables["pressure"].values, dtype=np.float64)
        position = (
            (check_position("latitude", lat), check_position("longitude", lon)) if known else ()
        )
        _broadcast_shape(
            [("temperature", temp.shape), ("salinity", sal.shape), ("pressure", pres.shape)]
        )
        mld, end = _density_mixed_layer(temp, sal, pres, position, z)
        res["mixed_layer_depth_density"] = mld
        if end:
            notes.append(
                "density never rises 0.03 kg/m3 above its 10 m value: the mixed "
                "layer reaches the deepest valid bin (a lower bound)"
            )

    # sonic layer, gradients, surface duct
    sld, sld_c, sld_end = _sonic_numpy(0.2, c, z)
    res.update(sonic_layer_depth=sld, sonic_layer_sound_speed=sld_c)
    if sld > zv[0]:
        res["surface_duct"] = True
        g_in, g_below = _gradients_valid(50.0, zv, cv, sld)
        res.update(
            in_layer_gradient=g_in,
            below_layer_gradient=g_below,
            duct_cutoff_frequency=_cutoff_numpy(
                as_float_array("layer_depth", sld), as_float_array("sound_speed", sld_c)
            ),
        )
        if sld_end:
            notes.append(
                "sound speed increases to the deepest valid bin: the whole column is a surface duct"
            )
    else:
        _, g_below = _gradients_valid(50.0, zv, cv, sld)
        res["below_layer_gradient"] = g_below
        notes.append("sound speed decreases from the surface: no surface duct")

    # channels
    ch = dict(zip(_CHANNEL_KEYS, _channels_rows(float(min_contrast), 10.0, c, z, sld)))
    res.update(
        channel_axis_depth=ch["axis_depth"],
        channel_axis_sound_speed=ch["axis_speed"],
        channel_axis_contrast=ch["axis_contrast"],
        secondary_channel_depth=ch["secondary_depth"],
        secondary_channel_sound_speed=ch["secondary_speed"],
        secondary_channel_contrast=ch["secondary_contrast"],
        secondary_channel_thickness=ch["secondary_thickness"],
    )
    if ch["still_decreasing"]:
        notes.append(
            "sound speed still decreases at the deepest valid bin: no channel axis "
            "within the profile"
        )
    axis = ch["axis_depth"]
    (res["critical_depth_surface"],) = _critical_rows(c, z, cv[0], axis)
    (res["critical_depth_layer"],) = _critical_rows(c, z, sld_c, axis)
    if (
        np.isfinite(axis)
        and res["critical_depth_layer"] is not None
        and not np.isfinite(res["critical_depth_layer"])
    ):
        notes.append(
            "sound speed below the axis never regains the near-surface speed "
            "within the profile: no critical depth (no depth excess)"
        )

    if source_depth is not None:
        cs = speed_at(c, z, source_depth)
        res.update(source_depth=source_depth, source_sound_speed=cs)
        if np.isfinite(axis) and np.isfinite(cs):
            if source_depth <= axis:
                res["critical_depth_source"] = critical_depth(c, z, cs, axis)
            else:  # mirror: search upward from the axis
                keep = (z <= axis) & np.isfinite(c)
                zu, cu = z[keep][::-1], c[keep][::-1]
                res["critical_depth_source"] = -critical_depth(cu, -zu, cs, -axis)

    # bottom, depth excess, harmonic mean
    lower = zv[-1] if bottom_depth is None else float(bottom_depth)
    if bottom_depth is None:
        notes.append(
            "no bottom depth given: harmonic mean taken to the deepest valid bin, no depth excess"
        )
    else:
        res["bottom_depth"] = float(bottom_depth)
        res["depth_excess_surface"] = depth_excess(bottom_depth, res["critical_depth_surface"])
        res["depth_excess_layer"] = depth_excess(bottom_depth, res["critical_depth_layer"])
        if lower > zv[-1]:
            notes.append(
                "bottom depth lies below the deepest valid bin: extend the profile "
                "to the bottom first; no harmonic mean"
            )
    res["transducer_depth"] = float(transducer_depth)
    res["harmonic_mean_to_depth"] = lower
    res["harmonic_mean_sound_speed"] = _harmonic_valid(
        zv,
        cv,
        _scalar(as_float_array("top", transducer_depth)),
        _scalar(as_float_array("bottom", lower)),
    )
    est_top = _estimated_top_of(profile.attrs, variables, z)
    if include_estimated and est_top is not None:
        for k in ("critical_depth_surface", "critical_depth_layer", "channel_axis_depth"):
            v = res[k]
            if v is not None and np.isfinite(v) and v > est_top:
                notes.append(f"{k} lies in the estimated (extended) part below {est_top:g} m")

    for k in _UNITS:
        if k in res and not isinstance(res[k], str):
            res[k] = _num(res[k])
    res["units"] = dict(_UNITS)
    res["long_names"] = dict(_LONG_NAMES)
    res["notes"] = notes
    res["caution"] = _cf.CAUTION
    return res


def describe_dataset(profile, **kwargs):
    """The diagnostics of :func:`describe` as an ``xarray.Dataset`` of scalars with CF attrs.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile.
    **kwargs
        Passed to :func:`describe` (``bottom_depth`` m, ``source_depth`` m,
        ``transducer_depth`` m, ...).

    Returns
    -------
    xarray.Dataset
        One scalar variable per number (NaN when not defined), with ``units`` and
        ``long_name``; the mixed layer depths and bottom depth carry their CF standard
        names. The Profile's scalar coordinates and provenance are kept.
    """
    d = describe(profile, **kwargs)
    data = {}
    for k, unit in _UNITS.items():
        attrs = {"long_name": _LONG_NAMES[k], "units": unit}
        if k == "mixed_layer_depth_temperature":
            attrs["standard_name"] = "ocean_mixed_layer_thickness_defined_by_temperature"
        elif k == "mixed_layer_depth_density":
            attrs["standard_name"] = "ocean_mixed_layer_thickness_defined_by_sigma_theta"
        elif k == "bottom_depth":
            attrs["standard_name"] = "sea_floor_depth_below_sea_surface"
        elif k.endswith("sound_speed") and not k.startswith("harmonic"):
            attrs["standard_name"] = "speed_of_sound_in_sea_water"
        v = d[k]
        data[k] = ((), np.nan if v is None else v, attrs)
    coords = {
        k: profile.coords[k]
        for k in ("latitude", "longitude", "time", "profile_id")
        if k in profile.coords
    }
    attrs = _cf.base_attrs(
        processing_steps=profile.attrs.get("processing_steps", "[]"),
        history=profile.attrs.get("history", ""),
        equation=str(d["equation"]),
        surface_duct=int(d["surface_duct"]),
        notes="\n".join(d["notes"]),
    )
    attrs = _cf.record_step(attrs, "describe", **{k: v for k, v in kwargs.items()})
    return xr.Dataset(data, coords=coords, attrs=attrs)
