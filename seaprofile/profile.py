"""From a Cast to a trusted sound-speed Profile: the whole chain, extension, comparison.

:func:`build_profile` runs the processing steps of :mod:`seaprofile.casts.process` and the
tests of :mod:`seaprofile.casts.qc` in a fixed order, each recorded in the Profile's
``processing_steps``; :func:`extend_to` carries a Profile down to the sea floor (flagged 8,
"estimated"); :func:`compare_profiles` differences two Profiles on their common depths;
:func:`describe_assumptions` says in one line what a Profile rests on besides its data.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from . import _cf
from ._extend import (
    JOIN_BLEND,
    LongExtensionWarning,
    _is_bottom,
    cast_bottom_depth,
    check_bottom_depth,
    extend_to,
)
from ._validate import SeaprofileError
from .casts import binning as _b
from .casts import process as _p
from .casts import qc as _qc
from .casts._common import usable_sound_speed
from .casts.binning import LargeGapWarning
from .casts.despike import despike as _despike

_extend = extend_to  # build_profile's argument of the same name hides the function

# extend_to, cast_bottom_depth, check_bottom_depth, JOIN_BLEND and LongExtensionWarning are
# defined in the private module _extend.py: this is their public home
__all__ = [
    "build_profile",
    "extend_to",
    "compare_profiles",
    "describe_assumptions",
    "interpolated_levels",
    "LargeGapWarning",
    "cast_bottom_depth",
    "check_bottom_depth",
    "CAST_TESTS",
    "PROFILE_TESTS",
    "JOIN_BLEND",
    "LongExtensionWarning",
]

#: quality-control tests run on the Cast's samples, in order
CAST_TESTS = (
    "global_range",
    "pressure_increasing",
    "spike",
    "stuck_value",
    "density_inversion",
    "sound_speed_range",
)
#: quality-control tests run on the binned Profile
PROFILE_TESTS = ("sound_speed_range",)


def build_profile(
    cast,
    *,
    equation="chen_millero1977",
    bin_size=1.0,
    latitude=None,
    depth_method="unesco1983",
    extend_to=None,
    reference=None,
    direction="down",
    qc=True,
    max_gap="auto",
    replacement_salinity=None,
    replace_salinity="bad",
    join_blend=JOIN_BLEND,
):
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
    8. :func:`~seaprofile.casts.despike.despike` (a robust median test for what the Argo
       thresholds let through on dense records; flags only);
    9. with ``replacement_salinity`` only:
       :func:`~seaprofile.casts.process.replace_salinity` (for ``replace_salinity="bad"``
       after the tests and despiking that find the bad values, with the density-inversion
       test run after it; for ``"all"`` before quality control);
    10. :func:`~seaprofile.casts.binning.bin_cast`: bins where the cast is denser than
        the bins, its own levels where it is sparser;
    11. :func:`~seaprofile.casts.binning.fill_gaps`: interior levels without data
        interpolated linearly in depth and flagged 8 -- by default only across gaps of
        at most 5 m or 3 times the spacing of the measured levels beside them, so a
        bottle or float cast stays joined and lost data in a dense cast stay missing
        (NaN, flag 9); gaps wider than 20 m warn (``LargeGapWarning``);
    12. :func:`~seaprofile.casts.binning.add_sound_speed`;
    13. :func:`~seaprofile.casts.qc.run_qc` with :data:`PROFILE_TESTS` (if ``qc``);
    14. :func:`extend_to` when ``extend_to`` is given (skipped, and recorded as skipped,
        when no bin has a usable sound speed).

    Interpolation between sparse levels is linear in depth for temperature and
    salinity, and sound speed is computed from the interpolated values at each level's
    own pressure; a probe's measured sound speed is interpolated linearly in depth
    itself. Temperature and salinity are what was measured, so this keeps them
    consistent with each other (the density test, the mixed layer) and puts the
    equation's pressure term exactly at every level; between measured levels the two
    choices differ only by the curvature of the equation, a few hundredths of a m/s over
    50 m. Measured levels are never changed: at every one the Profile's sound speed is
    the equation's value of the measured temperature, salinity and pressure.

    Parameters
    ----------
    cast : xarray.Dataset
        A Cast (not modified).
    equation : str
        Sound-speed equation (a key of ``EQUATIONS``); ignored for measured sound speed.
    bin_size : float
        m, finite and > 0 (at most ``casts.binning.MAX_BINS`` bins).
    latitude : float, optional
        Degrees north, for pressure <-> depth; default the Cast's position (an error names
        ``latitude`` when neither is known).
    depth_method : str
        Pressure-to-depth method (a key of ``seaprofile.seawater.depth.METHODS``).
    extend_to : float or "bottom", optional
        Sea-floor depth, m (0 < depth <= 12000), to extend the Profile to (see
        :func:`extend_to`); ``"bottom"``: the Cast's ``bottom_depth`` attribute, an error
        when it has none (:func:`cast_bottom_depth`).
    reference : xarray.Dataset, optional
        A deeper Profile to shape the extension.
    direction : {"down", "up", "both"}
    qc : bool
        Run the quality-control tests.
    max_gap : float, "auto" or None
        m: leave gaps without data longer than this missing (NaN, flag 9). Default
        ``"auto"``: at most ``max(5 m, 3 x the spacing of the measured levels on either
        side)`` (:func:`~seaprofile.casts.binning.fill_gaps`). None: fill every interior
        gap, however long. The Profile records ``largest_gap`` (m), ``filled_gaps`` and
        ``unfilled_gaps``, and :func:`describe_assumptions` names the gaps left. Ray
        tracing leaves the missing levels out, i.e. joins the levels on either side of an
        unfilled gap with a straight line: the gap is reported, not hidden.
    replacement_salinity : float or (array_like, array_like), optional
        Salinity to use where the salinity channel failed: a practical salinity, or a
        profile ``(depths_m, salinities)`` (linear in depth, constant beyond its ends).
        Replaced values are flagged 8 (estimated) and recorded in the attribute
        ``salinity_replaced`` and in :func:`describe_assumptions`.
    replace_salinity : {"bad", "all"}
        Where ``replacement_salinity`` is used: where salinity is missing or flagged 3, 4
        or 9 (default), or over the whole cast.
    join_blend : float
        m, passed to :func:`extend_to` with a ``reference``.

    Returns
    -------
    xarray.Dataset
        The Profile (layout in DEVELOPERS.md, "The data model"), with the attribute
        ``assumptions`` (:func:`describe_assumptions`).
    """
    if not isinstance(cast, xr.Dataset) or "sample" not in cast.dims:
        raise SeaprofileError("cast must be a Cast (xarray.Dataset with dimension 'sample')")
    bin_size = _b.check_step(bin_size, "bin_size")
    bottom = None
    if extend_to is not None:
        bottom = (
            cast_bottom_depth(cast)
            if _is_bottom(extend_to)
            else check_bottom_depth(extend_to, "extend_to")
        )
    if replace_salinity not in ("bad", "all"):
        raise SeaprofileError(f"replace_salinity must be 'bad' or 'all', got {replace_salinity!r}")
    ds = cast
    xbt = ds.attrs.get("instrument") == "xbt"
    if xbt:
        from .casts.xbt import complete_xbt_cast

        ds = complete_xbt_cast(ds)
    # remove_soak (not for expendable probes), select_direction, remove_reversals
    ds = _p.select_descent(ds, direction, soak=not xbt)
    if "salinity" not in ds.data_vars and "conductivity" in ds.data_vars:
        ds = _p.add_salinity(ds)
    if _speed_only_without_position(ds, latitude):
        # depth and measured sound speed, no position: pressure is needed by nothing
        # downstream, and guessing a latitude would invent it (~0.5 % apart over latitudes)
        n = ds.sizes["sample"]
        ds = ds.assign(
            pressure=("sample", np.full(n, np.nan), _cf.attrs_for("pressure")),
            pressure_qc=("sample", np.full(n, _cf.MISSING, np.int8), _cf.flag_attrs("pressure")),
        )
        ds.attrs = _cf.record_step(
            ds.attrs,
            "add_depth",
            skipped="sound speed measured against depth and no position: pressure left unknown",
        )
    else:
        ds = _p.add_depth(ds, latitude=latitude, method=depth_method)
    replace = replacement_salinity is not None
    if replace and replace_salinity == "all":
        ds = _p.replace_salinity(ds, replacement_salinity, where="all")
    late = replace and replace_salinity == "bad"
    tests = tuple(t for t in CAST_TESTS if not (late and t == "density_inversion"))
    if qc:  # the published Argo tests first, so their counts are theirs
        ds = _qc.run_qc(ds, tests)
    ds = _despike(ds)
    if late:
        ds = _p.replace_salinity(ds, replacement_salinity, where="bad")
        if qc and "density_inversion" in CAST_TESTS:
            ds = _qc.run_qc(ds, ("density_inversion",))
    prof = _b.bin_cast(ds, bin_size, "depth", argument="bin_size")
    prof = _b.fill_gaps(prof, max_gap)
    prof = _b.add_sound_speed(prof, equation)
    if qc:
        prof = _qc.run_qc(prof, PROFILE_TESTS)
    if bottom is not None:
        if usable_sound_speed(prof).any():
            prof = _extend(prof, bottom, reference=reference, join_blend=join_blend)
        else:  # nothing to extend from: keep the flagged profile, say why
            prof.attrs = _cf.record_step(
                prof.attrs,
                "extend_to",
                bottom_depth=bottom,
                skipped="no usable sound speed (see the flags)",
            )
    prof.attrs["featureType"] = "profile"
    prof.attrs["title"] = f"sound-speed profile from {cast.attrs.get('title', 'a cast')}"
    prof.attrs["assumptions"] = describe_assumptions(prof)
    return prof


