"""Small helpers shared by the command modules: number parsing, tables, JSON output."""

from __future__ import annotations

import json
import math
import sys

from .._validate import SeaprofileError


def parse_length(text, name):
    """Parse a length in metres; accepts a ``km`` or ``m`` suffix (``40km``, ``250m``)."""
    t = str(text).strip().lower()
    scale = 1.0
    if t.endswith("km"):
        t, scale = t[:-2], 1000.0
    elif t.endswith("m"):
        t = t[:-1]
    try:
        value = float(t) * scale
    except ValueError:
        raise SeaprofileError(
            f"{name}: expected a length in metres (e.g. 250 or 40km), got {text!r}"
        ) from None
    if not math.isfinite(value):
        raise SeaprofileError(f"{name}: must be finite, got {text!r}")
    return value


def print_table(rows, columns, file=None):
    """Print ``rows`` (list of dicts) as an aligned plain-text table."""
    file = file or sys.stdout
    cells = [[_fmt(r.get(c)) for c in columns] for r in rows]
    widths = [max([len(c)] + [len(row[i]) for row in cells]) for i, c in enumerate(columns)]
    print("  ".join(c.ljust(w) for c, w in zip(columns, widths)), file=file)
    print("  ".join("-" * w for w in widths), file=file)
    for row in cells:
        print(
            "  ".join(v.rjust(w) if _numeric(v) else v.ljust(w) for v, w in zip(row, widths)),
            file=file,
        )


def print_json(obj, file=None):
    """Print ``obj`` as JSON (NaN written as null)."""
    print(json.dumps(_clean(obj), indent=2), file=file or sys.stdout)


def _clean(obj):
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item"):
        return _clean(obj.item())
    return obj


def _fmt(v):
    if v is None:
        return ""
    if isinstance(v, float):
        return "nan" if not math.isfinite(v) else f"{v:.3f}"
    return str(v)


def _numeric(s):
    try:
        float(s)
        return True
    except ValueError:
        return False
