"""Loading and saving for scripts and the command line: profiles, sections, environments.

The functions here are what the ``seaprofile`` commands call; Python users get the same
behaviour:

* :func:`load_profile`, :func:`load_profiles`, :func:`load_input`, :func:`load_section`:
  a built profile written by seaprofile, or a raw cast built on the fly, or several casts
  forming a range-dependent section;
* :func:`read_bathymetry`: a range / bottom-depth file with a header that states units;
* :func:`load_environment`: the ray-tracing environment from a profile or section and the
  bottom;
* :func:`check_output`, :func:`is_same_file`, :func:`check_figure_path`,
  :func:`write_netcdf`, :func:`save_figure`: outputs written atomically, never over an
  input;
* :func:`profile_bytes`, :func:`fan_bytes`, :func:`check_memory`: refuse work that would not fit in memory
  before it is allocated.
"""

from .bathymetry import read_bathymetry
from .errors import ArgumentError, MemoryLimitError
from .loading import (
    DEFAULT_THIN_TOLERANCE,
    READ_OPTIONS,
    LoadedInput,
    declared_kind,
    expand_paths,
    load_environment,
    load_input,
    load_profile,
    load_profiles,
    load_section,
    profile_bottom,
    read_as_profiles,
)
from .outputs import (
    FIGURE_FORMATS,
    MEMORY_LIMIT,
    NETCDF_LOCK,
    check_figure_path,
    check_memory,
    check_output,
    fan_bytes,
    format_bytes,
    is_same_file,
    profile_bytes,
    save_figure,
    write_netcdf,
)

__all__ = [
    "DEFAULT_THIN_TOLERANCE",
    "FIGURE_FORMATS",
    "MEMORY_LIMIT",
    "NETCDF_LOCK",
    "ArgumentError",
    "READ_OPTIONS",
    "LoadedInput",
    "MemoryLimitError",
    "check_figure_path",
    "check_memory",
    "check_output",
    "declared_kind",
    "expand_paths",
    "fan_bytes",
    "format_bytes",
    "profile_bytes",
    "is_same_file",
    "load_environment",
    "load_input",
    "load_profile",
    "load_profiles",
    "load_section",
    "profile_bottom",
    "read_as_profiles",
    "read_bathymetry",
    "save_figure",
    "write_netcdf",
]