def _speed_only_without_position(cast, latitude):
    """A depth / measured-sound-speed cast with no T, S, pressure nor latitude."""
    if latitude is not None or "pressure" in cast.data_vars or "depth" not in cast.data_vars:
        return False
    if "measured_sound_speed" not in cast.data_vars:
        return False
    if "temperature" in cast.data_vars or "salinity" in cast.data_vars:
        return False
    lat = cast.coords.get("latitude")
    return lat is None or not np.isfinite(float(lat.values))


def interpolated_levels(profile):
    """How many levels of a Profile were interpolated between measured ones.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (``samples_per_bin``, ``sound_speed_qc``; ``cast_max_depth`` in m).

    Returns
    -------
    (int, int)
        The levels down to ``cast_max_depth`` with no sample and a sound speed flagged 8
        (estimated), and all the levels down to ``cast_max_depth``; ``(0, 0)`` without
        the variables needed.
    """
    if "samples_per_bin" not in profile or "sound_speed_qc" not in profile:
        return 0, 0
    v = profile.variables
    inside = v["depth"].values <= float(profile.attrs.get("cast_max_depth", np.inf))
    filled = (
        inside & (v["samples_per_bin"].values == 0) & (v["sound_speed_qc"].values == _cf.ESTIMATED)
    )
    return int(filled.sum()), int(inside.sum())


