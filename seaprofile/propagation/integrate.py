"""Range-dependent ray tracing: the ray equations integrated with an adaptive Runge-Kutta.

Where the sound speed depends on range (a :class:`~seaprofile.propagation.section.Section`)
or the bottom slopes (bathymetry), rays are no longer circular arcs and are integrated
numerically. The state along the arc length ``s`` (m) is (Jensen, Kuperman, Porter &
Schmidt, *Computational Ocean Acoustics*, 2nd ed., Springer 2011, ch. 3: the ray equations
and the dynamic ray equations, doi:10.1007/978-1-4419-8678-8)::

    dr/ds = c xi          dxi/ds   = -c_r / c**2          dt/ds = 1 / c
    dz/ds = c zeta        dzeta/ds = -c_z / c**2
    dq/ds = c p           dp/ds    = -c_nn / c**2 * q

with (xi, zeta) = (cos theta, sin theta) / c the slowness vector, theta the ray angle (down
positive), c_nn the second derivative of c along the ray normal, and the point-source
start q = 0, p = 1 / c_0, so that ``q`` is the distance between neighbouring rays per
radian of launch angle (m/rad; q = s in a uniform medium). Caustics are the zeros of q.

Integration: the explicit Runge-Kutta pair of Dormand & Prince (1980, J. Comput. Appl.
Math. 6(1), 19-26, doi:10.1016/0771-050X(80)90013-3), order 5 with an embedded order-4
error estimate and the quartic dense output of Shampine (1986, Math. Comp. 46(173),
135-150). Every step stays inside one *cell* of the medium (one depth
layer x one range interval x one bathymetry segment), where c(r, z) and the bottom are
polynomials; the cell's polynomials are used for all stages of the step, so the right-hand
side is smooth. Boundaries (layer nodes, cast ranges, bathymetry knots, surface, bottom,
maximum range) are found on the dense-output polynomial by a safeguarded Newton iteration
and landed on exactly. There:

* surface (flat, pressure release) and bottom (piecewise-linear bathymetry): specular
  reflection of the tangent about the local boundary normal, t' = t - 2 (t.n) n;
* dynamic rays: q is kept continuous through reflections (the ray normal is mirrored with
  the ray), and p takes the jump that the curvature of the medium implies at a boundary.
  The jumps are derived here from the kinematics of two neighbouring rays meeting a
  straight boundary (paraxial, first order in the ray offset): with t, n the tangent and
  normal, nu the boundary normal, tau its tangent and kappa = -(grad c . n) / c the ray
  curvature, an interface where grad c jumps by D gives p' = p - q (D.n)(n.nu) /
  (c^2 (t.nu)); a reflection gives the mirrored image of the neighbour's offset and
  direction (see :func:`_reflect_dynamic`). For a horizontal interface this is
  p' = p - q cos^2(theta) D_z / (c^2 sin(theta)), the interface condition of second-order
  interfaces in Cerveny (2001, *Seismic Ray Theory*, Cambridge Univ. Press, ch. 4).

The local error is controlled per step: the largest of the position errors (m), c times
the travel-time error (m) and ``direction_scale`` (1000 m) times the error of the unit
tangent must stay below ``tolerance`` (m). Measured global errors against the exact
layered solver are in the tests and ``benchmarks/bench_range_dependent.py``.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from .._validate import SeaprofileError
from .section import _cell_eval, _find_interval

# --------------------------------------------------------------------------------------
# Dormand-Prince 5(4) tableau (Dormand & Prince 1980) and Shampine (1986) dense
# output; checked against scipy.integrate.RK45 in the tests.
# --------------------------------------------------------------------------------------
_DP_A = np.array(
    [
        [0.0, 0.0, 0.0, 0.0, 0.0],
        [1 / 5, 0.0, 0.0, 0.0, 0.0],
        [3 / 40, 9 / 40, 0.0, 0.0, 0.0],
        [44 / 45, -56 / 15, 32 / 9, 0.0, 0.0],
        [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729, 0.0],
        [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
    ]
)
_DP_B = np.array([35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84])
_DP_E = np.array(
    [-71 / 57600, 0.0, 71 / 16695, -71 / 1920, 17253 / 339200, -22 / 525, 1 / 40]
)
_DP_P = np.array(
    [
        [1.0, -8048581381 / 2820520608, 8663915743 / 2820520608, -12715105075 / 11282082432],
        [0.0, 0.0, 0.0, 0.0],
        [0.0, 131558114200 / 32700410799, -68118460800 / 10900136933,
         87487479700 / 32700410799],
        [0.0, -1754552775 / 470086768, 14199869525 / 1410260304, -10690763975 / 1880347072],
        [0.0, 127303824393 / 49829197408, -318862633887 / 49829197408,
         701980252875 / 199316789632],
        [0.0, -282668133 / 205662961, 2019193451 / 616988883, -1453857185 / 822651844],
        [0.0, 40617522 / 29380423, -110615467 / 29380423, 69997945 / 29380423],
    ]
)

# point kinds and end reasons: the codes of seaprofile.propagation.rays (POINT_KINDS,
# END_REASONS), repeated here as plain integers for the compiled code
_K_START, _K_CROSS, _K_TURN, _K_SURF, _K_BOT, _K_SAMPLE, _K_END = 0, 1, 2, 3, 4, 5, 6
_REACHED, _ABSORBED, _LEFT, _STEPLIMIT = 0, 1, 2, 3

# boundaries of a cell searched on every step
_B_TOP, _B_NODE, _B_SEABED, _B_RHI, _B_RLO, _B_TURN = 0, 1, 2, 3, 4, 5
# what the far range boundary is
_R_FACE, _R_MAX, _R_SAMPLE = 0, 1, 2

_NUDGE = 1e-7  # m: a point this far along the ray decides which cell it enters
_SAMPLES = 8  # sub-intervals of a step searched for a boundary crossing
# a ray whose |sin(theta)| is below this on a node or a flat boundary that bends it straight
# back runs along it (rounding level; the exact solver uses a 1 micrometre excursion,
# kernels._RIDE_DEPTH)
_GRAZING = float(np.sqrt(8.0 * np.finfo(np.float64).eps))
_RIDE_STEP = 50.0  # m: longest step of a ray running along a node or a boundary
_RIDE_DEPTH = 1e-6  # m, and
_RIDE_SINE = 1e-5  # the exact solver's riding rule (kernels._RIDE_DEPTH, _RIDE_SINE)
MAX_STEPS = 20_000_000  # safety stop per ray (trial steps)


# --------------------------------------------------------------------------------------
# kernels
# --------------------------------------------------------------------------------------
@numba.njit(cache=True)
def _rhs(coef, ref, depth, i, j, y, out, ride):
    """Right-hand side of the ray + dynamic ray equations in cell (i, j); returns c.

    ``ride``: the ray runs horizontally along a depth node, the surface or a flat bottom
    that bends it straight back (see :func:`_trapped`): no vertical force.
    """
    c, cr, cz, crr, crz = _cell_eval(coef, ref, depth, i, j, y[0], y[1])
    tr = c * y[2]
    tz = c * y[3]
    # c_nn with the ray normal n = (-tz, tr); c_zz = 0 inside a layer
    cnn = crr * tz * tz - 2.0 * crz * tr * tz
    ic2 = 1.0 / (c * c)
    out[0] = tr
    out[1] = tz
    out[2] = -cr * ic2
    out[3] = 0.0 if ride else -cz * ic2
    out[4] = 1.0 / c
    out[5] = c * y[6]
    out[6] = -cnn * ic2 * y[5]
    return c


@numba.njit(cache=True)
def _bottom_at(br, bz, b, r):
    """Bottom depth (m) and slope dD/dr of bathymetry segment b at range r."""
    nb = br.shape[0]
    if b <= 0:
        return bz[0], 0.0
    if b >= nb:
        return bz[nb - 1], 0.0
    s = (bz[b] - bz[b - 1]) / (br[b] - br[b - 1])
    return bz[b - 1] + s * (r - br[b - 1]), s


@numba.njit(cache=True)
def _locate(edges, depth, br, r, z, tr, tz):
    """Cell indices (range interval, layer, bathymetry segment) the ray is entering."""
    rn = r + _NUDGE * tr
    zn = z + _NUDGE * tz
    return _find_interval(edges, rn), _find_interval(depth, zn), _find_interval(br, rn)


@numba.njit(cache=True)
def _trapped(coef, ref, depth, i, j, r, z, dbot, slope, sine=0.0):
    """Would a horizontal ray at (r, z) stay there? True on a depth node, the surface or a
    flat bottom where the water on both sides bends it back (or not at all): a sound-speed
    minimum in depth, or a boundary with the speed rising away from it. ``j``: the layer
    the ray is in. With ``sine`` > 0 (|sin theta|), also require that the ray would not
    move more than ``_RIDE_DEPTH`` away (c s^2 / (2 |c_z|)) and that s < ``_RIDE_SINE``,
    the exact solver's rule (kernels._RIDE_DEPTH)."""
    on_surface = z <= 0.0
    on_bottom = z >= dbot and slope == 0.0
    k = _find_interval(depth, z) - 1
    on_node = k >= 0 and depth[k] == z
    if not (on_surface or on_bottom or on_node):
        return False
    if sine >= _RIDE_SINE:
        return False
    if not on_surface:
        above = k if on_node else j
        c, _, cz, _, _ = _cell_eval(coef, ref, depth, i, above, r, z)
        if cz > 0.0 or c * sine * sine > -2.0 * cz * _RIDE_DEPTH:
            return False  # bent up into the layer above, or would go too far into it
    if not on_bottom:
        below = k + 1 if on_node else j
        c, _, cz, _, _ = _cell_eval(coef, ref, depth, i, below, r, z)
        if cz < 0.0 or c * sine * sine > 2.0 * cz * _RIDE_DEPTH:
            return False  # bent down into the layer below, or would go too far into it
    return True


