"""Writers: round trips through the readers, CF attributes, atomic and safe writes."""

import hashlib
import json
import os
import signal
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

import netCDF4
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import InputFileError, SeaprofileError, _cf
from seaprofile.casts.model import make_cast
from seaprofile.casts.read import (
    read_cast,
    read_casts,
    read_profile,
    read_profiles,
    read_speed_table,
)
from seaprofile.casts.write import (
    FORMATS,
    NETCDF_LOCK,
    format_of,
    refuse_input_as_output,
    write,
    write_csv,
    write_json,
    write_netcdf,
    write_speed_table,
)

# invented test data (synthetic)


def sample_cast(name="Gullet-3", n=6, instrument="ctd", **extra):
    p = np.linspace(0.5, 60.0, n)
    t = 14.0 - 0.1 * p
    t[2] = np.nan
    cast = make_cast(
        pressure=p,
        temperature=t,
        salinity=np.full(n, 34.7),
        latitude=47.25,
        longitude=-8.5,
        time="2022-09-03T06:15:30",
        cast_name=name,
        vessel="RV Imaginary Petrel",
        instrument=instrument,
        **extra,
    )
    cast["temperature_qc"].values[:] = [1, 1, 9, 4, 2, 1][:n] + [1] * max(0, n - 6)
    cast.attrs = _cf.record_step(cast.attrs, "invented_step", threshold=0.5)
    return cast


def xbt_cast():
    t = np.arange(0.0, 5.0)
    return make_cast(
        elapsed_time=t,
        temperature=20 - t,
        depth=6.691 * t - 2.25e-3 * t**2,
        latitude=np.nan,
        instrument="xbt",
        cast_name="drop-1",
    )


def sample_profile(name="Gullet-3"):
    z = np.arange(0.0, 50.0, 10.0)
    ds = xr.Dataset(
        {
            "sound_speed": ("depth", 1500 - 0.05 * z, _cf.attrs_for("sound_speed")),
            "sound_speed_qc": (
                "depth",
                np.array([1, 1, 1, 8, 8], np.int8),
                _cf.flag_attrs("sound_speed"),
            ),
            "temperature": ("depth", 14 - 0.1 * z, _cf.attrs_for("temperature")),
            "temperature_qc": ("depth", np.ones(5, np.int8), _cf.flag_attrs("temperature")),
            "samples_per_bin": (
                "depth",
                np.array([3, 4, 4, 0, 0], np.int32),
                _cf.attrs_for("samples_per_bin"),
            ),
        },
        coords={
            "depth": ("depth", z, _cf.attrs_for("depth")),
            "latitude": ((), 47.25, _cf.attrs_for("latitude")),
            "longitude": ((), -8.5, _cf.attrs_for("longitude")),
            "time": ((), np.datetime64("2022-09-03T06:15:30", "ns"), _cf.attrs_for("time")),
            "profile_id": ((), name, {"cf_role": "profile_id", "long_name": "cast name"}),
        },
        attrs=_cf.base_attrs(
            featureType="profile",
            equation="chen_millero1977",
            depth_method="unesco1983",
            cast_max_depth=20.0,
        ),
    )
    ds.attrs = _cf.record_step(ds.attrs, "bin_average", bin_size=10.0)
    return ds


def sha(path):
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


SKIP_ATTRS = {"history", "processing_steps", "source_file", "ignored_columns"}


def assert_same(original, back, *, check_attr_types=True):
    """Values, flags, coordinates and attributes survive the round trip."""
    assert set(original.data_vars) <= set(back.data_vars)
    for v in original.data_vars:
        a, b = original[v].values, back[v].values
        if a.dtype.kind == "f":
            np.testing.assert_array_equal(a, b)
        else:
            assert b.dtype == a.dtype and np.array_equal(a, b), v
    for c in original.coords:
        np.testing.assert_array_equal(original[c].values, back[c].values, err_msg=c)
    for k, v in original.attrs.items():
        if k in SKIP_ATTRS:
            continue
        got = back.attrs[k]
        assert (got == v) if check_attr_types else (str(got) == str(v)), k
    steps = _cf.steps_of(original.attrs)
    assert _cf.steps_of(back.attrs)[: len(steps)] == steps
    assert back.attrs["history"].startswith(original.attrs["history"])


# --- round trips -------------------------------------------------------------------------


