"""Transmission-loss field against closed forms computed here (sources beside each check)."""

import numpy as np
import pytest

from seaprofile.io.errors import ArgumentError
from seaprofile.propagation.boundaries import Seabed
from seaprofile.propagation.environment import Environment
from seaprofile.propagation.loss import transmission_loss

# a seabed matched to the water (R = 0): an isovelocity half-space below a free surface
MATCHED = Seabed(sound_speed=1500.0, density=1025.0, attenuation=0.0, name="matched")


def _deep(depth=5000.0):
    return Environment.from_arrays([0.0, depth], [1500.0, 1500.0], depth, seabed=MATCHED)


def _two_paths(r, z, zs, k, coherent=True):
    """Direct path plus surface image with R = -1 (Lloyd's mirror; Jensen, Kuperman,
    Porter & Schmidt 2011, Computational Ocean Acoustics, 2nd ed., ch. 1/2)."""
    r1 = np.hypot(r[None, :], z[:, None] - zs)
    r2 = np.hypot(r[None, :], z[:, None] + zs)
    if coherent:
        p = np.exp(1j * k * r1) / r1 - np.exp(1j * k * r2) / r2
        return -20 * np.log10(np.abs(p)), r1
    return -10 * np.log10(1 / r1**2 + 1 / r2**2), r1


def test_spherical_spreading_incoherent():
    # isovelocity deep water: 20 log10 R (spherical spreading, Jensen et al. 2011 ch. 1);
    # tolerance 0.5 dB as asked. The fan (+-60 deg) leaves out the surface-image path,
    # which leaves the source steeper than 62 deg for every receiver here
    r = np.linspace(500.0, 2000.0, 15)
    z = np.linspace(1800.0, 2200.0, 9)
    tl = transmission_loss(
        _deep(),
        2000.0,
        500.0,
        ranges=r,
        depths=z,
        mode="incoherent",
        beams=400,
        angles=(-60, 60),
        absorption=None,
    )
    ref = 20 * np.log10(np.hypot(r[None, :], z[:, None] - 2000.0))
    diff = np.abs(tl.values - ref)
    assert diff.max() < 0.5, diff.max()
    assert (tl.beam_count.values > 0).all()


def test_absorption_added_along_path():
    # the same geometry with Francois & Garrison (1982) absorption at 10 kHz: the direct
    # path loses alpha R (alpha at the source depth; image path outside the fan)
    from seaprofile.seawater.absorption import absorption

    r = np.linspace(500.0, 2000.0, 5)
    z = np.array([2000.0])
    tl = transmission_loss(
        _deep(),
        2000.0,
        10000.0,
        ranges=r,
        depths=z,
        mode="incoherent",
        beams=400,
        angles=(-60, 60),
    )
    alpha = float(absorption(10000.0, 10.0, 35.0, 2000.0)) / 1000.0
    ref = 20 * np.log10(r) + alpha * r
    diff = np.abs(tl.values[0] - ref)
    assert diff.max() < 0.5, diff.max()


def test_lloyd_mirror_coherent():
    # Lloyd's mirror: two-path closed form (Jensen et al. 2011, ch. 1/2), within 1 dB where
    # the reference is no more than 4 dB below direct spreading (away from the nulls)
    zs, f = 60.0, 150.0
    r = np.linspace(500.0, 3000.0, 40)
    z = np.linspace(20.0, 200.0, 19)
    tl = transmission_loss(
        _deep(), zs, f, ranges=r, depths=z, beams=1000, angles=(-60, 60), absorption=None
    )
    ref, r1 = _two_paths(r, z, zs, 2 * np.pi * f / 1500.0)
    away = ref < 20 * np.log10(r1) + 4.0
    diff = np.abs(tl.values - ref)[away]
    assert away.sum() > 300
    assert diff.max() < 1.0, diff.max()


def test_reciprocity():
    # source and receiver exchanged give the same coherent loss (reciprocity, Jensen et
    # al. 2011 ch. 1), within 1 dB
    env = Environment.from_arrays(
        [0.0, 100.0, 1000.0, 3000.0], [1520.0, 1510.0, 1490.0, 1500.0], 3000.0, seabed=MATCHED
    )
    a = transmission_loss(
        env,
        100.0,
        200.0,
        ranges=[5000.0],
        depths=[400.0],
        beams=800,
        angles=(-50, 50),
        absorption=None,
    )
    b = transmission_loss(
        env,
        400.0,
        200.0,
        ranges=[5000.0],
        depths=[100.0],
        beams=800,
        angles=(-50, 50),
        absorption=None,
    )
    assert abs(float(a[0, 0]) - float(b[0, 0])) < 1.0