@numba.njit(cache=True)
def _start_layer(coef, ref, depth, i, j, z0, st, bottom0, r=0.0):
    """Layer of a ray starting on a depth node when the nudge cannot tell (near-horizontal).

    ``j`` is the layer ``_locate`` found. On node k = j - 1 the ray goes into the layer
    below (j) or above (k) by the sign of its launch sine; a horizontal one goes where the
    gradient bends it (as the exact solver does), never out of the water.
    """
    k = j - 1
    if k < 0 or depth[k] != z0 or z0 + _NUDGE * st != z0:
        return j
    up_ok = z0 > 0.0 and k >= 1
    down_ok = z0 < bottom0
    if st > 0.0:
        return j if down_ok else k
    if st < 0.0:
        return k if up_ok else j
    if down_ok and _cell_eval(coef, ref, depth, i, j, r, z0)[2] < 0.0:
        return j
    if up_ok and _cell_eval(coef, ref, depth, i, k, r, z0)[2] > 0.0:
        return k
    return j if down_ok else k


@numba.njit(cache=True)
def _poly(qc, x):
    """sum_k qc[k] x**(k+1), k = 0..3, and its derivative in x."""
    v = x * (qc[0] + x * (qc[1] + x * (qc[2] + x * qc[3])))
    d = qc[0] + x * (2.0 * qc[1] + x * (3.0 * qc[2] + x * 4.0 * qc[3]))
    return v, d


