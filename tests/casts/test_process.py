"""Processing steps on a Cast: selection of samples, salinity, depth, despiking."""

from unittest import mock

import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import _cf
from seaprofile._validate import SeaprofileError
from seaprofile.casts import process as pr
from seaprofile.casts.despike import _full_windows, _median_at, _running_median, despike
from seaprofile.casts.model import make_cast


def soak_cast(rate_hz=8.0):
    """Invented cast: surface, soak at 10 dbar, back up to 1 dbar, descent to 200 dbar."""
    p = np.concatenate(
        [
            np.linspace(0.0, 10.0, 40),  # 0..39 down to the soak depth
            np.full(80, 10.0),  # 40..119 soak
            np.linspace(10.0, 1.0, 40),  # 120..159 back up
            np.linspace(1.0, 200.0, 800),  # 160..959 the descent
            np.linspace(200.0, 0.0, 400),  # 960..1359 the ascent
        ]
    )
    t = 20.0 - 0.05 * p
    return make_cast(
        pressure=p,
        temperature=t,
        salinity=np.full(p.size, 35.0),
        elapsed_time=np.arange(p.size) / rate_hz,
        latitude=30.0,
        longitude=-40.0,
    )


def test_remove_soak_finds_the_start_of_the_descent():
    cast = soak_cast()
    before = cast.copy(deep=True)
    out = pr.remove_soak(cast)
    xr.testing.assert_identical(cast, before)
    assert out.sizes["sample"] == cast.sizes["sample"] - 159
    assert out["pressure"].values[0] == pytest.approx(1.0)
    step = _cf.steps_of(out.attrs)[-1]
    assert step["step"] == "remove_soak" and step["removed_samples"] == 159


def test_remove_soak_without_soak_keeps_everything():
    p = np.linspace(0.5, 100.0, 200)
    cast = make_cast(pressure=p, temperature=np.full(200, 10.0))
    assert pr.remove_soak(cast).sizes["sample"] == 200


def test_select_direction():
    cast = pr.remove_soak(soak_cast())
    down = pr.select_direction(cast, "down")
    up = pr.select_direction(cast, "up")
    assert down.sizes["sample"] == 801 and down.attrs["cast_direction"] == "down"
    assert up.sizes["sample"] == 401
    assert _cf.steps_of(down.attrs)[-1]["removed_samples"] == 400
    with pytest.raises(SeaprofileError, match="direction"):
        pr.select_direction(cast, "sideways")


def test_remove_reversals_heave_loops():
    # a descent with two heave loops: 3 samples go back up, then 2 more until deeper again
    p = np.array([1, 2, 3, 4, 3.5, 3, 3.2, 3.9, 4.0, 4.1, 5, 6, 5.5, 6.5, 7.0])
    cast = make_cast(pressure=p, temperature=np.arange(15.0))
    out = pr.remove_reversals(cast, min_descent_rate=None)
    assert out["pressure"].values.tolist() == [1, 2, 3, 4, 4.1, 5, 6, 6.5, 7.0]
    assert _cf.steps_of(out.attrs)[-1]["removed_samples"] == 6
    assert (np.diff(out["pressure"].values) > 0).all()


def test_remove_reversals_slow_descent():
    # 1 dbar/s descent with a 10 s pause of the winch (0.05 dbar/s, below 0.25 dbar/s)
    t = np.arange(0.0, 60.0, 0.5)
    rate = np.where((t >= 20) & (t < 30), 0.05, 1.0)
    p = np.concatenate(([0.0], np.cumsum(rate[:-1] * 0.5)))
    cast = make_cast(pressure=p, temperature=np.full(t.size, 10.0), elapsed_time=t)
    out = pr.remove_reversals(cast, min_descent_rate=0.25, rate_window=1.0)
    kept_t = out["elapsed_time"].values
    assert not ((kept_t > 20.5) & (kept_t < 29.5)).any()
    assert _cf.steps_of(out.attrs)[-1]["slow_samples"] >= 18


