"""Reading casts: delimited text, CF DSG netCDF layouts, instruments, errors."""

import hashlib
import os
from pathlib import Path

import gsw
import netCDF4
import numpy as np
import pytest

from seaprofile import InputFileError, SeaprofileError
from seaprofile._cf import steps_of
from seaprofile.casts.read import guess_instrument, read_cast, read_casts, read_profile


def put(tmp_path, text, name="cast.csv", encoding="utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding) if isinstance(text, str) else text)
    return p


def sha(path):
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


CTD = """# cast_name: Skerry-07
# vessel: RV Invented Tern
# latitude: 54 30.5 N
# longitude: 3 15.0 W
# time: 2023-06-14T09:41:00Z
# operator: synthetic test data
PRES (dbar),Temp [degC],Sal,oxygen [ml/l]
1.0,12.50,34.90,6.1
5.0,12.45,34.91,6.0
10.0,12.10,34.95,5.9
"""


# --- text ----------------------------------------------------------------------------


def test_reads_ctd_csv_with_metadata(tmp_path):
    p = put(tmp_path, CTD)
    digest = sha(p)
    cast = read_cast(str(p))
    assert sha(p) == digest  # input untouched
    np.testing.assert_array_equal(cast["pressure"].values, [1.0, 5.0, 10.0])
    np.testing.assert_array_equal(cast["temperature"].values, [12.5, 12.45, 12.1])
    np.testing.assert_array_equal(cast["salinity"].values, [34.9, 34.91, 34.95])
    assert float(cast.latitude) == pytest.approx(54 + 30.5 / 60)
    assert float(cast.longitude) == pytest.approx(-3.25)
    assert cast.time.values == np.datetime64("2023-06-14T09:41:00", "ns")
    assert cast.attrs["cast_name"] == "Skerry-07" and cast["profile_id"].item() == "Skerry-07"
    assert cast.attrs["vessel"] == "RV Invented Tern"
    assert cast.attrs["operator"] == "synthetic test data"  # unknown key kept
    assert cast.attrs["instrument"] == "ctd"
    assert cast.attrs["ignored_columns"] == "oxygen [ml/l]"
    assert cast["temperature"].attrs["standard_name"] == "sea_water_temperature"
    assert all(cast[f"{v}_qc"].dtype == np.int8 for v in ("pressure", "temperature"))
    step = steps_of(cast.attrs)[-1]
    assert step["step"] == "read_cast" and step["columns"]["temperature"] == "Temp [degC]"


@pytest.mark.parametrize(
    "sep,delimiter", [("\t", None), (";", None), ("  ", None), (" ", "whitespace"), ("\t", "tab")]
)
def test_other_delimiters(tmp_path, sep, delimiter):
    text = sep.join(["pres", "temp", "sal"]) + "\n" + sep.join(["2", "10.5", "35.1"]) + "\n"
    cast = read_cast(put(tmp_path, text, "c.txt"), delimiter=delimiter)
    assert cast["temperature"].values.tolist() == [10.5]


def test_missing_values_are_nan_and_flagged(tmp_path):
    text = (
        "# missing_value: -9999\npres,temp,sal,temperature_qc\n"
        "1,10,35,1\n2,,35,1\n3,nan,35,1\n4,NA,35,1\n5,-9999,35,4\n6,11,-9999,2\n"
    )
    cast = read_cast(put(tmp_path, text))
    t = cast["temperature"].values
    assert np.isnan(t[1:5]).all() and t[0] == 10 and t[5] == 11
    assert cast["temperature_qc"].values.tolist() == [1, 9, 9, 9, 9, 2]
    assert cast["salinity_qc"].values.tolist() == [0, 0, 0, 0, 0, 9]
    assert steps_of(cast.attrs)[-1]["missing_values"]["temperature"] == 4


def test_undeclared_sentinel_is_a_number(tmp_path):
    cast = read_cast(put(tmp_path, "pres,temp,sal\n1,-9999,35\n"))
    assert cast["temperature"].values[0] == -9999


def test_unit_conversions_and_overrides(tmp_path):
    text = "P [MPa],T [K],cond [S/m]\n0.1,288.15,4.2914\n"
    cast = read_cast(put(tmp_path, text))
    assert cast["pressure"].values[0] == pytest.approx(10.0)  # 1 MPa = 100 dbar
    assert cast["temperature"].values[0] == pytest.approx(15.0)  # 0 degC = 273.15 K
    assert cast["conductivity"].values[0] == pytest.approx(42.914)  # 1 S/m = 10 mS/cm
    conv = steps_of(cast.attrs)[0]["unit_conversions"]
    assert set(conv) == {"pressure", "temperature", "conductivity"}
    cast = read_cast(put(tmp_path, "P,T,S\n2,10,35\n", "o.csv"), units="pressure=bar")
    assert cast["pressure"].values[0] == 20.0


def test_explicit_column_mapping(tmp_path):
    text = "T_deg,P,Temp,salt\n10,1,99,35\n"
    cast = read_cast(put(tmp_path, text), columns="temperature=T_deg,pressure=P,salinity=salt")
    assert cast["temperature"].values[0] == 10
    assert cast["salinity"].values[0] == 35
    assert cast.attrs["ignored_columns"] == "Temp"
    cast = read_cast(
        put(tmp_path, text, "b.csv"),
        columns={"temperature": "T_deg", "pressure": "P", "salinity": "salt"},
        units={"pressure": "kPa"},
    )
    assert cast["pressure"].values[0] == pytest.approx(0.1)


def test_salinity_from_conductivity_against_pss78(tmp_path):
    # UNESCO (1983), Fofonoff & Millard, Unesco Tech. Pap. Mar. Sci. 44: S = 40.0000 at
    # R = 1.888091, T68 = 40 degC, p = 10000 dbar; C(35, 15, 0) = 42.914 mS/cm. T90 =
    # T68 / 1.00024. Tolerance 2e-4: the check value is printed to 4 decimals.
    c = 1.888091 * 42.914
    t90 = 40.0 / 1.00024
    text = f"pres,temp,cond\n10000,{t90!r},{c!r}\n0,15,30\n"
    cast = read_cast(put(tmp_path, text))
    assert cast["salinity"].values[0] == pytest.approx(40.0, abs=2e-4)
    # gsw (TEOS-10 library), SP_from_C, as the general-purpose reference
    assert cast["salinity"].values[1] == pytest.approx(gsw.SP_from_C(30.0, 15.0, 0.0), abs=1e-12)
    assert cast.attrs["salinity_source"].startswith("computed from conductivity")


def test_xbt_text_file(tmp_path):
    text = "# latitude: 12.5\ntime_s,temp C\n0,28.0\n10,27.9\n60,20.1\n100,15.0\n"
    cast = read_cast(put(tmp_path, text))
    assert cast.attrs["instrument"] == "xbt"
    t = np.array([0, 10, 60, 100.0])
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: z = 6.691 t - 2.25e-3 t^2
    np.testing.assert_allclose(cast["depth"].values, 6.691 * t - 2.25e-3 * t**2, atol=1e-9)
    assert cast.attrs["salinity_source"] == "assumed constant 35"
    assert "pressure" in cast
    cast = read_cast(
        put(tmp_path, text, "b.csv"), fall_rate=(6.0, 0.0), salinity=([0, 1000], [34.0, 35.0])
    )
    np.testing.assert_allclose(cast["depth"].values, 6.0 * t)
    np.testing.assert_allclose(cast["salinity"].values, 34.0 + 6.0 * t / 1000)


def test_svp_text_file(tmp_path):
    cast = read_cast(put(tmp_path, "depth_m,SV m/s\n1,1500.2\n2,1500.1\n"))
    assert cast.attrs["instrument"] == "svp"
    assert cast["measured_sound_speed"].values.tolist() == [1500.2, 1500.1]


def test_ctd_with_assumed_salinity(tmp_path):
    cast = read_cast(put(tmp_path, "pres,temp\n1,10\n"), salinity=34.5)
    assert cast["salinity"].values[0] == 34.5 and cast.attrs["salinity_assumed"] == "yes"


@pytest.mark.parametrize(
    "variables,expected",
    [
        ({"pressure", "temperature", "salinity"}, "ctd"),
        ({"elapsed_time", "temperature"}, "xbt"),
        ({"elapsed_time", "temperature", "depth"}, "ctd"),
        ({"depth", "measured_sound_speed", "temperature"}, "svp"),
    ],
)
def test_guess_instrument(variables, expected):
    assert guess_instrument(variables) == expected


# --- errors: file, line, column, expectation ---------------------------------------------

BAD = [
    ("", "empty", None, None),
    ("# only: comments\n", "no header", None, None),
    ("pres,temp,sal\n", "no data rows", 1, None),
    ("oxygen,nitrate\n1,2\n", "no recognisable columns", 1, None),
    ("pres,temp,sal\n1,10,35\n2,10\n", "ragged", 3, 3),
    (
        "pres,Temp [degC],sal\n1,10,35\n2,abc,35\n",
        "expected a number, got 'abc'",
        3,
        "2 (Temp [degC])",
    ),
    ("pres,temp,sal\n1,inf,35\n", "expected a number", 2, "2 (temp)"),
    ("pres,temp,temperature,sal\n1,2,3,4\n", "both look like temperature", 1, "3 (temperature)"),
    ("pres,Temp [degF],sal\n1,2,3\n", "not recognised", 1, "2 (Temp [degF])"),
    ("# latitude: 95\npres,temp,sal\n1,2,3\n", "latitude", 1, None),
    ("# time: yesterday\npres,temp,sal\n1,2,3\n", "ISO 8601", 1, None),
    ("pres,temp,sal,temp_qc\n1,2,3,7\n", "Argo flag", 2, "4 (temp_qc)"),
    ("pres,temp\n1,2\n", "salinity or conductivity", None, None),
    ("sal,temp\n1,2\n", "pressure or depth", None, None),
    ("depth,cond,temp\n1,2,3\n", "needs pressure", None, None),
]


@pytest.mark.parametrize("text,match,line,column", BAD)
def test_bad_input_names_file_line_column(tmp_path, text, match, line, column):
    p = put(tmp_path, text, "bad input.csv")
    digest = sha(p)
    with pytest.raises(InputFileError, match=match) as info:
        read_cast(p)
    msg = str(info.value)
    assert msg.startswith(str(p))
    if line is not None:
        assert f"line {line}" in msg and info.value.line == line
    if column is not None:
        assert f"column {column}" in msg
    assert sha(p) == digest


def test_other_file_errors(tmp_path):
    with pytest.raises(InputFileError, match="no such file"):
        read_cast(tmp_path / "absent.csv")
    with pytest.raises(InputFileError, match="directory"):
        read_cast(tmp_path)
    with pytest.raises(InputFileError, match="UTF-8"):
        read_cast(put(tmp_path, b"pres,temp\n\xff\xfe,1\n", "latin.csv"))
    p = put(tmp_path, "pres,temp,sal\n1,2,3\n")
    with pytest.raises(InputFileError, match="matches 0 header"):
        read_cast(p, columns={"temperature": "T_deg"})
    with pytest.raises(SeaprofileError, match="delimiter"):
        read_cast(p, delimiter="|")
    with pytest.raises(SeaprofileError, match="path"):
        read_cast(42)


# --- netCDF: CF 1.10 chapter 9 / Appendix H.3 layouts written by hand --------------------

# three invented profiles: profile k has n_k samples
PRES = [np.array([0.0, 10.0, 20.0]), np.array([0.0, 10.0]), np.array([0.0, 10.0, 20.0, 30.0])]
TEMP = [np.array([10.0, 9.0, 8.0]), np.array([15.0, 14.5]), np.array([5.0, 4.5, 4.0, 3.5])]
SAL = [np.full(3, 35.0), np.full(2, 34.0), np.full(4, 34.5)]
LAT, LON = [10.0, 20.0, 30.0], [-5.0, -6.0, -7.0]


def _instance_vars(nc, dim="profile", n=3):
    nc.featureType = "profile"
    nc.Conventions = "CF-1.10"
    nc.createDimension("name_strlen", 8)
    pid = nc.createVariable("station", "S1", (dim, "name_strlen"))
    pid.cf_role = "profile_id"
    pid[:] = netCDF4.stringtochar(np.array([f"st{k}" for k in range(n)], dtype="S8"))
    for name, sn, units, vals in (
        ("LAT", "latitude", "degrees_north", LAT),
        ("LON", "longitude", "degrees_east", LON),
    ):
        v = nc.createVariable(name, "f4", (dim,))
        v.standard_name, v.units = sn, units
        v[:] = vals[:n]
    t = nc.createVariable("T_AXIS", "f8", (dim,))
    t.standard_name, t.units = "time", "days since 2020-01-01 00:00:00"
    t[:] = [0.0, 1.5, 2.0][:n]


def _data_var(nc, name, sn, units, dims, values, fill=None):
    v = nc.createVariable(name, "f8", dims, fill_value=fill)
    v.standard_name, v.units = sn, units
    v[:] = values
    return v


def _check_three(casts, kelvin=False):
    assert len(casts) == 3
    for k, cast in enumerate(casts):
        np.testing.assert_allclose(cast["pressure"].values, PRES[k])
        np.testing.assert_allclose(cast["temperature"].values, TEMP[k], atol=1e-9)
        np.testing.assert_allclose(cast["salinity"].values, SAL[k])
        assert float(cast.latitude) == LAT[k] and float(cast.longitude) == LON[k]
        assert cast["profile_id"].item() == f"st{k}"
    assert casts[1].time.values == np.datetime64("2020-01-02T12:00", "ns")


def test_contiguous_ragged_array(tmp_path):
    p = tmp_path / "contiguous.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("profile", 3)
        nc.createDimension("obs", 9)
        _instance_vars(nc)
        rs = nc.createVariable("rowSize", "i4", ("profile",))
        rs.sample_dimension = "obs"
        rs[:] = [3, 2, 4]
        _data_var(nc, "PR", "sea_water_pressure", "dbar", ("obs",), np.concatenate(PRES))
        v = _data_var(
            nc, "TX", "sea_water_temperature", "K", ("obs",), np.concatenate(TEMP) + 273.15
        )
        v.ancillary_variables = "TX_FLAG"
        f = nc.createVariable("TX_FLAG", "i1", ("obs",))
        f.standard_name = "status_flag"
        f.flag_values = np.array([0, 1, 2, 3, 4, 5, 8, 9], np.int8)
        f.flag_meanings = "a b c d e f g h"
        f[:] = [1, 1, 4, 1, 1, 1, 1, 1, 3]
        _data_var(nc, "S", "sea_water_practical_salinity", "1", ("obs",), np.concatenate(SAL))
    digest = sha(p)
    casts = read_casts(p)
    _check_three(casts)
    assert sha(p) == digest
    assert casts[0]["temperature_qc"].values.tolist() == [1, 1, 4]
    assert casts[2]["temperature_qc"].values.tolist() == [1, 1, 1, 3]
    assert "temperature" in steps_of(casts[0].attrs)[0]["unit_conversions"]
    with pytest.raises(InputFileError, match="3 casts"):
        read_cast(p)


def test_indexed_ragged_array(tmp_path):
    p = tmp_path / "indexed.nc"
    order = [0, 1, 2, 0, 2, 1, 0, 2, 2]  # samples of the three profiles interleaved in time
    per = {k: iter(range(len(PRES[k]))) for k in range(3)}
    picks = [(k, next(per[k])) for k in order]
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("profile", 3)
        nc.createDimension("obs", 9)
        _instance_vars(nc)
        ix = nc.createVariable("parentIndex", "i4", ("obs",))
        ix.instance_dimension = "profile"
        ix[:] = order
        _data_var(nc, "PR", "sea_water_pressure", "dbar", ("obs",), [PRES[k][i] for k, i in picks])
        _data_var(
            nc,
            "TX",
            "sea_water_temperature",
            "degree_Celsius",
            ("obs",),
            [TEMP[k][i] for k, i in picks],
        )
        _data_var(
            nc, "S", "sea_water_practical_salinity", "1", ("obs",), [SAL[k][i] for k, i in picks]
        )
    _check_three(read_casts(p))


def test_orthogonal_multidimensional_array(tmp_path):
    p = tmp_path / "orthogonal.nc"
    z = np.array([0.0, 10.0, 20.0, 30.0])
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("profile", 3)
        nc.createDimension("z", 4)
        _instance_vars(nc)
        v = _data_var(nc, "z", "sea_water_pressure", "dbar", ("z",), z)
        v.positive, v.axis = "down", "Z"
        temp = np.full((3, 4), np.nan)
        sal = np.full((3, 4), np.nan)
        for k in range(3):
            temp[k, : TEMP[k].size] = TEMP[k]
            sal[k, : SAL[k].size] = SAL[k]
        _data_var(
            nc, "TX", "sea_water_temperature", "degree_Celsius", ("profile", "z"), temp, fill=-999.0
        )
        _data_var(nc, "S", "sea_water_practical_salinity", "1", ("profile", "z"), sal, fill=-999.0)
    casts = read_casts(p)
    _check_three(casts)  # trailing all-missing levels are padding, not samples


def test_incomplete_multidimensional_array(tmp_path):
    p = tmp_path / "incomplete.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("profile", 3)
        nc.createDimension("obs", 4)
        _instance_vars(nc)
        for name, sn, unit, arrays in (
            ("PR", "sea_water_pressure", "dbar", PRES),
            ("TX", "sea_water_temperature", "degC", TEMP),
            ("S", "sea_water_practical_salinity", "1", SAL),
        ):
            full = np.full((3, 4), -1e34)
            for k in range(3):
                full[k, : arrays[k].size] = arrays[k]
            _data_var(nc, name, sn, unit, ("profile", "obs"), full, fill=-1e34)
    _check_three(read_casts(p))


def test_single_profile(tmp_path):
    p = tmp_path / "single.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.featureType = "profile"
        nc.createDimension("z", 3)
        nc.createDimension("name_strlen", 4)
        for name, sn, units, val in (
            ("lat", "latitude", "degrees_north", 1.5),
            ("lon", "longitude", "degrees_east", 2.5),
        ):
            v = nc.createVariable(name, "f8", ())
            v.standard_name, v.units = sn, units
            v[...] = val
        _data_var(nc, "depth", "depth", "m", ("z",), [0.0, 5.0, 10.0])
        _data_var(
            nc, "svel", "speed_of_sound_in_sea_water", "m s-1", ("z",), [1500.0, 1499.0, 1498.0]
        )
    cast = read_cast(p)
    assert cast.attrs["instrument"] == "svp"
    assert float(cast.latitude) == 1.5
    assert cast["measured_sound_speed"].values.tolist() == [1500.0, 1499.0, 1498.0]


def test_netcdf_errors(tmp_path):
    p = tmp_path / "two_temps.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("z", 2)
        _data_var(nc, "P", "sea_water_pressure", "dbar", ("z",), [0, 1])
        _data_var(nc, "T1", "sea_water_temperature", "degC", ("z",), [1, 2])
        _data_var(nc, "T2", "sea_water_temperature", "degC", ("z",), [1, 2])
        _data_var(nc, "S", "sea_water_practical_salinity", "1", ("z",), [35, 35])
    with pytest.raises(InputFileError, match="T1.*T2"):
        read_cast(p)
    cast = read_cast(p, columns={"temperature": "T2"})
    assert cast["temperature"].values.tolist() == [1, 2]
    q = tmp_path / "bad_units.nc"
    with netCDF4.Dataset(q, "w") as nc:
        nc.createDimension("z", 2)
        _data_var(nc, "P", "sea_water_pressure", "furlong", ("z",), [0, 1])
    with pytest.raises(InputFileError, match="furlong"):
        read_cast(q)
    r = put(tmp_path, b"CDF\x01garbage", "broken.nc")
    with pytest.raises(InputFileError, match="netCDF|standard_name"):
        read_cast(r)


# --- defects from the tracker, each with the test that would have caught it -------------

SPEED_TABLE = "0.000 1500.000\n10.000 1499.500\n20.000 1499.000\n"  # invented values


def test_headerless_pair_is_depth_and_sound_speed(tmp_path):
    p = put(tmp_path, SPEED_TABLE, "cast.speed.txt")
    cast = read_cast(p)
    assert cast.attrs["instrument"] == "svp"
    np.testing.assert_array_equal(cast["depth"].values, [0.0, 10.0, 20.0])
    np.testing.assert_array_equal(cast["measured_sound_speed"].values, [1500, 1499.5, 1499])
    prof = read_profile(p)
    np.testing.assert_array_equal(prof["depth"].values, [0.0, 10.0, 20.0])
    np.testing.assert_array_equal(prof["sound_speed"].values, [1500, 1499.5, 1499])
    assert prof.attrs["equation"] == "measured" and prof.attrs["cast_max_depth"] == 20.0
    assert cast.attrs["cast_name"] == "cast" and prof["profile_id"].item() == "cast"


def test_own_speed_table_reads_back(tmp_path):
    from seaprofile.casts.write import write_speed_table

    z = np.array([0.0, 5.0, 12.5])
    prof = read_profile(put(tmp_path, SPEED_TABLE, "seed.speed.txt"))
    prof = prof.isel(depth=slice(0, 3)).assign_coords(depth=z)
    out = write_speed_table(prof, tmp_path / "again.speed.txt")
    back = read_profile(out)
    np.testing.assert_array_equal(back["depth"].values, z)
    np.testing.assert_array_equal(back["sound_speed"].values, prof["sound_speed"].values)


@pytest.mark.parametrize(
    "columns",
    [
        "1=pressure,3=temperature,2=salinity",
        {1: "pressure", 3: "temperature", 2: "salinity"},
        "#1=pressure,#3=temperature,#2=salinity",
    ],
)
def test_positional_column_mapping(tmp_path, columns):
    p = put(tmp_path, "1 35.0 10.5\n5 35.1 10.0\n10 35.2 9.5\n", "noheader.txt")
    cast = read_cast(p, columns=columns)
    np.testing.assert_array_equal(cast["pressure"].values, [1, 5, 10])
    np.testing.assert_array_equal(cast["salinity"].values, [35.0, 35.1, 35.2])
    np.testing.assert_array_equal(cast["temperature"].values, [10.5, 10.0, 9.5])
    # positions work with a header row too, whatever its cells say
    q = put(tmp_path, "a,b,c\n1,35.0,10.5\n5,35.1,10.0\n", "odd header.csv")
    assert read_cast(q, columns=columns)["temperature"].values.tolist() == [10.5, 10.0]


def test_positional_mapping_errors(tmp_path):
    p = put(tmp_path, "1 35.0 10.5\n5 35.1 10.0\n", "three.txt")
    with pytest.raises(InputFileError, match="no header row and 3 columns") as info:
        read_cast(p)
    assert info.value.line == 1
    with pytest.raises(InputFileError, match="column 4, but the rows have 3"):
        read_cast(p, columns="1=pressure,4=temperature")
    with pytest.raises(InputFileError, match="no header row"):
        read_cast(p, columns="pressure=P")


def _foreign_nc(path, names=("PRES", "TEMP", "PSAL"), units=True):
    """A netCDF without standard names, as many archives write (invented values)."""
    with netCDF4.Dataset(path, "w") as nc:
        nc.createDimension("N_LEVELS", 3)
        for name, vals, unit in zip(
            names,
            ([0.0, 10.0, 20.0], [12.0, 11.5, 11.0], [35.0, 35.1, 35.2]),
            ("dbar", "degC", "1"),
        ):
            v = nc.createVariable(name, "f8", ("N_LEVELS",))
            if units:
                v.units = unit
            v[:] = vals
    return path


@pytest.mark.parametrize(
    "names", [("PRES", "TEMP", "PSAL"), ("pres", "temp", "sal"), ("P_dbar", "T90", "S")]
)
def test_netcdf_mapping_of_non_cf_names(tmp_path, names):
    p = _foreign_nc(tmp_path / "foreign.nc", names, units=False)
    with pytest.raises(InputFileError, match="columns=|needs temperature"):
        read_cast(p)  # too little to recognise: no standard_name, no units
    mapping = dict(zip(("pressure", "temperature", "salinity"), names))
    cast = read_cast(p, columns=mapping, units="pressure=dbar")
    np.testing.assert_array_equal(cast["pressure"].values, [0.0, 10.0, 20.0])
    np.testing.assert_array_equal(cast["temperature"].values, [12.0, 11.5, 11.0])
    assert steps_of(cast.attrs)[-1]["columns"] == mapping
    kpa = read_cast(p, columns=mapping, units="pressure=kPa")  # 1 kPa = 0.1 dbar
    np.testing.assert_allclose(kpa["pressure"].values, [0.0, 1.0, 2.0])


def test_netcdf_profile_mapping(tmp_path):
    p = tmp_path / "svel.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("z", 3)
        for name, vals in (("DEPTH", [0.0, 10.0, 20.0]), ("svel", [1500.0, 1499.5, 1499.0])):
            nc.createVariable(name, "f8", ("z",))[:] = vals
    prof = read_profile(p, columns="depth=DEPTH,sound_speed=svel")
    np.testing.assert_array_equal(prof["sound_speed"].values, [1500.0, 1499.5, 1499.0])
    cast = read_cast(p, columns={"depth": "DEPTH", "sound_speed": "svel"})
    assert cast.attrs["instrument"] == "svp"
    with pytest.raises(InputFileError, match="position.*text files"):
        read_cast(p, columns="1=depth,2=sound_speed")


def test_netcdf_mapped_variable_with_wrong_dimensions(tmp_path):
    p = tmp_path / "twod.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("a", 2)
        nc.createDimension("b", 3)
        nc.createVariable("PRES", "f8", ("a", "b"))[:] = np.ones((2, 3))
        nc.createVariable("TEMP", "f8", ("b",))[:] = [1, 2, 3]
    with pytest.raises(InputFileError, match="PRES.*dimensions") as info:
        read_cast(p, columns="pressure=PRES,temperature=TEMP", salinity=35)
    assert info.value.column == "PRES"


def test_free_comment_text_never_becomes_attribute_names(tmp_path):
    text = (
        "# Remark: the winch stalled: twice at 40 m\n"
        "# plain remark without a colon\n"
        "# latitude: 54.5\n"
        "# bottom depth: 120\n"
        "pres,temp,sal\n1,10,35\n2,9.9,35.01\n"
    )
    cast = read_cast(put(tmp_path, text))
    assert "Remark" not in cast.attrs and "plain_remark_without_a_colon" not in cast.attrs
    assert cast.attrs["comment"] == (
        "Remark: the winch stalled: twice at 40 m\nplain remark without a colon"
    )
    assert cast.attrs["bottom_depth"] == 120.0
    with pytest.raises(InputFileError, match="bottom_depth") as info:
        read_cast(put(tmp_path, "# water depth: deep\npres,temp,sal\n1,2,3\n", "b.csv"))
    assert info.value.line == 1


def test_latitude_without_longitude_reads_builds_and_writes(tmp_path):
    from seaprofile.casts.write import write
    from seaprofile.profile import build_profile

    rows = "\n".join(f"{z},{12 - 0.05 * z:.3f},{34.5 + 0.004 * z:.4f}" for z in range(1, 120, 3))
    cast = read_cast(put(tmp_path, "# latitude: 54.2\npres,temp,sal\n" + rows + "\n"))
    assert float(cast.latitude) == 54.2 and np.isnan(float(cast.longitude))
    prof = build_profile(cast)
    assert np.isfinite(prof["sound_speed"].values).sum() > 30
    for ext in ("nc", "csv", "json", "speed.txt"):
        back = read_profile(write(prof, tmp_path / f"p.{ext}"))
        assert np.isnan(float(back.longitude))
        if ext != "speed.txt":  # the plain table carries no position
            assert float(back.latitude) == 54.2


def test_latitude_without_longitude_describe(tmp_path):
    from seaprofile.layers import describe
    from seaprofile.profile import build_profile

    rows = "\n".join(f"{z},{12 - 0.05 * z:.3f},{34.5 + 0.004 * z:.4f}" for z in range(1, 120, 3))
    cast = read_cast(put(tmp_path, "# latitude: 54.2\npres,temp,sal\n" + rows + "\n"))
    assert np.isfinite(describe(build_profile(cast))["surface_sound_speed"])


@pytest.mark.parametrize("when", ["3000-01-01T00:00:00Z", "1500-06-01", "2262-04-12"])
def test_times_outside_datetime64ns_are_refused(tmp_path, when):
    p = put(tmp_path, f"# cast_name: far\n# time: {when}\npres,temp,sal\n1,10,35\n")
    with pytest.raises(InputFileError, match="outside the range") as info:
        read_cast(p)
    assert info.value.line == 2
    # the edges of the range are fine (numpy datetime64[ns] spans 1678-09-21..2262-04-11)
    ok = put(tmp_path, "# time: 2262-04-10T23:59:59Z\npres,temp,sal\n1,10,35\n", "ok.csv")
    assert read_cast(ok).time.values == np.datetime64("2262-04-10T23:59:59", "ns")


def test_netcdf_time_outside_range_is_refused(tmp_path):
    p = tmp_path / "far.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("z", 2)
        t = nc.createVariable("T_AXIS", "f8", ())
        t.standard_name, t.units = "time", "days since 2000-01-01"
        t[...] = 365.25 * 1000  # the year 3000
        _data_var(nc, "P", "sea_water_pressure", "dbar", ("z",), [0, 1])
        _data_var(nc, "T", "sea_water_temperature", "degC", ("z",), [1, 2])
        _data_var(nc, "S", "sea_water_practical_salinity", "1", ("z",), [35, 35])
    with pytest.raises(InputFileError, match="outside the range") as info:
        read_cast(p)
    assert info.value.column == "T_AXIS"


def test_special_files_are_refused_without_opening(tmp_path):
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)  # opening it for reading would block until a writer came
    with pytest.raises(InputFileError, match="named pipe"):
        read_cast(fifo)
    with pytest.raises(InputFileError, match="character device"):
        read_cast("/dev/null")
    with pytest.raises(InputFileError, match="named pipe"):
        read_profile(fifo)
    link = tmp_path / "link.csv"
    link.symlink_to(fifo)
    with pytest.raises(InputFileError, match="named pipe"):
        read_cast(link)


