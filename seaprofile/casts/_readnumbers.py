"""A compiled parser for blocks of plain decimal numbers, exact or not at all.

Private to :mod:`seaprofile.casts._readtext`. :func:`parse_block` turns the numeric rows of
a text cast (ASCII bytes, rows separated by newlines, cells by one delimiter or by runs of
whitespace) into a float64 array in one pass. It accepts only what it can convert exactly:
``[+-]digits[.digits][(e|E)[+-]digits]`` with at most 15 significant digits in the mantissa
and a decimal exponent (after moving the point) within -22..22. In that range the mantissa
``m`` and the power ``10**k`` are both exact doubles, so ``m * 10**k`` or ``m / 10**k`` is
one correctly rounded IEEE operation: the same double as a correctly rounded decimal
conversion (:func:`float`, :func:`numpy.loadtxt`). This is the classic exact case of
decimal-to-binary conversion (Clinger 1990, "How to read floating point numbers
accurately", Proc. ACM SIGPLAN PLDI '90, 92-101, doi:10.1145/93542.93557).

Anything else (``nan``, empty cells, blank lines, a wrong number of cells, more digits, a
larger exponent) makes it return None, and the caller falls back to a general parser.
"""

from __future__ import annotations

import numba
import numpy as np

#: 10**0 .. 10**22, every one an exact double
_POW10 = np.array([10.0**k for k in range(23)], dtype=np.float64)
_MAX_MANTISSA = 900719925474098  # m <= this keeps 10 * m + 9 below 2**53
_FAILED = -1


@numba.njit(cache=True, inline="always")
def _skip_blanks(buf, i, delim):
    n = buf.size
    while i < n and (buf[i] == 32 or buf[i] == 9) and buf[i] != delim:
        i += 1
    return i


@numba.njit(cache=True, inline="always")
def _number(buf, i, pow10):
    """Parse one number at ``buf[i]``: (value, next index), or (0.0, _FAILED)."""
    n = buf.size
    negative = False
    if i < n and (buf[i] == 43 or buf[i] == 45):  # + -
        negative = buf[i] == 45
        i += 1
    mantissa = 0
    digits = 0
    shift = 0
    while i < n and 48 <= buf[i] <= 57:
        if mantissa > _MAX_MANTISSA:
            return 0.0, _FAILED
        mantissa = 10 * mantissa + (buf[i] - 48)
        digits += 1
        i += 1
    if i < n and buf[i] == 46:  # .
        i += 1
        while i < n and 48 <= buf[i] <= 57:
            if mantissa > _MAX_MANTISSA:
                return 0.0, _FAILED
            mantissa = 10 * mantissa + (buf[i] - 48)
            digits += 1
            shift += 1
            i += 1
    if digits == 0:
        return 0.0, _FAILED
    exponent = 0
    if i < n and (buf[i] == 101 or buf[i] == 69):  # e E
        i += 1
        exp_negative = False
        if i < n and (buf[i] == 43 or buf[i] == 45):
            exp_negative = buf[i] == 45
            i += 1
        exp_digits = 0
        while i < n and 48 <= buf[i] <= 57:
            if exponent < 10000:
                exponent = 10 * exponent + (buf[i] - 48)
            exp_digits += 1
            i += 1
        if exp_digits == 0:
            return 0.0, _FAILED
        if exp_negative:
            exponent = -exponent
    power = exponent - shift
    if mantissa == 0:
        value = 0.0
    elif 0 <= power <= 22:
        value = float(mantissa) * pow10[power]
    elif -22 <= power < 0:
        value = float(mantissa) / pow10[-power]
    else:
        return 0.0, _FAILED
    return (-value if negative else value), i


@numba.njit(cache=True)
def _parse_block_kernel(buf, delim, width, out, pow10):
    """Fill ``out`` (rows, width) from ``buf``; returns the rows parsed or _FAILED.

    ``delim`` is the delimiter byte, or 0 for runs of spaces and tabs.
    """
    n = buf.size
    rows = out.shape[0]
    i = 0
    for row in range(rows):
        col = 0
        while True:
            i = _skip_blanks(buf, i, delim)
            value, j = _number(buf, i, pow10)
            if j == _FAILED or col >= width:
                return _FAILED
            out[row, col] = value
            col += 1
            i = _skip_blanks(buf, j, delim)
            if i >= n or buf[i] == 10:  # end of the row
                break
            if delim != 0:
                if buf[i] != delim:
                    return _FAILED
                i += 1
            elif i == j:  # whitespace-separated: the number must end at a blank
                return _FAILED
        if col != width:
            return _FAILED
        i += 1  # past the newline
    if i < n:  # more rows than expected
        return _FAILED
    return rows


def parse_block(block, delim, width):
    """Rows of plain numbers -> float64 array (rows, width), or None when not exact.

    Parameters
    ----------
    block : bytes
        ASCII rows joined by ``b"\\n"`` (no trailing newline).
    delim : str or None
        One-character delimiter, or None for runs of spaces and tabs.
    width : int
        Numbers per row.
    """
    if width < 1 or not block:
        return None
    buf = np.frombuffer(block, dtype=np.uint8)
    rows = block.count(b"\n") + 1
    out = np.empty((rows, width), dtype=np.float64)
    code = 0 if delim is None else ord(delim)
    if _parse_block_kernel(buf, code, width, out, _POW10) != rows:
        return None
    return out
