"""build_profile, extend_to and compare_profiles."""

import gsw
import numpy as np
import pytest
import xarray as xr

from seaprofile import _cf
from seaprofile._validate import SeaprofileError
from seaprofile.casts import binning
from seaprofile.casts import process as pr
from seaprofile.casts.model import make_cast
from seaprofile.casts.qc import qc_summary
from seaprofile.profile import build_profile, compare_profiles, extend_to

LAT, LON = 30.0, -40.0


def ctd_cast(n=3000, pmax=300.0, seed=0):
    """Invented CTD cast with a soak, a descent at 24 Hz and an ascent."""
    rng = np.random.default_rng(seed)
    down = np.linspace(1.0, pmax, n)
    p = np.concatenate(
        [
            np.linspace(0, 8, 50),
            np.full(100, 8.0),
            np.linspace(8, 1, 50),
            down,
            np.linspace(pmax, 0.0, n // 2),
        ]
    )
    t = 6.0 + 14.0 * np.exp(-p / 100.0) + rng.normal(0, 1e-4, p.size)
    s = 35.2 - 0.6 * np.exp(-p / 100.0)
    return make_cast(
        pressure=p,
        temperature=t,
        salinity=s,
        elapsed_time=np.arange(p.size) / 24,
        latitude=LAT,
        longitude=LON,
        cast_name="invented-1",
    )


def test_build_profile_steps_in_order_and_input_unchanged():
    cast = ctd_cast()
    before = cast.copy(deep=True)
    prof = build_profile(cast)
    xr.testing.assert_identical(cast, before)
    steps = [s["step"] for s in _cf.steps_of(prof.attrs)]
    assert steps == [
        "remove_soak",
        "select_direction",
        "remove_reversals",
        "add_depth",
        "quality_control",
        "despike",
        "bin_cast",
        "fill_gaps",
        "add_sound_speed",
        "quality_control",
    ]
    assert prof.attrs["equation"] == "chen_millero1977"
    assert prof.attrs["featureType"] == "profile"
    assert (np.diff(prof["depth"].values) > 0).all()
    assert set(np.unique(prof["sound_speed_qc"].values)) == {1}
    assert prof["samples_per_bin"].values.sum() > 0.9 * 3000


def test_build_profile_with_faults_keeps_clean_bins():
    cast = ctd_cast()
    clean = build_profile(cast)
    t = cast["temperature"].values.copy()
    s = cast["salinity"].values.copy()
    t[1000] += 9.0  # spike
    s[2000] = 60.0  # out of range
    faulty = cast.copy()
    faulty["temperature"] = faulty["temperature"].copy(data=t)
    faulty["salinity"] = faulty["salinity"].copy(data=s)
    prof = build_profile(faulty)
    # both faults flagged on the samples, so the bins match the clean build closely
    np.testing.assert_allclose(prof["sound_speed"].values, clean["sound_speed"].values, atol=0.01)
    assert (prof["sound_speed_qc"].values == 1).all()
    # the Argo tests run first and count the faults under their own names; despiking then
    # finds nothing left to flag (a flagged sample is never counted twice)
    summary = qc_summary(prof)
    assert summary["global_range"]["salinity"] == 1
    assert summary["spike"]["temperature"] == 1
    despiked = [st for st in _cf.steps_of(prof.attrs) if st["step"] == "despike"][0]
    assert despiked["flagged"] == {"temperature": 0, "salinity": 0}


def test_build_profile_xbt_and_svp():
    z_t = np.arange(0.0, 120.0, 0.6)
    xbt = make_cast(
        elapsed_time=z_t,
        temperature=18.0 - 0.05 * z_t,
        instrument="xbt",
        latitude=LAT,
        longitude=LON,
    )
    prof = build_profile(xbt)
    assert prof.attrs["salinity_assumed"] == "yes"
    assert np.isfinite(prof["sound_speed"].values).all()
    p = np.linspace(0.5, 50.0, 500)
    svp = make_cast(
        pressure=p,
        measured_sound_speed=1500.0 + 0.1 * p,
        instrument="svp",
        latitude=LAT,
        longitude=LON,
    )
    prof = build_profile(svp)
    assert prof.attrs["equation"] == "measured"
    with pytest.raises(SeaprofileError, match="latitude"):
        build_profile(
            make_cast(pressure=p, temperature=np.full(500, 10.0), salinity=np.full(500, 35.0))
        )


def test_extend_constant_ts_is_pressure_only():
    from seaprofile.profile import LongExtensionWarning

    prof = build_profile(ctd_cast(), equation="teos10")
    with pytest.warns(LongExtensionWarning):  # 202 m below a 298 m cast
        out = extend_to(prof, 500.0)
    z = out["depth"].values
    cast_max = prof.attrs["cast_max_depth"]
    assert out.attrs["cast_max_depth"] == cast_max and z[-1] == 500.0
    below = z > cast_max
    assert (out["sound_speed_qc"].values[below] == 8).all()
    assert (out["temperature_qc"].values[below] == 8).all()
    assert (out["sound_speed_qc"].values[~below] == 1).all()
    assert (out["samples_per_bin"].values[below] == 0).all()
    # constant T and S: sound speed grows with pressure only; TEOS-10 via gsw, computed
    # independently from the last measured T and S (agreement to round-off)
    t = prof["temperature"].values[-1]
    s = prof["salinity"].values[-1]
    p = out["pressure"].values[below]
    sa = gsw.SA_from_SP(s, p, LON, LAT)
    expected = gsw.sound_speed(sa, gsw.CT_from_t(sa, t, p), p)
    np.testing.assert_allclose(out["sound_speed"].values[below], expected, atol=1e-9)
    assert (np.diff(out["sound_speed"].values[below]) > 0).all()
    xr.testing.assert_identical(out.isel(depth=~below).drop_attrs(), prof.drop_attrs())


def test_extend_with_reference_joins_continuously():
    # Behaviour changed on purpose: the cast's offset from the reference at the join used to
    # be carried all the way down (the reference shifted to meet the cast); it now fades to
    # zero over join_blend (100 m), and the reference's water is used as measured below.
    prof = build_profile(ctd_cast(pmax=200.0))
    zr = np.arange(0.0, 1001.0, 5.0)
    ref = make_cast(
        depth=zr,
        temperature=3.0 + 15.0 * np.exp(-zr / 150.0),
        salinity=np.full(zr.size, 35.0),
        latitude=LAT,
        longitude=LON,
    )
    ref = binning.add_sound_speed(binning.bin_cast(pr.add_depth(ref), 5.0))
    out = extend_to(prof, 800.0, reference=ref)
    c = out["sound_speed"].values
    z = out["depth"].values
    last = np.flatnonzero(z <= prof.attrs["cast_max_depth"])[-1]
    assert abs(c[last + 1] - c[last]) < 0.5  # joins: one bin's worth of change
    t = out["temperature"].values
    tr = np.interp(z, ref["depth"].values, ref["temperature"].values)
    offset = t[last] - tr[last]
    assert abs(offset) > 0.05  # the two casts differ at the join
    # linear fade of the offset over 100 m, then the reference's temperature as measured
    below = z > z[last]
    fade = np.clip(1 - (z[below] - z[last]) / 100.0, 0, 1)
    np.testing.assert_allclose(t[below], tr[below] + offset * fade, atol=1e-9)
    assert "fading to zero over 100 m" in out.attrs["extension_join"]
    assert out.attrs["extension_reference"] == ref.attrs["cast_name"]
    with pytest.raises(SeaprofileError, match="reference"):
        extend_to(prof, 2000.0, reference=ref)


def test_compare_profiles():
    a = build_profile(ctd_cast(seed=1))
    b = a.copy()
    b["sound_speed"] = b["sound_speed"] + 0.5
    d = compare_profiles(a, b)
    np.testing.assert_allclose(d["sound_speed_difference"].values, -0.5, atol=1e-9)
    assert d.attrs["max_abs_difference"] == pytest.approx(0.5)


def test_long_constant_extension_warns_and_reference_does_not():
    # common practice, no source: holding the last temperature far below the data makes
    # the deep water too warm; users are told and pointed to a deeper reference profile
    from seaprofile.profile import LongExtensionWarning, extend_to

    prof = build_profile(ctd_cast())
    last = float(prof["depth"].max())
    with pytest.warns(LongExtensionWarning, match="constant temperature and salinity"):
        extend_to(prof, last + 2000.0)
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error", LongExtensionWarning)
        extend_to(prof, last + 50.0)


@pytest.mark.parametrize("bad", [-5.0, 0.0, 12000.5, 1e7, np.nan, np.inf, "deep"])
def test_extension_depth_is_validated(bad):
    prof = build_profile(ctd_cast())
    with pytest.raises(SeaprofileError, match="bottom_depth"):
        extend_to(prof, bad)
    with pytest.raises(SeaprofileError, match="extend_to"):
        build_profile(ctd_cast(n=300), extend_to=bad)


@pytest.mark.parametrize("bad", [np.inf, np.nan, 0.0, -1.0])
def test_bin_size_is_validated(bad):
    with pytest.raises(SeaprofileError, match="bin_size"):
        build_profile(ctd_cast(n=300), bin_size=bad)


def test_tiny_bin_size_names_the_memory():
    with pytest.raises(SeaprofileError, match=r"bin_size: .* needs .* GB"):
        build_profile(ctd_cast(n=300), bin_size=1e-7)


def test_out_of_range_extension_is_flagged_bad_not_estimated():
    # warm salty water held down to 11000 m: TEOS-10 (gsw) gives far above the 1700 m/s
    # window there, so those added levels must not pass as usable estimates
    z = np.arange(1.0, 101.0)
    cast = make_cast(
        depth=z,
        temperature=30.0 - 0.001 * z,
        salinity=40.0 + 0.001 * z,
        latitude=LAT,
        longitude=LON,
    )
    prof = build_profile(cast, equation="teos10")
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        out = extend_to(prof, 11000.0)
    c, f = out["sound_speed"].values, out["sound_speed_qc"].values
    added = out["depth"].values > 100.0
    assert (f[added & (c > 1700.0)] == 4).any()
    assert (f[added & (c > 1700.0)] == 4).all() and (f[added & (c <= 1700.0)] == 8).all()
    assert _cf.steps_of(out.attrs)[-1]["out_of_range"]["sound_speed"] > 0


def test_extend_to_bottom_needs_a_bottom_depth():
    cast = ctd_cast(n=300)
    with pytest.raises(SeaprofileError, match="bottom_depth"):
        build_profile(cast, extend_to="bottom")
    cast.attrs["bottom_depth"] = "320"
    prof = build_profile(cast, extend_to="bottom")
    assert prof["depth"].values[-1] == 320.0 and prof.attrs["bottom_depth"] == 320.0
    assert "extended" in prof.attrs["assumptions"]


def test_replacement_salinity_for_a_failed_channel():
    cast = ctd_cast(n=600)
    s = cast["salinity"].values.copy()
    s[:] = 34.9  # the channel stuck at one value: the stuck-value test flags it all
    failed = cast.copy()
    failed["salinity"] = failed["salinity"].copy(data=s)
    assert not np.isfinite(build_profile(failed)["sound_speed"].values).any()
    prof = build_profile(failed, replacement_salinity=35.1, equation="teos10")
    assert (prof["salinity"].values == 35.1).all()
    assert (prof["salinity_qc"].values == 8).all() and (prof["sound_speed_qc"].values == 8).all()
    # TEOS-10 via gsw, independently, at the replacement salinity (round-off agreement)
    t, p = prof["temperature"].values, prof["pressure"].values
    sa = gsw.SA_from_SP(35.1, p, LON, LAT)
    np.testing.assert_allclose(
        prof["sound_speed"].values, gsw.sound_speed(sa, gsw.CT_from_t(sa, t, p), p), atol=1e-9
    )
    assert "salinity replaced: assumed constant 35.1" in prof.attrs["assumptions"]
    steps = [st["step"] for st in _cf.steps_of(prof.attrs)]
    assert steps.index("despike") < steps.index("replace_salinity")
    every = build_profile(cast, replacement_salinity=35.1, replace_salinity="all")
    assert (every["salinity"].values == 35.1).all()
    assert "everywhere" in every.attrs["salinity_replaced"]
    with pytest.raises(SeaprofileError, match="replace_salinity"):
        build_profile(cast, replacement_salinity=35.0, replace_salinity="most")


def test_wild_pressure_is_flagged_quietly():
    import warnings

    p = np.arange(1.0, 200.0)
    p[80] = 1e9
    z = np.arange(1.0, 200.0)
    cast = make_cast(
        pressure=p,
        temperature=6.0 + 14.0 * np.exp(-z / 100),
        salinity=35.0 + 0.001 * z,
        latitude=LAT,
        longitude=LON,
    )
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no numpy overflow warning reaches the user
        prof = build_profile(cast)
    assert qc_summary(prof)["global_range"]["pressure"] == 1
    assert prof.attrs["cast_max_depth"] > 190.0  # the rest of the cast was kept
    assert np.isfinite(prof["sound_speed"].values).all()


def test_validators_name_the_option_they_are_given():
    # for the command line: the same checks, naming its options
    from seaprofile.casts.binning import check_step
    from seaprofile.profile import check_bottom_depth

    with pytest.raises(SeaprofileError, match="--extend-to"):
        check_bottom_depth("1e9", "--extend-to")
    with pytest.raises(SeaprofileError, match="--bin"):
        check_step("inf", "--bin")
    assert check_bottom_depth("4800", "--extend-to") == 4800.0


@pytest.mark.parametrize("path", ["made", "read"])
def test_salinity_from_a_failed_conductivity_is_not_binned(tmp_path, path):
    # Invented cast: a mixed layer (20 degC, S 34.5) to 60 dbar over a thermocline,
    # sampled every 0.25 dbar. At 30 dbar both sensors glitch: temperature 0.1 degC low and
    # conductivity low enough to give a salinity 0.015 low. Despiking flags the
    # temperature and the conductivity (beyond their floors of 0.05), but the salinity
    # computed from them moves by less than its own floor (0.02) and no Argo threshold,
    # nor the density test (the glitch makes the water denser by 0.015 kg m-3, gsw, under
    # its threshold of 0.03), looks at it by itself. Its inputs failed, so it must not be binned.
    p = np.arange(1.0, 201.0, 0.25)
    t = np.where(p < 60.0, 20.0, 20.0 - 12.0 * (1 - np.exp(-(p - 60.0) / 50.0)))
    s = np.where(p < 60.0, 34.5, 34.5 + 0.5 * (1 - np.exp(-(p - 60.0) / 50.0)))
    k = int(np.flatnonzero(p == 30.0)[0])
    t[k] -= 0.1
    s[k] -= 0.015
    c = gsw.C_from_SP(s, t, p)
    if path == "made":
        cast = make_cast(pressure=p, temperature=t, conductivity=c, latitude=LAT, longitude=LON)
    else:
        from seaprofile.casts.read import read_cast

        f = tmp_path / "conductivity.csv"
        rows = "".join(
            f"{a!r},{b!r},{d!r}\n" for a, b, d in zip(p.tolist(), t.tolist(), c.tolist())
        )
        f.write_text(f"# latitude: {LAT}\n# longitude: {LON}\npres,temp,cond\n" + rows)
        cast = read_cast(f)
    prof = build_profile(cast)
    despiked = [st for st in _cf.steps_of(prof.attrs) if st["step"] == "despike"][0]
    assert despiked["flagged"]["conductivity"] == 1
    assert despiked["flagged"]["salinity"] == 0
    # the 30 m bin (29.5..30.5 m, four samples around 30 dbar) holds only mixed-layer
    # water once the glitch is left out; with it the mean would be 34.5 - 0.015 / 4
    assert prof["salinity"].sel(depth=30.0).item() == pytest.approx(34.5, abs=1e-9)
    assert prof["temperature"].sel(depth=30.0).item() == pytest.approx(20.0, abs=1e-9)


# --- gaps without data (review finding 1) ----------------------------------------------
def dense_cast_with_a_hole(top=100.0, bottom=400.0):
    """Invented 0.5 m CTD cast to 600 m with no data from ``top`` to ``bottom`` m."""
    z = np.arange(1.0, 600.0, 0.5)
    z = z[(z < top) | (z > bottom)]
    t = 4.0 + 14.0 * np.exp(-z / 150.0)
    s = 35.0 - 0.4 * np.exp(-z / 150.0)
    return make_cast(
        depth=z, temperature=t, salinity=s, latitude=LAT, longitude=LON, cast_name="invented-hole"
    )


def test_data_loss_in_a_dense_cast_stays_missing_and_is_reported():
    import warnings

    from seaprofile.casts.binning import LargeGapWarning
    from seaprofile.propagation.environment import Environment

    with pytest.warns(LargeGapWarning, match="left missing"):
        prof = build_profile(dense_cast_with_a_hole())
    z, c, f = (prof[v].values for v in ("depth", "sound_speed", "sound_speed_qc"))
    hole = (z > 101.0) & (z < 399.0)
    assert hole.sum() > 250
    assert np.isnan(c[hole]).all() and (f[hole] == _cf.MISSING).all()
    assert not (f == _cf.ESTIMATED).any()  # nothing invented
    # the levels with data around it: the 1 m bins at about 100 and 400 m
    assert 298.0 <= prof.attrs["largest_gap"] <= 302.0
    assert prof.attrs["filled_gaps"] == "none"
    assert prof.attrs["unfilled_gaps"].endswith(" m") and "-" in prof.attrs["unfilled_gaps"]
    assert "left missing (flag 9" in prof.attrs["assumptions"]
    # rays leave the missing levels out (documented: the gap is reported, not hidden)
    env = Environment.from_profile(prof)
    assert env is not None
    # the explicit override fills everything, flagged 8, and still warns
    with pytest.warns(LargeGapWarning, match="straight line"):
        full = build_profile(dense_cast_with_a_hole(), max_gap=None)
    assert np.isfinite(full["sound_speed"].values).all()
    assert (full["sound_speed_qc"].values[hole] == _cf.ESTIMATED).all()
    assert full.attrs["unfilled_gaps"] == "none"
    # a short loss (3 m) in the same dense cast is filled without a warning
    with warnings.catch_warnings():
        warnings.simplefilter("error", LargeGapWarning)
        small = build_profile(dense_cast_with_a_hole(200.0, 203.0))
    assert np.isfinite(small["sound_speed"].values).all()
    assert small.attrs["unfilled_gaps"] == "none"


def test_bottle_cast_stays_joined_with_the_default_gap_rule():
    z = np.arange(5.0, 500.0, 50.0)  # bottles 50 m apart: 3 x 50 m > each 49 m gap
    cast = make_cast(
        depth=z,
        temperature=4.0 + 14.0 * np.exp(-z / 150.0),
        salinity=35.0 - 0.4 * np.exp(-z / 150.0),
        latitude=LAT,
        longitude=LON,
    )
    import warnings

    from seaprofile.casts.binning import LargeGapWarning

    with warnings.catch_warnings():  # the ordinary spacing of bottles: no gap warning
        warnings.simplefilter("error", LargeGapWarning)
        prof = build_profile(cast)
    assert np.isfinite(prof["sound_speed"].values).all()
    assert prof.attrs["unfilled_gaps"] == "none"
    assert prof.attrs["largest_gap"] == pytest.approx(50.0)


def test_max_gap_checked_naming_it():
    from seaprofile.io import ArgumentError

    for bad in (-1.0, "wide", np.nan):
        with pytest.raises(ArgumentError) as err:
            build_profile(ctd_cast(), max_gap=bad)
        assert err.value.argument == "max_gap"


# --- the join to a reference (finding 2) -----------------------------------------------
def test_join_to_a_reference_keeps_the_references_channel_axis():
    from pathlib import Path

    from seaprofile import read_cast
    from seaprofile.layers import describe

    demo = Path(__file__).resolve().parents[1] / "demo_casts"
    ref = build_profile(read_cast(demo / "deep_ocean_ctd.csv"))
    xbt = build_profile(read_cast(demo / "xbt_drop.csv"), extend_to=3000.0, reference=ref)
    # the reference's own axis, independently: the depth of its least usable sound speed
    ok = _cf.usable(ref["sound_speed"].values, ref["sound_speed_qc"].values)
    axis = ref["depth"].values[ok][np.argmin(ref["sound_speed"].values[ok])]
    assert xbt.attrs["join_depth"] < axis  # the probe ends above the axis
    # within a few metres (3 m: three 1 m bins; common practice, no source)
    assert abs(describe(xbt)["channel_axis_depth"] - axis) <= 3.0
    # no step at the join: the largest change between 1 m levels near it stays that of
    # the water around it (under 0.05 m/s per m here; before the fix 0.21 m/s)
    z, c = xbt["depth"].values, xbt["sound_speed"].values
    near = (z > xbt.attrs["join_depth"] - 5) & (z < xbt.attrs["join_depth"] + 5)
    assert np.abs(np.diff(c[near])).max() < 0.05


# --- the join depth (finding 6) --------------------------------------------------------
def test_assumptions_name_the_real_join_depth():
    cast = ctd_cast()
    prof = build_profile(cast)
    # the deepest 20 bins bad: the extension starts above cast_max_depth
    f = prof["sound_speed_qc"].values.copy()
    f[-20:] = _cf.BAD
    prof["sound_speed_qc"].values[:] = f
    join = float(prof["depth"].values[-21])
    out = extend_to(prof, 500.0)
    assert out.attrs["join_depth"] == join
    assert out.attrs["cast_max_depth"] > join
    assert f"extended {join:.0f}-500 m" in out.attrs["assumptions"]


def test_bottom_above_the_data_is_recorded():
    prof = build_profile(ctd_cast())
    out = extend_to(prof, 200.0)
    assert out.attrs["bottom_depth"] == 200.0
    assert "below the sea-floor depth given (200 m)" in out.attrs["data_below_bottom"]
    assert out.attrs["data_below_bottom"] in out.attrs["assumptions"]
    assert out.sizes["depth"] == prof.sizes["depth"]


# --- errors naming their argument (finding 3) ------------------------------------------
def test_errors_name_the_argument():
    from seaprofile.io import ArgumentError

    cast = ctd_cast()
    with pytest.raises(ArgumentError) as err:
        build_profile(cast, bin_size=0.0)
    assert err.value.argument == "bin_size" and "bin_size" not in err.value.reason
    nowhere = cast.assign_coords(latitude=np.nan)
    with pytest.raises(ArgumentError) as err:
        build_profile(nowhere)
    assert err.value.argument == "latitude" and "latitude" not in err.value.reason.split(":")[0]
    with pytest.raises(ArgumentError) as err:
        build_profile(cast, extend_to=-3.0)
    assert err.value.argument == "extend_to"
    with pytest.raises(ArgumentError) as err:
        build_profile(cast, extend_to="bottom")
    assert err.value.argument == "extend_to"
    speed = make_cast(
        depth=np.arange(1.0, 100.0),
        measured_sound_speed=1500 + 0.01 * np.arange(1.0, 100.0),
        instrument="svp",
        latitude=LAT,
    )
    with pytest.raises(ArgumentError) as err:
        build_profile(speed, extend_to=500.0)
    assert err.value.argument == "reference"


# --- one helper for interpolated levels (finding 8) ------------------------------------
def test_interpolated_levels_counted_once_for_every_text():
    from seaprofile.batch import assumptions, short_assumptions, usable_bins
    from seaprofile.profile import interpolated_levels

    z = np.arange(5.0, 300.0, 25.0)
    cast = make_cast(
        depth=z,
        temperature=4.0 + 14.0 * np.exp(-z / 150.0),
        salinity=35.0 - 0.4 * np.exp(-z / 150.0),
        latitude=LAT,
        longitude=LON,
    )
    prof = build_profile(cast)
    n, total = interpolated_levels(prof)
    assert n == int((prof["samples_per_bin"].values == 0).sum()) and total == prof.sizes["depth"]
    assert f"{n} of {total} levels interpolated" in prof.attrs["assumptions"]
    assert f"{n} levels interpolated" in short_assumptions(prof)
    bare = prof.copy()
    del bare.attrs["assumptions"]
    assert f"{n} of {total} levels interpolated" in "; ".join(assumptions(bare))
    ok = _cf.usable(prof["sound_speed"].values, prof["sound_speed_qc"].values)
    assert usable_bins(prof) == int(ok.sum())
