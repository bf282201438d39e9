"""Quality control of casts and profiles: tests raise flags, nothing is ever deleted.

Every test takes a Cast (dimension ``sample``) or a Profile (dimension ``depth``) and returns
a new Dataset whose ``<var>_qc`` flags were raised where the test failed. Flags follow Argo
reference table 2 (:mod:`seaprofile._cf`). :func:`run_qc` runs a list of tests in order,
passes bad flags on to the quantities derived from a bad value, marks the flags that are
still 0 as 1 (good) for every variable a test looked at, and records per-test counts in the
``qc_summary`` attribute (JSON; read it back with :func:`qc_summary`).

Flag order
----------
A later test never lowers an earlier flag. Flags are compared by severity
``0 < 1 < 2 < 5 < 3 < 4`` (Argo's order 0 < 1 < 2 < 3 < 4, with 5 "changed" counted as
usable data below "probably bad"); flags 8 (estimated) and 9 (missing) are never changed by
a test. When a derived quantity takes the flags of its inputs (``flags.worst_flag``), the
severity order is ``0 < 1 < 2 < 5 < 8 < 3 < 4 < 9``: an estimated input makes the result
estimated, a bad one makes it bad, a missing one makes it missing.

Tests (Argo Quality Control Manual for CTD and Trajectory Data, Wong et al.,
doi:10.13155/33951; numbers in brackets are the manual's real-time test numbers)
-----------------------------------------------------------------------------------
``global_range`` [6], ``pressure_increasing`` [8], ``spike`` [9], ``gradient`` [11, declared
obsolete by Argo in 2019; off by default], ``stuck_value`` [13], ``density_inversion`` [14],
and ``sound_speed_range`` (ours: a plausibility window on sound speed).

Values already flagged 3, 4, 8 or 9 are not used by a test, neither as the value tested
nor as a neighbour: the spike and gradient tests compare each value with the nearest
usable values above and below it.

Where the code lives
--------------------
This module holds the driver (:func:`run_qc`, :data:`TESTS`, :func:`qc_summary`). The
tests themselves and their default thresholds are defined in the private module
:mod:`seaprofile.casts._qc_tests` and made public here (import them from this module);
the Dataset under test they share with the driver is in :mod:`seaprofile.casts._qc_work`,
and the flag arithmetic (``raise_flags``, ``worst_flag``, ``pass_on_failed``) in
:mod:`seaprofile.casts.flags`.
"""

from __future__ import annotations

import json

import numpy as np

from .. import _cf
from .._validate import SeaprofileError
from ._qc_tests import (
    BODIES,
    GLOBAL_RANGE,
    GRADIENT_THRESHOLDS,
    MAX_OCEAN_DEPTH,
    SOUND_SPEED_RANGE,
    SPIKE_THRESHOLDS,
    SPLIT_PRESSURE,
    STUCK_MIN_VALUES,
    density_inversion,
    global_range,
    gradient,
    pressure_increasing,
    sound_speed_range,
    spike,
    stuck_value,
)
from ._qc_work import _Work
from .flags import pass_on_failed

# the tests and their default thresholds: defined in _qc_tests, public here
__all__ = [
    "TESTS",
    "DEFAULT_TESTS",
    "GLOBAL_RANGE",
    "GRADIENT_THRESHOLDS",
    "MAX_OCEAN_DEPTH",
    "SOUND_SPEED_RANGE",
    "SPIKE_THRESHOLDS",
    "SPLIT_PRESSURE",
    "STUCK_MIN_VALUES",
    "global_range",
    "pressure_increasing",
    "spike",
    "gradient",
    "stuck_value",
    "density_inversion",
    "sound_speed_range",
    "run_qc",
    "qc_summary",
]

TESTS = {
    "global_range": global_range,
    "pressure_increasing": pressure_increasing,
    "spike": spike,
    "gradient": gradient,
    "stuck_value": stuck_value,
    "density_inversion": density_inversion,
    "sound_speed_range": sound_speed_range,
}
DEFAULT_TESTS = (
    "global_range",
    "pressure_increasing",
    "spike",
    "stuck_value",
    "density_inversion",
    "sound_speed_range",
)


def _propagate(w):
    """Pass failed (3, 4) input flags on to derived variables (salinity, sound speed)."""
    new = pass_on_failed(w.ds, w.flag)
    if new:
        entry = w.summary.setdefault("bad_input", {})
        for var, f in new.items():
            entry[var] = entry.get(var, 0) + int(np.count_nonzero(f != w.flag(var)))
            w.flags[var] = f


def run_qc(ds, tests=DEFAULT_TESTS):
    """Run quality-control tests in order and record what each found.

    Parameters
    ----------
    ds : xarray.Dataset
        A Cast or a Profile (not modified).
    tests : sequence of str, or dict
        Test names (keys of :data:`TESTS`) in the order to run them, or a dict
        ``{name: {keyword: value}}`` to pass options. Default :data:`DEFAULT_TESTS`
        (``gradient`` is left out: Argo made it obsolete in 2019).

    Returns
    -------
    xarray.Dataset
        A new Dataset: flags raised by the tests (never lowered; 8 and 9 kept); failed
        (3, 4) input flags passed on to the derived variables
        (:func:`~seaprofile.casts.flags.derived_variables`: those whose ``derived_from``
        attribute names their inputs, salinity next to conductivity, a computed
        ``sound_speed``); flags still 0 of every variable a test examined set to 1 (good);
        ``qc_summary`` (JSON ``{test: {variable: number of values that failed}}``, counts
        added to those of earlier runs) and the step recorded in ``processing_steps``.
    """
    if isinstance(tests, str):
        tests = (tests,)
    plan = list(tests.items()) if isinstance(tests, dict) else [(t, {}) for t in tests]
    for name, _ in plan:
        if name not in TESTS:
            raise SeaprofileError(f"tests: unknown test {name!r}; choose from {', '.join(TESTS)}")
    w = _Work(ds)
    for name, kwargs in plan:
        BODIES[name](w, **(kwargs or {}))
    _propagate(w)
    examined = set(w.examined)
    if "sound_speed" in ds.data_vars and examined & {"temperature", "salinity"}:
        examined.add("sound_speed")
    for var in examined:
        if var in ds.data_vars:
            f = w.flag(var)
            w.flags[var] = np.where(f == _cf.NO_QC, _cf.GOOD, f).astype(np.int8)
    out = w.result()
    out.attrs = _cf.record_step(out.attrs, "quality_control", tests=[n for n, _ in plan])
    return out


def qc_summary(ds):
    """The ``qc_summary`` attribute as a dict ``{test: {variable: count}}`` ({} if none)."""
    return json.loads(ds.attrs.get("qc_summary", "{}") or "{}")