@numba.njit(cache=True)
def _g(w, gc, qd, x):
    """Boundary function w (>= 0 inside): g0 + a dr(x) + b dz(x) + e dzeta(x), and d/dx."""
    vr, dr = _poly(qd[0], x)
    vz, dz = _poly(qd[1], x)
    ve, de = _poly(qd[2], x)
    v = gc[w, 3] + gc[w, 0] * vr + gc[w, 1] * vz + gc[w, 2] * ve
    d = gc[w, 0] * dr + gc[w, 1] * dz + gc[w, 2] * de
    return v, d


@numba.njit(cache=True)
def _root(w, gc, qd, xa, xb):
    """Crossing of boundary w in [xa, xb] (g(xa) >= 0 > g(xb)): Newton + bisection."""
    x = 0.5 * (xa + xb)
    for _ in range(80):
        v, d = _g(w, gc, qd, x)
        if v >= 0.0:
            xa = x
        else:
            xb = x
        if v == 0.0 or xb - xa < 1e-15:
            break
        xn = x - v / d if d != 0.0 else 0.5 * (xa + xb)
        if not (xa < xn < xb):
            xn = 0.5 * (xa + xb)
        x = xn
    return xa


@numba.njit(cache=True)
def _interface_dynamic(q, p, c, tr, tz, nur, nuz, dgr, dgz):
    """p after crossing a straight interface where grad c jumps by (dgr, dgz).

    Two neighbouring rays cross the interface a distance ds = -q (n.nu)/(t.nu) apart along
    the ray; over that stretch they curve with the curvatures kappa = -(grad c . n)/c of
    the two sides, which changes their angle difference, hence p = (1/c) dtheta/dtheta0,
    by (kappa_1 - kappa_2) ds / c = -q (D.n)(n.nu) / (c^2 (t.nu)).
    """
    nr = -tz
    nz = tr
    tn = tr * nur + tz * nuz
    if tn == 0.0:
        return p
    return p - q * (dgr * nr + dgz * nz) * (nr * nur + nz * nuz) / (c * c * tn)


