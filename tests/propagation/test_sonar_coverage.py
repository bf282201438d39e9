"""Coverage from a loss field: the sonar equation and detection intervals.

Loss fields here are built in the test (spherical spreading 20 log10 R, plus a linear
absorption term, or bands laid out by hand), so every expected range is solved in closed
form in the test itself.
"""

import json
import math

import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile.io.errors import ArgumentError
from seaprofile.propagation.coverage import (
    coverage,
    detection_intervals,
    figure_of_merit,
    first_shadow_range,
    shadow_zones,
    signal_excess,
)


def spherical_loss(ranges, depths, alpha_db_per_km=0.0, beam_count=None):
    r = np.asarray(ranges, dtype=float)
    tl = 20.0 * np.log10(r) + alpha_db_per_km * r / 1000.0
    data = np.broadcast_to(tl, (len(depths), len(r))).copy()
    da = xr.DataArray(
        data,
        dims=("depth", "range"),
        coords={"depth": np.asarray(depths, float), "range": r},
        name="transmission_loss",
        attrs={"units": "dB", "long_name": "transmission loss (dB re 1 m)"},
    )
    if beam_count is not None:
        da = da.assign_coords(beam_count=(("depth", "range"), beam_count))
    return da


def test_passive_figure_of_merit_from_terms():
    # Urick (1983), ch. 2, passive sonar equation: FOM = SL - (NL - DI) - DT
    t = figure_of_merit(140.0, 70.0, 10.0, directivity_index=15.0)
    assert t.figure_of_merit == pytest.approx(140.0 - (70.0 - 15.0) - 10.0)
    assert t.mode == "passive" and not t.two_way


def test_active_figure_of_merit_from_terms():
    # Urick (1983), ch. 2, active noise-limited: FOM = SL + TS - (NL - DI) - DT, loss 2 TL
    t = figure_of_merit(220.0, 70.0, 12.0, directivity_index=20.0, target_strength=10.0)
    assert t.figure_of_merit == pytest.approx(220.0 + 10.0 - (70.0 - 20.0) - 12.0)
    assert t.mode == "active" and t.two_way


def test_figure_of_merit_errors_name_the_argument():
    with pytest.raises(ArgumentError) as e:
        figure_of_merit(140.0, None, 10.0)
    assert e.value.argument == "noise_level"
    with pytest.raises(ArgumentError) as e:
        figure_of_merit(140.0, 60.0, 10.0, figure_of_merit=80.0)
    assert e.value.argument == "source_level"
    with pytest.raises(ArgumentError) as e:
        figure_of_merit(figure_of_merit=float("nan"))
    assert e.value.argument == "figure_of_merit"
    with pytest.raises(ArgumentError) as e:
        figure_of_merit(140.0, "loud", 10.0)
    assert e.value.argument == "noise_level"


def test_spherical_spreading_detection_range_closed_form():
    # 20 log10 R = FOM  ->  R = 10**(FOM/20): 80 dB gives 10 km (analytic, in the test)
    ranges = np.arange(100.0, 30001.0, 100.0)
    loss = spherical_loss(ranges, [10.0, 100.0])
    rows = detection_intervals(signal_excess(loss, 80.0))
    expected = 10.0 ** (80.0 / 20.0)
    for row in rows:
        assert len(row["intervals"]) == 1
        start, end = row["intervals"][0]
        assert start == 100.0  # detected at the first sample: starts at the grid's edge
        # linear interpolation of a log curve between samples 100 m apart: well inside 1 m
        assert end == pytest.approx(expected, abs=1.0)
        assert not row["reaches_grid_end"]


def test_active_uses_two_way_loss():
    # active: 2 (20 log10 R) = FOM -> R = 10**(FOM/40); FOM 160 dB -> 10 km
    ranges = np.arange(100.0, 30001.0, 100.0)
    loss = spherical_loss(ranges, [50.0])
    t = figure_of_merit(200.0, 60.0, 10.0, directivity_index=10.0, target_strength=20.0)
    assert t.figure_of_merit == pytest.approx(160.0)
    rows = detection_intervals(signal_excess(loss, t))
    assert rows[0]["intervals"][0][1] == pytest.approx(10.0 ** (160.0 / 40.0), abs=1.0)


def test_absorption_shortens_the_range_as_solved_numerically():
    # 20 log10 R + a R / 1000 = FOM, solved by bisection here (independent of the module)
    a, fom = 1.0, 80.0
    lo, hi = 1.0, 1.0e5
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        if 20 * math.log10(mid) + a * mid / 1000 < fom:
            lo = mid
        else:
            hi = mid
    ranges = np.arange(50.0, 20001.0, 50.0)
    rows = detection_intervals(signal_excess(spherical_loss(ranges, [0.0], a), fom))
    assert rows[0]["intervals"][0][1] == pytest.approx(lo, abs=0.5)


