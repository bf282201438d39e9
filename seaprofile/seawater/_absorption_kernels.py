"""Compiled kernels of the sound-absorption formulas (private; see ``absorption.py``).

Each ``_<name>_kernel`` is a scalar ``@numba.njit(cache=True)`` function of one point in
project units (frequency Hz, temperature degC, practical salinity, depth m, pH), returning
dB/km; ``_<name>_loop`` runs it over flat contiguous arrays for
:func:`._apply.run_loop`. They compile lazily, on first use, and load from numba's
on-disk cache afterwards. Formulas, citations and which coefficients are from memory are
in the docstrings of the public functions in :mod:`seaprofile.seawater.absorption`.
"""

from __future__ import annotations

import math
from typing import Any

import numba

_JIT: dict[str, Any] = {"cache": True, "nogil": True, "error_model": "numpy"}

# 1 Np/m = 20 log10(e) dB per m = 8.686 dB/m = 8686 dB/km
_DB_KM_PER_NP_M = 20.0 / math.log(10.0) * 1000.0
# gauge pressure in standard atmospheres per metre of sea water (rho g / 101325 Pa,
# rho = 1025 kg/m3, g = 9.80665 m/s2): an approximation, adequate for F&S's P factors
_ATM_PER_M = 1025.0 * 9.80665 / 101325.0


@numba.njit(**_JIT)
def _relaxation(a, fr, fsq):
    """a fr f^2 / (fr^2 + f^2): one relaxation term."""
    return a * fr * fsq / (fr * fr + fsq)


@numba.njit(**_JIT)
def _francois_garrison1982_kernel(f_hz, t, s, d, ph):
    """Francois & Garrison (1982): f kHz, T degC, S, D m; dB/km."""
    f = 1e-3 * f_hz
    fsq = f * f
    c = 1412.0 + 3.21 * t + 1.19 * s + 0.0167 * d
    theta = t + 273.0
    a1 = 8.86 / c * 10.0 ** (0.78 * ph - 5.0)
    f1 = 2.8 * math.sqrt(s / 35.0) * 10.0 ** (4.0 - 1245.0 / theta) if s >= 0.0 else math.nan
    a2 = 21.44 * s / c * (1.0 + 0.025 * t)
    p2 = 1.0 - 1.37e-4 * d + 6.2e-9 * d * d
    f2 = 8.17 * 10.0 ** (8.0 - 1990.0 / theta) / (1.0 + 0.0018 * (s - 35.0))
    if t <= 20.0:
        a3 = 4.937e-4 + t * (-2.59e-5 + t * (9.11e-7 + t * -1.50e-8))
    else:  # also NaN temperature: NaN either way
        a3 = 3.964e-4 + t * (-1.146e-5 + t * (1.45e-7 + t * -6.5e-10))
    p3 = 1.0 - 3.83e-5 * d + 4.9e-10 * d * d
    return _relaxation(a1, f1, fsq) + p2 * _relaxation(a2, f2, fsq) + a3 * p3 * fsq


@numba.njit(**_JIT)
def _francois_garrison1982_loop(f, t, s, d, ph, out):
    for i in range(out.size):
        out[i] = _francois_garrison1982_kernel(f[i], t[i], s[i], d[i], ph[i])


@numba.njit(**_JIT)
def _ainslie_mccolm1998_kernel(f_hz, t, s, d, ph):
    """Ainslie & McColm (1998): f kHz, T degC, S, z km; dB/km."""
    f = 1e-3 * f_hz
    fsq = f * f
    z = 1e-3 * d
    f1 = 0.78 * math.sqrt(s / 35.0) * math.exp(t / 26.0) if s >= 0.0 else math.nan
    f2 = 42.0 * math.exp(t / 17.0)
    boric = 0.106 * math.exp((ph - 8.0) / 0.56)
    mgso4 = 0.52 * (1.0 + t / 43.0) * (s / 35.0) * math.exp(-z / 6.0)
    water = 0.00049 * fsq * math.exp(-(t / 27.0 + z / 17.0))
    return _relaxation(boric, f1, fsq) + _relaxation(mgso4, f2, fsq) + water


@numba.njit(**_JIT)
def _ainslie_mccolm1998_loop(f, t, s, d, ph, out):
    for i in range(out.size):
        out[i] = _ainslie_mccolm1998_kernel(f[i], t[i], s[i], d[i], ph[i])


@numba.njit(**_JIT)
def _fisher_simmons1977_kernel(f, t, d):
    """Fisher & Simmons (1977): f Hz, T degC, P atm (gauge, from depth); Np/m -> dB/km."""
    fsq = f * f
    p = d * _ATM_PER_M
    theta = t + 273.1
    f1 = 1.32e3 * theta * math.exp(-1700.0 / theta)
    f2 = 1.55e7 * theta * math.exp(-3052.0 / theta)
    a1 = 1.03e-8 + t * (2.36e-10 - 5.22e-12 * t)
    a2 = 5.62e-8 + 7.52e-10 * t
    a3 = (55.9 + t * (-2.37 + t * (4.77e-2 - 3.48e-4 * t))) * 1e-15
    p2 = 1.0 - 10.3e-4 * p + 3.7e-7 * p * p
    p3 = 1.0 - 3.84e-4 * p + 7.57e-8 * p * p
    alpha = _relaxation(a1, f1, fsq) + p2 * _relaxation(a2, f2, fsq) + a3 * p3 * fsq
    return alpha * _DB_KM_PER_NP_M


@numba.njit(**_JIT)
def _fisher_simmons1977_loop(f, t, d, out):
    for i in range(out.size):
        out[i] = _fisher_simmons1977_kernel(f[i], t[i], d[i])


@numba.njit(**_JIT)
def _thorp1967_kernel(f_hz):
    """Thorp (1967) in the dB/km form: f kHz."""
    f = 1e-3 * f_hz
    fsq = f * f
    return 3.3e-3 + 0.11 * fsq / (1.0 + fsq) + 44.0 * fsq / (4100.0 + fsq) + 3.0e-4 * fsq


@numba.njit(**_JIT)
def _thorp1967_loop(f, out):
    for i in range(out.size):
        out[i] = _thorp1967_kernel(f[i])
