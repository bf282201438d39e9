"""Exact ray tracing through a layered ocean: c(z) piecewise linear between nodes.

Model and closed forms
----------------------
Between two nodes the sound-speed gradient g = dc/dz is constant, so a ray is an arc of a
circle of radius 1 / (|g| p) (a straight line when g = 0), where p = cos(theta) / c is
Snell's invariant (Jensen, Kuperman, Porter & Schmidt, *Computational Ocean Acoustics*,
2nd ed., Springer 2011, ch. 3). Everything is written for a *piece* of arc along which
sin(theta) keeps its sign; mirror the depth axis for up-going pieces (g -> -g) so that
0 <= s_a = |sin theta_a|, s_b = |sin theta_b| and dz = |z_b - z_a|:

* ``K = integral of c ds = dz (c_a + c_b) / (s_a + s_b)`` (from sin^2 = 1 - p^2 c^2;
  no division by g, exact for g = 0 as well);
* range ``dr = p K`` (equivalently (s_a - s_b) / (p g));
* time ``dt = (atanh s_a - atanh s_b) / g`` = ``[ln((1+s_a)/(1+s_b)) + ln(c_b/c_a)] / g``,
  evaluated as ``q1 L(g q1) + q2 L(g q2)`` with ``q1 = p^2 K / (1 + s_b)``,
  ``q2 = dz / c_a`` and ``L(x) = log1p(x)/x`` (L(0) = 1): well conditioned for any g,
  including 0 (straight line, dt = dz / (c sin theta)) and vertical rays (p = 0);
* inside a piece ``s(r) = s_a - p g (r - r_a)`` and the chord has the mean angle:
  ``z - z_a = (r - r_a)(s_a + s)/(cos_a + cos)``, so a ray is sampled at any range exactly;
* a turning point is reached when p c = 1 inside the layer, after
  ``dz = c_a s_a^2 / (cos_a (1 + cos_a) g)``.

Dynamic ray tracing (amplitude): with q the ray-tube width per unit launch angle and P its
slowness counterpart, dq/ds = c P, dP/ds = -c_nn q / c^2 (Jensen et al. 2011, eq. 3.58);
c_nn = 0 inside a linear layer, so P is constant and ``q_b = q_a + P K``. At a node where
the gradient jumps by ``Dg = g_below - g_above``, c_zz is a delta function and P jumps by
``-q Dg cos^2(theta) / (c^2 |sin theta|)``. A flat surface or bottom is treated as the mirror
image of the water (unfolded), i.e. a gradient jump of ``2 g`` (surface) or ``-2 g``
(bottom). Start: q = 0, P = 1/c(source) (point source). A caustic is a sign change of q;
q is linear in K within a piece and continuous at nodes, so counting sign changes at piece
ends counts every caustic.

Grazing (near-horizontal rays at a node or boundary): sines come from ``1 - (p c)^2`` and
carry an absolute error of ~1e-8 there, while depths are exact. Three rules keep the
pieces consistent: (1) the sine sum of a piece never drops below its Snell bound
``p sqrt(|g| dz (c_a + c_b))`` (a source within rounding of a node, where c(z_s) rounds to
the node's c, used to give a piece of near-infinite range); (2) the turning decision uses
the turning depth from s_a^2 as well as p c_b >= 1; (3) sines below 0.01 at a node come from
the Snell increment s_b^2 = s_a^2 - p^2 g dz (c_a + c_b), not from 1 - (p c_b)^2; (4) a
ray that would stay within 1 micrometre of a sound-speed minimum node, or of the surface /
bottom where the layer bends it straight back, runs along it (sine set to 0, only
for sines below 1e-5); a ray reaching the surface or bottom with sine 0 (grazing)
continues as a horizontal ray started there, i.e. along the boundary when the layer would
bend it straight back.

The compiled kernels are in ``_arcs.py`` (numba, ``cache=True``; the fan kernel loops
over rays in parallel with ``prange``); this module holds their numpy entry points.
"""

from __future__ import annotations

import numpy as np

from .._progress import _whole
from .._validate import SeaprofileError
from ._arcs import _fan_kernel
from .codes import (
    FIRST_REFLECTIONS_KEPT,
    MAX_STEPS,
    MAX_STORED_POINTS,  # a module global here, so tests can lower it
    NO_POINT,
    NO_REFLECTION,
    RANGE_SAMPLE,
    REFLECTION_BYTES,
    check_memory,
)

