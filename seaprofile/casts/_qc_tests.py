"""The individual quality-control tests behind :mod:`seaprofile.casts.qc`.

Each public test (``global_range``, ``pressure_increasing``, ``spike``, ``gradient``,
``stuck_value``, ``density_inversion``, ``sound_speed_range``) is a thin wrapper around a
body working on a ``_Work`` (:mod:`seaprofile.casts._qc_work`) -- a Dataset under test
whose flags are kept as numpy arrays and written back once -- so that
:func:`seaprofile.casts.qc.run_qc` can run several bodies on one copy. Import the tests from :mod:`seaprofile.casts.qc`; the flag order, the
sources and the rules for unusable values are described there.
"""

from __future__ import annotations

import numba
import numpy as np

from .. import _cf
from .._validate import SeaprofileError
from ..seawater.state import potential_density_anomaly
from ._common import exceeds_earlier, position
from ._qc_work import _assumed, _dim, _present, _single, _vertical

#: deeper than any ocean, m (and dbar): the deepest sounding, in the Challenger Deep, is
#: about 10,900 m (from memory); 12000 leaves a margin. Common practice, no source.
MAX_OCEAN_DEPTH = 12000.0

GLOBAL_RANGE = {
    # Argo QC manual (doi:10.13155/33951), test 6 "global range"
    "temperature": (-2.5, 40.0),
    "salinity": (2.0, 41.0),
    # lower limit: Argo QC manual, test 6, pressure not less than -5 dbar (from memory);
    # upper limit: no ocean is deeper than MAX_OCEAN_DEPTH (common practice, no source)
    "pressure": (-5.0, MAX_OCEAN_DEPTH),
    "depth": (-5.0, MAX_OCEAN_DEPTH),
}
# Argo QC manual, test 9 "spike": (threshold for pressure < 500 dbar, for >= 500 dbar)
SPIKE_THRESHOLDS = {"temperature": (6.0, 2.0), "salinity": (0.9, 0.3)}
# Argo QC manual, test 11 "gradient" (obsolete since 2019)  (from memory)
GRADIENT_THRESHOLDS = {"temperature": (9.0, 3.0), "salinity": (1.5, 0.5)}
SPLIT_PRESSURE = 500.0  # dbar, Argo QC manual tests 9 and 11
# m/s, plausibility window (common practice, no source). The upper end leaves room for the
# deepest water: TEOS-10 (gsw) gives 1665.6 m/s at 12000 dbar, 2.5 degC, S 34.7, and the
# lower end for cold fresh water (1402 m/s at 0 degC, S 0, the surface).
SOUND_SPEED_RANGE = (1400.0, 1700.0)
#: fewest usable values for the whole-profile stuck-value test (common practice, no
#: source): two or three identical values are a normal planning input, not a stuck sensor
STUCK_MIN_VALUES = 10
#: m (or dbar): a sound-speed probe is tested for a stuck value only when its usable
#: values span at least this depth (common practice, no source): in still, well-mixed
#: water the pressure term alone raises sound speed by about 0.016 m/s per m
#: (Mackenzie 1981, J. Acoust. Soc. Am. 70, 807-812, depth coefficient 1.630e-2), i.e.
#: 0.3 m/s over 20 m, so one value repeated over a longer span is a stuck sensor; shorter
#: speed-only casts and two- or three-node planning profiles are spared
STUCK_MIN_SPAN = 20.0


# --- helpers ---------------------------------------------------------------------------
def _outside(w, var, low, high):
    """Where the usable values of ``var`` lie below ``low`` or above ``high``."""
    values, ok = w.usable(var)
    with np.errstate(invalid="ignore", over="ignore"):
        return ok & ((values < low) | (values > high))


def _split_threshold(pressure, pair):
    """Argo: first value for pressure < 500 dbar, second for pressure >= 500 dbar."""
    return np.where(pressure < SPLIT_PRESSURE, pair[0], pair[1])


def _neighbour_test(w, variables, thresholds, kind):
    p = _vertical(w.ds)
    hits = {}
    for var in _present(w.ds, variables, tuple(thresholds)):
        if var not in thresholds:
            raise SeaprofileError(f"thresholds has no entry for {var!r}")
        values, ok = w.usable(var)
        ok &= np.isfinite(p)
        idx = np.flatnonzero(ok)
        mask = np.zeros(values.size, bool)
        if idx.size >= 3:
            v1, v2, v3 = values[idx[:-2]], values[idx[1:-1]], values[idx[2:]]
            test_value = np.abs(v2 - 0.5 * (v3 + v1))
            if kind == "spike":
                test_value = test_value - np.abs(0.5 * (v3 - v1))
            # Argo: a test value that *exceeds* the threshold fails (strict inequality)
            fail = test_value > _split_threshold(p[idx[1:-1]], thresholds[var])
            mask[idx[1:-1][fail]] = True
        hits[var] = mask
    return hits


