"""Bathymetry files: range and bottom depth along the track, with units in the header."""

from __future__ import annotations

import re

import numpy as np

from .._validate import InputFileError

__all__ = ["read_bathymetry"]

_SCALE = {"m": 1.0, "km": 1000.0}
# "range_km", "range (km)", "range [m]", "depth_m", "depth (m)" ... (case ignored)
_CELL = re.compile(
    r"^(range|depth)\s*(?:_\s*(m|km)|\(\s*(m|km)\s*\)|\[\s*(m|km)\s*\])$", re.IGNORECASE
)
_EXAMPLE = "e.g. 'range_km,depth_m' or 'range (m), depth (m)'"


def _cells(line):
    """Cells of a line: comma, semicolon or tab separated, else whitespace separated."""
    for sep in (",", ";", "\t"):
        if sep in line:
            return [c.strip() for c in line.split(sep)]
    return line.split()


def _header(path, cells, lineno):
    """Scale factors (to m) of the range and depth columns from the header cells."""
    matches = [_CELL.match(c) for c in cells]
    if [m.group(1).lower() if m else None for m in matches] != ["range", "depth"]:
        raise InputFileError(
            path,
            f"the first line must name the columns range and depth with their units "
            f"({_EXAMPLE}), got {', '.join(cells)!r}",
            lineno,
        )
    return tuple(_SCALE[next(u for u in m.groups()[1:] if u).lower()] for m in matches)


def read_bathymetry(path):
    """Read a bathymetry file: range and bottom depth along the track, one point per line.

    Parameters
    ----------
    path : str or pathlib.Path
        A text file. Lines starting with ``#`` are comments. The first other line is a
        header naming the two columns with their units: ``range_km,depth_m``,
        ``range (m), depth (m)``, ``range [km]; depth [m]`` (units ``m`` or ``km``; columns
        separated by commas, semicolons, tabs or spaces). Then one ``range, depth`` pair
        per line. A file of bare numbers is refused: its units would be a guess.

    Returns
    -------
    ranges : numpy.ndarray
        Range from the source, m (>= 0), increasing; the points may be given in any order.
    depths : numpy.ndarray
        Bottom depth, m, positive down (> 0).

    Raises
    ------
    InputFileError
        Missing or unreadable file, missing header, a bad number, a negative range, a depth
        at or above the surface, or a repeated range; names the file, line and column.
    """
    from ..casts.read import check_input_file  # here: casts imports io.errors at import

    path = check_input_file(path)  # no such file, a directory, a named pipe, a device
    try:
        text = path.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputFileError(path, f"cannot read: {exc}") from None
    scale = None
    rows = []
    first_line = {}  # range (m) -> the line that gave it
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        cells = _cells(s)
        if scale is None:
            scale = _header(path, cells, lineno)
            continue
        if len(cells) != 2:
            raise InputFileError(
                path, f"expected 2 columns (range, depth), got {len(cells)}", lineno
            )
        values = []
        for col, cell in enumerate(cells, start=1):
            try:
                values.append(float(cell))
            except ValueError:
                raise InputFileError(path, f"not a number: {cell!r}", lineno, col) from None
        r, z = values[0] * scale[0], values[1] * scale[1]
        if not (np.isfinite(r) and np.isfinite(z)):
            raise InputFileError(path, "range and depth must be finite", lineno)
        if r < 0:
            raise InputFileError(
                path, f"range must be at or beyond the source (>= 0 m), got {r:g} m", lineno, 1
            )
        if z <= 0:
            raise InputFileError(
                path, f"bottom depth must be below the surface (> 0 m), got {z:g} m", lineno, 2
            )
        if r in first_line:
            raise InputFileError(
                path,
                f"range {r:g} m repeats the range of line {first_line[r]}; ranges must not repeat",
                lineno,
                1,
            )
        first_line[r] = lineno
        rows.append((r, z))
    if scale is None:
        raise InputFileError(path, f"empty: expected a header ({_EXAMPLE}) and points")
    if not rows:
        raise InputFileError(path, "no (range, depth) points after the header")
    arr = np.array(rows)
    arr = arr[np.argsort(arr[:, 0], kind="stable")]
    return arr[:, 0], arr[:, 1]
