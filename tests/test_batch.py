"""Batches of casts: a bad file never stops the rest; outputs written; summary rows."""

from pathlib import Path

import numpy as np
import pytest

from seaprofile.batch import build_files, flags_by_test, load_profile, summary_row
from seaprofile.casts.write import write

DEMO = Path(__file__).resolve().parents[1] / "demo_casts"


def _good_and_bad():
    return [DEMO / "shelf_summer_ctd.csv", DEMO / "broken" / "bad_number.csv",
            DEMO / "shelf_winter_ctd.csv"]


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
    assert (r.profile["sound_speed_qc"].values[depth > r.profile.attrs["cast_max_depth"]] == 8).all()


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
            np.testing.assert_array_equal(a.profile["sound_speed"].values,
                                          b.profile["sound_speed"].values)


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
