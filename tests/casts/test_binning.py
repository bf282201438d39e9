"""Binning a Cast into a Profile, filling short gaps, the Profile's sound speed."""

import gsw
import numpy as np
import xarray as xr

from seaprofile import _cf
from seaprofile.casts.binning import add_sound_speed, bin_cast, fill_gaps
from seaprofile.casts.model import make_cast
from seaprofile.casts.process import add_depth


def test_bin_cast_counts_and_means():
    # 4 samples in bin 1 m (0.5..1.5), 2 in bin 2 m, none in 3 m, 3 in 4 m
    z = np.array([0.6, 0.9, 1.1, 1.4, 1.6, 2.2, 3.7, 4.0, 4.3])
    t = np.array([1.0, 2.0, 3.0, 4.0, 10.0, 20.0, 5.0, 6.0, 100.0])
    cast = make_cast(depth=z, temperature=t, salinity=np.full(z.size, 35.0), latitude=45.0)
    flags = np.zeros(z.size, np.int8)
    flags[8] = 4  # a bad temperature: left out of the mean, sample still counted
    cast["temperature_qc"] = cast["temperature_qc"].copy(data=flags)
    cast = add_depth(cast)
    prof = bin_cast(cast, 1.0)
    assert prof["depth"].values.tolist() == [1.0, 2.0, 3.0, 4.0]
    assert prof["samples_per_bin"].values.tolist() == [4, 2, 0, 3]
    np.testing.assert_allclose(prof["temperature"].values, [2.5, 15.0, np.nan, 5.5],
                               rtol=1e-15)
    assert prof["temperature_qc"].values.tolist() == [0, 0, 9, 0]
    assert prof.attrs["cast_max_depth"] == 4.0
    assert "depth" in prof.dims and prof["pressure"].values[2] > prof["pressure"].values[1]


def test_fill_gaps_flags_estimated():
    z = np.arange(1.0, 21.0)
    t = 20.0 - 0.5 * z
    have = np.ones(20, bool)
    have[[3, 4]] = False  # no samples at 4 and 5 m: a 2 m gap, filled
    have[10:17] = False   # none at 11..17 m: a 7 m gap, too long for max_gap=5 m
    cast = add_depth(make_cast(depth=z[have], temperature=t[have],
                                  salinity=np.full(have.sum(), 35.0), latitude=10.0))
    prof = bin_cast(cast, 1.0)
    before = prof.copy(deep=True)
    out = fill_gaps(prof, max_gap=5.0)
    xr.testing.assert_identical(prof, before)
    np.testing.assert_allclose(out["temperature"].values[[3, 4]], t[[3, 4]], rtol=1e-14)
    assert out["temperature_qc"].values[[3, 4]].tolist() == [8, 8]
    assert np.isnan(out["temperature"].values[10:17]).all()
    assert (out["temperature_qc"].values[10:17] == 9).all()
    assert (out["samples_per_bin"].values[[3, 4]] == 0).all()
    assert _cf.steps_of(out.attrs)[-1]["filled"]["temperature"] == 2


def test_add_sound_speed_teos10_against_gsw():
    z = np.arange(1.0, 101.0)
    t, s = 15.0 - 0.05 * z, 34.5 + 0.005 * z
    cast = add_depth(make_cast(depth=z, temperature=t, salinity=s, latitude=20.0,
                                  longitude=-30.0))
    prof = add_sound_speed(bin_cast(cast, 1.0), "teos10")
    p = prof["pressure"].values
    sa = gsw.SA_from_SP(s, p, -30.0, 20.0)
    # TEOS-10 (IOC, SCOR & IAPSO 2010) via gsw, computed independently: same library,
    # so agreement to round-off
    np.testing.assert_allclose(prof["sound_speed"].values,
                               gsw.sound_speed(sa, gsw.CT_from_t(sa, t, p), p), atol=1e-9)
    assert prof.attrs["equation"] == "teos10"


def test_add_sound_speed_measured():
    z = np.arange(1.0, 11.0)
    cast = add_depth(make_cast(depth=z, measured_sound_speed=1500 + z, latitude=0.0),
                        latitude=0.0)
    binned = bin_cast(cast, 1.0)
    before = binned.copy(deep=True)
    prof = add_sound_speed(binned)
    xr.testing.assert_identical(binned, before)
    assert prof.attrs["equation"] == "measured"
    assert prof["sound_speed"].attrs["standard_name"] == "speed_of_sound_in_sea_water"
    np.testing.assert_array_equal(prof["sound_speed"].values, 1500 + z)
