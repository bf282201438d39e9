"""Eigenrays: image method, reciprocity, spreading, output layout."""

import numpy as np
import pytest
import xarray as xr

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import Environment, eigenrays, trace_fan


def _images(zs, zr, r, depth, max_reflections, count_zs=None, count_zr=None):
    """Method of images for an isovelocity layer (Jensen et al. 2011, ch. 2-3).

    Reflections are counted as the boundary planes strictly between image and receiver;
    ``count_zs`` / ``count_zr`` (default ``zs`` / ``zr``) are the depths used for that count
    only: a source or receiver on the surface or the bottom is counted as the limit of one
    just inside the water, where each image of a merging pair keeps its own reflection.
    """
    count_zs = zs if count_zs is None else count_zs
    count_zr = zr if count_zr is None else count_zr
    out = []
    for n in range(-max_reflections - 1, max_reflections + 2):
        for sign in (1, -1):
            zi = 2 * n * depth + sign * zs
            zc = 2 * n * depth + sign * count_zs
            lo, hi = min(zc, count_zr), max(zc, count_zr)
            ks = [
                k
                for k in range(int(np.floor(lo / depth)) - 1, int(np.ceil(hi / depth)) + 2)
                if lo < k * depth < hi
            ]
            if len(ks) > max_reflections:
                continue
            surface = sum(1 for k in ks if k % 2 == 0)
            arrival = np.degrees(np.arctan2(zr - zi, r))
            launch = arrival if sign == 1 else -arrival
            out.append((np.hypot(r, zr - zi), launch, arrival, surface, len(ks) - surface))
    return sorted(out)


@pytest.mark.parametrize(
    "zs, zr, r",
    [
        (30.0, 60.0, 1000.0),
        (10.0, 95.0, 250.0),
        (50.0, 50.0, 5000.0),
        # receivers a hair from the surface / bottom: pairs
        # of eigenrays on both sides of a reflection kink
        (50.0, 0.05, 20000.0),
        (20.0, 99.9, 30000.0),
    ],
)
def test_isovelocity_against_images(zs, zr, r):
    c, depth = 1500.0, 100.0
    env = Environment.from_arrays([0.0, depth], [c, c])
    e = eigenrays(env, zs, [r], [zr], max_reflections=3)
    _assert_matches_images(e, _images(zs, zr, r, depth, 3), c)
    assert np.all(e.caustics.values == 0)
    np.testing.assert_allclose(e.phase.values, np.pi * e.surface_reflections.values)


def _assert_matches_images(e, ref, c):
    """Eigenrays against the image paths (slant range, launch and arrival angles, counts)."""
    assert e.sizes["path"] == len(ref) > 0
    # equal times (symmetric geometry, merging pairs) come in any order: sort both by
    # time, launch angle and counts
    ref = sorted(ref, key=lambda x: (round(x[0] / c, 9), round(x[1], 6), x[3], x[4]))
    key = (
        e.bottom_reflections.values,
        e.surface_reflections.values,
        np.round(e.launch_angle.values, 6),
        np.round(e.travel_time.values, 9),
    )
    e = e.isel(path=np.lexsort(key))
    slant = np.array([x[0] for x in ref])
    # Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, 2nd ed.,
    # ch. 2 (images at 2nD +- zs): travel time R/c; the closed forms are exact, so only
    # rounding (~1e-15) and the 1 micrometre depth tolerance of the root (time error
    # < 1e-6 m / c) remain: 1e-9 relative
    np.testing.assert_allclose(e.travel_time.values, slant / c, rtol=1e-9)
    # angles: roots to 1 um in depth, kinks on a boundary bisected to 1e-14 rad
    np.testing.assert_allclose(e.launch_angle.values, [x[1] for x in ref], atol=1e-7)
    np.testing.assert_allclose(e.arrival_angle.values, [x[2] for x in ref], atol=1e-7)
    np.testing.assert_array_equal(e.surface_reflections.values, [x[3] for x in ref])
    np.testing.assert_array_equal(e.bottom_reflections.values, [x[4] for x in ref])
    # spherical spreading 20 log10 R in isovelocity (Jensen et al. 2011, ch. 3); at 1e7 m
    # 1e-8 dB is ~2e-9 relative in R
    np.testing.assert_allclose(e.spreading_loss.values, 20 * np.log10(slant), atol=1e-8)
    assert np.all(np.abs(e.depth_miss.values) < 1e-6)


