"""Outputs: never over an input, written atomically; memory estimates before allocating."""

from __future__ import annotations

import os
from pathlib import Path

from ..casts._atomic import NETCDF_LOCK as _NETCDF_LOCK
from ..casts.write import atomic_write
from .errors import ArgumentError, MemoryLimitError
from .write import write

__all__ = [
    "FIGURE_FORMATS",
    "MEMORY_LIMIT",
    "NETCDF_LOCK",
    "BYTES_PER_BIN",
    "BYTES_PER_RAY_SAMPLE",
    "check_figure_path",
    "check_memory",
    "check_output",
    "fan_bytes",
    "format_bytes",
    "is_same_file",
    "profile_bytes",
    "save_figure",
    "write_netcdf",
]

#: the one process-wide lock held around every netCDF (HDF5) read and write: the HDF5
#: library must not be entered from two threads at once (``build --scheduler threads``)
NETCDF_LOCK = _NETCDF_LOCK

#: figure formats by file suffix
FIGURE_FORMATS = {".png": "png", ".pdf": "pdf", ".svg": "svg"}

#: largest estimated allocation accepted for one profile or one fan, bytes (4 GiB: a
#: sixth of a 24 GiB machine; common practice, no source)
MEMORY_LIMIT = 4 * 2**30

#: bytes per depth bin while a Profile is built (measured on the demo's deep cast with
#: bins of 1 cm and 2 mm: about 160 B per bin; rounded up)
BYTES_PER_BIN = 200

#: bytes per ray sample of a fan sampled every range step (range, depth, time, angle as
#: float64 and a point kind, and one copy while the Dataset is assembled)
BYTES_PER_RAY_SAMPLE = 80


def format_bytes(n):
    """A byte count as a short text in decimal units (``"12.3 GB"``).

    Parameters
    ----------
    n : int or float
        Bytes.
    """
    n = float(n)
    for unit in ("B", "kB", "MB", "GB", "TB"):
        if n < 1000 or unit == "TB":
            return f"{n:.0f} {unit}" if unit == "B" else f"{n:.1f} {unit}"
        n /= 1000.0
    return f"{n:.1f} TB"  # pragma: no cover


def profile_bytes(depth_span, bin_size):
    """Estimated memory, bytes, to build a Profile of ``depth_span`` m in ``bin_size`` m bins.

    Parameters
    ----------
    depth_span : float
        Depth covered, m (the cast's deepest sample or the extension depth).
    bin_size : float
        Bin size, m (> 0).
    """
    return int((float(depth_span) / float(bin_size) + 1.0) * BYTES_PER_BIN)


def fan_bytes(rays, max_range, range_step):
    """Estimated memory, bytes, of a fan of ``rays`` rays sampled every ``range_step`` m.

    Parameters
    ----------
    rays : int
        Number of rays.
    max_range : float
        Range traced to, m.
    range_step : float
        Sampling step along range, m (> 0).
    """
    return int(int(rays) * (float(max_range) / float(range_step) + 2.0) * BYTES_PER_RAY_SAMPLE)


def check_memory(argument, requested, what, limit=MEMORY_LIMIT):
    """Raise :class:`MemoryLimitError` naming ``argument`` when ``requested`` > ``limit``.

    Parameters
    ----------
    argument : str
        The argument whose value sets the size (named in the message).
    requested : int
        Estimated bytes.
    what : str
        What would be allocated (e.g. ``"2,000,000,000 bins over 4000 m"``).
    limit : int
        Bytes allowed.
    """
    if requested > limit:
        raise MemoryLimitError(
            argument,
            f"{what} would need about {format_bytes(requested)} of memory, more than "
            f"the {format_bytes(limit)} allowed; choose a larger value",
            requested,
            limit,
        )


