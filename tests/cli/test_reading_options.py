"""Reading options shared by every command that reads a cast, values with a minus sign,
and the plot options the review found (--dpi, --upper-panel, the duct cut-off)."""

import json
import re
from pathlib import Path

import pytest
from _cli_helpers import DEMO, one_line_error

import seaprofile.cli as cli
from seaprofile.cli._options import join_negative_values

READING = (
    "--columns",
    "--units",
    "--latitude",
    "--longitude",
    "--instrument",
    "--salinity",
    "--fall-rate",
)


def _help(capsys, command):
    with pytest.raises(SystemExit):
        cli.main([command, "--help"])
    return " ".join(capsys.readouterr().out.split())


@pytest.mark.parametrize("command", ["build", "plot", "fan", "inspect", "paths"])
def test_every_reading_command_has_the_same_reading_options(capsys, command):
    text = _help(capsys, command)
    for option in READING:
        assert f"{option} " in text, (command, option)
    assert "1=depth,2=sound_speed" in text  # mapping by 1-based position


def _deepest_drawn(fig):
    (line,) = [ln for ln in fig.axes[0].get_lines() if ln.get_label() == "temperature"]
    y = [v for v, x in zip(line.get_ydata(), line.get_xdata()) if x == x]
    return max(y)


def test_expendable_probe_drawn_and_inspected_with_its_own_fall_rate(tmp_path, capsys, drawn):
    xbt = DEMO / "xbt_drop.csv"  # synthetic; last sample at 118.2 s
    # Hanawa et al. (1995), Deep-Sea Res. I 42, T-7: z = 6.691 t - 2.25e-3 t^2 -> 759.4 m
    assert cli.main(["plot", str(xbt), "--out", str(tmp_path / "a.png")]) == 0
    # a fall rate of the user's, depth = A t - B t^2 with A = 6.0 m/s, B = 0: 709.2 m
    assert (
        cli.main(["plot", str(xbt), "--out", str(tmp_path / "b.png"), "--fall-rate", "6.0,0"]) == 0
    )
    # 1 m bins: the deepest bin holds the deepest sample (bin centre within 1 m)
    assert abs(_deepest_drawn(drawn[0]) - 759.4) <= 1.0
    assert abs(_deepest_drawn(drawn[1]) - 709.2) <= 1.0
    capsys.readouterr()
    assert cli.main(["inspect", str(xbt), "--fall-rate", "6.0,0", "--json"]) == 0
    assert abs(json.loads(capsys.readouterr().out)["harmonic_mean_to_depth"] - 709.2) <= 1.0


def test_salinity_and_instrument_reach_the_reader(capsys):
    xbt = str(DEMO / "xbt_drop.csv")
    speeds = []
    for salinity in ("35", "30"):
        assert (
            cli.main(["inspect", xbt, "--salinity", salinity, "--instrument", "xbt", "--json"]) == 0
        )
        speeds.append(json.loads(capsys.readouterr().out)["surface_sound_speed"])
    # Mackenzie (1981), J. Acoust. Soc. Am. 70, 807, eq. 1: the salinity terms are
    # 1.340 (S - 35) - 1.025e-2 T (S - 35), so 5 units less salinity at the surface
    # temperature of the cast are (1.340 - 1.025e-2 T) * 5 m/s slower. The profile uses
    # chen_millero1977; the two equations differ by about 0.1 m/s here (from memory), so
    # 0.2 m/s.
    t0 = float(
        DEMO.joinpath("xbt_drop.csv").read_text().split("[degC]\n")[1].split(",")[1].split()[0]
    )
    assert speeds[0] - speeds[1] == pytest.approx((1.340 - 1.025e-2 * t0) * 5, abs=0.2)


