"""The one ``seaprofile.write``: every product through the registry and back through its reader.

All data here is invented (synthetic): a smooth invented CTD cast, no real place or vessel.
"""

import json
import os

import numpy as np
import pytest
import xarray as xr

import seaprofile
from seaprofile import SeaprofileError, _cf
from seaprofile.casts.model import make_cast
from seaprofile.casts.read import read_cast, read_casts, read_profile, read_profiles
from seaprofile.casts.write import dataset_from_dict
from seaprofile.io.outputs import write_netcdf as io_write_netcdf
from seaprofile.io.write import PRODUCTS, product_kind, register_product, write


@pytest.fixture(scope="module")
def cast():
    p = np.linspace(1.0, 300.0, 300)  # invented, synthetic
    return make_cast(
        pressure=p,
        temperature=15.0 - 0.03 * p,
        salinity=35.0 + 0.001 * p,
        latitude=44.0,
        longitude=-20.0,
        time="2024-05-01T12:00:00",
        cast_name="synthetic-7",
        vessel="RV Invented Tern",
    )


@pytest.fixture(scope="module")
def profile(cast):
    return seaprofile.build_profile(cast, bin_size=5.0)


@pytest.fixture(scope="module")
def env(profile):
    return seaprofile.Environment.from_profile(profile, bottom_depth=300.0)


@pytest.fixture(scope="module")
def fan(env):
    return seaprofile.trace_fan(env, 50.0, np.linspace(-12.0, 12.0, 9), 4000.0, range_step=250.0)


@pytest.fixture(scope="module")
def arrivals(env):
    return seaprofile.eigenrays(env, 50.0, [1500.0, 3000.0], [40.0, 120.0], max_reflections=2)


def _same_values(back, ds):
    """Every variable and coordinate of ``ds`` is in ``back`` with equal values and dtype."""
    for name, var in ds.variables.items():
        assert name in back.variables, name
        got = back[name].values
        assert got.dtype == var.values.dtype, (name, got.dtype, var.values.dtype)
        if var.dtype.kind == "f":
            np.testing.assert_array_equal(got, var.values, err_msg=name)  # NaN == NaN here
        else:
            assert np.array_equal(got, var.values), name


def _no_temporary_files(directory):
    assert not [n for n in os.listdir(directory) if n.startswith(".") or n.endswith(".tmp")]


# --- kinds ---------------------------------------------------------------------------


def test_kinds_are_found_by_attribute_or_layout(cast, profile, fan, arrivals):
    assert [product_kind(d) for d in (cast, profile, fan, arrivals)] == [
        "cast",
        "profile",
        "ray_fan",
        "path_table",
    ]
    assert product_kind([cast, cast]) == "cast"
    tagged = fan.copy()
    tagged.attrs["product"] = "ray_fan"
    assert product_kind(tagged) == "ray_fan"
    # eigenrays along a dimension named ``path`` (the PathTable record), invented values
    table = xr.Dataset(
        {
            "travel_time": ("path", [1.0, 1.2]),
            "path_count": (("receiver_range", "receiver_depth"), [[2]]),
        },
        coords={"receiver_range": [1500.0], "receiver_depth": [40.0]},
    )
    assert product_kind(table) == "path_table"


# --- round trips -----------------------------------------------------------------------


@pytest.mark.parametrize("name", ["fan", "arrivals"])
def test_gridded_product_netcdf_round_trip_and_provenance(tmp_path, name, request):
    ds = request.getfixturevalue(name)
    before = ds.copy(deep=True)
    path = seaprofile.write(ds, tmp_path / f"{name}.nc")
    xr.testing.assert_identical(ds, before)  # the input is not modified
    with xr.open_dataset(path) as back:
        back = back.load()
    _same_values(back, ds)
    xr.testing.assert_equal(back, ds)
    kind = {"fan": "ray_fan", "arrivals": "path_table"}[name]
    assert back.attrs["product"] == kind
    assert back.attrs["caution"] == _cf.CAUTION
    assert back.attrs["seaprofile_version"] == seaprofile.__version__
    assert back.attrs["Conventions"] == "CF-1.10"
    assert back.attrs["equation"] == "chen_millero1977"  # from the profile
    steps = [s["step"] for s in json.loads(back.attrs["processing_steps"])]
    assert "bin_cast" in steps and steps[-1] == ("trace_fan" if name == "fan" else "eigenrays")
    assert back.attrs["history"].splitlines()[-1].endswith(f"write_netcdf({kind})")
    assert os.listdir(tmp_path) == [path.name]