__all__ = ["fan_paths", "fan_samples", "trace_layers"]


def _gradients(zn, cn):
    return np.diff(cn) / np.diff(zn)


def _layer_times(zn, cn):
    """Vertical slowness integral int dz / c across each layer, s (ln(c_b/c_a)/g)."""
    dz = np.diff(zn)
    g = _gradients(zn, cn)
    x = g * dz / cn[:-1]
    with np.errstate(divide="ignore", invalid="ignore"):
        l1 = np.where(x == 0.0, 1.0, np.log1p(x) / np.where(x == 0.0, 1.0, x))
    return dz / cn[:-1] * l1


def trace_layers(
    zn,
    cn,
    zs,
    angles_deg,
    rmax,
    max_bounces,
    samp_r=None,
    *,
    max_points=0,
    counts=False,
    max_steps=MAX_STEPS,
    reflections=0,
    split=None,
):
    """Run the fan kernel; plain arrays in and out (no validation: callers validate).

    Parameters
    ----------
    zn, cn : ndarray
        Layer nodes from 0 to the bottom (m) and sound speed there (m/s).
    zs : float
        Source depth, m.
    angles_deg : ndarray
        Launch angles, degrees, positive down.
    rmax : float
        Range where tracing stops, m.
    max_bounces : int
        Stop after more surface + bottom reflections than this.
    samp_r : ndarray, optional
        Sorted ranges (m, <= rmax) where each ray is sampled.
    max_points : int
        Path points kept per ray (0: none).
    counts : bool
        Also return reflection/turning/caustic counts at each sample.
    reflections : int
        Reflections kept per ray (range, grazing angle, boundary; 0: none).
    split : callable, optional
        ``split(n)`` gives the slices of the rays traced by one compiled call each, in
        order (:meth:`seaprofile._progress.Pieces.split`, which moves a bar); default one
        call for every ray. The result does not depend on it.

    Returns
    -------
    dict of ndarrays
    """
    zn = np.ascontiguousarray(zn, dtype=np.float64)
    cn = np.ascontiguousarray(cn, dtype=np.float64)
    gn = _gradients(zn, cn)
    th = np.radians(np.ascontiguousarray(angles_deg, dtype=np.float64))
    nray = th.size
    samp = np.zeros(0) if samp_r is None else np.ascontiguousarray(samp_r, dtype=np.float64)
    ns = samp.size
    S_z = np.full((nray, ns), np.nan)
    S_t = np.full((nray, ns), np.nan)
    S_a = np.full((nray, ns), np.nan)
    S_q = np.full((nray, ns), np.nan)
    S_c = np.full((nray, ns), np.nan)
    S_p = np.full((nray, ns), np.nan)
    S_cnt = np.full((nray, ns if counts else 0, 4), -1, dtype=np.int32)
    mp = int(max_points)
    P_r, P_z, P_t, P_a, P_c, P_q, P_p = (np.full((nray, mp), np.nan) for _ in range(7))
    P_k = np.full((nray, mp), NO_POINT, dtype=np.int8)
    nrf = int(reflections)
    RF_r = np.full((nray, nrf), np.nan)
    RF_a = np.full((nray, nrf), np.nan)
    RF_k = np.full((nray, nrf), NO_REFLECTION, dtype=np.int8)
    out_int = np.zeros((nray, 7), dtype=np.int64)
    rows = (S_z, S_t, S_a, S_q, S_c, S_p, S_cnt, P_r, P_z, P_t, P_a, P_c, P_q, P_p, P_k)
    rows += (RF_r, RF_a, RF_k, out_int)
    tl = _layer_times(zn, cn)
    # one compiled call per group of rays (one group unless a bar is shown): every ray is
    # traced alone into its own rows, so the groups give the same bytes as one call
    for part in (split or _whole)(nray):
        _fan_kernel(
            zn,
            cn,
            gn,
            tl,
            float(zs),
            th[part],
            float(rmax),
            int(max_bounces),
            samp,
            *(a[part] for a in rows),
            int(max_steps),
        )
    return {
        "sample_depth": S_z,
        "sample_time": S_t,
        "sample_angle": S_a,
        "sample_q": S_q,
        "sample_sound_speed": S_c,
        "sample_p": S_p,
        "sample_counts": S_cnt if counts else None,
        "path_range": P_r,
        "path_depth": P_z,
        "path_time": P_t,
        "path_angle": P_a,
        "path_sound_speed": P_c,
        "path_q": P_q,
        "path_p": P_p,
        "path_kind": P_k,
        "reflection_range": RF_r,
        "grazing_angle": RF_a,
        "reflection_boundary": RF_k,
        "points": out_int[:, 0],
        "surface_reflections": out_int[:, 1],
        "bottom_reflections": out_int[:, 2],
        "turning_points": out_int[:, 3],
        "caustics": out_int[:, 4],
        "end_reason": out_int[:, 5].astype(np.int8),
        "steps": out_int[:, 6],
    }


