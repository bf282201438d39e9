"""Extending a Profile below its data: to the sea floor, from a reference or constant T/S.

:func:`extend_to` (importable from :mod:`seaprofile.profile`) adds levels flagged 8
(estimated) below the deepest usable sound speed; :func:`cast_bottom_depth` reads the
sea-floor depth recorded with a cast. The assumptions made are written to the Profile's
attributes and summed up by :func:`seaprofile.profile.describe_assumptions`.
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from . import _cf
from ._validate import SeaprofileError
from .casts._common import cast_latitude, usable_sound_speed
from .casts._qc_tests import GLOBAL_RANGE, MAX_OCEAN_DEPTH, SOUND_SPEED_RANGE
from .casts.binning import _equation_sound_speed as equation_sound_speed
from .casts.binning import check_bin_count, check_step
from .io.errors import ArgumentError
from .seawater.depth import pressure_from_depth

__all__ = [
    "extend_to",
    "cast_bottom_depth",
    "check_bottom_depth",
    "JOIN_BLEND",
    "LongExtensionWarning",
]

#: m: below the join with a reference, the cast's offset from it fades to zero over this
#: depth (our choice: about the thickness of a seasonal thermocline)
JOIN_BLEND = 100.0


def _is_bottom(value):
    return isinstance(value, str) and value.strip().lower() == "bottom"


def check_bottom_depth(value, name="bottom_depth"):
    """``value`` as a sea-floor depth in m, or :class:`~seaprofile.io.ArgumentError`
    naming ``name``.

    Parameters
    ----------
    value : float or str
        Depth, m: finite, > 0 and at most
        :data:`seaprofile.casts.qc.MAX_OCEAN_DEPTH` (12000 m, deeper than any ocean).
    name : str
        The argument the error names (its ``argument`` attribute).
    """
    try:
        bottom = float(value)
    except (TypeError, ValueError):
        raise ArgumentError(name, f"must be a sea-floor depth in m, got {value!r}") from None
    if not np.isfinite(bottom) or bottom <= 0:
        raise ArgumentError(name, f"must be a sea-floor depth > 0 m, got {value!r}")
    if bottom > MAX_OCEAN_DEPTH:
        raise ArgumentError(
            name, f"{bottom:g} m is deeper than any ocean (at most {MAX_OCEAN_DEPTH:g} m)"
        )
    return bottom


def cast_bottom_depth(ds):
    """The sea-floor depth recorded with a Cast or Profile (its ``bottom_depth``
    attribute), m.

    Raises
    ------
    seaprofile.io.ArgumentError
        Naming ``extend_to`` when there is none (or it is not a depth within 0..12000 m):
        ``extend_to="bottom"`` then has nothing to extend to, and says so rather than
        doing nothing.
    """
    value = ds.attrs.get("bottom_depth")
    name = ds.attrs.get("cast_name", "the cast")
    if value is None or (isinstance(value, str) and not value.strip()):
        raise ArgumentError(
            "extend_to",
            f"'bottom': {name} has no bottom_depth metadata; give the sea-floor depth in m instead",
        )
    try:
        return check_bottom_depth(value, "extend_to")
    except ArgumentError as exc:
        raise ArgumentError(
            "extend_to", f"'bottom': {name}'s bottom_depth metadata {exc.reason}"
        ) from None


#: a constant-T/S extension longer than both of these (m, fraction of the cast) warns
LONG_EXTENSION_M = 200.0
LONG_EXTENSION_FRACTION = 0.2


class LongExtensionWarning(UserWarning):
    """A profile was extended far below its data by holding temperature and salinity."""


def _last_good(profile):
    idx = np.flatnonzero(usable_sound_speed(profile))
    if idx.size == 0:
        raise SeaprofileError("profile has no usable sound speed to extend from")
    return int(idx[-1])


def extend_to(profile, bottom_depth, reference=None, step=None, *, join_blend=JOIN_BLEND):
    """Extend a Profile down to the sea floor; the added values are flagged 8 (estimated).

    Below the deepest usable sound speed the Profile continues either

    - with ``reference`` (a deeper Profile): its water *as measured*. Temperature is the
      reference's, plus the cast's offset from it at the join, fading linearly to zero
      over ``join_blend`` m below the join (so the profile is continuous there and is the
      reference's own water below); salinity likewise, an assumed salinity included (a
      jump to the reference's salinity would be a step in sound speed at the join).
      Sound speed is recomputed with the Profile's equation. When either lacks
      temperature/salinity (or the sound speed was measured), the reference sound speed
      is used the same way. The fade never makes a sound-speed minimum of its own (a
      false channel axis at the join): a cast slower than the reference at the join keeps
      its offset down to the reference's sound-speed minimum below the join and fades
      below it; a faster one fades from the join and ends at that minimum at the latest.
      The offsets at the join and where they fade are recorded (``extension_join``); or
    - without a reference: temperature and salinity held at their last usable values, so
      only pressure changes the sound speed (recomputed with the same equation; for a
      measured profile, the pressure change by Chen & Millero 1977 is added to the last
      measured value).

    Added values outside the range of any ocean (temperature, salinity and pressure
    outside :data:`seaprofile.casts.qc.GLOBAL_RANGE`, sound speed outside
    :data:`seaprofile.casts.qc.SOUND_SPEED_RANGE`) are flagged 4 (bad), not 8.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile with ``sound_speed`` (not modified).
    bottom_depth : float or "bottom"
        Sea-floor depth, m: > 0 and at most 12000 (deeper than any ocean); ``"bottom"``:
        the Profile's ``bottom_depth`` attribute.
    reference : xarray.Dataset, optional
        A Profile reaching at least ``bottom_depth``.
    step : float, optional
        m, spacing of the added levels; default the Profile's bin size. The last level is
        at ``bottom_depth`` exactly.
    join_blend : float
        m (>= 0), depth over which the offset from ``reference`` at the join fades to
        zero; default :data:`JOIN_BLEND` (100 m). 0: the reference as measured right
        below the join (a step there).

    Returns
    -------
    xarray.Dataset
        A new Profile. Existing bins below the last usable one (missing or bad) are
        replaced, new bins appended; their values are flagged 8 and ``samples_per_bin`` is
        0. ``cast_max_depth`` keeps the deepest measured bin; ``bottom_depth``,
        ``join_depth`` (m, the deepest usable level, where the extension starts: above
        ``cast_max_depth`` when the deepest bins are bad), ``extension_method``,
        ``extension_reference``, ``extension_join`` and ``assumptions``
        (:func:`describe_assumptions`) are added. When ``bottom_depth`` is not below the
        deepest usable level nothing is added, but ``bottom_depth``, ``assumptions`` and
        ``data_below_bottom`` (a note when the data go deeper than the sea floor given,
        else ``"none"``) are recorded.
    """
    if "sound_speed" not in profile.data_vars:
        raise SeaprofileError("profile has no sound_speed: run add_sound_speed first")
    bottom = (
        cast_bottom_depth(profile)
        if _is_bottom(bottom_depth)
        else check_bottom_depth(bottom_depth, "bottom_depth")
    )
    join_blend = float(join_blend)
    if not (np.isfinite(join_blend) and join_blend >= 0):
        raise SeaprofileError(f"join_blend must be a depth >= 0 m, got {join_blend}")
    z = profile["depth"].values.astype(np.float64)
    last = _last_good(profile)
    z_last = z[last]
    attrs = dict(profile.attrs)
    counts = profile["samples_per_bin"].values if "samples_per_bin" in profile else None
    if "cast_max_depth" not in attrs:
        measured = np.flatnonzero(counts > 0) if counts is not None else [last]
        attrs["cast_max_depth"] = float(z[measured[-1]] if len(measured) else z_last)
    from .profile import describe_assumptions

    if bottom <= z_last:
        out = profile.copy()
        note = "none"
        if bottom < z_last:
            note = (
                f"the data reach {z_last:g} m, below the sea-floor depth given "
                f"({bottom:g} m): check the depth or the sea floor"
            )
        out.attrs = _cf.record_step(
            attrs, "extend_to", bottom_depth=bottom, added_levels=0, data_below_bottom=note
        )
        out.attrs.update(bottom_depth=bottom, data_below_bottom=note)
        out.attrs["assumptions"] = describe_assumptions(out)
        return out
    if step is None:
        step = profile.attrs.get("bin_size", np.median(np.diff(z)) if z.size > 1 else 1.0)
    step = check_step(step, "step")
    count = np.ceil((bottom - z_last) / step - 1e-9)
    check_bin_count(count, step, bottom - z_last, "step")
    n_new = int(count)
    z_new = z_last + step * np.arange(1, n_new + 1)
    z_new[-1] = bottom
    lat = cast_latitude(profile, attrs.get("depth_latitude", None))
    method = attrs.get("depth_method", "unesco1983")
    p_new = np.asarray(pressure_from_depth(z_new, lat, method), np.float64)
    values = {"pressure": p_new}
    equation = attrs.get("equation", "chen_millero1977")
    has_ts = all(v in profile.data_vars for v in ("temperature", "salinity"))
    t_last = s_last = None
    if has_ts:
        t_last = float(profile["temperature"].values[last])
        s_last = float(profile["salinity"].values[last])
        has_ts = np.isfinite(t_last) and np.isfinite(s_last)
    c_last = float(profile["sound_speed"].values[last])
    how, join = "constant temperature and salinity", "none"
    if reference is not None:
        got, how, join = _from_reference(
            profile, reference, z_new, z_last, last, has_ts, join_blend
        )
        values.update(got)
    elif has_ts:
        span = bottom - z_last
        if span > max(LONG_EXTENSION_M, LONG_EXTENSION_FRACTION * z_last):
            warnings.warn(
                f"extending {attrs.get('cast_name', 'the profile')} by {span:.0f} m below its "
                f"last usable bin ({z_last:.0f} m) with constant temperature and salinity: "
                "deep sound speeds may be several m/s off; give a deeper reference profile",
                LongExtensionWarning,
                stacklevel=2,
            )
        values["temperature"] = np.full(n_new, t_last)
        values["salinity"] = np.full(n_new, s_last)
        if equation == "measured":
            p_last = float(profile["pressure"].values[last])
            tt, ss = np.full(n_new + 1, t_last), np.full(n_new + 1, s_last)
            c = equation_sound_speed(
                profile,
                "chen_millero1977",
                tt,
                ss,
                np.append(p_new, p_last),
                np.append(z_new, z_last),
            )
            values["sound_speed"] = c_last + (c[:-1] - c[-1])
            how = (
                "the last measured sound speed plus the pressure change of "
                "chen_millero1977 at constant temperature and salinity"
            )
    else:
        raise ArgumentError(
            "reference",
            "the profile has no temperature and salinity to extend it below "
            "its last usable level; give a deeper reference profile",
        )
    if "sound_speed" not in values:
        values["sound_speed"] = equation_sound_speed(
            profile, equation, values["temperature"], values["salinity"], p_new, z_new
        )
    out = _assemble(profile, attrs, last, z_new, values, bottom, how, reference)
    out.attrs.update(
        extension_method=how,
        extension_join=join,
        join_depth=float(z_last),
        extension_reference="none"
        if reference is None
        else str(reference.attrs.get("cast_name", "given")),
    )
    out.attrs["assumptions"] = describe_assumptions(out)
    return out


def _taper(z_new, z_last, blend):
    """1 at the join, falling linearly to 0 at ``blend`` m below it (0 everywhere if 0)."""
    if blend <= 0:
        return np.zeros(z_new.size)
    return np.clip(1.0 - (z_new - z_last) / blend, 0.0, 1.0)


def _join_weight(profile, reference, z_new, z_last, last, blend):
    """Weight (1 at the join, 0 deep) of the cast's offset from ``reference``, chosen so
    that the fade makes no sound-speed minimum of its own, and a note saying where.

    The fading offset adds a gradient of the sign opposite to the cast's sound-speed offset
    at the join. Above the reference's sound-speed minimum below the join (its channel
    axis, where the reference's speed falls with depth) only a negative added gradient is
    harmless, below it only a positive one; so a cast slower than the reference at the
    join keeps its offset down to the reference's minimum and fades below it, and a
    faster one fades from the join and at the latest at that minimum. Without a minimum
    below the join (the reference's speed rising there) the fade starts at the join.
    """
    fade = _taper(z_new, z_last, blend)
    if blend <= 0 or "sound_speed" not in reference.data_vars:
        return fade, ""
    zr, cr = _usable_reference(reference, "sound_speed")
    below = (zr >= z_last) & (zr <= z_new[-1])
    if not below.any():
        return fade, ""
    k = int(np.argmin(np.where(below, cr, np.inf)))
    z_axis = float(zr[k])
    c_ref_join = float(np.interp(z_last, zr, cr))
    offset = float(profile["sound_speed"].values[last]) - c_ref_join
    if z_axis <= z_last + 1e-9 or offset == 0:
        return fade, ""
    if offset < 0:
        note = (
            f"held down to the reference's sound-speed minimum at {z_axis:g} m, then "
            f"fading to zero over {blend:g} m"
        )
        return _taper(z_new, z_axis, blend), note
    length = min(blend, z_axis - z_last)
    return _taper(z_new, z_last, length), (
        f"fading over {length:g} m, to end at the reference's sound-speed minimum at {z_axis:g} m"
        if length < blend
        else ""
    )


def _from_reference(profile, reference, z_new, z_last, last, has_ts, blend):
    """Values below the join from ``reference``, the method text and the join text."""
    if not isinstance(reference, xr.Dataset) or "depth" not in reference.dims:
        raise SeaprofileError("reference must be a Profile (xarray.Dataset on 'depth')")
    zr = reference["depth"].values.astype(np.float64)
    if np.nanmax(zr) < z_new[-1] - 1e-9:
        raise SeaprofileError(
            f"reference reaches {np.nanmax(zr):g} m, shallower than the bottom depth "
            f"{z_new[-1]:g} m"
        )
    name = str(reference.attrs.get("cast_name", "given"))
    fade, where = _join_weight(profile, reference, z_new, z_last, last, blend)
    fading = where or (
        f"fading to zero over {blend:g} m below the join"
        if blend > 0
        else "not carried below the join"
    )
    assumed = str(
        profile.attrs.get("salinity_assumed", "")
    ).lower() == "yes" or "everywhere" in str(profile.attrs.get("salinity_replaced", ""))
    out, notes = {}, []
    ref_ts = all(v in reference.data_vars for v in ("temperature", "salinity"))
    if has_ts and ref_ts and profile.attrs.get("equation") != "measured":
        for v, unit in (("temperature", " degC"), ("salinity", "")):
            zv, r = _usable_reference(reference, v)
            # the offset fades for an assumed salinity too: a step to the reference's
            # value at the join would be a step in sound speed there (a false minimum)
            offset = float(profile[v].values[last]) - np.interp(z_last, zv, r)
            out[v] = np.interp(z_new, zv, r) + offset * fade
            notes.append(
                f"{v} offset {offset:+.3g}{unit} {fading}"
                + (" (the cast's was assumed)" if v == "salinity" and assumed else "")
            )
        how = f"reference {name}: its measured temperature and salinity"
    else:
        if "sound_speed" not in reference.data_vars:
            raise SeaprofileError("reference has neither temperature/salinity nor sound_speed")
        zv, r = _usable_reference(reference, "sound_speed")
        offset = float(profile["sound_speed"].values[last]) - np.interp(z_last, zv, r)
        out["sound_speed"] = np.interp(z_new, zv, r) + offset * fade
        notes.append(f"sound speed offset {offset:+.3g} m/s {fading}")
        how = f"reference {name}: its measured sound speed"
    join = f"at {z_last:g} m: " + "; ".join(notes)
    return out, f"{how} ({join})", join


def _usable_reference(reference, var):
    """Depths and values of ``var`` in ``reference`` that are finite and not flagged bad."""
    zr = reference["depth"].values.astype(np.float64)
    r = reference[var].values.astype(np.float64)
    ok = np.isfinite(r)
    if f"{var}_qc" in reference:
        ok &= ~np.isin(reference[f"{var}_qc"].values, _cf.UNUSABLE_FLAGS)
    if not ok.any():
        raise SeaprofileError(f"reference has no usable {var}")
    return zr[ok], r[ok]


#: the range each added value must lie in to be flagged 8 rather than 4
_EXTENSION_RANGE = {**GLOBAL_RANGE, "sound_speed": SOUND_SPEED_RANGE}


def _assemble(profile, attrs, last, z_new, values, bottom, how, reference):
    keep = profile.isel(depth=slice(0, last + 1))
    replaced = profile.sizes["depth"] - (last + 1)
    n = z_new.size
    data = {}
    out_of_range = {}
    for var in keep.data_vars:
        if var.endswith("_qc"):
            continue
        if var == "samples_per_bin":
            new = np.zeros(n, np.int32)
        elif var in values:
            new = values[var]
        else:
            new = np.full(n, np.nan)
        data[var] = (
            ("depth",),
            np.concatenate([keep[var].values, new.astype(keep[var].dtype)]),
            keep[var].attrs,
        )
        if f"{var}_qc" in keep.data_vars:
            flag = np.full(n, _cf.ESTIMATED if var in values else _cf.MISSING, np.int8)
            if var in values:
                low, high = _EXTENSION_RANGE.get(var, (-np.inf, np.inf))
                with np.errstate(invalid="ignore"):
                    bad = ~((new >= low) & (new <= high))
                flag[bad] = _cf.BAD
                out_of_range[var] = int(bad.sum())
            data[f"{var}_qc"] = (
                ("depth",),
                np.concatenate([keep[f"{var}_qc"].values, flag]),
                keep[f"{var}_qc"].attrs,
            )
    coords = {
        "depth": ("depth", np.concatenate([keep["depth"].values, z_new]), keep["depth"].attrs)
    }
    for c in keep.coords:
        if c != "depth":
            coords[c] = keep.coords[c].variable
    attrs = _cf.record_step(
        attrs,
        "extend_to",
        bottom_depth=bottom,
        method=how,
        added_levels=n,
        replaced_bins=replaced,
        reference=None if reference is None else reference.attrs.get("cast_name", "given"),
        out_of_range=out_of_range,
    )
    attrs["bottom_depth"] = bottom
    return xr.Dataset(data, coords=coords, attrs=attrs)