@pytest.mark.parametrize("ext", ["csv", "nc", "nc4", "json"])
@pytest.mark.parametrize("make", [sample_cast, xbt_cast])
def test_cast_round_trip(tmp_path, ext, make):
    cast = make()
    before = cast.copy(deep=True)
    out = write(cast, tmp_path / f"cast.{ext}")
    xr.testing.assert_identical(cast, before)  # input untouched
    back = read_cast(out)
    assert_same(cast, back)
    if ext == "json":
        xr.testing.assert_identical(cast, back)


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_collection_round_trip(tmp_path, version):
    casts = [
        sample_cast("A", 6),
        sample_cast("B", 9, instrument="svp", measured_sound_speed=np.full(9, 1501.0)),
        sample_cast("C", 7),
    ]
    casts[2].attrs["vessel"] = "RV Other"
    path = write_netcdf(casts, tmp_path / "three.nc", version=version)
    back = read_casts(path)
    assert [b["profile_id"].item() for b in back] == ["A", "B", "C"]
    for a, b in zip(casts, back):
        assert_same(a, b)
    assert "measured_sound_speed" not in back[0] and "measured_sound_speed" in back[1]
    assert back[2].attrs["vessel"] == "RV Other"
    json_back = read_casts(write_json(casts, tmp_path / "three.json"))
    for a, b in zip(casts, json_back):
        xr.testing.assert_identical(a, b)


@pytest.mark.parametrize("ext", ["csv", "nc", "nc4", "json"])
def test_profile_round_trip(tmp_path, ext):
    prof = sample_profile()
    back = read_profile(write(prof, tmp_path / f"profile.{ext}"))
    assert_same(prof, back, check_attr_types=(ext != "csv"))  # CSV attrs come back as text
    np.testing.assert_array_equal(back["depth"].values, prof["depth"].values)
    assert back["depth"].attrs["positive"] == "down"
    with pytest.raises(SeaprofileError):
        read_casts(tmp_path / f"profile.{ext}")


@pytest.mark.parametrize("version", [3, 4])
def test_profile_collection_netcdf(tmp_path, version):
    profs = [sample_profile("P1"), sample_profile("P2")]
    back = read_profiles(write_netcdf(profs, tmp_path / "p.nc", version=version))
    assert [b["profile_id"].item() for b in back] == ["P1", "P2"]


@settings(max_examples=30, deadline=None)
@given(
    st.lists(
        st.one_of(st.floats(-5, 40, allow_nan=False), st.just(float("nan"))),
        min_size=1,
        max_size=40,
    )
)
def test_csv_keeps_every_float_exactly(values):
    t = np.array(values)
    cast = make_cast(
        pressure=np.arange(t.size, dtype=float), temperature=t, salinity=np.full(t.size, 35.0)
    )
    cast["temperature_qc"].values[np.isnan(t)] = _cf.MISSING
    with tempfile.TemporaryDirectory() as d:
        back = read_cast(write_csv(cast, Path(d) / "c.csv"))
    np.testing.assert_array_equal(back["temperature"].values, t)
    np.testing.assert_array_equal(back["temperature_qc"].values, cast["temperature_qc"].values)


# --- file contents ---------------------------------------------------------------------


def test_csv_header_carries_units_provenance_and_caution(tmp_path):
    text = write_csv(sample_profile(), tmp_path / "p.csv").read_text()
    lines = text.splitlines()
    assert "# dataset: profile" in lines
    assert f"# caution: {_cf.CAUTION}" in lines
    assert "# equation: chen_millero1977" in lines
    assert any(line.startswith("# processing_steps: [") for line in lines)
    header = next(line for line in lines if not line.startswith("#"))
    assert header.startswith("depth [m],sound_speed [m/s],sound_speed_qc,temperature [degC]")


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_cf_attributes(tmp_path, version):
    path = write_netcdf([sample_cast("A"), sample_cast("B", 4)], tmp_path / "c.nc", version=version)
    with netCDF4.Dataset(path) as nc:
        assert nc.data_model == {3: "NETCDF3_64BIT_OFFSET", 4: "NETCDF4"}[version]
        assert nc.Conventions == "CF-1.10" and nc.featureType == "profile"
        assert nc.caution == _cf.CAUTION
        assert "write_netcdf" in nc.history
        assert nc["profile_id"].cf_role == "profile_id"
        assert nc["row_size"].sample_dimension == "obs"
        assert list(nc["row_size"][:]) == [6, 4]
        assert nc["time"].units.startswith("seconds since 1970-01-01")
        t = nc["temperature"]
        assert t.standard_name == "sea_water_temperature" and t.units == "degree_Celsius"
        assert t.coordinates == "time latitude longitude pressure"
        assert t.ancillary_variables == "temperature_qc"
        q = nc["temperature_qc"]
        assert q.dtype == np.int8 and q.flag_values.dtype == np.int8
        assert q.flag_values.tolist() == [0, 1, 2, 3, 4, 5, 8, 9]
        assert len(q.flag_meanings.split()) == 8
        assert nc["pressure"].positive == "down"


