"""values() reads what ds[name].values reads; with_variables builds what Dataset.assign builds."""

import numpy as np
import pytest
import xarray as xr

from seaprofile.casts._fastds import values, with_variables


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
