"""Eigenrays: every ray joining a source to each receiver, with travel time and amplitude.

Method (range-independent, exact layered solver of :mod:`seaprofile.propagation.kernels`):

1. trace a dense fan once, sampled only at the receiver ranges (depth, ray-tube width q,
   counts of surface and bottom reflections and turning points). Rays are traced to one
   reflection more than ``max_reflections`` so that a family at the limit still has
   neighbours to bracket with; arrivals above the limit are dropped at the end;
2. between neighbouring fan rays at each receiver range, locate the *special* points where
   z(theta) is not monotone: a **fold** (dz/dtheta_0 changes sign inside one family: a
   caustic; found by Illinois iteration on the exact derivative) and a **kink** (the
   reflection count changes: the boundary ray touches the surface or the bottom; found by
   bisection on the count). A special point is searched only where a receiver depth can
   lie in the bulge it makes (mean-value bound from the end slopes);
3. for every receiver, each sign change of the depth miss ``z(r; theta) - z_receiver``
   between neighbouring rays (split at a special point when there is one) brackets an
   eigenray: z(theta) is continuous at fixed range across families, so every sign change
   is a true root — never a "nearest ray";
4. refine each bracket in a compiled kernel with a safeguarded Newton iteration on the
   launch angle, using the exact derivative dz/dtheta_0 = +-q / cos(theta) from the
   dynamic ray equations (bisection whenever a step leaves the bracket), until the depth
   miss is below 1 micrometre.

Completeness: the search finds every eigenray whose family the fan resolves. Two folds
inside one fan interval (a caustic cusp, where three nearly coincident arrivals merge) or
several family changes inside one interval (rays grazing a boundary far before the
receiver; the edge of a duct, where the depth jumps as rays start to leave it) can hide
arrivals. So the fan is refined adaptively first (``refine=True``): between neighbours
whose surface / bottom reflection counts differ at some receiver range, or whose depths
differ by more than twice what their exact slopes allow, rays are inserted (8 per
interval and level, 3 levels, down to 0.05/64 degree). In the benchmark Munk ocean
(100 ranges x 10 depths) the plain 0.05 degree fan finds 4906 and the refined one 4916
of the 4922 arrivals a 0.005 degree fan finds (0.39 s -> 0.64 s); a 30 m source in a shelf
surface duct (tests) needs it to find its ducted arrivals at all. Pass a denser
``angles`` when completeness matters more than time.

Sources and receivers on the surface or the bottom (a seafloor target, a receiver at the
surface): there the depth z(theta_0) at the receiver range only touches the receiver depth,
at a kink where the boundary ray reflects exactly at the receiver, instead of crossing it.
Such a kink within the depth tolerance is an eigenray, and it is returned **twice**, once
from each side of the kink: the incident path (k reflections) and the reflected one (k + 1),
with equal travel time, spreading loss and arrival angles of opposite sign. These are the
two members of the merging image pair of the method of images (Jensen et al. 2011, ch. 2),
i.e. the limit of a receiver just inside the water, so arrivals are continuous in the
receiver depth. Their coherent sum gives the boundary's field: at the pressure-release
surface the pair has phases 0 and pi and cancels (the pressure there is zero); at the
bottom, taken as rigid here, it doubles. A source on a boundary is the same in reverse:
launches of +theta and -theta join through an immediate reflection. A ray launched
horizontally along a boundary from a source on it is found once from each side of the
launch (the limit of a receiver just inside the water again).

Amplitude: for a point source in a cylindrically symmetric medium the squared pressure
relative to 1 m is 1 / (r |dz/dtheta_0|_r), so the geometric spreading loss is
``10 log10(r |q| / cos theta)`` dB (q: ray-tube width per radian of launch angle). In
isovelocity q is the path length and this is exactly 20 log10(R), R the slant distance
(Jensen, Kuperman, Porter & Schmidt, Computational Ocean Acoustics, 2nd ed., 2011, ch. 3).
Phase: pi per surface reflection (pressure-release) plus pi/2 per caustic (a sign change of
q along the ray); bottom reflections are taken as rigid here (no phase) — the bottom loss and
phase belong to the loss computation, which knows the sediment.
"""

from __future__ import annotations

import numpy as np

from .. import _cf
from .._validate import SeaprofileError, as_float_array
from ._eigenray_kernels import _brackets, _find_specials, _refine
from .codes import MAX_STEPS, check_memory
from .environment import Environment
from .kernels import _gradients, _layer_times, trace_layers
from .pathtable import path_table_dataset

__all__ = ["eigenrays", "DEFAULT_FAN_SPACING"]