def test_json_document(tmp_path):
    doc = json.loads(write_json(sample_cast(), tmp_path / "c.json").read_text())
    assert doc["format"] == "seaprofile" and doc["caution"] == _cf.CAUTION
    t = doc["dataset"]["variables"]["temperature"]
    assert t["values"][2] is None and t["attributes"]["units"] == "degree_Celsius"


# --- speed table -----------------------------------------------------------------------


def test_speed_table(tmp_path):
    prof = sample_profile()
    prof["sound_speed"].values[1] = np.nan
    prof["sound_speed_qc"].values[2] = _cf.BAD
    before = prof.copy(deep=True)
    path = write_speed_table(prof, tmp_path / "speeds.table")
    xr.testing.assert_identical(prof, before)
    lines = path.read_text().splitlines()
    assert lines == ["0.000 1500.000", "30.000 1498.500", "40.000 1498.000"]
    z, c = read_speed_table(path)
    np.testing.assert_allclose(z, [0, 30, 40])
    np.testing.assert_allclose(c, [1500.0, 1498.5, 1498.0])
    with pytest.raises(SeaprofileError, match="Profile"):
        write_speed_table(sample_cast(), tmp_path / "x.table")


# --- safety: existing files, atomic writes ---------------------------------------------


@pytest.mark.parametrize("fmt", ["netcdf", "netcdf4", "csv", "json", "table"])
def test_existing_file_kept_unless_overwrite(tmp_path, fmt):
    ds = sample_profile()
    path = tmp_path / "out.dat"
    path.write_text("precious\n")
    digest = sha(path)
    with pytest.raises(SeaprofileError, match=str(path)):
        write(ds, path, format=fmt)
    assert sha(path) == digest
    write(ds, path, format=fmt, overwrite=True)
    assert sha(path) != digest
    assert os.listdir(tmp_path) == ["out.dat"]  # no temporary files left


@pytest.mark.parametrize("version", [3, 4])
def test_failed_write_leaves_nothing(tmp_path, version):
    bad = sample_cast()
    bad["label"] = ("sample", np.array(["x"] * bad.sizes["sample"], dtype=object))
    with pytest.raises(SeaprofileError, match="label"):
        write_netcdf(bad, tmp_path / "bad.nc", version=version)
    assert os.listdir(tmp_path) == []


def test_dispatcher_errors(tmp_path):
    with pytest.raises(SeaprofileError, match="format"):
        write(sample_cast(), tmp_path / "c.xyz")
    with pytest.raises(SeaprofileError, match="format"):
        write(sample_cast(), tmp_path / "c.csv", format="excel")
    with pytest.raises(SeaprofileError, match="mix"):
        write_netcdf([sample_cast(), sample_profile()], tmp_path / "m.nc")
    with pytest.raises(SeaprofileError, match="directory"):
        write(sample_cast(), tmp_path / "missing_dir" / "c.csv")


@pytest.mark.parametrize("ext", ["csv", "nc", "nc4", "json"])
def test_round_trip_of_a_built_profile(tmp_path, ext):
    profile_module = pytest.importorskip("seaprofile.profile")
    p = np.linspace(0.5, 120.0, 240)
    cast = make_cast(
        pressure=p,
        temperature=15 - p / 50,
        salinity=35 + p / 1000 + 1e-3 * np.sin(p),
        latitude=40.0,
        longitude=3.0,
        time="2024-01-01T00:00",
    )
    prof = profile_module.build_profile(cast)
    back = read_profile(write(prof, tmp_path / f"built.{ext}"))
    assert_same(prof, back, check_attr_types=(ext != "csv"))
    for v in prof.data_vars:
        assert back[v].dtype == prof[v].dtype, v