def describe_assumptions(profile):
    """One plain-text line of what a Profile rests on besides its measurements.

    The assumed or replaced salinity, the fall-rate coefficients of an expendable probe,
    how many levels were interpolated between measured ones, and how (and from what) it
    was extended below the cast; ``"none"`` when it rests on its data alone. The same
    text is the Profile's ``assumptions`` attribute; command-line summaries print it.

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (from :func:`build_profile` or :func:`extend_to`).

    Returns
    -------
    str
    """
    a = profile.attrs
    parts = []
    if str(a.get("salinity_assumed", "")).lower() == "yes":
        parts.append(f"salinity {a.get('salinity_source', 'assumed')}")
    if a.get("salinity_replaced"):
        parts.append(f"salinity replaced: {a['salinity_replaced']}")
    if a.get("fall_rate"):
        coeff = a.get("fall_rate_coefficients", "")
        parts.append(f"fall rate {a['fall_rate']}" + (f" ({coeff})" if coeff else ""))
    filled, inside = interpolated_levels(profile)
    if filled:
        parts.append(
            f"{filled} of {inside} levels interpolated linearly in depth between "
            "measured ones (flag 8)"
        )
    if a.get("unfilled_gaps") not in (None, "", "none"):
        parts.append(
            f"no data over {a['unfilled_gaps']}, left missing (flag 9; ray "
            "tracing joins the levels on either side with a straight line)"
        )
    if a.get("extension_method"):
        start = float(a.get("join_depth", a.get("cast_max_depth", 0)))
        parts.append(
            f"extended {start:.0f}-{float(a.get('bottom_depth', 0)):.0f}"
            f" m with {a['extension_method']} (flag 8)"
        )
    if a.get("data_below_bottom") not in (None, "", "none"):
        parts.append(str(a["data_below_bottom"]))
    return "; ".join(parts) if parts else "none"


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
        ok = usable_sound_speed(p)
        return (
            p["depth"].values.astype(np.float64)[ok],
            p["sound_speed"].values.astype(np.float64)[ok],
        )

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
        mean_difference=float(d.mean()),
        rms_difference=float(np.sqrt(np.mean(d * d))),
        max_abs_difference=float(abs(d[i])),
        max_abs_difference_depth=float(z[i]),
        profile_a=str(a.attrs.get("cast_name", "a")),
        profile_b=str(b.attrs.get("cast_name", "b")),
    )
    return xr.Dataset(
        {"sound_speed_difference": (("depth",), d, _cf.attrs_for("sound_speed_difference"))},
        coords={"depth": ("depth", z, _cf.attrs_for("depth"))},
        attrs=attrs,
    )
