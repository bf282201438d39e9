"""RayFan layout (seaprofile.propagation.rays): netCDF round trip, padding codes."""

import numpy as np
import pytest
import xarray as xr

from seaprofile.propagation import Environment, POINT_KINDS, trace_fan
from seaprofile.propagation.integrate import trace_fan_integrated


def _env():
    return Environment.from_arrays([0.0, 100.0, 200.0, 300.0], [1500.0, 1510.0, 1505.0, 1520.0])


@pytest.mark.parametrize("how", ["paths", "samples", "integrated"])
def test_rayfan_netcdf_round_trip_is_exact(tmp_path, how):
    env = _env()
    angles = [-20.0, -3.0, 0.0, 2.0, 15.0]
    if how == "paths":
        fan = trace_fan(env, 50.0, angles, 8000.0, max_bounces=5)
    elif how == "samples":
        fan = trace_fan(env, 50.0, angles, 8000.0, range_step=700.0, max_bounces=5)
    else:
        fan = trace_fan_integrated(env, 50.0, angles, 8000.0, max_bounces=5)
    # rays of different lengths: the padding code is present
    assert np.any(fan.point_kind.values == -1)
    path = tmp_path / "fan.nc"
    fan.to_netcdf(path)
    with xr.open_dataset(path) as back:
        back = back.load()
    xr.testing.assert_identical(back, fan)
    for name, var in fan.variables.items():
        assert back[name].dtype == var.dtype, name
    assert back.point_kind.dtype == np.int8
    np.testing.assert_array_equal(back.point_kind.values, fan.point_kind.values)
    # written again from what was read: still the same (no drift through a second trip)
    path2 = tmp_path / "fan2.nc"
    back.to_netcdf(path2)
    with xr.open_dataset(path2) as again:
        xr.testing.assert_identical(again.load(), fan)


def test_point_kind_codes_are_documented_padding_included():
    fan = trace_fan(_env(), 50.0, [-5.0, 5.0], 3000.0)
    attrs = fan.point_kind.attrs
    assert "_FillValue" not in attrs
    assert fan.point_kind.encoding.get("_FillValue") is None
    values = list(attrs["flag_values"])
    meanings = attrs["flag_meanings"].split()
    assert dict(zip(values, meanings)) == {-1: "no_point", **POINT_KINDS}
    assert set(np.unique(fan.point_kind.values)) <= set(values)


def test_no_import_circles_inside_propagation():
    # every module of the ray engine imports only modules below it: the codes, the record
    # (rayfan.py) and the checks are shared from their own modules, never from rays.py
    import ast
    from pathlib import Path

    import seaprofile.propagation as prop

    root = Path(prop.__file__).parent
    graph = {}
    for f in root.glob("*.py"):
        deps = set()
        for node in ast.walk(ast.parse(f.read_text())):
            if isinstance(node, ast.ImportFrom) and node.level == 1:
                deps.update([node.module.split(".")[0]] if node.module
                            else [a.name for a in node.names])
        graph[f.stem] = deps - {f.stem}
    done, active = set(), []

    def visit(mod):
        assert mod not in active, f"import circle: {' -> '.join(active + [mod])}"
        if mod in done or mod not in graph:
            return
        active.append(mod)
        for dep in sorted(graph[mod]):
            visit(dep)
        active.pop()
        done.add(mod)

    for mod in sorted(graph):
        visit(mod)
    assert "rays" not in graph["integrate"] and "rays" not in graph["eigenrays"]