#: Launch-angle spacing of the default search fan, degrees.
DEFAULT_FAN_SPACING = 0.05
#: Adaptive refinement of the search fan (see ``_search_fan``): sub-intervals per level,
#: most levels, and the finest spacing, degrees.
REFINE_SPLIT = 8
REFINE_LEVELS = 3
REFINE_MIN_SPACING = DEFAULT_FAN_SPACING / 64.0
DEPTH_TOLERANCE = 1e-6  # m
#: Bytes per (search ray, receiver range): depth, q, angle (3 x 8), counts (4 x 4), the
#: sorted copies of them (40), three special-point arrays (3 x 8).
SEARCH_BYTES = 104


def _check(environment, source_depth, receiver_ranges, receiver_depths, max_reflections, angles):
    if not isinstance(environment, Environment):
        raise SeaprofileError("environment must be a seaprofile Environment")
    zs = as_float_array("source_depth", source_depth)
    if zs.ndim != 0 or not np.isfinite(zs) or not 0 <= zs <= environment.bottom_depth:
        raise SeaprofileError(
            f"source_depth must be one number within 0..{environment.bottom_depth:g} m"
        )
    rr = np.atleast_1d(as_float_array("receiver_ranges", receiver_ranges)).ravel()
    if rr.size == 0 or not np.all(np.isfinite(rr)) or np.any(rr <= 0):
        raise SeaprofileError("receiver_ranges must be positive finite ranges (m)")
    zr = np.atleast_1d(as_float_array("receiver_depths", receiver_depths)).ravel()
    if (
        zr.size == 0
        or not np.all(np.isfinite(zr))
        or np.any(zr < 0)
        or np.any(zr > environment.bottom_depth)
    ):
        raise SeaprofileError(f"receiver_depths must lie within 0..{environment.bottom_depth:g} m")
    mr = as_float_array("max_reflections", max_reflections)
    if mr.ndim != 0 or not np.isfinite(mr) or mr < 0 or mr != np.floor(mr):
        raise SeaprofileError("max_reflections must be one whole number >= 0")
    mr = int(min(float(mr), 2**62))
    if angles is None:
        nfan = int(round(178.0 / DEFAULT_FAN_SPACING)) + 1
        a = np.linspace(-89.0, 89.0, nfan)
    else:
        a = np.sort(as_float_array("angles", angles).ravel())
        if a.size < 2 or not np.all(np.isfinite(a)) or np.any(np.abs(a) > 90):
            raise SeaprofileError(
                "angles must be at least two launch angles within -90..90 degrees"
            )
    # the search fan at every receiver range (depth, q, angle, 4 counts, 3 special-point
    # arrays), estimated before anything is allocated; refinement adds to it
    check_memory(
        float(a.size) * rr.size * SEARCH_BYTES + 16.0 * rr.size * zr.size,
        "receiver_ranges",
        f"a search fan of {a.size} rays at {rr.size} ranges",
        "ask for fewer receiver ranges per call, or a sparser angles fan",
    )
    return float(zs), rr, zr, mr, a


def _trace_search(zn, cn, zs, a, rs, order, max_refl):
    """The search fan sampled at the receiver ranges, in the caller's range order."""
    fan = trace_layers(zn, cn, zs, a, float(rs[-1]), max_refl, samp_r=rs, counts=True)
    out = []
    for name in ("sample_depth", "sample_q", "sample_angle", "sample_counts"):
        v = np.empty_like(fan[name])
        v[:, order] = fan[name]
        out.append(v)
    return out