@numba.njit(cache=True)
def _reflect_dynamic(q, p, c, gr, gz, tr, tz, ur, uz, nur, nuz, taur, tauz):
    """(q, p) after a specular reflection at a straight boundary.

    (tr, tz) incident and (ur, uz) reflected unit tangents, (nur, nuz) the boundary normal,
    (taur, tauz) its tangent, (gr, gz) grad c at the point. The neighbouring incident ray
    (offset q along n, angle c p further) reaches the boundary ds later and a distance
    ``along`` further along it, where its angle offset is mirrored; walking the reflected
    neighbour back to the normal of the reflected central ray gives its offset (q) and
    angle (p) there. The mirror reverses the orientation of the ray normal; the final sign
    change undoes it so that q is continuous (a reflection is not a caustic).
    """
    nir = -tz
    niz = tr
    tn = tr * nur + tz * nuz
    if tn == 0.0:
        return q, p
    ds = -q * (nir * nur + niz * nuz) / tn
    along = q * (nir * taur + niz * tauz) + ds * (tr * taur + tz * tauz)
    kap_i = -(gr * nir + gz * niz) / c
    dth_r = -(c * p + kap_i * ds)
    nrr = -uz
    nrz = ur
    ds_r = -along * (taur * ur + tauz * uz)
    q_r = along * (taur * nrr + tauz * nrz)
    kap_r = -(gr * nrr + gz * nrz) / c
    p_r = (dth_r + kap_r * ds_r) / c
    return -q_r, -p_r


