"""Every public layer diagnostic on numpy, xarray and dask profiles (one shared fixture).

The ``array_kind`` fixture (tests/conftest.py) turns the same invented profiles into each
kind. References: the numpy result for many profiles at once, which must equal the
single-profile result profile by profile (bit for bit) - the single-profile numbers are
checked against closed forms, brentq and quad in the other test files. Lazy inputs stay
lazy until ``.compute()`` (a dask callback counts executed tasks), and a vertical
dimension split into several chunks is refused with the rechunk that fixes it.
"""

import numpy as np
import pytest
import xarray as xr
from _layer_test_profiles import munk

from seaprofile import SeaprofileError, layers

# invented profiles (synthetic): three Munk-like columns, shifted and with a surface duct
ZS = np.arange(0.0, 3001.0, 25.0)
C = np.stack(
    [munk(ZS), munk(ZS * 0.9) + 2.0, np.where(ZS <= 75.0, 1520.0 + 0.016 * ZS, munk(ZS) + 8.0)]
)
TEMP = np.stack([20.0 - 0.02 * np.maximum(ZS - h, 0.0) for h in (25.0, 75.0, 150.0)])
SIGMA = np.stack([25.0 + 0.002 * np.maximum(ZS - h, 0.0) for h in (25.0, 75.0, 150.0)])
PER_PROFILE = {
    "layer_depth": np.array([0.0, 50.0, 75.0]),
    "reference_speed": C[:, 0].copy(),
    "axis_depth": np.array([1300.0, 1450.0, 1300.0]),
    "at": np.array([5.0, 777.7, 2999.0]),
    "bottom": np.array([100.0, 1300.0, 3000.0]),
}

# (label, function, profile, per-profile parameter names, keyword arguments, outputs)
COLUMN = [
    ("mixed_layer_depth", layers.mixed_layer_depth, TEMP, (), {"return_reached_end": True}, 2),
    ("mixed_layer_depth_density", layers.mixed_layer_depth_density, SIGMA, (), {}, 1),
    ("sonic_layer_depth", layers.sonic_layer_depth, C, (), {"return_reached_end": True}, 3),
    ("layer_gradients", layers.layer_gradients, C, ("layer_depth",), {}, 2),
    ("sound_channels", layers.sound_channels, C, (), {"below": "layer_depth"}, 8),
    ("critical_depth", layers.critical_depth, C, ("reference_speed", "axis_depth"), {}, 1),
    ("speed_at", layers.speed_at, C, ("at",), {}, 1),
    (
        "harmonic_mean_sound_speed",
        layers.harmonic_mean_sound_speed,
        C,
        ("bottom",),
        {"top": 4.0},
        1,
    ),
]


def _call(func, profile, depth, params, kwargs, convert=lambda v, **k: v):
    args = [convert(PER_PROFILE[p], dims=("profile",)) for p in params]
    kw = {
        k: (convert(PER_PROFILE[v], dims=("profile",)) if isinstance(v, str) else v)
        for k, v in kwargs.items()
    }
    if func is layers.harmonic_mean_sound_speed:  # (sound_speed, depth, top, bottom)
        return func(profile, depth, kw.pop("top"), *args, **kw)
    return func(profile, depth, *args, **kw)


def _as_list(out):
    if isinstance(out, dict):
        return list(out.values())
    return list(out) if isinstance(out, tuple) else [out]


@pytest.mark.parametrize(
    "label, func, profile, params, kwargs, n_out", COLUMN, ids=[c[0] for c in COLUMN]
)
def test_column_diagnostics_on_every_array_kind(
    array_kind, count_tasks, label, func, profile, params, kwargs, n_out
):
    expected = _as_list(_call(func, profile, ZS, params, kwargs))
    assert len(expected) == n_out
    # many numpy profiles at once = each profile alone, bit for bit
    for i in range(profile.shape[0]):
        one = _as_list(
            _call(func, profile[i], ZS, params, kwargs, convert=lambda v, i=i, **k: v[i])
        )
        for e, o in zip(expected, one):
            np.testing.assert_array_equal(np.asarray(e)[i], o)
    prof = array_kind(profile, depth=ZS)
    depth = None if array_kind.labelled else ZS  # xarray: the depth coordinate
    with count_tasks() as counter:
        out = _call(func, prof, depth, params, kwargs, convert=array_kind)
    assert counter.tasks == 0  # building the result computes nothing
    if array_kind.labelled:
        items = list(out.data_vars.values()) if isinstance(out, xr.Dataset) else _as_list(out)
        assert all(isinstance(o, xr.DataArray) and o.dims == ("profile",) for o in items)
        assert all("units" in o.attrs and o.name for o in items)
    got = _as_list(array_kind.values(out))
    for e, g in zip(expected, got):
        np.testing.assert_array_equal(g, e)


