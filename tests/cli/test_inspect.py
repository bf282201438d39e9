"""The `inspect` command: reading options, a source below the bottom, half-known positions."""

import json

import pytest
from _cli_helpers import DEMO, RENAMED_OPTIONS, one_line_error

from seaprofile.cli import main


def test_column_mapping_and_units_like_build(renamed_cast, capsys):
    # the renamed cast is the demo cast with other column names and pressure in kPa: with
    # the mapping it gives the same diagnostics as the original
    assert main(["inspect", str(renamed_cast)]) == 2
    assert "--columns" in one_line_error(capsys)
    assert main(["inspect", str(renamed_cast), *RENAMED_OPTIONS, "--json"]) == 0
    mapped = json.loads(capsys.readouterr().out)
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv"), "--json"]) == 0
    plain = json.loads(capsys.readouterr().out)
    # 0.01 dbar rounding of the rewritten pressure moves speeds by < 1e-3 m/s
    assert mapped["surface_sound_speed"] == pytest.approx(plain["surface_sound_speed"], abs=1e-3)
    assert mapped["sonic_layer_depth"] == plain["sonic_layer_depth"]


def test_bad_column_mapping_names_the_option(capsys):
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv"), "--columns", "colour=red"]) == 2
    err = one_line_error(capsys)
    assert "--columns" in err and "columns=" not in err


def test_source_below_the_bottom_is_refused(capsys):
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv"), "--source-depth", "500"]) == 2
    assert "--source-depth" in one_line_error(capsys)  # the cast's own bottom is 120 m
    assert (
        main(
            [
                "inspect",
                str(DEMO / "deep_ocean_ctd.csv"),
                "--source-depth",
                "300",
                "--bottom-depth",
                "200",
            ]
        )
        == 2
    )
    assert "below the bottom" in one_line_error(capsys)
    assert main(["inspect", str(DEMO / "shelf_summer_ctd.csv"), "--bottom-depth", "-3"]) == 2
    assert "--bottom-depth" in one_line_error(capsys)


def test_latitude_alone_gives_usable_diagnostics(unplaced_cast, tmp_path, capsys):
    # a latitude without a longitude used to fail every density diagnostic
    assert main(["inspect", str(unplaced_cast), "--latitude", "54", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert 1500 < d["surface_sound_speed"] < 1530 and d["mixed_layer_depth_density"] is not None
    out = tmp_path / "built"
    assert main(["build", str(unplaced_cast), "--latitude", "54", "--out", str(out)]) == 0
    assert "no usable sound speed" not in capsys.readouterr().out
    (built,) = out.iterdir()
    assert main(["inspect", str(built), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["sonic_layer_depth"] == d["sonic_layer_depth"]


def test_longitude_option(unplaced_cast, capsys):
    assert (
        main(["inspect", str(unplaced_cast), "--latitude", "54", "--longitude", "3", "--json"]) == 0
    )
    assert json.loads(capsys.readouterr().out)["mixed_layer_depth_density"] is not None
    assert main(["inspect", str(unplaced_cast), "--latitude", "54", "--longitude", "400"]) == 2
    assert "--longitude" in one_line_error(capsys)
