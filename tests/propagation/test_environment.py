"""Environment: construction, validation, node thinning."""

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st

from seaprofile import _cf
from seaprofile._validate import SeaprofileError
from seaprofile.propagation import Environment, Section, thin_nodes


def test_extends_to_surface_and_bottom_with_constant_speed():
    env = Environment.from_arrays([10.0, 50.0, 100.0], [1500.0, 1490.0, 1495.0], 300.0)
    assert env.depth[0] == 0.0 and env.sound_speed[0] == 1500.0
    assert env.depth[-1] == 300.0 and env.sound_speed[-1] == 1495.0
    assert env.bottom_depth == 300.0
    assert not env.is_range_dependent
    zn, cn = env.layers()
    assert zn[-1] == 300.0 and zn[0] == 0.0


def test_immutable_and_inputs_not_modified():
    z = np.array([0.0, 100.0])
    c = np.array([1500.0, 1510.0])
    env = Environment.from_arrays(z, c)
    with pytest.raises(AttributeError):
        env.bottom_depth = 3.0
    with pytest.raises(ValueError):
        env.depth[0] = 5.0
    assert z[0] == 0.0


def test_layers_cut_at_bottom():
    env = Environment.from_arrays([0.0, 100.0, 200.0], [1500.0, 1510.0, 1530.0], 150.0)
    zn, cn = env.layers()
    np.testing.assert_allclose(zn, [0, 100, 150])
    np.testing.assert_allclose(cn, [1500, 1510, 1520])


@pytest.mark.parametrize(
    "kwargs, name",
    [
        (dict(depth=[0.0], sound_speed=[1500.0]), "depth"),
        (dict(depth=[0.0, 10.0], sound_speed=[1500.0, np.nan]), "sound_speed"),
        (dict(depth=[0.0, np.nan], sound_speed=[1500.0, 1500.0]), "depth"),
        (dict(depth=[0.0, 10.0, 5.0], sound_speed=[1500.0] * 3), "depth"),
        (dict(depth=[0.0, 10.0], sound_speed=[1500.0] * 2, bottom_depth=-5.0), "bottom_depth"),
        (dict(depth=[0.0, 10.0], sound_speed=[1500.0] * 2, bottom_depth=0.0), "bottom_depth"),
        (
            dict(
                depth=[0.0, 10.0],
                sound_speed=[1500.0] * 2,
                bathymetry=([0.0, 10.0, 5.0], [10.0, 20.0, 30.0]),
            ),
            "bathymetry",
        ),
        (dict(depth=[0.0, 10.0], sound_speed=[1500.0] * 2, thin_tolerance=-1.0), "thin_tolerance"),
    ],
)
def test_bad_input_names_argument(kwargs, name):
    with pytest.raises(SeaprofileError, match=name):
        Environment.from_arrays(**kwargs)


def test_bathymetry_range_dependence():
    flat = Environment.from_arrays([0, 100], [1500, 1500], bathymetry=([0, 1000], [80, 80]))
    assert not flat.is_range_dependent and flat.bottom_depth == 80.0
    slope = Environment.from_arrays([0, 100], [1500, 1500], bathymetry=([0, 1000], [80, 120]))
    assert slope.is_range_dependent and slope.bottom_depth == 80.0
    assert slope.depth[-1] == 120.0  # nodes reach the deepest bottom
    np.testing.assert_allclose(slope.bottom_at([500.0, 5000.0]), [100.0, 120.0])
    uniform = Section([0.0], [0.0, 100.0], [[1500.0, 1500.0]])
    assert Environment.from_arrays([0, 100], [1500, 1500]).replace(speed=uniform).is_range_dependent


def test_from_profile_skips_bad_flags_and_nan():
    depth = np.array([0.0, 10.0, 20.0, 30.0, 40.0])
    ss = np.array([1500.0, 1499.0, 1600.0, np.nan, 1497.0])
    qc = np.array([1, 1, _cf.BAD, 9, _cf.ESTIMATED], dtype=np.int8)
    prof = xr.Dataset(
        {"sound_speed": ("depth", ss), "sound_speed_qc": ("depth", qc)}, coords={"depth": depth}
    )
    env = Environment.from_profile(prof)
    np.testing.assert_allclose(env.depth, [0, 10, 40])
    np.testing.assert_allclose(env.sound_speed, [1500, 1499, 1497])
    assert "environment_from_profile" in env.attrs["processing_steps"]
    assert ss[2] == 1600.0  # input untouched


def _munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def test_thinning_keeps_tolerance_and_shrinks_a_dense_cast():
    z = np.linspace(0.0, 5000.0, 5001)
    c = _munk(z)
    env = Environment.from_arrays(z, c, thin_tolerance=0.01)
    assert env.depth.size < 200
    err = np.abs(np.interp(z, env.depth, env.sound_speed) - c)
    assert err.max() <= 0.01 + 1e-12
    assert "thin_nodes" in env.attrs["processing_steps"]


@given(st.lists(st.floats(1450.0, 1550.0), min_size=3, max_size=60), st.floats(0.0, 5.0))
def test_thinning_guarantee_random(speeds, tol):
    c = np.array(speeds)
    z = np.arange(c.size, dtype=float) * 7.0
    zt, ct = thin_nodes(z, c, tol)
    assert zt[0] == z[0] and zt[-1] == z[-1]
    assert np.abs(np.interp(z, zt, ct) - c).max() <= tol + 1e-9