def _banded():
    """Direct zone to 5 km, a convergence zone 50-55 km, nothing else (TL chosen by hand)."""
    ranges = np.arange(0.0, 70001.0, 1000.0)
    tl = np.full(ranges.size, 120.0)
    tl[ranges <= 4000.0] = 70.0
    tl[(ranges >= 50000.0) & (ranges <= 55000.0)] = 75.0
    data = np.vstack([tl, tl + 100.0])
    return xr.DataArray(
        data, dims=("depth", "range"), coords={"depth": [100.0, 3000.0], "range": ranges}
    )


def test_convergence_zone_is_a_separate_interval():
    rows = detection_intervals(signal_excess(_banded(), 80.0))
    (a0, b0), (a1, b1) = rows[0]["intervals"]
    assert a0 == 0.0
    # SE: +10 at 4 km, -40 at 5 km -> crossing at 4 + 10/50 km
    assert b0 == pytest.approx(4200.0)
    # SE: -40 at 49 km, +5 at 50 km -> 49 + 40/45 km
    assert a1 == pytest.approx(49000.0 + 1000.0 * 40.0 / 45.0)
    assert b1 == pytest.approx(55000.0 + 1000.0 * 5.0 / 45.0)
    assert rows[1]["intervals"] == []
    fsr = first_shadow_range(_banded(), 80.0)
    assert float(fsr.sel(depth=100.0)) == pytest.approx(4200.0)
    assert np.isnan(float(fsr.sel(depth=3000.0)))


def test_detection_to_the_grid_end_is_flagged():
    loss = spherical_loss(np.arange(100.0, 5001.0, 100.0), [10.0])
    rows = detection_intervals(signal_excess(loss, 100.0))
    assert rows[0]["intervals"] == [[100.0, 5000.0]]
    assert rows[0]["reaches_grid_end"]
    assert np.isnan(float(first_shadow_range(loss, 100.0)[0]))


def test_no_beam_cells_are_shadow_and_edges_are_samples():
    ranges = np.arange(1000.0, 10001.0, 1000.0)
    beams = np.ones((1, ranges.size), dtype=int)
    beams[0, 3:5] = 0  # 4 and 5 km unreached
    loss = spherical_loss(ranges, [20.0], beam_count=beams)
    se = signal_excess(loss, 100.0)
    assert np.isnan(se.values[0, 3:5]).all()
    shadow = shadow_zones(loss, 100.0)
    assert shadow.values[0].tolist() == [False] * 3 + [True] * 2 + [False] * 5
    rows = detection_intervals(se)
    # next to an unreached cell the edge is the sample itself, not interpolated
    assert rows[0]["intervals"] == [[1000.0, 4000.0], [6000.0, 10000.0]]


def test_shadow_is_loss_above_figure_of_merit():
    loss = spherical_loss(np.arange(100.0, 30001.0, 100.0), [10.0])
    shadow = shadow_zones(loss, 80.0)
    np.testing.assert_array_equal(shadow.values, loss.values > 80.0)


def test_attributes_and_provenance():
    se = signal_excess(spherical_loss([100.0, 200.0], [1.0]), figure_of_merit(140, 60, 10))
    assert se.attrs["units"] == "dB"
    assert "Urick" in se.attrs["references"]
    assert "FOM" in se.attrs["equation"]
    assert se.attrs["seaprofile_version"]
    steps = json.loads(se.attrs["processing_steps"])
    assert steps[-1]["step"] == "signal_excess"
    assert steps[-1]["figure_of_merit"] == 70.0


def test_loss_argument_checked():
    with pytest.raises(ArgumentError) as e:
        signal_excess(np.zeros((2, 2)), 80.0)
    assert e.value.argument == "loss"
    bad = xr.DataArray(np.zeros((2, 2)), dims=("z", "x"))
    with pytest.raises(ArgumentError):
        signal_excess(bad, 80.0)


def test_coverage_text_and_json():
    cov = coverage(_banded(), 80.0)
    text = str(cov)
    assert "0.00-4.20, 49.89-55.11" in text
    assert "none" in text
    assert "Caution:" in text
    assert "nan" not in text.lower()
    data = json.loads(cov.to_json())
    assert data["depths"][1]["max_detection_range_m"] is None
    assert data["depths"][0]["detection_intervals_m"][1][0] == pytest.approx(49888.89, abs=0.01)
    ds = cov.to_dataset()
    assert ds.attrs["product"] == "coverage"
    assert ds["detected"].dtype == np.int8


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(-50, 50, allow_nan=False) | st.just(float("nan")), min_size=2, max_size=40)
)
def test_intervals_sorted_disjoint_and_cover_every_detected_sample(values):
    se = np.asarray(values, dtype=float)[None, :]
    ranges = np.arange(se.shape[1]) * 100.0
    da = xr.DataArray(se, dims=("depth", "range"), coords={"depth": [0.0], "range": ranges})
    iv = detection_intervals(da)[0]["intervals"]
    flat = [x for pair in iv for x in pair]
    assert flat == sorted(flat)
    for a, b in iv:
        assert ranges[0] <= a <= b <= ranges[-1]
    for r, s in zip(ranges, se[0]):
        inside = any(a <= r <= b for a, b in iv)
        if s >= 0:
            assert inside
