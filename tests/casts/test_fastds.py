"""The table look-up of usable values gives what seaprofile._cf.usable gives."""

import numpy as np

from seaprofile import _cf
from seaprofile.casts._fastds import usable


def test_usable_matches_cf_usable_for_every_flag_byte():
    flags = np.arange(-128, 128, dtype=np.int8)
    values = np.where(np.arange(flags.size) % 3 == 0, np.nan, 1.0)
    values[5] = np.inf
    np.testing.assert_array_equal(usable(values, flags), _cf.usable(values, flags))
    unsigned = flags.view(np.uint8)
    np.testing.assert_array_equal(usable(values, unsigned), _cf.usable(values, unsigned))
    wide = np.array([3, 4, 9, 259, -3, 1], np.int64)  # not a flag byte: numpy.isin's answer
    np.testing.assert_array_equal(usable(np.ones(6), wide), _cf.usable(np.ones(6), wide))


def test_with_variables_is_assign_built_once():
    import xarray as xr

    from seaprofile.casts._fastds import with_variables

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