# --- tests -----------------------------------------------------------------------------
def global_range(ds, limits=None):
    """Flag values outside a global range as bad (4).

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile.
    limits : dict, optional
        ``{variable: (low, high)}``; values below ``low`` or above ``high`` fail (the limits
        themselves pass). Default :data:`GLOBAL_RANGE`: temperature -2.5..40 degC, practical
        salinity 2..41 (Argo QC manual test 6), pressure -5..12000 dbar and depth
        -5..12000 m (the lower limit from Argo test 6; the upper one is
        :data:`MAX_OCEAN_DEPTH`, deeper than any ocean: common practice, no source).

    Returns
    -------
    xarray.Dataset
        A new Dataset with raised flags.

    Notes
    -----
    Wong et al., Argo Quality Control Manual for CTD and Trajectory Data,
    doi:10.13155/33951, real-time test 6.
    """
    return _single(_global_range)(ds, limits=limits)


def _global_range(w, limits=None):
    limits = GLOBAL_RANGE if limits is None else limits
    hits = {}
    for var in _present(w.ds, list(limits), ()):
        low, high = limits[var]
        hits[var] = _outside(w, var, low, high)
    w.apply(hits, "global_range")


def pressure_increasing(ds):
    """Flag pressures that do not increase along a Cast as bad (4).

    A pressure not greater than every earlier pressure of the descent is flagged: of a
    run of constant pressure all but the first sample, and the whole of a reversal (the
    samples until the pressure exceeds the deepest earlier one). For an upcast (attribute
    ``cast_direction="up"``) pressure must decrease; for ``"both"`` the descent is tested up
    to the deepest sample and the ascent after it. ``depth_qc`` follows ``pressure_qc``.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast. (A Profile's depth axis increases by construction: returned unchanged
        apart from the summary.)

    Returns
    -------
    xarray.Dataset
        A new Dataset with raised flags.

    Notes
    -----
    Argo QC manual (doi:10.13155/33951), real-time test 8 "pressure increasing".
    """
    return _single(_pressure_increasing)(ds)


def _pressure_increasing(w):
    ds = w.ds
    if _dim(ds) != "sample" or "pressure" not in ds.data_vars:
        w.apply({}, "pressure_increasing")
        return
    p, ok = w.usable("pressure")
    mask = np.zeros(p.size, bool)
    direction = ds.attrs.get("cast_direction", "down")
    pv = np.where(ok, p, np.nan)
    if direction == "both" and ok.any():
        turn = int(np.nanargmax(pv))
        mask[: turn + 1] = _not_monotone(pv[: turn + 1], 1.0)
        mask[turn:] |= _not_monotone(pv[turn:], -1.0)
        mask[turn] = False
    else:
        mask = _not_monotone(pv, -1.0 if direction == "up" else 1.0)
    hits = {"pressure": mask & ok}
    if "depth" in ds.data_vars:
        hits["depth"] = mask & ok
    w.apply(hits, "pressure_increasing")


def _not_monotone(p, sign):
    """True where sign*p does not exceed the running maximum of the earlier values."""
    q = sign * p
    return np.isfinite(q) & ~exceeds_earlier(q)


def spike(ds, variables=None, thresholds=None):
    """Argo spike test: flag single-value spikes as bad (4).

    Test value ``|V2 - (V3 + V1)/2| - |(V3 - V1)/2|`` for each value V2 with its usable
    neighbours V1 (above) and V3 (below); it fails when it *exceeds* the threshold.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast (neighbours in recorded order) or a Profile.
    variables : sequence of str, optional
        Default: those of ``thresholds`` that are present.
    thresholds : dict, optional
        ``{variable: (below_500_dbar, at_or_below_500_dbar)}`` in the variable's units.
        Default :data:`SPIKE_THRESHOLDS`: temperature 6.0 / 2.0 degC, salinity 0.9 / 0.3
        for pressure < 500 dbar / >= 500 dbar.

    Returns
    -------
    xarray.Dataset

    Notes
    -----
    Argo QC manual (doi:10.13155/33951), real-time test 9. The first and last usable
    values have only one neighbour and are not tested.

    The test compares each value with its adjacent usable values, whatever their spacing,
    and its test value is the distance by which V2 lies *outside* the range of V1 and V3:
    zero on any monotone stretch, however steep. A real gradient on a monotone stretch
    therefore never fails, on a 24 Hz CTD record or on bottles 50 m apart alike; only a
    value standing out beyond both neighbours by more than the depth-dependent threshold
    does. That includes a real extremum: a subsurface temperature maximum or minimum
    caught by a single bottle between two widely spaced ones can stand out by more than
    the threshold and be flagged, although it is real water -- on sparse casts a spike
    flag at an extremum deserves a look before the value is discarded.
    """
    return _single(_spike)(ds, variables=variables, thresholds=thresholds)


