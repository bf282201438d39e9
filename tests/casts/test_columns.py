"""The column recogniser table: header spellings, units, mappings, positions, times."""

import numpy as np
import pytest

from seaprofile import SeaprofileError
from seaprofile.casts.columns import (
    UNITS,
    parse_column_mapping,
    parse_position,
    parse_time,
    parse_unit,
    parse_unit_mapping,
    recognise_column,
    split_header,
)

# header cell -> (variable, scale to the canonical unit, offset)   (None: no unit given)
SPELLINGS = {
    "Temp [degC]": ("temperature", 1.0, 0.0),
    "temperature": ("temperature", None, None),
    "TEMPERATURE (°C)": ("temperature", 1.0, 0.0),
    "T": ("temperature", None, None),
    "temp C": ("temperature", 1.0, 0.0),
    "temp_degC": ("temperature", 1.0, 0.0),
    "Water Temperature [deg C]": ("temperature", 1.0, 0.0),
    "sea_water_temperature [K]": ("temperature", 1.0, -273.15),
    "temperature (ITS-90)": ("temperature", 1.0, 0.0),
    "PRES (dbar)": ("pressure", 1.0, 0.0),
    "pressure": ("pressure", None, None),
    "Pres [db]": ("pressure", 1.0, 0.0),
    "p_dbar": ("pressure", 1.0, 0.0),
    "P [MPa]": ("pressure", 100.0, 0.0),
    "pressure (kPa)": ("pressure", 0.1, 0.0),
    "press bar": ("pressure", 10.0, 0.0),
    "depth_m": ("depth", 1.0, 0.0),
    "Depth [m]": ("depth", 1.0, 0.0),
    "z": ("depth", None, None),
    "depth (ft)": ("depth", 0.3048, 0.0),
    "DEPTH meters": ("depth", 1.0, 0.0),
    "Sal": ("salinity", None, None),
    "salinity [PSU]": ("salinity", 1.0, 0.0),
    "PSAL": ("salinity", None, None),
    "S": ("salinity", None, None),
    "practical salinity (PSS-78)": ("salinity", 1.0, 0.0),
    "salinity [1]": ("salinity", 1.0, 0.0),
    "cond mS/cm": ("conductivity", 1.0, 0.0),
    "Conductivity [S/m]": ("conductivity", 10.0, 0.0),
    "cond (mS cm-1)": ("conductivity", 1.0, 0.0),
    "C [S m-1]": ("conductivity", 10.0, 0.0),
    "conductivity [uS/cm]": ("conductivity", 1e-3, 0.0),
    "SV m/s": ("measured_sound_speed", 1.0, 0.0),
    "sound speed (m/s)": ("measured_sound_speed", 1.0, 0.0),
    "sound_speed": ("measured_sound_speed", None, None),
    "SoundSpeed [m s-1]": ("measured_sound_speed", 1.0, 0.0),
    "c": ("measured_sound_speed", None, None),
    "Sound Velocity ft/s": ("measured_sound_speed", 0.3048, 0.0),
    "measured_sound_speed [m/s]": ("measured_sound_speed", 1.0, 0.0),
    "time_s": ("elapsed_time", 1.0, 0.0),
    "elapsed time [s]": ("elapsed_time", 1.0, 0.0),
    "t [s]": ("elapsed_time", 1.0, 0.0),
    "Time (sec)": ("elapsed_time", 1.0, 0.0),
    "elapsed_time [min]": ("elapsed_time", 60.0, 0.0),
}


@pytest.mark.parametrize("header", sorted(SPELLINGS))
def test_recognises_common_spellings(header):
    variable, scale, offset = SPELLINGS[header]
    g = recognise_column(header)
    assert g is not None and g.variable == variable and not g.is_flag
    if scale is None:
        assert g.unit is None
    else:
        assert g.unit.scale == pytest.approx(scale)
        assert g.unit.offset == pytest.approx(offset)


@pytest.mark.parametrize(
    "header", ["Temp_qc", "temperature_qc", "PRES QC", "sal flag", "sound_speed_qc", "depth_QC"]
)
def test_flag_columns(header):
    g = recognise_column(header)
    assert g is not None and g.is_flag


@pytest.mark.parametrize(
    "header", ["oxygen", "fluorescence [mg/m3]", "latitude", "id", "Q", "turbidity (NTU)"]
)
def test_unknown_columns_are_not_recognised(header):
    assert recognise_column(header) is None


def test_unit_decides_between_candidates():
    assert recognise_column("c [mS/cm]").variable == "conductivity"
    assert recognise_column("t [degC]").variable == "temperature"


@pytest.mark.parametrize("header", ["Temp [degF]", "pressure [psi]", "depth [m/s]"])
def test_bad_units_raise(header):
    with pytest.raises(SeaprofileError, match="unit"):
        recognise_column(header)


