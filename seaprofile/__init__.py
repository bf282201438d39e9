"""seaprofile: underwater sound-speed profiles from casts, and acoustic ray tracing.

Not for navigation on its own: verify results against the governing hydrographic standard,
local regulations and licensed practice.
"""

from . import _jitcache  # noqa: F401  (before any kernel: the cache lives outside the package)
from ._validate import InputFileError, OutsideValidityWarning, SeaprofileError
from ._version import __version__
from .casts.read import read_cast, read_casts, read_profile, read_profiles
from .io.write import write
from .layers import describe
from .profile import build_profile, compare_profiles, extend_to
from .propagation import Environment, Section, eigenrays, trace_fan
from .seawater.absorption import ABSORPTION, absorption
from .seawater.depth import depth_from_pressure, pressure_from_depth
from .seawater.soundspeed import EQUATIONS, sound_speed, validity_mask

__all__ = [
    "__version__",
    "InputFileError",
    "OutsideValidityWarning",
    "SeaprofileError",
    "EQUATIONS",
    "ABSORPTION",
    "absorption",
    "sound_speed",
    "validity_mask",
    "depth_from_pressure",
    "pressure_from_depth",
    "read_cast",
    "read_casts",
    "read_profile",
    "read_profiles",
    "write",
    "build_profile",
    "compare_profiles",
    "extend_to",
    "describe",
    "Environment",
    "Section",
    "eigenrays",
    "trace_fan",
]
