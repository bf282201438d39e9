"""Dormand-Prince 5(4) steps of the range-dependent ray integrator (:mod:`.integrate`).

The tableau and dense output, one step with its error estimate, the step-size control and
the state inside a step, for the stepper in :mod:`._integrate_kernels`; the equations, the
method and the references are in the docstring of :mod:`seaprofile.propagation.integrate`.
"""

from __future__ import annotations

import numba
import numpy as np

from ._integrate_cells import _rhs

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
_DP_E = np.array([-71 / 57600, 0.0, 71 / 16695, -71 / 1920, 17253 / 339200, -22 / 525, 1 / 40])
_DP_P = np.array(
    [
        [1.0, -8048581381 / 2820520608, 8663915743 / 2820520608, -12715105075 / 11282082432],
        [0.0, 0.0, 0.0, 0.0],
        [0.0, 131558114200 / 32700410799, -68118460800 / 10900136933, 87487479700 / 32700410799],
        [0.0, -1754552775 / 470086768, 14199869525 / 1410260304, -10690763975 / 1880347072],
        [0.0, 127303824393 / 49829197408, -318862633887 / 49829197408, 701980252875 / 199316789632],
        [0.0, -282668133 / 205662961, 2019193451 / 616988883, -1453857185 / 822651844],
        [0.0, 40617522 / 29380423, -110615467 / 29380423, 69997945 / 29380423],
    ]
)


_RIDE_STEP = 50.0  # m: longest step of a ray running along a node or a boundary


@numba.njit(cache=True, inline="always")
def _dp_stages(coef, ref, depth, i, j, y, f, h, k, yt, yn, ride):
    """One Dormand-Prince step of length h from y (slope f), all stages in cell (i, j).

    Fills the stage slopes ``k`` (row 6: the slope at the end) and the 5th-order end
    state ``yn``.
    """
    for m in range(7):
        k[0, m] = f[m]
    for s in range(1, 6):
        for m in range(7):
            acc = 0.0
            for st in range(s):
                acc += _DP_A[s, st] * k[st, m]
            yt[m] = y[m] + h * acc
        _rhs(coef, ref, depth, i, j, yt, k[s], ride)
    for m in range(7):
        acc = 0.0
        for st in range(6):
            acc += _DP_B[st] * k[st, m]
        yn[m] = y[m] + h * acc
    _rhs(coef, ref, depth, i, j, yn, k[6], ride)


@numba.njit(cache=True, inline="always")
def _dp_error(k, h, c, dir_scale, tol):
    """Error estimate of the step over ``tol`` (r, z in m; slowness and time scaled to m);
    NaN when a component is NaN."""
    err = 0.0
    for m in range(5):
        acc = 0.0
        for st in range(7):
            acc += _DP_E[st] * k[st, m]
        e = abs(h * acc)
        if m == 2 or m == 3:
            e *= dir_scale * c
        elif m == 4:
            e *= c
        if e > err or e != e:
            err = e  # a NaN component makes the estimate NaN (never skipped)
        if err != err:
            break
    return err / tol


@numba.njit(cache=True, inline="always")
def _step_control(h, err, max_step, ride):
    """Accept the step or not: (accepted, length of the next step or of the retry)."""
    if err != err:
        # no error estimate (NaN): a stage went where the cell's polynomials extend to
        # nonsense (a long step into a short range interval of a spline section); reject
        # and shrink, never accept it
        return False, h * 0.2
    if err > 1.0 and h > 1e-6:
        return False, h * max(0.2, 0.9 * err**-0.2)
    hnext = 5.0 * h if err == 0.0 else h * min(5.0, max(0.2, 0.9 * err**-0.2))
    if hnext > max_step:
        hnext = max_step
    if ride and hnext > _RIDE_STEP:
        hnext = _RIDE_STEP  # where the node stops holding the ray is found to this
    return True, hnext


@numba.njit(cache=True, inline="always")
def _dense_coefficients(k, h, qd):
    """Dense-output polynomials of r, z and zeta over the step (rows of ``qd``)."""
    for row in range(3):
        comp = row if row < 2 else 3
        for m in range(4):
            acc = 0.0
            for st in range(7):
                acc += k[st, comp] * _DP_P[st, m]
            qd[row, m] = h * acc


@numba.njit(cache=True, inline="always")
def _dense_state(k, y, h, x, out):
    """State at fraction x of the step, from the dense output."""
    for m in range(7):
        acc = 0.0
        for st in range(7):
            acc += (
                k[st, m]
                * x
                * (_DP_P[st, 0] + x * (_DP_P[st, 1] + x * (_DP_P[st, 2] + x * _DP_P[st, 3])))
            )
        out[m] = y[m] + h * acc
