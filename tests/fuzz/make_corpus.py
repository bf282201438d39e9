"""Make the fuzz corpus: small hostile cast files under tests/fuzz/corpus/ (synthetic data).

Run ``python tests/fuzz/make_corpus.py`` to (re)write the corpus. Every file is invented
test data. Text and JSON files are byte-identical on every run; netCDF files are written
by the netCDF library and may differ in their internal timestamps. Files that cannot be
committed (a named pipe, a directory, a 10^6-sample cast, a cell beyond the csv module's
field limit) are made at test time by ``test_fuzz_corpus.py``.

:data:`CASES` maps each file name to what the readers must do with it: ``"cast"`` (read
as a cast), ``"error"`` (one InputFileError naming the file), or ``"either"``; an
``(kind, line, column)`` tuple also pins where the error points.
"""

from __future__ import annotations

import json
import random
import sys
from pathlib import Path

CORPUS = Path(__file__).resolve().parent / "corpus"

_HEAD = "# cast_name: Fuzz (synthetic test data)\n# latitude: 44.5\n# longitude: -12.25\n"


def _rows(n, start=1.0, step=2.0):
    return "".join(
        f"{start + step * k:.1f},{14.0 - 0.02 * k:.3f},{34.8 + 0.001 * k:.4f}\n" for k in range(n)
    )


GOOD = _HEAD + "PRES [dbar],Temp [degC],Sal\n" + _rows(40)


