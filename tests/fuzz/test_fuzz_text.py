"""Hypothesis-made text casts: random headers, delimiters, junk cells, encodings, line ends.

Invariants (no published values here: these are robustness properties):

* the readers return casts or raise one :class:`InputFileError` naming the file, never
  another exception, and never change the file;
* a clean numeric table comes back with exactly the numbers written, whatever the
  delimiter, encoding, byte-order mark and line ends;
* ``seaprofile build`` in-process never shows a traceback and reports a failure in one
  error line naming the file.
"""

from __future__ import annotations

import hashlib
import itertools
import os
import re

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from seaprofile import InputFileError
from seaprofile.casts.read import read_cast, read_casts, read_profile
from seaprofile.cli import main

HEADERS = [
    "pres",
    "PRES [dbar]",
    "P_dbar",
    "Temp [degC]",
    "temp",
    "T90",
    "sal",
    "PSAL",
    "depth [m]",
    "depth_ft",
    "cond [mS/cm]",
    "C[S/m]",
    "SV[m/s]",
    "time[s]",
    "t",
    "c",
    "temp_qc",
    "oxygen",
    "Temp[furlong]",
    "x",
    "1",
    "-",
    "nan",
    "Sal[PSU]",
]
JUNK = [
    "abc",
    "",
    "NA",
    "nan",
    "-nan",
    "-",
    "1,5",
    "1e999",
    "inf",
    "--1",
    "0x10",
    "1.2.3",
    '"',
    "'",
    "#",
    "\u00e4",
    "null",
    "9" * 40,
    " ",
    "1e-400",
    "+",
    ".",
]
META = [
    "latitude: 54 30.5 N",
    "latitude: 95",
    "longitude: 400",
    "longitude: -3.25",
    "time: 2024-02-30",
    "time: 3000-01-01",
    "time: 2024-05-01T12:00Z",
    "missing_value: -9999",
    "missing_value: lots",
    "instrument: xbt",
    "instrument: svp",
    "cast_name: Wrack-9 (synthetic)",
    "bottom depth: 80",
    "bottom depth: shallow",
    "Remark: a colon: here",
    "plain words",
    "dataset: profile",
    "processing_steps: [1",
]
DELIMS = {",": ",", ";": ";", "\t": "\t", " ": " "}
ENCODINGS = ["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-32", "latin-1", "cp1252"]
NEWLINES = ["\n", "\r\n", "\r"]
TRACE_LINE = re.compile(r'^\s*File ".*", line \d+', re.MULTILINE)

_count = itertools.count()
#: SEAPROFILE_FUZZ_SCALE=20 runs 20 times the examples (a deeper local hunt; CI uses 1)
SCALE = max(1, int(os.environ.get("SEAPROFILE_FUZZ_SCALE", "1")))

number = st.floats(allow_nan=False, allow_infinity=False, width=64).map(repr) | st.integers(
    -(10**6), 10**6
).map(str)
cell = number | st.sampled_from(JUNK) | st.text(alphabet='0123456789.,-+eE aZ;"', max_size=6)


@st.composite
def text_cast(draw):
    """(bytes of a text file) with random metadata, header, rows, delimiter, encoding."""
    delim = draw(st.sampled_from(list(DELIMS)))
    ncol = draw(st.integers(1, 5))
    lines = ["# " + m for m in draw(st.lists(st.sampled_from(META), max_size=4))]
    if draw(st.booleans()):
        lines.append(
            delim.join(draw(st.lists(st.sampled_from(HEADERS), min_size=ncol, max_size=ncol)))
        )
    for _ in range(draw(st.integers(0, 12))):
        width = ncol if draw(st.integers(0, 9)) else draw(st.integers(0, 6))
        lines.append(delim.join(draw(st.lists(cell, min_size=width, max_size=width))))
    newline = draw(st.sampled_from(NEWLINES))
    text = newline.join(lines) + (newline if draw(st.booleans()) else "")
    encoding = draw(st.sampled_from(ENCODINGS))
    return text.encode(encoding, errors="replace")


def _new_file(factory, data, suffix=".csv"):
    folder = factory.mktemp("fuzz", numbered=True)
    path = folder / f"cast{next(_count)}{suffix}"
    path.write_bytes(data)
    return path


_settings = settings(
    max_examples=150 * SCALE,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)


