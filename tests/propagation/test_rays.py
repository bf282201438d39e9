"""RayFan layout (seaprofile.propagation.rays): netCDF round trip, padding codes."""

import numpy as np
import pytest
import xarray as xr

from seaprofile.propagation import POINT_KINDS, Environment, trace_fan
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
                deps.update(
                    [node.module.split(".")[0]] if node.module else [a.name for a in node.names]
                )
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


@pytest.mark.parametrize("range_step", [None, 400.0])
@pytest.mark.parametrize("solver", ["exact", "integrated"])
def test_both_solvers_fill_the_ray_record_isovelocity(solver, range_step):
    # uniform water, point source: q is the path length c t and p stays 1/c, also through
    # flat reflections (dynamic ray equations with q(0) = 0, p(0) = 1/c; Jensen, Kuperman,
    # Porter & Schmidt 2011, Computational Ocean Acoustics, ch. 3)
    env = Environment.from_arrays([0.0, 100.0], [1500.0, 1500.0])
    trace = trace_fan if solver == "exact" else trace_fan_integrated
    fan = trace(env, 30.0, [-20.0, -2.0, 0.0, 7.0], 3000.0, range_step=range_step, max_bounces=50)
    ok = fan.point_kind.values >= 0
    np.testing.assert_array_equal(np.isfinite(fan.sound_speed.values), ok)
    np.testing.assert_allclose(fan.sound_speed.values[ok], 1500.0, rtol=1e-15)
    # exact solver: rounding only; integrator: its 1e-6 m local tolerance over ~30 steps
    rtol = 1e-12 if solver == "exact" else 1e-7
    np.testing.assert_allclose(
        fan.tube_width.values[ok], 1500.0 * fan.travel_time.values[ok], rtol=rtol, atol=1e-9
    )
    np.testing.assert_allclose(fan.tube_slowness.values[ok], 1.0 / 1500.0, rtol=rtol)


def test_both_solvers_fill_the_same_ray_record_in_a_layered_profile():
    # the same rays through the same c(z): the integrator (range_step samples, tight
    # tolerance) against the exact arcs, variable by variable
    env = _env()
    angles = [-12.0, -4.0, 3.0, 9.0]
    exact = trace_fan(env, 50.0, angles, 6000.0, range_step=500.0, max_bounces=20)
    integ = trace_fan_integrated(
        env, 50.0, angles, 6000.0, range_step=500.0, max_bounces=20, tolerance=1e-9
    )
    assert list(exact.data_vars) == list(integ.data_vars)
    ok = exact.point_kind.values >= 0
    # c at each point is the profile's, to rounding (exact) and to the depth error of the
    # integrator (< 1e-5 m here, times |dc/dz| <= 0.15 1/s)
    np.testing.assert_allclose(
        exact.sound_speed.values[ok], env.sound_speed_at(exact.depth.values[ok]), rtol=1e-13
    )
    np.testing.assert_allclose(
        integ.sound_speed.values[ok], exact.sound_speed.values[ok], rtol=1e-8
    )
    # q and p: the integrator's global error at tolerance 1e-9 m is well below 1e-5 relative
    # (tests/propagation/test_integrate.py measures it against the circular-arc solution)
    np.testing.assert_allclose(
        integ.tube_width.values[ok], exact.tube_width.values[ok], rtol=1e-5, atol=1e-6
    )
    np.testing.assert_allclose(
        integ.tube_slowness.values[ok], exact.tube_slowness.values[ok], rtol=1e-5, atol=1e-12
    )


@pytest.mark.parametrize("range_step", [None, 400.0])
@pytest.mark.parametrize("solver", ["exact", "integrated"])
def test_reflections_of_the_ray_record_against_images(solver, range_step, monkeypatch):
    # isovelocity water 100 m deep, source 30 m, ray launched 20 degrees up: the method of
    # images (Jensen et al. 2011, ch. 2) puts the reflections at r = (30 + 100 k) /
    # tan(20 deg), alternately at the surface and the bottom, all grazing at 20 degrees.
    # 40 of them in 11 km, more than the first room kept per ray here (lowered to 16)
    from seaprofile.propagation import codes, integrate, kernels

    monkeypatch.setattr(kernels, "FIRST_REFLECTIONS_KEPT", 16)
    monkeypatch.setattr(integrate, "FIRST_REFLECTIONS_KEPT", 16)
    assert codes.FIRST_REFLECTIONS_KEPT >= 16
    env = Environment.from_arrays([0.0, 100.0], [1500.0, 1500.0])
    trace = trace_fan if solver == "exact" else trace_fan_integrated
    fan = trace(env, 30.0, [-20.0, 0.0], 11000.0, range_step=range_step, max_bounces=100)
    n = int(fan.surface_reflections[0] + fan.bottom_reflections[0])
    assert n == 40 and fan.sizes["reflection"] == n
    k = np.arange(n)
    # exact arcs: rounding; integrator: 1e-6 m local tolerance over ~40 legs
    atol = 1e-9 if solver == "exact" else 1e-4
    np.testing.assert_allclose(
        fan.reflection_range.values[0], (30.0 + 100.0 * k) / np.tan(np.radians(20.0)), atol=atol
    )
    np.testing.assert_allclose(fan.grazing_angle.values[0], 20.0, atol=atol)
    np.testing.assert_array_equal(fan.reflection_boundary.values[0], k % 2)
    # the horizontal ray never reflects: padding only
    assert np.all(fan.reflection_boundary.values[1] == -1)
    assert np.all(np.isnan(fan.reflection_range.values[1]))


def test_reflections_on_a_sloping_bottom_steepen_by_the_slope_each_time():
    # up-slope wedge of slope alpha, derived from specular reflection: a ray going down at
    # theta meets the bottom (tilted up by alpha) at theta + alpha and leaves it at
    # theta + 2 alpha to the horizontal; the flat surface keeps that angle. So the n-th
    # reflection, at either boundary, grazes at theta_0 + n alpha
    env = Environment.from_arrays(
        [0.0, 100.0], [1500.0, 1500.0], bathymetry=([0.0, 5000.0], [100.0, 60.0])
    )
    fan = trace_fan(env, 30.0, [8.0], 5000.0, max_bounces=100)
    alpha = np.degrees(np.arctan(40.0 / 5000.0))
    g = fan.grazing_angle.values[0]
    n = np.arange(1, g.size + 1)
    assert g.size >= 10
    # the integrator's 1e-6 m local tolerance and 1000 m direction scale: ~1e-9 rad
    np.testing.assert_allclose(g, 8.0 + n * alpha, atol=1e-6)
    np.testing.assert_array_equal(fan.reflection_boundary.values[0], n % 2)
