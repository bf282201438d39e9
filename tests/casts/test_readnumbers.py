"""The compiled block parser gives exactly Python's float() for what it accepts, or declines.

Python's ``float`` is the reference: a correctly rounded decimal-to-binary conversion
(IEEE 754-2008, section 5.12.2). Equality is bit for bit (sign of zero included), so no
tolerance is needed.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.casts._readnumbers import parse_block


def _bits(a):
    return np.asarray(a, dtype=np.float64).view(np.int64)


def _expected(rows, delim):
    return [[float(c) for c in (r.split(delim) if delim else r.split())] for r in rows]


FORMATS = [
    repr,
    "{:.2f}".format,
    "{:.4f}".format,
    "{:.6e}".format,
    "{:.3E}".format,
    "{:g}".format,
    "{:+.1f}".format,
    lambda x: f"{x:.15g}",
    lambda x: f"{x:.17g}",
]


@settings(max_examples=100, deadline=None)
@given(
    values=st.lists(
        st.lists(st.floats(-1e7, 1e7, allow_nan=False), min_size=3, max_size=3),
        min_size=1,
        max_size=20,
    ),
    fmt=st.sampled_from(FORMATS),
    delim=st.sampled_from([",", ";", "\t", None]),
    pad=st.sampled_from(["", " ", "  "]),
)
def test_exact_or_declines(values, fmt, delim, pad):
    sep = (pad + delim + pad) if delim else (pad or " ") + " "
    rows = [pad + sep.join(fmt(x) for x in r) + pad for r in values]
    out = parse_block("\n".join(rows).encode("ascii"), delim, 3)
    if out is not None:
        np.testing.assert_array_equal(_bits(out), _bits(_expected(rows, delim)))


def test_ctd_formats_are_taken_and_exact():
    rng = np.random.default_rng(3)
    p, t, s = rng.uniform(0, 6000, 5000), rng.uniform(-2, 35, 5000), rng.uniform(0, 42, 5000)
    rows = [f"{a:.2f},{b:.4f},{c:.4f}" for a, b, c in zip(p, t, s)]
    out = parse_block("\n".join(rows).encode("ascii"), ",", 3)
    assert out is not None
    np.testing.assert_array_equal(_bits(out), _bits(_expected(rows, ",")))


@pytest.mark.parametrize(
    "text,delim,width,expected",
    [
        ("1,2.5,-3", ",", 3, [[1.0, 2.5, -3.0]]),
        ("-0.0,+.5,5.", ",", 3, [[-0.0, 0.5, 5.0]]),
        ("1e22,1E-22,12.5e+3", ",", 3, [[1e22, 1e-22, 12500.0]]),
        ("123456789012345,0.000001,9", ",", 3, [[123456789012345.0, 1e-6, 9.0]]),
        ("1\t2\n3\t4", "\t", 2, [[1.0, 2.0], [3.0, 4.0]]),
        ("  1 \t 2\n3 4  ", None, 2, [[1.0, 2.0], [3.0, 4.0]]),
    ],
)
def test_accepts(text, delim, width, expected):
    out = parse_block(text.encode("ascii"), delim, width)
    np.testing.assert_array_equal(_bits(out), _bits(expected))


@pytest.mark.parametrize(
    "text,delim,width",
    [
        ("1e23,1,2", ",", 3),  # exponent beyond the exact range
        ("9007199254740993,1,2", ",", 3),  # 16 significant digits
        ("nan,1,2", ",", 3),
        ("1,,2", ",", 3),
        ("1,2,3,", ",", 3),
        ("1,2", ",", 3),
        ("1,2,3\n\n4,5,6", ",", 3),
        ("1.2.3,1,2", ",", 3),
        ("1e,1,2", ",", 3),
        (".,1,2", ",", 3),
        ("1-2 3 4", None, 3),
        ("1;2;3", ",", 3),
        ("", ",", 3),
    ],
)
def test_declines(text, delim, width):
    assert parse_block(text.encode("ascii"), delim, width) is None
