"""Every public numeric function of seaprofile.seawater on numpy, xarray and dask inputs.

One shared fixture (``array_kind`` in tests/conftest.py) turns the same invented inputs
into each kind. The reference is the numpy result of the same function: the dispatcher
must give the same numbers bit for bit (it calls the same compiled loop), keep lazy inputs
lazy until ``.compute()`` (counted with a dask callback), and put the CF attributes and
provenance on xarray results. The numbers themselves are checked against published values
in test_soundspeed.py, test_depth.py and test_state.py.
"""

import numpy as np
import pytest
import xarray as xr

from seaprofile import SeaprofileError
from seaprofile.seawater import depth as dp
from seaprofile.seawater import soundspeed as ss
from seaprofile.seawater import state

# invented, in-range inputs: 3 profiles x 8 levels (synthetic, not data)
_Z = np.linspace(0.0, 3500.0, 8)
T = 18.0 - 4.0 * np.log1p(_Z / 200.0)[None, :] + np.array([[0.0], [1.0], [-1.5]])
S = 34.6 + 0.3 * np.exp(-_Z / 800.0)[None, :] + np.zeros((3, 1))
P = np.broadcast_to(_Z * 1.008, (3, 8)).copy()
Z = np.broadcast_to(_Z, (3, 8)).copy()
LAT = np.broadcast_to(np.array([[12.0], [-40.0], [61.0]]), (3, 8)).copy()
LON = np.broadcast_to(np.array([[-20.0], [150.0], [330.0]]), (3, 8)).copy()
C = 1.00 * T + 35.0  # a conductivity-like field, mS/cm (synthetic)

# (label, function, positional inputs, keyword inputs, CF standard name of the result)
POINTWISE = [
    *[
        (
            f"sound_speed/{name}",
            ss.sound_speed,
            (T, S),
            {
                eq.needs: np.minimum(Z if eq.needs == "depth" else P, eq.vertical_range[1]),
                "latitude": LAT,
                "equation": name,
            },
            "speed_of_sound_in_sea_water",
        )
        for name, eq in ss.EQUATIONS.items()
    ],
    (
        "sound_speed/converted",
        ss.sound_speed,
        (T, S),
        {"depth": Z, "latitude": LAT},
        "speed_of_sound_in_sea_water",
    ),
    (
        "sound_speed/teos10_position",
        ss.sound_speed,
        (T, S, P),
        {"latitude": LAT, "longitude": LON, "equation": "teos10"},
        "speed_of_sound_in_sea_water",
    ),
    ("validity_mask", ss.validity_mask, (T, S), {"depth": Z, "latitude": LAT}, None),
    ("mackenzie1981", ss.mackenzie1981, (T, S, Z), {}, "speed_of_sound_in_sea_water"),
    ("chen_millero1977", ss.chen_millero1977, (T, S, P), {}, "speed_of_sound_in_sea_water"),
    ("wong_zhu1995", ss.wong_zhu1995, (T, S, P), {}, "speed_of_sound_in_sea_water"),
    ("del_grosso1974", ss.del_grosso1974, (T, S, P), {}, "speed_of_sound_in_sea_water"),
    ("coppens1981", ss.coppens1981, (T, S, Z), {}, "speed_of_sound_in_sea_water"),
    ("medwin1975", ss.medwin1975, (T, S, Z / 4.0), {}, "speed_of_sound_in_sea_water"),
    ("leroy2008", ss.leroy2008, (T, S, Z, LAT), {}, "speed_of_sound_in_sea_water"),
    ("teos10", ss.teos10, (T, S, P, LAT, LON), {}, "speed_of_sound_in_sea_water"),
    *[
        (f"depth_from_pressure/{m}", dp.depth_from_pressure, (P, LAT), {"method": m}, "depth")
        for m in dp.METHODS
    ],
    *[
        (
            f"pressure_from_depth/{m}",
            dp.pressure_from_depth,
            (Z, LAT),
            {"method": m},
            "sea_water_pressure",
        )
        for m in dp.METHODS
    ],
    *[(f"{m}_depth", getattr(dp, f"{m}_depth"), (P, LAT), {}, "depth") for m in dp.METHODS],
    *[
        (f"{m}_pressure", getattr(dp, f"{m}_pressure"), (Z, LAT), {}, "sea_water_pressure")
        for m in dp.METHODS
    ],
    (
        "salinity_from_conductivity",
        state.salinity_from_conductivity,
        (C, T, P),
        {},
        "sea_water_practical_salinity",
    ),
    (
        "absolute_salinity",
        state.absolute_salinity,
        (S, P, LAT, LON),
        {},
        "sea_water_absolute_salinity",
    ),
    ("reference_salinity", state.absolute_salinity, (S, P), {}, "sea_water_reference_salinity"),
    ("density", state.density, (T, S, P, LAT, LON), {}, "sea_water_density"),
    (
        "potential_density_anomaly",
        state.potential_density_anomaly,
        (T, S, P),
        {},
        "sea_water_sigma_theta",
    ),
]


