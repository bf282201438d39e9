"""The compiled stepper of the range-dependent ray integrator (:mod:`.integrate`).

One ray (:func:`_trace_one`) or a fan in parallel (:func:`_trace_rays`): Dormand-Prince
5(4) steps in arc length, each inside one cell of the medium, boundaries located on the
dense output and landed on exactly, reflections and interface jumps of the dynamic ray
applied there. The loop (:func:`_trace_one`) calls one helper per job: the step and its
control (in :mod:`._integrate_steps`), the cell's boundaries and the first one crossed, the
landing on it, the reflection about the local normal, the cell entered and the output row.
The per-cell helpers are in :mod:`._integrate_cells`; the equations, the method and the
references in the docstring of :mod:`seaprofile.propagation.integrate`.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ._arcs import _sign_change
from ._integrate_cells import (
    _bottom_at,
    _g,
    _interface_dynamic,
    _locate,
    _reflect_dynamic,
    _rhs,
    _root,
    _start_layer,
    _trapped,
)
from ._integrate_steps import (  # noqa: F401
    _DP_A,
    _DP_B,
    _DP_E,
    _DP_P,
    _RIDE_STEP,
    _dense_coefficients,
    _dense_state,
    _dp_error,
    _dp_stages,
    _step_control,
)
from .codes import (  # noqa: F401
    ABSORBED,
    AT_BOTTOM,
    AT_SURFACE,
    BOTTOM_REFLECTION,
    END,
    LAYER_CROSSING,
    LEFT_DOMAIN,
    MAX_STEPS,
    RANGE_REACHED,
    RANGE_SAMPLE,
    RIDE_SINE,
    START,
    STEP_LIMIT,
    SURFACE_REFLECTION,
    TURNING_POINT,
)
from .section import _cell_eval, _find_interval

# boundaries of a cell searched on every step
_B_TOP, _B_NODE, _B_SEABED, _B_RHI, _B_RLO, _B_TURN = 0, 1, 2, 3, 4, 5
# what the far range boundary is
_R_FACE, _R_MAX, _R_SAMPLE = 0, 1, 2

_SAMPLES = 8  # sub-intervals of a step searched for a boundary crossing
# a ray whose |sin(theta)| is below this on a node or a flat boundary that bends it straight
# back runs along it (rounding level; the exact solver uses a 1 micrometre excursion,
# codes.RIDE_DEPTH)
_GRAZING = float(np.sqrt(8.0 * np.finfo(np.float64).eps))


@numba.njit(cache=True, inline="always")
def _cell_boundaries(gc, y, edges, depth, br, bz, i, j, b, next_range, range_kind):
    """Boundary functions g >= 0 of cell (i, j, b) from state y (rows of ``gc``).

    ``next_range``: a range sample or the maximum range ahead, of kind ``range_kind``
    (_R_SAMPLE or _R_MAX), when it comes before the cell's far range face.
    Returns (top, top is the surface, bottom of the layer, seabed slope, far range, what
    it is, near range, sign of zeta).
    """
    ztop = depth[j - 1] if j >= 1 else -np.inf
    top_surface = ztop <= 0.0
    if top_surface:
        ztop = 0.0
    gc[_B_TOP, 1] = 1.0
    gc[_B_TOP, 3] = max(y[1] - ztop, 0.0)
    zbot = depth[j] if j < depth.shape[0] else np.inf
    gc[_B_NODE, 1] = -1.0
    gc[_B_NODE, 3] = max(zbot - y[1], 0.0)
    dbot, slope = _bottom_at(br, bz, b, y[0])
    gc[_B_SEABED, 0] = slope
    gc[_B_SEABED, 1] = -1.0
    gc[_B_SEABED, 3] = max(dbot - y[1], 0.0)
    rhi = edges[i] if i < edges.shape[0] else np.inf
    if b < br.shape[0] and br[b] < rhi:
        rhi = br[b]
    hi_kind = _R_FACE
    if next_range <= rhi:
        rhi = next_range
        hi_kind = range_kind
    gc[_B_RHI, 0] = -1.0
    gc[_B_RHI, 3] = max(rhi - y[0], 0.0)
    rlo = edges[i - 1] if i >= 1 else -np.inf
    if b >= 1 and br[b - 1] > rlo:
        rlo = br[b - 1]
    gc[_B_RLO, 0] = 1.0
    gc[_B_RLO, 3] = max(y[0] - rlo, 0.0)
    zsign = 1.0 if y[3] > 0.0 else (-1.0 if y[3] < 0.0 else 0.0)
    gc[_B_TURN, 2] = zsign
    gc[_B_TURN, 3] = abs(y[3])
    return ztop, top_surface, zbot, slope, rhi, hi_kind, rlo, zsign


@numba.njit(cache=True, inline="always")
def _first_crossing(gc, qd, zsign, top_surface, slope, tol):
    """The first boundary the step crosses: (which, or -1 for none; fraction of the step)."""
    best = 2.0
    which = -1
    xa = 0.0
    for sidx in range(1, _SAMPLES + 1):
        xb = sidx / _SAMPLES
        for w in range(6):
            if not math.isfinite(gc[w, 3]) or (w == _B_TURN and zsign == 0.0):
                continue
            if _g(w, gc, qd, xb)[0] < 0.0:
                x = _root(w, gc, qd, xa, xb)
                # a bottom on a depth node: reflect rather than enter the layer below
                if x < best or (x == best and w == _B_SEABED):
                    best = x
                    which = w
        if which >= 0:
            break
        xa = xb
    if which == _B_TURN:
        # a ray coming back to the surface or the bottom near grazing can turn just beyond
        # it, its depth dipping out of the water between the sampled points. Deeper than
        # ``tol`` (or at a sloping bottom) the dip is real: the ray crossed the boundary
        # before turning and reflects there. Within ``tol`` it is the integration error of
        # a ray that turns on the boundary (one launched horizontally there comes back
        # exactly grazing): see the turning point in _trace_one.
        for w in (_B_TOP, _B_SEABED):
            if w == _B_TOP and not top_surface:
                continue
            gw = _g(w, gc, qd, best)[0]
            if gw < -tol or (gw < 0.0 and w == _B_SEABED and slope != 0.0):
                x = _root(w, gc, qd, xa, best)
                if x <= best:
                    best = x
                    which = w
    return which, best


@numba.njit(cache=True, inline="always")
def _mirror(tr, tz, nur, nuz, cb, gr, gz, yt):
    """Reflect the unit tangent (tr, tz) about the boundary with unit normal (nur, nuz);
    the dynamic ray (q, p in yt[5], yt[6]) jumps with it. Returns (ur, uz, t . n)."""
    tn = tr * nur + tz * nuz
    ur = tr - 2.0 * tn * nur
    uz = tz - 2.0 * tn * nuz
    yt[5], yt[6] = _reflect_dynamic(yt[5], yt[6], cb, gr, gz, tr, tz, ur, uz, nur, nuz, nuz, -nur)
    return ur, uz, tn


@numba.njit(cache=True, inline="always")
def _put_row(out_r, out_z, out_t, out_a, out_q, out_c, out_p, out_k, m, y, c, kind):
    """Write output row m from state y (sound speed c there)."""
    out_r[m] = y[0]
    out_z[m] = y[1]
    out_t[m] = y[4]
    out_a[m] = math.degrees(math.atan2(y[3], y[2]))
    out_q[m] = y[5]
    out_c[m] = c
    out_p[m] = y[6]
    out_k[m] = kind


@numba.njit(cache=True, inline="always")
def _land(which, yt, ztop, top_surface, zbot, br, bz, b, rhi, hi_kind, rlo, max_range):
    """Put the state ``yt`` found on boundary ``which`` exactly on it.

    Returns (point kind, reflects there, the ray ends there).
    """
    reflect = False
    end = False
    if which == _B_TOP:
        yt[1] = ztop
        kind = SURFACE_REFLECTION if top_surface else LAYER_CROSSING
        reflect = top_surface
    elif which == _B_NODE:
        yt[1] = zbot
        kind = LAYER_CROSSING
    elif which == _B_SEABED:
        yt[1] = _bottom_at(br, bz, b, yt[0])[0]
        kind = BOTTOM_REFLECTION
        reflect = True
    elif which == _B_RHI:
        yt[0] = rhi
        kind = LAYER_CROSSING
        if hi_kind == _R_MAX:
            kind = END
            end = True
        elif hi_kind == _R_SAMPLE:
            kind = RANGE_SAMPLE
            end = rhi >= max_range
    elif which == _B_RLO:
        yt[0] = rlo
        kind = LAYER_CROSSING
    else:
        yt[3] = 0.0
        kind = TURNING_POINT
        # a turning point found (within ``tol``) above the surface or below a flat bottom
        # is a grazing reflection: put it on the boundary, where the reflection of a
        # horizontal ray leaves it unchanged. Counted as a turning point, as the exact
        # solver counts a ray that reaches a boundary with p c = 1 there (a horizontal
        # launch on the surface that comes back).
        if top_surface and yt[1] < 0.0:
            yt[1] = 0.0
        dturn = _bottom_at(br, bz, b, yt[0])[0]
        if yt[1] > dturn:
            yt[1] = dturn
    return kind, reflect, end


@numba.njit(cache=True, inline="always")
def _enter_cell(
    coef, ref, edges, depth, br, bz, i, j, b, which, top_surface, yt, tr, tz, cb, gr, gz, ride
):
    """The cell a ray leaving boundary ``which`` of cell (i, j, b) at yt along (tr, tz)
    enters, whether it rides a node or a boundary there, and the jump of the dynamic-ray
    p (yt[6]) for the change of grad c. Returns (i, j, b, ride, tr, tz)."""
    i2, j2, b2 = _locate(edges, depth, br, yt[0], yt[1], tr, tz)
    # the layer entered follows from the boundary crossed, not from the nudged point: a
    # grazing ray (|tz| * _NUDGE below the rounding of z) would otherwise be put back into
    # the layer it leaves, or below the bottom, and stall there
    if which == _B_TOP and not top_surface:
        j2 = j - 1
    elif which == _B_NODE:
        j2 = j + 1
    else:
        j2 = j
    dbot2, slope2 = _bottom_at(br, bz, b2, yt[0])
    if ride and (i2 != i or b2 != b):
        # riding along a node / boundary: does it still hold the ray in this cell?
        ride = _trapped(coef, ref, depth, i2, j2, yt[0], yt[1], dbot2, slope2)
        if not ride:
            j2 = _start_layer(
                coef, ref, depth, i2, _find_interval(depth, yt[1]), yt[1], 0.0, dbot2, yt[0]
            )
    elif (
        not ride
        and abs(tz) < RIDE_SINE
        and (which == _B_TOP or which == _B_NODE or which == _B_SEABED)
    ):
        # grazing a node or a boundary that bends it straight back: run along it
        ride = _trapped(
            coef,
            ref,
            depth,
            i2,
            j2,
            yt[0],
            yt[1],
            dbot2,
            slope2,
            0.0 if abs(tz) < _GRAZING else abs(tz),
        )
    if ride:
        tr = 1.0
        tz = 0.0
    if i2 != i or j2 != j:
        # entering another cell (also right after a reflection on a bottom that lies on a
        # depth node): jump of p for the change of grad c
        c2, gr2, gz2, _, _ = _cell_eval(coef, ref, depth, i2, j2, yt[0], yt[1])
        if j2 != j:
            yt[6] = _interface_dynamic(yt[5], yt[6], cb, tr, tz, 0.0, 1.0, gr2 - gr, gz2 - gz)
        else:
            yt[6] = _interface_dynamic(yt[5], yt[6], cb, tr, tz, 1.0, 0.0, gr2 - gr, gz2 - gz)
    return i2, j2, b2, ride, tr, tz


@numba.njit(cache=True)
def _trace_one(
    coef,
    ref,
    edges,
    depth,
    br,
    bz,
    z0,
    theta0,
    max_range,
    range_step,
    tol,
    max_step,
    dir_scale,
    max_bounces,
    max_steps,
    out_r,
    out_z,
    out_t,
    out_a,
    out_q,
    out_c,
    out_p,
    out_k,
    rf_r,
    rf_a,
    rf_k,
    stats,
):
    """Trace one ray. Fills the point rows (full path, or samples every ``range_step`` m
    when it is > 0) and stats = (points, surface, bottom, turning, caustics, end, steps)."""
    npts = out_r.shape[0]
    sampled = range_step > 0.0
    y = np.empty(7)
    f = np.empty(7)
    yt = np.empty(7)
    yn = np.empty(7)
    k = np.empty((7, 7))
    qd = np.empty((3, 4))
    gc = np.zeros((6, 4))  # per boundary: coefficients of dr, dz, dzeta, and g0

    ct = math.cos(theta0)
    st = math.sin(theta0)
    i, j, b = _locate(edges, depth, br, 0.0, z0, ct, st)
    dbot0, slope0 = _bottom_at(br, bz, b, 0.0)
    j = _start_layer(coef, ref, depth, i, j, z0, st, dbot0)
    c0 = _cell_eval(coef, ref, depth, i, j, 0.0, z0)[0]
    ride = abs(st) < _GRAZING and _trapped(coef, ref, depth, i, j, 0.0, z0, dbot0, slope0)
    y[0] = 0.0
    y[1] = z0
    y[2] = 1.0 / c0 if ride else ct / c0
    y[3] = 0.0 if ride else st / c0
    y[4] = 0.0
    y[5] = 0.0
    y[6] = 1.0 / c0
    _rhs(coef, ref, depth, i, j, y, f, ride)
    _put_row(
        out_r,
        out_z,
        out_t,
        out_a,
        out_q,
        out_c,
        out_p,
        out_k,
        0,
        y,
        c0,
        RANGE_SAMPLE if sampled else START,
    )
    out_a[0] = math.degrees(theta0)
    count = 1
    next_sample = 1
    n_surf = 0
    n_bot = 0
    n_turn = 0
    n_caus = 0
    qsign = 0
    code = -1
    h = min(max_step, 50.0)
    steps = 0
    while code < 0:
        steps += 1
        if steps > max_steps:
            code = STEP_LIMIT
            break
        _dp_stages(coef, ref, depth, i, j, y, f, h, k, yt, yn, ride)
        accepted, hnext = _step_control(
            h, _dp_error(k, h, 1.0 / f[4], dir_scale, tol), max_step, ride
        )
        if not accepted:
            h = hnext
            continue
        _dense_coefficients(k, h, qd)
        if sampled:
            next_range = min(next_sample * range_step, max_range)
        else:
            next_range = max_range
        ztop, top_surface, zbot, slope, rhi, hi_kind, rlo, zsign = _cell_boundaries(
            gc, y, edges, depth, br, bz, i, j, b, next_range, _R_SAMPLE if sampled else _R_MAX
        )
        which, best = _first_crossing(gc, qd, zsign, top_surface, slope, tol)
        kind = RANGE_SAMPLE
        if which < 0:
            for m in range(7):
                y[m] = yn[m]
                f[m] = k[6, m]
            if ride:
                # c(r, z) changes along the cell: does the node still hold the ray?
                dbot1, slope1 = _bottom_at(br, bz, b, y[0])
                if not _trapped(coef, ref, depth, i, j, y[0], y[1], dbot1, slope1):
                    ride = False
                    j = _start_layer(
                        coef, ref, depth, i, _find_interval(depth, y[1]), y[1], 0.0, dbot1, y[0]
                    )
                    _rhs(coef, ref, depth, i, j, y, f, ride)
        else:
            # state on the boundary, from the dense output
            _dense_state(k, y, h, best, yt)
            kind, reflect, end = _land(
                which, yt, ztop, top_surface, zbot, br, bz, b, rhi, hi_kind, rlo, max_range
            )
            if end:
                code = RANGE_REACHED
            if kind == RANGE_SAMPLE:
                next_sample += 1
            elif kind == TURNING_POINT:
                n_turn += 1
            cb, gr, gz, _, _ = _cell_eval(coef, ref, depth, i, j, yt[0], yt[1])
            tr = cb * yt[2]
            tz = cb * yt[3]
            norm = math.hypot(tr, tz)
            tr /= norm
            tz /= norm
            if reflect:
                if which == _B_TOP:
                    nur = 0.0
                    nuz = 1.0
                    n_surf += 1
                else:
                    nn = math.sqrt(1.0 + slope * slope)
                    nur = -slope / nn
                    nuz = 1.0 / nn
                    n_bot += 1
                tr, tz, tn = _mirror(tr, tz, nur, nuz, cb, gr, gz, yt)
                m_rf = n_surf + n_bot - 1
                if m_rf < rf_r.shape[0]:
                    # grazing angle: between the incident ray and the (local) boundary
                    rf_r[m_rf] = yt[0]
                    rf_a[m_rf] = math.degrees(math.asin(min(1.0, abs(tn))))
                    rf_k[m_rf] = AT_SURFACE if which == _B_TOP else AT_BOTTOM
                if n_surf + n_bot > max_bounces:
                    code = ABSORBED
            i, j, b, ride, tr, tz = _enter_cell(
                coef,
                ref,
                edges,
                depth,
                br,
                bz,
                i,
                j,
                b,
                which,
                top_surface,
                yt,
                tr,
                tz,
                cb,
                gr,
                gz,
                ride,
            )
            yt[2] = tr / cb
            yt[3] = tz / cb
            for m in range(7):
                y[m] = yt[m]
            _rhs(coef, ref, depth, i, j, y, f, ride)
        if y[2] < 0.0 and code < 0:
            code = LEFT_DOMAIN  # turned back in range
        # ---- bookkeeping: caustics, and the row (every point, or only range samples) ----
        n_caus += _sign_change(y[5], qsign)
        if y[5] > 0.0:
            qsign = 1
        elif y[5] < 0.0:
            qsign = -1
        if not sampled or (kind == RANGE_SAMPLE and which == _B_RHI):
            if count >= npts:
                code = STEP_LIMIT
                break
            _put_row(
                out_r, out_z, out_t, out_a, out_q, out_c, out_p, out_k, count, y, 1.0 / f[4], kind
            )
            count += 1
        h = hnext
    stats[0] = count
    stats[1] = n_surf
    stats[2] = n_bot
    stats[3] = n_turn
    stats[4] = n_caus
    stats[5] = code
    stats[6] = steps


@numba.njit(cache=True, parallel=True)
def _trace_rays(
    coef,
    ref,
    edges,
    depth,
    br,
    bz,
    z0,
    angles,
    max_range,
    range_step,
    tol,
    max_step,
    dir_scale,
    max_bounces,
    max_steps,
    out_r,
    out_z,
    out_t,
    out_a,
    out_q,
    out_c,
    out_p,
    out_k,
    rf_r,
    rf_a,
    rf_k,
    stats,
):
    """Trace every ray (prange over rays); row n of each output is ray n."""
    for n in numba.prange(angles.shape[0]):
        _trace_one(
            coef,
            ref,
            edges,
            depth,
            br,
            bz,
            z0,
            angles[n],
            max_range,
            range_step,
            tol,
            max_step,
            dir_scale,
            max_bounces,
            max_steps,
            out_r[n],
            out_z[n],
            out_t[n],
            out_a[n],
            out_q[n],
            out_c[n],
            out_p[n],
            out_k[n],
            rf_r[n],
            rf_a[n],
            rf_k[n],
            stats[n],
        )
