"""Gridded fields: sound speed and layer maps equal the point functions column by column.

The reference is seaprofile's own point functions on single numpy columns (themselves
checked against published values in tests/seawater and tests/layers): the grid path must
give the same numbers bit for bit, lazily, on a chunked grid and on a dask cluster.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from seaprofile import SeaprofileError, gridded, layers
from seaprofile.seawater.depth import depth_from_pressure
from seaprofile.seawater.soundspeed import sound_speed

MAP_NAMES = (
    "surface_sound_speed",
    "mixed_layer_depth",
    "sonic_layer_depth",
    "duct_cutoff_frequency",
    "channel_axis_depth",
    "channel_axis_speed",
    "critical_depth",
)


def _column_maps(t, s, z, lat, lon):
    """The layer diagnostics of one numpy column by the point functions."""
    c = sound_speed(t, s, depth=z, latitude=lat, longitude=lon)
    sld, sld_speed = layers.sonic_layer_depth(c, z)
    ch = layers.sound_channels(c, z, below=sld)
    return c, {
        "surface_sound_speed": c[0],
        "mixed_layer_depth": layers.mixed_layer_depth(t, z),
        "sonic_layer_depth": sld,
        "duct_cutoff_frequency": layers.duct_cutoff_frequency(sld, sld_speed),
        "channel_axis_depth": ch["axis_depth"],
        "channel_axis_speed": ch["axis_speed"],
        "critical_depth": layers.critical_depth(c, z, sld_speed, ch["axis_depth"]),
    }


def _check_columns(ds, speed, maps):
    z = ds["depth"].values
    for i, lat in enumerate(ds["latitude"].values):
        for j, lon in enumerate(ds["longitude"].values):
            col = ds.isel(latitude=i, longitude=j)
            c, expected = _column_maps(
                col["temperature"].values, col["salinity"].values, z, lat, lon
            )
            np.testing.assert_array_equal(speed.isel(latitude=i, longitude=j).values, c)
            for name in MAP_NAMES:
                np.testing.assert_array_equal(
                    maps[name].isel(latitude=i, longitude=j).values, expected[name], name
                )


def test_grid_equals_point_functions_bit_for_bit():
    ds = gridded.synthetic_field(nlat=2, nlon=3, ndepth=50)
    speed = gridded.sound_speed_field(ds)["sound_speed"]
    maps = gridded.layer_maps(ds)
    assert set(MAP_NAMES) <= set(maps.data_vars)
    assert np.isfinite(maps["channel_axis_depth"]).all()
    assert np.isfinite(maps["critical_depth"]).any()
    _check_columns(ds, speed, maps)


def test_attributes_and_provenance():
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=20)
    out = gridded.sound_speed_field(ds, equation="mackenzie1981")
    c = out["sound_speed"]
    assert c.dims == ds["temperature"].dims
    assert c.attrs["standard_name"] == "speed_of_sound_in_sea_water"
    assert c.attrs["units"] == "m s-1"
    assert c.attrs["equation"] == "mackenzie1981"
    assert "seaprofile_version" in out.attrs and "caution" in out.attrs
    assert "synthetic" in out.attrs["comment"]
    assert "mixed_layer_depth" not in gridded.layer_maps(out)  # no temperature given
    maps = gridded.layer_maps(out.assign(temperature=ds["temperature"]))
    assert maps["mixed_layer_depth"].attrs["standard_name"] == "ocean_mixed_layer_thickness"
    assert maps["duct_cutoff_frequency"].attrs["units"] == "Hz"
    assert maps.attrs["product"] == "layer_maps"


def test_lazy_until_compute(count_tasks):
    ds = gridded.synthetic_field(nlat=2, nlon=4, ndepth=30, ntime=2, chunks={"longitude": 2})
    bathymetry = xr.DataArray(
        np.full((2, 4), 3900.0), coords={"latitude": ds.latitude, "longitude": ds.longitude}
    ).chunk({"longitude": 2})
    with count_tasks() as counter:
        speed = gridded.sound_speed_field(ds)
        maps = gridded.layer_maps(
            speed.assign(temperature=ds["temperature"]), bathymetry=bathymetry
        )
    assert counter.tasks == 0
    assert maps["depth_excess"].chunks is not None
    eager = gridded.layer_maps(ds.compute(), bathymetry=bathymetry.compute())
    computed = maps.compute()
    for name in (*MAP_NAMES, "depth_excess"):
        np.testing.assert_array_equal(computed[name].values, eager[name].values, name)
    assert computed["depth_excess"].dims == ("time", "latitude", "longitude")


def test_chunked_vertical_refused_with_the_rechunk():
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=20, chunks={"depth": 5})
    speed = gridded.sound_speed_field(ds)  # point-wise: any chunks are fine
    assert speed["sound_speed"].chunks is not None
    with pytest.raises(SeaprofileError, match=r"'depth'.*chunk\(\{'depth': -1\}\)"):
        gridded.layer_maps(ds)
    maps = gridded.layer_maps(ds.chunk({"depth": -1})).compute()
    assert np.isfinite(maps["sonic_layer_depth"]).all()


def test_open_field_makes_the_vertical_one_chunk_and_round_trips(tmp_path):
    ds = gridded.synthetic_field(nlat=2, nlon=3, ndepth=20)
    path = gridded.write_field(ds, tmp_path / "field.nc")
    opened = gridded.open_field(path, chunks={"depth": 4, "latitude": 1})
    assert len(opened.chunksizes["depth"]) == 1
    assert opened.attrs["product"] == "gridded_field"
    maps = gridded.layer_maps(opened)
    out = gridded.write_field(maps, tmp_path / "maps.nc")
    back = xr.open_dataset(out)
    eager = gridded.layer_maps(ds)
    for name in MAP_NAMES:
        np.testing.assert_array_equal(back[name].values, eager[name].values, name)
    back.close()
    with pytest.raises(SeaprofileError):
        gridded.write_field(maps, out)  # exists, no overwrite
    with pytest.raises(SeaprofileError, match="path"):
        gridded.open_field(tmp_path / "missing.nc")


def test_names_mapping_and_pressure_vertical():
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=25)
    plain = ds.rename(temperature="TEMP", salinity="PSAL", depth="lev", latitude="y")
    for v in plain.variables.values():
        v.attrs = {}
    with pytest.raises(SeaprofileError, match=r"no variable found for salinity.*names="):
        gridded.sound_speed_field(plain)
    names = {"temperature": "TEMP", "salinity": "PSAL", "vertical": "lev", "latitude": "y"}
    with pytest.raises(SeaprofileError, match="vertical coordinate 'lev'"):
        gridded.sound_speed_field(plain, names=names)  # no units: depth or pressure?
    plain["lev"].attrs["units"] = "m"
    got = gridded.sound_speed_field(plain, names=names)["sound_speed"]
    want = gridded.sound_speed_field(ds)["sound_speed"]
    np.testing.assert_array_equal(got.values, want.values)
    # the same field on a sea-pressure vertical (axis Z, units dbar)
    p = ds.rename(depth="pressure").assign_coords(
        pressure=("pressure", ds["depth"].values, {"axis": "Z", "units": "dbar"})
    )
    maps = gridded.layer_maps(p).compute()
    lat = float(p.latitude[1])
    z = depth_from_pressure(p["pressure"].values, lat)
    col = p.isel(latitude=1, longitude=0)
    c = sound_speed(col.temperature.values, col.salinity.values, pressure=col.pressure.values)
    np.testing.assert_array_equal(
        maps["sonic_layer_depth"].isel(latitude=1, longitude=0).values,
        layers.sonic_layer_depth(c, z)[0],
    )


@pytest.mark.parametrize(
    "call, match",
    [
        (lambda ds: gridded.sound_speed_field(ds["temperature"]), "ds must be"),
        (lambda ds: gridded.sound_speed_field(ds, names={"colour": "x"}), "names: unknown role"),
        (lambda ds: gridded.sound_speed_field(ds, names={"salinity": "x"}), r"names\['salinity'\]"),
        (lambda ds: gridded.sound_speed_field(ds, equation="nope"), "equation"),
        (lambda ds: gridded.layer_maps(3.0), "ds_or_sound_speed"),
        (lambda ds: gridded.layer_maps(ds, bathymetry=np.ones((2, 2))), "bathymetry"),
        (lambda ds: gridded.synthetic_field(nlat=0), "nlat"),
        (lambda ds: gridded.write_field(ds["temperature"], "x.nc"), "ds must be"),
    ],
)
def test_bad_input_names_the_argument(call, match):
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=10)
    with pytest.raises(SeaprofileError, match=match):
        call(ds)


def test_bad_latitude_refused():
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=10)
    ds = ds.assign_coords(latitude=("latitude", [10.0, 95.0], ds.latitude.attrs))
    with pytest.raises(SeaprofileError, match="latitude"):
        gridded.sound_speed_field(ds)


def test_local_cluster_gives_the_numpy_numbers():
    distributed = pytest.importorskip("dask.distributed")
    ds = gridded.synthetic_field(nlat=2, nlon=4, ndepth=30, chunks={"longitude": 2})
    eager = gridded.layer_maps(ds.compute())
    # processes=False: in-process transport only, no network port; closed by the with
    with (
        distributed.LocalCluster(
            n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        speed = gridded.sound_speed_field(ds)
        maps = gridded.layer_maps(ds)
        c, m = client.compute([speed, maps], sync=True)
    np.testing.assert_array_equal(
        c["sound_speed"].values, gridded.sound_speed_field(ds.compute())["sound_speed"].values
    )
    for name in MAP_NAMES:
        np.testing.assert_array_equal(m[name].values, eager[name].values, name)


def test_zarr_round_trip(tmp_path):
    pytest.importorskip("zarr")
    ds = gridded.synthetic_field(nlat=2, nlon=2, ndepth=10)
    path = gridded.write_field(ds, tmp_path / "field.zarr")
    back = gridded.open_field(path)
    np.testing.assert_array_equal(back["temperature"].values, ds["temperature"].values)
    with pytest.raises(SeaprofileError, match="overwrite"):
        gridded.write_field(ds, path)


class _CountTasks:
    """Counts the dask tasks run and the graphs computed (a dask scheduler callback)."""

    def __init__(self):
        from dask.callbacks import Callback

        self.tasks = 0
        self.graphs = 0
        counter = self

        class _Callback(Callback):
            def _start(self, dsk):
                counter.graphs += 1

            def _pretask(self, key, dsk, state):
                counter.tasks += 1

        self.callback = _Callback()


@pytest.mark.parametrize("suffix", [".nc", ".zarr"])
def test_layer_maps_are_lazy_and_written_in_one_pass(tmp_path, suffix):
    # laziness: building the maps runs no task; writing computes the graph exactly once
    # (no separate .compute() before the write), and the file holds the eager numbers
    pytest.importorskip("dask")
    if suffix == ".zarr":
        pytest.importorskip("zarr")
    ds = gridded.synthetic_field(nlat=6, nlon=8, ndepth=20, chunks={"latitude": 3})
    count = _CountTasks()
    with count.callback:
        maps = gridded.layer_maps(ds)
        assert (count.tasks, count.graphs) == (0, 0)
        path = gridded.write_field(maps, tmp_path / f"maps{suffix}", quiet=True)
    assert count.graphs == 1 and count.tasks > 0
    eager = gridded.layer_maps(ds.compute())
    with xr.open_dataset(path, engine="zarr" if suffix == ".zarr" else None) as back:
        for name in eager.data_vars:
            np.testing.assert_array_equal(back[name].values, eager[name].values, name)


def test_zarr_overwrite_replaces_the_store(tmp_path):
    pytest.importorskip("zarr")
    path = tmp_path / "field.zarr"
    gridded.write_field(gridded.synthetic_field(nlat=2, nlon=2, ndepth=10), path)
    wider = gridded.synthetic_field(nlat=3, nlon=2, ndepth=10)
    gridded.write_field(wider, path, overwrite=True)
    assert gridded.open_field(path).sizes["latitude"] == 3
    assert [p.name for p in tmp_path.iterdir()] == ["field.zarr"]  # no temporary left
