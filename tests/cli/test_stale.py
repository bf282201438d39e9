"""`seaprofile stale`: casts in time order, each judged against the next one."""

import json

from _cli_helpers import one_line_error

from seaprofile.cli import main


def _cast(tmp_path, name, time, speed):
    p = tmp_path / f"{name}.csv"
    p.write_text(
        f"# cast_name: {name}\n# time: {time}\ndepth [m],sound speed [m/s]\n"
        f"0,{speed}\n300,{speed}\n"
    )
    return p


def test_time_order_and_a_stale_cast(tmp_path, capsys):
    # isovelocity casts; a 10 m/s change gives a nadir depth error of (1500/1490 - 1) x 100
    # = 0.67 m (straight rays, computed here), beyond 50 % of the Special-order TVU
    # sqrt(0.25^2 + (0.0075 * 100)^2) = 0.79 m -> 0.40 m (IHO S-44 Ed. 6.0.0 Table 1);
    # a 0.1 m/s change gives 0.0067 m, well inside
    late = _cast(tmp_path, "C3", "2031-07-14T18:00:00Z", 1490.0)
    early = _cast(tmp_path, "C1", "2031-07-14T06:00:00Z", 1500.1)
    mid = _cast(tmp_path, "C2", "2031-07-14T12:00:00Z", 1500.0)
    code = main(
        [
            "stale",
            str(late),
            str(early),
            str(mid),
            "--water-depth",
            "100",
            "--order",
            "special",
            "--json",
        ]
    )
    assert code == 0, capsys.readouterr().err
    rows = json.loads(capsys.readouterr().out)["casts"]
    assert [r["cast"] for r in rows] == ["C1", "C2", "C3"]
    assert [r["stale"] for r in rows] == ["no", "yes", "-"]
    assert rows[0]["largest_error"] < 0.05


def test_a_cast_without_time_is_named(tmp_path, capsys):
    a = _cast(tmp_path, "C1", "2031-07-14T06:00:00Z", 1500.0)
    b = tmp_path / "b.csv"
    b.write_text("# cast_name: NOTIME\ndepth [m],sound speed [m/s]\n0,1500\n300,1500\n")
    code = main(["stale", str(a), str(b), "--water-depth", "100"])
    assert code == 2
    assert "NOTIME" in one_line_error(capsys)
