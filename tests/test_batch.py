"""Batches of casts: a bad file never stops the rest; outputs written; summary rows."""

from pathlib import Path

import numpy as np
import pytest

from seaprofile.batch import build_files, flags_by_test, load_profile, summary_row
from seaprofile.casts.write import write

DEMO = Path(__file__).resolve().parents[1] / "demo_casts"


def _good_and_bad():
    return [
        DEMO / "shelf_summer_ctd.csv",
        DEMO / "broken" / "bad_number.csv",
        DEMO / "shelf_winter_ctd.csv",
    ]


def test_bad_file_reported_and_others_built(tmp_path):
    results = build_files(_good_and_bad(), out_dir=tmp_path, format="netcdf")
    assert [r.ok for r in results] == [True, False, True]
    bad = results[1]
    # the demo's broken file: line 41, column 2 (see demo_casts/README.md)
    assert "bad_number.csv" in bad.error and "line 41" in bad.error and "column 2" in bad.error
    assert sorted(p.name for p in tmp_path.iterdir()) == ["VS31-S04.nc", "VS31-W02.nc"]
    rows = [summary_row(r) for r in results]
    assert rows[1]["status"] == "FAILED"
    assert rows[0]["status"] == "ok" and 1500 < rows[0]["surface_speed"] < 1530


def test_inputs_untouched_and_existing_outputs_kept(tmp_path):
    src = DEMO / "shelf_summer_ctd.csv"
    before = src.read_bytes()
    first = build_files([src], out_dir=tmp_path)
    assert first[0].ok
    out = Path(first[0].written[0])
    stamp = out.read_bytes()
    again = build_files([src], out_dir=tmp_path)
    assert not again[0].ok and "exists" in again[0].error
    assert out.read_bytes() == stamp
    assert src.read_bytes() == before
    assert build_files([src], out_dir=tmp_path, overwrite=True)[0].ok


def test_extend_to_each_casts_bottom():
    from seaprofile.profile import LongExtensionWarning

    with pytest.warns(LongExtensionWarning, match="VS31-X07"):
        (r,) = build_files([DEMO / "xbt_drop.csv"], extend_to="bottom")
    depth = r.profile["depth"].values
    assert depth.max() == pytest.approx(3350.0)
    assert (
        r.profile["sound_speed_qc"].values[depth > r.profile.attrs["cast_max_depth"]] == 8
    ).all()


def test_dead_salinity_sensor_gives_flagged_profile_not_a_crash():
    (r,) = build_files([DEMO / "messy" / "stuck_salinity_ctd.csv"], extend_to="bottom")
    assert r.ok and r.unusable
    assert (r.profile["salinity_qc"].values >= 3).all()
    assert flags_by_test(r.profile)["stuck_value"] > 0
    assert summary_row(r)["status"] == "no usable sound speed"


def test_messy_cast_flags_counted_by_test():
    (r,) = build_files([DEMO / "messy" / "messy_shelf_ctd.csv"])
    flags = flags_by_test(r.profile)
    # demo_casts/README.md lists an impossible temperature and a density inversion
    assert flags.get("global_range", 0) >= 1
    assert flags.get("density_inversion", 0) >= 1


def test_dask_threads_match_sequential():
    pytest.importorskip("dask")
    paths = _good_and_bad()
    seq = build_files(paths)
    par = build_files(paths, scheduler="threads")
    assert [r.ok for r in seq] == [r.ok for r in par]
    for a, b in zip(seq, par):
        if a.ok:
            np.testing.assert_array_equal(
                a.profile["sound_speed"].values, b.profile["sound_speed"].values
            )


def test_load_profile_from_raw_cast_and_built_file(tmp_path):
    raw = load_profile(DEMO / "shelf_summer_ctd.csv")
    path = tmp_path / "p.nc"
    write(raw, path)
    again = load_profile(path)
    np.testing.assert_allclose(again["sound_speed"].values, raw["sound_speed"].values)


def test_two_casts_of_one_name_never_overwrite_each_other(tmp_path):
    src = DEMO / "shelf_summer_ctd.csv"
    copy = tmp_path / "again.csv"
    copy.write_bytes(src.read_bytes())
    out = tmp_path / "out"
    results = build_files([src, copy], out_dir=out, overwrite=True)
    assert results[0].ok and not results[1].ok
    assert "already written" in results[1].error and "VS31-S04" in results[1].error


def test_outputs_are_ordinary_files(tmp_path):
    import os
    import stat

    (r,) = build_files([DEMO / "shelf_summer_ctd.csv"], out_dir=tmp_path)
    mode = stat.S_IMODE(os.stat(r.written[0]).st_mode)
    umask = os.umask(0)
    os.umask(umask)
    assert mode == 0o666 & ~umask


def test_bad_options_raise_once_before_any_file(tmp_path):
    from seaprofile.io import ArgumentError

    for kwargs, name in (
        ({"bin_size": -1.0}, "bin_size"),
        ({"columns": "x"}, "columns"),
        ({"extend_to": -5.0}, "extend_to"),
        ({"scheduler": "bogus"}, "scheduler"),
        ({"latitude": 100.0}, "latitude"),
        ({"format": "docx"}, "format"),
    ):
        with pytest.raises(ArgumentError) as err:
            build_files(_good_and_bad(), out_dir=tmp_path / "out", **kwargs)
        assert err.value.argument == name
    assert not (tmp_path / "out").exists()