def _fan_common(out):
    return {
        k: out[k]
        for k in (
            "surface_reflections",
            "bottom_reflections",
            "turning_points",
            "caustics",
            "end_reason",
            "reflection_range",
            "grazing_angle",
            "reflection_boundary",
        )
    }


def _reflections_needed(out):
    total = out["surface_reflections"] + out["bottom_reflections"]
    return int(total.max()) if total.size else 0


def fan_paths(zn, cn, zs, angles_deg, rmax, max_bounces, split=None):
    """Every event point of every ray (two passes: count, then store).

    ``split`` as in :func:`trace_layers` (both passes use it).
    """
    first = trace_layers(zn, cn, zs, angles_deg, rmax, max_bounces, max_points=0, split=split)
    mp = int(first["points"].max()) if first["points"].size else 1
    if mp * first["points"].size > MAX_STORED_POINTS:
        raise SeaprofileError(
            f"range_step: keeping every event point needs {mp} points x "
            f"{first['points'].size} rays (about {mp * first['points'].size * 57 / 1e9:.3g} GB);"
            f" give range_step to sample the rays instead"
        )
    out = trace_layers(
        zn,
        cn,
        zs,
        angles_deg,
        rmax,
        max_bounces,
        max_points=mp,
        reflections=_reflections_needed(first),
        split=split,
    )
    res = _fan_common(out)
    res.update(
        range=out["path_range"],
        depth=out["path_depth"],
        travel_time=out["path_time"],
        angle=out["path_angle"],
        sound_speed=out["path_sound_speed"],
        tube_width=out["path_q"],
        tube_slowness=out["path_p"],
        point_kind=out["path_kind"],
        point_count=np.minimum(out["points"], mp),
        steps=out["steps"],
    )
    return res


def fan_samples(zn, cn, zs, angles_deg, ranges, max_bounces, split=None):
    """Each ray sampled at the given ranges (m); NaN after the ray ended.

    ``split`` as in :func:`trace_layers`.
    """
    rmax = float(ranges[-1])
    room = min(int(max_bounces) + 1, FIRST_REFLECTIONS_KEPT)
    nray = np.size(angles_deg)
    check_memory(
        nray * float(room) * REFLECTION_BYTES,
        "angles",
        f"{nray} rays x {room} reflections",
        "trace fewer angles at a time",
    )
    fan = (zn, cn, zs, angles_deg, rmax, max_bounces)
    out = trace_layers(*fan, samp_r=ranges, reflections=room, split=split)
    need = _reflections_needed(out)
    if need > room:  # a few long rays: trace again with room for every reflection
        check_memory(
            nray * float(need) * REFLECTION_BYTES,
            "max_bounces",
            f"{nray} rays x {need} reflections",
            "lower max_bounces",
        )
        out = trace_layers(*fan, samp_r=ranges, reflections=need, split=split)
    else:
        for k in ("reflection_range", "grazing_angle", "reflection_boundary"):
            out[k] = out[k][:, :need]
    nray = out["sample_depth"].shape[0]
    rr = np.broadcast_to(np.asarray(ranges, dtype=np.float64), (nray, len(ranges))).copy()
    valid = np.isfinite(out["sample_depth"])
    rr[~valid] = np.nan
    kind = np.where(valid, RANGE_SAMPLE, NO_POINT).astype(np.int8)
    res = _fan_common(out)
    res.update(
        range=rr,
        depth=out["sample_depth"],
        travel_time=out["sample_time"],
        angle=out["sample_angle"],
        sound_speed=out["sample_sound_speed"],
        tube_width=out["sample_q"],
        tube_slowness=out["sample_p"],
        point_kind=kind,
        point_count=valid.sum(axis=1).astype(np.int32),
        steps=out["steps"],
    )
    return res
