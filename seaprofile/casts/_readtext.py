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
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import InputFileError, SeaprofileError
from ._readcast import _flag_values, _Raw, file_stem
from ._readnumbers import parse_block
from .columns import (
    KIND,
    META_KEYS,
    MISSING_TOKENS,
    normalise_name,
    parse_position,
    parse_time,
    parse_unit,
    recognise_column,
    split_header,
)
from .model import INSTRUMENTS

#: characters a plain numeric block may hold (besides its delimiter) for the one-call parse:
#: digits, sign, decimal point, exponent, the letters of "nan", spaces, tabs and newlines
_PLAIN = b"0123456789+-.eEnNaA \t\n"


@dataclass
class _Table:
    """The rows of a text file: header, metadata and numbers (parsed at once when plain).

    ``texts`` are the data lines (stripped in the careful path; in the fast path split from
    the numeric block on first use); ``lines`` their line numbers in the file. ``plain`` is
    the whole numeric block as float64 when the one-call parse succeeded (rows x columns),
    else None; ``rows`` (cells as text) are split only when needed.
    """

    path: Path
    meta: dict  # key -> (value, line)
    headers: list
    header_line: int
    _texts: list | None  # the data lines (None: split from _block when needed)
    lines: np.ndarray  # line number of each row
    split: object  # list of lines -> list of lists of cells (str)
    plain: np.ndarray | None = None
    _rows: list | None = field(default=None, repr=False)
    encoding: str = "utf-8"
    decimal_comma: bool = False  # "1,5" is 1.5 (the delimiter is not a comma)
    _block: str | None = field(default=None, repr=False)  # the data lines joined by "\n"

    @property
    def texts(self):
        """The data lines, a :class:`_Lines` (split from the block on first use)."""
        if self._texts is None:
            self._texts = _Lines(self._block.split("\n"), self.lines)
        return self._texts

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
                rows = _Lines([self.texts[k].strip() for k in odd], self.lines[odd])
                cells = [r[j] for r in self.split(rows)]
                values[odd] = _cells_to_numbers(self.path, cells, self.lines[odd], self.label(j))
        else:
            cells = [r[j] for r in self.rows]
            if self.decimal_comma:
                cells = [c.replace(",", ".") if _DECIMAL_COMMA.match(c) else c for c in cells]
            values = _cells_to_numbers(self.path, cells, self.lines, self.label(j))
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
                raise InputFileError(
                    path, f"expected a number, got {str(s)!r}", int(lines[k]), label
                )
    return values


def _plain_numbers(block, n_rows, delim, width):
    """The numeric block (``n_rows`` lines joined by newlines) parsed in one call, or None
    when it is not plain.

    Plain means: only the characters of :data:`_PLAIN` and the delimiter, no blank or
    comment lines between rows, every row ``width`` numbers. The compiled exact parser
    (:mod:`._readnumbers`) is tried first, then :func:`numpy.loadtxt`. Anything else (missing-value
    words, ragged rows, stray characters) returns None and the caller takes the careful
    path, so errors keep naming their line and column.
    """
    if not block.isascii():
        return None
    raw = block.encode("ascii")
    if raw.translate(None, _PLAIN + (delim or "").encode("ascii")):
        return None
    if width is None:  # no header: the first row tells (no quotes can occur here)
        first = block.split("\n", 1)[0]
        width = len(first.split(delim) if delim else first.split())
    values = parse_block(raw, delim, width)  # compiled, exact cases only
    if values is not None:
        return values
    try:
        values = np.loadtxt(
            block.split("\n"),
            dtype=np.float64,
            delimiter=delim,
            comments=None,
            quotechar=None,
            ndmin=2,
        )
    except ValueError:
        return None
    if values.shape[0] != n_rows or (width is not None and values.shape[1] != width):
        return None
    return values


_BOMS = (
    (b"\x00\x00\xfe\xff", "utf-32-be"),
    (b"\xff\xfe\x00\x00", "utf-32-le"),
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xfe\xff", "utf-16-be"),
    (b"\xff\xfe", "utf-16-le"),
)
#: control characters that never occur in a text cast (tab, newline, carriage return are fine)
_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
#: the same characters as bytes: in UTF-8 they are these bytes and no others are them
_CONTROL_BYTES = bytes([*range(0x00, 0x09), 0x0B, 0x0C, *range(0x0E, 0x20), 0x7F])
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")