def test_output_never_replaces_an_input(tmp_path):
    src = tmp_path / "VS31-S04.csv"  # named like its cast, so the CSV output would be itself
    src.write_bytes((DEMO / "shelf_summer_ctd.csv").read_bytes())
    before = src.read_bytes()
    (r,) = build_files([src], out_dir=tmp_path, format="csv", overwrite=True)
    assert not r.ok and "is an input" in r.error
    assert src.read_bytes() == before
    other = tmp_path / "other.nc"
    other.write_text("a reference file")
    (r,) = build_files(
        [DEMO / "shelf_summer_ctd.csv"],
        out_dir=tmp_path,
        overwrite=True,
        protect=[tmp_path / "VS31-S04.nc"],
    )
    assert not r.ok and "is an input" in r.error


def test_unexpected_failure_of_one_file_never_stops_the_rest(monkeypatch):
    import seaprofile.batch as batch

    real = batch.build_profile

    def flaky(cast, **options):
        if cast.attrs.get("cast_name") == "VS31-S04":
            raise RuntimeError("an invented crash inside the library")
        return real(cast, **options)

    monkeypatch.setattr(batch, "build_profile", flaky)
    pytest.importorskip("dask")
    for scheduler in (None, "threads"):
        results = build_files(_good_and_bad(), scheduler=scheduler)
        assert [r.ok for r in results] == [False, False, True]
        assert "shelf_summer_ctd.csv" in results[0].error
        assert "invented crash" in results[0].error


def test_threads_with_netcdf_inputs_and_outputs(tmp_path):
    pytest.importorskip("dask")
    casts = sorted((DEMO / "section").glob("*.csv"))
    first = build_files(casts, out_dir=tmp_path / "a", format="netcdf")
    assert all(r.ok for r in first)
    # netCDF in and out from several threads: HDF5 is entered by one thread at a time
    written = [r.written[0] for r in first]
    from seaprofile.casts.read import read_cast

    raw = tmp_path / "raw"
    raw.mkdir()
    for k, path in enumerate(casts):
        write(read_cast(path), raw / f"cast_{k}.nc")
    again = build_files(sorted(raw.iterdir()), out_dir=tmp_path / "b", scheduler="threads")
    assert all(r.ok for r in again), [r.error for r in again if not r.ok]
    for a, b in zip(written, (r.written[0] for r in again)):
        np.testing.assert_array_equal(
            load_profile(a)["sound_speed"].values, load_profile(b)["sound_speed"].values
        )


def test_assumptions_read_from_attributes():
    import xarray as xr

    from seaprofile.batch import assumptions

    p = xr.Dataset(
        attrs={
            "assumed_salinity": 35.0,
            "fall_rate": "hanawa1995",
            "extension": "constant temperature and salinity to 3000 m",
        }
    )
    assert assumptions(p) == [
        "salinity assumed 35",
        "fall rate hanawa1995",
        "extended: constant temperature and salinity to 3000 m",
    ]
    assert assumptions(xr.Dataset()) == []
    # a Profile that carries its own one-line summary is taken at its word
    own = xr.Dataset(
        attrs={"assumptions": "salinity assumed constant 35; fall rate x", "fall_rate": "ignored"}
    )
    assert assumptions(own) == ["salinity assumed constant 35", "fall rate x"]
    assert assumptions(xr.Dataset(attrs={"assumptions": "none", "fall_rate": "y"})) == []
    shaped = xr.Dataset(
        attrs={
            "extension_method": "the reference's water",
            "cast_max_depth": 759.0,
            "bottom_depth": 3000.0,
            "salinity_replaced": "from the reference",
        }
    )
    assert assumptions(shaped) == [
        "salinity replaced: from the reference",
        "extended from 759 m to 3000 m with the reference's water",
    ]


def test_half_known_position_still_diagnosed():
    from seaprofile.layers import describe

    p = load_profile(DEMO / "shelf_summer_ctd.csv")
    half = p.assign_coords(longitude=np.nan)
    d = describe(half)
    assert d["mixed_layer_depth_density"] is not None
    assert float(half["latitude"]) == float(p["latitude"])  # the input is not modified


def test_speed_only_errors_are_not_all_blamed_on_the_reference(tmp_path):
    # a speed-only cast with no position, extended: the depth-to-pressure conversion below
    # it needs a latitude, and the error says so (the old retry called every error of a
    # speed-only extension a missing --reference)
    from seaprofile.casts.model import make_cast

    z = np.arange(1.0, 100.0)
    cast = make_cast(
        depth=z, measured_sound_speed=1500.0 + 0.016 * z, instrument="svp", cast_name="invented-svp"
    )
    path = tmp_path / "svp.csv"
    write(cast, path, format="csv")
    (res,) = build_files([path], extend_to=500.0)
    assert not res.ok and res.error_argument == "latitude"
    (res,) = build_files([path], extend_to=500.0, latitude=30.0)
    assert not res.ok and res.error_argument == "reference"


