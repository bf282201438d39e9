"""Delimited text casts: metadata lines, one header row, numeric rows.

Private to :mod:`seaprofile.casts.read`. The numeric block is parsed in one call
(:func:`numpy.loadtxt`) when it holds nothing but plain numbers (``nan`` included; the cells
that parse to NaN are then checked one by one, since ``nan`` is a missing-value word but
``-nan`` is an error). Anything else (other missing-value words, empty cells, blank or
comment lines between rows, ragged rows, stray characters) takes the careful cell-by-cell
path, which names the file, line and column of the first bad cell. Both paths give the same
numbers and the same errors (``tests/casts/test_readtext.py``).
"""

from __future__ import annotations

import csv
import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from .columns import (KIND, META_KEYS, MISSING_TOKENS, normalise_name, parse_position,
                      parse_time, parse_unit, recognise_column, split_header)
from .model import INSTRUMENTS
from ._readcast import _flag_values, _Raw
from ._readnumbers import parse_block


#: characters a plain numeric block may hold (besides its delimiter) for the one-call parse:
#: digits, sign, decimal point, exponent, the letters of "nan", spaces, tabs and newlines
_PLAIN = b"0123456789+-.eEnNaA \t\n"


@dataclass
class _Table:
    """The rows of a text file: header, metadata and numbers (parsed at once when plain).

    ``texts`` are the data lines (stripped in the careful path); ``lines`` their line
    numbers in the file. ``plain`` is the whole numeric block as float64 when the one-call
    parse succeeded (rows x columns), else None; ``rows`` (cells as text) are split only
    when needed.
    """

    path: Path
    meta: dict  # key -> (value, line)
    headers: list
    header_line: int
    texts: list  # the data lines
    lines: np.ndarray  # line number of each row
    split: object  # list of lines -> list of lists of cells (str)
    plain: np.ndarray | None = None
    _rows: list | None = field(default=None, repr=False)

    @property
    def rows(self):
        """Cells as text, a list of lists of str (split on first use)."""
        if self._rows is None:
            self._rows = self.split(self.texts)
        return self._rows

    def label(self, j):
        return f"{j + 1} ({self.headers[j]})"

    def numbers(self, j, missing_value=None):
        """Column ``j`` as float64; missing spellings -> NaN; errors name line and column."""
        if self.plain is not None:
            values = self.plain[:, j].copy()
            odd = np.flatnonzero(~np.isfinite(values))
            if odd.size:  # "nan" is a missing spelling; "-nan" is not: check the text
                cells = [r[j] for r in self.split([self.texts[k].strip() for k in odd])]
                values[odd] = _cells_to_numbers(self.path, cells, self.lines[odd],
                                                self.label(j))
        else:
            values = _cells_to_numbers(self.path, [r[j] for r in self.rows], self.lines,
                                       self.label(j))
        if missing_value is not None:
            values[values == missing_value] = np.nan
        return values


def _cells_to_numbers(path, cells, lines, label):
    """Text cells -> float64 (missing spellings -> NaN); the first bad cell is an error."""
    cells = np.array(cells, dtype=str)
    lowered = np.char.lower(np.char.strip(cells))
    missing = np.isin(lowered, MISSING_TOKENS)
    cells = np.where(missing, "nan", cells)
    try:
        values = cells.astype(np.float64)
    except ValueError:
        values = None
    if values is None or not np.all(np.isfinite(values) | missing):
        for k, s in enumerate(cells):
            try:
                ok = np.isfinite(float(s)) or missing[k]
            except ValueError:
                ok = False
            if not ok:
                raise InputFileError(path, f"expected a number, got {str(s)!r}",
                                     int(lines[k]), label)
    return values


def _plain_numbers(texts, delim, width):
    """The numeric block parsed in one call, or None when it is not plain.

    Plain means: only the characters of :data:`_PLAIN` and the delimiter, no blank or
    comment lines between rows, every row ``width`` numbers. The compiled exact parser
    (:mod:`._readnumbers`) is tried first, then :func:`numpy.loadtxt`. Anything else (missing-value
    words, ragged rows, stray characters) returns None and the caller takes the careful
    path, so errors keep naming their line and column.
    """
    block = "\n".join(texts)
    if not block.isascii():
        return None
    raw = block.encode("ascii")
    if raw.translate(None, _PLAIN + (delim or "").encode("ascii")):
        return None
    if width is None:  # no header: the first row tells (no quotes can occur here)
        width = len(texts[0].split(delim) if delim else texts[0].split())
    values = parse_block(raw, delim, width)  # compiled, exact cases only
    if values is not None:
        return values
    try:
        values = np.loadtxt(texts, dtype=np.float64, delimiter=delim, comments=None,
                            quotechar=None, ndmin=2)
    except ValueError:
        return None
    if values.shape[0] != len(texts) or (width is not None and values.shape[1] != width):
        return None
    return values


