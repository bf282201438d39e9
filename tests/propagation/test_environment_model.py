"""The Environment model: frozen parts, validation, one constructor path, provenance."""

import ast
import dataclasses
from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import (
    Bathymetry,
    Environment,
    LayeredSpeed,
    Seabed,
    Section,
    Surface,
    eigenrays,
    trace_fan,
)
from seaprofile.propagation import section as section_module
from seaprofile.propagation.integrate import _medium_of, trace_fan_integrated

# a made-up sediment for the tests only: values chosen inside physical ranges, not a
# description of any real seabed
SEABED = Seabed(sound_speed=1650.0, density=1800.0, attenuation=0.5, name="test sediment")


def _env():
    return Environment.from_arrays(
        [0.0, 100.0, 300.0],
        [1500.0, 1490.0, 1495.0],
        300.0,
        seabed=SEABED,
        surface=Surface(rms_wave_height=0.4),
    )


# ---- frozen ---------------------------------------------------------------------------
@pytest.mark.parametrize(
    "obj, name",
    [
        (Surface(), "rms_wave_height"),
        (SEABED, "density"),
        (Bathymetry([0.0, 10.0], [50.0, 60.0]), "depths"),
        (LayeredSpeed([0.0, 10.0], [1500.0, 1501.0]), "depth"),
        (_env(), "seabed"),
        (_env(), "speed"),
    ],
)
def test_assignment_raises(obj, name):
    with pytest.raises(dataclasses.FrozenInstanceError):
        setattr(obj, name, None)


def test_arrays_are_read_only_copies():
    r = np.array([0.0, 1000.0])
    z = np.array([50.0, 80.0])
    bathy = Bathymetry(r, z)
    env = Environment(LayeredSpeed([0.0, 80.0], [1500.0, 1500.0]), bathy)
    for a in (bathy.ranges, bathy.depths, env.depth, env.sound_speed, env.speed.depth):
        with pytest.raises(ValueError):
            a[0] = 1.0
    r[0] = -5.0
    assert bathy.ranges[0] == 0.0


# ---- validation names the argument ----------------------------------------------------
@pytest.mark.parametrize(
    "make, name",
    [
        (lambda: Surface(rms_wave_height=-0.1), "rms_wave_height"),
        (lambda: Surface(rms_wave_height=np.nan), "rms_wave_height"),
        (lambda: Surface(rms_wave_height="x"), "rms_wave_height"),
        (lambda: Seabed(sound_speed=0.0, density=1800.0, attenuation=0.5), "sound_speed"),
        (lambda: Seabed(sound_speed=np.inf, density=1800.0, attenuation=0.5), "sound_speed"),
        (lambda: Seabed(sound_speed=1650.0, density=-1.0, attenuation=0.5), "density"),
        (lambda: Seabed(sound_speed=1650.0, density=np.nan, attenuation=0.5), "density"),
        (lambda: Seabed(sound_speed=1650.0, density=1800.0, attenuation=-0.1), "attenuation"),
        (lambda: Seabed(sound_speed=1650.0, density=1800.0, attenuation=0.5, name=3), "name"),
        (lambda: Bathymetry([0.0, 0.0], [50.0, 60.0]), "ranges"),
        (lambda: Bathymetry([0.0, 10.0], [50.0, 0.0]), "depths"),
        (lambda: Bathymetry([0.0, 10.0], [50.0]), "ranges and depths"),
        (lambda: Bathymetry.flat(-3.0), "bottom_depth"),
        (lambda: LayeredSpeed([0.0, 10.0], [1500.0, -1.0]), "sound_speed"),
        (lambda: Environment("c(z)", Bathymetry.flat(100.0)), "speed"),
        (
            lambda: Environment(LayeredSpeed([0, 10], [1500, 1500]), 100.0, surface="calm"),
            "surface",
        ),
        (lambda: Environment(LayeredSpeed([0, 10], [1500, 1500]), 100.0, seabed="sand"), "seabed"),
        (lambda: Environment.from_arrays([0, 10], [1500, 1500], seabed="sand"), "seabed"),
        (
            lambda: Environment.from_arrays(
                [0, 10], [1500, 1500], 80.0, bathymetry=([0, 1000], [100, 50])
            ),
            "bottom_depth",
        ),
        (lambda: Environment.from_arrays([0, 10], [1500, 1500], bathymetry="deep"), "bathymetry"),
    ],
)
def test_validation_names_the_argument(make, name):
    with pytest.raises(SeaprofileError, match=name):
        make()


def test_bottom_type_keyword_is_gone():
    # intentional change: the unused bottom_type string was removed
    with pytest.raises(TypeError):
        Environment.from_arrays([0, 10], [1500, 1500], bottom_type="sand")


def test_surface_is_pressure_release():
    # Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, ch. 1:
    # a pressure-release boundary reflects a plane wave with coefficient -1 (exact)
    # intentional change: reflection_coefficient became a method (grazing angle, frequency)
    assert Surface.PRESSURE_RELEASE == -1.0
    assert Surface().reflection_coefficient(30.0) == -1.0
    assert Surface().rms_wave_height == 0.0