def _convert(array_kind, args, kwargs):
    def one(v):
        return array_kind(v) if isinstance(v, np.ndarray) else v

    return [one(a) for a in args], {k: one(v) for k, v in kwargs.items()}


@pytest.mark.parametrize(
    "label, func, args, kwargs, standard_name", POINTWISE, ids=[c[0] for c in POINTWISE]
)
def test_pointwise_functions_on_every_array_kind(
    array_kind, count_tasks, label, func, args, kwargs, standard_name
):
    expected = func(*args, **kwargs)
    a, kw = _convert(array_kind, args, kwargs)
    with count_tasks() as counter:
        out = func(*a, **kw)
    assert counter.tasks == 0  # building the result computes nothing
    if array_kind.labelled:
        assert isinstance(out, xr.DataArray) and out.dims == ("profile", "depth")
        if standard_name:
            assert out.attrs["standard_name"] == standard_name
            assert "units" in out.attrs
        assert out.attrs["equation"] and out.attrs["seaprofile_version"]
    if array_kind.lazy:
        assert out.chunks is not None
    else:
        assert not hasattr(getattr(out, "data", out), "dask")
    np.testing.assert_array_equal(array_kind.values(out), expected)


def test_buoyancy_frequency_on_every_array_kind(array_kind, count_tasks):
    n2, pm = state.buoyancy_frequency_squared(T, S, P, 24.0, -38.0)
    t, s, p = (array_kind(v) for v in (T, S, P))
    with count_tasks() as counter:
        out = state.buoyancy_frequency_squared(t, s, p, 24.0, -38.0, dim="depth")
    assert counter.tasks == 0
    if array_kind.labelled:
        assert out.dims == ("profile", "depth_mid")
        assert out.attrs["standard_name"] == "square_of_brunt_vaisala_frequency_in_sea_water"
        got_n2, got_pm = array_kind.values(out), array_kind.values(out["pressure_mid"])
    else:
        got_n2, got_pm = array_kind.values(out)
    np.testing.assert_array_equal(got_n2, n2)
    np.testing.assert_array_equal(got_pm, pm)


def test_buoyancy_frequency_vertical_chunks_named(array_kind):
    if not array_kind.lazy:
        pytest.skip("only dask inputs have chunks")
    t, s, p = (array_kind(v, vertical_chunks=3) for v in (T, S, P))
    with pytest.raises(SeaprofileError, match="one chunk: rechunk with"):
        state.buoyancy_frequency_squared(t, s, p, dim="depth")


# --- one alignment policy -----------------------------------------------------------------

_A = xr.DataArray([10.0, 11.0, 12.0], dims="z", coords={"z": [0.0, 1.0, 2.0]})
_B = xr.DataArray([35.0, 35.0, 35.0], dims="z", coords={"z": [1.0, 2.0, 3.0]})
_SHORT = xr.DataArray([35.0, 35.0], dims="z")


