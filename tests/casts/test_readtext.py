"""The one-call numeric parse of text casts gives exactly what the careful path gives.

Every table is parsed twice: as the reader does it (the one-call parse when the block is
plain) and with the one-call parse switched off (cell by cell). Values, line numbers and
errors (message, line, column) must agree.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import InputFileError
from seaprofile.casts import _readtext
from seaprofile.casts.read import read_cast


def _both(path, delimiter=None, header=True):
    """(fast, careful) outcomes: per-column values and line numbers, or the error raised."""
    out = []
    for careful in (False, True):
        original = _readtext._plain_numbers
        if careful:
            _readtext._plain_numbers = lambda *a: None
        try:
            t = _readtext._parse_text(path, delimiter, header)
            result = (
                [t.numbers(j) for j in range(len(t.headers))],
                t.lines.tolist(),
                t.plain is not None,
            )
        except InputFileError as exc:
            result = (str(exc), exc.line, exc.column)
        finally:
            _readtext._plain_numbers = original
        out.append(result)
    return out


def _same(fast, careful):
    if isinstance(fast[0], str) or isinstance(careful[0], str):
        assert fast == careful
        return
    assert fast[1] == careful[1]
    assert not careful[2]
    for a, b in zip(fast[0], careful[0]):
        np.testing.assert_array_equal(a, b)


NUMBER = st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False)
CELL = st.one_of(
    NUMBER.map(repr),
    NUMBER.map(lambda x: f"{x:.4f}"),
    NUMBER.map(lambda x: f"{x:.3e}"),
    st.integers(-99999, 99999).map(str),
    st.sampled_from(
        ["nan", "NaN", "-nan", "NA", "", "-", "inf", "1e", "abc", " 2.5 ", "+.5", "5.", "1_0"]
    ),
)


@settings(max_examples=80, deadline=None)
@given(
    rows=st.lists(st.lists(CELL, min_size=3, max_size=3), min_size=1, max_size=12),
    plain=st.booleans(),
    sep=st.sampled_from([",", ";", "\t", " "]),
    extra=st.sampled_from(["", "\n", "\n\n", "\n# comment\n"]),
)
def test_fast_and_careful_paths_agree(tmp_path_factory, rows, plain, sep, extra):
    if plain:  # mostly plain numbers, so the one-call parse is exercised
        rows = [
            [
                c
                if c.strip()
                and c.strip()[0] in "+-.0123456789"
                and c.strip() not in ("-", "-nan", "1e", "1_0")
                else "1.5"
                for c in r
            ]
            for r in rows
        ]
    if sep == " ":
        rows = [[c.strip() or "0" for c in r] for r in rows]
    body = "\n".join(sep.join(r) for r in rows)
    k = len(rows) // 2
    lines = body.split("\n")
    if extra:  # a blank or comment line between rows
        lines.insert(k, extra.strip("\n"))
    text = "# cast_name: t\n" + sep.join(["pres", "temp", "sal"]) + "\n" + "\n".join(lines)
    path = tmp_path_factory.mktemp("t") / "c.csv"
    path.write_text(text + "\n", encoding="utf-8")
    fast, careful = _both(path)
    _same(fast, careful)


def test_plain_block_takes_the_fast_path(tmp_path):
    p = tmp_path / "c.csv"
    p.write_text("# latitude: 10\npres,temp,sal\n1,10.5,35\n2,10.25,35.1\n\n\n")
    t = _readtext._parse_text(p, None)
    assert t.plain is not None and t.lines.tolist() == [3, 4]
    np.testing.assert_array_equal(t.numbers(1), [10.5, 10.25])


@pytest.mark.parametrize(
    "text,line,column",
    [
        ("pres,temp,sal\n1,2,3\n2,-nan,3\n", 3, "2 (temp)"),  # parses, but is not a missing word
        ("pres,temp,sal\n1,2,3\n2,3\n", 3, 3),  # ragged
        ("pres,temp,sal\n1,2,3\n\n# note\n2,x,3\n", 5, "2 (temp)"),
    ],
)
def test_errors_keep_line_and_column(tmp_path, text, line, column):
    p = tmp_path / "c.csv"
    p.write_text(text)
    with pytest.raises(InputFileError) as info:
        read_cast(p)
    assert info.value.line == line and f"column {column}" in str(info.value)


def test_missing_words_in_a_plain_block(tmp_path):
    p = tmp_path / "c.csv"
    p.write_text("pres,temp,sal\n1,nan,35\n2,NaN,35\n3,11,35\n")
    cast = read_cast(p)
    assert np.isnan(cast["temperature"].values[:2]).all()
    assert cast["temperature_qc"].values.tolist() == [9, 9, 0]


# --- encodings, line ends, decimal commas, oversized cells (tracker defects) -------------

TABLE = (
    "# cast_name: Rook-2 (synthetic)\nPRES [dbar],Temp [degC],Sal\n1.0,12.5,34.9\n5.0,12.25,35.0\n"
)


@pytest.mark.parametrize(
    "encoding", ["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be", "utf-32"]
)
def test_unicode_encodings_and_byte_order_marks(tmp_path, encoding):
    path = tmp_path / "cast.csv"
    path.write_bytes(TABLE.replace("Temp [degC]", "Temp [°C]").encode(encoding))
    cast = read_cast(path)
    np.testing.assert_array_equal(cast["temperature"].values, [12.5, 12.25])
    assert cast.attrs["cast_name"] == "Rook-2 (synthetic)"


@pytest.mark.parametrize("newline", ["\r\n", "\r", "\n"])
def test_line_ends(tmp_path, newline):
    path = tmp_path / "cast.csv"
    path.write_bytes(TABLE.replace("\n", newline).encode())
    np.testing.assert_array_equal(read_cast(path)["pressure"].values, [1.0, 5.0])
    bad = tmp_path / "bad.csv"
    bad.write_bytes((TABLE + "9.0,x,35\n").replace("\n", newline).encode())
    with pytest.raises(InputFileError) as info:
        read_cast(bad)
    assert info.value.line == 5 and info.value.column == "2 (Temp [degC])"


def test_decimal_commas_where_the_delimiter_is_not_a_comma(tmp_path):
    path = tmp_path / "cast.txt"
    path.write_text("PRES;TEMP;SAL\n1,0;12,5;34,90\n5;12,25;35\n")
    cast = read_cast(path)
    np.testing.assert_array_equal(cast["temperature"].values, [12.5, 12.25])
    np.testing.assert_array_equal(cast["salinity"].values, [34.9, 35.0])
    tab = tmp_path / "cast.tsv"
    tab.write_text("0\t1500,5\n10\t1499,25\n")  # headerless, tab: depth, sound speed
    np.testing.assert_array_equal(read_cast(tab)["measured_sound_speed"].values, [1500.5, 1499.25])


def test_other_encodings_and_binary_data_are_refused_with_a_line(tmp_path):
    latin = tmp_path / "latin.csv"
    latin.write_bytes(TABLE.replace("Rook", "R\xf6k").encode("latin-1"))
    with pytest.raises(InputFileError, match="not UTF-8.*save it as UTF-8") as info:
        read_cast(latin)
    assert info.value.line == 1
    junk = tmp_path / "junk.csv"
    junk.write_bytes(TABLE.encode() + b"1,2\x00\x01,3\n")
    with pytest.raises(InputFileError, match="binary data") as info:
        read_cast(junk)
    assert info.value.line == 5


def test_cell_beyond_the_csv_field_limit_names_its_line(tmp_path):
    import csv

    path = tmp_path / "huge.csv"
    path.write_text(TABLE + '7.0,"' + "9" * (csv.field_size_limit() + 10) + '",35\n')
    with pytest.raises(InputFileError, match="field larger") as info:
        read_cast(path)
    assert info.value.line == 5


def test_control_bytes_are_the_control_characters():
    # the byte pass of _decode and the regular expression it replaces on UTF-8 text
    # refuse the same characters (every byte value, exhaustive)
    for b in range(256):
        assert (bytes([b]) in _readtext._CONTROL_BYTES) == bool(_readtext._CONTROL.match(chr(b)))


@pytest.mark.parametrize("char", ["\x07", "\x1b", "\x7f"])
def test_control_character_after_utf8_text_names_its_line(tmp_path, char):
    path = tmp_path / "ctl.csv"
    path.write_bytes((TABLE.replace("Rook", "R\u00f6k") + f"1,2{char},3\n").encode())
    with pytest.raises(InputFileError, match=f"U\\+{ord(char):04X}") as info:
        read_cast(path)
    assert info.value.line == 5


@pytest.mark.parametrize(
    "tail", ["", "\n", "\n\n", "\n  \n\t\n", "\n   ", "\n \u00a0\n", "\n\u2028"]
)
@pytest.mark.parametrize("last", ["2,10.25,35.1", "2,10.25,35.1   ", "2,nan,35.1 \t"])
def test_trailing_blank_lines_and_spaces(tmp_path, tail, last):
    # the numeric block ends at its last line holding more than whitespace (kept as
    # written, trailing blanks and all); both paths agree on values and line numbers
    p = tmp_path / "c.csv"
    p.write_text("# latitude: 10\npres,temp,sal\n1,10.5,35\n" + last + tail, encoding="utf-8")
    fast, careful = _both(p)
    _same(fast, careful)
    t = _readtext._parse_text(p, None)
    assert t.plain is not None and t.lines.tolist() == [3, 4]
    assert t.texts == ["1,10.5,35", last]
