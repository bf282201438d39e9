"""seaprofile: underwater sound-speed profiles from casts, and acoustic ray tracing.

Not for navigation on its own: verify results against the governing hydrographic standard,
local regulations and licensed practice.
"""

from ._version import __version__
from ._validate import InputFileError, OutsideValidityWarning, SeaprofileError
from .seawater.soundspeed import EQUATIONS, sound_speed, validity_mask

__all__ = [
    "__version__",
    "InputFileError",
    "OutsideValidityWarning",
    "SeaprofileError",
    "EQUATIONS",
    "sound_speed",
    "validity_mask",
]
