"""Plane-wave reflection: the Rayleigh coefficient of a fluid seabed, the rough pressure-release
surface, the named sediments. Each check is an independent closed form computed here."""

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st

from seaprofile._validate import SeaprofileError
from seaprofile.propagation import (
    SEDIMENTS,
    Environment,
    LayeredSpeed,
    Seabed,
    Surface,
    rayleigh_reflection,
    reflection_loss,
    roughness_factor,
)
from seaprofile.propagation.reflection import DB_PER_WAVELENGTH, complex_sound_speed

C1, RHO1 = 1500.0, 1000.0


def test_critical_angle_total_reflection_below_partial_above():
    # Jensen, Kuperman, Porter & Schmidt (2011), Computational Ocean Acoustics, ch. 1:
    # theta_c = acos(c1/c2); lossless faster seabed: |R| = 1 below theta_c, < 1 above (exact)
    c2, rho2 = 1650.0, 1900.0
    theta_c = np.degrees(np.arccos(C1 / c2))
    below = np.linspace(0.0, theta_c - 1e-3, 50)
    above = np.linspace(theta_c + 1e-3, 90.0, 50)
    np.testing.assert_allclose(abs(rayleigh_reflection(below, C1, RHO1, c2, rho2)), 1.0, atol=1e-12)
    assert np.all(abs(rayleigh_reflection(above, C1, RHO1, c2, rho2)) < 1.0 - 1e-6)
    # below theta_c the coefficient turns in phase only; loss 0 dB (rounding tolerance)
    np.testing.assert_allclose(
        reflection_loss(rayleigh_reflection(below, C1, RHO1, c2, rho2)), 0.0, atol=1e-10
    )


@pytest.mark.parametrize("c2, rho2", [(1650.0, 1900.0), (1450.0, 1300.0), (3000.0, 2400.0)])
def test_normal_incidence_is_impedance_contrast(c2, rho2):
    # Jensen et al. (2011), ch. 1: at normal incidence R = (Z2 - Z1)/(Z2 + Z1), Z = rho c
    z1, z2 = RHO1 * C1, rho2 * c2
    r = rayleigh_reflection(90.0, C1, RHO1, c2, rho2)
    assert r == pytest.approx((z2 - z1) / (z2 + z1), abs=1e-14)


def test_slower_lossless_seabed_has_no_critical_angle():
    # Jensen et al. (2011), ch. 1: c2 < c1 -> kz2 real at every angle, R real and |R| < 1;
    # closed form with Snell's law cos(theta2) = (c2/c1) cos(theta1), Z = rho c / sin(theta)
    c2, rho2 = 1450.0, 1600.0
    theta = np.linspace(0.5, 90.0, 60)
    t1 = np.radians(theta)
    t2 = np.arccos(c2 / C1 * np.cos(t1))
    z1, z2 = RHO1 * C1 / np.sin(t1), rho2 * c2 / np.sin(t2)
    r = rayleigh_reflection(theta, C1, RHO1, c2, rho2)
    np.testing.assert_allclose(r.imag, 0.0, atol=1e-14)
    np.testing.assert_allclose(r.real, (z2 - z1) / (z2 + z1), rtol=1e-12, atol=1e-14)
    assert np.all(abs(r) < 1.0)


def test_complex_sound_speed_gives_the_attenuation_per_wavelength():
    # Jensen et al. (2011), ch. 1: k = (omega/c)(1 + i alpha / (40 pi log10 e)); over one
    # wavelength the amplitude falls by alpha dB (checked here as 20 log10 e * Im(k) lambda)
    c, alpha, f = 1650.0, 0.8, 100.0
    k = 2 * np.pi * f / complex_sound_speed(c, alpha)
    assert DB_PER_WAVELENGTH == pytest.approx(0.0183, abs=1e-4)  # from memory: about 0.0183
    assert 20 * np.log10(np.e) * k.imag * (c / f) == pytest.approx(alpha, rel=1e-12)


