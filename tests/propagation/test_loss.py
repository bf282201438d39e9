"""Transmission loss by Gaussian-beam summation against closed-form references."""

import warnings

import numpy as np
import pytest
import xarray as xr

import seaprofile
from seaprofile.propagation import Environment, Seabed
from seaprofile.propagation.loss import transmission_loss

C = 1500.0


def _field(mode, zs=500.0, z=None, r=None, **kw):
    env = Environment.from_arrays([0, 5000], [C, C], 5000, seabed=Seabed.named("sand"))
    r = np.linspace(100, 3000, 30) if r is None else r
    z = np.linspace(0, 1000, 51) if z is None else z
    kw.setdefault("absorption", None)
    tl = transmission_loss(
        env, zs, 200.0, ranges=r, depths=z, mode=mode, beams=400, angles=(-60, 60), **kw
    )
    return tl, r, z


def test_free_space_spherical_spreading():
    # spherical spreading 20 log10 R in isovelocity water (Jensen et al. 2011, ch. 3);
    # downward beams only, receivers far below the source: no surface image reaches
    env = Environment.from_arrays([0, 5000], [C, C], 5000, seabed=Seabed.named("sand"))
    r = np.linspace(100, 3000, 30)
    z = np.linspace(1000, 2000, 51)
    tl = transmission_loss(
        env, 500.0, 200.0, ranges=r, depths=z, beams=400, angles=(1, 89), absorption=None
    )
    R = np.hypot(r[None, :], z[:, None] - 500.0)
    d = tl.values - 20 * np.log10(R)
    # tolerance 1 dB on the median, common practice, no source
    assert abs(np.nanmedian(d)) < 1.0


def test_lloyds_mirror_coherent():
    # Lloyd's mirror: direct path minus the surface image (Jensen et al. 2011, ch. 2, the
    # two-path closed form p = e^{ikR1}/R1 - e^{ikR2}/R2), within 1 dB away from nulls
    tl, r, z = _field("coherent")
    k = 2 * np.pi * 200.0 / C
    r1 = np.hypot(r[None, :], z[:, None] - 500.0)
    r2 = np.hypot(r[None, :], z[:, None] + 500.0)
    p = np.exp(1j * k * r1) / r1 - np.exp(1j * k * r2) / r2
    ref = -20 * np.log10(np.abs(p))
    away = (ref < 20 * np.log10(r1) + 6) & np.isfinite(tl.values)
    d = np.abs(tl.values - ref)[away]
    assert np.median(d) < 1.0


def test_incoherent_two_paths():
    # incoherent two-path sum 1/R1^2 + 1/R2^2 (Jensen et al. 2011, ch. 2), 1 dB median
    tl, r, z = _field("incoherent")
    r1 = np.hypot(r[None, :], z[:, None] - 500.0)
    r2 = np.hypot(r[None, :], z[:, None] + 500.0)
    ref = -10 * np.log10(1 / r1**2 + 1 / r2**2)
    assert np.nanmedian(np.abs(tl.values - ref)) < 1.0


def test_layout_and_round_trip(tmp_path):
    tl, r, z = _field("semicoherent")
    assert tl.dims == ("depth", "range") and tl.name == "transmission_loss"
    assert tl.attrs["units"] == "dB" and "re 1 m" in tl.attrs["long_name"]
    assert tl["beam_count"].dtype == np.int32
    assert tl.attrs["product"] == "loss_field"
    path = tmp_path / "tl.nc"
    seaprofile.write(tl, path)
    back = xr.open_dataset(path)
    np.testing.assert_allclose(back["transmission_loss"].values, tl.values)
    assert back.attrs["product"] == "loss_field"


def test_bad_mode():
    with pytest.raises(seaprofile.SeaprofileError):
        _field("loud")


def test_no_seabed_warns():
    env = Environment.from_arrays([0, 200], [C, C], 200)
    with warnings.catch_warnings(record=True) as w:
        warnings.simplefilter("always")
        transmission_loss(env, 50, 100, ranges=[100, 200], depths=[10, 20], beams=20)
    assert any("seabed" in str(x.message) for x in w)


def test_reciprocity_coherent():
    # acoustic reciprocity (Jensen et al. 2011, ch. 2): source and receiver depths swapped
    # give the same field; 1 dB on the median over ranges, common practice, no source
    env = Environment.from_arrays([0, 100], [C, C], 100, seabed=Seabed.named("sand"))
    r = np.linspace(500, 3000, 26)
    kw = dict(ranges=r, beams=600, angles=(-60, 60), absorption=None)
    a = transmission_loss(env, 20.0, 200.0, depths=[70.0], **kw).values[0]
    b = transmission_loss(env, 70.0, 200.0, depths=[20.0], **kw).values[0]
    ok = np.isfinite(a) & np.isfinite(b)
    assert np.median(np.abs(a[ok] - b[ok])) < 1.0


def test_range_dependent_runs():
    env = Environment.from_arrays(
        [0, 300], [C, C], bathymetry=([0, 3000], [200, 100]), seabed=Seabed.named("sand")
    )
    tl = transmission_loss(env, 50, 200, ranges=np.linspace(100, 3000, 10),
                           depths=np.linspace(0, 200, 21), beams=100)  # fmt: skip
    assert np.isnan(tl.values[-1, -1]) and tl["beam_count"].values[-1, -1] == 0
    assert np.isfinite(tl.values[5, 5])
