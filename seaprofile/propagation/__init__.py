"""Acoustic propagation: environment (field, surface, seabed, bathymetry), exact layered
ray tracing, ray fans, eigenrays.

Not for navigation on its own: verify results against the governing hydrographic standard,
local regulations and licensed practice.
"""

from .boundaries import Bathymetry, Seabed, Surface
from .codes import END_REASONS, POINT_KINDS
from .eigenrays import eigenrays
from .environment import Environment, LayeredSpeed, thin_nodes
from .integrate import trace_fan_integrated
from .loss import transmission_loss
from .rayfan import rayfan_dataset
from .rays import trace_fan
from .reflection import (
    SEDIMENTS,
    rayleigh_reflection,
    reflection_loss,
    roughness_factor,
    surface_reflection,
)
from .section import Section, great_circle_distance, track_ranges

__all__ = [
    "Bathymetry",
    "END_REASONS",
    "Environment",
    "LayeredSpeed",
    "POINT_KINDS",
    "SEDIMENTS",
    "Seabed",
    "Section",
    "Surface",
    "great_circle_distance",
    "track_ranges",
    "trace_fan_integrated",
    "eigenrays",
    "rayfan_dataset",
    "rayleigh_reflection",
    "reflection_loss",
    "roughness_factor",
    "surface_reflection",
    "thin_nodes",
    "trace_fan",
    "transmission_loss",
]
