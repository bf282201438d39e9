"""Profiles, sections and ray-tracing environments from files.

An input may be

* a built profile written by :mod:`seaprofile.casts.write` (netCDF, CSV or JSON);
* a raw cast file (text, netCDF or JSON), built into a profile on the fly by
  :func:`seaprofile.profile.build_profile` (default settings unless options are given);
* a section: a directory of cast/profile files, several files, one file holding several
  casts or profiles, or a section netCDF (dimensions ``range`` and ``depth``). Ranges along
  the track come from the casts' positions (cumulative great-circle distance,
  :func:`seaprofile.propagation.section.track_ranges`), in the order given (files of a
  directory in name order).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from .._validate import InputFileError, SeaprofileError
from .bathymetry import read_bathymetry
from .errors import ArgumentError
from .outputs import NETCDF_LOCK

__all__ = [
    "CAST_SUFFIXES",
    "DEFAULT_THIN_TOLERANCE",
    "READ_OPTIONS",
    "LoadedInput",
    "declared_kind",
    "directory_files",
    "expand_paths",
    "load_environment",
    "load_input",
    "load_profile",
    "load_profiles",
    "load_section",
    "read_as_profiles",
]

#: keywords of :func:`seaprofile.casts.read.read_casts` accepted by the loaders; every
#: other keyword goes to :func:`seaprofile.profile.build_profile`
READ_OPTIONS = ("columns", "units", "instrument", "latitude", "longitude", "salinity", "fall_rate")

#: default node thinning for ray tracing, m/s: keeps the shape of a measured profile
#: while dropping bin-to-bin sensor noise that would otherwise make false micro-caustics
DEFAULT_THIN_TOLERANCE = 0.05

_NETCDF_MAGIC = (b"CDF\x01", b"CDF\x02", b"CDF\x05", b"\x89HDF")


class LoadedInput:
    """What an input held: one profile, or a section of several.

    Attributes
    ----------
    profile : xarray.Dataset or None
        The single Profile (``depth`` m, ``sound_speed`` m/s), when there is one.
    section : Section or None
        The range-dependent section, when several casts were given.
    description : str
        One line saying what was read.
    profiles : list of xarray.Dataset
        The profiles the section was built from (in track order), when there are several.
    files : list of pathlib.Path
        The files read.
    """

    def __init__(self, profile=None, section=None, description="", profiles=(), files=()):
        self.profile = profile
        self.section = section
        self.description = description
        self.profiles = list(profiles)
        self.files = list(files)


# --- what a file holds -----------------------------------------------------------------


def _check_input_file(path):
    from ..casts.read import check_input_file  # here: casts imports io.errors at import

    return check_input_file(path)


def _head(path):
    _check_input_file(path)  # never open a named pipe (it would block) or a device
    try:
        with open(path, "rb") as f:
            return f.read(64)
    except OSError as exc:
        raise InputFileError(path, f"cannot open: {exc.strerror}") from None


def _is_netcdf(path):
    return Path(path).is_file() and _head(path).startswith(_NETCDF_MAGIC)


def declared_kind(path):
    """What a file written by seaprofile says it holds.

    Parameters
    ----------
    path : str or pathlib.Path
        A file.

    Returns
    -------
    {"profile", "cast"} or None
        The kind recorded by :mod:`seaprofile.casts.write` (the ``# dataset:`` line of a
        CSV, the ``dimension`` of a JSON dataset or of a netCDF ``profile_attributes``
        entry); None for a file seaprofile did not write (a raw cast).
    """
    head = _head(path)
    if head.startswith(_NETCDF_MAGIC):
        return _netcdf_kind(path)
    if head.lstrip(b"\xef\xbb\xbf \t\r\n").startswith((b"{", b"[")):
        return _json_kind(path)
    return _text_kind(path)


def _kind_of_dimension(dim):
    return {"depth": "profile", "sample": "cast"}.get(dim)


def _netcdf_kind(path):
    import netCDF4

    with NETCDF_LOCK:
        try:
            with netCDF4.Dataset(path) as nc:
                var = nc.variables.get("profile_attributes")
                if var is None or var.shape[0] == 0:
                    return None
                var.set_auto_chartostring(True)
                first = json.loads(str(np.asarray(var[0])))
        except (OSError, ValueError, TypeError):
            return None
    return _kind_of_dimension(first.get("dimension")) if isinstance(first, dict) else None


def _json_kind(path):
    try:
        doc = json.loads(Path(path).read_text(encoding="utf-8-sig"))
    except (OSError, UnicodeDecodeError, ValueError):
        return None
    if not isinstance(doc, dict) or doc.get("format") != "seaprofile":
        return None
    items = doc.get("datasets") or [doc.get("dataset")]
    first = items[0] if items and isinstance(items[0], dict) else {}
    return _kind_of_dimension(first.get("dimension"))


def _text_kind(path):
    try:
        with open(path, encoding="utf-8-sig", errors="replace") as f:
            for line in f:
                s = line.strip()
                if s and not s.startswith("#"):
                    return None  # the header row: no declaration before it
                key, _, value = s.lstrip("#").partition(":")
                if key.strip().lower() == "dataset":
                    return (
                        value.strip().lower()
                        if value.strip().lower() in ("profile", "cast")
                        else None
                    )
    except OSError as exc:
        raise InputFileError(path, f"cannot read: {exc.strerror}") from None
    return None


# --- one file --------------------------------------------------------------------------


def _split_options(options):
    read = {k: v for k, v in options.items() if k in READ_OPTIONS and v is not None}
    build = {k: v for k, v in options.items() if k not in READ_OPTIONS}
    return read, build


def _with_position(profile, latitude, longitude):
    from .. import _cf

    for name, value in (("latitude", latitude), ("longitude", longitude)):
        if value is not None:
            profile = profile.assign_coords({name: ((), float(value), _cf.attrs_for(name))})
    return profile


def read_as_profiles(path, **options):
    """Profiles in one file: raw casts built on the fly, or profiles written by seaprofile.

    Parameters
    ----------
    path : str or pathlib.Path
        A cast or profile file.
    **options
        Keywords of :func:`seaprofile.casts.read.read_casts` (:data:`READ_OPTIONS`: column
        mapping, units, instrument, latitude and longitude in degrees, salinity, fall
        rate) and of :func:`seaprofile.profile.build_profile` (equation, ``bin_size`` m,
        ...). A built profile takes only ``latitude``/``longitude`` (they replace its
        position); raw casts take them all.

    Returns
    -------
    profiles : list of xarray.Dataset
    kind : {"cast", "profile"}
        What the file held.

    Notes
    -----
    The kind comes from what the file declares (:func:`declared_kind`), never from the
    text of an error message.
    """
    from ..casts.read import read_casts, read_profiles
    from ..profile import build_profile

    read, build = _split_options(options)
    lock = NETCDF_LOCK if _is_netcdf(path) else _NoLock()
    if declared_kind(path) == "profile":
        with lock:
            profiles = read_profiles(path)
        return [
            _with_position(p, read.get("latitude"), read.get("longitude")) for p in profiles
        ], "profile"
    with lock:
        casts = read_casts(path, **read)
    return [build_profile(c, **build) for c in casts], "cast"


class _NoLock:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


def load_profile(path, **options):
    """One Profile from ``path``: a built profile written by seaprofile, or a raw cast.

    Parameters
    ----------
    path : str or pathlib.Path
        The file.
    **options
        As :func:`read_as_profiles` (raw casts are built with these, defaults otherwise).

    Returns
    -------
    xarray.Dataset
        The Profile.

    Raises
    ------
    InputFileError
        The file cannot be read.
    SeaprofileError
        The file holds several profiles.
    """
    profiles, _ = read_as_profiles(path, **options)
    if len(profiles) != 1:
        raise SeaprofileError(f"{path}: holds {len(profiles)} profiles; give one")
    return profiles[0]


# --- several files ---------------------------------------------------------------------


#: suffixes of the files a directory contributes (case ignored): the text, netCDF and JSON
#: files the readers read; other files in a directory (notes, scripts) are left out
CAST_SUFFIXES = (".csv", ".txt", ".tsv", ".dat", ".asc", ".nc", ".nc4", ".json")


def directory_files(directory):
    """The cast or profile files of one directory, in name order (not its subdirectories).

    Visible files whose suffix is one of :data:`CAST_SUFFIXES`.

    Raises
    ------
    InputFileError
        The directory holds no such file.
    """
    directory = Path(directory)
    inside = sorted(
        q
        for q in directory.iterdir()
        if q.is_file() and not q.name.startswith(".") and q.suffix.lower() in CAST_SUFFIXES
    )
    if not inside:
        raise InputFileError(
            directory,
            "directory holds no cast or profile files (files "
            f"ending in {', '.join(CAST_SUFFIXES)})",
        )
    return inside


def expand_paths(paths):
    """Files named by ``paths`` (directories expanded by :func:`directory_files`).

    Parameters
    ----------
    paths : str, pathlib.Path or sequence of them
        Files and directories.

    Returns
    -------
    list of pathlib.Path
    """
    if isinstance(paths, (str, Path)):
        paths = [paths]
    files = []
    for p in paths:
        p = Path(p)
        if p.is_dir():
            files.extend(directory_files(p))
        else:  # a regular file: no such file, a named pipe or a device is refused unopened
            files.append(_check_input_file(p))
    if not files:
        raise ArgumentError("paths", "give a profile or cast file, or a directory of casts")
    return files


def load_profiles(paths, **options):
    """Every profile in ``paths`` (files, or directories of files), in order.

    Parameters
    ----------
    paths : str, pathlib.Path or sequence of them
        Profile or cast files, or directories of them.
    **options
        As :func:`read_as_profiles`.

    Returns
    -------
    list of xarray.Dataset
    """
    return load_input(paths, **options).profiles


def _section_dataset(path):
    """The Section stored in a netCDF file with dims (range, depth), else None."""
    if not _is_netcdf(path):
        return None
    import xarray as xr

    with NETCDF_LOCK:
        try:
            with xr.open_dataset(path) as ds:
                if {"range", "depth"} <= set(ds.dims) and "sound_speed" in ds:
                    from ..propagation.section import Section

                    return Section.from_dataset(ds.load())
        except (OSError, ValueError):
            return None
    return None


def _positions_known(profiles):
    def finite(p, name):
        return name in p.coords and np.isfinite(float(p[name]))

    return all(finite(p, "latitude") and finite(p, "longitude") for p in profiles)


def load_input(paths, **options):
    """Read one profile or a section (see the module docstring) into a :class:`LoadedInput`.

    Parameters
    ----------
    paths : str, pathlib.Path or sequence of them
        A profile, cast or section file, several files, or a directory.
    **options
        As :func:`read_as_profiles`.

    Returns
    -------
    LoadedInput

    Raises
    ------
    InputFileError
        A file is missing or cannot be read (names the file, line and column).
    ArgumentError
        Several casts without positions (``argument="paths"``: their ranges are unknown).
    """
    files = expand_paths(paths)
    if len(files) == 1:
        section = _section_dataset(files[0])
        if section is not None:
            return LoadedInput(
                section=section,
                files=files,
                description=(f"section of {section.ranges.size} casts from {files[0]}"),
            )
    profiles, kinds = [], set()
    for f in files:
        got, kind = read_as_profiles(f, **options)
        profiles.extend(got)
        kinds.add(kind)
    if len(profiles) == 1:
        what = (
            "built profile"
            if kinds == {"profile"}
            else "raw cast, built with the default settings"
            if not options
            else "raw cast, built with the options given"
        )
        return LoadedInput(
            profile=profiles[0],
            profiles=profiles,
            files=files,
            description=f"{what} from {files[0]}",
        )
    what = (
        "built profiles"
        if kinds == {"profile"}
        else (
            "raw casts, built with the default settings"
            if kinds == {"cast"}
            else "casts and profiles"
        )
    )
    if not _positions_known(profiles):
        raise ArgumentError(
            "paths",
            f"{len(profiles)} casts form a section, but some have no "
            "latitude/longitude, so their ranges along the track are unknown",
        )
    from ..propagation.section import Section

    section = Section.from_profiles(profiles)
    src = files[0].parent if len(files) > 1 else files[0]
    return LoadedInput(
        section=section,
        profiles=profiles,
        files=files,
        description=(
            f"section of {len(profiles)} casts ({what}) from {src}, "
            f"ranges from positions 0..{section.ranges[-1] / 1000:.1f} km"
        ),
    )


def load_section(paths, **options):
    """A range-dependent Section from several casts or profiles, or a section netCDF.

    Parameters
    ----------
    paths : str, pathlib.Path or sequence of them
        A directory of casts, several files, one file holding several casts or profiles,
        or a section netCDF (dimensions ``range``, m, and ``depth``, m).
    **options
        As :func:`read_as_profiles`.

    Returns
    -------
    Section

    Raises
    ------
    ArgumentError
        Only one profile was found, or positions are missing.
    """
    loaded = load_input(paths, **options)
    if loaded.section is None:
        raise ArgumentError(
            "paths", f"{loaded.description}: one profile is not a section; give several casts"
        )
    return loaded.section


# --- environment -----------------------------------------------------------------------


def load_environment(
    paths,
    *,
    bottom_depth=None,
    bathymetry=None,
    thin_tolerance=DEFAULT_THIN_TOLERANCE,
    seabed=None,
    **options,
):
    """The ray-tracing Environment from a profile or section and the bottom.

    Parameters
    ----------
    paths : str, pathlib.Path or sequence
        The input (see :func:`load_input`).
    bottom_depth : float, optional
        Flat bottom depth, m (> 0). Default: the bottom depth the profile (or each cast of
        a section) carries, else the deepest level.
    bathymetry : str or pathlib.Path, optional
        Bathymetry file (:func:`read_bathymetry`): bottom depth, m, along range, m.
    thin_tolerance : float
        Node thinning of a single profile, m/s (0 keeps every bin).
    seabed : Seabed, optional
        The fluid half-space below the bottom (default None: unknown).
    **options
        As :func:`read_as_profiles`.

    Returns
    -------
    environment : Environment
        With the profile's temperature and salinity as its ``water`` (a section: those of
        the cast nearest range 0), when they are there.
    loaded : LoadedInput
    """
    from ..propagation.environment import Environment

    if bottom_depth is not None and (not np.isfinite(bottom_depth) or bottom_depth <= 0):
        raise ArgumentError(
            "bottom_depth", f"must be below the surface (> 0 m), got {bottom_depth:g}"
        )
    if not np.isfinite(thin_tolerance) or thin_tolerance < 0:
        raise ArgumentError("thin_tolerance", f"must be >= 0 m/s, got {thin_tolerance:g}")
    loaded = load_input(paths, **options)
    bathy = read_bathymetry(bathymetry) if bathymetry is not None else None
    if loaded.section is not None:
        if bottom_depth is None and bathy is None:
            bathy = _section_bottom(loaded)
        env = Environment.from_section(
            loaded.section,
            bottom_depth,
            bathymetry=bathy,
            seabed=seabed,
            water=_section_water(loaded),
        )
    else:
        if bottom_depth is None and bathy is None:
            bottom_depth = profile_bottom(loaded.profile)
        env = Environment.from_profile(
            loaded.profile,
            bottom_depth,
            bathymetry=bathy,
            thin_tolerance=thin_tolerance or None,
            seabed=seabed,
        )
    return env, loaded


def _section_water(loaded):
    """Temperature and salinity of the section's cast nearest range 0, or None."""
    from ..propagation.environment import Water

    if not loaded.profiles:
        return None
    i = 0
    if len(loaded.profiles) == loaded.section.ranges.size:
        i = int(np.argmin(np.abs(np.asarray(loaded.section.ranges, dtype=float))))
    prof = loaded.profiles[i]
    pid = prof.attrs.get("cast_name") or getattr(prof.get("profile_id"), "values", "")
    return Water.from_profile(prof, source=f"section cast {str(pid) or i + 1} (nearest range 0)")


def profile_bottom(profile):
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
    track (piecewise linear between them); without any the bottom is left to the
    Environment's default (the deepest node).
    """
    if not loaded.profiles or len(loaded.profiles) != loaded.section.ranges.size:
        return None
    bottoms = np.array([profile_bottom(p) or np.nan for p in loaded.profiles], dtype=float)
    ok = np.isfinite(bottoms)
    if not ok.any():
        return None
    return np.asarray(loaded.section.ranges)[ok], bottoms[ok]
