"""Compiled helpers of the validity-box checks of :mod:`.soundspeed`.

:func:`in_box` says point by point whether inputs lie in an equation's box (for
``validity_mask``); the one-pass range behind ``OutsideValidityWarning`` is
:func:`seaprofile._validate.value_range`. Kernels compile lazily (``cache=True``).
"""

from __future__ import annotations

from typing import Any

import numba
import numpy as np

from ._apply import run_loop

_JIT: dict[str, Any] = {"cache": True, "nogil": True, "error_model": "numpy"}


@numba.njit(**_JIT)
def _in_box_kernel(t, s, v, t_lo, t_hi, s_lo, s_hi, v_lo, v_hi):
    """True where (t, s, v) lies inside the closed box; NaN gives False."""
    if t != t or s != s or v != v:  # NaN: quiet test first, no "invalid" FP warning
        return False
    return t_lo <= t <= t_hi and s_lo <= s <= s_hi and v_lo <= v <= v_hi


@numba.njit(**_JIT)
def _in_box_loop(t, s, v, t_lo, t_hi, s_lo, s_hi, v_lo, v_hi, out):
    for i in range(out.size):
        out[i] = _in_box_kernel(t[i], s[i], v[i], t_lo, t_hi, s_lo, s_hi, v_lo, v_hi)


def in_box(temperature, salinity, vertical, box):
    """True where the point lies in ``box = (t_lo, t_hi, s_lo, s_hi, v_lo, v_hi)``.

    Broadcasts like a ufunc and accepts numpy, dask and xarray inputs; NaN gives False.
    """
    return run_loop(
        _in_box_loop,
        (temperature, salinity, vertical),
        extra=tuple(float(x) for x in box),
        dtype=np.bool_,
        names=("temperature", "salinity", "vertical coordinate"),
    )
