"""Hypothesis-mutated seaprofile JSON: wrong types, missing keys, odd dtypes.

Invariant: ``read_casts`` gives casts or one :class:`InputFileError` naming the file, and
``seaprofile build`` in-process never shows a traceback (no published values involved).
"""

from __future__ import annotations

import contextlib
import io
import json

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from seaprofile import InputFileError
from seaprofile.casts.model import make_cast
from seaprofile.casts.read import read_casts
from seaprofile.casts.write import dataset_to_dict
from seaprofile.cli import main

_P = np.linspace(1.0, 100.0, 20)  # an invented, synthetic cast
BASE = {
    "format": "seaprofile",
    "format_version": 1,
    "dataset": dataset_to_dict(
        make_cast(pressure=_P, temperature=10 - _P / 50, salinity=35 + _P / 1e3, latitude=40.0)
    ),
}
BASE = json.loads(json.dumps(BASE))
VALUES = [
    None,
    1,
    -1,
    1.5,
    "x",
    [],
    {},
    [1, 2],
    [[1]],
    True,
    "NaT",
    "3000-01-01",
    1e308,
    "i1",
    "M8[ns]",
    "O",
    "U3",
    ["sample"],
    ["depth"],
    "[1",
    "[]",
]


def _paths(obj, prefix=()):
    items = (
        obj.items()
        if isinstance(obj, dict)
        else (enumerate(obj) if isinstance(obj, list) and len(obj) < 5 else ())
    )
    for key, value in items:
        yield prefix + (key,)
        yield from _paths(value, prefix + (key,))


PATHS = list(_paths(BASE))


@st.composite
def mutated(draw):
    doc = json.loads(json.dumps(BASE))
    for _ in range(draw(st.integers(1, 3))):
        *head, last = draw(st.sampled_from(PATHS))
        node = doc
        try:
            for key in head:
                node = node[key]
            if draw(st.booleans()) and isinstance(node, dict):
                node.pop(last, None)
            else:
                node[last] = draw(st.sampled_from(VALUES))
        except (KeyError, IndexError, TypeError):
            pass  # an earlier mutation removed the way there
    return json.dumps(doc).encode()


@settings(
    max_examples=60,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(data=mutated())
def test_mutated_json(tmp_path_factory, data):
    path = tmp_path_factory.mktemp("json", numbered=True) / "cast.json"
    path.write_bytes(data)
    try:
        read_casts(path)
    except InputFileError as exc:
        assert str(exc).startswith(str(path))
    err = io.StringIO()
    with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
        code = main(["build", str(path), "--out", str(path.parent / "out")])
    assert code in (0, 1, 2) and "Traceback" not in err.getvalue()
