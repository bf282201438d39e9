"""Acoustic propagation: environment, exact layered ray tracing, ray fans, eigenrays.

Not for navigation on its own: verify results against the governing hydrographic standard,
local regulations and licensed practice.
"""

from .codes import END_REASONS, POINT_KINDS
from .environment import Environment, thin_nodes
from .section import Section, environment_from_section, great_circle_distance, track_ranges
from .rayfan import rayfan_dataset
from .integrate import trace_fan_integrated
from .rays import trace_fan
from .eigenrays import eigenrays

__all__ = [
    "END_REASONS",
    "Environment",
    "POINT_KINDS",
    "Section",
    "environment_from_section",
    "great_circle_distance",
    "track_ranges",
    "trace_fan_integrated",
    "eigenrays",
    "rayfan_dataset",
    "thin_nodes",
    "trace_fan",
]