def test_arrivals_json_round_trip(tmp_path, arrivals):
    path = seaprofile.write(arrivals, tmp_path / "arrivals.json")
    doc = json.loads(path.read_text())
    assert doc["product"] == "path_table" and doc["caution"] == _cf.CAUTION
    back = dataset_from_dict(doc["dataset"])
    _same_values(back, arrivals)
    assert back.attrs["processing_steps"] == arrivals.attrs["processing_steps"]


@pytest.mark.parametrize("suffix", [".nc", ".csv", ".json"])
def test_cast_round_trip(tmp_path, cast, suffix):
    path = seaprofile.write(cast, tmp_path / f"cast{suffix}")
    back = read_cast(path)
    for name in ("pressure", "temperature", "salinity"):
        np.testing.assert_array_equal(back[name].values, cast[name].values)
        np.testing.assert_array_equal(back[f"{name}_qc"].values, cast[f"{name}_qc"].values)
    assert back.attrs["cast_name"] == "synthetic-7"


@pytest.mark.parametrize("suffix", [".nc", ".csv", ".json", ".speed.txt"])
def test_profile_round_trip(tmp_path, profile, suffix):
    path = seaprofile.write(profile, tmp_path / f"profile{suffix}")
    back = read_profile(path)
    np.testing.assert_array_equal(back["depth"].values, profile["depth"].values)
    # the speed table keeps 3 decimals (m/s): half a unit of the last digit
    tol = 5e-4 if suffix == ".speed.txt" else 0.0
    np.testing.assert_allclose(
        back["sound_speed"].values, profile["sound_speed"].values, rtol=0, atol=tol
    )
    if suffix != ".speed.txt":
        assert back.attrs["equation"] == "chen_millero1977"
        assert "bin_cast" in back.attrs["processing_steps"]


def test_collections_round_trip(tmp_path, cast, profile):
    second = cast.assign_attrs(cast_name="synthetic-8")
    assert len(read_casts(seaprofile.write([cast, second], tmp_path / "casts.nc"))) == 2
    assert len(read_profiles(seaprofile.write([profile, profile], tmp_path / "p.json"))) == 2


def test_casts_write_and_io_write_netcdf_are_the_one_write(tmp_path, fan, profile):
    from seaprofile.casts.write import write as casts_write

    assert seaprofile.write is write
    casts_write(profile, tmp_path / "p.nc")
    path = io_write_netcdf(fan, tmp_path / "fan.nc")  # what the fan command calls
    with xr.open_dataset(path) as back:
        assert back.attrs["product"] == "ray_fan"
        xr.testing.assert_equal(back.load(), fan)


# --- safety ----------------------------------------------------------------------------


def test_existing_file_kept_and_failed_write_leaves_nothing(tmp_path, fan):
    path = tmp_path / "fan.nc"
    path.write_text("precious\n")
    with pytest.raises(SeaprofileError, match="exists"):
        seaprofile.write(fan, path)
    assert path.read_text() == "precious\n"
    seaprofile.write(fan, path, overwrite=True)
    with xr.open_dataset(path) as back:
        xr.testing.assert_equal(back.load(), fan)
    bad = fan.assign(note=("ray", np.array([object()] * fan.sizes["ray"], dtype=object)))
    with pytest.raises(SeaprofileError, match="note"):
        seaprofile.write(bad, tmp_path / "bad.nc")
    assert sorted(os.listdir(tmp_path)) == ["fan.nc"]
    _no_temporary_files(tmp_path)


def test_protected_input_is_never_the_output(tmp_path, arrivals):
    source = tmp_path / "input.nc"
    source.write_text("an input\n")
    with pytest.raises(SeaprofileError, match="input"):
        seaprofile.write(arrivals, source, overwrite=True, protect=[source])
    assert source.read_text() == "an input\n"


# --- errors ------------------------------------------------------------------------------


def test_unknown_products_and_formats_name_the_argument(tmp_path, cast, profile, fan):
    with pytest.raises(SeaprofileError, match=r"^obj: .*no product.*known products"):
        write(xr.Dataset({"x": ("thing", [1.0, 2.0])}), tmp_path / "x.nc")
    with pytest.raises(SeaprofileError, match=r"^obj: product 'made_up_product' is not one"):
        write(xr.Dataset(attrs={"product": "made_up_product"}), tmp_path / "x.nc")
    with pytest.raises(SeaprofileError, match=r"^obj must be an xarray"):
        write({"depth": [0.0]}, tmp_path / "x.nc")
    with pytest.raises(SeaprofileError, match=r"^obj: cannot mix"):
        write([cast, profile], tmp_path / "m.nc")
    with pytest.raises(
        SeaprofileError, match=r"^format: a ray fan is written as netcdf, netcdf4 or json, not csv"
    ):
        write(fan, tmp_path / "fan.csv")
    with pytest.raises(SeaprofileError, match=r"^format: a cast is written as"):
        write(cast, tmp_path / "cast.speed.txt")
    with pytest.raises(SeaprofileError, match=r"^format: cannot tell"):
        write(fan, tmp_path / "fan.xyz")
    with pytest.raises(SeaprofileError, match=r"^obj: write_product_netcdf writes one"):
        write([fan, fan], tmp_path / "fans.nc")
    assert os.listdir(tmp_path) == []


