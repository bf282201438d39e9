"""From a Cast to a trusted sound-speed Profile: the whole chain, extension, comparison.

:func:`build_profile` runs the processing steps of :mod:`seaprofile.casts.process` and the
tests of :mod:`seaprofile.casts.qc` in a fixed order, each recorded in the Profile's
``processing_steps``; :func:`extend_to` carries a Profile down to the sea floor (flagged 8,
"estimated"); :func:`compare_profiles` differences two Profiles on their common depths.
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from . import _cf
from ._validate import SeaprofileError
from .casts import process as _p
from .casts import qc as _qc
from .casts._common import cast_latitude
from .casts.binning import _equation_sound_speed as equation_sound_speed
from .seawater.depth import pressure_from_depth

__all__ = ["build_profile", "extend_to", "compare_profiles", "CAST_TESTS", "PROFILE_TESTS"]

#: quality-control tests run on the Cast's samples, in order
CAST_TESTS = ("global_range", "pressure_increasing", "spike", "stuck_value",
              "density_inversion", "sound_speed_range")
#: quality-control tests run on the binned Profile
PROFILE_TESTS = ("sound_speed_range",)
_MAX_FILL = 5.0  # m, largest gap of empty bins interpolated (our choice)


def build_profile(cast, *, equation="chen_millero1977", bin_size=1.0, latitude=None,
                  depth_method="unesco1983", extend_to=None, reference=None,
                  direction="down", qc=True, max_gap=_MAX_FILL):
    """Process a Cast into a sound-speed Profile.

    The steps, in order (each recorded in ``processing_steps``):

    1. expendable probes only: depth from the fall rate and the assumed salinity
       (:func:`seaprofile.casts.xbt.complete_xbt_cast`);
    2. :func:`~seaprofile.casts.process.remove_soak` (not for expendable probes);
    3. :func:`~seaprofile.casts.process.select_direction`;
    4. :func:`~seaprofile.casts.process.remove_reversals`;
    5. :func:`~seaprofile.casts.process.add_salinity` when only conductivity was measured;
    6. :func:`~seaprofile.casts.process.add_depth` (depth from pressure, or pressure from
       depth) -- before QC so the tests and the density check have both;
    7. :func:`~seaprofile.casts.qc.run_qc` with :data:`CAST_TESTS` (if ``qc``): the
       published Argo tests first, so that what they catch is counted under their names;
    8. :func:`~seaprofile.casts.process.despike` (a robust median test for what the Argo
       thresholds let through; flags only);
    9. :func:`~seaprofile.casts.process.bin_cast`;
    10. :func:`~seaprofile.casts.process.fill_gaps`;
    11. :func:`~seaprofile.casts.process.add_sound_speed`;
    12. :func:`~seaprofile.casts.qc.run_qc` with :data:`PROFILE_TESTS` (if ``qc``);
    13. :func:`extend_to` when ``extend_to`` is given (skipped, and recorded as skipped,
        when no bin has a usable sound speed).

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    equation : str
        Sound-speed equation (a key of ``EQUATIONS``); ignored for measured sound speed.
    bin_size : float
        m.
    latitude : float, optional
        Degrees north, for pressure <-> depth; default the Cast's position (an error names
        ``latitude`` when neither is known).
    depth_method : str
        Pressure-to-depth method (a key of ``seaprofile.seawater.depth.METHODS``).
    extend_to : float, optional
        Sea-floor depth, m, to extend the Profile to (see :func:`extend_to`).
    reference : xarray.Dataset, optional
        A deeper Profile to shape the extension.
    direction : {"down", "up", "both"}
    qc : bool
        Run the quality-control tests.
    max_gap : float
        m, largest run of empty bins filled by interpolation.

    Returns
    -------
    xarray.Dataset
        The Profile (layout in DEVELOPERS.md, "The data model").
    """
    if not isinstance(cast, xr.Dataset) or "sample" not in cast.dims:
        raise SeaprofileError("cast must be a Cast (xarray.Dataset with dimension 'sample')")
    ds = cast
    if ds.attrs.get("instrument") == "xbt":
        from .casts.xbt import complete_xbt_cast

        ds = complete_xbt_cast(ds)
    else:
        ds = _p.remove_soak(ds)
    ds = _p.select_direction(ds, direction)
    ds = _p.remove_reversals(ds)
    if "salinity" not in ds.data_vars and "conductivity" in ds.data_vars:
        ds = _p.add_salinity(ds)
    ds = _p.add_depth(ds, latitude=latitude, method=depth_method)
    if qc:  # the published Argo tests first, so their counts are theirs
        ds = _qc.run_qc(ds, CAST_TESTS)
    ds = _p.despike(ds)
    prof = _p.bin_cast(ds, bin_size, "depth")
    prof = _p.fill_gaps(prof, max_gap)
    prof = _p.add_sound_speed(prof, equation)
    if qc:
        prof = _qc.run_qc(prof, PROFILE_TESTS)
    if extend_to is not None:
        if _usable(prof):
            prof = _extend(prof, extend_to, reference=reference)
        else:  # nothing to extend from: keep the flagged profile, say why
            prof.attrs = _cf.record_step(prof.attrs, "extend_to", bottom_depth=extend_to,
                                         skipped="no usable sound speed (see the flags)")
    prof.attrs["featureType"] = "profile"
    prof.attrs["title"] = f"sound-speed profile from {cast.attrs.get('title', 'a cast')}"
    return prof


def _usable(profile):
    c = profile["sound_speed"].values
    f = profile["sound_speed_qc"].values
    return bool((np.isfinite(c) & ~np.isin(f, (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING))).any())


#: a constant-T/S extension longer than both of these (m, fraction of the cast) warns
LONG_EXTENSION_M = 200.0
LONG_EXTENSION_FRACTION = 0.2


class LongExtensionWarning(UserWarning):
    """A profile was extended far below its data by holding temperature and salinity."""


def _last_good(profile):
    c = profile["sound_speed"].values
    f = profile["sound_speed_qc"].values
    ok = np.isfinite(c) & ~np.isin(f, (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING))
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        raise SeaprofileError("profile has no usable sound speed to extend from")
    return int(idx[-1])


def extend_to(profile, bottom_depth, reference=None, step=None):
    """Extend a Profile down to the sea floor; the added values are flagged 8 (estimated).

    Below the deepest usable sound speed the Profile continues either

    - with ``reference`` (a deeper Profile): its temperature and salinity, shifted by a
      constant so they join the cast's last usable values, and sound speed recomputed
      with the Profile's equation; or, when either lacks temperature/salinity (or the
      sound speed was measured), the reference sound speed shifted to join; or
    - without a reference: temperature and salinity held at their last usable values, so
      only pressure changes the sound speed (recomputed with the same equation; for a
      measured profile, the pressure change by Chen & Millero 1977 is added to the last
      measured value).

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile with ``sound_speed`` (not modified).
    bottom_depth : float
        Sea-floor depth, m.
    reference : xarray.Dataset, optional
        A Profile reaching at least ``bottom_depth``.
    step : float, optional
        m, spacing of the added levels; default the Profile's bin size. The last level is
        at ``bottom_depth`` exactly.

    Returns
    -------
    xarray.Dataset
        A new Profile. Existing bins below the last usable one (missing or bad) are
        replaced, new bins appended; their values are flagged 8 and ``samples_per_bin`` is
        0. ``cast_max_depth`` keeps the deepest measured bin; ``bottom_depth`` is added.
    """
    if "sound_speed" not in profile.data_vars:
        raise SeaprofileError("profile has no sound_speed: run add_sound_speed first")
    bottom = float(bottom_depth)
    z = profile["depth"].values.astype(np.float64)
    last = _last_good(profile)
    z_last = z[last]
    attrs = dict(profile.attrs)
    counts = profile["samples_per_bin"].values if "samples_per_bin" in profile else None
    if "cast_max_depth" not in attrs:
        measured = np.flatnonzero(counts > 0) if counts is not None else [last]
        attrs["cast_max_depth"] = float(z[measured[-1]] if len(measured) else z_last)
    if not np.isfinite(bottom) or bottom <= z_last:
        out = profile.copy()
        out.attrs = _cf.record_step(attrs, "extend_to", bottom_depth=bottom, added_levels=0)
        return out
    if step is None:
        step = float(profile.attrs.get("bin_size", np.median(np.diff(z)) if z.size > 1 else 1.0))
    step = float(step)
    if not step > 0:
        raise SeaprofileError(f"step must be positive, got {step}")
    n_new = int(np.ceil((bottom - z_last) / step - 1e-9))
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
    how = "constant temperature and salinity"
    if reference is not None:
        values.update(_from_reference(profile, reference, z_new, z_last, last, p_new, has_ts))
        how = "reference profile"
    elif has_ts:
        span = bottom - z_last
        if span > max(LONG_EXTENSION_M, LONG_EXTENSION_FRACTION * z_last):
            warnings.warn(
                f"extending {attrs.get('cast_name', 'the profile')} by {span:.0f} m below its "
                f"last usable bin ({z_last:.0f} m) with constant temperature and salinity: "
                "deep sound speeds may be several m/s off; give a deeper reference profile",
                LongExtensionWarning, stacklevel=2)
        values["temperature"] = np.full(n_new, t_last)
        values["salinity"] = np.full(n_new, s_last)
        if equation == "measured":
            p_last = float(profile["pressure"].values[last])
            tt, ss = np.full(n_new + 1, t_last), np.full(n_new + 1, s_last)
            c = equation_sound_speed(profile, "chen_millero1977", tt, ss,
                                         np.append(p_new, p_last), np.append(z_new, z_last))
            values["sound_speed"] = c_last + (c[:-1] - c[-1])
    else:
        raise SeaprofileError(
            "profile has no temperature and salinity to extend with; give reference="
        )
    if "sound_speed" not in values:
        values["sound_speed"] = equation_sound_speed(
            profile, equation, values["temperature"], values["salinity"], p_new, z_new)
    return _assemble(profile, attrs, last, z_new, values, bottom, how, reference)


_extend = extend_to  # build_profile's argument of the same name hides the function


def _from_reference(profile, reference, z_new, z_last, last, p_new, has_ts):
    if not isinstance(reference, xr.Dataset) or "depth" not in reference.dims:
        raise SeaprofileError("reference must be a Profile (xarray.Dataset on 'depth')")
    zr = reference["depth"].values.astype(np.float64)
    if np.nanmax(zr) < z_new[-1] - 1e-9:
        raise SeaprofileError(
            f"reference reaches {np.nanmax(zr):g} m, shallower than the bottom depth "
            f"{z_new[-1]:g} m"
        )
    out = {}
    ref_ts = all(v in reference.data_vars for v in ("temperature", "salinity"))
    if has_ts and ref_ts and profile.attrs.get("equation") != "measured":
        for v in ("temperature", "salinity"):
            r = reference[v].values.astype(np.float64)
            ok = np.isfinite(r)
            shift = float(profile[v].values[last]) - np.interp(z_last, zr[ok], r[ok])
            out[v] = np.interp(z_new, zr[ok], r[ok]) + shift
        return out
    if "sound_speed" not in reference.data_vars:
        raise SeaprofileError("reference has neither temperature/salinity nor sound_speed")
    r = reference["sound_speed"].values.astype(np.float64)
    ok = np.isfinite(r)
    shift = float(profile["sound_speed"].values[last]) - np.interp(z_last, zr[ok], r[ok])
    out["sound_speed"] = np.interp(z_new, zr[ok], r[ok]) + shift
    return out


def _assemble(profile, attrs, last, z_new, values, bottom, how, reference):
    keep = profile.isel(depth=slice(0, last + 1))
    replaced = profile.sizes["depth"] - (last + 1)
    n = z_new.size
    data = {}
    for var in keep.data_vars:
        if var.endswith("_qc"):
            continue
        if var == "samples_per_bin":
            new = np.zeros(n, np.int32)
        elif var in values:
            new = values[var]
        else:
            new = np.full(n, np.nan)
        data[var] = (("depth",), np.concatenate([keep[var].values, new.astype(keep[var].dtype)]),
                     keep[var].attrs)
        if f"{var}_qc" in keep.data_vars:
            flag = _cf.ESTIMATED if var in values else _cf.MISSING
            data[f"{var}_qc"] = (("depth",), np.concatenate(
                [keep[f"{var}_qc"].values, np.full(n, flag, np.int8)]), keep[f"{var}_qc"].attrs)
    coords = {"depth": ("depth", np.concatenate([keep["depth"].values, z_new]),
                        keep["depth"].attrs)}
    for c in keep.coords:
        if c != "depth":
            coords[c] = keep.coords[c].variable
    attrs = _cf.record_step(attrs, "extend_to", bottom_depth=bottom, method=how,
                            added_levels=n, replaced_bins=replaced,
                            reference=None if reference is None else
                            reference.attrs.get("cast_name", "given"))
    attrs["bottom_depth"] = bottom
    return xr.Dataset(data, coords=coords, attrs=attrs)


def compare_profiles(a, b):
    """Sound-speed difference ``a - b`` on the depths of ``a`` that ``b`` covers.

    Parameters
    ----------
    a, b : xarray.Dataset
        Profiles with ``sound_speed`` (m/s) on ``depth`` (m). ``b`` is interpolated
        linearly onto the depths of ``a``; levels of either with flags 3, 4 or 9 are left out.

    Returns
    -------
    xarray.Dataset
        ``sound_speed_difference`` (m/s) on the common depths, with attributes
        ``mean_difference``, ``rms_difference``, ``max_abs_difference`` (m/s) and
        ``max_abs_difference_depth`` (m).
    """
    def usable(p):
        c = p["sound_speed"].values.astype(np.float64)
        f = p["sound_speed_qc"].values if "sound_speed_qc" in p else np.zeros(c.size, np.int8)
        ok = np.isfinite(c) & ~np.isin(f, (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING))
        return p["depth"].values.astype(np.float64)[ok], c[ok]

    for name, p in (("a", a), ("b", b)):
        if not isinstance(p, xr.Dataset) or "sound_speed" not in p:
            raise SeaprofileError(f"{name} must be a Profile with sound_speed")
    za, ca = usable(a)
    zb, cb = usable(b)
    if za.size == 0 or zb.size < 2:
        raise SeaprofileError("the profiles have no usable sound speeds to compare")
    inside = (za >= zb.min()) & (za <= zb.max())
    if not inside.any():
        raise SeaprofileError("the profiles have no depths in common")
    z = za[inside]
    d = ca[inside] - np.interp(z, zb, cb)
    i = int(np.argmax(np.abs(d)))
    attrs = _cf.base_attrs(
        mean_difference=float(d.mean()), rms_difference=float(np.sqrt(np.mean(d * d))),
        max_abs_difference=float(abs(d[i])), max_abs_difference_depth=float(z[i]),
        profile_a=str(a.attrs.get("cast_name", "a")), profile_b=str(b.attrs.get("cast_name", "b")),
    )
    return xr.Dataset(
        {"sound_speed_difference": (("depth",), d, {
            "long_name": "sound speed difference (a - b)", "units": "m s-1"})},
        coords={"depth": ("depth", z, _cf.attrs_for("depth"))}, attrs=attrs)
