"""Beam-record files to soundings, in chunks: a file of 10^7 beams never sits in memory.

A beam-record file is delimited text: optional ``#`` lines, one header row, then one beam
per line. Columns are found by name (units in ``[...]`` or ``(...)`` after the name):

* ``ping`` (required), ``beam_angle`` (degrees from the vessel's vertical, + starboard),
  ``travel_time`` (s; ``ms`` accepted), optional ``roll`` (degrees, + starboard down; added
  to the beam angle), optional ``transducer_sound_speed`` (m/s);
* every other column (time, position, ...) is copied to the output as written.

Rows are never dropped: a cell that is not a number, an angle outside (-90, 90), a
negative time or a line with the wrong number of fields is flagged (``BAD_INPUT``) and its
sounding left empty; ``strict=True`` makes the first one an error naming file, line and
column.
"""

from __future__ import annotations

import re
import warnings

import numpy as np

from .._cf import CAUTION
from .._validate import InputFileError, SeaprofileError
from ..casts._atomic import atomic_write
from ..survey._kernels import MISSING, OK, TURNED
from ..survey.refraction import TurnedBeamWarning, beam_to_sounding, straight_ray_sounding

__all__ = ["BAD_INPUT", "BELOW_PROFILE", "BEAM_FLAGS", "DEFAULT_CHUNK_ROWS", "convert_beam_file"]

#: rows per chunk read and written
DEFAULT_CHUNK_ROWS = 100_000
BAD_INPUT = 3
BELOW_PROFILE = 4

#: flag values of the output ``flag`` column
BEAM_FLAGS = {
    OK: "sounding computed",
    TURNED: "beam turned (total internal reflection) before using its travel time: empty",
    MISSING: "travel time, beam angle, roll or transducer sound speed missing: empty",
    BAD_INPUT: "unreadable or impossible input value (see the warning): empty",
    BELOW_PROFILE: "computed below the profile's deepest level (its last speed held)",
}

_ALIASES = {
    "ping": "ping",
    "ping_number": "ping",
    "beam_angle": "beam_angle",
    "angle": "beam_angle",
    "roll": "roll",
    "travel_time": "travel_time",
    "two_way_travel_time": "travel_time",
    "one_way_travel_time": "travel_time",
    "transducer_sound_speed": "transducer_sound_speed",
    "surface_sound_speed": "transducer_sound_speed",
}
_UNITS = {
    "ping": {"": 1.0, "1": 1.0},
    "beam_angle": {"": 1.0, "deg": 1.0, "degree": 1.0, "degrees": 1.0},
    "roll": {"": 1.0, "deg": 1.0, "degree": 1.0, "degrees": 1.0},
    "travel_time": {"": 1.0, "s": 1.0, "ms": 1e-3},
    "transducer_sound_speed": {"": 1.0, "m/s": 1.0, "m s-1": 1.0},
}
_NAME_UNIT = re.compile(r"^\s*([^\[\(]*?)\s*(?:[\[\(]\s*([^\]\)]*?)\s*[\]\)])?\s*$")


def _parse_header(path, line_no, header):
    names = [h.strip() for h in header.rstrip("\r\n").split(",")]
    found, scale = {}, {}
    for i, text in enumerate(names):
        m = _NAME_UNIT.match(text)
        key = re.sub(r"[\s\-]+", "_", (m.group(1) if m else text).lower())
        unit = (m.group(2) or "").lower() if m else ""
        role = _ALIASES.get(key)
        if role is None:
            continue
        if role in found:
            raise InputFileError(path, f"two columns give {role}", line_no, text)
        if unit not in _UNITS[role]:
            raise InputFileError(
                path,
                f"unit {unit!r} of {role} is not one of {', '.join(u for u in _UNITS[role] if u)}",
                line_no,
                text,
            )
        found[role], scale[role] = i, _UNITS[role][unit]
    for role in ("ping", "beam_angle", "travel_time"):
        if role not in found:
            raise InputFileError(
                path,
                f"no {role} column in the header {header.strip()!r} (columns by name: "
                "ping, beam_angle [deg], travel_time [s], optional roll [deg], "
                "transducer_sound_speed [m/s])",
                line_no,
            )
    return names, found, scale


def _start(path):
    """Line number (1-based) of the header and the comment lines above it."""
    comments = []
    with open(path, encoding="utf-8", errors="replace") as f:
        for n, line in enumerate(f, 1):
            if line.startswith("#") or not line.strip():
                comments.append(line.rstrip("\r\n"))
                continue
            return n, line, comments
    raise InputFileError(path, "no header row (ping, beam_angle, travel_time, ...)")