_INSIDE = 1e-9  # m: how far inside the water a boundary source or receiver is counted


@pytest.mark.parametrize(
    "zs, zr, r",
    [
        (30.0, 0.0, 1000.0),
        (30.0, 100.0, 1000.0),
        (70.0, 0.0, 25000.0),
        (70.0, 100.0, 25000.0),
        (0.0, 40.0, 1000.0),
        (100.0, 40.0, 1000.0),
        (0.0, 100.0, 3000.0),
        (0.0, 0.0, 1000.0),
        (100.0, 100.0, 1000.0),
        # a huge range: every family is far narrower than the 0.05 degree search fan
        (50.0, 20.0, 1e7),
        (50.0, 0.0, 1e7),
        (50.0, 100.0, 1e7),
    ],
)
def test_source_or_receiver_on_the_surface_or_bottom_against_images(zs, zr, r):
    # a seafloor target or a receiver at the surface is a normal case (tracker defect: no
    # path was found to a receiver exactly at depth 0 or at the bottom depth)
    c, depth = 1500.0, 100.0
    env = Environment.from_arrays([0.0, depth], [c, c])
    e = eigenrays(env, zs, [r], [zr], max_reflections=3)

    def inside(z):
        return _INSIDE if z == 0.0 else (depth - _INSIDE if z == depth else z)

    _assert_matches_images(e, _images(zs, zr, r, depth, 3, inside(zs), inside(zr)), c)


@pytest.mark.parametrize("zr, expected", [(0.0, 0.0), (100.0, 2.0)])
def test_merged_paths_at_a_boundary_receiver_sum_to_the_boundary_field(zr, expected):
    # a receiver on a boundary gets both members of each merging image pair (equal time and
    # loss, one reflection apart). Their coherent sum is the field there: zero at the
    # pressure-release surface (reflection coefficient -1; Jensen et al. 2011, ch. 1-2,
    # Lloyd's mirror) and twice one path at the bottom, which eigenrays treats as rigid
    # (coefficient +1)
    env = Environment.from_arrays([0.0, 100.0], [1500.0, 1500.0])
    e = eigenrays(env, 30.0, [2000.0], [zr], max_reflections=3)
    amp = 10.0 ** (-e.spreading_loss.values / 20.0) * np.exp(1j * e.phase.values)
    t = np.round(e.travel_time.values, 9)
    pairs = 0
    for tk in np.unique(t):
        group = amp[t == tk]
        if group.size != 2:
            continue  # the partner has one reflection more than allowed
        pairs += 1
        # rounding of the loss (1e-8 dB) and phase: 1e-9 of one path's amplitude
        np.testing.assert_allclose(
            abs(group.sum()), expected * abs(group[0]), atol=1e-9 * abs(group[0])
        )
    assert pairs >= 3


def _munk(z):
    # Munk (1974), JASA 55, 220-226, canonical parameters (c1 1500 m/s, z1 = B = 1300 m,
    # eps 0.00737) as in Jensen et al. (2011), ch. 3
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


@pytest.fixture(scope="module")
def munk_env():
    z = np.linspace(0.0, 5000.0, 201)
    return Environment.from_arrays(z, _munk(z))


def test_travel_time_reciprocity(munk_env):
    # reciprocity of the ray travel time: swapping source and receiver depths at the same
    # range gives the same set of arrivals (same times, launch <-> -arrival angles)
    fan = np.linspace(-40.0, 40.0, 4001)
    a = eigenrays(munk_env, 800.0, [42000.0], [2700.0], max_reflections=2, angles=fan)
    b = eigenrays(munk_env, 2700.0, [42000.0], [800.0], max_reflections=2, angles=fan)
    assert a.sizes["path"] == b.sizes["path"] > 3
    np.testing.assert_allclose(
        np.sort(a.travel_time.values), np.sort(b.travel_time.values), rtol=1e-10
    )
    np.testing.assert_allclose(
        np.sort(a.launch_angle.values), np.sort(-b.arrival_angle.values), atol=1e-6
    )
    np.testing.assert_allclose(
        np.sort(a.spreading_loss.values), np.sort(b.spreading_loss.values), atol=1e-4
    )