def _same_name_casts(tmp_path):
    """Two synthetic demo casts renamed to one cast name, in two files (a.csv, b.csv)."""
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    a.write_text(
        (DEMO / "shelf_summer_ctd.csv")
        .read_text()
        .replace("# cast_name: VS31-S04", "# cast_name: TWIN")
    )
    b.write_text(
        (DEMO / "shelf_winter_ctd.csv")
        .read_text()
        .replace("# cast_name: VS31-W02", "# cast_name: TWIN")
    )
    assert "TWIN" in a.read_text() and "TWIN" in b.read_text()
    return a, b


@pytest.mark.parametrize("overwrite", [False, True])
def test_dask_name_clash_keeps_the_first_cast_and_fails_the_second(tmp_path, overwrite):
    pytest.importorskip("dask")
    from seaprofile.casts.read import read_profile

    a, b = _same_name_casts(tmp_path)
    out = tmp_path / "out"
    for _ in range(2 if overwrite else 1):  # with --overwrite a second run changes nothing
        results = build_files([a, b], out_dir=out, overwrite=overwrite, scheduler="threads")
        assert results[0].ok and results[0].written == [str(out / "TWIN.nc")]
        assert not results[1].ok and results[1].written == []
        assert "already written" in results[1].error and str(b) in results[1].error
        # the file holds the first cast, as a sequential batch leaves it; no staged leftovers
        assert Path(read_profile(out / "TWIN.nc").attrs["source_file"]).name == "a.csv"
        assert sorted(p.name for p in out.iterdir()) == ["TWIN.nc"]


def test_dask_existing_output_without_overwrite_is_that_casts_error(tmp_path):
    pytest.importorskip("dask")
    a, _ = _same_name_casts(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    (out / "TWIN.nc").write_bytes(b"kept")
    (res,) = build_files([a], out_dir=out, scheduler="threads")
    assert not res.ok and "exists" in res.error
    assert (out / "TWIN.nc").read_bytes() == b"kept"
    assert sorted(p.name for p in out.iterdir()) == ["TWIN.nc"]


def test_directories_stand_for_their_cast_files_in_name_order(tmp_path):
    folder = tmp_path / "casts"
    folder.mkdir()
    for name in ("b_winter.csv", "a_summer.csv"):
        src = "shelf_winter_ctd.csv" if "winter" in name else "shelf_summer_ctd.csv"
        (folder / name).write_bytes((DEMO / src).read_bytes())
    (folder / "README.md").write_text("notes, not a cast")
    (folder / "sub").mkdir()
    results = build_files([folder])
    assert [Path(r.path).name for r in results] == ["a_summer.csv", "b_winter.csv"]
    assert all(r.ok for r in results)


def test_directory_without_cast_files_is_one_clear_error(tmp_path):
    empty = tmp_path / "notes"
    empty.mkdir()
    (empty / "README.md").write_text("no casts here")
    results = build_files([empty, DEMO / "shelf_summer_ctd.csv"])
    assert not results[0].ok and results[1].ok
    assert str(empty) in results[0].error and "no cast or profile files" in results[0].error


def test_directory_holds_classic_and_netcdf4_casts(tmp_path):
    # a folder of casts written both ways (.nc classic netCDF-3, .nc4 netCDF-4) is built
    # whole, and the two give the same profile
    from seaprofile.casts.read import read_cast

    folder = tmp_path / "casts"
    folder.mkdir()
    cast = read_cast(DEMO / "shelf_summer_ctd.csv")
    write(cast, folder / "a.nc", "netcdf")
    write(cast, folder / "b.nc4", "netcdf4")
    results = build_files([folder])
    assert [Path(r.path).name for r in results] == ["a.nc", "b.nc4"]
    assert all(r.ok for r in results)
    a, b = (r.profile for r in results)
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values)


@pytest.mark.parametrize("scheduler", [None, "threads"])
def test_without_casts_the_profiles_and_summary_are_the_same(tmp_path, scheduler):
    # keep_casts=False (what `seaprofile build` uses, so dask workers send no raw casts
    # back): the same profiles, written files and summary rows; only the Cast is left out
    paths = _good_and_bad()
    full = build_files(paths, out_dir=tmp_path / "a", scheduler=scheduler)
    light = build_files(paths, out_dir=tmp_path / "b", scheduler=scheduler, keep_casts=False)
    assert [r.ok for r in full] == [r.ok for r in light]
    for f, g in zip(full, light):
        assert g.cast is None
        assert summary_row(f) == summary_row(g)
        assert [Path(w).name for w in f.written] == [Path(w).name for w in g.written]
        if f.ok:
            assert f.cast is not None and g.cast_name == f.cast.attrs["cast_name"]
            assert g.samples == f.cast.sizes["sample"]
            for name in f.profile.data_vars:
                np.testing.assert_array_equal(f.profile[name].values, g.profile[name].values)