@numba.njit(cache=True)
def _trace_one(coef, ref, edges, depth, br, bz, z0, theta0, max_range, range_step, tol,
               max_step, dir_scale, max_bounces, max_steps,
               out_r, out_z, out_t, out_a, out_q, out_k, stats):
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
    ne = edges.shape[0]
    nd = depth.shape[0]
    nb = br.shape[0]

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
    out_r[0] = 0.0
    out_z[0] = z0
    out_t[0] = 0.0
    out_a[0] = math.degrees(theta0)
    out_q[0] = 0.0
    out_k[0] = _K_SAMPLE if sampled else _K_START
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
            code = _STEPLIMIT
            break
        c = 1.0 / f[4]
        # ---- one Dormand-Prince step of length h, all stages in cell (i, j) -----------
        for m in range(7):
            k[0, m] = f[m]
        for s in range(1, 6):
            for m in range(7):
                acc = 0.0
                for l in range(s):
                    acc += _DP_A[s, l] * k[l, m]
                yt[m] = y[m] + h * acc
            _rhs(coef, ref, depth, i, j, yt, k[s], ride)
        for m in range(7):
            acc = 0.0
            for l in range(6):
                acc += _DP_B[l] * k[l, m]
            yn[m] = y[m] + h * acc
        _rhs(coef, ref, depth, i, j, yn, k[6], ride)
        err = 0.0
        for m in range(5):
            acc = 0.0
            for l in range(7):
                acc += _DP_E[l] * k[l, m]
            e = abs(h * acc)
            if m == 2 or m == 3:
                e *= dir_scale * c
            elif m == 4:
                e *= c
            if e > err:
                err = e
        err /= tol
        if err > 1.0 and h > 1e-6:
            h *= max(0.2, 0.9 * err ** -0.2)
            continue
        hnext = 5.0 * h if err == 0.0 else h * min(5.0, max(0.2, 0.9 * err ** -0.2))
        if hnext > max_step:
            hnext = max_step
        if ride and hnext > _RIDE_STEP:
            hnext = _RIDE_STEP  # where the node stops holding the ray is found to this
        # ---- dense-output polynomials of r, z, zeta over the step --------------------
        for row in range(3):
            comp = row if row < 2 else 3
            for m in range(4):
                acc = 0.0
                for l in range(7):
                    acc += k[l, comp] * _DP_P[l, m]
                qd[row, m] = h * acc
        # ---- boundaries of the cell: g >= 0 inside ----------------------------------
        ztop = depth[j - 1] if j >= 1 else -np.inf
        top_surface = ztop <= 0.0
        if top_surface:
            ztop = 0.0
        gc[_B_TOP, 1] = 1.0
        gc[_B_TOP, 3] = max(y[1] - ztop, 0.0)
        zbot = depth[j] if j < nd else np.inf
        gc[_B_NODE, 1] = -1.0
        gc[_B_NODE, 3] = max(zbot - y[1], 0.0)
        dbot, slope = _bottom_at(br, bz, b, y[0])
        gc[_B_SEABED, 0] = slope
        gc[_B_SEABED, 1] = -1.0
        gc[_B_SEABED, 3] = max(dbot - y[1], 0.0)
        rhi = edges[i] if i < ne else np.inf
        if b < nb and br[b] < rhi:
            rhi = br[b]
        hi_kind = _R_FACE
        if sampled:
            rs = min(next_sample * range_step, max_range)
            if rs <= rhi:
                rhi = rs
                hi_kind = _R_SAMPLE
        elif max_range <= rhi:
            rhi = max_range
            hi_kind = _R_MAX
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
        kind = _K_SAMPLE
        if which < 0:
            for m in range(7):
                y[m] = yn[m]
                f[m] = k[6, m]
            if ride:
                # c(r, z) changes along the cell: does the node still hold the ray?
                dbot1, slope1 = _bottom_at(br, bz, b, y[0])
                if not _trapped(coef, ref, depth, i, j, y[0], y[1], dbot1, slope1):
                    ride = False
                    j = _start_layer(coef, ref, depth, i, _find_interval(depth, y[1]),
                                     y[1], 0.0, dbot1, y[0])
                    _rhs(coef, ref, depth, i, j, y, f, ride)
        else:
            # state on the boundary, from the dense output
            x = best
            for m in range(7):
                acc = 0.0
                for l in range(7):
                    acc += k[l, m] * x * (_DP_P[l, 0] + x * (_DP_P[l, 1] + x * (
                        _DP_P[l, 2] + x * _DP_P[l, 3])))
                yt[m] = y[m] + h * acc
            reflect = False
            if which == _B_TOP:
                yt[1] = ztop
                kind = _K_SURF if top_surface else _K_CROSS
                reflect = top_surface
            elif which == _B_NODE:
                yt[1] = zbot
                kind = _K_CROSS
            elif which == _B_SEABED:
                yt[1] = _bottom_at(br, bz, b, yt[0])[0]
                kind = _K_BOT
                reflect = True
            elif which == _B_RHI:
                yt[0] = rhi
                kind = _K_CROSS
                if hi_kind == _R_MAX:
                    kind = _K_END
                    code = _REACHED
                elif hi_kind == _R_SAMPLE:
                    kind = _K_SAMPLE
                    next_sample += 1
                    if rhi >= max_range:
                        code = _REACHED
            elif which == _B_RLO:
                yt[0] = rlo
                kind = _K_CROSS
            else:
                yt[3] = 0.0
                kind = _K_TURN
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
                tn = tr * nur + tz * nuz
                ur = tr - 2.0 * tn * nur
                uz = tz - 2.0 * tn * nuz
                yt[5], yt[6] = _reflect_dynamic(yt[5], yt[6], cb, gr, gz, tr, tz, ur, uz,
                                                nur, nuz, nuz, -nur)
                tr = ur
                tz = uz
                if n_surf + n_bot > max_bounces:
                    code = _ABSORBED
            i2, j2, b2 = _locate(edges, depth, br, yt[0], yt[1], tr, tz)
            # the layer entered follows from the boundary crossed, not from the nudged
            # point: a grazing ray (|tz| * _NUDGE below the rounding of z) would otherwise
            # be put back into the layer it leaves, or below the bottom, and stall there
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
                    j2 = _start_layer(coef, ref, depth, i2, _find_interval(depth, yt[1]),
                                      yt[1], 0.0, dbot2, yt[0])
            elif (not ride and abs(tz) < _RIDE_SINE
                  and (which == _B_TOP or which == _B_NODE or which == _B_SEABED)):
                # grazing a node or a boundary that bends it straight back: run along it
                ride = _trapped(coef, ref, depth, i2, j2, yt[0], yt[1], dbot2, slope2,
                                0.0 if abs(tz) < _GRAZING else abs(tz))
            if ride:
                tr = 1.0
                tz = 0.0
            if i2 != i or j2 != j:
                # entering another cell (also right after a reflection on a bottom that
                # lies on a depth node): jump of p for the change of grad c
                c2, gr2, gz2, _, _ = _cell_eval(coef, ref, depth, i2, j2, yt[0], yt[1])
                if j2 != j:
                    yt[6] = _interface_dynamic(yt[5], yt[6], cb, tr, tz, 0.0, 1.0,
                                               gr2 - gr, gz2 - gz)
                else:
                    yt[6] = _interface_dynamic(yt[5], yt[6], cb, tr, tz, 1.0, 0.0,
                                               gr2 - gr, gz2 - gz)
            i = i2
            j = j2
            b = b2
            yt[2] = tr / cb
            yt[3] = tz / cb
            for m in range(7):
                y[m] = yt[m]
            _rhs(coef, ref, depth, i, j, y, f, ride)
        if y[2] < 0.0 and code < 0:
            code = _LEFT  # turned back in range
        # ---- bookkeeping -------------------------------------------------------------
        if y[5] > 0.0:
            if qsign < 0:
                n_caus += 1
            qsign = 1
        elif y[5] < 0.0:
            if qsign > 0:
                n_caus += 1
            qsign = -1
        if sampled and kind != _K_SAMPLE:
            pass  # only the range samples are kept
        elif sampled and which != _B_RHI:
            pass  # an ordinary step end
        else:
            if count >= npts:
                code = _STEPLIMIT
                break
            out_r[count] = y[0]
            out_z[count] = y[1]
            out_t[count] = y[4]
            out_a[count] = math.degrees(math.atan2(y[3], y[2]))
            out_q[count] = y[5]
            out_k[count] = kind
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
def _trace_rays(coef, ref, edges, depth, br, bz, z0, angles, max_range, range_step, tol,
                max_step, dir_scale, max_bounces, max_steps,
                out_r, out_z, out_t, out_a, out_q, out_k, stats):
    """Trace every ray (prange over rays); row n of each output is ray n."""
    for n in numba.prange(angles.shape[0]):
        _trace_one(coef, ref, edges, depth, br, bz, z0, angles[n], max_range, range_step,
                   tol, max_step, dir_scale, max_bounces, max_steps, out_r[n], out_z[n],
                   out_t[n], out_a[n], out_q[n], out_k[n], stats[n])