def _spike(w, variables=None, thresholds=None):
    thresholds = SPIKE_THRESHOLDS if thresholds is None else thresholds
    w.apply(_neighbour_test(w, variables, thresholds, "spike"), "spike")


def gradient(ds, variables=None, thresholds=None):
    """Argo gradient test (obsolete in Argo since 2019; optional here).

    Test value ``|V2 - (V3 + V1)/2|``; fails (flag 4) when it exceeds the threshold.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile.
    variables : sequence of str, optional
    thresholds : dict, optional
        Default :data:`GRADIENT_THRESHOLDS` (from memory of the manual before 2019):
        temperature 9.0 / 3.0 degC, salinity 1.5 / 0.5 for pressure < 500 / >= 500 dbar.

    Returns
    -------
    xarray.Dataset
    """
    return _single(_gradient)(ds, variables=variables, thresholds=thresholds)


def _gradient(w, variables=None, thresholds=None):
    thresholds = GRADIENT_THRESHOLDS if thresholds is None else thresholds
    w.apply(_neighbour_test(w, variables, thresholds, "gradient"), "gradient")


def stuck_value(
    ds, variables=None, run_length=None, min_values=STUCK_MIN_VALUES, min_span=STUCK_MIN_SPAN
):
    """Flag a sensor that reports one value throughout.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile.
    variables : sequence of str, optional
        Default temperature, salinity and conductivity -- the variables of Argo's test --
        and measured sound speed (those present). Measured sound speed is tested only
        with at least ``min_values`` usable values spanning at least ``min_span``: a
        constant sound speed at two or three nodes is a normal isovelocity planning input
        (e.g. 1500 m/s at 0 and 100 m), while hundreds of samples of one value over tens
        of metres are a stuck probe (the pressure term alone changes sound speed there).
    run_length : int, optional
        Also flag as probably bad (3) every run of at least ``run_length`` consecutive
        usable samples with identical values. Off by default: well-mixed water recorded at
        a coarse resolution legitimately repeats values.
    min_values : int
        Fewest usable values for the whole-profile test (default
        :data:`STUCK_MIN_VALUES`, 10; common practice, no source): a short profile --
        two or three planning nodes, a few bottles in well-mixed water -- repeats a value
        legitimately, and is not tested.
    min_span : float
        m (dbar when the Dataset has no depth): the smallest vertical span of the usable
        values for measured sound speed to be tested (default :data:`STUCK_MIN_SPAN`,
        20; common practice, no source).

    Returns
    -------
    xarray.Dataset
        When all usable values (at least ``min_values``) of a variable are identical they
        are all flagged bad (4), as in Argo.

    Notes
    -----
    Argo QC manual (doi:10.13155/33951), real-time test 13 "stuck value".
    """
    return _single(_stuck_value)(
        ds, variables=variables, run_length=run_length, min_values=min_values, min_span=min_span
    )


def _vertical_span(ds, idx):
    """Vertical span, m (dbar without depth), of the levels ``idx``; 0 when unknown."""
    for name in ("depth", "pressure"):
        if name in ds.variables:
            x = ds.variables[name].values.astype(np.float64)[idx]
            x = x[np.isfinite(x)]
            if x.size:
                return float(x.max() - x.min())
    return 0.0


def _stuck_value(
    w, variables=None, run_length=None, min_values=STUCK_MIN_VALUES, min_span=STUCK_MIN_SPAN
):
    default = ("temperature", "salinity", "conductivity", "measured_sound_speed")
    hits, runs = {}, {}
    for var in _present(w.ds, variables, default):
        values, ok = w.usable(var)
        idx = np.flatnonzero(ok)
        v = values[idx]
        whole = np.zeros(values.size, bool)
        spans = var != "measured_sound_speed" or (
            idx.size and _vertical_span(w.ds, idx) >= float(min_span)
        )
        if idx.size >= max(2, int(min_values)) and spans and np.all(v == v[0]):
            whole[idx] = True
        hits[var] = whole
        if run_length is not None and idx.size >= 2:
            same = np.concatenate(([False], v[1:] == v[:-1]))
            start = np.flatnonzero(~same)  # index in v where each run starts
            lengths = np.diff(np.concatenate((start, [v.size])))
            run_id = np.cumsum(~same) - 1
            long_run = lengths[run_id] >= int(run_length)
            m = np.zeros(values.size, bool)
            m[idx[long_run]] = True
            runs[var] = m & ~whole
    w.apply(hits, "stuck_value")
    if run_length is not None:
        w.apply(runs, "stuck_value_run", flag=_cf.PROBABLY_BAD)


