"""`seaprofile error`: depth error by beam angle against one profile, budget, figure."""

import json

import pytest
from _cli_helpers import DEMO, one_line_error

import seaprofile.cli.error as error_cmd
from seaprofile.cli import main


def _iso(tmp_path, name, speed):
    p = tmp_path / name
    p.write_text(f"depth [m],sound speed [m/s]\n0,{speed}\n300,{speed}\n")
    return p


def test_isovelocity_offset_matches_straight_geometry(tmp_path, capsys):
    # both isovelocity, processed at c_u = 1500, true c_t = 1490, sensor = processed speed:
    # nadir depth error = (c_u / c_t - 1) (D - z0) (straight rays; textbook geometry,
    # computed here independently); the TVU is IHO S-44 Ed. 6.0.0 Table 1 Order 1a:
    # sqrt(0.5^2 + (0.013 * 100)^2)
    used, true = _iso(tmp_path, "u.csv", 1500.0), _iso(tmp_path, "t.csv", 1490.0)
    code = main(
        [
            "error",
            str(used),
            "--against",
            str(true),
            "--water-depth",
            "100",
            "--transducer-depth",
            "0",
            "--json",
        ]
    )
    assert code == 0
    out = json.loads(capsys.readouterr().out)
    nadir = out["rows"][0]
    assert nadir["beam_angle"] == 0
    assert nadir["depth_error"] == pytest.approx((1500 / 1490 - 1) * 100, rel=1e-3)
    assert out["tvu_m"] == pytest.approx((0.5**2 + 1.3**2) ** 0.5, rel=1e-9)
    assert "holds" in out["advice"] or "new cast" in out["advice"]


def test_figure_has_budget_band_and_labels(tmp_path, monkeypatch, capsys):
    figures = []
    real = error_cmd.save_figure

    def keep(fig, path, **kw):
        figures.append(fig)
        return real(fig, path, **kw)

    monkeypatch.setattr(error_cmd, "save_figure", keep)
    png = tmp_path / "e.png"
    code = main(
        [
            "error",
            str(DEMO / "shelf_summer_ctd.csv"),
            "--against",
            str(DEMO / "shelf_summer_late_ctd.csv"),
            "--water-depth",
            "116",
            "--transducer-depth",
            "4.5",
            "--plot",
            str(png),
            "--sigma-sound-speed",
            "0.5",
        ]
    )
    assert code == 0, capsys.readouterr().err
    assert png.stat().st_size > 10_000
    ax = figures[0].axes[0]
    assert "(degrees)" in ax.get_xlabel() and "(m)" in ax.get_ylabel()
    assert len(ax.patches) == 2  # the TVU band and the allowed share
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("TVU Order 1a" in t for t in labels) and "depth error" in labels


def test_needs_a_comparison(tmp_path, capsys):
    code = main(["error", str(DEMO / "shelf_summer_ctd.csv"), "--water-depth", "100"])
    assert code == 2
    assert "--against" in one_line_error(capsys)
