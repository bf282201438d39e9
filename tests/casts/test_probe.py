"""Sound-speed probe casts: measured minus computed sound speed."""

import numpy as np
import pytest

from seaprofile import SeaprofileError
from seaprofile.casts.model import make_cast
from seaprofile.casts.probe import compare_measured_sound_speed

soundspeed = pytest.importorskip("seaprofile.seawater.soundspeed")


def test_difference_is_the_offset_added():
    p = np.linspace(0, 500, 11)
    t = 15 - p / 100
    s = np.full(11, 35.0)
    c = soundspeed.sound_speed(t, s, p, equation="chen_millero1977")
    cast = make_cast(
        pressure=p, temperature=t, salinity=s, measured_sound_speed=c + 0.4, instrument="svp"
    )
    cast["temperature_qc"].values[3] = 4
    before = cast.copy(deep=True)
    diff = compare_measured_sound_speed(cast)
    assert cast.identical(before)
    assert np.isnan(diff.values[3])
    np.testing.assert_allclose(np.delete(diff.values, 3), 0.4, atol=1e-9)
    assert diff.attrs["mean_difference"] == pytest.approx(0.4)
    assert diff.attrs["units"] == "m s-1"


def test_published_check_value_through_the_comparison():
    # Mackenzie (1981), JASA 70(3), 807-812: 1550.744 m/s at 25 degC, S 35, 1000 m;
    # printed to 3 decimals: half a unit in the last digit, 5e-4 m/s
    cast = make_cast(
        depth=[1000.0],
        temperature=[25.0],
        salinity=[35.0],
        measured_sound_speed=[1550.744],
        instrument="svp",
    )
    diff = compare_measured_sound_speed(cast, equation="mackenzie1981")
    assert abs(diff.values[0]) < 5e-4


def test_needs_temperature_and_salinity():
    cast = make_cast(depth=[1.0], measured_sound_speed=[1500.0], instrument="svp")
    with pytest.raises(SeaprofileError, match="temperature"):
        compare_measured_sound_speed(cast)