def test_unit_override_replaces_header_unit():
    g = recognise_column("P [dbar]", unit_override="MPa")
    assert g.unit.scale == 100.0


def test_split_header():
    assert split_header("Temp [degC]") == ("Temp", "degC")
    assert split_header("depth_m") == ("depth", "m")
    assert split_header("sound_speed") == ("sound_speed", None)
    assert split_header("Sound Speed m s-1") == ("Sound Speed", "m s-1")


def test_unit_table_entries_are_well_formed():
    kinds = {"temperature", "pressure", "length", "salinity", "conductivity", "speed", "time"}
    for spelling, (kind, scale, offset) in UNITS.items():
        assert spelling == spelling.lower().replace(" ", "")
        assert kind in kinds and scale > 0 and np.isfinite(offset)
        assert parse_unit(spelling).kind == kind


def test_unit_conversions_against_definitions():
    # SI definitions: 1 MPa = 100 dbar, 1 bar = 10 dbar, 1 ft = 0.3048 m (exact),
    # 1 S/m = 10 mS/cm, 0 degC = 273.15 K
    assert parse_unit("MPa").scale == 100.0
    assert parse_unit("bar").scale == 10.0
    assert parse_unit("ft").scale == 0.3048
    assert parse_unit("S/m").scale == 10.0
    assert parse_unit("K").offset == -273.15


def test_parse_column_mapping():
    assert parse_column_mapping("temperature=T_deg, pressure=P") == {
        "temperature": "T_deg",
        "pressure": "P",
    }
    assert parse_column_mapping("depth=Depth [m]") == {"depth": "Depth [m]"}


@pytest.mark.parametrize(
    "text,match",
    [
        ("temperature", "VARIABLE=VALUE"),
        ("oxygen=O2", "unknown variable"),
        ("temperature=T,temperature=U", "twice"),
        ("temperature=T,pressure=T", "two variables"),
        ("temperature=", "empty"),
        ("", "no VARIABLE"),
    ],
)
def test_parse_column_mapping_errors(text, match):
    with pytest.raises(SeaprofileError, match=match):
        parse_column_mapping(text)


def test_parse_unit_mapping():
    assert parse_unit_mapping("pressure=MPa,depth=ft") == {"pressure": "MPa", "depth": "ft"}
    with pytest.raises(SeaprofileError, match="not a pressure unit"):
        parse_unit_mapping("pressure=m")


@pytest.mark.parametrize(
    "text,which,expected",
    [
        ("54.5", "latitude", 54.5),
        ("-3.25", "longitude", -3.25),
        ("54.5 N", "latitude", 54.5),
        ("54 30.5 N", "latitude", 54 + 30.5 / 60),
        ("54°30.5'N", "latitude", 54 + 30.5 / 60),
        ("3 15 W", "longitude", -3.25),
        ("12 06.0 S", "latitude", -12.1),
        ("170 30 E", "longitude", 170.5),
    ],
)
def test_parse_position(text, which, expected):
    assert parse_position(text, which) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(
    "text,which",
    [
        ("north", "latitude"),
        ("91", "latitude"),
        ("54 61 N", "latitude"),
        ("10 E", "latitude"),
        ("-10 W", "longitude"),
    ],
)
def test_parse_position_errors(text, which):
    with pytest.raises(SeaprofileError):
        parse_position(text, which)


def test_parse_time():
    assert parse_time("2024-05-01T12:30:00Z") == np.datetime64("2024-05-01T12:30:00", "ns")
    assert parse_time("2024-05-01 12:30") == np.datetime64("2024-05-01T12:30", "ns")
    assert parse_time("2024-05-01T14:30:00+02:00") == np.datetime64("2024-05-01T12:30", "ns")
    assert parse_time("unknown") is None
    with pytest.raises(SeaprofileError, match="ISO 8601"):
        parse_time("yesterday")


def test_parse_column_mapping_by_position():
    assert parse_column_mapping("1=depth,2=sound_speed") == {"depth": 1, "measured_sound_speed": 2}
    assert parse_column_mapping({1: "depth", 2: "sound_speed"}) == {
        "depth": 1,
        "measured_sound_speed": 2,
    }
    assert parse_column_mapping("#3=temperature,pressure=PRES") == {
        "temperature": 3,
        "pressure": "PRES",
    }
    for bad, match in (
        ("0=depth", "start at 1"),
        ("1=depth,1=temperature", "two variables"),
        ("1=oxygen", "unknown variable"),
        ("1=depth,depth=D", "twice"),
    ):
        with pytest.raises(SeaprofileError, match=match):
            parse_column_mapping(bad)
    with pytest.raises(SeaprofileError, match="str or dict"):
        parse_column_mapping(["depth"])
    with pytest.raises(SeaprofileError, match="not a unit"):
        parse_unit_mapping({"depth": 3})