def _text_cases():
    rng = random.Random(20240501)
    junk = bytes(rng.randrange(256) for _ in range(600))
    c = {
        "empty.csv": (b"", "error"),
        "blank_lines.csv": (b"\n\n   \n\t\n", "error"),
        "comments_only.csv": (b"# latitude: 10\n# just comments\n", "error"),
        "header_only.csv": (b"pres,temp,sal\n", ("error", 1, None)),
        "header_only_crlf.csv": (b"pres,temp,sal\r\n\r\n", ("error", 1, None)),
        "binary_junk.csv": (junk, "error"),
        "binary_after_header.csv": (b"pres,temp,sal\n1,2,3\n" + junk[:80], "error"),
        "nul_bytes.csv": (b"pres,temp,sal\n1,\x00,3\n", ("error", 2, None)),
        "control_chars.csv": (b"pres,temp,sal\n1,2\x07,3\n", ("error", 2, None)),
        "utf8_bom.csv": (b"\xef\xbb\xbf" + GOOD.encode(), "cast"),
        "utf16_bom.csv": (GOOD.encode("utf-16"), "cast"),
        "utf16le_no_bom.csv": (GOOD.encode("utf-16-le"), "cast"),
        "utf16be_no_bom.csv": (GOOD.encode("utf-16-be"), "cast"),
        "utf32_bom.csv": (GOOD.encode("utf-32"), "cast"),
        "latin1_degree.csv": (GOOD.replace("degC", "\xb0C").encode("latin-1"), "error"),
        "utf8_degree.csv": (GOOD.replace("degC", "\xb0C").encode(), "cast"),
        "crlf.csv": (GOOD.replace("\n", "\r\n").encode(), "cast"),
        "cr_only.csv": (GOOD.replace("\n", "\r").encode(), "cast"),
        "no_final_newline.csv": (GOOD.rstrip("\n").encode(), "cast"),
        "decimal_comma_semicolon.csv": (
            (_HEAD + "PRES;TEMP;SAL\n" + _rows(30).replace(",", ";").replace(".", ",")).encode(),
            "cast",
        ),
        "decimal_comma_in_csv.csv": (b"pres,temp,sal\n1,12,5,35\n", ("error", 2, None)),
        "text_in_numeric.csv": ((GOOD + "90.0,warm,35.0\n").encode(), ("error", 45, "2")),
        "inf_value.csv": (b"pres,temp,sal\n1,inf,35\n2,9,35\n", ("error", 2, None)),
        "minus_nan.csv": (b"pres,temp,sal\n1,-nan,35\n2,9,35\n", ("error", 2, None)),
        "missing_words.csv": (
            (_HEAD + "pres,temp,sal\n" + _rows(20) + "41,NA,35\n42,null,-\n43,,35\n").encode(),
            "either",
        ),
        "all_missing.csv": (_HEAD.encode() + b"pres,temp,sal\n" + b"nan,nan,nan\n" * 20, "either"),
        "fill_minus9999_undeclared.csv": (
            (_HEAD + "pres,temp,sal\n" + _rows(20) + "41,-9999,-9999\n").encode(),
            "either",
        ),
        "fill_minus9999_declared.csv": (
            (
                _HEAD + "# missing_value: -9999\npres,temp,sal\n" + _rows(20) + "41,-9999,-9999\n"
            ).encode(),
            "cast",
        ),
        "negative_pressures.csv": (
            (_HEAD + "pres,temp,sal\n" + _rows(20, -30.0)).encode(),
            "either",
        ),
        "absurd_values.csv": (
            (_HEAD + "pres,temp,sal\n" + _rows(10) + "1e9,500,-3\n1e300,-1e300,1e300\n").encode(),
            "either",
        ),
        "huge_negative_pressure.csv": (
            (
                _HEAD + "PRES [dbar],Temp [degC],Sal\n1,10,35\n"
                "2,10,35.01\n-1e7,10,35\n3,9.9,35.02\n"
            ).encode(),
            "cast",
        ),
        "huge_negative_pressure_probe.csv": (
            (
                _HEAD
                + "PRES [dbar],SV[m/s]\n"
                + "0.0,0.0\n" * 7
                + "0.0,1499.93\n-8980452.0,1499.92\n1.0,1499.91\n"
            ).encode(),
            "cast",
        ),
        "huge_depth.csv": (
            (
                _HEAD + "depth [m],Temp [degC],Sal\n0,12,35\n1,11.9,35.01\n"
                "4503599627370496.0,11.8,35.02\n"
            ).encode(),
            "cast",
        ),
        "duplicated_depths.csv": (
            (
                _HEAD
                + "depth [m],temp,sal\n"
                + "".join(f"{5 * (k // 3)},{12 - k / 10},35\n" for k in range(30))
            ).encode(),
            "either",
        ),
        "non_monotonic_depths.csv": (
            (
                _HEAD
                + "depth [m],temp,sal\n"
                + "".join(f"{(k * 37) % 50},{12 - k / 10},35\n" for k in range(30))
            ).encode(),
            "either",
        ),
        "one_sample.csv": ((_HEAD + "pres,temp,sal\n1,10,35\n").encode(), "cast"),
        "two_samples.csv": ((_HEAD + "pres,temp,sal\n1,10,35\n2,9.9,35.01\n").encode(), "cast"),
        "constant_values.csv": ((_HEAD + "pres,temp,sal\n" + "5,10,35\n" * 20).encode(), "either"),
        "unknown_unit.csv": (b"pres [furlong],temp,sal\n1,2,3\n", ("error", 1, None)),
        "wrong_unit_kind.csv": (b"pres [degC],temp,sal\n1,2,3\n", ("error", 1, None)),
        "ragged.csv": ((GOOD + "90,10\n").encode(), ("error", 45, 3)),
        "too_many_fields.csv": ((GOOD + "90,10,35,1\n").encode(), ("error", 45, 4)),
        "unbalanced_quote.csv": (b'pres,temp,sal\n1,"2,3\n4,5,6\n', "error"),
        "empty_header_cell.csv": (b"pres,,sal\n1,2,3\n", ("error", 1, 2)),
        "duplicate_headers.csv": (b"temp,temp,pres,sal\n1,2,3,4\n", ("error", 1, None)),
        "no_known_columns.csv": (b"alpha,beta\n1,2\n", ("error", 1, None)),
        "only_flags.csv": (b"temp_qc,pres_qc\n1,1\n", "error"),
        "bad_flag_value.csv": (b"pres,temp,sal,temp_qc\n1,2,3,77\n", ("error", 2, None)),
        "headerless_pair.speed.txt": (
            "".join(f"{z:.3f} {1500 - 0.02 * z:.3f}\n" for z in range(0, 200, 5)).encode(),
            "cast",
        ),
        "headerless_three.txt": (b"1 2 3\n4 5 6\n", ("error", 1, None)),
        "headerless_one_column.txt": (b"1\n2\n3\n", ("error", 1, None)),
        "comment_with_colons.csv": (
            (
                _HEAD
                + "# Remark: winch stalled: twice\n# Operator said: fine\n"
                + "pres,temp,sal\n"
                + _rows(30)
            ).encode(),
            "cast",
        ),
        "latitude_without_longitude.csv": (
            ("# latitude: 60.1\npres,temp,sal\n" + _rows(30)).encode(),
            "cast",
        ),
        "longitude_without_latitude.csv": (
            ("# longitude: 5.5\npres,temp,sal\n" + _rows(30)).encode(),
            "cast",
        ),
        "bad_latitude.csv": (b"# latitude: 123\npres,temp,sal\n1,2,3\n", ("error", 1, None)),
        "bad_time.csv": (b"# time: sometime soon\npres,temp,sal\n1,2,3\n", ("error", 1, None)),
        "year_3000.csv": (
            (_HEAD + "# time: 3000-01-01T00:00:00Z\npres,temp,sal\n" + _rows(10)).encode(),
            ("error", 4, None),
        ),
        "year_1500.csv": (
            (_HEAD + "# time: 1500-01-01\npres,temp,sal\n" + _rows(10)).encode(),
            ("error", 4, None),
        ),
        "bad_bottom_depth.csv": (b"# bottom_depth: -5\npres,temp,sal\n1,2,3\n", ("error", 1, None)),
        "xbt_no_depth.csv": (
            (
                "# instrument: xbt\n"
                + _HEAD
                + "time [s],temp\n"
                + "".join(f"{t / 10:.1f},{15 - t / 50:.3f}\n" for t in range(100))
            ).encode(),
            "either",
        ),
        "svp_no_vertical.csv": (b"sound speed [m/s]\n1500\n1499\n", "error"),
        "long_line.csv": (b"pres,temp,sal\n" + b"1," * 3000 + b"\n", "error"),
        "whitespace_delimited.txt": (
            GOOD.replace(",", " ")
            .replace("PRES [dbar]", "PRES[dbar]")
            .replace("Temp [degC]", "Temp[degC]")
            .encode(),
            "cast",
        ),
        "tab_delimited.tsv": (GOOD.replace(",", "\t").encode(), "cast"),
        "profile_dataset_csv.csv": (
            b"# dataset: profile\ndepth [m],sound_speed [m/s]\n0,1500\n1,1499\n",
            "error",
        ),
    }
    return c


