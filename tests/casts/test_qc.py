"""Quality-control tests: Argo thresholds, injected faults, flag order."""

import json

import gsw
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import _cf
from seaprofile.casts import qc
from seaprofile.casts.model import make_cast

FLAGS = [0, 1, 2, 3, 4, 5, 8, 9]
# severity used by raise_flags: Argo order 0 < 1 < 2 < 3 < 4, with 5 between 2 and 3
RANK = {0: 0, 1: 1, 2: 2, 5: 3, 3: 4, 4: 5}


def clean_cast(n=400, pmax=1000.0, **kw):
    """Stably stratified invented cast: warm, fresh surface over cold, salty deep water."""
    p = np.linspace(1.0, pmax, n)
    t = 4.0 + 16.0 * np.exp(-p / 150.0)
    s = 35.0 - 1.0 * np.exp(-p / 150.0)
    return make_cast(pressure=p, temperature=t, salinity=s, latitude=30.0, longitude=-40.0, **kw)


def five_levels(values, pressure, var="temperature"):
    """Five levels, the middle one holding ``values``' middle entry (for neighbour tests)."""
    kw = {var: values, "pressure": pressure}
    return make_cast(**kw)


# --- global range -----------------------------------------------------------------------
def test_global_range_edges():
    # Argo QC manual (doi:10.13155/33951) test 6: T -2.5..40 degC, S 2..41; values *outside*
    # fail, the limits themselves pass
    t = [-2.5, 40.0, -2.5000001, 40.0000001, 10.0]
    s = [2.0, 41.0, 1.9999999, 41.0000001, 35.0]
    cast = make_cast(pressure=[1, 2, 3, 4, 5.0], temperature=t, salinity=s)
    out = qc.global_range(cast)
    assert out["temperature_qc"].values.tolist() == [0, 0, 4, 4, 0]
    assert out["salinity_qc"].values.tolist() == [0, 0, 4, 4, 0]
    assert qc.qc_summary(out)["global_range"]["temperature"] == 2


# --- spike ------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "var, shallow, deep",
    # Argo QC manual test 9: T 6.0 degC (p < 500 dbar) / 2.0 degC (p >= 500 dbar);
    # S 0.9 / 0.3; the test value must *exceed* the threshold to fail
    [("temperature", 6.0, 2.0), ("salinity", 0.9, 0.3)],
)
@pytest.mark.parametrize("p0, which", [(100.0, 0), (498.0, 0), (500.0, 1), (1500.0, 1)])
def test_spike_threshold_edges(var, shallow, deep, p0, which):
    threshold = (shallow, deep)[which]
    base = 10.0 if var == "temperature" else 35.0
    p = p0 - 2.0 + np.arange(5.0)  # the middle level sits at p0
    at = np.array([base, base, base + threshold, base, base])
    above = at.copy()
    above[2] += 1e-6
    # flat neighbours: test value = |V2 - V1| exactly
    assert qc.spike(five_levels(at, p, var))[f"{var}_qc"].values[2] == 0
    assert qc.spike(five_levels(above, p, var))[f"{var}_qc"].values[2] == 4


def test_spike_test_value_formula():
    # Argo test value |V2 - (V3+V1)/2| - |(V3-V1)/2|: a level on a steep but monotone gradient
    # has test value 0 (V2 midway) and is never a spike, however large the step
    t = [20.0, 15.0, 10.0, 5.0, 4.0]
    out = qc.spike(make_cast(pressure=[1, 2, 3, 4, 5.0], temperature=t))
    assert (out["temperature_qc"].values == 0).all()


def test_gradient_edges_and_off_by_default():
    # Argo QC manual before 2019, test 11: |V2 - (V3+V1)/2| > 9.0 degC (p < 500 dbar)
    # from memory
    p = np.arange(5.0) + 10
    t_at = [10.0, 10.0, 19.0, 10.0, 10.0]
    t_above = [10.0, 10.0, 19.000001, 10.0, 10.0]
    assert qc.gradient(five_levels(t_at, p))["temperature_qc"].values[2] == 0
    assert qc.gradient(five_levels(t_above, p))["temperature_qc"].values[2] == 4
    assert "gradient" not in qc.DEFAULT_TESTS