def test_spreading_matches_neighbouring_rays(munk_env):
    # the closed-form ray-tube width (dynamic ray equations) against finite differences of
    # the depth at the receiver range between neighbouring rays
    r = 37000.0
    e = eigenrays(munk_env, 1000.0, [r], [1800.0], max_reflections=1)
    assert e.sizes["path"] >= 2
    d = 1e-5
    for i in range(e.sizes["path"]):
        th = float(e.launch_angle[i])
        fan = trace_fan(munk_env, 1000.0, [th - d, th + d], r, range_step=r)
        if (
            fan.surface_reflections[0] != fan.surface_reflections[1]
            or fan.bottom_reflections[0] != fan.bottom_reflections[1]
        ):
            continue
        dz = (fan.depth.values[1, -1] - fan.depth.values[0, -1]) / np.radians(2 * d)
        # 1 / (r |dz/dtheta0|): squared pressure re 1 m of a point source (ray tube)
        tl_fd = 10 * np.log10(r * abs(dz))
        # central difference: truncation ~ (d theta)^2 terms and rounding ~1e-16 z / d
        # theta, both far below 1e-3 dB here
        np.testing.assert_allclose(float(e.spreading_loss[i]), tl_fd, atol=1e-3)


def test_layout_and_netcdf_round_trip(tmp_path, munk_env):
    e = eigenrays(munk_env, 1000.0, [10000.0, 20000.0, 30000.0], [500.0, 1500.0], max_reflections=2)
    assert set(e.dims) == {"path", "receiver_range", "receiver_depth"}
    # the PathTable record: our own names, in the documented order (pathtable.py)
    assert list(e.data_vars) == [
        "path_kind",
        "launch_angle",
        "arrival_angle",
        "travel_time",
        "spreading_loss",
        "surface_reflections",
        "bottom_reflections",
        "caustics",
        "turning_points",
        "phase",
        "depth_miss",
        "receiver_range_index",
        "receiver_depth_index",
        "path_count",
    ]
    kind = (e.surface_reflections.values > 0) + 2 * (e.bottom_reflections.values > 0)
    np.testing.assert_array_equal(e.path_kind.values, kind)
    assert e.path_kind.dtype == np.int8 and set(kind) == {0, 1, 2, 3}
    assert e.path_kind.attrs["flag_meanings"].split() == [
        "refracted",
        "surface_reflected",
        "bottom_reflected",
        "surface_and_bottom_reflected",
    ]
    assert int(e.path_count.sum()) == e.sizes["path"]
    assert e.travel_time.attrs["units"] == "s" and e.spreading_loss.attrs["units"] == "dB"
    assert "caution" in e.attrs and "eigenrays" in e.attrs["processing_steps"]
    # sorted by receiver, then time
    key = e.receiver_range_index.values * 10 + e.receiver_depth_index.values
    assert np.all(np.diff(key) >= 0)
    path = tmp_path / "arrivals.nc"
    e.to_netcdf(path)
    with xr.open_dataset(path) as back:
        xr.testing.assert_identical(back.load(), e)


@pytest.mark.parametrize(
    "kwargs, name",
    [
        (dict(receiver_ranges=[0.0]), "receiver_ranges"),
        (dict(receiver_ranges=[np.nan]), "receiver_ranges"),
        (dict(receiver_depths=[6000.0]), "receiver_depths"),
        (dict(source_depth=-1.0), "source_depth"),
        (dict(max_reflections=-1), "max_reflections"),
        (dict(angles=[5.0]), "angles"),
    ],
)
def test_bad_input_names_argument(kwargs, name, munk_env):
    args = dict(source_depth=100.0, receiver_ranges=[1000.0], receiver_depths=[100.0])
    args.update(kwargs)
    with pytest.raises(SeaprofileError, match=name):
        eigenrays(
            munk_env,
            args.pop("source_depth"),
            args.pop("receiver_ranges"),
            args.pop("receiver_depths"),
            **args,
        )