def is_same_file(a, b):
    """True when paths ``a`` and ``b`` name the same file (links and ``..`` resolved).

    Parameters
    ----------
    a, b : str or pathlib.Path
        Paths; either may not exist yet (then their resolved names are compared).
    """
    try:
        return os.path.samefile(a, b)
    except OSError:  # one does not exist (yet): compare the resolved names
        return os.path.realpath(a) == os.path.realpath(b)


def check_output(path, *, overwrite=False, inputs=(), argument="path"):
    """Fail before any work when ``path`` cannot be written.

    Parameters
    ----------
    path : str or pathlib.Path or None
        The output file (None: nothing to check, returns None).
    overwrite : bool
        Whether an existing file may be replaced.
    inputs : iterable of str or pathlib.Path
        Files read by the same job: an output is never one of them, whatever ``overwrite``.
    argument : str
        Name used in messages (the command line passes its option, e.g. ``"--plot"``).

    Returns
    -------
    pathlib.Path or None

    Raises
    ------
    ArgumentError
        The file is an input, exists (without ``overwrite``), is a directory, or its
        directory is missing.
    """
    if path is None:
        return None
    p = Path(path)
    for source in inputs:
        if is_same_file(p, source):
            raise ArgumentError(
                argument,
                f"{p} is an input of this run; an input is never "
                "written over (choose another output name)",
            )
    if p.is_dir():
        raise ArgumentError(argument, f"{p} is a directory")
    if p.exists() and not overwrite:
        raise ArgumentError(
            argument,
            f"{p} exists; use --overwrite to replace it"
            if argument.startswith("--")
            else f"{p} exists; pass overwrite=True to replace it",
        )
    if str(p.parent) and not p.parent.exists():
        raise ArgumentError(argument, f"directory {p.parent} does not exist")
    return p


def check_figure_path(path, *, overwrite=False, inputs=(), argument="path"):
    """:func:`check_output` for a figure, whose suffix must be one of :data:`FIGURE_FORMATS`."""
    if path is None:
        return None
    suffix = Path(path).suffix.lower()
    if suffix not in FIGURE_FORMATS:
        raise ArgumentError(
            argument,
            f"unknown figure format {suffix or '(no suffix)'!r} of "
            f"{path}; use {', '.join(FIGURE_FORMATS)}",
        )
    return check_output(path, overwrite=overwrite, inputs=inputs, argument=argument)


def write_netcdf(ds, path, *, overwrite=False):
    """Write a product (e.g. a RayFan) to netCDF through the one :func:`seaprofile.write`.

    Gridded products (ray fans, loss fields, ...) are netCDF-4; Casts and Profiles classic
    netCDF-3 (:func:`seaprofile.casts.write.write_netcdf`; ``write(..., "netcdf4")`` for
    netCDF-4).

    Atomic (temporary file, then rename); the product kind picks the layout
    (:data:`seaprofile.io.write.PRODUCTS`).

    Parameters
    ----------
    ds : xarray.Dataset
        What to write (e.g. a RayFan).
    path : str or pathlib.Path
        Target file.
    overwrite : bool
        Replace an existing file.
    """
    return write(ds, path, "netcdf", overwrite=overwrite)


def save_figure(fig, path, *, overwrite=False, dpi=150):
    """Save a matplotlib figure atomically; the format follows the suffix (:data:`FIGURE_FORMATS`).

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    path : str or pathlib.Path
        Target file (``.png``, ``.pdf`` or ``.svg``).
    overwrite : bool
        Replace an existing file.
    dpi : int
        Resolution of raster formats, dots per inch.
    """
    suffix = Path(path).suffix.lower()
    if suffix not in FIGURE_FORMATS:
        raise ArgumentError(
            "path", f"unknown figure format {suffix!r}; use {', '.join(FIGURE_FORMATS)}"
        )
    fmt = FIGURE_FORMATS[suffix]
    return atomic_write(path, overwrite, lambda tmp: fig.savefig(tmp, format=fmt, dpi=dpi))