# --- defects from the tracker ----------------------------------------------------------

REPO = Path(__file__).resolve().parents[2]


def run_python(code, *args, **kwargs):
    """Run ``code`` in a fresh interpreter with this checkout importable."""
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    return subprocess.run(
        [sys.executable, "-c", textwrap.dedent(code), *map(str, args)],
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
        **kwargs,
    )


def test_speed_table_suffix_is_our_own(tmp_path):
    assert FORMATS["table"][0] == ".speed.txt"
    assert ".svt" not in {e for exts in FORMATS.values() for e in exts}
    assert format_of("deep.speed.txt") == "table" and format_of("deep.txt") == "csv"
    assert format_of("deep.SPEED.TXT") == "table" and format_of(".speed.txt") == "csv"
    path = write(sample_profile(), tmp_path / "deep.speed.txt")
    assert path.read_text().splitlines()[0] == "0.000 1500.000"
    back = read_profile(path)  # the table reads back as a profile
    np.testing.assert_allclose(back["sound_speed"].values[:2], [1500.0, 1499.5])


def test_refuse_input_as_output(tmp_path):
    src = tmp_path / "cast.csv"
    src.write_text("pres,temp,sal\n1,2,3\n")
    (tmp_path / "sub").mkdir()
    (tmp_path / "alias.csv").symlink_to(src)
    os.link(src, tmp_path / "hard.csv")
    for out in (
        src,
        tmp_path / "sub" / ".." / "cast.csv",
        tmp_path / "alias.csv",
        tmp_path / "hard.csv",
    ):
        with pytest.raises(SeaprofileError, match="is the input file"):
            refuse_input_as_output([src], [out])
    refuse_input_as_output([src], [tmp_path / "cast.nc", tmp_path / "sub" / "cast.csv"])
    digest = sha(src)
    with pytest.raises(SeaprofileError, match="input"):
        write(sample_profile(), src, "csv", overwrite=True, protect=[src])
    assert sha(src) == digest


def test_times_outside_datetime64ns_are_refused_on_write(tmp_path):
    cast = sample_cast().assign_coords(time=((), np.datetime64("3000-01-01T00:00:00", "s")))
    for ext in ("nc", "nc4", "csv", "json"):
        with pytest.raises(SeaprofileError, match="outside the range"):
            write(cast, tmp_path / f"far.{ext}")
    assert os.listdir(tmp_path) == []
    with pytest.raises(SeaprofileError, match="outside the range"):
        make_cast(pressure=[1.0], time="3000-01-01")


def test_netcdf_lock_is_reentrant():
    with NETCDF_LOCK, NETCDF_LOCK:  # writers call readers' helpers and back
        pass


