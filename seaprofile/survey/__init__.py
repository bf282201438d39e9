"""Survey tools: soundings from beam angles and travel times, IHO S-44 uncertainty budgets."""

from .advice import DEFAULT_FRACTION, angle_limits, cast_advice, widest_angle
from .budget import S44_ORDERS, thu, tvu
from .compare import PATHS, face_error_rule, profile_error, surface_sensor_check
from .curl import surface_speed_from_curl
from .refraction import (
    JOINS,
    SOUNDING_FLAGS,
    TurnedBeamWarning,
    beam_to_sounding,
    depth_from_harmonic_mean,
    join_transducer_speed,
    seafloor_travel_time,
    straight_ray_sounding,
    swath_soundings,
)
from .uncertainty import COVERAGE_FACTOR, SENSORS, depth_uncertainty
from .which_cast import EARTH_RADIUS, cast_for_pings, great_circle_distance, neighbour_check

__all__ = [
    "surface_speed_from_curl",
    "JOINS",
    "join_transducer_speed",
    "swath_soundings",
    "EARTH_RADIUS",
    "cast_for_pings",
    "great_circle_distance",
    "neighbour_check",
    "COVERAGE_FACTOR",
    "SENSORS",
    "depth_uncertainty",
    "DEFAULT_FRACTION",
    "PATHS",
    "angle_limits",
    "cast_advice",
    "face_error_rule",
    "profile_error",
    "seafloor_travel_time",
    "surface_sensor_check",
    "widest_angle",
    "S44_ORDERS",
    "SOUNDING_FLAGS",
    "TurnedBeamWarning",
    "beam_to_sounding",
    "depth_from_harmonic_mean",
    "straight_ray_sounding",
    "thu",
    "tvu",
]
