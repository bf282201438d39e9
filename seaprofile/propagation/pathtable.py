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
* attributes: ``product="path_table"``, ``source_depth`` (m), ``max_reflections``,
  ``bottom_depth`` (m), ``solver``, the environment (``surface_*``, ``seabed_*``,
  ``bathymetry_*``, as in a RayFan), the global attributes of ``_cf.base_attrs`` and the
  provenance of the environment plus the ``eigenrays`` step.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf
from .codes import PATH_KINDS

__all__ = ["path_table_dataset"]


def path_table_dataset(
    receiver_ranges,
    receiver_depths,
    range_index,
    depth_index,
    *,
    launch_angle,
    arrival_angle,
    travel_time,
    spreading_loss,
    surface_reflections,
    bottom_reflections,
    caustics,
    turning_points,
    phase,
    depth_miss,
    attrs,
):
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

    def count(v, name):
        return ("path", np.asarray(v).astype(np.int32), _cf.attrs_for(name))

    def real(v, name):
        return ("path", np.asarray(v, dtype=np.float64), _cf.attrs_for(name))

    n_path = np.zeros((np.size(receiver_ranges), np.size(receiver_depths)), dtype=np.int32)
    np.add.at(n_path, (np.asarray(range_index), np.asarray(depth_index)), 1)
    data = {
        "path_kind": (
            "path",
            kind,
            {
                "long_name": "which boundaries the path reflects at",
                "flag_values": np.array(sorted(PATH_KINDS), dtype=np.int8),
                "flag_meanings": " ".join(PATH_KINDS[k] for k in sorted(PATH_KINDS)),
            },
        ),
        "launch_angle": real(launch_angle, "launch_angle"),
        "arrival_angle": real(arrival_angle, "arrival_angle"),
        "travel_time": real(travel_time, "travel_time"),
        "spreading_loss": real(spreading_loss, "spreading_loss"),
        "surface_reflections": count(surface, "surface_reflections"),
        "bottom_reflections": count(bottom, "bottom_reflections"),
        "caustics": count(caustics, "caustics"),
        "turning_points": count(turning_points, "turning_points"),
        "phase": real(phase, "phase"),
        "depth_miss": real(depth_miss, "depth_miss"),
        "receiver_range_index": count(range_index, "receiver_range_index"),
        "receiver_depth_index": count(depth_index, "receiver_depth_index"),
        "path_count": (
            ("receiver_range", "receiver_depth"),
            n_path,
            _cf.attrs_for("arrival_count"),
        ),
    }
    coords = {
        "receiver_range": (
            "receiver_range",
            np.asarray(receiver_ranges, dtype=np.float64),
            _cf.attrs_for("range", long_name="receiver range"),
        ),
        "receiver_depth": (
            "receiver_depth",
            np.asarray(receiver_depths, dtype=np.float64),
            _cf.attrs_for("depth", long_name="receiver depth"),
        ),
    }
    ds = xr.Dataset(data, coords=coords, attrs={**attrs, "product": "path_table"})
    for name in (
        "path_kind",
        "surface_reflections",
        "bottom_reflections",
        "caustics",
        "turning_points",
        "receiver_range_index",
        "receiver_depth_index",
        "path_count",
    ):
        ds[name].encoding["_FillValue"] = None
    return ds