def test_mixed_layer_depth_cf_attributes():
    out = layers.mixed_layer_depth(
        xr.DataArray(TEMP, dims=("profile", "depth"), coords={"depth": ZS})
    )
    assert out.attrs["standard_name"] == "ocean_mixed_layer_thickness"
    assert out.attrs["units"] == "m"
    # de Boyer Montegut et al. (2004) criterion; nodes every 25 m at each h: exact h + 0.2/0.02
    np.testing.assert_allclose(out.values, [35.0, 85.0, 160.0], atol=1e-9)


@pytest.mark.parametrize(
    "label, func, profile, params, kwargs, n_out", COLUMN, ids=[c[0] for c in COLUMN]
)
def test_chunked_vertical_dimension_is_named(
    array_kind, label, func, profile, params, kwargs, n_out
):
    if not array_kind.lazy:
        pytest.skip("only dask inputs have chunks")
    prof = array_kind(profile, depth=ZS, vertical_chunks=40)
    depth = None if array_kind.labelled else ZS
    where = "'depth'" if array_kind.labelled else "last \\(vertical\\) axis"
    fix = "chunk\\(\\{'depth': -1\\}\\)" if array_kind.labelled else "rechunk\\(\\{-1: -1\\}\\)"
    with pytest.raises(SeaprofileError, match=f"split into 4 chunks along .*{where}.*{fix}"):
        _call(func, prof, depth, params, kwargs, convert=array_kind)


@pytest.mark.parametrize(
    "func, args, expected",
    [
        # common practice, no source: lambda_max = 8.5e-3 H^1.5 (see test_mixed_layer.py)
        (
            layers.duct_cutoff_frequency,
            ([30.0, 0.0, 100.0], [1500.0, 1500.0, 1490.0]),
            [1500.0 / (8.5e-3 * 30.0**1.5), np.nan, 1490.0 / (8.5e-3 * 100.0**1.5)],
        ),
        (
            layers.depth_excess,
            ([5000.0, 4000.0, 4500.0], [4321.0, np.nan, 4600.0]),
            [679.0, np.nan, -100.0],
        ),
    ],
)
def test_pointwise_layer_functions_on_every_array_kind(
    array_kind, count_tasks, func, args, expected
):
    ref = func(*(np.array(a) for a in args))
    np.testing.assert_allclose(ref, expected, rtol=1e-12)
    with count_tasks() as counter:
        out = func(*(array_kind(np.array(a), dims=("profile",)) for a in args))
    assert counter.tasks == 0
    if array_kind.labelled:
        assert out.attrs["units"] in ("Hz", "m")
    np.testing.assert_array_equal(array_kind.values(out), ref)


def test_layer_errors_name_the_problem():
    x = xr.DataArray(C, dims=("profile", "z"), coords={"z": ZS})
    with pytest.raises(SeaprofileError, match="'depth' dimension.*dim="):
        layers.sonic_layer_depth(x)
    sld, _ = layers.sonic_layer_depth(x, dim="z")
    assert sld.dims == ("profile",)
    with pytest.raises(
        SeaprofileError, match="depth must be strictly increasing.*sound_speed first"
    ):
        layers.sound_channels(ZS, C[0])  # the former (depth, sound_speed) order
    other = x.assign_coords(z=ZS + 1.0)
    with pytest.raises(SeaprofileError, match="do not align along dimension 'z'"):
        layers.speed_at(x, other["z"], 10.0, dim="z")
