"""The Dataset under test, shared by the QC tests and their driver.

:class:`_Work` reads values from a Cast or Profile, keeps their flags and the per-test
summary as numpy arrays and dicts, raises flags with
:func:`seaprofile.casts.flags.raise_flags` and writes everything back once
(:meth:`_Work.result`): a run of several tests copies the Dataset once. :func:`_single` turns a test body working on a :class:`_Work` into a public
test taking and returning a Dataset.
"""

from __future__ import annotations

import json

import numpy as np

from .. import _cf
from .._validate import SeaprofileError
from .flags import raise_where


def _dim(ds):
    if "sample" in ds.dims:
        return "sample"
    if "depth" in ds.dims:
        return "depth"
    raise SeaprofileError("ds must be a Cast (dimension 'sample') or a Profile ('depth')")


def _vertical(ds):
    """Sea pressure (dbar) of every level, or depth (m) when there is no pressure."""
    if "pressure" in ds.data_vars:
        return ds.variables["pressure"].values.astype(np.float64)
    if "depth" in ds.variables:
        return ds.variables["depth"].values.astype(np.float64)
    raise SeaprofileError("ds has neither pressure nor depth")


def _flags(ds, var):
    name = f"{var}_qc"
    if name in ds.variables:
        return ds.variables[name].values.astype(np.int8)
    return np.zeros(ds.sizes[_dim(ds)], np.int8)


class _Work:
    """A Dataset under test: values read from ``ds``, flags and summary kept as numpy/dicts
    and written back once (:meth:`result`), so a run of tests copies the Dataset once."""

    def __init__(self, ds):
        self.ds = ds
        self.dim = _dim(ds)
        self.flags = {}
        self.summary = json.loads(ds.attrs.get("qc_summary", "{}") or "{}")
        self.examined = set()
        self._values = {}

    def flag(self, var):
        if var not in self.flags:
            self.flags[var] = _flags(self.ds, var)
        return self.flags[var]

    def usable(self, var):
        """Values of ``var`` and where they are finite and not flagged 3, 4, 8 or 9.

        The values are read and converted once per run and handed out read-only (tests
        never change them); the flags are looked at afresh on every call."""
        if var not in self._values:
            values = self.ds.variables[var].values.astype(np.float64)
            values.flags.writeable = False
            self._values[var] = (values, np.isfinite(values))
        values, finite = self._values[var]
        return values, finite & ~_cf.flags_in(self.flag(var), _cf.NOT_MEASURED_FLAGS)

    def apply(self, hits, test, flag=_cf.BAD):
        entry = self.summary.setdefault(test, {})
        for var, mask in hits.items():
            self.flags[var] = raise_where(self.flag(var), mask, flag)
            entry[var] = entry.get(var, 0) + int(np.count_nonzero(mask))
            self.examined.add(var)

    def result(self):
        out = self.ds.copy()
        for var, f in self.flags.items():
            name = f"{var}_qc"
            if name in out.variables:
                out.variables[name].data = f  # the copy's own Variable: input untouched
            else:
                out[name] = ((self.dim,), f, _cf.flag_attrs(var))
        out.attrs = dict(self.ds.attrs)
        out.attrs["qc_summary"] = json.dumps(self.summary)
        return out


def _single(test_body):
    """Public test from a body working on :class:`_Work`."""

    def run(ds, **kwargs):
        w = _Work(ds)
        test_body(w, **kwargs)
        return w.result()

    return run


def _present(ds, variables, default):
    if variables is None:
        variables = default
    if isinstance(variables, str):
        variables = (variables,)
    return [v for v in variables if v in ds.data_vars and not _assumed(ds, v)]


def _assumed(ds, var):
    """Salinity assumed rather than measured (expendable probes) is not tested."""
    return var == "salinity" and ds.attrs.get("salinity_assumed", "") == "yes"
