"""The PathTable record: the eigenrays from one source to a grid of receivers.

PathTable layout (built by :func:`path_table_dataset`; returned by
:func:`seaprofile.propagation.eigenrays.eigenrays`):

* coordinates ``receiver_range`` and ``receiver_depth`` (m): every range is combined with
  every depth;
* dimension ``path``: one entry per eigenray, sorted by receiver (range, then depth) and
  then by travel time, with, in this order:

  - ``path_kind`` (int8): refracted only, surface-reflected, bottom-reflected or both
    (:data:`.codes.PATH_KINDS`, ``flag_values`` / ``flag_meanings``);
  - ``launch_angle`` and ``arrival_angle`` (degrees from horizontal, positive toward the
    bottom) at the source and at the receiver;
  - ``travel_time`` (s, one way);
  - ``spreading_loss`` (dB re 1 m, geometric spreading of the ray tube);
  - ``surface_reflections``, ``bottom_reflections``, ``caustics``, ``turning_points``
    (int32 counts along the path);
  - ``phase`` (rad): pi per surface reflection plus pi/2 per caustic;
  - ``depth_miss`` (m): depth of the path at the receiver range minus the receiver depth;
  - ``receiver_range_index``, ``receiver_depth_index`` (int32): the receiver it reaches;
* ``path_count`` (int32, ``(receiver_range, receiver_depth)``): paths found per receiver;
* attributes: ``source_depth`` (m), ``max_reflections``, ``bottom_depth`` (m), ``solver``,
  the global attributes of ``_cf.base_attrs`` and the provenance of the environment plus
  the ``eigenrays`` step.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .codes import PATH_KINDS

__all__ = ["path_table_dataset"]

_ANGLE_FROM_HORIZONTAL = "from horizontal, positive toward the bottom"


def path_table_dataset(receiver_ranges, receiver_depths, range_index, depth_index, *,
                       launch_angle, arrival_angle, travel_time, spreading_loss,
                       surface_reflections, bottom_reflections, caustics, turning_points,
                       phase, depth_miss, attrs):
    """Assemble a PathTable Dataset from plain arrays (layout in the module docstring).

    Parameters
    ----------
    receiver_ranges, receiver_depths : ndarray
        Receiver ranges and depths, m.
    range_index, depth_index : ndarray (path,)
        Receiver of each path (indices into the two arrays above).
    launch_angle, arrival_angle : ndarray (path,)
        Degrees from horizontal, positive down.
    travel_time : ndarray (path,)
        One-way travel time, s.
    spreading_loss : ndarray (path,)
        dB re 1 m.
    surface_reflections, bottom_reflections, caustics, turning_points : ndarray (path,)
        Counts along each path.
    phase : ndarray (path,)
        rad.
    depth_miss : ndarray (path,)
        m.
    attrs : dict
        Global attributes (provenance included).
    """
    surface = np.asarray(surface_reflections)
    bottom = np.asarray(bottom_reflections)
    kind = ((surface > 0).astype(np.int8) + 2 * (bottom > 0).astype(np.int8)).astype(np.int8)

    def count(v, long_name):
        return ("path", np.asarray(v).astype(np.int32), {"long_name": long_name, "units": "1"})

    def angle(v, where):
        return ("path", np.asarray(v, dtype=np.float64),
                {"long_name": f"ray angle {where} {_ANGLE_FROM_HORIZONTAL}", "units": "degree"})

    n_path = np.zeros((np.size(receiver_ranges), np.size(receiver_depths)), dtype=np.int32)
    np.add.at(n_path, (np.asarray(range_index), np.asarray(depth_index)), 1)
    data = {
        "path_kind": ("path", kind, {
            "long_name": "which boundaries the path reflects at",
            "flag_values": np.array(sorted(PATH_KINDS), dtype=np.int8),
            "flag_meanings": " ".join(PATH_KINDS[k] for k in sorted(PATH_KINDS))}),
        "launch_angle": angle(launch_angle, "at the source"),
        "arrival_angle": angle(arrival_angle, "at the receiver"),
        "travel_time": ("path", np.asarray(travel_time, dtype=np.float64),
                        _cf.attrs_for("travel_time")),
        "spreading_loss": ("path", np.asarray(spreading_loss, dtype=np.float64), {
            "long_name": "geometric spreading loss of the eigenray (ray-tube area)",
            "units": "dB", "reference": "re 1 m"}),
        "surface_reflections": count(surface, "number of surface reflections"),
        "bottom_reflections": count(bottom, "number of bottom reflections"),
        "caustics": count(caustics, "number of caustics passed"),
        "turning_points": count(turning_points, "number of refracted turning points"),
        "phase": ("path", np.asarray(phase, dtype=np.float64), {
            "long_name": "phase shift: pi per surface reflection plus pi/2 per caustic",
            "units": "rad"}),
        "depth_miss": ("path", np.asarray(depth_miss, dtype=np.float64), {
            "long_name": "depth of the eigenray at the receiver range minus receiver depth",
            "units": "m"}),
        "receiver_range_index": count(range_index, "index of the receiver range"),
        "receiver_depth_index": count(depth_index, "index of the receiver depth"),
        "path_count": (("receiver_range", "receiver_depth"), n_path,
                       {"long_name": "number of eigenrays found", "units": "1"}),
    }
    coords = {
        "receiver_range": ("receiver_range", np.asarray(receiver_ranges, dtype=np.float64),
                           _cf.attrs_for("range", long_name="receiver range")),
        "receiver_depth": ("receiver_depth", np.asarray(receiver_depths, dtype=np.float64),
                           _cf.attrs_for("depth", long_name="receiver depth")),
    }
    ds = xr.Dataset(data, coords=coords, attrs=attrs)
    for name in ("path_kind", "surface_reflections", "bottom_reflections", "caustics",
                 "turning_points", "receiver_range_index", "receiver_depth_index", "path_count"):
        ds[name].encoding["_FillValue"] = None
    return ds