# --------------------------------------------------------------------------------------
# numpy layer
# --------------------------------------------------------------------------------------
def _trace_arrays(coef, ref, edges, depth, bathy_r, bathy_z, source_depth, angles,
                  max_range, *, range_step=None, tolerance=1e-6, max_step=2000.0,
                  max_bounces=100, max_points=2_000_000, direction_scale=1000.0,
                  first_buffer=512):
    """Trace rays on plain arrays (no validation); grows the point buffer when needed.

    Returns a dict: range, depth, travel_time, angle, spreading (ray, point) NaN-padded,
    point_kind (ray, point) -1-padded, and per ray point_count, surface_reflections,
    bottom_reflections, turning_points, caustics, end_reason, steps.
    """
    theta = np.radians(np.asarray(angles, dtype=np.float64).ravel())
    n = theta.size
    step = 0.0 if range_step is None else float(range_step)
    if step > 0:
        buffer = int(np.ceil(max_range / step - 1e-9)) + 2
    else:
        buffer = int(min(max(16, first_buffer), max_points))
    medium = tuple(np.ascontiguousarray(a, dtype=np.float64)
                   for a in (coef, ref, edges, depth, bathy_r, bathy_z))
    todo = np.arange(n)
    rows = [None] * n
    stats_all = np.zeros((n, 7), dtype=np.int64)
    while todo.size:
        m = todo.size
        out = [np.full((m, buffer), np.nan) for _ in range(5)]
        kinds = np.full((m, buffer), -1, dtype=np.int8)
        stats = np.zeros((m, 7), dtype=np.int64)
        _trace_rays(*medium, float(source_depth), theta[todo], float(max_range), step,
                    float(tolerance), float(max_step), float(direction_scale),
                    int(max_bounces), int(MAX_STEPS), *out, kinds, stats)
        full = (stats[:, 5] == _STEPLIMIT) & (stats[:, 0] >= buffer) & (buffer < max_points)
        for local, ray in enumerate(todo):
            if not full[local]:
                cnt = stats[local, 0]
                rows[ray] = [o[local, :cnt] for o in out] + [kinds[local, :cnt]]
                stats_all[ray] = stats[local]
        todo = todo[full]
        buffer = int(min(4 * buffer, max_points))
    width = max(1, int(stats_all[:, 0].max())) if n else 1
    result = {}
    names = ("range", "depth", "travel_time", "angle", "spreading", "point_kind")
    for kk, name in enumerate(names):
        fill, dtype = (-1, np.int8) if name == "point_kind" else (np.nan, np.float64)
        arr = np.full((n, width), fill, dtype=dtype)
        for ray in range(n):
            v = rows[ray][kk]
            arr[ray, : v.size] = v
        result[name] = arr
    for kk, name in enumerate(("point_count", "surface_reflections", "bottom_reflections",
                               "turning_points", "caustics", "end_reason", "steps")):
        result[name] = stats_all[:, kk].copy()
    return result


