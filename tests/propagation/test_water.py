"""The water (temperature, salinity) an Environment carries for the loss field's absorption."""

import numpy as np
import pytest
import xarray as xr

from seaprofile import _cf
from seaprofile._validate import SeaprofileError
from seaprofile.propagation.environment import Environment, Water
from seaprofile.propagation.loss import DEFAULT_SALINITY, DEFAULT_TEMPERATURE, transmission_loss
from seaprofile.seawater.absorption import absorption


@pytest.mark.parametrize(
    "args, name",
    [
        (([], [], []), "depth"),
        (([0.0, 10.0], [5.0], [35.0, 35.0]), "temperature"),
        (([0.0, 10.0], [5.0, 4.0], [35.0]), "salinity"),
        (([0.0, np.nan], [5.0, 4.0], [35.0, 35.0]), "depth"),
        (([0.0, 10.0], [5.0, np.inf], [35.0, 35.0]), "temperature"),
        (([0.0, 10.0], [5.0, 4.0], [np.nan, 35.0]), "salinity"),
        (([-1.0, 10.0], [5.0, 4.0], [35.0, 35.0]), "depth"),
        (([10.0, 10.0], [5.0, 4.0], [35.0, 35.0]), "depth"),
    ],
)
def test_water_errors_name_the_argument(args, name):
    with pytest.raises(SeaprofileError, match=name):
        Water(*args)


def test_water_is_read_only_and_interpolates():
    w = Water([0.0, 100.0], [20.0, 10.0], [35.0, 36.0], source="test")
    with pytest.raises(ValueError):
        w.temperature[0] = 0.0
    t, s = w.at([50.0, 500.0])
    np.testing.assert_allclose(t, [15.0, 10.0])
    np.testing.assert_allclose(s, [35.5, 36.0])


def test_from_profile_leaves_out_flagged_levels():
    depth = np.array([0.0, 10.0, 20.0, 30.0, 40.0])
    temp = np.array([20.0, 19.0, 99.0, 17.0, np.nan])
    sal = np.array([35.0, 35.1, 35.2, 35.3, 35.4])
    t_qc = np.array([1, 1, _cf.BAD, 1, 1], dtype=np.int8)
    s_qc = np.array([1, 1, 1, 9, 1], dtype=np.int8)
    prof = xr.Dataset(
        {
            "sound_speed": ("depth", np.full(5, 1500.0)),
            "temperature": ("depth", temp),
            "temperature_qc": ("depth", t_qc),
            "salinity": ("depth", sal),
            "salinity_qc": ("depth", s_qc),
        },
        coords={"depth": depth},
    )
    env = Environment.from_profile(prof)
    np.testing.assert_allclose(env.water.depth, [0.0, 10.0])
    np.testing.assert_allclose(env.water.temperature, [20.0, 19.0])
    assert temp[2] == 99.0  # input untouched
    speed_only = prof.drop_vars(["temperature", "temperature_qc"])
    assert Environment.from_profile(speed_only).water is None


def _isovelocity(temperature, salinity=35.0, depth=5000.0):
    # levels every 100 m: alpha is evaluated at the levels and linear between them, so the
    # 2000 m path depth is a level and its alpha exact
    z = np.arange(0.0, depth + 1.0, 100.0)
    prof = xr.Dataset(
        {
            "sound_speed": ("depth", np.full(z.size, 1500.0)),
            "temperature": ("depth", np.full(z.size, temperature)),
            "salinity": ("depth", np.full(z.size, salinity)),
        },
        coords={"depth": z},
    )
    return Environment.from_profile(prof, depth)


def _direct_path_loss(env, ranges, frequency=10000.0):
    # source and receiver at 2000 m; a +-5 deg fan leaves out the surface and bottom images
    # (at 20 km the surface image arrives at 11 deg), so only the horizontal direct path
    return transmission_loss(
        env,
        2000.0,
        frequency,
        ranges=ranges,
        depths=[2000.0],
        mode="incoherent",
        beams=200,
        angles=(-5.0, 5.0),
    )


def test_absorption_attr_says_measured_or_assumed():
    r = np.array([1000.0])
    measured = _direct_path_loss(_isovelocity(4.0), r)
    assert measured.attrs["absorption_water"].startswith("measured")
    assumed = _direct_path_loss(Environment.from_arrays([0.0, 5000.0], [1500.0, 1500.0]), r)
    assert assumed.attrs["absorption_water"].startswith("assumed")
    assert assumed.attrs["absorption_temperature"] == DEFAULT_TEMPERATURE
    assert assumed.attrs["absorption_salinity"] == DEFAULT_SALINITY


def test_warm_and_cold_water_differ_by_the_absorption_difference():
    # the same geometry (sound speed 1500 m/s in both), only T differs: the loss difference
    # is (alpha_warm - alpha_cold) * R along the horizontal direct path at 2000 m, alpha from
    # the Francois & Garrison (1982) formula (J. Acoust. Soc. Am. 72, 1879-1890) at 10 kHz.
    # Tolerance 0.05 dB: the spreading cancels exactly; what is left is the kernel's
    # segment-midpoint quadrature of a depth-constant alpha (exact) and float rounding.
    r = np.array([5000.0, 10000.0, 20000.0])
    warm = _direct_path_loss(_isovelocity(20.0), r)
    cold = _direct_path_loss(_isovelocity(2.0), r)
    a_warm = float(absorption(10000.0, 20.0, 35.0, 2000.0)) / 1000.0  # dB/m
    a_cold = float(absorption(10000.0, 2.0, 35.0, 2000.0)) / 1000.0
    expected = (a_warm - a_cold) * r
    got = warm.values[0] - cold.values[0]
    assert abs(expected[-1]) > 1.0  # a difference worth measuring at 20 km
    np.testing.assert_allclose(got, expected, atol=0.05)