# --- stuck value ------------------------------------------------------------------------
def test_stuck_value_whole_cast_and_runs():
    cast = clean_cast(50)
    stuck = cast.copy()
    stuck["temperature"] = stuck["temperature"].copy(data=np.full(50, 12.5))
    out = qc.stuck_value(stuck)
    assert (out["temperature_qc"].values == 4).all()
    assert (out["salinity_qc"].values == 0).all()
    assert qc.qc_summary(out)["stuck_value"] == {"temperature": 50, "salinity": 0}
    # a run of 10 identical values inside a varying record, only with run_length
    t = cast["temperature"].values.copy()
    t[20:30] = t[20]
    runs = cast.copy()
    runs["temperature"] = runs["temperature"].copy(data=t)
    assert (qc.stuck_value(runs)["temperature_qc"].values == 0).all()
    f = qc.stuck_value(runs, run_length=10)["temperature_qc"].values
    assert np.flatnonzero(f == 3).tolist() == list(range(20, 30))
    assert (qc.stuck_value(runs, run_length=11)["temperature_qc"].values == 0).all()


# --- pressure increasing ----------------------------------------------------------------
def test_pressure_increasing_flags_constant_and_reversed_parts():
    # Argo QC manual test 8: all but the first of a run of constant pressure, and the whole
    # reversed part, are flagged bad
    p = [1.0, 2.0, 3.0, 3.0, 3.0, 4.0, 3.5, 3.8, 4.0, 4.5, 5.0]
    out = qc.pressure_increasing(make_cast(pressure=p, temperature=np.arange(11.0)))
    assert np.flatnonzero(out["pressure_qc"].values == 4).tolist() == [3, 4, 6, 7, 8]
    assert (out["temperature_qc"].values == 0).all()


# --- density inversion ------------------------------------------------------------------
def _sigma_difference(t, s, p, lat=30.0, lon=-40.0):
    sa = gsw.SA_from_SP(s, p, lon, lat)
    sig = gsw.sigma0(sa, gsw.CT_from_t(sa, t, p))
    return sig[0] - sig[1]


def test_density_inversion_threshold():
    # Argo QC manual test 14: an inversion that *exceeds* the threshold (0.03 kg/m3) fails;
    # sigma0 computed independently with gsw (TEOS-10)
    t = np.array([15.0, 15.0])
    s = np.array([35.0, 34.95])
    p = np.array([100.0, 101.0])
    d = _sigma_difference(t, s, p)
    assert 0.03 < d < 0.05
    cast = make_cast(pressure=p, temperature=t, salinity=s, latitude=30.0, longitude=-40.0)
    hit = qc.density_inversion(cast, threshold=d * 0.999)
    miss = qc.density_inversion(cast, threshold=d * 1.001)
    assert hit["salinity_qc"].values.tolist() == [0, 4]
    assert hit["temperature_qc"].values.tolist() == [0, 4]
    assert (miss["salinity_qc"].values == 0).all()