def test_attrs_and_errors():
    tl = transmission_loss(
        _deep(), 100.0, 100.0, ranges=[1000.0], depths=[50.0], beams=50, absorption=None
    )
    assert tl.name == "transmission_loss" and tl.dims == ("depth", "range")
    assert tl.attrs["units"] == "dB" and tl.attrs["product"] == "loss_field"
    assert "1349" in tl.attrs["method"] and tl.attrs["seabed"] == "fluid_half_space"
    assert tl.beam_count.dtype == np.int32
    with pytest.raises(ArgumentError):
        transmission_loss(_deep(), 100.0, 100.0, ranges=[0.0], depths=[50.0])
    with pytest.raises(ArgumentError):
        transmission_loss(_deep(), 100.0, 100.0, ranges=[10.0], depths=[50.0], mode="x")


# --- Pekeris waveguide (Pekeris 1948; Jensen et al. 2011, ch. 2 and 5) ------------------
PEK_D, PEK_C1, PEK_C2, PEK_RHO1, PEK_RHO2, PEK_F, PEK_ZS = (
    100.0,
    1500.0,
    1800.0,
    1025.0,
    1800.0,
    200.0,
    30.0,
)


def _pekeris_modes():
    from scipy.optimize import brentq

    k1, k2 = 2 * np.pi * PEK_F / PEK_C1, 2 * np.pi * PEK_F / PEK_C2

    def g(kr):  # continuity of p and p_z / rho at the bottom (Jensen et al. 2011, ch. 2)
        kz, ga = np.sqrt(k1**2 - kr**2), np.sqrt(kr**2 - k2**2)
        return np.sin(kz * PEK_D) * ga / PEK_RHO2 + kz * np.cos(kz * PEK_D) / PEK_RHO1

    kr = np.linspace(k2 * (1 + 1e-9), k1 * (1 - 1e-9), 20000)
    v = g(kr)
    idx = np.nonzero(np.sign(v[:-1]) != np.sign(v[1:]))[0]
    krm = np.array([brentq(g, kr[i], kr[i + 1]) for i in idx])
    return krm, np.sqrt(k1**2 - krm**2), np.sqrt(krm**2 - k2**2)


def _pekeris_tl(r, z, coherent):
    """Normal-mode sum, |p| = 1 at 1 m: p = sqrt(2 pi / r) / rho(zs) sum psi(zs) psi(z)
    exp(i krm r) / sqrt(krm), modes normalised to int psi^2 / rho dz = 1 (Jensen et al.
    2011, ch. 5, far-field form, continuous spectrum left out)."""
    krm, kz, ga = _pekeris_modes()
    norm = (PEK_D / 2 - np.sin(2 * kz * PEK_D) / (4 * kz)) / PEK_RHO1
    norm = norm + np.sin(kz * PEK_D) ** 2 / (2 * ga * PEK_RHO2)
    amp = 1 / np.sqrt(norm)
    psi_s = amp * np.sin(kz * PEK_ZS)
    psi = amp * np.sin(kz * z[:, None])  # (z, m), all receivers in the water
    terms = (psi[:, None, :] * psi_s / np.sqrt(krm)) * np.exp(1j * krm * r[None, :, None])
    terms = terms / PEK_RHO1 * np.sqrt(2 * np.pi / r)[None, :, None]
    if coherent:
        return -20 * np.log10(np.abs(terms.sum(-1)))
    return -10 * np.log10((np.abs(terms) ** 2).sum(-1))


def _pekeris_beams(mode):
    env = Environment.from_arrays(
        [0.0, PEK_D],
        [PEK_C1, PEK_C1],
        PEK_D,
        seabed=Seabed(PEK_C2, PEK_RHO2, 0.0, name="pekeris"),
    )
    r = np.linspace(500.0, 5000.0, 46)  # 5 to 50 water depths
    z = np.linspace(5.0, 95.0, 19)
    tl = transmission_loss(
        env,
        PEK_ZS,
        PEK_F,
        ranges=r,
        depths=z,
        mode=mode,
        beams=400,
        angles=(-60, 60),
        absorption=None,
    )
    return tl.values, r, z


def test_pekeris_incoherent_mode_sum():
    # statistic: median |TL_beams - TL_modes| over the field, 5-50 water depths; 1.5 dB
    # (measured 0.51 dB; 90th percentile 1.8 dB)
    tl, r, z = _pekeris_beams("incoherent")
    diff = np.abs(tl - _pekeris_tl(r, z, coherent=False))
    assert np.median(diff) < 1.5, np.median(diff)


def test_pekeris_coherent_mode_sum():
    # statistic: median |TL_beams - TL_modes| over the field, 5-50 water depths; 3 dB
    # (measured 2.0 dB; 90th percentile 6.0 dB, at the interference nulls)
    tl, r, z = _pekeris_beams("coherent")
    diff = np.abs(tl - _pekeris_tl(r, z, coherent=True))
    assert np.median(diff) < 3.0, np.median(diff)