def test_columns_by_position(tmp_path, capsys, drawn):
    bare = tmp_path / "plan.txt"
    bare.write_text("0 1500\n200 1490\n")  # an invented planning profile, no header
    assert (
        cli.main(
            [
                "plot",
                str(bare),
                "--out",
                str(tmp_path / "p.png"),
                "--columns",
                "1=depth,2=sound_speed",
            ]
        )
        == 0
    )
    assert len(drawn) == 1 and "sound speed given directly" in drawn[0]._suptitle.get_text()
    capsys.readouterr()
    assert (
        cli.main(
            [
                "plot",
                str(bare),
                "--out",
                str(tmp_path / "q.png"),
                "--columns",
                "0=depth,2=sound_speed",
            ]
        )
        == 2
    )
    assert "--columns" in one_line_error(capsys)


def test_plain_negative_numbers_still_parse(capsys):
    cast = str(DEMO / "shelf_summer_ctd.csv")
    assert (
        cli.main(
            [
                "fan",
                cast,
                "--source-depth",
                "10",
                "--angles",
                "-15",
                "15",
                "--rays",
                "3",
                "--range",
                "1km",
                "--json",
            ]
        )
        == 0
    )
    assert json.loads(capsys.readouterr().out)["launch_angles_deg"] == [-15.0, 15.0]
    assert cli.main(["build", cast, "--extend-to", "-5"]) == 2
    assert "--extend-to" in one_line_error(capsys)
    assert cli.main(["inspect", cast, "--latitude=-33.5", "--json"]) == 0


def test_values_with_a_minus_sign_and_a_unit_reach_their_option(capsys):
    cast = str(DEMO / "shelf_summer_ctd.csv")
    assert cli.main(["paths", cast, "--source-depth", "10", "--receiver", "-1km,20"]) == 2
    err = one_line_error(capsys)
    assert "--receiver" in err and "positive" in err
    assert cli.main(["build", cast, "--extend-to", "-5km"]) == 2
    assert "--extend-to" in one_line_error(capsys)


def test_join_negative_values():
    assert join_negative_values(["--receiver", "-1km,20", "x"]) == ["--receiver=-1km,20", "x"]
    assert join_negative_values(["--angles", "-15", "15"]) == ["--angles", "-15", "15"]
    assert join_negative_values(["--extend-to", "-1e3"]) == ["--extend-to=-1e3"]
    assert join_negative_values(["--a=1", "-5km"]) == ["--a=1", "-5km"]
    assert join_negative_values(["-h"]) == ["-h"]


def test_no_private_argparse_attribute():
    src = (Path(cli.__file__).parent / "_options.py").read_text()
    assert "_negative_number_matcher" not in src


def test_dpi_default_shows_a_whole_number(capsys):
    text = _help(capsys, "plot")
    assert "(default 150)" in text and "150.0" not in text


def test_upper_panel_deeper_than_the_profile_is_refused(tmp_path, capsys, drawn):
    cast = str(DEMO / "shelf_summer_ctd.csv")  # synthetic, 1..120 m
    assert cli.main(["plot", cast, "--out", str(tmp_path / "a.png"), "--upper-panel", "99999"]) == 2
    err = one_line_error(capsys)
    assert "--upper-panel" in err and "deepest" in err
    assert not (tmp_path / "a.png").exists()
    assert cli.main(["plot", cast, "--out", str(tmp_path / "b.png"), "--upper-panel", "60"]) == 0
    assert len(drawn[0].axes) == 4


def test_duct_cutoff_same_in_inspect_and_the_figure(tmp_path, capsys, drawn):
    cast = str(DEMO / "shelf_summer_ctd.csv")  # synthetic, with a surface duct
    assert cli.main(["inspect", cast]) == 0
    (line,) = [ln for ln in capsys.readouterr().out.splitlines() if "rule of thumb" in ln]
    printed = re.search(r"(\d+) Hz", line).group(1)
    assert cli.main(["plot", cast, "--out", str(tmp_path / "p.png")]) == 0
    texts = "\n".join(t.get_text() for t in drawn[0].texts)
    assert f"duct cut-off*: {printed} Hz" in texts
