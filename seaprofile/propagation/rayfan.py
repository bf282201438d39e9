"""The RayFan record: the one Dataset layout both ray solvers return, and their checks.

RayFan layout (shared by the exact range-independent tracer, :mod:`.kernels`, and the
numerical range-dependent integrator, :mod:`.integrate`; build it with
:func:`rayfan_dataset` so both stay identical; the codes are in :mod:`.codes`):

* dimensions ``ray`` and ``point``;
* ``range``, ``depth`` (m), ``travel_time`` (s), ``angle`` (degrees from horizontal,
  positive down), ``sound_speed`` (m/s) and the dynamic-ray pair ``tube_width`` (q, m/rad:
  the distance between neighbouring rays per radian of launch angle; its sign changes are
  caustics) and ``tube_slowness`` (p = dq/ds / c, s m-1 rad-1) on ``(ray, point)``, NaN
  after the ray's last point; at a reflection the angle and p are the reflected ones;
* ``point_kind`` (int8, ``(ray, point)``): what happened at the point (start, layer
  crossing, turning point, surface / bottom reflection, range sample, end), -1 as padding
  (``no_point``, listed in ``flag_values``; no ``_FillValue``, so the variable reads back
  from netCDF as int8);
* ``point_count`` (int32, ``ray``): number of valid points;
* dimension ``reflection``: every surface and bottom reflection of each ray, in order:
  ``reflection_boundary`` (int8: 0 surface, 1 bottom, -1 padding ``no_reflection``),
  ``reflection_range`` (m) and ``grazing_angle`` (degrees between the incident ray and
  the boundary, >= 0); kept whether or not the points are range samples;
* coordinate ``launch_angle`` (degrees, ``ray``);
* ``surface_reflections``, ``bottom_reflections``, ``turning_points``, ``caustics``
  (int32, ``ray``): counts along the whole ray;
* ``end_reason`` (int8, ``ray``) with ``flag_values`` / ``flag_meanings``
  (:data:`END_REASONS`);
* attributes: ``product="ray_fan"``, ``source_depth`` (m), ``max_range`` (m),
  ``max_bounces``, ``bottom_depth`` (m, at range 0), ``solver`` (``"exact_layered"`` or
  ``"integrated"``), ``range_step`` (m, or absent when every event point is kept), the
  environment (``surface_*``, ``seabed_*``, ``bathymetry_*``:
  :meth:`Environment.provenance_attrs <.environment.Environment.provenance_attrs>`; read
  back with ``Surface.from_attrs`` / ``Seabed.from_attrs``), the global attributes of
  ``_cf.base_attrs`` and the provenance of the environment plus this step.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array
from .codes import (
    END_REASONS,
    FAN_POINT_BYTES,
    NO_POINT,
    NO_REFLECTION,
    NO_REFLECTION_MEANING,
    PADDING,
    POINT_KINDS,
    RANGE_SAMPLE,
    REFLECTION_BOUNDARIES,
    check_memory,
)
from .environment import Environment

__all__ = ["check_fan_args", "rayfan_dataset", "rayfan_from_output"]


def _flag_attrs(codes, long_name):
    return {
        "long_name": long_name,
        "flag_values": np.array(sorted(codes), dtype=np.int8),
        "flag_meanings": " ".join(codes[k] for k in sorted(codes)),
    }


def rayfan_from_output(out, launch_angle, **settings):
    """A RayFan Dataset from the output dict both solvers return (keys as the record).

    Parameters
    ----------
    out : dict of ndarray
        ``range``, ``depth``, ``travel_time``, ``angle``, ``point_count``,
        ``surface_reflections``, ``bottom_reflections``, ``turning_points``, ``end_reason``,
        ``point_kind``, ``caustics``, ``sound_speed``, ``tube_width``, ``tube_slowness``,
        ``reflection_boundary``, ``reflection_range``, ``grazing_angle``; units as in
        :func:`rayfan_dataset`.
    launch_angle : ndarray (ray,)
        Launch angles, degrees, positive down.
    **settings
        The keyword arguments of :func:`rayfan_dataset` (``source_depth`` m, ``max_range``
        m, ``max_bounces``, ``environment``, ``solver``, ``range_step`` m,
        ``step_parameters``).
    """
    columns = ("range", "depth", "travel_time", "angle", "point_count")
    counts = ("surface_reflections", "bottom_reflections", "turning_points", "end_reason")
    return rayfan_dataset(
        *(out[k] for k in columns),
        launch_angle,
        *(out[k] for k in counts),
        point_kind=out["point_kind"],
        caustics=out["caustics"],
        sound_speed=out["sound_speed"],
        tube_width=out["tube_width"],
        tube_slowness=out["tube_slowness"],
        reflections=(out["reflection_boundary"], out["reflection_range"], out["grazing_angle"]),
        **settings,
    )


def rayfan_dataset(
    range_,
    depth,
    travel_time,
    angle,
    point_count,
    launch_angle,
    surface_reflections,
    bottom_reflections,
    turning_points,
    end_reason,
    *,
    source_depth,
    max_range,
    max_bounces,
    environment,
    solver,
    point_kind=None,
    caustics=None,
    range_step=None,
    step_parameters=None,
    sound_speed=None,
    tube_width=None,
    tube_slowness=None,
    reflections=None,
):
    """Assemble a RayFan Dataset from plain arrays (layout in the module docstring).

    Parameters
    ----------
    range_, depth, travel_time, angle : ndarray (ray, point)
        Range (m), depth (m), one-way travel time (s), ray angle (degrees from horizontal,
        positive down); NaN as padding.
    point_count : ndarray (ray,)
        Valid points per ray.
    launch_angle : ndarray (ray,)
        Launch angles, degrees, positive down.
    surface_reflections, bottom_reflections, turning_points : ndarray (ray,)
        Counts along each ray.
    end_reason : ndarray (ray,)
        Codes of :data:`END_REASONS`.
    source_depth, max_range : float
        m.
    max_bounces : int
        Reflection limit used.
    environment : Environment
        The environment traced (for provenance and the bottom depth).
    solver : str
        ``"exact_layered"`` or ``"integrated"``.
    point_kind : ndarray (ray, point), optional
        Codes of :data:`POINT_KINDS`; -1 padding.
    caustics : ndarray (ray,), optional
        Caustic count along each ray.
    range_step : float, optional
        Resampling step, m, when the points are range samples.
    step_parameters : dict, optional
        Extra parameters recorded in the provenance step.
    sound_speed, tube_width, tube_slowness : ndarray (ray, point), optional
        Sound speed (m/s), dynamic-ray q (m/rad) and p (s m-1 rad-1) at the points; NaN
        when not given.
    reflections : (ndarray, ndarray, ndarray), optional
        Per ray and reflection (ray, reflection): the boundary (codes of
        :data:`.codes.REFLECTION_BOUNDARIES`, -1 padding), range (m) and grazing angle
        (degrees); none when not given.
    """
    nray, npt = np.shape(depth)
    dims = ("ray", "point")
    zero = np.zeros(nray, dtype=np.int32)
    data = {
        "range": (dims, np.asarray(range_, dtype=np.float64), _cf.attrs_for("range")),
        "depth": (dims, np.asarray(depth, dtype=np.float64), _cf.attrs_for("depth")),
        "travel_time": (
            dims,
            np.asarray(travel_time, dtype=np.float64),
            _cf.attrs_for("travel_time"),
        ),
        "angle": (dims, np.asarray(angle, dtype=np.float64), _cf.attrs_for("angle")),
        "point_count": (
            "ray",
            np.asarray(point_count, dtype=np.int32),
            _cf.attrs_for("point_count"),
        ),
        "surface_reflections": (
            "ray",
            np.asarray(surface_reflections, dtype=np.int32),
            _cf.attrs_for("surface_reflections"),
        ),
        "bottom_reflections": (
            "ray",
            np.asarray(bottom_reflections, dtype=np.int32),
            _cf.attrs_for("bottom_reflections"),
        ),
        "turning_points": (
            "ray",
            np.asarray(turning_points, dtype=np.int32),
            _cf.attrs_for("turning_points"),
        ),
        "caustics": (
            "ray",
            np.asarray(zero if caustics is None else caustics, dtype=np.int32),
            _cf.attrs_for("caustics"),
        ),
        "end_reason": (
            "ray",
            np.asarray(end_reason, dtype=np.int8),
            _flag_attrs(END_REASONS, "how the ray ended"),
        ),
    }
    for name, v in (
        ("sound_speed", sound_speed),
        ("tube_width", tube_width),
        ("tube_slowness", tube_slowness),
    ):
        v = np.full((nray, npt), np.nan) if v is None else np.asarray(v, dtype=np.float64)
        data[name] = (dims, v, _cf.attrs_for(name))
    if reflections is None:
        reflections = (
            np.full((nray, 0), NO_REFLECTION, dtype=np.int8),
            np.full((nray, 0), np.nan),
            np.full((nray, 0), np.nan),
        )
    rdims = ("ray", "reflection")
    data["reflection_boundary"] = (
        rdims,
        np.asarray(reflections[0], dtype=np.int8),
        _flag_attrs(
            {NO_REFLECTION: NO_REFLECTION_MEANING, **REFLECTION_BOUNDARIES},
            "boundary of the reflection",
        ),
    )
    data["reflection_range"] = (
        rdims,
        np.asarray(reflections[1], dtype=np.float64),
        _cf.attrs_for("range", long_name="range of the reflection"),
    )
    data["grazing_angle"] = (
        rdims,
        np.asarray(reflections[2], dtype=np.float64),
        _cf.attrs_for("grazing_angle"),
    )
    if point_kind is None:
        point_kind = np.where(np.isfinite(np.asarray(depth)), RANGE_SAMPLE, NO_POINT)
    # -1 (padding) is an ordinary documented code, not a _FillValue: a declared fill value
    # makes netCDF readers mask it and hand back float32 with NaN, so that a RayFan would
    # not round-trip in dtype
    data["point_kind"] = (
        dims,
        np.asarray(point_kind, dtype=np.int8),
        _flag_attrs({NO_POINT: PADDING, **POINT_KINDS}, "what happens at the path point"),
    )
    coords = {
        "launch_angle": (
            "ray",
            np.asarray(launch_angle, dtype=np.float64),
            _cf.attrs_for("launch_angle"),
        ),
    }
    attrs = dict(getattr(environment, "attrs", None) or _cf.base_attrs())
    attrs.update(
        _cf.base_attrs(**{k: attrs[k] for k in ("processing_steps", "history") if k in attrs})
    )
    params = dict(
        source_depth_m=float(source_depth),
        max_range_m=float(max_range),
        max_bounces=int(max_bounces),
        solver=solver,
        rays=int(nray),
    )
    if range_step is not None:
        params["range_step_m"] = float(range_step)
    params.update(step_parameters or {})
    attrs = _cf.record_step(attrs, "trace_fan", **params)
    attrs.update(
        title="ray fan",
        product="ray_fan",
        source_depth=float(source_depth),
        max_range=float(max_range),
        max_bounces=int(max_bounces),
        bottom_depth=float(environment.bottom_depth),
        solver=solver,
        **environment.provenance_attrs(),
    )
    if range_step is not None:
        attrs["range_step"] = float(range_step)
    ds = xr.Dataset(data, coords=coords, attrs=attrs)
    # integer variables are written without a fill value (xarray would otherwise decode
    # them to floats): their codes are complete, padding included
    for name in (
        "point_kind",
        "point_count",
        "surface_reflections",
        "bottom_reflections",
        "turning_points",
        "caustics",
        "end_reason",
        "reflection_boundary",
    ):
        ds[name].encoding["_FillValue"] = None
    return ds


def check_fan_args(environment, source_depth, angles, max_range, range_step, max_bounces):
    """Validate the arguments of a fan (see :func:`seaprofile.propagation.rays.trace_fan`).

    Returns (source depth m, launch angles degrees, max range m, max bounces); raises
    SeaprofileError naming the argument, also when the stored fan would exceed
    :data:`.codes.MEMORY_LIMIT`.
    """
    if not isinstance(environment, Environment):
        raise SeaprofileError("environment must be a seaprofile Environment")
    zs = as_float_array("source_depth", source_depth)
    if zs.ndim != 0 or not np.isfinite(zs):
        raise SeaprofileError("source_depth must be one finite number (m)")
    zs = float(zs)
    bottom0 = float(environment.bottom_at(0.0))
    if not 0.0 <= zs <= bottom0:
        raise SeaprofileError(f"source_depth {zs:g} m is outside the water column 0..{bottom0:g} m")
    a = as_float_array("angles", angles).ravel()
    if a.size == 0 or not np.all(np.isfinite(a)) or np.any(np.abs(a) > 90):
        raise SeaprofileError("angles must be finite launch angles within -90..90 degrees")
    rmax = as_float_array("max_range", max_range)
    if rmax.ndim != 0 or not np.isfinite(rmax) or rmax <= 0:
        raise SeaprofileError("max_range must be one positive number (m)")
    if range_step is not None:
        rs = as_float_array("range_step", range_step)
        if rs.ndim != 0 or not np.isfinite(rs) or rs <= 0:
            raise SeaprofileError("range_step must be one positive number (m)")
        # estimated before anything is allocated (float: the count may not fit an int)
        samples = float(rmax) / float(rs) + 2.0
        check_memory(
            a.size * samples * FAN_POINT_BYTES,
            "range_step",
            f"{a.size} rays x {samples:.3g} range samples",
            "use a coarser range_step, a shorter max_range or fewer angles",
        )
    mb = as_float_array("max_bounces", max_bounces)
    if mb.ndim != 0 or not np.isfinite(mb) or mb < 0 or mb != np.floor(mb):
        raise SeaprofileError("max_bounces must be one whole number >= 0")
    return zs, a, float(rmax), int(min(float(mb), 2**62))