def _suspect_pairs(th, Z, Q, A, CNT, fan_reflections):
    """Neighbouring fan rays (pairs a, a+1) between which a root may hide at some range.

    Flagged where both rays reach the range and (i) their surface or bottom reflection
    counts differ (a kink, or a jump where a ray grazes a node above a layer that bends
    it down, e.g. the edge of a duct), or (ii) the depth changes between them by more than
    twice what their exact slopes dz/dtheta_0 (from q) allow: z(theta_0) is far from
    linear there (a fold, a near-discontinuity); or (iii) one ray reaches the range and
    the other was stopped before it (more than ``fan_reflections`` reflections) while the
    one that arrives has fewer than ``fan_reflections``: the families in between, at the
    limit, are missing from the fan (a coarse fan at a long range, where every family is
    narrower than the fan spacing).
    """
    reached = np.isfinite(Z)
    valid = reached[:-1] & reached[1:]
    fam = (CNT[:-1, :, 0] != CNT[1:, :, 0]) | (CNT[:-1, :, 1] != CNT[1:, :, 1])
    total = CNT[..., 0] + CNT[..., 1]
    sgn = np.where(total % 2 == 0, 1.0, -1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        slope = np.abs(sgn * Q / np.cos(np.radians(A)))
        allowed = 2.0 * np.fmax(slope[:-1], slope[1:]) * np.diff(th)[:, None] + 1e-6
        jump = np.abs(Z[1:] - Z[:-1]) > allowed
    # counts are -1 where a ray did not reach the range: the max is the arriving ray's
    edge = (reached[:-1] != reached[1:]) & (np.maximum(total[:-1], total[1:]) < fan_reflections)
    return np.any((valid & (fam | jump)) | edge, axis=1)


def _finest_spacing(bottom, max_range):
    """Finest launch-angle spacing of the refinement, degrees.

    REFINE_MIN_SPACING, or finer at long ranges: a ray family spans about one water depth
    at the receiver range, i.e. about ``bottom / range`` rad of launch angle (exact in
    isovelocity water near the horizontal), and the refinement must be able to put a few
    rays inside it.
    """
    return min(REFINE_MIN_SPACING, float(np.degrees(bottom / max_range)) / REFINE_SPLIT)


def _search_fan(zn, cn, zs, a, rs, order, max_refl, refine):
    """Trace the search fan; where neighbours look suspicious (:func:`_suspect_pairs`),
    insert rays between them, level by level (REFINE_SPLIT sub-intervals each), until the
    neighbours agree or are REFINE_MIN_SPACING degrees apart. Returns (angles, Z, Q, A,
    CNT), sorted by angle."""
    Z, Q, A, CNT = _trace_search(zn, cn, zs, a, rs, order, max_refl)
    if not refine:
        return a, Z, Q, A, CNT
    frac = np.arange(1, REFINE_SPLIT) / REFINE_SPLIT
    finest = _finest_spacing(float(zn[-1]), float(rs[-1]))
    levels = REFINE_LEVELS + int(
        np.ceil(np.log(REFINE_MIN_SPACING / finest) / np.log(REFINE_SPLIT) - 1e-9)
    )
    for _ in range(levels):
        width = np.diff(a)
        sel = np.nonzero(_suspect_pairs(np.radians(a), Z, Q, A, CNT, max_refl) & (width > finest))[
            0
        ]
        if sel.size == 0:
            break
        new = (a[sel, None] + width[sel, None] * frac[None, :]).ravel()
        parts = _trace_search(zn, cn, zs, new, rs, order, max_refl)
        srt = np.argsort(np.concatenate([a, new]), kind="stable")
        a = np.concatenate([a, new])[srt]
        Z, Q, A, CNT = (np.concatenate([old, add])[srt] for old, add in zip((Z, Q, A, CNT), parts))
    return a, Z, Q, A, CNT


def eigenrays(
    environment,
    source_depth,
    receiver_ranges,
    receiver_depths,
    *,
    max_reflections=3,
    angles=None,
    refine=True,
):
    """All rays joining the source to each receiver, up to ``max_reflections`` reflections.

    Parameters
    ----------
    environment : Environment
        Range-independent environment (flat bottom).
    source_depth : float
        Source depth, m.
    receiver_ranges : array_like
        Receiver ranges, m (> 0).
    receiver_depths : array_like
        Receiver depths, m (0 .. bottom, both included: see the module notes for what a
        receiver on the surface or the bottom gets). Every range is combined with every
        depth.
    max_reflections : int
        Largest number of surface + bottom reflections of an eigenray.
    angles : array_like, optional
        Launch angles of the search fan, degrees, positive down. Default: -89..89 degrees
        every 0.05 degree. The fan must resolve every ray family at the receivers.
    refine : bool
        Insert search rays where neighbouring fan rays differ in their reflection counts
        or where the depth at a receiver range changes between them much faster than
        their slopes allow (edges of ducts and shadow zones, folds), down to
        ``REFINE_MIN_SPACING`` degrees (default True).

    Returns
    -------
    xr.Dataset
        A PathTable (layout in :mod:`seaprofile.propagation.pathtable`): per path
        (dimension ``path``, sorted by receiver then travel time) its kind, launch and
        arrival angles (degrees, positive down), travel time (s), spreading loss (dB re
        1 m), surface / bottom reflections, caustics, turning points, phase (rad), depth
        miss (m) and receiver indices; ``path_count`` per receiver.

    Notes
    -----
    See the module docstring for the bracketing, the refinement and the amplitude
    (Jensen, Kuperman, Porter & Schmidt, Computational Ocean Acoustics, 2nd ed., Springer
    2011, ch. 3). Arrivals are exact for the piecewise-linear c(z) to about 1 micrometre in
    depth; their count is as complete as the search fan is dense.
    """
    zs, rr, zr, mr, a = _check(
        environment, source_depth, receiver_ranges, receiver_depths, max_reflections, angles
    )
    if environment.is_range_dependent:
        raise SeaprofileError(
            "environment: eigenrays need a range-independent environment (flat bottom, no "
            "section); trace a fan (trace_fan) through a range-dependent one"
        )

    zn, cn = environment.layers()
    order = np.argsort(rr, kind="stable")
    rs = rr[order]
    # one reflection more than allowed, so that a family at the limit still has valid
    # neighbours to bracket with; arrivals above the limit are dropped at the end
    n_fan = a.size
    a, Z, Q, A, CNT = _search_fan(zn, cn, zs, a, rs, order, mr + 1, refine)
    gn = _gradients(zn, cn)
    tl = _layer_times(zn, cn)
    th = np.radians(a)
    sp_th = np.full((a.size - 1, rr.size), np.nan)
    sp_z = np.full((a.size - 1, rr.size), np.nan)
    sp_th_far = np.full((a.size - 1, rr.size), np.nan)
    bottom = float(zn[-1])
    _find_specials(
        zn,
        cn,
        gn,
        tl,
        zs,
        th,
        Z,
        Q,
        A,
        CNT,
        rr,
        zr,
        bottom,
        mr + 1,
        sp_th,
        sp_z,
        sp_th_far,
        MAX_STEPS,
    )
    counts = np.zeros((rr.size, zr.size), dtype=np.int64)
    dummy = np.zeros(0, dtype=np.int64)
    _brackets(
        Z, sp_z, zr, bottom, DEPTH_TOLERANCE, counts, False, counts, dummy, dummy, dummy, dummy
    )
    offsets = np.zeros_like(counts)
    flat = counts.ravel()
    offsets.ravel()[1:] = np.cumsum(flat)[:-1]
    total = int(flat.sum())
    check_memory(
        total * 160.0,
        "receiver_depths",
        f"{total} eigenray brackets at {rr.size * zr.size} receivers",
        "ask for fewer receivers per call, or a smaller max_reflections",
    )
    bk = np.empty(total, dtype=np.int64)
    bj = np.empty(total, dtype=np.int64)
    ba = np.empty(total, dtype=np.int64)
    bs = np.empty(total, dtype=np.int64)
    _brackets(
        Z, sp_z, zr, bottom, DEPTH_TOLERANCE, offsets, True, np.zeros_like(counts), bk, bj, ba, bs
    )
    out_f = np.full((total, 5), np.nan)
    out_i = np.zeros((total, 5), dtype=np.int64)
    _refine(
        zn,
        cn,
        gn,
        tl,
        zs,
        th,
        Z,
        sp_th,
        sp_z,
        sp_th_far,
        rr,
        zr,
        bk,
        bj,
        ba,
        bs,
        mr + 1,
        DEPTH_TOLERANCE,
        out_f,
        out_i,
        MAX_STEPS,
    )
    keep = (out_i[:, 0] == 1) & (out_i[:, 1] + out_i[:, 2] <= mr)
    bk, bj = bk[keep], bj[keep]
    out_f, out_i = out_f[keep], out_i[keep]
    srt = np.lexsort((out_f[:, 1], bj, bk))
    bk, bj, out_f, out_i = bk[srt], bj[srt], out_f[srt], out_i[srt]
    rng = rr[bk]
    cos_arr = np.cos(np.radians(out_f[:, 2]))
    with np.errstate(divide="ignore"):
        loss = 10.0 * np.log10(rng * np.abs(out_f[:, 3]) / cos_arr)
    phase = np.pi * out_i[:, 1] + 0.5 * np.pi * out_i[:, 4]
    attrs = dict(environment.attrs or {})
    attrs.update(
        _cf.base_attrs(**{k: attrs[k] for k in ("processing_steps", "history") if k in attrs})
    )
    attrs = _cf.record_step(
        attrs,
        "eigenrays",
        source_depth_m=zs,
        max_reflections=mr,
        fan_rays=int(n_fan),
        refined_rays=int(a.size - n_fan),
        fan_min_deg=float(a[0]),
        fan_max_deg=float(a[-1]),
        layers=int(zn.size - 1),
    )
    attrs.update(
        title="eigenray paths",
        source_depth=zs,
        max_reflections=mr,
        bottom_depth=float(environment.bottom_depth),
        solver="exact_layered",
        **environment.provenance_attrs(),
    )
    return path_table_dataset(
        rr,
        zr,
        bk,
        bj,
        launch_angle=out_f[:, 0],
        arrival_angle=out_f[:, 2],
        travel_time=out_f[:, 1],
        spreading_loss=loss,
        surface_reflections=out_i[:, 1],
        bottom_reflections=out_i[:, 2],
        caustics=out_i[:, 4],
        turning_points=out_i[:, 3],
        phase=phase,
        depth_miss=out_f[:, 4],
        attrs=attrs,
    )
