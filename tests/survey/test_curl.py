"""Surface sound-speed offset from the swath curl. Synthetic soundings and profiles."""

import numpy as np
import pytest

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import seafloor_travel_time, surface_speed_from_curl

Z = np.array([0.0, 5.0, 20.0, 45.0, 120.0])
C = np.array([1509.0, 1508.5, 1500.0, 1493.0, 1491.0])
ANGLES = np.linspace(-70.0, 70.0, 57)


def _swath(steering, depth=80.0, pings=3):
    t, _ = seafloor_travel_time(
        Z, C, ANGLES, depth, transducer_depth=2.0, transducer_sound_speed=steering
    )
    return np.tile(t, (pings, 1))


@pytest.mark.parametrize("offset", [-4.0, 2.5])
def test_recovers_the_steering_offset_exactly_without_noise(offset):
    # soundings synthesised with the array steered at c(2 m) + offset in the true water,
    # processed with the profile: the fit must return the offset (round trip, exact up to
    # the minimiser's tolerance 1e-6 m/s, allowed 1e-4)
    c0 = float(np.interp(2.0, Z, C))
    t = _swath(c0 + offset)
    r = surface_speed_from_curl(Z, C, ANGLES, t, transducer_depth=2.0)
    assert r["offset"] == pytest.approx(offset, abs=1e-4)
    assert r["rms_after"] < 1e-5 < r["rms_before"]


def test_noise_gives_an_honest_uncertainty():
    c0 = float(np.interp(2.0, Z, C))
    t = _swath(c0 - 3.0, pings=10)
    rng = np.random.default_rng(11)
    t = t + rng.normal(0.0, 2 * 0.03 / 1500.0, t.shape)  # ~3 cm range noise
    r = surface_speed_from_curl(Z, C, ANGLES, t, transducer_depth=2.0)
    assert 0 < r["offset_uncertainty"] < 1.0
    # within 4 sigma of the truth (Gauss-Newton uncertainty; derived here)
    assert abs(r["offset"] + 3.0) < 4 * r["offset_uncertainty"]


def test_too_few_beams():
    with pytest.raises(ArgumentError) as err:
        surface_speed_from_curl(Z, C, [-10.0, 10.0], [0.1, 0.1])
    assert err.value.argument == "travel_time"