def _parse_text(path, delimiter, header=True):
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputFileError(path, f"not UTF-8 text (undecodable byte at offset {exc.start})")
    if not text.strip():
        raise InputFileError(path, "the file is empty")
    all_lines = text.splitlines()
    meta, head, start = {}, None, None
    for i, line in enumerate(all_lines):  # metadata and header: stop at the first data row
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            if head is None:
                _meta_line(s[1:], i + 1, meta)
            continue
        if head is None and header:
            head = (i + 1, s)
        else:
            start = i
            break
    if header and head is None:
        raise InputFileError(path, "no header row (only comment lines)", len(all_lines))
    if start is None:
        where = head[0] if head else None
        raise InputFileError(path, "no data rows" + (" after the header" if head else ""), where)
    delim = _delimiter(path, delimiter, head[1] if head else all_lines[start].strip())
    split = (lambda items: [s.split() for s in items]) if delim is None else (
        lambda items: [[c.strip() for c in r] for r in csv.reader(items, delimiter=delim)])
    headers = None
    if head:
        headers = split([head[1]])[0]
        for j, h in enumerate(headers):
            if not h:
                raise InputFileError(path, "empty header cell", head[0], j + 1)
    header_line = head[0] if head else 0
    texts = all_lines[start:]
    while not texts[-1].strip():  # trailing blank lines
        texts.pop()
    plain = _plain_numbers(texts, delim, len(headers) if headers else None)
    if plain is not None:  # fast path: consecutive plain rows
        headers = headers or [f"column {j + 1}" for j in range(plain.shape[1])]
        return _Table(path, meta, headers, header_line, texts,
                      np.arange(start + 1, start + 1 + len(texts), dtype=np.int64), split,
                      plain)
    # careful path: blank and comment lines skipped, every row checked
    rows, lines = [], []
    for i, line in enumerate(texts, start + 1):
        s = line.strip()
        if s and not s.startswith("#"):
            rows.append(s)
            lines.append(i)
    cells = split(rows)
    headers = headers or [f"column {j + 1}" for j in range(len(cells[0]))]
    n = len(headers)
    lengths = np.fromiter((len(r) for r in cells), dtype=np.int64, count=len(cells))
    bad = np.flatnonzero(lengths != n)
    if bad.size:
        k = int(bad[0])
        raise InputFileError(path, f"expected {n} fields as in the header, got {lengths[k]} "
                             "(ragged row)", lines[k], min(int(lengths[k]), n) + 1)
    return _Table(path, meta, headers, header_line, rows, np.asarray(lines, dtype=np.int64),
                  split, None, cells)


def _delimiter(path, given, line):
    names = {",": ",", "comma": ",", "\t": "\t", "tab": "\t", ";": ";", "semicolon": ";",
             "whitespace": None, " ": None, "space": None}
    if given is not None:
        if given not in names:
            raise SeaprofileError(f"delimiter must be one of {sorted(names)}, got {given!r}")
        return names[given]
    for d in (",", "\t", ";"):
        if d in line:
            return d
    return None


def _meta_line(text, lineno, meta):
    if ":" not in text:
        return
    key, value = (s.strip() for s in text.split(":", 1))
    if not key:
        return
    norm = normalise_name(key)
    name = META_KEYS.get(norm, key.replace(" ", "_"))
    if name in meta:
        meta[name] = (meta[name][0] + "\n" + value, meta[name][1])
    else:
        meta[name] = (value, lineno)


def _meta_values(path, meta):
    """Turn ``# key: value`` metadata into Cast fields and attributes."""
    out = {}
    for key, (value, line) in meta.items():
        try:
            if key in ("latitude", "longitude"):
                out[key] = parse_position(value, key)
            elif key == "time":
                out[key] = parse_time(value)
            elif key == "instrument":
                if value.strip().lower() in INSTRUMENTS:
                    out[key] = value.strip().lower()
                else:
                    out["instrument_description"] = value
            elif key == "missing_value":
                out[key] = float(value)
            elif key == "processing_steps":
                steps = json.loads(value)
                if not isinstance(steps, list):
                    raise ValueError
                out[key] = json.dumps(steps)
            elif key != "dataset":
                out[key] = value
        except (SeaprofileError, ValueError) as exc:
            msg = str(exc) if isinstance(exc, SeaprofileError) else f"bad value {value!r}"
            raise InputFileError(path, f"metadata {key!r}: {msg}", line) from None
    return out


