"""Survey tools: soundings from beam angles and travel times, IHO S-44 uncertainty budgets."""

from .budget import S44_ORDERS, thu, tvu
from .refraction import (
    SOUNDING_FLAGS,
    TurnedBeamWarning,
    beam_to_sounding,
    depth_from_harmonic_mean,
    straight_ray_sounding,
)

__all__ = [
    "S44_ORDERS",
    "SOUNDING_FLAGS",
    "TurnedBeamWarning",
    "beam_to_sounding",
    "depth_from_harmonic_mean",
    "straight_ray_sounding",
    "thu",
    "tvu",
]