@_settings
@given(data=text_cast())
def test_readers_return_casts_or_one_input_error(tmp_path_factory, data):
    path = _new_file(tmp_path_factory, data)
    digest = hashlib.sha256(data).hexdigest()
    for reader in (read_casts, read_cast, read_profile):
        try:
            reader(path)
        except InputFileError as exc:  # anything else fails the test with its traceback
            assert str(exc).startswith(str(path)), str(exc)
            assert exc.line is None or 1 <= exc.line <= data.count(b"\n") + data.count(b"\r") + 1
    assert hashlib.sha256(path.read_bytes()).hexdigest() == digest


@settings(
    max_examples=60 * SCALE,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture],
)
@given(
    values=st.lists(
        st.tuples(*[st.floats(-1e6, 1e6, allow_nan=False)] * 3), min_size=1, max_size=30
    ),
    delim=st.sampled_from(list(DELIMS)),
    encoding=st.sampled_from(ENCODINGS),
    newline=st.sampled_from(NEWLINES),
    header=st.sampled_from(
        [
            ("pres", "temp", "sal"),
            ("PRES[dbar]", "Temp[degC]", "PSAL"),
            ("P_dbar", "TEMP", "Sal[PSU]"),
        ]
    ),
)
def test_clean_tables_come_back_exactly(tmp_path_factory, values, delim, encoding, newline, header):
    rows = [delim.join(header)] + [delim.join(repr(v) for v in row) for row in values]
    path = _new_file(tmp_path_factory, (newline.join(rows) + newline).encode(encoding))
    cast = read_cast(path)
    got = np.column_stack([cast[v].values for v in ("pressure", "temperature", "salinity")])
    np.testing.assert_array_equal(got, np.array(values))


@settings(
    max_examples=25 * SCALE,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(data=text_cast())
def test_build_never_shows_a_traceback(tmp_path_factory, capsys, data):
    path = _new_file(tmp_path_factory, data)
    out = path.parent / "out"
    capsys.readouterr()
    code = main(["build", str(path), "--out", str(out)])
    captured = capsys.readouterr()
    text = captured.out + captured.err
    assert "Traceback" not in text and not TRACE_LINE.search(text)
    errors = [ln for ln in captured.err.splitlines() if "error" in ln.lower()]
    assert code in (0, 1, 2)
    assert (len(errors) == 1 and str(path) in errors[0]) if code else not errors, text
    left = sorted(p.name for p in out.iterdir()) if out.exists() else []
    assert not [n for n in left if n.startswith(".") or n.endswith(".tmp")]
    assert code == 0 or left == []


nasty = st.floats(allow_nan=True, allow_infinity=False, width=64) | st.sampled_from(
    [0.0, -0.0, -9999.0, 1e-300, 1e300, -1.0, 5000.0, 11000.0, 40.0, 1.0, 2.0]
)
#: the vertical coordinate: ordinary values and absurd ones far outside any ocean (QC
#: flags those and binning leaves them out)
nasty_vertical = (
    st.floats(-1e5, 1e5)
    | st.floats(allow_nan=True, allow_infinity=True)
    | st.sampled_from([0.0, -0.0, -9999.0, 11000.0, -1e7, 4.5e15])
)


@st.composite
def plausible_cast(draw):
    """A readable CTD/probe table with hostile numbers: what reaches processing and QC."""
    vertical = draw(st.sampled_from(["PRES [dbar]", "depth [m]"]))
    kind = draw(st.sampled_from(["ctd", "svp"]))
    names = [vertical] + (["Temp [degC]", "Sal"] if kind == "ctd" else ["SV[m/s]"])
    n = draw(st.integers(1, 40))
    base = draw(st.sampled_from(["increasing", "constant", "random"]))
    rows = []
    for k in range(n):
        z = {"increasing": 1.0 + 2 * k, "constant": 5.0, "random": None}[base]
        z = draw(nasty_vertical) if z is None or draw(st.integers(0, 7)) == 0 else z
        rest = [
            draw(nasty) if draw(st.integers(0, 3)) == 0 else good
            for good in (
                (12.0 - 0.01 * k, 35.0 + 0.001 * k) if kind == "ctd" else (1500.0 - 0.01 * k,)
            )
        ]
        rows.append(",".join("nan" if v != v else repr(v) for v in [z, *rest]))
    lat = draw(st.sampled_from(["# latitude: 45.5\n", "# latitude: -89.9\n", ""]))
    return (lat + ",".join(names) + "\n" + "\n".join(rows) + "\n").encode()


@settings(
    max_examples=40 * SCALE,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(data=plausible_cast())
def test_build_of_hostile_numbers_never_shows_a_traceback(tmp_path_factory, capsys, data):
    test_build_never_shows_a_traceback.hypothesis.inner_test(tmp_path_factory, capsys, data)