@pytest.mark.parametrize("attenuation", [0.0, 0.5, 5.0])
def test_branch_decays_into_the_seabed(attenuation):
    # the transmitted field exp(i kz2 z), z down, must not grow: Im(kz2) >= 0. Recover kz2
    # from R: kz2 = (rho2/rho1) kz1 (1 - R)/(1 + R) (inverting R of Jensen et al. 2011, ch. 1)
    c2, rho2 = 1700.0, 1800.0
    theta = np.linspace(1.0, 90.0, 90)
    r = rayleigh_reflection(theta, C1, RHO1, c2, rho2, attenuation)
    kz2 = rho2 / RHO1 * np.sin(np.radians(theta)) * (1 - r) / (1 + r)
    assert np.all(kz2.imag >= -1e-12)
    assert np.all(kz2.real >= -1e-12)  # and carries energy downward


@given(
    st.floats(0.0, 90.0),
    st.floats(200.0, 6000.0),
    st.floats(100.0, 4000.0),
    st.floats(0.0, 30.0),
)
def test_energy_conservation_for_any_lossy_seabed(theta, c2, rho2, attenuation):
    # invariant: a passive half-space (attenuation >= 0) cannot reflect more than it receives
    r = rayleigh_reflection(theta, C1, RHO1, c2, rho2, attenuation)
    assert abs(r) <= 1.0 + 1e-12
    assert reflection_loss(r) >= -1e-10


@pytest.mark.parametrize(
    "c2, rho2, attenuation", [(1650.0, 1900.0, 0.0), (1450.0, 1300.0, 0.0), (1800.0, 2000.0, 1.0)]
)
def test_grazing_zero_is_minus_one(c2, rho2, attenuation):
    # Jensen et al. (2011), ch. 1: at grazing 0 the water's vertical wavenumber kz1 = k1 sin 0
    # vanishes while kz2 does not (c2 != c1 or lossy), so R = (0 - rho1 kz2)/(0 + rho1 kz2) = -1:
    # incident and reflected waves cancel, as at a pressure-release boundary (exact)
    assert rayleigh_reflection(0.0, C1, RHO1, c2, rho2, attenuation) == pytest.approx(-1.0)


def test_equal_speed_lossless_seabed_at_grazing_zero_is_the_density_contrast():
    # c2 = c1: kz2 = kz1 at every angle, R = (rho2 - rho1)/(rho2 + rho1) (Jensen et al. 2011,
    # ch. 1); the 0/0 at grazing 0 takes this limit
    r = rayleigh_reflection([0.0, 10.0, 90.0], C1, RHO1, C1, 1500.0)
    np.testing.assert_allclose(r, (1500.0 - RHO1) / (1500.0 + RHO1), rtol=1e-12)


def test_roughness_factor_closed_form_and_trends():
    # Kirchhoff approximation, coherent factor exp(-2 (k h sin theta)^2), k = 2 pi f / c
    # (Eckart 1953, J. Acoust. Soc. Am. 25, 566-570, from memory; Jensen et al. 2011, ch. 1)
    theta = np.linspace(0.0, 90.0, 19)
    np.testing.assert_array_equal(roughness_factor(theta, 1000.0, 0.0), 1.0)
    k = 2 * np.pi * 500.0 / 1500.0
    expected = np.exp(-2 * (k * 0.3 * np.sin(np.radians(theta))) ** 2)
    np.testing.assert_allclose(roughness_factor(theta, 500.0, 0.3), expected, rtol=1e-14)
    by_angle = roughness_factor(theta, 500.0, 0.3)
    assert by_angle[0] == 1.0 and np.all(np.diff(by_angle) < 0)
    by_frequency = [float(roughness_factor(20.0, f, 0.3)) for f in (100.0, 300.0, 1000.0)]
    assert by_frequency[0] > by_frequency[1] > by_frequency[2]


def test_surface_method_pressure_release_and_rough():
    # pressure release, R = -1 (Jensen et al. 2011, ch. 1), times the roughness factor above
    assert Surface().reflection_coefficient([0.0, 45.0, 90.0], 1000.0) == pytest.approx(-1.0)
    r = Surface(rms_wave_height=0.3).reflection_coefficient(30.0, 500.0, sound_speed=1500.0)
    k = 2 * np.pi * 500.0 / 1500.0
    assert r == pytest.approx(-np.exp(-2 * (k * 0.3 * 0.5) ** 2), rel=1e-14)
    with pytest.raises(SeaprofileError, match="frequency"):
        Surface(rms_wave_height=0.3).reflection_coefficient(30.0)


