"""Depth uncertainty from profile inputs: Monte Carlo against linearised, closed forms.

All profiles are synthetic.
"""

import numpy as np
import pytest

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import COVERAGE_FACTOR, depth_uncertainty, tvu

T = np.array([15.0, 14.8, 12.0, 8.0, 6.0, 5.5])
S = np.array([34.5, 34.5, 34.8, 35.0, 35.0, 35.0])
P = np.array([0.0, 10.0, 25.0, 60.0, 150.0, 300.0])
ANGLES = [0.0, 30.0, 60.0, 70.0]


def test_speed_only_uniform_water_closed_form():
    # straight-ray geometry, derived here: in uniform water c a speed offset dc leaves the
    # angle unchanged and scales the slant range, dD = h dc / c at every angle; a depth
    # offset of the levels changes nothing. Linear in dc: MC std = h sigma_c / c.
    c, h, sc = 1500.0, 100.0, 0.5
    ds = depth_uncertainty(
        depth=[0.0, 400.0],
        sound_speed=[c, c],
        water_depth=h,
        beam_angles=ANGLES,
        sigma_sound_speed=sc,
        sigma_depth=1.0,
        samples=4000,
        seed=1,
    )
    np.testing.assert_allclose(ds["depth_uncertainty_sound_speed"], h * sc / c, rtol=1e-9)
    np.testing.assert_allclose(ds["depth_uncertainty_depth"], 0.0, atol=1e-9)
    np.testing.assert_allclose(ds["depth_uncertainty_linear"], h * sc / c, rtol=1e-9)
    # Monte Carlo: the std of 4000 normal draws is within ~1.1 % (1/sqrt(2N)); 5 % tolerance
    np.testing.assert_allclose(ds["depth_uncertainty_monte_carlo"], h * sc / c, rtol=0.05)


def test_monte_carlo_agrees_with_linearised_for_small_errors():
    ds = depth_uncertainty(
        T,
        S,
        P,
        latitude=45.0,
        water_depth=120.0,
        beam_angles=ANGLES,
        sigma_temperature=0.01,
        sigma_salinity=0.02,
        sigma_pressure=0.5,
        sigma_sound_speed=0.05,
        samples=3000,
        seed=7,
    )
    # small errors are linear: agreement within the Monte Carlo sampling error
    # (1/sqrt(2N) ~ 1.3 % for N = 3000); tolerance 6 %
    np.testing.assert_allclose(
        ds["depth_uncertainty_monte_carlo"], ds["depth_uncertainty_linear"], rtol=0.06
    )
    assert ds.attrs["coverage_factor"] == COVERAGE_FACTOR == 1.96
    np.testing.assert_allclose(ds["expanded_uncertainty"], 1.96 * ds["depth_uncertainty_linear"])
    np.testing.assert_allclose(ds["tvu"], tvu(120.0, "1a"))
    # the equation spread is present and uses several published equations
    assert len(ds["depth_uncertainty_equations"].attrs["equations"].split()) >= 3
    assert np.all(ds["depth_uncertainty_equations"] > 0)


def test_seeded_and_repeatable():
    kw = dict(latitude=45.0, water_depth=80.0, sigma_temperature=0.05, samples=200, seed=3)
    a = depth_uncertainty(T, S, P, **kw)
    b = depth_uncertainty(T, S, P, **kw)
    np.testing.assert_array_equal(
        a["depth_uncertainty_monte_carlo"], b["depth_uncertainty_monte_carlo"]
    )


def test_bottle_profile_with_depth_levels():
    # a 50 m bottle profile given in depth
    z = np.arange(0.0, 301.0, 50.0)
    t = 16.0 - 0.03 * z
    ds = depth_uncertainty(
        t,
        np.full(z.size, 35.0),
        depth=z,
        latitude=-30.0,
        water_depth=250.0,
        sigma_temperature=0.02,
        sigma_depth=0.5,
        samples=500,
    )
    assert np.all(np.isfinite(ds["depth_uncertainty_linear"]))


@pytest.mark.parametrize(
    "kwargs, argument",
    [
        ({"sigma_temperature": -1.0}, "sigma_temperature"),
        ({"samples": 3}, "samples"),
        ({"sigma_depth": 1.0}, "sigma_depth"),
        ({"latitude": None}, "latitude"),
    ],
)
def test_bad_arguments_are_named(kwargs, argument):
    args = dict(latitude=45.0, water_depth=80.0)
    args.update(kwargs)
    with pytest.raises(ArgumentError) as err:
        depth_uncertainty(T, S, P, **args)
    assert err.value.argument == argument