def _medium_of(environment):
    """The compiled tables of an Environment: (coef, ref, edges, depth, bathy_r, bathy_z)."""
    from .section import Section

    section = environment.section
    if section is None:
        section = Section([0.0], environment.depth, np.asarray(environment.sound_speed)[None, :],
                          range_interpolation="linear")
    if environment.bathymetry is not None:
        br, bz = environment.bathymetry
    else:
        br, bz = np.array([0.0]), np.array([float(environment.bottom_depth)])
    return section._coef, section._ref, section._edges, section.depth, br, bz


def trace_fan_integrated(environment, source_depth, angles, max_range, *, range_step=None,
                         max_bounces=None, tolerance=1e-6, max_step=2000.0,
                         include_spreading=False):
    """Trace a fan of rays through a range-dependent environment by numerical integration.

    Parameters
    ----------
    environment : Environment
        Sound speed c(r, z) from ``environment.section`` (a
        :class:`~seaprofile.propagation.section.Section`; else the range-independent c(z)
        of the environment), flat pressure-release surface, bottom from
        ``environment.bathymetry`` (piecewise linear in range; m) or the flat
        ``bottom_depth`` (m).
    source_depth : float
        Source depth, m (0 .. bottom at range 0), at range 0.
    angles : array_like
        Launch angles, degrees from horizontal, positive down (-90 .. 90).
    max_range : float
        Range where tracing stops, m.
    range_step : float, optional
        Keep only samples at ranges 0, step, 2 step, ..., ``max_range`` (m), landed on
        exactly; default: every step end and every event (layer crossing, turning point,
        reflection, cast range or bathymetry knot crossed, end).
    max_bounces : int, optional
        A ray ends ("absorbed") after more surface + bottom reflections than this
        (default: that of :func:`seaprofile.propagation.rays.trace_fan`).
    tolerance : float
        Local error allowed per integration step, m: position error, c times the travel-time
        error and 1000 m times the error of the unit tangent (see the module notes). The
        global error grows roughly in proportion; measured values are in the tests.
    max_step : float
        Longest integration step (arc length), m.
    include_spreading : bool
        Add ``spreading`` (ray, point): the dynamic-ray q, distance between neighbouring
        rays per radian of launch angle, m/rad (sign changes are caustics).

    Returns
    -------
    xr.Dataset
        A RayFan with the layout of :func:`seaprofile.propagation.rays.rayfan_dataset`
        (``solver="integrated"``). Rays that turn back in range end with ``left_domain``.
        Point kinds: crossings of depth nodes, cast ranges and bathymetry knots are
        ``layer_crossing``; plain integration-step ends are ``range_sample``; the angle
        stored at a reflection point is the reflected one (as the exact solver does).

    Notes
    -----
    Ray equations and dynamic ray equations in arc length (Jensen, Kuperman, Porter &
    Schmidt 2011, *Computational Ocean Acoustics*, 2nd ed., ch. 3), Dormand & Prince (1980) 5(4) pair with Shampine's (1986) dense output;
    specular reflection at the surface and at the local slope of the bathymetry; see the
    module docstring for the boundary handling, the dynamic-ray jump conditions and the
    error control. Valid for the ray (high-frequency) approximation only.
    """
    from .rays import DEFAULT_MAX_BOUNCES, _check_fan_args, rayfan_dataset

    mb_in = DEFAULT_MAX_BOUNCES if max_bounces is None else max_bounces
    zs, a, rmax, mb = _check_fan_args(environment, source_depth, angles, max_range,
                                      range_step, mb_in)
    tol = float(tolerance)
    if not np.isfinite(tol) or tol <= 0:
        raise SeaprofileError(f"tolerance must be a positive number (m), got {tolerance!r}")
    mstep = float(max_step)
    if not np.isfinite(mstep) or mstep <= 0:
        raise SeaprofileError(f"max_step must be a positive number (m), got {max_step!r}")
    out = _trace_arrays(*_medium_of(environment), zs, a, rmax, range_step=range_step,
                        tolerance=tol, max_step=mstep, max_bounces=mb)
    section = environment.section
    ds = rayfan_dataset(
        out["range"], out["depth"], out["travel_time"], out["angle"], out["point_count"], a,
        out["surface_reflections"], out["bottom_reflections"], out["turning_points"],
        out["end_reason"], source_depth=zs, max_range=rmax, max_bounces=mb,
        environment=environment, solver="integrated", point_kind=out["point_kind"],
        caustics=out["caustics"], range_step=range_step,
        step_parameters={
            "tolerance_m": tol,
            "max_step_m": mstep,
            "casts": 1 if section is None else int(section.ranges.size),
            "range_interpolation": "none" if section is None else section.range_interpolation,
            "integration_steps": int(out["steps"].sum()),
        },
    )
    if include_spreading:
        ds["spreading"] = (("ray", "point"), out["spreading"], {
            "long_name": "dynamic-ray spreading q: distance between neighbouring rays per "
                         "radian of launch angle",
            "units": "m rad-1"})
    return ds