# --- a new product kind ------------------------------------------------------------------


def test_registering_a_new_kind_writes_a_dataarray(tmp_path):
    from seaprofile.io.write import write_product_netcdf

    loss = xr.DataArray(
        np.array([[60.0, 70.0], [65.0, np.nan]]),
        name="transmission_loss",
        dims=("range", "depth"),
        coords={"range": [1000.0, 2000.0], "depth": [10.0, 50.0]},
        attrs={"units": "dB", "product": "toy_field"},
    )  # invented values
    register_product(
        "toy_field",
        description="toy field",
        detect=lambda ds: False,
        writers={"netcdf": write_product_netcdf},
    )
    try:
        path = write(loss, tmp_path / "loss.nc")
    finally:
        del PRODUCTS["toy_field"]
    with xr.open_dataset(path) as back:
        np.testing.assert_array_equal(back["transmission_loss"].values, loss.values)
        assert back.attrs["product"] == "toy_field" and back.attrs["caution"] == _cf.CAUTION
    with pytest.raises(SeaprofileError, match="writers"):
        register_product("toy", description="toy", detect=bool, writers={"excel": print})


def test_loss_field_netcdf_round_trip(tmp_path):
    from seaprofile.propagation.boundaries import Seabed
    from seaprofile.propagation.environment import Environment
    from seaprofile.propagation.loss import transmission_loss

    env = Environment.from_arrays(
        [0.0, 200.0], [1500.0, 1500.0], 200.0, seabed=Seabed.named("sand")
    )
    tl = transmission_loss(
        env,
        50.0,
        300.0,
        ranges=[500.0, 1000.0],
        depths=[20.0, 100.0],
        beams=60,
        absorption=None,
    )
    assert product_kind(tl) == "loss_field"
    path = seaprofile.write(tl, tmp_path / "loss.nc")
    with xr.open_dataset(path) as back:
        back = back.load()
    assert back.attrs["product"] == "loss_field" and "caution" in back.attrs
    assert "transmission_loss" in back.attrs["processing_steps"]
    np.testing.assert_array_equal(back["transmission_loss"].values, tl.values)
    assert back["beam_count"].dtype == np.int32
    np.testing.assert_array_equal(back["beam_count"].values, tl["beam_count"].values)
    assert back["transmission_loss"].attrs["units"] == "dB"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["loss.nc"]


# --- survey products ---------------------------------------------------------------------


@pytest.fixture(scope="module")
def survey_products(profile):
    """The four survey products of seaprofile.survey, on the invented profile above."""
    from seaprofile import survey

    z = profile["depth"].values
    c = profile["sound_speed"].values
    warmer = c + np.linspace(2.0, 0.0, c.size)  # an invented second cast
    angles = xr.DataArray([[-60.0, 0.0, 45.0], [-30.0, 10.0, 60.0]], dims=("ping", "beam"))
    times = xr.full_like(angles, 0.3)
    return {
        "soundings": survey.swath_soundings(z, c, angles, times, transducer_depth=5.0),
        "profile_error": survey.profile_error(
            z, c, z, warmer, water_depth=250.0, transducer_depth=5.0
        ),
        "depth_uncertainty": survey.depth_uncertainty(
            depth=z,
            sound_speed=c,
            water_depth=250.0,
            transducer_depth=5.0,
            sigma_sound_speed=0.5,
        ),
        "cast_neighbour_check": survey.neighbour_check([(z, c), (z, warmer)], water_depth=250.0),
    }


@pytest.mark.parametrize(
    "kind", ["soundings", "profile_error", "depth_uncertainty", "cast_neighbour_check"]
)
def test_survey_products_round_trip_through_the_one_write(tmp_path, survey_products, kind):
    ds = survey_products[kind]
    assert product_kind(ds) == kind and kind in PRODUCTS
    path = seaprofile.write(ds, tmp_path / f"{kind}.nc")
    with xr.open_dataset(path) as back:
        back = back.load()
    _same_values(back, ds)
    assert back.attrs["product"] == kind and back.attrs["caution"] == _cf.CAUTION
    doc = json.loads(seaprofile.write(ds, tmp_path / f"{kind}.json").read_text())
    assert doc["product"] == kind
    _same_values(dataset_from_dict(doc["dataset"]), ds)
    _no_temporary_files(tmp_path)