def _utf16_without_bom(raw):
    """'utf-16-le'/'utf-16-be' when every other byte is NUL (ASCII text in UTF-16), else None."""
    if len(raw) < 4 or len(raw) % 2 or b"\x00" not in raw:  # no NUL: not UTF-16 ASCII
        return None
    even, odd = raw[0::2], raw[1::2]
    if odd.count(0) == len(odd) and even.count(0) == 0:
        return "utf-16-le"
    if even.count(0) == len(even) and odd.count(0) == 0:
        return "utf-16-be"
    return None


def _decode(path, raw):
    """The text of a file and its encoding: UTF-8 (BOM or not), UTF-16/32 (BOM, or UTF-16
    ASCII without BOM); anything else, NUL bytes and control characters are errors."""
    enc = next((e for bom, e in _BOMS if raw.startswith(bom)), None) or _utf16_without_bom(raw)
    try:
        text = raw.decode(enc or "utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1 if enc in (None, "utf-8-sig") else None
        raise InputFileError(
            path,
            f"not {(enc or 'UTF-8').upper().replace('-SIG', '')} text "
            f"(undecodable byte at offset {exc.start}); save it as UTF-8",
            line,
        ) from None
    # UTF-8 text holds a control character exactly where its bytes hold one (one byte
    # deletion pass instead of the slower regular-expression scan); the search then finds it
    utf8 = enc in (None, "utf-8-sig")
    clean = utf8 and len(raw.translate(None, _CONTROL_BYTES)) == len(raw)
    bad = None if clean else _CONTROL.search(text)
    if bad:
        line = text.count("\n", 0, bad.start()) + 1
        raise InputFileError(
            path, f"binary data, not text (control character U+{ord(bad.group()):04X})", line
        )
    return text.lstrip("\ufeff"), (enc or "utf-8").replace("-sig", "")


def _numeric_row(cells):
    """True when every cell of a row is a number (decimal commas allowed): no header."""
    if not cells:
        return False
    for c in cells:
        try:
            float(c.replace(",", ".") if _DECIMAL_COMMA.match(c) else c)
        except ValueError:
            return False
    return True


def _splitter(path, delim):
    """lines -> lists of cells; a cell beyond the csv module's limit names its line."""
    if delim is None:
        return lambda items: [s.split() for s in items]

    def split(items):
        try:
            return [[c.strip() for c in r] for r in csv.reader(items, delimiter=delim)]
        except csv.Error as exc:
            for k, item in enumerate(items):  # noqa: B007  (k names the bad row below)
                try:
                    list(csv.reader([item], delimiter=delim))
                except csv.Error:
                    break
            raise InputFileError(
                path, f"cannot split the row: {exc}", getattr(items, "line_of", lambda k: None)(k)
            ) from None

    return split


class _Lines(list):
    """Data lines that know their line numbers in the file (for split errors)."""

    def __init__(self, items, numbers):
        super().__init__(items)
        self.numbers = numbers if isinstance(numbers, np.ndarray) else list(numbers)

    def line_of(self, k):
        return int(self.numbers[k]) if k < len(self.numbers) else None


def _parse_text(path, delimiter, header=None):
    """The table of a text file; ``header`` True/False, or None to tell from the first row
    (a row of numbers only is data: the file has no header row)."""
    text, encoding = _decode(path, path.read_bytes())
    if not text.strip():
        raise InputFileError(path, "the file is empty")
    if "\r" in text:
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    meta, head, start, notes = {}, None, None, []
    # metadata and header, line by line: stop at the first data row (the numeric block
    # after it is split into lines only where needed)
    for i, offset, line in _numbered_lines(text):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            if head is None:
                _meta_line(s[1:], i + 1, meta, notes)
            continue
        if head is None and header is None:  # a first row of numbers is data
            d = _delimiter(path, delimiter, s)
            header = not _numeric_row(_splitter(path, d)([s])[0])
        if head is None and header:
            head = (i + 1, s)
        else:
            start, start_offset, start_text = i, offset, s
            break
    _own_attributes(meta, notes)
    if header is not False and head is None and start is None:
        raise InputFileError(path, "no header row (only comment lines)", text.count("\n") + 1)
    if start is None:
        where = head[0] if head else None
        raise InputFileError(path, "no data rows" + (" after the header" if head else ""), where)
    delim = _delimiter(path, delimiter, head[1] if head else start_text)
    split = _splitter(path, delim)
    headers = None
    if head:
        headers = split(_Lines([head[1]], [head[0]]))[0]
        for j, h in enumerate(headers):
            if not h:
                raise InputFileError(path, "empty header cell", head[0], j + 1)
    header_line = head[0] if head else 0
    block = _without_trailing_blank_lines(text[start_offset:])
    n_rows = block.count("\n") + 1
    plain = _plain_numbers(block, n_rows, delim, len(headers) if headers else None)
    if plain is not None:  # fast path: consecutive plain rows
        headers = headers or [f"column {j + 1}" for j in range(plain.shape[1])]
        lines = np.arange(start + 1, start + 1 + n_rows, dtype=np.int64)
        return _Table(
            path,
            meta,
            headers,
            header_line,
            None,
            lines,
            split,
            plain,
            encoding=encoding,
            decimal_comma=delim != ",",
            _block=block,
        )
    # careful path: blank and comment lines skipped, every row checked
    rows, lines = [], []
    for i, line in enumerate(block.split("\n"), start + 1):
        s = line.strip()
        if s and not s.startswith("#"):
            rows.append(s)
            lines.append(i)
    rows = _Lines(rows, lines)
    cells = split(rows)
    headers = headers or [f"column {j + 1}" for j in range(len(cells[0]))]
    n = len(headers)
    lengths = np.fromiter((len(r) for r in cells), dtype=np.int64, count=len(cells))
    bad = np.flatnonzero(lengths != n)
    if bad.size:
        k = int(bad[0])
        raise InputFileError(
            path,
            f"expected {n} fields as in the "
            f"{'header' if head else 'first row'}, got {lengths[k]} "
            "(ragged row)",
            lines[k],
            min(int(lengths[k]), n) + 1,
        )
    return _Table(
        path,
        meta,
        headers,
        header_line,
        rows,
        np.asarray(lines, dtype=np.int64),
        split,
        None,
        cells,
        encoding=encoding,
        decimal_comma=delim != ",",
    )


def _numbered_lines(text):
    """``(index, offset, line)`` of each line of ``text`` (split at "\\n"), one at a time."""
    i = pos = 0
    while (end := text.find("\n", pos)) >= 0:
        yield i, pos, text[pos:end]
        i, pos = i + 1, end + 1
    yield i, pos, text[pos:]


def _without_trailing_blank_lines(rest):
    """``rest`` up to the end of its last line that holds more than whitespace."""
    cut = rest.find("\n", len(rest.rstrip()))
    return rest if cut < 0 else rest[:cut]


def _delimiter(path, given, line):
    names = {
        ",": ",",
        "comma": ",",
        "\t": "\t",
        "tab": "\t",
        ";": ";",
        "semicolon": ";",
        "whitespace": None,
        " ": None,
        "space": None,
    }
    if given is not None:
        if given not in names:
            raise SeaprofileError(f"delimiter must be one of {sorted(names)}, got {given!r}")
        return names[given]
    for d in ("\t", ";", ","):  # a comma may be a decimal comma in the other two
        if d in line:
            return d
    return None


_IDENTIFIER = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
_OWN_FILE = "seaprofile CSV file"


def _meta_line(text, lineno, meta, notes):
    """One ``# ...`` line before the header: a recognised ``key: value`` (:data:`META_KEYS`)
    fills ``meta``; anything else is kept, as written, in ``notes``."""
    text = text.strip()
    key, sep, value = text.partition(":")
    name = META_KEYS.get(normalise_name(key)) if sep else None
    if name is None:
        notes.append((text, lineno))
        return
    value = value.strip()
    if name in meta:
        meta[name] = (meta[name][0] + "\n" + value, meta[name][1])
    else:
        meta[name] = (value, lineno)


def _own_attributes(meta, notes):
    """Fold the unrecognised comment lines into ``meta``.

    In a file written by :func:`seaprofile.casts.write.write_csv` (first comment line
    ``seaprofile CSV file``) every ``# attribute: value`` line is one of its own attributes
    and comes back as such. In any other file, free text never becomes attribute names:
    the lines are kept together in one ``comment`` attribute.
    """
    own = bool(notes) and notes[0][0] == _OWN_FILE
    free = []
    for text, lineno in notes[1:] if own else notes:
        key, sep, value = text.partition(":")
        if own and sep and _IDENTIFIER.match(key.strip()):
            k, value = key.strip(), value.strip()
            meta[k] = (meta[k][0] + "\n" + value, meta[k][1]) if k in meta else (value, lineno)
        elif text:
            free.append(text)
    if free:
        old = meta.get("comment")
        joined = "\n".join(([old[0]] if old else []) + free)
        meta["comment"] = (joined, old[1] if old else notes[0][1])


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
            elif key == "bottom_depth":
                out[key] = float(value)
                if not (np.isfinite(out[key]) and out[key] > 0):
                    raise SeaprofileError(f"expected a depth in m above 0, got {value!r}")
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


#: a file without a header row and two columns: depth (m) and sound speed (m/s), as
#: :func:`seaprofile.casts.write.write_speed_table` writes them
HEADERLESS_PAIR = {"depth": 1, "measured_sound_speed": 2}


def _column_index(t, var, head):
    """The index of the column ``head`` (a header cell, or a 1-based position)."""
    if isinstance(head, int):
        if head > len(t.headers):
            raise InputFileError(
                t.path,
                f"columns: {var} is column {head}, but the rows have {len(t.headers)} columns",
                t.header_line or int(t.lines[0]),
            )
        return head - 1
    if not t.header_line:
        raise InputFileError(
            t.path,
            f"columns: {var}={head!r} names a header cell, but the "
            "file has no header row; map columns by position "
            "(e.g. 1=depth,2=sound_speed)",
            int(t.lines[0]),
        )
    idx = [j for j, h in enumerate(t.headers) if h == head] or [
        j for j, h in enumerate(t.headers) if h.lower() == head.lower()
    ]
    if len(idx) != 1:
        raise InputFileError(
            t.path,
            f"columns: {var}={head!r} matches {len(idx)} header cells; the header has {t.headers}",
            t.header_line,
        )
    return idx[0]


def _text_raw_cast(t, columns, units):
    path = t.path
    used, flags, ignored = {}, {}, []
    if not t.header_line and not columns:
        if len(t.headers) != 2:
            raise InputFileError(
                path,
                f"no header row and {len(t.headers)} columns: map "
                "them by position, e.g. columns='1=pressure,2=temperature,"
                "3=salinity' (two columns without a header are read as "
                "depth m, sound speed m/s)",
                int(t.lines[0]),
            )
        columns = HEADERLESS_PAIR
    for var, head in columns.items():
        j = _column_index(t, var, head)
        unit_text = units.get(var, None if isinstance(head, int) else split_header(head)[1])
        unit = None if unit_text is None else parse_unit(unit_text)
        if unit_text is not None and (unit is None or unit.kind != KIND[var]):
            raise InputFileError(
                path,
                f"unit {unit_text!r} is not a {KIND[var]} unit for {var}",
                t.header_line or None,
                t.label(j),
            )
        if j in {k for k, _ in used.values()}:
            raise InputFileError(
                path, f"columns: column {t.label(j)} is mapped twice", t.header_line or None
            )
        used[var] = (j, unit)
    if not t.header_line:  # the unmapped columns of a headerless file
        ignored += [
            t.headers[j] for j in range(len(t.headers)) if j not in {k for k, _ in used.values()}
        ]
    taken = {j for j, _ in used.values()}
    for j, h in enumerate(t.headers if t.header_line else ()):
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
                raise InputFileError(
                    path, f"two flag columns for {g.variable}", t.header_line, t.label(j)
                )
            flags[g.variable] = j
        elif g.variable in used:
            first = t.label(used[g.variable][0])
            raise InputFileError(
                path,
                f"columns {first} and {t.label(j)} both look like {g.variable}; choose "
                f"one with columns={{'{g.variable}': ...}}",
                t.header_line,
                t.label(j),
            )
        else:
            unit = parse_unit(units[g.variable]) if g.variable in units else g.unit
            used[g.variable] = (j, unit)
    if not used:
        raise InputFileError(
            path,
            f"no recognisable columns in the header {t.headers}; map them with columns=",
            t.header_line,
        )
    meta = _meta_values(path, t.meta)
    missing_value = meta.pop("missing_value", None)
    fmt = "text" if t.encoding == "utf-8" else f"text ({t.encoding})"
    raw = _Raw({}, meta=meta, ignored=ignored, file_format=fmt)
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
        raise InputFileError(
            t.path, "a profile file needs a 'depth [m]' column", t.header_line or None
        )
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
    name = meta.pop("profile_id", meta.get("cast_name", file_stem(t.path)))
    coords["profile_id"] = ((), str(name), _cf.attrs_for("profile_id"))
    data = {k: ("depth", v, a) for k, (v, a) in variables.items()}
    return xr.Dataset(data, coords=coords, attrs=meta)
