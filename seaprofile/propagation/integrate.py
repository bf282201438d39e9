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
  reflection of the tangent about the local boundary normal, t' = t - 2 (t.n) n. A ray
  that comes back to the surface or a flat bottom exactly grazing (e.g. launched
  horizontally there) turns on it: a turning point found beyond it by no more than
  ``tolerance`` is put on it (the grazing reflection of a horizontal ray changes nothing);
  a deeper excursion, or one beyond a sloping bottom, is a crossing, reflected there;
* dynamic rays: q is kept continuous through reflections (the ray normal is mirrored with
  the ray), and p takes the jump that the curvature of the medium implies at a boundary.
  The jumps are derived here from the kinematics of two neighbouring rays meeting a
  straight boundary (paraxial, first order in the ray offset): with t, n the tangent and
  normal, nu the boundary normal, tau its tangent and kappa = -(grad c . n) / c the ray
  curvature, an interface where grad c jumps by D gives p' = p - q (D.n)(n.nu) /
  (c^2 (t.nu)); a reflection gives the mirrored image of the neighbour's offset and
  direction (see ``_integrate_cells._reflect_dynamic``). For a horizontal interface this
  is p' = p - q cos^2(theta) D_z / (c^2 sin(theta)), the interface condition of second-order
  interfaces in Cerveny (2001, *Seismic Ray Theory*, Cambridge Univ. Press, ch. 4).

The local error is controlled per step: the largest of the position errors (m), c times
the travel-time error (m) and ``direction_scale`` (1000 m) times the error of the unit
tangent must stay below ``tolerance`` (m). Measured global errors against the exact
layered solver are in the tests and ``benchmarks/bench_range_dependent.py``.
"""

from __future__ import annotations

import numpy as np

from .. import _progress
from .._progress import _whole
from .._validate import SeaprofileError
from . import codes as _codes

# the compiled stepper; the tableau is re-exported for the tests
from ._integrate_kernels import _DP_A, _DP_B, _DP_E, _DP_P, _RIDE_STEP, _trace_rays  # noqa: F401
from .codes import (
    DEFAULT_MAX_BOUNCES,
    FAN_POINT_BYTES,
    FIRST_REFLECTIONS_KEPT,
    MAX_STEPS,
    NO_POINT,
    NO_REFLECTION,
    REFLECTION_BYTES,
    STEP_LIMIT,
    check_memory,
)
from .rayfan import check_fan_args, rayfan_from_output
from .section import Section


# --------------------------------------------------------------------------------------
# numpy layer
# --------------------------------------------------------------------------------------
def _trace_arrays(
    coef,
    ref,
    edges,
    depth,
    bathy_r,
    bathy_z,
    source_depth,
    angles,
    max_range,
    *,
    range_step=None,
    tolerance=1e-6,
    max_step=2000.0,
    max_bounces=100,
    max_points=2_000_000,
    direction_scale=1000.0,
    first_buffer=512,
    split=None,
):
    """Trace rays on plain arrays (no validation); grows the point buffer when needed.

    ``split(n)`` (optional, :meth:`seaprofile._progress.Pieces.split`) gives the groups of
    rays integrated by one compiled call each; default one call per round. The result
    does not depend on it.

    Returns a dict: range, depth, travel_time, angle, tube_width (q), sound_speed,
    tube_slowness (p) (ray, point) NaN-padded,
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
    medium = tuple(
        np.ascontiguousarray(a, dtype=np.float64)
        for a in (coef, ref, edges, depth, bathy_r, bathy_z)
    )
    todo = np.arange(n)
    rounds = []  # (rays finished in the round, their point and reflection rows)
    stats_all = np.zeros((n, 7), dtype=np.int64)
    room = min(int(max_bounces) + 1, FIRST_REFLECTIONS_KEPT)  # reflections kept per ray
    while todo.size:
        m = todo.size
        check_memory(
            m * float(buffer) * FAN_POINT_BYTES,
            "range_step",
            f"keeping every integration point of {m} rays ({buffer} points each)",
            "give range_step to sample the rays, or trace fewer angles",
        )
        out = [np.full((m, buffer), np.nan) for _ in range(7)]
        kinds = np.full((m, buffer), NO_POINT, dtype=np.int8)
        refl = [
            np.full((m, room), np.nan),
            np.full((m, room), np.nan),
            np.full((m, room), NO_REFLECTION, dtype=np.int8),
        ]
        stats = np.zeros((m, 7), dtype=np.int64)
        th = theta[todo]
        rows = (*out, kinds, *refl, stats)
        # one compiled call per group of rays (one group unless a bar is shown): each ray
        # is integrated alone into its own rows, so the groups give the same bytes
        for part in (split or _whole)(m):
            _trace_rays(
                *medium,
                float(source_depth),
                th[part],
                float(max_range),
                step,
                float(tolerance),
                float(max_step),
                float(direction_scale),
                int(max_bounces),
                int(MAX_STEPS),
                *(a[part] for a in rows),
            )
        full = (stats[:, 5] == STEP_LIMIT) & (stats[:, 0] >= buffer) & (buffer < max_points)
        nrefl = stats[:, 1] + stats[:, 2]
        again = full | (nrefl > room)
        done = ~again
        # rows beyond each ray's count keep their fill (NaN / -1): copied as they are
        rounds.append((todo[done], [a[done] for a in out + [kinds] + refl]))
        stats_all[todo[done]] = stats[done]
        todo = todo[again]
        if np.any(full):
            buffer = int(min(4 * buffer, max_points))
        if np.any(again & ~full):
            room = int(nrefl[again].max())
            check_memory(
                todo.size * float(room) * REFLECTION_BYTES,
                "max_bounces",
                f"{todo.size} rays x {room} reflections",
                "lower max_bounces",
            )
    width = max(1, int(stats_all[:, 0].max())) if n else 1
    result = {}
    names = (
        "range",
        "depth",
        "travel_time",
        "angle",
        "tube_width",
        "sound_speed",
        "tube_slowness",
        "point_kind",
        "reflection_range",
        "grazing_angle",
        "reflection_boundary",
    )
    widths = (width,) * 8 + (int((stats_all[:, 1] + stats_all[:, 2]).max()) if n else 0,) * 3
    for kk, name in enumerate(names):
        fill, dtype = (
            (NO_POINT, np.int8)
            if name == "point_kind"
            else (NO_REFLECTION, np.int8)
            if name == "reflection_boundary"
            else (np.nan, np.float64)
        )
        arr = np.full((n, widths[kk]), fill, dtype=dtype)
        for rays, rows in rounds:  # a few rounds (the buffer grows 4x each), not rays
            w = min(widths[kk], rows[kk].shape[1])
            arr[rays, :w] = rows[kk][:, :w]
        result[name] = arr
    for kk, name in enumerate(
        (
            "point_count",
            "surface_reflections",
            "bottom_reflections",
            "turning_points",
            "caustics",
            "end_reason",
            "steps",
        )
    ):
        result[name] = stats_all[:, kk].copy()
    return result