def test_empty_collections_and_broken_netcdf(tmp_path):
    p = tmp_path / "none.nc"
    with netCDF4.Dataset(p, "w") as nc:
        nc.createDimension("profile", 0)
        nc.createDimension("obs", 0)
        v = nc.createVariable("row_size", "i4", ("profile",))
        v.sample_dimension = "obs"
        _data_var(nc, "P", "sea_water_pressure", "dbar", ("obs",), [])
    with pytest.raises(InputFileError, match="no profiles"):
        read_casts(p)
    with pytest.raises(InputFileError, match="no profiles"):
        read_profile(p)
    good = tmp_path / "good.nc"
    with netCDF4.Dataset(good, "w") as nc:
        nc.createDimension("z", 2)
        _data_var(nc, "P", "sea_water_pressure", "dbar", ("z",), [0, 1])
    truncated = put(tmp_path, good.read_bytes()[: good.stat().st_size // 2], "half.nc")
    with pytest.raises(InputFileError, match="netCDF"):
        read_cast(truncated)


@pytest.mark.parametrize(
    "doc,match",
    [
        ('{"format": "seaprofile", "datasets": 5}', "list of objects"),
        ('{"format": "seaprofile", "dataset": {"variables": []}}', "malformed"),
        (
            '{"format": "seaprofile", "dataset": {"dimension": "sample", "attributes": {}, '
            '"coordinates": {}, "variables": {"t": {"dims": ["sample"], "dtype": "O", '
            '"attributes": {}, "values": [1]}}}}',
            "expected numbers",
        ),
        ('{"format": "seaprofile", "dataset": ' + "[" * 100000 + "]" * 100000 + "}", "JSON"),
        (
            '{"format": "seaprofile", "dataset": {"dimension": "sample", "attributes": {}, '
            '"coordinates": {}, "variables": {"pressure": {"dims": ["sample"], "dtype": "f8", '
            '"attributes": {}, "values": [1]}}}}',
            "no flags",
        ),
    ],
)
def test_malformed_json(tmp_path, doc, match):
    with pytest.raises(InputFileError, match=match):
        read_casts(put(tmp_path, doc, "odd.json"))


def test_utf16_json_is_json(tmp_path):
    from seaprofile.casts.write import write_json

    cast = read_cast(put(tmp_path, CTD))
    path = tmp_path / "cast16.json"
    path.write_bytes(write_json(cast, tmp_path / "cast.json").read_text().encode("utf-16"))
    back = read_cast(path)
    np.testing.assert_array_equal(back["temperature"].values, cast["temperature"].values)


@pytest.mark.parametrize("time", [None, "2031-03-01T06:30:00"])
def test_cast_built_directly_equals_the_public_constructor(time):
    # make_cast hands its xr.Variables to xarray's direct constructor: the Dataset must be
    # the one xr.Dataset(data_vars, coords=..., attrs=...) builds, to the variable order
    import xarray as xr

    from seaprofile.casts.model import make_cast

    rng = np.random.default_rng(3)
    cast = make_cast(
        pressure=np.linspace(1.0, 100.0, 50),
        temperature=rng.normal(10.0, 1.0, 50),
        salinity=np.full(50, 35.0),
        latitude=-12.5,
        longitude=140.25,
        time=time,
        cast_name="Ledge-4 (synthetic)",
    )
    public = xr.Dataset(
        {k: cast.variables[k].copy() for k in cast.data_vars},
        coords={k: xr.Variable((), cast.variables[k].values, cast[k].attrs) for k in cast.coords},
        attrs=cast.attrs,
    )
    assert cast.identical(public)
    assert list(cast.variables) == list(public.variables)
    assert set(cast.coords) == set(public.coords) and not cast.indexes
    assert cast.time.dtype == np.dtype("datetime64[ns]") and cast.encoding == public.encoding
