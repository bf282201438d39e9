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
    np.testing.assert_allclose(prof["temperature"].values, [2.5, 15.0, np.nan, 5.5], rtol=1e-15)
    assert prof["temperature_qc"].values.tolist() == [0, 0, 9, 0]
    assert prof.attrs["cast_max_depth"] == 4.0
    assert "depth" in prof.dims and prof["pressure"].values[2] > prof["pressure"].values[1]


def test_fill_gaps_flags_estimated():
    z = np.arange(1.0, 21.0)
    t = 20.0 - 0.5 * z
    have = np.ones(20, bool)
    have[[3, 4]] = False  # no samples at 4 and 5 m: a 2 m gap, filled
    have[10:17] = False  # none at 11..17 m: a 7 m gap, too long for max_gap=5 m
    cast = add_depth(
        make_cast(
            depth=z[have], temperature=t[have], salinity=np.full(have.sum(), 35.0), latitude=10.0
        )
    )
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
    cast = add_depth(make_cast(depth=z, temperature=t, salinity=s, latitude=20.0, longitude=-30.0))
    prof = add_sound_speed(bin_cast(cast, 1.0), "teos10")
    p = prof["pressure"].values
    sa = gsw.SA_from_SP(s, p, -30.0, 20.0)
    # TEOS-10 (IOC, SCOR & IAPSO 2010) via gsw, computed independently: same library,
    # so agreement to round-off
    np.testing.assert_allclose(
        prof["sound_speed"].values, gsw.sound_speed(sa, gsw.CT_from_t(sa, t, p), p), atol=1e-9
    )
    assert prof.attrs["equation"] == "teos10"


def test_add_sound_speed_measured():
    z = np.arange(1.0, 11.0)
    cast = add_depth(make_cast(depth=z, measured_sound_speed=1500 + z, latitude=0.0), latitude=0.0)
    binned = bin_cast(cast, 1.0)
    before = binned.copy(deep=True)
    prof = add_sound_speed(binned)
    xr.testing.assert_identical(binned, before)
    assert prof.attrs["equation"] == "measured"
    assert prof["sound_speed"].attrs["standard_name"] == "speed_of_sound_in_sea_water"
    np.testing.assert_array_equal(prof["sound_speed"].values, 1500 + z)


def test_sparse_samples_keep_their_own_levels():
    import pytest

    # dense 1 m samples to 20 m, then bottles every 10 m off the bin centres
    z = np.concatenate([np.arange(1.0, 21.0), [32.4, 41.7, 55.5]])
    t = 20.0 - 0.1 * z
    cast = add_depth(
        make_cast(depth=z, temperature=t, salinity=np.full(z.size, 35.0), latitude=10.0)
    )
    prof = bin_cast(cast, 1.0)
    depth = prof["depth"].values
    assert (np.diff(depth) > 0).all()
    for level, value, p in zip(z[-3:], t[-3:], cast["pressure"].values[-3:]):
        i = int(np.flatnonzero(np.isclose(depth, level, rtol=0, atol=1e-12))[0])
        assert prof["temperature"].values[i] == value
        assert prof["pressure"].values[i] == p  # the sample's own pressure
        assert prof["samples_per_bin"].values[i] == 1
    # empty bin centres between the levels, none beyond the deepest level
    assert depth[-1] == 55.5 and 55.0 in depth and 33.0 in depth
    assert prof.attrs["cast_max_depth"] == 55.5
    step = _cf.steps_of(prof.attrs)[-1]
    assert step["levels_kept"] == 3 and step["samples_binned"] == 20
    filled = fill_gaps(prof, max_gap=None)
    assert np.isfinite(filled["temperature"].values).all()
    np.testing.assert_allclose(filled["temperature"].values, 20.0 - 0.1 * depth, atol=1e-12)
    assert _cf.steps_of(filled.attrs)[-1]["largest_gap"] == pytest.approx(55.5 - 41.7)
    # everything binned when asked
    assert _cf.steps_of(bin_cast(cast, 1.0, sparse_spacing=np.inf).attrs)[-1]["levels_kept"] == 0


def test_bin_size_is_validated_and_capped():
    import pytest

    from seaprofile._validate import SeaprofileError

    z = np.linspace(0.0, 5000.0, 50)
    cast = add_depth(
        make_cast(depth=z, temperature=np.full(50, 4.0), salinity=np.full(50, 35.0), latitude=10.0)
    )
    for bad in (np.inf, np.nan, 0.0, -1.0, "one"):
        with pytest.raises(SeaprofileError, match="step"):
            bin_cast(cast, bad)
    # 1e-6 m bins over 5000 m would be 5e9 bins: refused, saying the memory needed
    with pytest.raises(SeaprofileError, match=r"bin_size: .*GB of memory"):
        bin_cast(cast, 1e-6, argument="bin_size")


def test_pressure_bins_keep_the_casts_own_pressure_flags_at_kept_levels():
    import pytest

    # sparse bottles binned on pressure: each keeps its level; its pressure flag must be
    # the cast's pressure_qc, not depth_qc
    p = np.array([5.0, 50.0, 100.0, 200.0])
    cast = add_depth(
        make_cast(
            pressure=p,
            temperature=[20.0, 15.0, 10.0, 8.0],
            salinity=[35.0, 35.1, 35.2, 35.3],
            latitude=30.0,
        )
    )
    cast = cast.assign(
        pressure_qc=("sample", np.array([1, 2, 1, 2], np.int8)),
        depth_qc=("sample", np.array([5, 5, 5, 5], np.int8)),
    )
    prof = bin_cast(cast, 1.0, "pressure")
    kept = prof["samples_per_bin"].values > 0
    assert prof["pressure_qc"].values[kept].tolist() == [1, 2, 1, 2]
    # the bin-count message gives the pressure bins in dbar
    from seaprofile.io import ArgumentError

    with pytest.raises(ArgumentError) as err:
        bin_cast(cast, 1e-9, "pressure", argument="bin_size")
    assert err.value.argument == "bin_size" and "dbar" in err.value.reason
    assert " m " not in err.value.reason


def test_one_memory_model_up_front_and_in_binning():
    import pytest
    from hypothesis import given, settings
    from hypothesis import strategies as st

    from seaprofile import io
    from seaprofile.casts.binning import MAX_BINS, check_bin_count
    from seaprofile.io.options import FULL_OCEAN_DEPTH, check_build_options

    # `build --bin 0.002` passes the up-front check: it must pass binning's too
    check_build_options(bin_size=0.002)
    check_bin_count(FULL_OCEAN_DEPTH / 0.002 + 1, 0.002, FULL_OCEAN_DEPTH, "bin_size")
    assert MAX_BINS == io.MEMORY_LIMIT // io.outputs.BYTES_PER_BIN

    @settings(max_examples=50, deadline=None)
    @given(st.floats(1e-5, 1e-2))
    def same_answer(size):
        def refused(check):
            try:
                check()
            except io.MemoryLimitError:
                return True
            return False

        up_front = refused(lambda: check_build_options(bin_size=size))
        binning = refused(
            lambda: check_bin_count(FULL_OCEAN_DEPTH / size + 1, size, FULL_OCEAN_DEPTH, "bin_size")
        )
        assert up_front == binning

    same_answer()
    with pytest.raises(io.MemoryLimitError):
        check_bin_count(MAX_BINS + 1, 1e-4, 2000.0, "bin_size")