def _duct_env():
    import warnings
    from pathlib import Path

    from seaprofile.casts.read import read_cast
    from seaprofile.profile import build_profile

    demo = Path(__file__).resolve().parents[2] / "demo_casts" / "shelf_summer_ctd.csv"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        profile = build_profile(read_cast(demo))
    return Environment.from_profile(profile, bottom_depth=120.0)


def _brute_force_arrivals(env, zs, r, zr, max_reflections, half_width=4.0, step=5e-4):
    """Independent reference: a dense fan at one range, then scipy brentq on the depth
    miss of a single ray inside every same-family sign change."""
    from scipy.optimize import brentq

    from seaprofile.propagation.kernels import trace_layers

    zn, cn = env.layers()
    dense = np.arange(-half_width, half_width + step / 2, step)
    out = trace_layers(zn, cn, zs, dense, r, max_reflections + 1, samp_r=np.array([r]), counts=True)
    z = out["sample_depth"][:, 0] - zr
    fam = out["sample_counts"][:, 0, :2]

    def miss(theta):
        one = trace_layers(
            zn, cn, zs, np.array([theta]), r, max_reflections + 1, samp_r=np.array([r])
        )
        return one["sample_depth"][0, 0] - zr

    roots = []
    same = np.all(fam[:-1] == fam[1:], axis=1) & np.isfinite(z[:-1]) & np.isfinite(z[1:])
    for i in np.nonzero(same & (np.sign(z[:-1]) != np.sign(z[1:])))[0]:
        if fam[i].sum() <= max_reflections:
            roots.append((brentq(miss, dense[i], dense[i + 1], xtol=1e-13), *fam[i]))
    return roots


def test_default_search_finds_the_narrow_surface_duct_arrival():
    # demo shelf cast (synthetic), source 30 m, receiver 6 km / 20 m: one arrival leaves at
    # about -0.281 degrees, turns once and reflects once at the surface; the jump of the
    # depth at the duct's edge hid it from the plain 0.05 degree fan, and another arrival
    # (+0.338 degrees, one surface and one bottom reflection) sits in a dip of its family
    # right next to the jump. Reference: brute-force fan every 0.0005 degree + brentq.
    env = _duct_env()
    e = eigenrays(env, 30.0, [6000.0], [20.0], max_reflections=3)
    ref = _brute_force_arrivals(env, 30.0, 6000.0, 20.0, 3)
    assert any(abs(x[0] + 0.281) < 0.001 and x[1:] == (1, 0) for x in ref)
    assert any(abs(x[0] - 0.338) < 0.001 and x[1:] == (1, 1) for x in ref)
    within = np.abs(e.launch_angle.values) < 4.0
    got = sorted(
        zip(
            e.launch_angle.values[within],
            e.surface_reflections.values[within],
            e.bottom_reflections.values[within],
        )
    )
    ref = sorted(ref)
    assert len(got) == len(ref)
    # brentq stops at 1e-13 rad; the eigenray search at a 1 micrometre depth miss: with
    # |dz/dtheta| of at most ~1e5 m/rad here both sit within 1e-9 rad (6e-8 deg)
    np.testing.assert_allclose([g[0] for g in got], [x[0] for x in ref], atol=1e-6)
    assert [g[1:] for g in got] == [x[1:] for x in ref]


def test_refinement_can_be_switched_off_and_is_recorded():
    env = _duct_env()
    plain = eigenrays(env, 30.0, [6000.0], [20.0], refine=False)
    refined = eigenrays(env, 30.0, [6000.0], [20.0])
    assert refined.sizes["path"] > plain.sizes["path"]
    assert '"refined_rays": 0' in plain.attrs["processing_steps"]
    assert '"refined_rays": 0' not in refined.attrs["processing_steps"]