@pytest.mark.parametrize(
    "func, args, names",
    [
        (ss.sound_speed, (_A, _B, 100.0), "temperature and salinity"),
        (ss.chen_millero1977, (_A, _B, 100.0), "temperature and salinity"),
        (ss.teos10, (_A, _B, 100.0), "temperature and salinity"),
        (ss.validity_mask, (_A, _B, 100.0), "temperature and salinity"),
        (state.density, (_A, _B, 100.0), "temperature and salinity"),
        (dp.depth_from_pressure, (_A, _B), "pressure and latitude"),
        (dp.teos10_pressure, (_A * 10, _B), "depth and latitude"),
    ],
)
def test_misaligned_xarray_inputs_name_the_arguments(func, args, names):
    # one policy: xarray inputs align exactly (no silent inner join, no raw xarray error)
    with pytest.raises(SeaprofileError, match=f"{names} do not align along dimension 'z'"):
        func(*args)
    with pytest.raises(SeaprofileError, match="sizes 3 and 2"):
        func(args[0], _SHORT, *args[2:])
    with pytest.raises(SeaprofileError, match="DataArray or a scalar"):
        func(args[0], np.array([35.0, 35.0, 35.0]), *args[2:])


# --- one position rule ----------------------------------------------------------------------

_POSITION_CALLS = [
    lambda lat, lon: ss.sound_speed(
        10.0, 35.0, 100.0, latitude=lat, longitude=lon, equation="teos10"
    ),
    lambda lat, lon: ss.sound_speed(10.0, 35.0, depth=100.0, latitude=lat, longitude=lon),
    lambda lat, lon: ss.teos10(10.0, 35.0, 100.0, lat, lon),
    lambda lat, lon: state.density(10.0, 35.0, 100.0, lat, lon),
    lambda lat, lon: state.absolute_salinity(35.0, 100.0, lat, lon),
    lambda lat, lon: state.buoyancy_frequency_squared([10.0, 9.0], 35.0, [0.0, 10.0], lat, lon),
]


@pytest.mark.parametrize("call", _POSITION_CALLS)
@pytest.mark.parametrize(
    "lat, lon, message",
    [
        (np.nan, 10.0, "latitude is NaN"),
        (10.0, np.nan, "longitude is NaN"),
        (10.0, np.inf, "longitude must be finite"),
        (-np.inf, 10.0, "latitude must be finite"),
        (91.0, 10.0, "latitude must lie within -90..90"),
        (10.0, 361.0, "longitude must lie within -180..360"),
    ],
)
def test_one_position_rule_before_any_library(call, lat, lon, message):
    # an infinite longitude used to crash inside the TEOS-10 library; NaN gave NaN in one
    # function, an error in another and reference salinity in a third
    with pytest.raises(SeaprofileError, match=message):
        call(lat, lon)


@pytest.mark.parametrize(
    "func",
    [
        ss.leroy2008,
        lambda t, s, z, lat: ss.sound_speed(t, s, depth=z, latitude=lat, equation="leroy2008"),
    ],
)
def test_nan_latitude_refused_by_equation_functions_too(func):
    with pytest.raises(SeaprofileError, match="latitude is NaN at 1 of 2 points"):
        func(10.0, 35.0, 100.0, np.array([45.0, np.nan]))


@pytest.mark.parametrize("method", sorted(dp.METHODS))
def test_lazy_position_checked_when_computed(method):
    da = pytest.importorskip("dask.array")
    lat = da.from_array(np.array([10.0, np.nan]), chunks=1)
    lazy = dp.depth_from_pressure(da.from_array(np.array([10.0, 20.0]), chunks=1), lat, method)
    with pytest.raises(SeaprofileError, match="latitude is NaN"):
        lazy.compute()
