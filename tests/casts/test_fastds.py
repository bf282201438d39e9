"""values() reads what ds[name].values reads; with_variables builds what Dataset.assign builds."""

import numpy as np
import pytest
import xarray as xr

from seaprofile.casts._fastds import dataset, values, with_variables


def test_with_variables_is_assign_built_once():
    ds = xr.Dataset(
        {"a": ("depth", [1.0, 2.0]), "b": ("depth", [3.0, 4.0], {"units": "m"})},
        coords={"depth": [0.0, 1.0], "latitude": 3.0},
        attrs={"x": 1},
    )
    ds.encoding = {"unlimited_dims": {"depth"}}
    new = {
        "b": xr.Variable(("depth",), [5.0, 6.0], {"units": "s"}),  # replaced in place
        "c": xr.Variable(("depth",), np.array([1, 2], np.int8)),  # added last
    }
    out = with_variables(ds, new, {"y": 2})
    ref = ds.assign(new)
    ref.attrs = {"y": 2}
    assert out.identical(ref)
    assert list(out.variables) == list(ref.variables)
    assert list(out.coords) == list(ref.coords) and list(out.xindexes) == ["depth"]
    assert out.encoding == ref.encoding
    assert ds["b"].attrs == {"units": "m"} and list(ds.data_vars) == ["a", "b"]  # untouched


def test_values_is_getitem_values():
    ds = xr.Dataset({"a": ("depth", [1.0, 2.0])}, coords={"latitude": 3.0})
    for name in ("a", "latitude", "depth"):  # depth: a dimension without a coordinate
        np.testing.assert_array_equal(values(ds, name), ds[name].values)
    with pytest.raises(KeyError) as ours:
        values(ds, "a_qc")
    with pytest.raises(KeyError) as xarrays:
        ds["a_qc"]
    assert str(ours.value) == str(xarrays.value)


def _same_dataset(a, b):
    """Identical, and built alike: order, index, variable types and encodings."""
    assert a.identical(b)
    assert list(a.variables) == list(b.variables) and list(a.coords) == list(b.coords)
    assert dict(a.sizes) == dict(b.sizes) and a.encoding == b.encoding
    assert list(a.xindexes) == list(b.xindexes)
    for name in a.xindexes:
        assert a.xindexes[name].equals(b.xindexes[name])
        assert type(a.xindexes[name]) is type(b.xindexes[name])
    for name in a.variables:
        va, vb = a.variables[name], b.variables[name]
        assert type(va) is type(vb) and type(va._data) is type(vb._data)
        assert va.dtype == vb.dtype and va.encoding == vb.encoding
    assert repr(a) == repr(b)


def test_dataset_is_the_public_constructor():
    z = np.arange(5.0)
    data = {
        "t": xr.Variable(("depth",), np.linspace(1, 2, 5), {"units": "degC"}),
        "t_qc": xr.Variable(("depth",), np.zeros(5, np.int8), {"flag_values": [0, 1]}),
    }
    coords = {
        "depth": xr.Variable(("depth",), z, {"units": "m"}),
        "latitude": xr.Variable((), 3.0, {"units": "degrees_north"}),
        "time": xr.Variable((), np.datetime64("NaT", "ns")),
        "profile_id": xr.Variable((), "cast"),
    }
    out = dataset(data, coords, {"x": 1})
    _same_dataset(out, xr.Dataset(data, coords=coords, attrs={"x": 1}))
    out["t"].attrs["changed"] = 1  # the inputs' Variables are not shared
    assert "changed" not in data["t"].attrs and "changed" not in coords["depth"].attrs
    # sizes that disagree: the public constructor's own error
    bad = {"t": xr.Variable(("depth",), np.zeros(4))}
    with pytest.raises(ValueError):
        dataset(bad, coords, {})
    with pytest.raises(ValueError, match="both data_vars and coords"):
        dataset({"latitude": xr.Variable((), 1.0)}, coords, {})


def test_bin_cast_and_add_sound_speed_build_what_the_public_constructor_builds(monkeypatch):
    from seaprofile.casts import _fastds, binning
    from seaprofile.casts.model import make_cast
    from seaprofile.casts.process import add_depth

    p = np.linspace(0.0, 300.0, 600)
    t, s = 20.0 - 0.05 * p, np.full(600, 35.0)
    cast = add_depth(make_cast(pressure=p, temperature=t, salinity=s, latitude=30.0))
    fast = binning.add_sound_speed(binning.bin_cast(cast, 2.0))

    def public(data_vars, coords, attrs):
        return xr.Dataset(data_vars, coords=coords, attrs=attrs)

    monkeypatch.setattr(binning, "dataset", public)
    monkeypatch.setattr(_fastds, "dataset", public)
    slow = binning.add_sound_speed(binning.bin_cast(cast, 2.0))
    for out in (fast, slow):  # time stamps
        del out.attrs["history"], out.attrs["processing_steps"]
    _same_dataset(fast, slow)
