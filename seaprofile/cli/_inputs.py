"""Inputs and outputs of the ray commands (``fan``, ``paths``).

``PROFILE`` on the command line may be

* a built profile written by :mod:`seaprofile.casts.write` (netCDF, CSV or JSON);
* a raw cast file (text, netCDF or JSON), built into a profile on the fly with the default
  settings of :func:`seaprofile.profile.build_profile`;
* a section: a directory of cast/profile files, several files, one file holding several
  casts or profiles, or a section netCDF (dimensions ``range`` and ``depth``). Ranges along
  the track come from the casts' positions (cumulative great-circle distance,
  :func:`seaprofile.propagation.section.track_ranges`), in the order given (files of a
  directory in name order).

Outputs are written atomically: to a temporary file in the target directory, then renamed
into place; an existing file is kept unless ``overwrite`` is set.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from .._validate import InputFileError, SeaprofileError
from ..casts.write import atomic_write
from ._common import parse_length

__all__ = [
    "LoadedInput",
    "load_environment",
    "load_profiles",
    "parse_angles",
    "read_bathymetry",
    "check_output",
    "write_netcdf",
    "save_figure",
]


class LoadedInput:
    """What ``PROFILE`` held: one profile, or a section of several.

    Attributes
    ----------
    profile : xr.Dataset or None
        The single Profile (``depth`` m, ``sound_speed`` m/s), when there is one.
    section : Section or None
        The range-dependent section, when several casts were given.
    description : str
        One line saying what was read (for the command's summary).
    profiles : list of xr.Dataset
        The profiles the section was built from (in track order), when there are several.
    """

    def __init__(self, profile=None, section=None, description="", profiles=()):
        self.profile = profile
        self.section = section
        self.description = description
        self.profiles = list(profiles)


# --- reading ---------------------------------------------------------------------------


def _expand(paths):
    """Files named by ``paths`` (directories expanded to their visible files, sorted)."""
    if isinstance(paths, (str, Path)):
        paths = [paths]
    files = []
    for p in paths:
        p = Path(p)
        if p.is_dir():
            inside = sorted(q for q in p.iterdir() if q.is_file() and not q.name.startswith("."))
            if not inside:
                raise InputFileError(p, "directory holds no cast or profile files")
            files.extend(inside)
        elif not p.exists():
            raise InputFileError(p, "no such file")
        else:
            files.append(p)
    if not files:
        raise SeaprofileError("PROFILE: give a profile or cast file, or a directory of casts")
    return files


def _section_dataset(path):
    """The Section stored in a netCDF file with dims (range, depth), else None."""
    try:
        with open(path, "rb") as f:
            head = f.read(4)
    except OSError as exc:
        raise InputFileError(path, f"cannot open: {exc.strerror}") from None
    if not head.startswith((b"CDF", b"\x89HDF")):
        return None
    import xarray as xr

    try:
        with xr.open_dataset(path) as ds:
            if {"range", "depth"} <= set(ds.dims) and "sound_speed" in ds:
                from ..propagation.section import Section

                return Section.from_dataset(ds.load())
    except (OSError, ValueError):
        return None
    return None


def _read_one(path):
    """Profiles in one file: raw casts built on the fly, or profiles written by seaprofile."""
    from ..batch import read_as_profiles

    return read_as_profiles(path)


def parse_source_depth(text):
    """``--source-depth``: a length (m, or with a km suffix) at or below the surface."""
    depth = parse_length(text, "--source-depth")
    if depth < 0:
        raise SeaprofileError(
            f"--source-depth must be at or below the surface (>= 0 m), got {text!r}")
    return depth


def load_profiles(paths):
    """Read ``PROFILE`` (see the module docstring) into a :class:`LoadedInput`.

    Parameters
    ----------
    paths : str, Path or sequence of them
        A profile, cast or section file, several files, or a directory.

    Raises
    ------
    InputFileError
        A file is missing or cannot be read (names the file, line and column).
    SeaprofileError
        Several casts without positions (their ranges cannot be found).
    """
    files = _expand(paths)
    if len(files) == 1:
        section = _section_dataset(files[0])
        if section is not None:
            return LoadedInput(section=section, description=(
                f"section of {section.ranges.size} casts from {files[0]}"))
    profiles, kinds = [], set()
    for f in files:
        got, kind = _read_one(f)
        profiles.extend(got)
        kinds.add(kind)
    if len(profiles) == 1:
        what = "built profile" if kinds == {"profile"} else "raw cast, built with the default settings"
        return LoadedInput(profile=profiles[0], description=f"{what} from {files[0]}")
    what = "built profiles" if kinds == {"profile"} else (
        "raw casts, built with the default settings" if kinds == {"cast"}
        else "casts and profiles")
    from ..propagation.section import Section

    try:
        section = Section.from_profiles(profiles)
    except SeaprofileError as exc:
        why = ("some have no latitude/longitude, so their ranges along the track are unknown"
               if "latitude" in str(exc) else str(exc))
        raise SeaprofileError(f"PROFILE: {len(profiles)} casts form a section, but {why}") from None
    src = files[0].parent if len(files) > 1 else files[0]
    return LoadedInput(section=section, profiles=profiles, description=(
        f"section of {len(profiles)} casts ({what}) from {src}, "
        f"ranges from positions 0..{section.ranges[-1] / 1000:.1f} km"))


def read_bathymetry(path):
    """Read a bathymetry file: two columns, range and bottom depth, one point per line.

    Lines starting with ``#`` are comments. An optional first header line names the columns;
    a range header containing ``km`` (e.g. ``range_km``) means kilometres, otherwise metres.
    Columns may be separated by commas, semicolons, tabs or spaces. Depth is in metres.

    Returns
    -------
    ranges, depths : ndarray
        Range (m) and bottom depth (m, positive down), sorted by range.
    """
    path = Path(path)
    if not path.exists():
        raise InputFileError(path, "no such file")
    scale = 1.0
    rows = []
    try:
        text = path.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputFileError(path, f"cannot read: {exc}") from None
    header_seen = False
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        cells = [c for c in s.replace(",", " ").replace(";", " ").split() if c]
        if len(cells) != 2:
            raise InputFileError(path, f"expected 2 columns (range, depth), got {len(cells)}",
                                 lineno)
        try:
            r, z = float(cells[0]), float(cells[1])
        except ValueError:
            if rows or header_seen:
                bad = 1 if not _is_number(cells[0]) else 2
                raise InputFileError(path, f"not a number: {cells[bad - 1]!r}", lineno, bad) from None
            header_seen = True
            if "km" in cells[0].lower():
                scale = 1000.0
            continue
        if not (np.isfinite(r) and np.isfinite(z)):
            raise InputFileError(path, "range and depth must be finite", lineno)
        if z <= 0:
            raise InputFileError(path, f"bottom depth must be below the surface (> 0 m), got {z:g}",
                                 lineno, 2)
        rows.append((r * scale, z))
    if not rows:
        raise InputFileError(path, "no (range, depth) points")
    arr = np.array(rows)
    order = np.argsort(arr[:, 0], kind="stable")
    arr = arr[order]
    if np.any(np.diff(arr[:, 0]) <= 0):
        raise InputFileError(path, "ranges must not repeat")
    return arr[:, 0], arr[:, 1]


def _is_number(text):
    try:
        float(text)
        return True
    except ValueError:
        return False


#: default node thinning for the ray commands, m/s: keeps the shape of a measured profile
#: while dropping bin-to-bin sensor noise that would otherwise make false micro-caustics
DEFAULT_THIN_TOLERANCE = 0.05


def load_environment(paths, *, bottom_depth=None, bathymetry=None,
                     thin_tolerance=DEFAULT_THIN_TOLERANCE):
    """Environment for the ray commands from ``PROFILE`` and the bottom options.

    Parameters
    ----------
    paths : str, Path or sequence
        ``PROFILE`` (see :func:`load_profiles`).
    bottom_depth : float, optional
        Flat bottom depth, m.
    bathymetry : str or Path, optional
        Bathymetry file (:func:`read_bathymetry`).
    thin_tolerance : float
        Node thinning of a single profile, m/s (0 keeps every bin).

    Returns
    -------
    environment : Environment
    loaded : LoadedInput
    """
    from ..propagation.environment import Environment
    from ..propagation.section import environment_from_section

    loaded = load_profiles(paths)
    bathy = read_bathymetry(bathymetry) if bathymetry is not None else None
    if bottom_depth is not None and (not np.isfinite(bottom_depth) or bottom_depth <= 0):
        raise SeaprofileError(f"--bottom-depth must be below the surface (> 0 m), got {bottom_depth:g}")
    if loaded.section is not None:
        if bottom_depth is None and bathy is None:
            bathy = _section_bottom(loaded)
        env = environment_from_section(loaded.section, bottom_depth, bathymetry=bathy)
    else:
        if bottom_depth is None and bathy is None:
            bottom_depth = _profile_bottom(loaded.profile)
        if not np.isfinite(thin_tolerance) or thin_tolerance < 0:
            raise SeaprofileError(f"--thin-tolerance must be >= 0 m/s, got {thin_tolerance:g}")
        env = Environment.from_profile(loaded.profile, bottom_depth, bathymetry=bathy,
                                       thin_tolerance=thin_tolerance or None)
    return env, loaded


def _profile_bottom(profile):
    """Bottom depth a profile carries (``bottom_depth`` variable or attribute, m), else None."""
    for source in (getattr(profile, "variables", {}), getattr(profile, "attrs", {})):
        if "bottom_depth" in source:
            try:
                v = float(source["bottom_depth"])
            except (TypeError, ValueError):
                continue
            if np.isfinite(v) and v > 0:
                return v
    return None


def _section_bottom(loaded):
    """Bathymetry (ranges m, depths m) from the casts' own bottom depths, else None.

    Casts that carry a bottom depth give one bathymetry point each at their range along the
    track (piecewise linear between them); with fewer than one such cast the bottom is left
    to the Environment's default (the deepest node).
    """
    if not loaded.profiles or len(loaded.profiles) != loaded.section.ranges.size:
        return None
    bottoms = np.array([_profile_bottom(p) or np.nan for p in loaded.profiles], dtype=float)
    ok = np.isfinite(bottoms)
    if not ok.any():
        return None
    return np.asarray(loaded.section.ranges)[ok], bottoms[ok]


# --- argument parsing -----------------------------------------------------------------


def allow_negative_values(parser):
    """Let option values start with a minus sign and a digit (``--angles -15:15:61``).

    argparse takes ``-15:15:61`` for an unknown option because only plain negative numbers
    are recognised as values; the ray commands have no options that start with a digit,
    so any ``-<digit>...`` argument can safely be read as a value.
    """
    if hasattr(parser, "_negative_number_matcher"):
        parser._negative_number_matcher = re.compile(r"^-\.?\d")
    return parser



def parse_angles(text, name="--angles"):
    """Parse launch angles ``FIRST:LAST:COUNT`` (``-15:15:61``) or a comma list (degrees).

    Returns
    -------
    ndarray
        Launch angles, degrees from horizontal, positive down, each strictly inside
        (-90, 90).
    """
    t = str(text).strip()
    try:
        if ":" in t:
            parts = t.split(":")
            if len(parts) != 3:
                raise ValueError
            first, last, count = float(parts[0]), float(parts[1]), int(parts[2])
            if count < 1:
                raise SeaprofileError(f"{name}: the ray count must be at least 1, got {count}")
            angles = np.linspace(first, last, count)
        else:
            angles = np.array([float(v) for v in t.split(",") if v.strip()])
    except ValueError:
        raise SeaprofileError(
            f"{name}: expected FIRST:LAST:COUNT in degrees (e.g. -15:15:61) or a comma list, "
            f"got {text!r}") from None
    if angles.size == 0 or not np.all(np.isfinite(angles)):
        raise SeaprofileError(f"{name}: no finite angles in {text!r}")
    if np.any(np.abs(angles) >= 90):
        raise SeaprofileError(f"{name}: launch angles must lie strictly between -90 and 90 "
                              f"degrees, got {text!r}")
    return angles


def parse_receiver(text, name="--receiver"):
    """Parse ``RANGE,DEPTH`` (``12km,200``): range and depth in m (``km`` accepted)."""
    parts = [p.strip() for p in str(text).split(",")]
    if len(parts) != 2 or not all(parts):
        raise SeaprofileError(f"{name}: expected RANGE,DEPTH (e.g. 12km,200), got {text!r}")
    r = parse_length(parts[0], f"{name} range")
    z = parse_length(parts[1], f"{name} depth")
    if r <= 0:
        raise SeaprofileError(f"{name}: the range must be positive, got {text!r}")
    if z < 0:
        raise SeaprofileError(f"{name}: the depth must be at or below the surface, got {text!r}")
    return r, z


# --- writing -----------------------------------------------------------------------------


def check_output(path, overwrite, option):
    """Fail early when ``path`` exists (and ``overwrite`` is off) or its directory is missing."""
    if path is None:
        return None
    p = Path(path)
    if p.exists() and not overwrite:
        raise SeaprofileError(f"{option}: {p} exists; use --overwrite to replace it")
    if p.is_dir():
        raise SeaprofileError(f"{option}: {p} is a directory")
    if not p.parent.exists() and str(p.parent):
        raise SeaprofileError(f"{option}: directory {p.parent} does not exist")
    return p


def write_netcdf(ds, path, *, overwrite=False):
    """Write ``ds`` to netCDF-4 atomically (temporary file + rename)."""
    return atomic_write(path, overwrite, lambda tmp: ds.to_netcdf(tmp, format="NETCDF4"))


def save_figure(fig, path, *, overwrite=False, dpi=150):
    """Save ``fig`` atomically; the format follows the suffix (``.png``, ``.pdf``, ``.svg``)."""
    fmt = Path(path).suffix.lstrip(".").lower() or "png"
    return atomic_write(path, overwrite, lambda tmp: fig.savefig(tmp, format=fmt, dpi=dpi))