def test_seabed_method_matches_the_function():
    bed = Seabed(sound_speed=1700.0, density=1800.0, attenuation=0.5, name="site core")
    theta = np.array([5.0, 40.0, 90.0])
    np.testing.assert_array_equal(
        bed.reflection_coefficient(theta, water_sound_speed=1490.0, water_density=1026.0),
        rayleigh_reflection(theta, 1490.0, 1026.0, 1700.0, 1800.0, 0.5),
    )
    np.testing.assert_allclose(
        bed.reflection_loss(theta), -20 * np.log10(abs(bed.reflection_coefficient(theta)))
    )


def test_xarray_input_keeps_dims_and_says_its_method():
    theta = xr.DataArray(np.linspace(0.0, 90.0, 5), dims="reflection")
    r = rayleigh_reflection(theta, C1, RHO1, 1650.0, 1900.0, 0.8)
    assert r.dims == ("reflection",) and np.iscomplexobj(r)
    assert r.attrs["equation"] == "rayleigh_fluid_half_space" and "Jensen" in r.attrs["references"]
    np.testing.assert_array_equal(
        r.values, rayleigh_reflection(theta.values, C1, RHO1, 1650.0, 1900.0, 0.8)
    )


@pytest.mark.parametrize(
    "call, word",
    [
        (lambda: rayleigh_reflection(95.0, C1, RHO1, 1650.0, 1900.0), "grazing_angle"),
        (lambda: rayleigh_reflection(-1.0, C1, RHO1, 1650.0, 1900.0), "grazing_angle"),
        (lambda: rayleigh_reflection(10.0, 0.0, RHO1, 1650.0, 1900.0), "c1"),
        (lambda: rayleigh_reflection(10.0, C1, RHO1, 1650.0, 1900.0, -1.0), "attenuation"),
        (lambda: roughness_factor(10.0, 0.0, 0.3), "frequency"),
        (lambda: Seabed.named("sand").reflection_coefficient(10.0, frequency=-5.0), "frequency"),
    ],
)
def test_bad_input_names_the_argument(call, word):
    with pytest.raises(SeaprofileError, match=word):
        call()


def test_named_sediments():
    # values from memory of the sediment table in Jensen et al. (2011), ch. 1 (see SEDIMENTS)
    sand = Seabed.named(" Sand ")
    assert sand == Seabed(sound_speed=1650.0, density=1900.0, attenuation=0.8, name="sand")
    for name, values in SEDIMENTS.items():
        assert Seabed.named(name) == Seabed(name=name, **values)
    # denser sediments are faster in the compilation
    speeds = [SEDIMENTS[n]["sound_speed"] for n in ("clay", "silt", "sand", "gravel", "moraine")]
    assert speeds == sorted(speeds)
    with pytest.raises(SeaprofileError) as info:
        Seabed.named("mud")
    for name in SEDIMENTS:
        assert name in str(info.value)


def test_named_seabed_and_rough_surface_round_trip_through_attrs():
    surface, seabed = Surface(rms_wave_height=0.7), Seabed.named("gravel")
    env = Environment(LayeredSpeed([0.0, 100.0], [1500.0, 1500.0]), 100.0, surface, seabed)
    attrs = env.provenance_attrs()
    assert attrs["surface_reflection_coefficient"] == -1.0
    assert Surface.from_attrs(attrs) == surface
    assert Seabed.from_attrs(attrs) == seabed


def test_every_array_kind_gives_the_numpy_numbers(array_kind, count_tasks):
    # the one dispatcher (seawater._apply.pointwise): numpy, xarray, dask, xarray on dask
    theta = np.linspace(0.0, 90.0, 12).reshape(3, 4)
    expected = rayleigh_reflection(theta, C1, RHO1, 1650.0, 1900.0, 0.8)
    with count_tasks() as counter:
        lazy = rayleigh_reflection(array_kind(theta), C1, RHO1, 1650.0, 1900.0, 0.8)
        rough = roughness_factor(array_kind(theta), 500.0, 0.3)
        assert counter.tasks == 0  # nothing computed before asked
    np.testing.assert_array_equal(array_kind.values(lazy), expected)
    np.testing.assert_array_equal(array_kind.values(rough), roughness_factor(theta, 500.0, 0.3))
