"""The `seaprofile speed` command: table, JSON, errors."""

import json

import pytest

from seaprofile.cli import main
from seaprofile.seawater.soundspeed import EQUATIONS


def test_every_equation_listed(capsys):
    assert (
        main(
            [
                "speed",
                "--temperature",
                "12.5",
                "--salinity",
                "35.1",
                "--depth",
                "250",
                "--latitude",
                "54",
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    for name in EQUATIONS:
        assert name in out
    assert "valid" in out


def test_json_matches_api(capsys):
    import seaprofile

    assert (
        main(
            [
                "speed",
                "--temperature",
                "12.5",
                "--salinity",
                "35.1",
                "--pressure",
                "250",
                "--latitude",
                "54",
                "--equation",
                "chen_millero1977",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    (row,) = doc["results"]
    expected = float(seaprofile.sound_speed(12.5, 35.1, 250.0, latitude=54.0))
    assert row["sound_speed"] == pytest.approx(expected, abs=1e-9)
    assert row["valid"] == "yes"


def test_mackenzie_check_value_through_cli(capsys):
    # Mackenzie (1981), JASA 70(3), 807: check value 1550.744 m/s at 25 degC, S 35, 1000 m.
    assert (
        main(
            [
                "speed",
                "--temperature",
                "25",
                "--salinity",
                "35",
                "--depth",
                "1000",
                "--equation",
                "mackenzie1981",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["results"][0]["sound_speed"] == pytest.approx(1550.744, abs=0.0005)


def test_outside_validity_marked(capsys):
    assert (
        main(
            [
                "speed",
                "--temperature",
                "45",
                "--salinity",
                "35",
                "--depth",
                "10",
                "--latitude",
                "10",
                "--equation",
                "mackenzie1981",
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    assert "outside" in out


def test_depth_with_km_suffix(capsys):
    assert (
        main(
            [
                "speed",
                "--temperature",
                "2",
                "--salinity",
                "34.7",
                "--depth",
                "4km",
                "--latitude",
                "30",
                "--equation",
                "mackenzie1981",
                "--json",
            ]
        )
        == 0
    )
    doc = json.loads(capsys.readouterr().out)
    assert doc["inputs"]["depth_m"] == 4000.0


@pytest.mark.parametrize(
    "argv, fragment",
    [
        (["--temperature", "10", "--salinity", "35", "--depth", "abc"], "--depth"),
        (
            ["--temperature", "10", "--salinity", "35", "--depth", "10", "--latitude", "123"],
            "--latitude",
        ),
        (
            [
                "--temperature",
                "10",
                "--salinity",
                "35",
                "--pressure",
                "100",
                "--equation",
                "mackenzie1981",
            ],
            "latitude",
        ),
        # an infinite longitude used to crash inside the TEOS-10 library
        (
            [
                "--temperature",
                "10",
                "--salinity",
                "35",
                "--pressure",
                "100",
                "--latitude",
                "10",
                "--longitude",
                "inf",
            ],
            "--longitude must be finite",
        ),
        (
            [
                "--temperature",
                "10",
                "--salinity",
                "35",
                "--pressure",
                "100",
                "--latitude",
                "10",
                "--longitude=-inf",
                "--equation",
                "teos10",
            ],
            "--longitude must be finite",
        ),
        (
            [
                "--temperature",
                "10",
                "--salinity",
                "35",
                "--pressure",
                "100",
                "--latitude",
                "10",
                "--longitude",
                "400",
            ],
            "--longitude must lie within -180..360",
        ),
        (
            ["--temperature", "10", "--salinity", "35", "--pressure", "100", "--longitude", "10"],
            "--longitude needs --latitude",
        ),
        # NaN inputs used to print NaN marked valid
        (["--temperature", "nan", "--salinity", "35", "--depth", "10"], "--temperature"),
        (["--temperature", "10", "--salinity", "nan", "--depth", "10"], "--salinity"),
        (["--temperature", "10", "--salinity", "35", "--pressure", "nan"], "--pressure"),
        (["--temperature", "10", "--salinity", "35", "--pressure", "inf"], "--pressure"),
        (["--temperature", "10", "--salinity", "35", "--depth", "nan"], "--depth"),
        (
            ["--temperature", "10", "--salinity", "35", "--depth", "10", "--latitude", "nan"],
            "--latitude is NaN",
        ),
        (
            [
                "--temperature",
                "10",
                "--salinity",
                "35",
                "--depth",
                "10",
                "--latitude",
                "10",
                "--longitude",
                "nan",
                "--json",
            ],
            "--longitude is NaN",
        ),
    ],
)
def test_errors_one_line_exit_2(capsys, argv, fragment):
    assert main(["speed", *argv]) == 2
    err = capsys.readouterr().err
    assert fragment in err
    assert len(err.strip().splitlines()) == 1
    assert "Traceback" not in err


def test_argparse_errors_exit_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["speed", "--temperature", "10"])
    assert exc.value.code == 2
