"""Compiled kernels of the pressure <-> depth methods (layer 1 of :mod:`.depth`).

Plain float64 in, float64 out, no checks: the public functions and their citations are in
:mod:`seaprofile.seawater.depth`. Sea pressure in dbar, depth in m positive down, latitude
in degrees north.

Each ``_<name>_kernel`` is a scalar ``@numba.njit(cache=True)`` function of one point and
``_<name>_loop`` runs it over flat contiguous arrays (called through
:func:`._apply.run_loop`). All compile lazily, on first use, and load from numba's on-disk
cache afterwards; nothing is compiled when the package is imported.
"""

from __future__ import annotations

from typing import Any

import numba
import numpy as np

# error_model="numpy": division by zero gives inf/NaN as in numpy, never an exception;
# nogil: the loops release the GIL, as numpy ufunc loops do (dask threads run in parallel)
_JIT: dict[str, Any] = {"cache": True, "nogil": True, "error_model": "numpy"}

_DEG = np.pi / 180.0
_NEWTON_STEPS = 4  # from a first guess good to ~1 m, 2 steps already reach < 1e-9 m


@numba.njit(**_JIT)
def _saunders_c1(lat):
    s = np.sin(lat * _DEG)
    return (5.92 + 5.25 * s * s) * 1e-3


@numba.njit(**_JIT)
def _saunders_depth_kernel(p, lat):
    c1 = _saunders_c1(lat)
    return (1.0 - c1) * p - 2.21e-6 * p * p


@numba.njit(**_JIT)
def _saunders_pressure_kernel(z, lat):
    # root of 2.21e-6 p^2 - (1 - c1) p + z = 0 near p = z, in the cancellation-free form
    a = 1.0 - _saunders_c1(lat)
    return 2.0 * z / (a + np.sqrt(a * a - 4.0 * 2.21e-6 * z))


@numba.njit(**_JIT)
def _unesco_parts(p, lat):
    """UNESCO 1983 depth and d(depth)/d(pressure) at pressure p (dbar)."""
    s = np.sin(lat / 57.29578)
    x = s * s
    gr = 9.780318 * (1.0 + (5.2788e-3 + 2.36e-5 * x) * x) + 1.092e-6 * p
    num = (((-1.82e-15 * p + 2.279e-10) * p - 2.2512e-5) * p + 9.72659) * p
    dnum = ((-4.0 * 1.82e-15 * p + 3.0 * 2.279e-10) * p - 2.0 * 2.2512e-5) * p + 9.72659
    return num / gr, (dnum * gr - num * 1.092e-6) / (gr * gr)


@numba.njit(**_JIT)
def _unesco_depth_kernel(p, lat):
    return _unesco_parts(p, lat)[0]


@numba.njit(**_JIT)
def _unesco_pressure_kernel(z, lat):
    p = _saunders_pressure_kernel(z, lat)  # first guess, within ~1 m
    for _ in range(_NEWTON_STEPS):
        f, df = _unesco_parts(p, lat)
        p -= (f - z) / df
    return p


@numba.njit(**_JIT)
def _leroy_parts(z, lat, common_ocean):
    """Leroy & Parthiot (1998) pressure (dbar) and d(pressure)/d(depth) at depth z (m)."""
    s = np.sin(lat * _DEG)
    g = 9.7803 * (1.0 + 5.3e-3 * s * s)
    h = ((2.8e-19 * z - 1.25e-13) * z + 2.465e-8) * z * z + 1.00818e-2 * z  # MPa
    dh = ((4.0 * 2.8e-19 * z - 3.0 * 1.25e-13) * z + 2.0 * 2.465e-8) * z + 1.00818e-2
    den = 9.80612 - 2e-5 * z
    k = (g - 2e-5 * z) / den
    dk = 2e-5 * (g - 9.80612) / (den * den)
    pr = h * k
    dpr = dh * k + h * dk
    if common_ocean:
        pr -= 1e-2 * z / (z + 100.0) + 6.2e-6 * z
        dpr -= 1.0 / ((z + 100.0) * (z + 100.0)) + 6.2e-6
    return 100.0 * pr, 100.0 * dpr  # MPa -> dbar


@numba.njit(**_JIT)
def _leroy_pressure_kernel(z, lat, common_ocean):
    return _leroy_parts(z, lat, common_ocean)[0]


@numba.njit(**_JIT)
def _leroy_depth_kernel(p, lat, common_ocean):
    z = _saunders_depth_kernel(p, lat)  # first guess, within a few m
    for _ in range(_NEWTON_STEPS):
        f, df = _leroy_parts(z, lat, common_ocean)
        z -= (f - p) / df
    return z


# --- loops over flat arrays: one per public kernel ------------------------------------


@numba.njit(**_JIT)
def _saunders_depth_loop(p, lat, out):
    for i in range(out.size):
        out[i] = _saunders_depth_kernel(p[i], lat[i])


@numba.njit(**_JIT)
def _saunders_pressure_loop(z, lat, out):
    for i in range(out.size):
        out[i] = _saunders_pressure_kernel(z[i], lat[i])


@numba.njit(**_JIT)
def _unesco_depth_loop(p, lat, out):
    for i in range(out.size):
        out[i] = _unesco_depth_kernel(p[i], lat[i])


@numba.njit(**_JIT)
def _unesco_pressure_loop(z, lat, out):
    for i in range(out.size):
        out[i] = _unesco_pressure_kernel(z[i], lat[i])


@numba.njit(**_JIT)
def _leroy_pressure_loop(z, lat, common_ocean, out):
    for i in range(out.size):
        out[i] = _leroy_pressure_kernel(z[i], lat[i], common_ocean)


@numba.njit(**_JIT)
def _leroy_depth_loop(p, lat, common_ocean, out):
    for i in range(out.size):
        out[i] = _leroy_depth_kernel(p[i], lat[i], common_ocean)