@numba.njit(cache=True)
def _inversion_kernel(sigma, threshold):
    """Argo two-pass density-inversion scan over levels sorted by pressure."""
    n = sigma.size
    bad = np.zeros(n, np.bool_)
    if n == 0:
        return bad
    ref = sigma[0]
    for i in range(1, n):  # top to bottom: a lighter deeper level fails
        if ref - sigma[i] > threshold:
            bad[i] = True
        else:
            ref = sigma[i]
    j = n - 1
    while j >= 0 and bad[j]:
        j -= 1
    if j < 0:
        return bad
    ref = sigma[j]
    for i in range(j - 1, -1, -1):  # bottom to top: a denser shallower level fails
        if bad[i]:
            continue
        if sigma[i] - ref > threshold:
            bad[i] = True
        else:
            ref = sigma[i]
    return bad


def density_inversion(ds, threshold=0.03):
    """Flag temperature and salinity of levels with a density inversion as bad (4).

    Levels with usable temperature, salinity and pressure are sorted by pressure and
    scanned top to bottom (a level lighter than the last accepted level above it by more
    than ``threshold`` fails) and then bottom to top among the levels still accepted (a
    level denser than the last accepted level below it by more than ``threshold`` fails).

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile with temperature, salinity and pressure.
    threshold : float
        kg/m^3 (default 0.03, as in Argo); a difference that *exceeds* it fails.

    Returns
    -------
    xarray.Dataset

    Notes
    -----
    Argo QC manual (doi:10.13155/33951), real-time test 14. Argo compares potential
    densities referenced to the mid-point pressure of each pair; here every level uses
    sigma0 (potential density referenced to 0 dbar, TEOS-10 via
    :func:`seaprofile.seawater.state.potential_density_anomaly`), which can be computed once
    per level. The two agree closely in the upper ocean; in the deep ocean sigma0 can
    miss or invent small inversions (thermobaric effect), so deep casts deserve a look.
    A Cast whose salinity was assumed (attribute ``salinity_assumed="yes"``, expendable
    probes) is not tested: its density follows temperature alone.
    """
    return _single(_density_inversion)(ds, threshold=threshold)


def _density_inversion(w, threshold=0.03):
    ds = w.ds
    needed = ("temperature", "salinity", "pressure")
    if any(v not in ds.data_vars for v in needed) or _assumed(ds, "salinity"):
        w.apply({}, "density_inversion")
        return
    t, ok_t = w.usable("temperature")
    s, ok_s = w.usable("salinity")
    p, ok_p = w.usable("pressure")
    ok = ok_t & ok_s & ok_p
    idx = np.flatnonzero(ok)
    bad = np.zeros(t.size, bool)
    if idx.size >= 2:
        order = idx[np.argsort(p[idx], kind="stable")]
        lat, lon = position(ds)
        known = np.isfinite(lat) and np.isfinite(lon)
        with np.errstate(over="ignore", invalid="ignore"):
            sigma = np.asarray(
                potential_density_anomaly(
                    t[order], s[order], p[order], lat if known else None, lon if known else None
                ),
                dtype=np.float64,
            )
        bad[order[_inversion_kernel(sigma, float(threshold))]] = True
    w.apply({"temperature": bad, "salinity": bad.copy()}, "density_inversion")


def sound_speed_range(ds, limits=SOUND_SPEED_RANGE):
    """Flag sound speeds outside a plausible window as bad (4).

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or Profile with ``sound_speed`` and/or ``measured_sound_speed``.
    limits : (float, float)
        m/s, default 1400..1700 (a window around the ocean's range, wide enough for the
        deepest trench water; common practice, no source). The limits themselves pass.

    Returns
    -------
    xarray.Dataset
    """
    return _single(_sound_speed_range)(ds, limits=limits)


def _sound_speed_range(w, limits=SOUND_SPEED_RANGE):
    low, high = limits
    hits = {}
    for var in _present(w.ds, ("sound_speed", "measured_sound_speed"), ()):
        hits[var] = _outside(w, var, low, high)
    w.apply(hits, "sound_speed_range")


#: the body of each test by name: :func:`seaprofile.casts.qc.run_qc` runs them in turn on
#: one ``_Work``, so that a whole run copies the Dataset once
BODIES = {
    "global_range": _global_range,
    "pressure_increasing": _pressure_increasing,
    "spike": _spike,
    "gradient": _gradient,
    "stuck_value": _stuck_value,
    "density_inversion": _density_inversion,
    "sound_speed_range": _sound_speed_range,
}