class _Bad:
    """The unreadable or impossible cells met so far (first one kept for the message)."""

    def __init__(self, path, strict):
        self.path, self.strict, self.count, self.first = str(path), strict, 0, None

    def add(self, lines, column, reason, mask):
        n = int(np.count_nonzero(mask))
        if not n:
            return
        line = int(lines[np.flatnonzero(mask)[0]])
        if self.strict:
            raise InputFileError(self.path, reason, line, column)
        self.count += n
        if self.first is None:
            self.first = (line, column, reason)


def _numbers(cells, lines, column, bad):
    """Column of text cells -> float (NaN: empty or 'nan'); unreadable cells flagged."""
    import pandas as pd

    text = pd.Series(cells, dtype=object)
    values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float)
    stripped = text.fillna("").astype(str).str.strip().str.lower()
    missing = stripped.isin(["", "nan"]).to_numpy()
    unreadable = np.isnan(values) & ~missing
    if unreadable.any():
        sample = text[unreadable].iloc[0]
        bad.add(lines, column, f"{sample!r} is not a number", unreadable)
    return values, unreadable


def convert_beam_file(
    path,
    output,
    profile_depth,
    profile_sound_speed,
    *,
    transducer_depth=0.0,
    two_way=True,
    straight_ray=False,
    chunk_rows=DEFAULT_CHUNK_ROWS,
    strict=False,
    overwrite=False,
    profile_name="",
):
    """Convert a beam-record file to soundings, chunk by chunk, into a CSV written atomically.

    Parameters
    ----------
    path : str or pathlib.Path
        Beam-record file (module docstring: columns by name).
    output : str or pathlib.Path
        CSV to write (temporary name in the same directory, renamed when complete).
    profile_depth, profile_sound_speed : array_like
        Profile nodes, m positive down, and sound speed, m/s.
    transducer_depth : float
        Transducer depth, m, positive down.
    two_way : bool
        Travel times are two-way (else one-way), s.
    straight_ray : bool
        Also write the straight-ray depth and across-track distance at the transducer
        sound speed (the comparison without refraction).
    chunk_rows : int
        Rows read, converted and written at a time.
    strict : bool
        The first unreadable or impossible value is an error (file, line, column) instead
        of a flagged row.
    overwrite : bool
        Replace an existing ``output``.
    profile_name : str
        Written into the output's header lines.

    Returns
    -------
    dict
        ``rows``, ``flags`` (count per :data:`BEAM_FLAGS` value), ``first_bad`` (line,
        column, reason) or None, ``depth_range`` and ``across_range`` (m) of computed rows.

    Notes
    -----
    Soundings by :func:`seaprofile.survey.beam_to_sounding` (exact arcs through the
    profile's layers). The angle from the true vertical is ``beam_angle + roll``. Beams
    with their own ``transducer_sound_speed`` are traced in groups of equal speed.
    Not for navigation on its own.
    """
    import pandas as pd

    if int(chunk_rows) < 1:
        raise SeaprofileError(f"chunk_rows must be at least 1, got {chunk_rows}")
    z = np.asarray(profile_depth, dtype=float)
    c = np.asarray(profile_sound_speed, dtype=float)
    deepest = float(z[-1])
    c_transducer = float(np.interp(transducer_depth, z, c))
    header_line, header, comments = _start(path)
    names, found, scale = _parse_header(path, header_line, header)
    used = set(found.values())
    others = [i for i in range(len(names)) if i not in used]
    bad = _Bad(path, strict)
    counts = {k: 0 for k in BEAM_FLAGS}
    ranges = {"depth": [np.inf, -np.inf], "across": [np.inf, -np.inf]}
    total = [0]

    def fill(tmp):
        with open(tmp, "w", encoding="utf-8", newline="\n") as out:
            out.write(f"# soundings from {path} (seaprofile soundings)\n")
            out.write(f"# profile: {profile_name}\n")
            out.write(f"# transducer_depth: {transducer_depth:g} m\n")
            out.write(f"# travel_time: {'two-way' if two_way else 'one-way'}\n")
            out.write("# flags: " + "; ".join(f"{k} {v}" for k, v in BEAM_FLAGS.items()) + "\n")
            out.write(f"# caution: {CAUTION}\n")
            cols = ["line", "ping", "beam_angle [deg]", "depth [m]", "across_track [m]", "flag"]
            if straight_ray:
                cols += ["straight_ray_depth [m]", "straight_ray_across_track [m]"]
            cols += [names[i] for i in others]
            out.write(",".join(cols) + "\n")
            reader = pd.read_csv(
                path,
                skiprows=header_line,
                header=None,
                names=list(range(len(names))),
                dtype=str,
                keep_default_na=False,
                skip_blank_lines=False,
                chunksize=int(chunk_rows),
                engine="c",
                on_bad_lines="error",
            )
            row0 = header_line + 1
            try:
                for chunk in reader:
                    row0 = _one_chunk(chunk, row0, out)
            except pd.errors.ParserError as exc:
                m = re.search(r"line (\d+)", str(exc))
                line = header_line + int(m.group(1)) - 1 if m else None
                raise InputFileError(
                    path,
                    f"more fields than the header's {len(names)} columns",
                    line,
                ) from None

    def _one_chunk(chunk, row0, out):
        n = len(chunk)
        lines = np.arange(row0, row0 + n)
        short = chunk.isna().any(axis=1).to_numpy()
        bad.add(lines, None, f"fewer fields than the header's {len(names)} columns", short)
        cell = {}
        flagged = short.copy()
        for role, i in found.items():
            values, unreadable = _numbers(chunk[i].to_numpy(), lines, names[i], bad)
            cell[role] = values * scale[role]
            flagged |= unreadable
        angle = cell["beam_angle"] + (cell["roll"] if "roll" in cell else 0.0)
        tt = cell["travel_time"]
        impossible = np.isinf(angle) | (np.abs(angle) >= 90.0)
        bad.add(
            lines,
            names[found["beam_angle"]],
            "beam angle (with roll) outside -90..90 degrees",
            impossible & ~flagged,
        )
        flagged |= impossible
        negative = np.isinf(tt) | (tt < 0)
        bad.add(lines, names[found["travel_time"]], "negative travel time", negative & ~flagged)
        flagged |= negative
        if "transducer_sound_speed" in cell:
            cs = cell["transducer_sound_speed"]
            wrong = np.isinf(cs) | (cs <= 0)
            bad.add(
                lines,
                names[found["transducer_sound_speed"]],
                "transducer sound speed not positive",
                wrong & ~flagged,
            )
            flagged |= wrong
        else:
            cs = np.full(n, c_transducer)
        angle = np.where(flagged, np.nan, angle)
        tt = np.where(flagged, np.nan, tt)
        depth = np.full(n, np.nan)
        across = np.full(n, np.nan)
        flags = np.full(n, MISSING, dtype=np.int8)
        s_depth = np.full(n, np.nan)
        s_across = np.full(n, np.nan)
        ok_speed = np.isfinite(cs)
        speeds, groups = np.unique(np.where(ok_speed, cs, -1.0), return_inverse=True)
        for g, speed in enumerate(speeds):
            if speed <= 0:  # missing speed: the rows stay MISSING
                continue
            rows = np.flatnonzero(groups == g) if speeds.size > 1 else slice(None)
            a, t = angle[rows], tt[rows]
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", TurnedBeamWarning)
                d, x, f = beam_to_sounding(
                    z,
                    c,
                    a,
                    t,
                    transducer_depth=transducer_depth,
                    transducer_sound_speed=speed,
                    two_way=two_way,
                    return_flags=True,
                )
            depth[rows], across[rows], flags[rows] = d, x, f
            if straight_ray:
                s_depth[rows], s_across[rows] = straight_ray_sounding(
                    a, t, speed, transducer_depth=transducer_depth, two_way=two_way
                )
        flags[flagged] = BAD_INPUT
        flags[(flags == OK) & (depth > deepest)] = BELOW_PROFILE
        for k in BEAM_FLAGS:
            counts[k] += int(np.count_nonzero(flags == k))
        good = np.isfinite(depth)
        if good.any():
            for key, v in (("depth", depth[good]), ("across", across[good])):
                ranges[key][0] = min(ranges[key][0], float(v.min()))
                ranges[key][1] = max(ranges[key][1], float(v.max()))
        table = {
            "line": lines,
            "ping": chunk[found["ping"]].to_numpy(),
            "beam_angle": np.round(angle, 4),
            "depth": np.round(depth, 3),
            "across": np.round(across, 3),
            "flag": flags,
        }
        if straight_ray:
            table["s_depth"] = np.round(s_depth, 3)
            table["s_across"] = np.round(s_across, 3)
        for i in others:
            table[f"other{i}"] = chunk[i].fillna("").to_numpy()
        pd.DataFrame(table).to_csv(out, header=False, index=False, na_rep="", lineterminator="\n")
        total[0] += n
        return row0 + n

    atomic_write(output, overwrite, fill)
    return {
        "rows": total[0],
        "flags": counts,
        "first_bad": bad.first,
        "bad_rows": bad.count,
        "depth_range": tuple(ranges["depth"]) if counts[OK] + counts[BELOW_PROFILE] else None,
        "across_range": tuple(ranges["across"]) if counts[OK] + counts[BELOW_PROFILE] else None,
    }