# --- injected faults --------------------------------------------------------------------
def test_injected_faults_are_flagged_and_nothing_else():
    cast = clean_cast(400)
    t = cast["temperature"].values.copy()
    s = cast["salinity"].values.copy()
    p = cast["pressure"].values.copy()
    t[50] += 8.0  # spike at ~125 dbar (threshold 6 degC)
    s[300] = 45.0  # out of range
    p[200:203] = p[197]  # pressure reversal / stall: 3 samples not deeper than sample 197
    s[120] -= 0.2  # fresher, lighter parcel: density inversion (~0.15 kg/m3) but no S spike
    faulty = make_cast(pressure=p, temperature=t, salinity=s, latitude=30.0, longitude=-40.0)
    before = faulty.copy(deep=True)
    out = qc.run_qc(faulty)
    xr.testing.assert_identical(faulty, before)  # input unchanged
    ft, fs, fp = (out[f"{v}_qc"].values for v in ("temperature", "salinity", "pressure"))
    assert np.flatnonzero(ft == 4).tolist() == [50, 120]
    assert np.flatnonzero(fs == 4).tolist() == [120, 300]
    assert np.flatnonzero(fp == 4).tolist() == [200, 201, 202]
    for f in (ft, fs, fp):  # every other sample passed and is marked good
        assert set(np.unique(f)) == {1, 4}
    summary = qc.qc_summary(out)
    assert summary["spike"]["temperature"] == 1
    assert summary["global_range"]["salinity"] == 1
    assert summary["pressure_increasing"]["pressure"] == 3
    assert summary["density_inversion"]["salinity"] == 1
    assert json.loads(out.attrs["qc_summary"]) == summary
    assert _cf.steps_of(out.attrs)[-1]["step"] == "quality_control"
    assert out["temperature"].values.size == 400  # nothing deleted
    np.testing.assert_array_equal(out["temperature"].values, t)


def test_bad_temperature_flags_salinity_from_conductivity():
    cast = clean_cast(100)
    t = cast["temperature"].values.copy()
    t[40] = 55.0
    c = gsw.C_from_SP(cast["salinity"].values, t, cast["pressure"].values)
    ds = make_cast(
        pressure=cast["pressure"].values,
        temperature=t,
        salinity=gsw.SP_from_C(c, t, cast["pressure"].values),
        conductivity=c,
    )
    out = qc.run_qc(ds, ["global_range"])
    assert out["temperature_qc"].values[40] == 4
    assert out["salinity_qc"].values[40] == 4
    assert np.count_nonzero(out["salinity_qc"].values == 4) == 1
    assert qc.qc_summary(out)["bad_input"]["salinity"] == 1


def test_sound_speed_range_edges():
    # plausibility window 1400..1700 m/s: common practice, no source; limits pass. The upper
    # end was 1650 m/s, below the deepest water: TEOS-10 (gsw) gives 1665.6 m/s at
    # 12000 dbar, 2.5 degC, S 34.7 (checked in test_sound_speed_range_holds_deep_water)
    cast = make_cast(pressure=[1, 2, 3, 4.0], measured_sound_speed=[1400.0, 1700.0, 1399.9, 1700.1])
    out = qc.sound_speed_range(cast)
    assert out["measured_sound_speed_qc"].values.tolist() == [0, 0, 4, 4]


def test_assumed_salinity_is_not_tested():
    cast = clean_cast(30)
    ds = cast.copy()
    ds["salinity"] = ds["salinity"].copy(data=np.full(30, 35.0))
    ds.attrs["salinity_assumed"] = "yes"
    out = qc.run_qc(ds)
    assert (out["salinity_qc"].values == 0).all()
    assert (out["temperature_qc"].values == 1).all()


def test_unknown_test_name():
    with pytest.raises(qc.SeaprofileError, match="unknown test"):
        qc.run_qc(clean_cast(10), ["nonsense"])


# --- flags never lowered -------------------------------------------------------------------------
@settings(max_examples=40, deadline=None)
@given(st.data())
def test_run_qc_never_lowers_flags(data):
    n = 60
    cast = clean_cast(n)
    rng = np.random.default_rng(data.draw(st.integers(0, 2**31)))
    ds = cast.copy()
    t = ds["temperature"].values + rng.normal(0, 3.0, n)  # noisy: spikes and inversions
    ds["temperature"] = ds["temperature"].copy(data=t)
    old = {}
    for v in ("temperature", "salinity", "pressure"):
        old[v] = np.array(
            data.draw(st.lists(st.sampled_from(FLAGS), min_size=n, max_size=n)), np.int8
        )
        ds[f"{v}_qc"] = ds[f"{v}_qc"].copy(data=old[v])
    out = qc.run_qc(ds)
    for v in old:
        new = out[f"{v}_qc"].values
        keep = np.isin(old[v], (8, 9))
        np.testing.assert_array_equal(new[keep], old[v][keep])
        ranks_old = np.array([RANK[int(f)] for f in old[v][~keep]])
        ranks_new = np.array([RANK.get(int(f), -1) for f in new[~keep]])
        assert (ranks_new >= ranks_old).all()
        assert not (new == 0).any()  # every variable was examined: 0 became 1