def test_bathymetry_depth_at_is_linear_and_holds_ends():
    b = Bathymetry([0.0, 1000.0, 3000.0], [100.0, 200.0, 150.0])
    np.testing.assert_array_equal(
        b.depth_at([-5.0, 500.0, 2000.0, 9e9]), [100.0, 150.0, 175.0, 150.0]
    )
    assert not b.is_flat and b.deepest == 200.0
    assert Bathymetry.flat(80.0).is_flat and Bathymetry.flat(80.0).depth_at(1e6) == 80.0
    assert Bathymetry.coerce((b.ranges, b.depths)) == b


# ---- one constructor path -------------------------------------------------------------
Z = np.array([0.0, 50.0, 120.0, 400.0, 1000.0])
C = np.array([1510.0, 1505.0, 1495.0, 1490.0, 1495.0])


def test_from_section_and_from_profile_give_the_kernels_the_same_inputs():
    profile = xr.Dataset({"sound_speed": ("depth", C)}, coords={"depth": Z})
    by_profile = Environment.from_profile(profile, 1000.0)
    by_section = Environment.from_section(
        Section([0.0], Z, C[None, :], range_interpolation="linear"), 1000.0
    )
    direct = Environment(LayeredSpeed(Z, C), Bathymetry.flat(1000.0))
    for env in (by_section, direct):
        np.testing.assert_array_equal(env.depth, by_profile.depth)
        np.testing.assert_array_equal(env.sound_speed, by_profile.sound_speed)
        for a, b in zip(env.layers(), by_profile.layers()):
            np.testing.assert_array_equal(a, b)
        for a, b in zip(_medium_of(env), _medium_of(by_profile)):
            np.testing.assert_array_equal(a, b)
    # so the integrator traces bit-identical rays through both
    angles = np.linspace(-8.0, 8.0, 9)
    fa = trace_fan_integrated(by_profile, 100.0, angles, 20000.0, range_step=1000.0)
    fb = trace_fan_integrated(by_section, 100.0, angles, 20000.0, range_step=1000.0)
    for name in ("range", "depth", "travel_time", "angle", "tube_width"):
        np.testing.assert_array_equal(fa[name].values, fb[name].values)


@settings(max_examples=30, deadline=None)
@given(
    st.lists(st.floats(1450.0, 1550.0), min_size=2, max_size=20),
    st.floats(1.0, 50.0),
    st.floats(0.0, 30.0),
    st.floats(1.0, 3.0),
)
def test_direct_and_classmethod_construction_agree(speeds, spacing, top, bottom_factor):
    z = top + spacing * np.arange(len(speeds))
    bottom = float(z[-1] * bottom_factor)
    a = Environment.from_arrays(z, speeds, bottom)
    b = Environment(LayeredSpeed(z, speeds), Bathymetry.flat(bottom))
    np.testing.assert_array_equal(a.depth, b.depth)
    np.testing.assert_array_equal(a.sound_speed, b.sound_speed)
    assert a.bottom_depth == b.bottom_depth == bottom
    assert a.depth[0] == 0.0 and a.depth[-1] >= bottom


def test_replace_goes_through_the_same_checks():
    env = _env()
    other = env.replace(seabed=None)
    assert other.seabed is None and env.seabed == SEABED
    np.testing.assert_array_equal(other.depth, env.depth)
    with pytest.raises(SeaprofileError, match="seabed"):
        env.replace(seabed="mud")


def test_section_imports_nothing_from_environment():
    tree = ast.parse(Path(section_module.__file__).read_text())
    imported = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            imported.append(node.module or "")
            imported += [a.name for a in node.names]
        elif isinstance(node, ast.Import):
            imported += [a.name for a in node.names]
    assert not [m for m in imported if "environment" in m.lower()], imported
    assert "Environment" not in {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}


# ---- provenance -----------------------------------------------------------------------
def test_ray_fan_records_product_and_environment(tmp_path):
    env = _env()
    fan = trace_fan(env, 50.0, np.linspace(-5.0, 5.0, 5), 5000.0)
    assert fan.attrs["product"] == "ray_fan"
    assert fan.attrs["bathymetry"] == "flat" and fan.attrs["bathymetry_max_depth"] == 300.0
    path = tmp_path / "fan.nc"
    fan.to_netcdf(path)
    with xr.open_dataset(path) as back:
        assert Surface.from_attrs(back.attrs) == env.surface
        assert Seabed.from_attrs(back.attrs) == env.seabed


def test_path_table_records_product_and_environment():
    env = Environment.from_arrays([0.0, 300.0], [1500.0, 1500.0])
    table = eigenrays(env, 50.0, [1000.0], [100.0])
    assert table.attrs["product"] == "path_table"
    assert Seabed.from_attrs(table.attrs) is None
    assert Surface.from_attrs(table.attrs) == Surface()


@given(
    st.floats(0.0, 10.0),
    st.floats(1.0, 6000.0),
    st.floats(1.0, 4000.0),
    st.floats(0.0, 20.0),
    st.text(max_size=20),
)
def test_surface_and_seabed_round_trip_through_attrs(wave, speed, density, attenuation, name):
    surface = Surface(rms_wave_height=wave)
    seabed = Seabed(sound_speed=speed, density=density, attenuation=attenuation, name=name)
    env = Environment(LayeredSpeed([0.0, 100.0], [1500.0, 1500.0]), 100.0, surface, seabed)
    attrs = env.provenance_attrs()
    assert Surface.from_attrs(attrs) == surface
    assert Seabed.from_attrs(attrs) == seabed