def _medium_of(environment):
    """The compiled tables of an Environment: (coef, ref, edges, depth, bathy_r, bathy_z)."""
    section = environment.section
    if section is None:
        section = Section(
            [0.0],
            environment.depth,
            np.asarray(environment.sound_speed)[None, :],
            range_interpolation="linear",
        )
    bathymetry = environment.bathymetry
    return (
        section._coef,
        section._ref,
        section._edges,
        section.depth,
        bathymetry.ranges,
        bathymetry.depths,
    )


def trace_fan_integrated(
    environment,
    source_depth,
    angles,
    max_range,
    *,
    range_step=None,
    max_bounces=None,
    tolerance=1e-6,
    max_step=2000.0,
    progress=False,
):
    """Trace a fan of rays through a range-dependent environment by numerical integration.

    Parameters
    ----------
    environment : Environment
        Sound speed c(r, z) from ``environment.section`` (a
        :class:`~seaprofile.propagation.section.Section`; else the range-independent c(z)
        of the environment), flat pressure-release surface, bottom from
        ``environment.bathymetry`` (a Bathymetry: flat or piecewise linear in range; m).
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
        (default: :data:`seaprofile.propagation.codes.DEFAULT_MAX_BOUNCES`).
    tolerance : float
        Local error allowed per integration step, m: position error, c times the travel-time
        error and 1000 m times the error of the unit tangent (see the module notes). The
        global error grows roughly in proportion; measured values are in the tests.
    max_step : float
        Longest integration step (arc length), m.
    progress : bool
        Show a progress bar on stderr for a large fan (at least
        :data:`~seaprofile.propagation.codes.PROGRESS_RAYS_INTEGRATED` rays), only when
        stderr is a terminal (:mod:`seaprofile._progress`). The rays are then integrated
        in a few groups (:class:`seaprofile._progress.Pieces`); each ray is integrated
        alone, so the result is the same to the bit with or without the bar.

    Returns
    -------
    xr.Dataset
        A RayFan with the layout of :func:`seaprofile.propagation.rayfan.rayfan_dataset`
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
    mb_in = DEFAULT_MAX_BOUNCES if max_bounces is None else max_bounces
    zs, a, rmax, mb = check_fan_args(
        environment, source_depth, angles, max_range, range_step, mb_in
    )
    tol = float(tolerance)
    if not np.isfinite(tol) or tol <= 0:
        raise SeaprofileError(f"tolerance must be a positive number (m), got {tolerance!r}")
    mstep = float(max_step)
    if not np.isfinite(mstep) or mstep <= 0:
        raise SeaprofileError(f"max_step must be a positive number (m), got {max_step!r}")
    with _progress.pieces(
        a.size,
        progress=progress,
        large=a.size >= _codes.PROGRESS_RAYS_INTEGRATED,
        desc="tracing rays",
    ) as groups:
        out = _trace_arrays(
            *_medium_of(environment),
            zs,
            a,
            rmax,
            range_step=range_step,
            tolerance=tol,
            max_step=mstep,
            max_bounces=mb,
            split=groups.split,
        )
    section = environment.section
    ds = rayfan_from_output(
        out,
        a,
        source_depth=zs,
        max_range=rmax,
        max_bounces=mb,
        environment=environment,
        solver="integrated",
        range_step=range_step,
        step_parameters={
            "tolerance_m": tol,
            "max_step_m": mstep,
            "casts": 1 if section is None else int(section.ranges.size),
            "range_interpolation": "none" if section is None else section.range_interpolation,
            "integration_steps": int(out["steps"].sum()),
        },
    )
    return ds