def test_despike_flags_spikes_only():
    z = np.linspace(1, 300, 1500)
    t = 8.0 + 10.0 * 0.5 * (1 - np.tanh((z - 80.0) / 5.0))  # sharp thermocline, no spikes
    t_spiky = t.copy()
    idx = [100, 500, 501, 900]
    t_spiky[idx] += [0.5, -1.0, -1.0, 2.0]
    cast = make_cast(pressure=z, temperature=t_spiky, salinity=np.full(z.size, 35.0))
    out = despike(cast)
    assert np.flatnonzero(out["temperature_qc"].values == 4).tolist() == idx
    np.testing.assert_array_equal(out["temperature"].values, t_spiky)  # nothing deleted
    assert _cf.steps_of(out.attrs)[-1]["flagged"] == {"temperature": 4, "salinity": 0}
    clean = despike(make_cast(pressure=z, temperature=t))
    assert (clean["temperature_qc"].values == 0).all()


def test_running_median_matches_numpy():
    rng = np.random.default_rng(3)
    x = rng.normal(size=300)
    x[rng.random(300) < 0.2] = np.nan
    for half in (1, 3, 7):
        ref = [
            np.nanmedian(x[max(0, i - half) : i + half + 1])
            if np.isfinite(x[max(0, i - half) : i + half + 1]).any()
            else np.nan
            for i in range(x.size)
        ]
        np.testing.assert_allclose(_running_median(x, half), ref, rtol=0, atol=0)


@settings(max_examples=200, deadline=None)
@given(
    st.lists(st.floats(-50.0, 50.0), min_size=0, max_size=60),
    st.integers(1, 8),
    st.sampled_from([0.0, 0.5, 3.0, 30.0]),
)
def test_full_windows_matches_a_sliding_window(values, half, span):
    # invariant: the block-extremes kernel gives what numpy's max - min over every full
    # centred window gives (exact: extremes are values of the input)
    v = np.array(values, np.float64)
    ref = np.zeros(v.size, bool)
    if v.size >= 2 * half + 1:
        w = np.lib.stride_tricks.sliding_window_view(v, 2 * half + 1)
        ref[half : v.size - half] = (w.max(axis=1) - w.min(axis=1)) <= span
    np.testing.assert_array_equal(_full_windows(v, half, span), ref)


@settings(max_examples=200, deadline=None)
@given(
    st.lists(st.one_of(st.floats(-5.0, 5.0), st.just(np.nan)), min_size=1, max_size=60),
    st.integers(1, 8),
    st.data(),
)
def test_median_at_is_the_running_median_at_those_samples(values, half, data):
    # invariant: sorting each window afresh gives the sliding window's median bit for bit
    x = np.array(values, np.float64)
    at = np.array(data.draw(st.lists(st.integers(0, x.size - 1), max_size=10)), np.int64)
    expected = _running_median(x, half)[at]
    assert _median_at(x, half, at).tobytes() == expected.tobytes()


def test_add_depth_check_value_and_missing_latitude():
    cast = make_cast(pressure=[0.0, 10000.0], temperature=[0.0, 0.0])
    out = pr.add_depth(cast, latitude=30.0)
    # Fofonoff & Millard (1983), Unesco Tech. Pap. Mar. Sci. 44, p. 28: 9712.653 m at
    # 10000 dbar, 30 deg latitude (printed to 1 mm)
    assert out["depth"].values[1] == pytest.approx(9712.653, abs=5e-4)
    assert out.attrs["depth_method"] == "unesco1983"
    with pytest.raises(SeaprofileError, match="latitude"):
        pr.add_depth(cast)


def test_despike_spares_coarse_casts_and_window_ends():
    # a smooth tanh thermocline sampled every 10 m: a 15-sample window spans 140 m, too
    # coarse for a running median; before the fix thermocline samples were flagged 4
    z = np.arange(3.7, 1000.0, 10.0)
    t = 4.0 + 7.0 * (1.0 - np.tanh((z - 150.0) / 40.0))
    cast = make_cast(pressure=z, temperature=t, salinity=np.full(z.size, 35.0))
    out = despike(cast)
    assert (out["temperature_qc"].values == 0).all()
    step = _cf.steps_of(out.attrs)[-1]
    assert step["not_tested"] == {"temperature": z.size, "salinity": z.size}
    assert "Argo spike test" in step["not_tested_reason"]
    # a dense record: only the 7 values at each end lack a full window
    zd = np.linspace(1, 300, 1500)
    dense = despike(make_cast(pressure=zd, temperature=8.0 + 0.01 * zd))
    assert _cf.steps_of(dense.attrs)[-1]["not_tested"]["temperature"] == 14
    with pytest.raises(SeaprofileError, match="max_span"):
        despike(cast, max_span=0.0)


