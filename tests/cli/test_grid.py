"""``seaprofile grid``: the file it writes holds exactly what the API computes."""

import numpy as np
import pytest
import xarray as xr
from _cli_helpers import DEMO, one_line_error

from seaprofile.cli import main
from seaprofile.gridded import layer_maps, sound_speed_field
from seaprofile.layers import sonic_layer_depth
from seaprofile.seawater.soundspeed import sound_speed

GRID = DEMO / "grid" / "synthetic_grid.nc"


def test_grid_file_equals_the_api_and_the_point_functions(tmp_path, capsys):
    out = tmp_path / "maps.nc"
    assert main(["grid", str(GRID), "--out", str(out), "--chunks", "latitude=5"]) == 0
    assert "Caution" in capsys.readouterr().out
    field = xr.open_dataset(GRID).load()
    with xr.open_dataset(out) as got:
        want = layer_maps(field)
        for name in want.data_vars:
            np.testing.assert_array_equal(got[name].values, want[name].values)  # exact
        np.testing.assert_array_equal(
            got["sound_speed"].values, sound_speed_field(field)["sound_speed"].values
        )
        # one column through the point functions (numpy, no grid code): same numbers
        col = field.isel(latitude=3, longitude=7)
        c = sound_speed(
            col["temperature"].values,
            col["salinity"].values,
            _pressure(col),
        )
        np.testing.assert_array_equal(got["sound_speed"].isel(latitude=3, longitude=7), c)
        sld, _ = sonic_layer_depth(c, col["depth"].values)
        assert float(got["sonic_layer_depth"].isel(latitude=3, longitude=7)) == float(sld)


def _pressure(col):
    from seaprofile.seawater.depth import pressure_from_depth

    return pressure_from_depth(col["depth"].values, float(col["latitude"]))


def test_vertical_chunk_is_made_whole_and_said(tmp_path, capsys):
    assert main(["grid", str(GRID), "--out", str(tmp_path / "a.nc"), "--chunks", "depth=10"]) == 0
    assert "kept in one chunk" in capsys.readouterr().err


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--names", "temperature=TT"], "--names temperature"),
        (["--names", "colour=TT"], "unknown role"),
        (["--chunks", "lat=5"], "no dimension lat"),
        (["--chunks", "latitude=x"], "whole number"),
        (["--scheduler", "tcp://127.0.0.1:9"], "cannot reach"),
        (["--plot", "x.png", "--map-variable", "nope"], "--map-variable"),
    ],
)
def test_errors_are_one_line(tmp_path, capsys, monkeypatch, extra, words):
    monkeypatch.chdir(tmp_path)
    assert main(["grid", str(GRID), "--out", "o.nc", *extra]) == 2
    assert words in one_line_error(capsys)


def test_missing_input_is_one_line(tmp_path, capsys):
    assert main(["grid", str(tmp_path / "none.nc"), "--out", str(tmp_path / "o.nc")]) == 2
    assert "no such file" in one_line_error(capsys)


def test_bathymetry_adds_depth_excess(tmp_path):
    field = xr.open_dataset(GRID)
    bottom = xr.full_like(field["temperature"].isel(depth=0, drop=True), 5000.0)
    bottom.attrs = {"units": "m", "standard_name": "sea_floor_depth_below_sea_surface"}
    bottom.to_dataset(name="elevation_depth").to_netcdf(tmp_path / "b.nc")
    out = tmp_path / "o.nc"
    assert main(["grid", str(GRID), "--out", str(out), "--bathymetry", str(tmp_path / "b.nc")]) == 0
    with xr.open_dataset(out) as got:
        assert "depth_excess" in got


def test_a_distributed_cluster_gives_the_local_numbers(tmp_path):
    distributed = pytest.importorskip("distributed")
    local, remote = tmp_path / "local.nc", tmp_path / "remote.nc"
    assert main(["grid", str(GRID), "--out", str(local), "--quiet"]) == 0
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=2, processes=False, dashboard_address=None
    ) as cluster:
        args = ["--scheduler", cluster.scheduler_address, "--chunks", "latitude=4"]
        assert main(["grid", str(GRID), "--out", str(remote), *args]) == 0
    with xr.open_dataset(local) as a, xr.open_dataset(remote) as b:
        for name in a.data_vars:
            np.testing.assert_array_equal(a[name].values, b[name].values)
