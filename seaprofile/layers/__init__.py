"""Profile diagnostics: mixed and sonic layers, surface duct, sound channels, critical depth.

Every column diagnostic takes ``(sound_speed or another profile variable, depth, ...,
dim="depth")`` and accepts numpy arrays (many profiles at once, depth along the last axis;
per-profile parameters broadcast over the profile axes), xarray DataArrays (reduced along
``dim``; ``depth=None`` uses the ``dim`` coordinate) and dask arrays, through the
core-dimension dispatcher :func:`seaprofile.seawater._apply.columnwise` (exact alignment,
results with units and ``long_name``, lazy until ``.compute()``; a vertical dimension in
several chunks is refused with the rechunk that fixes it). Depth in m, positive down and
increasing; sound speed in m/s; temperature in degC; potential density anomaly in kg/m3.
Missing values are NaN and are skipped. :func:`describe` runs them all on a Profile
Dataset, ignoring bins flagged bad (Argo flags 3, 4 and 9), and returns a JSON-friendly
dict; :func:`describe_dataset` returns the same numbers as an ``xarray.Dataset`` with CF
attributes. :func:`duct_cutoff_frequency` and :func:`depth_excess` are point-wise.

Modules by topic:

- :mod:`.mixed`: mixed layer depth (temperature, density), sonic layer depth, layer
  gradients, surface-duct cut-off frequency;
- :mod:`.channels`: sound channels, critical depth, depth excess, sound speed at a depth;
- :mod:`.harmonic`: harmonic mean sound speed;
- :mod:`.summary`: :func:`describe` and :func:`describe_dataset` on a Profile.
"""

from __future__ import annotations

from .channels import critical_depth, depth_excess, sound_channels, speed_at
from .harmonic import harmonic_mean_sound_speed
from .mixed import (
    TRAPPING_COEFFICIENT,
    duct_cutoff_frequency,
    layer_gradients,
    mixed_layer_depth,
    mixed_layer_depth_density,
    sonic_layer_depth,
)

# _estimated_top is used by seaprofile.plots.profile, which imports it from here
from .summary import _estimated_top, describe, describe_dataset  # noqa: F401

__all__ = [
    "mixed_layer_depth",
    "mixed_layer_depth_density",
    "sonic_layer_depth",
    "layer_gradients",
    "duct_cutoff_frequency",
    "sound_channels",
    "critical_depth",
    "depth_excess",
    "harmonic_mean_sound_speed",
    "speed_at",
    "describe",
    "describe_dataset",
    "TRAPPING_COEFFICIENT",
]
