"""Cell-level pieces of the range-dependent ray integrator (:mod:`.integrate`).

Compiled helpers that the stepper (:mod:`._integrate_kernels`) calls inside one cell of the
medium (one depth layer x one range interval x one bathymetry segment): the ray and
dynamic ray equations, the bottom, which cell a ray enters, whether a horizontal ray rides
a node or a boundary, the boundary functions on the dense output and their roots, and the
jumps of the dynamic-ray p at interfaces and reflections. The equations, the method and
the references are in the docstring of :mod:`seaprofile.propagation.integrate`.
"""

from __future__ import annotations

import numba

from .codes import RIDE_DEPTH, RIDE_SINE  # the exact solver's riding rule
from .section import _cell_eval, _find_interval

_NUDGE = 1e-7  # m: a point this far along the ray decides which cell it enters


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
    move more than ``RIDE_DEPTH`` away (c s^2 / (2 |c_z|)) and that s < ``RIDE_SINE``,
    the exact solver's rule (codes.RIDE_DEPTH)."""
    on_surface = z <= 0.0
    on_bottom = z >= dbot and slope == 0.0
    k = _find_interval(depth, z) - 1
    on_node = k >= 0 and depth[k] == z
    if not (on_surface or on_bottom or on_node):
        return False
    if sine >= RIDE_SINE:
        return False
    if not on_surface:
        above = k if on_node else j
        c, _, cz, _, _ = _cell_eval(coef, ref, depth, i, above, r, z)
        if cz > 0.0 or c * sine * sine > -2.0 * cz * RIDE_DEPTH:
            return False  # bent up into the layer above, or would go too far into it
    if not on_bottom:
        below = k + 1 if on_node else j
        c, _, cz, _, _ = _cell_eval(coef, ref, depth, i, below, r, z)
        if cz < 0.0 or c * sine * sine > 2.0 * cz * RIDE_DEPTH:
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