def test_despike_reports_where_it_flagged():
    z = np.linspace(1, 300, 1500)
    t = 8.0 + 0.01 * z
    t[700] += 1.0
    out = despike(make_cast(pressure=z, temperature=t))
    step = _cf.steps_of(out.attrs)[-1]
    assert step["flagged"] == {"temperature": 1}
    assert step["flagged_at"]["temperature"] == [pytest.approx(z[700])]


def test_replace_salinity_where_bad_and_everywhere():
    z = np.arange(1.0, 11.0)
    s = np.full(10, 35.0)
    s[[2, 5]] = [60.0, np.nan]
    cast = pr.add_depth(
        make_cast(depth=z, temperature=np.full(10, 10.0), salinity=s, latitude=30.0)
    )
    flags = cast["salinity_qc"].values.copy()
    flags[2] = 4
    cast["salinity_qc"] = cast["salinity_qc"].copy(data=flags)
    before = cast.copy(deep=True)
    out = pr.replace_salinity(cast, 34.2)
    xr.testing.assert_identical(cast, before)
    assert out["salinity"].values[[2, 5]].tolist() == [34.2, 34.2]
    assert out["salinity_qc"].values[[2, 5]].tolist() == [8, 8]
    assert np.delete(out["salinity"].values, [2, 5]).tolist() == [35.0] * 8
    assert "2 of 10 samples" in out.attrs["salinity_replaced"]
    step = _cf.steps_of(out.attrs)[-1]
    assert step["step"] == "replace_salinity" and step["replaced"] == 2
    every = pr.replace_salinity(cast, ([0.0, 10.0], [34.0, 35.0]), where="all")
    np.testing.assert_allclose(every["salinity"].values, 34.0 + 0.1 * z)
    assert (every["salinity_qc"].values == 8).all()
    no_s = pr.add_depth(make_cast(depth=z, temperature=np.full(10, 10.0), latitude=30.0))
    assert (pr.replace_salinity(no_s, 35.0)["salinity"].values == 35.0).all()
    with pytest.raises(SeaprofileError, match="where"):
        pr.replace_salinity(cast, 35.0, where="some")
    with pytest.raises(SeaprofileError, match="salinity"):
        pr.replace_salinity(cast, 99.0)


def test_a_wild_pressure_does_not_swallow_the_rest_of_the_cast():
    # before the fix a pressure of 1e9 dbar became the deepest point: everything after it
    # was taken for the ascent and dropped
    p = np.arange(1.0, 101.0)
    p[50] = 1e9
    cast = make_cast(pressure=p, temperature=np.linspace(20, 10, 100))
    out = pr.remove_reversals(pr.select_direction(pr.remove_soak(cast)))
    assert out.sizes["sample"] == 100
    assert _cf.steps_of(out.attrs)[-1]["kept_unusable_vertical"] == 1


def test_salinity_from_conductivity_flags_and_derivation():
    import gsw

    p = np.array([10.0, 20.0, 30.0, 40.0, 50.0])
    t = np.array([15.0, 14.0, 13.0, 12.0, 11.0])
    c = np.array([42.0, 41.0, np.nan, 40.0, 39.0])
    cast = make_cast(pressure=p, temperature=t, conductivity=c)
    flags = {
        "conductivity": [4, 0, 9, 1, 5],
        "temperature": [8, 0, 0, 3, 1],
        "pressure": [1, 0, 0, 5, 1],
    }
    for v, f in flags.items():
        cast[f"{v}_qc"] = cast[f"{v}_qc"].copy(data=np.array(f, np.int8))
    values, q = pr.salinity_and_flags(cast)
    # gsw (TEOS-10 library) SP_from_C: PSS-78, the reference implementation
    np.testing.assert_array_equal(values, gsw.SP_from_C(c, t, p))
    # worst flag in the order 0 < 1 < 2 < 5 < 8 < 3 < 4 < 9: a bad conductivity under an
    # estimated temperature stays bad (the largest number, 8, would hide it)
    assert q.tolist() == [4, 0, 9, 3, 5]
    out = pr.add_salinity(cast)
    assert out["salinity_qc"].values.tolist() == q.tolist()
    assert out["salinity"].attrs["derived_from"] == "conductivity temperature pressure"
    assert out.attrs["salinity_source"] == pr.SALINITY_SOURCE
    with pytest.raises(SeaprofileError, match="conductivity"):
        pr.salinity_and_flags(make_cast(pressure=p, temperature=t, salinity=t))