def _json_cases():
    good_cast = {
        "kind": "cast",
        "dimension": "sample",
        "attributes": {"instrument": "ctd"},
        "coordinates": {"latitude": {"dims": [], "dtype": "f8", "attributes": {}, "values": 1.0}},
        "variables": {
            "pressure": {"dims": ["sample"], "dtype": "f8", "attributes": {}, "values": [1.0, 2.0]},
            "pressure_qc": {"dims": ["sample"], "dtype": "i1", "attributes": {}, "values": [0, 0]},
        },
    }
    doc = {"format": "seaprofile", "format_version": 1}

    def j(obj):
        return json.dumps(obj).encode()

    wrong_dtype = json.loads(json.dumps(good_cast))
    wrong_dtype["variables"]["pressure"]["values"] = ["a", "b"]
    no_flags = json.loads(json.dumps(good_cast))
    del no_flags["variables"]["pressure_qc"]
    two_d = json.loads(json.dumps(good_cast))
    two_d["variables"]["pressure"]["dims"] = ["sample", "x"]
    two_d["variables"]["pressure"]["values"] = [[1.0], [2.0]]
    far = json.loads(json.dumps(good_cast))
    far["coordinates"]["time"] = {
        "dims": [],
        "dtype": "M8[ns]",
        "attributes": {},
        "values": "3000-01-01T00:00:00Z",
    }
    return {
        "json_not_seaprofile.json": (b'{"hello": "world"}', "error"),
        "json_list_top.json": (b"[1, 2, 3]", "error"),
        "json_truncated.json": (j({**doc, "dataset": good_cast})[:60], ("error", 1, None)),
        "json_deep_nesting.json": (
            b'{"format": "seaprofile", "dataset": ' + b"[" * 5000 + b"]" * 5000 + b"}",
            "error",
        ),
        "json_datasets_not_list.json": (j({**doc, "datasets": 7}), "error"),
        "json_empty_datasets.json": (j({**doc, "datasets": []}), "error"),
        "json_dataset_is_string.json": (j({**doc, "dataset": "cast"}), "error"),
        "json_wrong_value_types.json": (j({**doc, "dataset": wrong_dtype}), "error"),
        "json_two_dimensional.json": (j({**doc, "dataset": two_d}), "error"),
        "json_year_3000.json": (j({**doc, "dataset": far}), "error"),
        "json_no_flags.json": (j({**doc, "dataset": no_flags}), "error"),
        "json_missing_keys.json": (j({**doc, "dataset": {"dimension": "sample"}}), "error"),
        "json_utf16.json": (json.dumps({**doc, "dataset": good_cast}).encode("utf-16"), "cast"),
        "json_nan_literal.json": (b'{"format": "seaprofile", "dataset": NaN}', "error"),
    }