def _text_raw_cast(t, columns, units):
    path = t.path
    used, flags, ignored = {}, {}, []
    for var, head in columns.items():
        idx = [j for j, h in enumerate(t.headers) if h == head] or [
            j for j, h in enumerate(t.headers) if h.lower() == head.lower()]
        if len(idx) != 1:
            raise InputFileError(path, f"columns: {var}={head!r} matches {len(idx)} header "
                                 f"cells; the header has {t.headers}", t.header_line)
        unit_text = units.get(var, split_header(head)[1])
        unit = None if unit_text is None else parse_unit(unit_text)
        if unit_text is not None and (unit is None or unit.kind != KIND[var]):
            raise InputFileError(path, f"unit {unit_text!r} is not a {KIND[var]} unit for {var}",
                                 t.header_line, t.label(idx[0]))
        used[var] = (idx[0], unit)
    taken = {j for j, _ in used.values()}
    for j, h in enumerate(t.headers):
        if j in taken:
            continue
        try:
            g = recognise_column(h)
        except SeaprofileError as exc:
            raise InputFileError(path, str(exc), t.header_line, t.label(j)) from None
        if g is None or (not g.is_flag and g.variable in columns):
            ignored.append(h)
        elif g.is_flag:
            if g.variable in flags:
                raise InputFileError(path, f"two flag columns for {g.variable}",
                                     t.header_line, t.label(j))
            flags[g.variable] = j
        elif g.variable in used:
            first = t.label(used[g.variable][0])
            raise InputFileError(
                path, f"columns {first} and {t.label(j)} both look like {g.variable}; choose "
                f"one with columns={{'{g.variable}': ...}}", t.header_line, t.label(j))
        else:
            unit = parse_unit(units[g.variable]) if g.variable in units else g.unit
            used[g.variable] = (j, unit)
    if not used:
        raise InputFileError(path, f"no recognisable columns in the header {t.headers}; map "
                             "them with columns=", t.header_line)
    meta = _meta_values(path, t.meta)
    missing_value = meta.pop("missing_value", None)
    raw = _Raw({}, meta=meta, ignored=ignored, file_format="text")
    for var, (j, unit) in used.items():
        values = t.numbers(j, missing_value)
        if unit is not None and not unit.identity:
            values = values * unit.scale + unit.offset
            raw.conversions[var] = unit.describe()
        raw.data[var] = values
        raw.column_map[var] = t.headers[j]
    for var, j in flags.items():
        if var not in raw.data:
            ignored.append(t.headers[j])
            continue
        raw.flags[var] = _flag_values(t.numbers(j), path, t, j)
    return raw


def _text_profile(t):
    """A Profile from a CSV written by ``write_csv`` (columns named ``name [unit]``)."""
    names = [split_header(h)[0].strip() for h in t.headers]
    if "depth" not in names:
        raise InputFileError(t.path, "a profile file needs a 'depth [m]' column", t.header_line)
    meta = _meta_values(t.path, t.meta)
    meta.pop("missing_value", None)
    variables = {}
    for j, name in enumerate(names):
        values = t.numbers(j)
        if name.endswith("_qc"):
            variables[name] = (_flag_values(values, t.path, t, j), _cf.flag_attrs(name[:-3]))
        elif name == "samples_per_bin":
            variables[name] = (np.nan_to_num(values).astype(np.int32), _cf.attrs_for(name))
        else:
            variables[name] = (values, _cf.attrs_for(name))
    depth = variables.pop("depth")
    coords = {"depth": ("depth", depth[0], depth[1])}
    for c in ("latitude", "longitude"):
        coords[c] = ((), float(meta.pop(c, np.nan)), _cf.attrs_for(c))
    t0 = meta.pop("time", None)
    coords["time"] = ((), np.datetime64("NaT", "ns") if t0 is None else t0, _cf.attrs_for("time"))
    coords["profile_id"] = ((), str(meta.pop("profile_id", meta.get("cast_name", t.path.stem))),
                            {"cf_role": "profile_id", "long_name": "cast name"})
    data = {k: ("depth", v, a) for k, (v, a) in variables.items()}
    return xr.Dataset(data, coords=coords, attrs=meta)

