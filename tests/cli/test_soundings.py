"""`seaprofile soundings`: beam records to soundings, in chunks, rows flagged never dropped."""

import csv
import math

import numpy as np
import pytest
from _cli_helpers import DEMO, one_line_error

from seaprofile.cli import main

BEAMS = DEMO / "swath" / "line07_beams.txt"


def _profile(tmp_path, speed=1500.0):
    """A two-node isovelocity planning profile (speed-only probe file)."""
    p = tmp_path / "iso.csv"
    p.write_text(f"depth [m],sound speed [m/s]\n0,{speed}\n400,{speed}\n")
    return p


def _read(path):
    with open(path) as f:
        rows = [r for r in f if not r.startswith("#")]
    return list(csv.DictReader(rows))


def _beams(tmp_path, n_pings, angles, tt, extra=None):
    lines = ["ping,beam_angle [deg],travel_time [s]"]
    for ping in range(1, n_pings + 1):
        for a, t in zip(angles, tt):
            lines.append(f"{ping},{a},{t}")
    for i, text in (extra or {}).items():
        lines[i] = text
    path = tmp_path / "beams.csv"
    path.write_text("\n".join(lines) + "\n")
    return path


def test_isovelocity_multi_chunk_matches_straight_geometry(tmp_path, capsys):
    # isovelocity water: depth = z0 + c t/2 cos(theta), across = c t/2 sin(theta)
    # (textbook geometry of a straight ray, computed here independently)
    angles = np.array([-60.0, -30.0, 0.0, 30.0, 60.0])
    tt = np.array([0.2, 0.15, 0.1, 0.15, 0.2])
    beams = _beams(tmp_path, 23, angles, tt)  # 115 rows in chunks of 10
    out = tmp_path / "s.csv"
    code = main(
        [
            "soundings",
            str(beams),
            "--profile",
            str(_profile(tmp_path)),
            "--transducer-depth",
            "3",
            "--out",
            str(out),
            "--chunk-rows",
            "10",
            "--straight-ray",
        ]
    )
    assert code == 0, capsys.readouterr().err
    rows = _read(out)
    assert len(rows) == 115
    assert [int(r["line"]) for r in rows] == list(range(2, 117))
    for r, a, t in zip(rows, np.tile(angles, 23), np.tile(tt, 23)):
        expected = 3 + 1500 * t / 2 * math.cos(math.radians(a))
        assert float(r["depth [m]"]) == pytest.approx(expected, abs=2e-3)
        assert float(r["across_track [m]"]) == pytest.approx(
            1500 * t / 2 * math.sin(math.radians(a)), abs=2e-3
        )
        assert float(r["straight_ray_depth [m]"]) == pytest.approx(expected, abs=2e-3)
        assert r["flag"] == "0"


def test_bad_line_is_flagged_not_dropped(tmp_path, capsys):
    beams = _beams(tmp_path, 4, [0.0, 20.0], [0.1, 0.1], extra={3: "2,2O.0,0.1", 6: "3,95,0.1"})
    out = tmp_path / "s.csv"
    code = main(
        [
            "soundings",
            str(beams),
            "--profile",
            str(_profile(tmp_path)),
            "--transducer-depth",
            "0",
            "--out",
            str(out),
            "--chunk-rows",
            "3",
        ]
    )
    err = capsys.readouterr().err
    assert code == 0
    assert "line 4, column beam_angle [deg]" in err and "'2O.0'" in err
    rows = _read(out)
    assert len(rows) == 8
    flagged = [r for r in rows if r["flag"] == "3"]
    assert [int(r["line"]) for r in flagged] == [4, 7]
    assert all(r["depth [m]"] == "" for r in flagged)


def test_strict_names_file_line_and_column(tmp_path, capsys):
    beams = _beams(tmp_path, 4, [0.0, 20.0], [0.1, 0.1], extra={5: "3,20,abc"})
    out = tmp_path / "s.csv"
    code = main(
        [
            "soundings",
            str(beams),
            "--profile",
            str(_profile(tmp_path)),
            "--transducer-depth",
            "0",
            "--out",
            str(out),
            "--strict",
        ]
    )
    assert code == 2
    err = one_line_error(capsys)
    assert "beams.csv, line 6, column travel_time [s]" in err
    assert not out.exists() and not list(tmp_path.glob(".s.csv*"))


def test_too_many_fields_is_an_error_with_the_line(tmp_path, capsys):
    beams = _beams(tmp_path, 3, [0.0], [0.1], extra={2: "2,0,0.1,9"})
    code = main(
        [
            "soundings",
            str(beams),
            "--profile",
            str(_profile(tmp_path)),
            "--transducer-depth",
            "0",
            "--out",
            str(tmp_path / "s.csv"),
        ]
    )
    assert code == 2
    assert "line 3" in one_line_error(capsys)


def test_missing_column_is_named(tmp_path, capsys):
    p = tmp_path / "b.csv"
    p.write_text("ping,beam_angle [deg]\n1,0\n")
    code = main(
        [
            "soundings",
            str(p),
            "--profile",
            str(_profile(tmp_path)),
            "--transducer-depth",
            "0",
            "--out",
            str(tmp_path / "s.csv"),
        ]
    )
    assert code == 2
    assert "travel_time" in one_line_error(capsys)


def test_demo_swath_with_its_own_cast_finds_the_seabed(tmp_path, capsys):
    # the demo line was traced to a seabed at 116 m - 0.02 x (generate.py): converting it
    # with the cast it was traced through recovers that seabed (to the travel-time noise
    # and the cast's binning)
    out = tmp_path / "s.csv"
    code = main(
        [
            "soundings",
            str(BEAMS),
            "--profile",
            str(DEMO / "shelf_summer_late_ctd.csv"),
            "--transducer-depth",
            "4.5",
            "--out",
            str(out),
        ]
    )
    assert code == 0, capsys.readouterr().err
    rows = _read(out)
    d = np.array([float(r["depth [m]"]) for r in rows])
    x = np.array([float(r["across_track [m]"]) for r in rows])
    assert np.max(np.abs(d - (116.0 - 0.02 * x))) < 0.1
    assert rows[0]["time"].endswith("Z")