def _netcdf_cases(folder):
    """Write the netCDF cases into ``folder``; returns {name: expectation}."""
    import netCDF4
    import numpy as np

    out = {}

    def new(name, expect, fmt="NETCDF4"):
        out[name] = expect
        return netCDF4.Dataset(folder / name, "w", format=fmt)

    def data(nc, name, sn, units, dims, values, dtype="f8"):
        v = nc.createVariable(name, dtype, dims)
        if sn:
            v.standard_name = sn
        if units:
            v.units = units
        v[:] = values
        return v

    with new("nc_zero_profiles.nc", "error") as nc:
        nc.createDimension("profile", 0)
        nc.createDimension("obs", 0)
        v = nc.createVariable("row_size", "i4", ("profile",))
        v.sample_dimension = "obs"
        data(nc, "P", "sea_water_pressure", "dbar", ("obs",), [])
    with new("nc_no_attributes.nc", "error") as nc:
        nc.createDimension("z", 3)
        for n in ("a", "b", "c"):
            data(nc, n, None, None, ("z",), [1.0, 2.0, 3.0])
    with new("nc_no_variables.nc", "error") as nc:
        nc.title = "nothing inside (synthetic)"
    with new("nc_two_dimensional.nc", "error") as nc:
        nc.createDimension("a", 2)
        nc.createDimension("b", 3)
        data(nc, "P", "sea_water_pressure", "dbar", ("a", "b"), np.ones((2, 3)))
        data(nc, "T", "sea_water_temperature", "degC", ("a", "b"), np.ones((2, 3)))
    with new("nc_row_sizes_wrong.nc", "error") as nc:
        nc.createDimension("profile", 2)
        nc.createDimension("obs", 4)
        v = data(nc, "row_size", None, None, ("profile",), [3, 3], "i4")
        v.sample_dimension = "obs"
        data(nc, "P", "sea_water_pressure", "dbar", ("obs",), [0, 1, 2, 3])
    with new("nc_row_sizes_negative.nc", "error") as nc:
        nc.createDimension("profile", 2)
        nc.createDimension("obs", 2)
        v = data(nc, "row_size", None, None, ("profile",), [4, -2], "i4")
        v.sample_dimension = "obs"
        data(nc, "P", "sea_water_pressure", "dbar", ("obs",), [0, 1])
    with new("nc_index_missing_dimension.nc", "error") as nc:
        nc.createDimension("obs", 2)
        v = data(nc, "parent", None, None, ("obs",), [0, 0], "i4")
        v.instance_dimension = "station"
        data(nc, "P", "sea_water_pressure", "dbar", ("obs",), [0, 1])
    with new("nc_mixed_dimensions.nc", "error") as nc:
        nc.createDimension("z", 3)
        nc.createDimension("w", 2)
        data(nc, "P", "sea_water_pressure", "dbar", ("z",), [0, 1, 2])
        data(nc, "T", "sea_water_temperature", "degC", ("w",), [10, 9])
        data(nc, "S", "sea_water_practical_salinity", "1", ("z",), [35, 35, 35])
    with new("nc_bad_profile_attributes.nc", "error") as nc:
        nc.createDimension("profile", 1)
        nc.createDimension("obs", 2)
        nc.createDimension("n", 8)
        v = data(nc, "row_size", None, None, ("profile",), [2], "i4")
        v.sample_dimension = "obs"
        pa = nc.createVariable("profile_attributes", "S1", ("profile", "n"))
        pa[:] = netCDF4.stringtochar(np.array(["{broken"], dtype="S8"))
        pid = nc.createVariable("profile_id", "S1", ("profile", "n"))
        pid.cf_role = "profile_id"
        pid[:] = netCDF4.stringtochar(np.array(["x"], dtype="S8"))
        data(nc, "P", "sea_water_pressure", "dbar", ("obs",), [0, 1])
    with new("nc_year_3000.nc", "error") as nc:
        nc.createDimension("z", 3)
        t = nc.createVariable("T_AXIS", "f8", ())
        t.standard_name, t.units = "time", "days since 2000-01-01"
        t[...] = 365250.0
        data(nc, "P", "sea_water_pressure", "dbar", ("z",), [0, 5, 10])
        data(nc, "T", "sea_water_temperature", "degC", ("z",), [10, 9, 8])
        data(nc, "S", "sea_water_practical_salinity", "1", ("z",), [35, 35.1, 35.2])
    with new("nc_text_data.nc", "error") as nc:
        nc.createDimension("z", 2)
        nc.createDimension("n", 3)
        v = nc.createVariable("P", "S1", ("z", "n"))
        v.standard_name = "sea_water_pressure"
        v[:] = netCDF4.stringtochar(np.array(["abc", "def"], dtype="S3"))
    with new("nc_classic_good.nc", "cast", "NETCDF3_CLASSIC") as nc:
        nc.createDimension("z", 30)
        z = np.arange(30.0) * 2 + 1
        data(nc, "lat", "latitude", "degrees_north", (), 44.5)
        data(nc, "lon", "longitude", "degrees_east", (), -12.25)
        data(nc, "P", "sea_water_pressure", "dbar", ("z",), z)
        data(nc, "T", "sea_water_temperature", "degC", ("z",), 14 - z / 50)
        data(nc, "S", "sea_water_practical_salinity", "1", ("z",), 34.8 + z / 1000)
    good = (folder / "nc_classic_good.nc").read_bytes()
    (folder / "nc_truncated.nc").write_bytes(good[: len(good) // 2])
    out["nc_truncated.nc"] = "error"
    (folder / "nc_magic_only.nc").write_bytes(b"CDF\x01")
    out["nc_magic_only.nc"] = "error"
    (folder / "hdf5_magic_junk.nc").write_bytes(b"\x89HDF\r\n\x1a\n" + bytes(range(256)) * 4)
    out["hdf5_magic_junk.nc"] = "error"
    return out


def _bytes_cases():
    return {**_text_cases(), **_json_cases()}


def expectations():
    """{file name: expectation} for every corpus file (netCDF names included)."""
    out = {name: expect for name, (_, expect) in _bytes_cases().items()}
    out.update(NETCDF)
    return out


#: netCDF corpus files and what the readers must do with them (kept in step with
#: :func:`_netcdf_cases`; checked by the tests)
NETCDF = {
    "nc_zero_profiles.nc": "error",
    "nc_no_attributes.nc": "error",
    "nc_no_variables.nc": "error",
    "nc_two_dimensional.nc": "error",
    "nc_row_sizes_wrong.nc": "error",
    "nc_row_sizes_negative.nc": "error",
    "nc_index_missing_dimension.nc": "error",
    "nc_mixed_dimensions.nc": "error",
    "nc_bad_profile_attributes.nc": "error",
    "nc_year_3000.nc": "error",
    "nc_text_data.nc": "error",
    "nc_classic_good.nc": "cast",
    "nc_truncated.nc": "error",
    "nc_magic_only.nc": "error",
    "hdf5_magic_junk.nc": "error",
}


def main(folder=CORPUS):
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for old in folder.iterdir():
        if not old.name.startswith("."):  # .gitattributes keeps the bytes exact in git
            old.unlink()
    for name, (data, _) in _bytes_cases().items():
        (folder / name).write_bytes(data)
    written = _netcdf_cases(folder)
    assert written == NETCDF, "NETCDF is out of step with _netcdf_cases"
    names = sorted(p.name for p in folder.iterdir() if not p.name.startswith("."))
    big = [n for n in names if (folder / n).stat().st_size > 32_000]
    assert not big, f"corpus files must stay small: {big}"
    return names


if __name__ == "__main__":
    names = main(Path(sys.argv[1]) if len(sys.argv) > 1 else CORPUS)
    print(f"{len(names)} files in the corpus")