def test_tests_and_thresholds_are_public_in_qc():
    # the tests and their default thresholds are defined in the private module
    # seaprofile.casts._qc_tests; seaprofile.casts.qc is their public home
    from seaprofile.casts import _qc_tests

    for name in (
        "GLOBAL_RANGE",
        "SPIKE_THRESHOLDS",
        "GRADIENT_THRESHOLDS",
        "MAX_OCEAN_DEPTH",
        "SPLIT_PRESSURE",
        "SOUND_SPEED_RANGE",
        "STUCK_MIN_VALUES",
        *qc.TESTS,
    ):
        assert name in qc.__all__ and getattr(qc, name) is getattr(_qc_tests, name)


def test_stuck_value_spares_short_and_speed_only_profiles():
    # two or three identical planning nodes are not a stuck sensor (common practice, no
    # source: at least qc.STUCK_MIN_VALUES = 10 values are needed to call one stuck)
    for n in (2, 3, 9):
        cast = make_cast(
            pressure=np.linspace(0, 100, n), temperature=np.full(n, 10.0), salinity=np.full(n, 35.0)
        )
        out = qc.stuck_value(cast)
        assert (out["temperature_qc"].values == 0).all()
    cast = make_cast(pressure=np.linspace(0, 100, 10), temperature=np.full(10, 10.0))
    assert (qc.stuck_value(cast)["temperature_qc"].values == 4).all()
    # a constant measured sound speed at a few nodes is an isovelocity planning input
    nodes = make_cast(pressure=[0.0, 50.0, 100.0], measured_sound_speed=np.full(3, 1500.0))
    assert (qc.run_qc(nodes)["measured_sound_speed_qc"].values == 1).all()
    # ... and a short speed-only cast (under qc.STUCK_MIN_SPAN, 20 m) is spared too
    short = make_cast(pressure=np.linspace(0, 10, 50), measured_sound_speed=np.full(50, 1500.0))
    assert (qc.run_qc(short)["measured_sound_speed_qc"].values == 1).all()
    # but fifty samples of one value over 100 dbar are a stuck probe: the pressure term
    # alone raises sound speed by ~1.6 m/s there (Mackenzie 1981, J. Acoust. Soc. Am. 70,
    # 807-812: 1.630e-2 m/s per m), so the default test flags them (4)
    svp = make_cast(pressure=np.linspace(0, 100, 50), measured_sound_speed=np.full(50, 1500.0))
    assert (qc.run_qc(svp)["measured_sound_speed_qc"].values == 4).all()


def test_pressure_and_depth_range():
    # lower limit: Argo QC manual test 6 (-5 dbar); upper limit 12000 dbar / m, deeper than
    # any ocean: common practice, no source
    p = [-5.0, 12000.0, -5.1, 12000.1, 1e9]
    out = qc.global_range(make_cast(pressure=p, depth=p, temperature=np.full(5, 4.0)))
    assert out["pressure_qc"].values.tolist() == [0, 0, 4, 4, 4]
    assert out["depth_qc"].values.tolist() == [0, 0, 4, 4, 4]


def test_sound_speed_range_holds_deep_water():
    # TEOS-10 via gsw (IOC, SCOR & IAPSO 2010): the deepest water (12000 dbar, 2.5 degC,
    # S 34.7) and cold fresh surface water must pass the plausibility window
    sa = gsw.SA_from_SP([34.7, 0.0], [12000.0, 0.0], 0.0, 0.0)
    c = gsw.sound_speed(sa, gsw.CT_from_t(sa, [2.5, 0.0], [12000.0, 0.0]), [12000.0, 0.0])
    low, high = qc.SOUND_SPEED_RANGE
    assert low <= c.min() and c.max() <= high
