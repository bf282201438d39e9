"""Ray fans: many rays from one source, as one ``RayFan`` Dataset (:mod:`.rayfan`).

:func:`trace_fan` checks the arguments and dispatches: range-independent environments go
to the exact layered solver (:mod:`.kernels`), range-dependent ones to the integrator
(:mod:`.integrate`). Both fill the same record, built in :mod:`.rayfan`; the codes of
``point_kind`` and ``end_reason`` are in :mod:`.codes`.
"""

from __future__ import annotations

import numpy as np

from .. import _progress
from . import codes, integrate, kernels
from .codes import DEFAULT_MAX_BOUNCES
from .rayfan import check_fan_args, rayfan_from_output

__all__ = ["trace_fan"]


def trace_fan(
    environment,
    source_depth,
    angles,
    max_range,
    *,
    range_step=None,
    max_bounces=DEFAULT_MAX_BOUNCES,
    progress=False,
):
    """Trace a fan of rays from one source.

    Parameters
    ----------
    environment : Environment
        Sound speed, surface and bottom. Range-dependent environments (a section or a
        sloping bottom) go to the numerical integrator
        (:func:`seaprofile.propagation.integrate.trace_fan_integrated`).
    source_depth : float
        Source depth, m (0 .. bottom).
    angles : array_like
        Launch angles, degrees from horizontal, positive down (-90 .. 90).
    max_range : float
        Range at which tracing stops, m.
    range_step : float, optional
        If given, each ray is sampled at ranges 0, step, 2 step, ... and ``max_range``
        instead of keeping every layer crossing, turning point and reflection (m). Use it
        for large fans: memory is rays x samples.
    max_bounces : int
        A ray is stopped ("absorbed") after more surface + bottom reflections than this.
    progress : bool
        Show a progress bar on stderr for a large fan (at least
        :data:`~seaprofile.propagation.codes.PROGRESS_RAYS` rays; range-dependent:
        :data:`~seaprofile.propagation.codes.PROGRESS_RAYS_INTEGRATED`), only when stderr
        is a terminal (:mod:`seaprofile._progress`). The rays are then traced in a few
        groups (:class:`seaprofile._progress.Pieces`), one compiled call each; every ray
        is traced alone, so the result is the same to the bit with or without the bar.

    Returns
    -------
    xr.Dataset
        RayFan (layout in :mod:`seaprofile.propagation.rayfan`).

    Notes
    -----
    Range-independent c(z), piecewise linear between nodes: each ray is an exact circular
    arc in every layer, with Snell's invariant p = cos(theta)/c (Jensen, Kuperman, Porter &
    Schmidt, Computational Ocean Acoustics, 2nd ed., Springer 2011, ch. 3). The closed
    forms are in :mod:`seaprofile.propagation.kernels`.
    """
    zs, a, rmax, mb = check_fan_args(
        environment, source_depth, angles, max_range, range_step, max_bounces
    )
    if environment.is_range_dependent:
        return integrate.trace_fan_integrated(
            environment, zs, a, rmax, range_step=range_step, max_bounces=mb, progress=progress
        )
    zn, cn = environment.layers()
    large = a.size >= codes.PROGRESS_RAYS
    # every event point: two passes over the rays (count, then store)
    passes = 2 if range_step is None else 1
    with _progress.pieces(
        passes * a.size, progress=progress, large=large, desc="tracing rays"
    ) as groups:
        if range_step is None:
            out = kernels.fan_paths(zn, cn, zs, a, rmax, mb, split=groups.split)
        else:
            n = int(np.ceil(rmax / float(range_step) - 1e-9))
            ranges = np.minimum(np.arange(n + 1) * float(range_step), rmax)
            out = kernels.fan_samples(zn, cn, zs, a, ranges, mb, split=groups.split)
    return rayfan_from_output(
        out,
        a,
        source_depth=zs,
        max_range=rmax,
        max_bounces=mb,
        environment=environment,
        solver="exact_layered",
        range_step=range_step,
        step_parameters={"layers": int(zn.size - 1)},
    )
