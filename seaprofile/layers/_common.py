"""Private helpers shared by the profile-diagnostic modules of :mod:`seaprofile.layers`."""

from __future__ import annotations

import numpy as np

from .._validate import SeaprofileError, as_float_array


def _valid_1d(depth, sound_speed):
    z = as_float_array("depth", depth)
    c = as_float_array("sound_speed", sound_speed)
    if z.ndim != 1 or c.shape != z.shape:
        raise SeaprofileError(
            f"depth and sound_speed must be 1-D of one length, got {z.shape} and {c.shape}"
        )
    ok = np.isfinite(z) & np.isfinite(c)
    z, c = z[ok], c[ok]
    if z.size and not np.all(np.diff(z) > 0):
        raise SeaprofileError("depth must be strictly increasing")
    return z, c


def _scalar(x):
    return x.item() if isinstance(x, np.ndarray) and x.ndim == 0 else x