def test_despike_passes_a_bad_conductivity_on_to_its_salinity():
    p = np.arange(1.0, 61.0, 0.25)
    c = np.full(p.size, 45.0)
    c[100] = 45.5  # an invented spike, well above the conductivity floor of 0.05 mS/cm
    cast = pr.add_salinity(make_cast(pressure=p, temperature=np.full(p.size, 18.0), conductivity=c))
    out = despike(cast, variables=["conductivity"])
    assert out["conductivity_qc"].values[100] == 4
    assert out["salinity_qc"].values[100] == 4
    assert np.count_nonzero(out["salinity_qc"].values == 4) == 1
    assert _cf.steps_of(out.attrs)[-1]["bad_input"] == {"salinity": 1}


def test_despike_checks_threshold_and_window_naming_them():
    from seaprofile.io import ArgumentError

    p = np.linspace(0.0, 100.0, 200)
    cast = make_cast(pressure=p, temperature=10.0 + 0.01 * p)
    for name, bad in (
        ("threshold", 0.0),
        ("threshold", -1.0),
        ("threshold", np.nan),
        ("threshold", "five"),
        ("window", 4),
        ("window", 1),
        ("window", 2.5),
        ("window", "wide"),
        ("max_span", 0.0),
    ):
        with pytest.raises(ArgumentError) as err:
            despike(cast, **{name: bad})
        assert err.value.argument == name


def test_add_depth_gives_the_new_coordinate_its_own_flags():
    # depth's flags start as a copy of pressure's: raising one later never changes the other
    cast = make_cast(
        pressure=np.linspace(0.0, 100.0, 5), temperature=np.full(5, 10.0), latitude=30.0
    )
    out = pr.add_depth(cast)
    out["depth_qc"].values[:] = 4
    assert (out["pressure_qc"].values == 0).all()


@settings(max_examples=40, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    direction=st.sampled_from(["down", "up", "both"]),
    soak=st.booleans(),
    with_time=st.booleans(),
    wild=st.booleans(),
)
def test_select_descent_is_the_three_selection_steps_in_turn(
    seed, direction, soak, with_time, wild
):
    # internal consistency (no outside reference): the one-cut selection that
    # build_profile uses must give the Dataset, attributes and processing_steps of
    # remove_soak, select_direction and remove_reversals called one after the other
    rng = np.random.default_rng(seed)
    n = int(rng.integers(20, 400))
    soak_part = rng.uniform(2, 8, n // 10)
    down = np.linspace(0.5, rng.uniform(20, 500), n - n // 10)
    p = np.concatenate([soak_part, down]) + rng.normal(0, 0.3, n)  # heave loops
    p = np.concatenate([p, p[::-1][: n // 3]])  # and an upcast
    if wild:
        p[rng.integers(0, p.size, 3)] = [1e9, np.nan, -50.0]
    m = p.size
    cast = make_cast(
        pressure=p,
        temperature=np.linspace(20, 4, m),
        salinity=np.full(m, 35.0),
        elapsed_time=np.arange(m) * 0.25 if with_time else None,
        latitude=10.0,
    )
    with mock.patch.object(_cf, "_now", lambda: "T"):  # the history's time stamps
        steps = cast
        if soak:
            steps = pr.remove_soak(steps)
        steps = pr.remove_reversals(pr.select_direction(steps, direction))
        one = pr.select_descent(cast, direction, soak=soak)
    xr.testing.assert_identical(one, steps)
    assert one.attrs["processing_steps"] == steps.attrs["processing_steps"]
