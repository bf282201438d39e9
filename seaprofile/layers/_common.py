"""Private helpers shared by the profile-diagnostic modules of :mod:`seaprofile.layers`.

Every public layer function takes ``(sound_speed or another profile variable, depth, ...,
dim="depth")`` and goes through :func:`seaprofile.seawater._apply.columnwise`, the
core-dimension dispatcher: numpy profiles have the vertical axis last (depth 1-D or of
the profiles' shape), xarray and dask profiles are reduced along ``dim`` with
``xr.apply_ufunc(..., dask="parallelized")``.
"""

from __future__ import annotations

import math

import numba
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
        raise SeaprofileError(
            "depth must be strictly increasing (the layer functions take "
            "sound_speed first, then depth)"
        )
    return z, c


def _scalar(x):
    return x.item() if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _columns(name, values, depth, dim):
    """The column arguments ``[(name, values), ("depth", depth)]``.

    ``depth=None`` takes the coordinate ``dim`` of a DataArray; a string is read as the
    name of the vertical dimension (the former ``depth="depth"`` calling form).
    """
    if isinstance(depth, str):
        dim, depth = depth, None
    if depth is None:
        coord = getattr(values, "coords", {})
        if dim not in getattr(values, "dims", ()):
            raise SeaprofileError(
                f"depth is required (m, positive down) unless {name} is a DataArray with "
                f"a {dim!r} dimension (pass dim= the vertical dimension)"
            )
        if dim not in coord:
            raise SeaprofileError(f"{name} has no {dim!r} coordinate: give depth")
        depth = values[dim]
    return [(name, values), ("depth", depth)], dim


def _broadcast_profiles(columns, params):
    """Float64 columns (vertical axis last), parameters and the shape of the profile axes."""
    cols = [np.asarray(c, dtype=np.float64) for c in columns]
    if any(c.ndim == 0 for c in cols):
        raise SeaprofileError("profiles need a vertical axis (depth along the last axis)")
    if len({c.shape[-1] for c in cols}) > 1:
        raise SeaprofileError(
            "the profile arrays and depth must have one length along the "
            f"vertical (last) axis, got {[c.shape for c in cols]}"
        )
    params = [np.asarray(p, dtype=np.float64) for p in params]
    try:
        loop = np.broadcast_shapes(*(c.shape[:-1] for c in cols), *(p.shape for p in params))
    except ValueError:
        raise SeaprofileError(
            "the profile axes of the inputs do not broadcast together: "
            f"{[c.shape for c in cols]} and parameters {[p.shape for p in params]}"
        ) from None
    return cols, params, loop


def _per_profile(func1d, dtypes, columns, params=(), vectorised=False):
    """Numpy layer of a column diagnostic: ``func1d`` on each profile (vertical axis last).

    ``func1d(*columns_1d, *params_0d)`` returns a tuple of ``len(dtypes)`` numbers. A
    single profile (1-D columns) is passed as is, with its parameters, when they are
    scalars or when ``func1d`` is ``vectorised`` over them; otherwise the profiles and
    parameters are broadcast and ``func1d`` runs once per profile (a loop over profiles,
    never over samples).
    """
    cols, params, loop = _broadcast_profiles(columns, params)
    single = all(c.ndim == 1 for c in cols)
    if single and (vectorised or loop == ()):
        return func1d(*cols, *[_scalar(p) for p in params])
    n = cols[0].shape[-1]
    rows = [np.broadcast_to(c, loop + (n,)).reshape(-1, n) for c in cols]
    prm = [np.broadcast_to(p, loop).reshape(-1) for p in params]
    count = rows[0].shape[0]
    outs = [np.empty(count, dtype=d) for d in dtypes]
    for r in range(count):
        res = func1d(*(row[r] for row in rows), *(p[r] for p in prm))
        for o, v in zip(outs, res):
            o[r] = v
    return tuple(_scalar(o.reshape(loop)) for o in outs)


def _profile_rows(columns, params=()):
    """Profiles as kernel rows: ``(rows, params, loop_shape)`` without broadcast copies.

    Each column becomes a C-contiguous float64 array of shape ``(count, n)``, or
    ``(1, n)`` when it is the same for every profile (a 1-D depth); each parameter a
    float64 array of shape ``(count,)`` or ``(1,)``. Kernels read row ``r`` of an array
    with ``count`` rows and row 0 of a one-row array, so a shared depth axis is never
    copied once per profile.
    """
    cols, prm, loop = _broadcast_profiles(columns, params)
    n = cols[0].shape[-1]
    rows = [_kernel_rows(c, loop, (n,)) for c in cols]
    flat = [_kernel_rows(p, loop, ()) for p in prm]
    return rows, flat, loop


def _kernel_rows(a, loop, core):
    if all(k == 1 for k in a.shape[: a.ndim - len(core)]):
        return np.ascontiguousarray(a.reshape((1, *core)))
    if a.shape[: a.ndim - len(core)] != loop:
        a = np.broadcast_to(a, loop + core)
    return np.ascontiguousarray(a.reshape((-1, *core)))


def _raise_unsorted(status):
    if status:
        raise SeaprofileError(
            "depth must be strictly increasing (the layer functions take "
            "sound_speed first, then depth)"
        )


@numba.njit(cache=True, nogil=True, inline="always")
def _valid_row(speed, depth, r, zbuf, cbuf):
    """Valid (finite depth and value) samples of row ``r`` into the buffers.

    Returns their count, or -1 when the valid depths do not strictly increase.
    """
    rc = r if speed.shape[0] > 1 else 0
    rz = r if depth.shape[0] > 1 else 0
    m = 0
    for i in range(speed.shape[1]):
        z = depth[rz, i]
        c = speed[rc, i]
        if math.isfinite(z) and math.isfinite(c):
            if m and not z > zbuf[m - 1]:
                return -1
            zbuf[m] = z
            cbuf[m] = c
            m += 1
    return m