def test_threaded_netcdf_writes_and_reads(tmp_path):
    # without NETCDF_LOCK this crashed the interpreter (SIGSEGV) within a few runs,
    # hence a subprocess: a crash fails this test instead of killing the test session
    code = """
        import sys
        from concurrent.futures import ThreadPoolExecutor
        from pathlib import Path
        import numpy as np
        from seaprofile.batch import build_files
        from seaprofile.casts.model import make_cast
        from seaprofile.casts.read import read_casts
        from seaprofile.casts.write import write_netcdf

        out = Path(sys.argv[1])

        def cast(k):  # invented, synthetic
            p = np.linspace(1, 200, 400)
            return make_cast(pressure=p, temperature=12 - p / 40 + 0.01 * k,
                             salinity=34.5 + p / 1000, latitude=50.0, longitude=-5.0,
                             cast_name=f"c{k}")

        def job(k):  # classic netCDF-3 (no lock) and netCDF-4 (HDF5, locked) side by side
            path = write_netcdf([cast(2 * k), cast(2 * k + 1)], out / f"in{k}.nc",
                                version=3 + k % 2)
            got = read_casts(path)
            assert [c.attrs["cast_name"] for c in got] == [f"c{2 * k}", f"c{2 * k + 1}"]
            return str(path)

        with ThreadPoolExecutor(8) as ex:
            paths = list(ex.map(job, range(24)))
        res = build_files(paths, out_dir=out / "built", format="netcdf4", scheduler="threads")
        assert all(r.ok for r in res), [r.error for r in res if not r.ok]
        print(len(res))
    """
    done = run_python(code, tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["48"]
    built = sorted(os.listdir(tmp_path / "built"))
    assert built == sorted(f"c{k}.nc4" for k in range(48))  # no temporary files left
    assert len(read_casts(tmp_path / "in3.nc")) == 2


@pytest.mark.skipif(not hasattr(signal, "SIGTERM") or os.name != "posix", reason="POSIX")
def test_sigterm_during_a_write_leaves_no_temporary_file(tmp_path):
    code = """
        import signal, sys
        from pathlib import Path
        from seaprofile.casts.write import atomic_write

        def fill(tmp):
            Path(tmp).write_text("half a file")
            print("writing", flush=True)
            sys.stdin.readline()  # blocks until the parent has sent SIGTERM

        before = signal.getsignal(signal.SIGTERM)
        atomic_write(Path(sys.argv[1]) / "out.csv", False, fill)
    """
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    proc = subprocess.Popen(
        [sys.executable, "-c", textwrap.dedent(code), str(tmp_path)],
        env=env,
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert proc.stdout.readline().strip() == "writing"
        assert any(n.endswith(".tmp") for n in os.listdir(tmp_path))  # mid-write
        proc.send_signal(signal.SIGTERM)
        proc.wait(timeout=60)
    finally:
        proc.kill()
        proc.communicate()
    assert proc.returncode == -signal.SIGTERM  # ended by the signal, as without handler
    assert os.listdir(tmp_path) == []


def test_sigterm_handler_restored_and_previous_one_called(tmp_path):
    code = """
        import os, signal, sys
        from pathlib import Path
        from seaprofile.casts.write import atomic_write

        calls = []
        def mine(signum, frame):
            calls.append(signum)
        signal.signal(signal.SIGTERM, mine)
        atomic_write(Path(sys.argv[1]) / "a.txt", False, lambda t: Path(t).write_text("a"))
        assert signal.getsignal(signal.SIGTERM) is mine  # restored after a good write

        def fill(tmp):
            Path(tmp).write_text("half")
            os.kill(os.getpid(), signal.SIGTERM)
        try:
            atomic_write(Path(sys.argv[1]) / "b.txt", False, fill)
        except SystemExit as exc:
            print("exit", exc.code, calls == [signal.SIGTERM])
        assert signal.getsignal(signal.SIGTERM) is mine
    """
    done = run_python(code, tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["exit", str(128 + signal.SIGTERM), "True"]
    assert os.listdir(tmp_path) == ["a.txt"]


@pytest.mark.parametrize("fmt", ["netcdf", "csv"])
def test_two_writer_processes_into_one_folder(tmp_path, fmt):
    code = """
        import sys
        from pathlib import Path
        import numpy as np
        from seaprofile import SeaprofileError
        from seaprofile.casts.model import make_cast
        from seaprofile.casts.write import write

        out, who, fmt = Path(sys.argv[1]), sys.argv[2], sys.argv[3]
        ext = {"netcdf": ".nc", "csv": ".csv"}[fmt]
        p = np.linspace(1, 100, 2000)  # invented, synthetic
        cast = make_cast(pressure=p, temperature=10 - p / 50, salinity=35 + 0 * p,
                         cast_name=who)
        refused = 0
        for k in range(15):
            write(cast, out / f"shared{k % 3}{ext}", fmt, overwrite=True)  # both replace
            try:
                write(cast, out / f"first{k}{ext}", fmt)  # one of the two wins
            except SeaprofileError:
                refused += 1
        print(refused)
    """
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    procs = [
        subprocess.Popen(
            [sys.executable, "-c", textwrap.dedent(code), str(tmp_path), who, fmt],
            env=env,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for who in ("A", "B")
    ]
    outs = [p.communicate(timeout=300) for p in procs]
    assert [p.returncode for p in procs] == [0, 0], [o[1][-1500:] for o in outs]
    names = os.listdir(tmp_path)
    assert not [n for n in names if n.startswith(".") or n.endswith(".tmp")]
    assert sum(int(o[0]) for o in outs) == 15  # each "first" file written exactly once
    for name in names:  # every file whole, from one writer or the other
        cast = read_cast(tmp_path / name)
        assert cast.sizes["sample"] == 2000 and cast.attrs["cast_name"] in ("A", "B")


def test_own_netcdf_profile_refuses_a_mapping(tmp_path):
    path = write_netcdf(sample_profile(), tmp_path / "p.nc")
    with pytest.raises(SeaprofileError, match="without columns"):
        read_profile(path, columns="depth=depth,sound_speed=sound_speed")


# --- classic netCDF-3 and netCDF-4 -------------------------------------------------------
# The classic types are byte, char, short, int, float and double, a file starts "CDF" and
# a version byte (2: 64-bit offset): netCDF Users Guide, "The NetCDF Classic Format
# Specification" (Unidata). A netCDF-4 file is HDF5, whose superblock signature is
# "\x89HDF\r\n\x1a\n" (HDF5 File Format Specification, version 3.0, section II.A).

MAGIC = {3: b"CDF\x02", 4: b"\x89HDF\r\n\x1a\n"}


def without_source(ds, path):
    """The Dataset with the file read (``source_file``, the read step) named ``FILE``.

    The history line of a read carries the time of the read (to the second), which two
    reads can straddle: it is compared without its time stamp.
    """
    ds = ds.copy()
    ds.attrs.pop("source_file", None)
    for key in ("processing_steps", "history"):
        if key in ds.attrs:
            ds.attrs[key] = str(ds.attrs[key]).replace(str(path), "FILE")
    if "history" in ds.attrs:
        ds.attrs["history"] = [line.split(" ", 1)[1] for line in ds.attrs["history"].splitlines()]
    return ds


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_version_and_suffix(tmp_path, version):
    ext = {3: "nc", 4: "nc4"}[version]
    assert format_of(f"p.{ext}") == {3: "netcdf", 4: "netcdf4"}[version]
    by_suffix = write(sample_profile(), tmp_path / f"p.{ext}")
    by_keyword = write_netcdf(sample_profile(), tmp_path / "k.nc", version=version)
    for path in (by_suffix, by_keyword):
        assert path.read_bytes()[: len(MAGIC[version])] == MAGIC[version]
    for other in (".netcdf", ".cdf"):
        assert format_of(f"p{other}") == "netcdf"
    with pytest.raises(SeaprofileError, match="version must be 3"):
        write_netcdf(sample_profile(), tmp_path / "x.nc", version=2)
    assert sorted(os.listdir(tmp_path)) == sorted([by_suffix.name, "k.nc"])


def _collection():
    profs = [sample_profile("P1"), sample_profile()]
    profs[1]["sound_speed"].values[[0, 3]] = np.nan
    profs[1] = profs[1].drop_vars("samples_per_bin")  # padded in the collection
    return profs


def _casts():
    casts = [sample_cast("A"), sample_cast("B", 9, measured_sound_speed=np.full(9, 1501.0))]
    casts[1]["salinity"].values[:] = np.nan  # all NaN
    return casts


@pytest.mark.parametrize(
    ("make", "read"),
    [
        (sample_profile, read_profiles),
        (_collection, read_profiles),
        (_casts, read_casts),
        (xbt_cast, read_casts),
    ],
)
def test_classic_and_netcdf4_read_back_the_same_datasets(tmp_path, make, read):
    """Same dtypes, attributes, values, NaN positions and order from either file."""
    ds = make()
    (tmp_path / "3").mkdir()
    (tmp_path / "4").mkdir()
    classic = read(write_netcdf(ds, tmp_path / "3" / "f.nc"))
    four = read(write_netcdf(ds, tmp_path / "4" / "f.nc", version=4))
    assert len(classic) == len(four) == (len(ds) if isinstance(ds, list) else 1)
    for a, b in zip(classic, four):
        a, b = (
            without_source(a, tmp_path / "3" / "f.nc"),
            without_source(b, tmp_path / "4" / "f.nc"),
        )
        xr.testing.assert_identical(a, b)
        assert list(a.variables) == list(b.variables) and list(a.attrs) == list(b.attrs)
        for name in a.variables:
            assert a[name].dtype == b[name].dtype, name
            assert list(a[name].attrs) == list(b[name].attrs), name
            for key, value in a[name].attrs.items():  # values compared by assert_identical
                assert np.asarray(value).dtype == np.asarray(b[name].attrs[key]).dtype, key


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_integer_dtypes_come_back(tmp_path, version):
    prof = sample_profile()
    n = prof.sizes["depth"]
    wide = {
        "count64": np.arange(n, dtype=np.int64) * 100_000,
        "count_u8": np.array([0, 1, 128, 200, 255], dtype=np.uint8)[:n],
        "count_u16": np.array([0, 1, 40_000, 65_535, 7], dtype=np.uint16)[:n],
        "count_u32": np.array([0, 1, 2**31 - 1, 3, 7], dtype=np.uint32)[:n],
        "count16": np.array([-32768, 0, 1, 2, 32767], dtype=np.int16)[:n],
    }
    for name, values in wide.items():
        prof[name] = ("depth", values, {"long_name": f"invented {name}", "valid_min": values[0]})
    prof["flags_u8"] = (
        "depth",
        np.array([1, 1, 4, 9, 1], np.uint8),
        {"flag_values": np.array([1, 4, 9], np.uint8), "flag_meanings": "good bad missing"},
    )
    path = write_netcdf(prof, tmp_path / "ints.nc", version=version)
    back = read_profile(path)
    for name in [*wide, "flags_u8"]:
        assert back[name].dtype == prof[name].dtype, name
        np.testing.assert_array_equal(back[name].values, prof[name].values)
    for name in wide:
        assert back[name].attrs["long_name"] == f"invented {name}"
        assert back[name].attrs["valid_min"] == prof[name].attrs["valid_min"], name
    assert back["flags_u8"].attrs["flag_values"].dtype == np.uint8
    np.testing.assert_array_equal(back["flags_u8"].attrs["flag_values"], [1, 4, 9])
    with netCDF4.Dataset(path) as nc:  # what other readers see
        stored = {name: nc[name].dtype for name in [*wide, "flags_u8"]}
        if version == 3:
            assert nc["count_u32"].valid_min.dtype == np.int32
            assert nc["flags_u8"].flag_values.dtype == np.int16  # typed like the variable
    if version == 3:
        assert stored == {
            "count64": np.int32,
            "count_u8": np.int16,
            "count_u16": np.int32,
            "count_u32": np.int32,
            "count16": np.int16,
            "flags_u8": np.int16,
        }
    else:
        assert stored == {name: prof[name].dtype for name in stored}


@settings(max_examples=40, deadline=None)
@given(
    st.sampled_from([np.int64, np.uint64, np.uint32, np.uint16, np.uint8, np.int16, np.int8]),
    st.lists(st.integers(-(2**31), 2**31 - 1), min_size=5, max_size=5),
)
def test_classic_netcdf_keeps_every_integer_that_fits(dtype, values):
    # any value of the dtype inside the int32 range (what netCDF-3's int holds)
    lo, hi = max(np.iinfo(dtype).min, -(2**31)), min(np.iinfo(dtype).max, 2**31 - 1)
    a = np.array([lo + (v - lo) % (hi - lo + 1) for v in values], dtype=dtype)
    prof = sample_profile().assign(count=("depth", a))
    with tempfile.TemporaryDirectory() as d:
        back = read_profile(write_netcdf(prof, Path(d) / "c.nc"))
    assert back["count"].dtype == a.dtype
    np.testing.assert_array_equal(back["count"].values, a)


def test_classic_netcdf_dtype_that_does_not_hold_the_values_is_refused(tmp_path):
    prof = sample_profile().assign(count=("depth", np.arange(5, dtype=np.uint8)))
    path = write_netcdf(prof, tmp_path / "d.nc")  # count stored as int16, listed as uint8
    with netCDF4.Dataset(path, "a") as nc:
        nc["count"][:] = [0, 1, 300, 3, -4]  # an edited file: not uint8 any more
    with pytest.raises(InputFileError, match=r"'count' the dtype uint8"):
        read_profile(path)


def test_classic_netcdf_refuses_integers_beyond_int32_by_name(tmp_path):
    prof = sample_profile().assign(ticks=("depth", np.arange(5, dtype=np.int64) + 2**31))
    with pytest.raises(SeaprofileError, match=r"variable 'ticks'.*int32.*version=4"):
        write_netcdf(prof, tmp_path / "t.nc")
    prof2 = sample_profile().assign_attrs(huge=np.int64(2**60))
    with pytest.raises(SeaprofileError, match=r"global attribute 'huge'.*version=4"):
        write_netcdf(prof2, tmp_path / "t.nc")
    assert os.listdir(tmp_path) == []  # nothing left behind
    back = read_profile(write_netcdf(prof, tmp_path / "t.nc4", version=4))  # netCDF-4 holds it
    np.testing.assert_array_equal(back["ticks"].values, prof["ticks"].values)


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_attribute_values(tmp_path, version):
    # invented names with letters beyond ASCII (synthetic)
    cast = sample_cast("Søren Ærø-7")
    cast.attrs.update(
        vessel="RV Æbeløs Tern",
        note="",
        operator="Ødegård & Øster",
        checked=True,
        count=np.int64(12),
        big=np.int64(2**40),
        spread=float("nan"),
        ceiling=float("-inf"),
        ratio=0.1,
    )
    cast["temperature"].attrs.update(comment="målt på dæk", bin_count=np.int64(3))
    cast["temperature"].attrs["_extra_blank"] = ""
    path = write_netcdf(cast, tmp_path / "a.nc", version=version)
    back = read_cast(path)
    assert back["profile_id"].item() == "Søren Ærø-7"
    assert back.attrs["cast_name"] == "Søren Ærø-7"
    assert back.attrs["vessel"] == "RV Æbeløs Tern"
    assert back.attrs["operator"] == "Ødegård & Øster"
    with netCDF4.Dataset(path) as nc:
        g = {k: nc.getncattr(k) for k in nc.ncattrs()}
        t = nc["temperature"]
        assert g["vessel"] == "RV Æbeløs Tern" and g["note"] == ""
        assert g["checked"] == "true"  # booleans as text, as before
        assert g["count"] == 12 and g["ratio"] == 0.1 and np.asarray(g["ratio"]).dtype == np.float64
        assert np.isnan(g["spread"]) and g["ceiling"] == -np.inf
        assert g["big"] == 2**40
        if version == 3:
            assert np.asarray(g["count"]).dtype == np.int32  # int64 fits int32
            assert np.asarray(g["big"]).dtype == np.float64  # does not: float64, exact
        assert (
            t.comment == "målt på dæk"
            and t.getncattr("bin_count") == 3
            and t.getncattr("_extra_blank") == ""
        )
        assert nc["profile_id"][:].tolist() == ["Søren Ærø-7"]  # UTF-8 chars, as text


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_names_that_clash_with_the_classic_writer(tmp_path, version):
    # attribute names that are also fields of scipy's netcdf_file / netcdf_variable
    prof = sample_profile().assign_attrs(mode="towed", variables="three", dimensions="one")
    prof["sound_speed"].attrs.update(data="measured", dimensions="depth", shape="smooth")
    back = read_profile(write_netcdf(prof, tmp_path / "n.nc", version=version))
    assert (back.attrs["mode"], back.attrs["variables"]) == ("towed", "three")
    assert back["sound_speed"].attrs["data"] == "measured"
    assert back["sound_speed"].attrs["shape"] == "smooth"
    np.testing.assert_array_equal(back["sound_speed"].values, prof["sound_speed"].values)


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_non_ascii_attribute_names(tmp_path, version):
    prof = sample_profile()
    prof.attrs["målested"] = "Ærø Banke (invented)"
    back = read_profile(write_netcdf(prof, tmp_path / "u.nc", version=version))
    assert back.attrs["målested"] == "Ærø Banke (invented)"
    assert (tmp_path / "u.nc").read_bytes()[:4] == MAGIC[version][:4]


@pytest.mark.parametrize("version", [3, 4])
def test_netcdf_all_nan_variable_and_empty_profile(tmp_path, version):
    prof = sample_profile()
    prof["temperature"].values[:] = np.nan
    back = read_profile(write_netcdf(prof, tmp_path / "nan.nc", version=version))
    assert np.isnan(back["temperature"].values).all() and back["temperature"].dtype == np.float64
    empty = sample_profile().isel(depth=slice(0, 0))
    for item in (empty, [sample_profile("P1"), empty]):
        path = write_netcdf(item, tmp_path / "empty.nc", version=version, overwrite=True)
        assert path.read_bytes()[:4] == MAGIC[version][:4]
        got = read_profiles(path)
        assert got[-1].sizes["depth"] == 0
        assert set(got[-1].data_vars) == set(empty.data_vars)
        assert got[-1]["samples_per_bin"].dtype == np.int32
