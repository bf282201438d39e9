"""Tests of seaprofile.layers.harmonic against closed forms and scipy quadrature."""

import numpy as np
import pytest
from _layer_test_profiles import munk
from hypothesis import given
from hypothesis import strategies as st
from scipy.integrate import quad

from seaprofile import layers


# --- harmonic mean ---------------------------------------------------------------------
@given(
    c0=st.floats(1400.0, 1600.0),
    g=st.floats(-0.2, 0.2),
    z1=st.floats(0.0, 400.0),
    dz=st.floats(0.5, 600.0),
)
def test_harmonic_mean_linear_profile(c0, g, z1, dz):
    # Closed form for c = c0 + g z (textbook integral of 1/(c0 + g z)):
    # (z2 - z1) / integral(dz / c) = (z2 - z1) g / ln(c(z2) / c(z1)); c0 when g = 0.
    # Irregular nodes, z1 and z2 between nodes; relative tolerance 1e-10 (rounding only).
    z = np.unique(np.concatenate([[0.0, 1000.0], np.linspace(0, 1000, 37) ** 1.02 / 1.15]))
    z2 = z1 + dz
    c = c0 + g * z
    got = layers.harmonic_mean_sound_speed(c, z, z1, z2)
    if abs(g) < 1e-12:
        expected = c0
    else:
        # ln(c2/c1) written as log1p(g (z2 - z1) / c1) to avoid cancellation for tiny g
        expected = (z2 - z1) * g / np.log1p(g * (z2 - z1) / (c0 + g * z1))
    assert got == pytest.approx(expected, rel=1e-10)


def test_harmonic_mean_against_quadrature_and_vectorised():
    # scipy.integrate.quad of 1/c over the piecewise-linear Munk profile (nodes every
    # 50 m): independent of our segment formula; quad converges to ~1e-12 relative.
    z = np.arange(0.0, 5001.0, 50.0)
    c = munk(z)
    bottoms = np.array([10.0, 333.0, 1300.0, 4444.4])
    got = layers.harmonic_mean_sound_speed(c, z, 5.0, bottoms)
    for b, value in zip(bottoms, got):
        integral, _ = quad(
            lambda x: 1.0 / np.interp(x, z, c),
            5.0,
            b,
            points=z[z < b],
            limit=200,
            epsabs=0,
            epsrel=1e-13,
        )
        assert value == pytest.approx((b - 5.0) / integral, rel=1e-10)
    # equal depths give the local speed; below the profile gives NaN
    assert layers.harmonic_mean_sound_speed(c, z, 100.0, 100.0) == pytest.approx(
        np.interp(100.0, z, c)
    )
    assert np.isnan(layers.harmonic_mean_sound_speed(c, z, 0.0, 6000.0))


@given(
    st.lists(st.floats(1450.0, 1550.0), min_size=3, max_size=30),
    st.floats(0.0, 1.0),
    st.floats(0.0, 1.0),
)
def test_harmonic_mean_between_extremes(speeds, a, b):
    z = np.arange(len(speeds), dtype=float) * 7.0
    c = np.array(speeds)
    top, bottom = sorted((a * z[-1], b * z[-1]))
    hm = layers.harmonic_mean_sound_speed(c, z, top, bottom)
    assert c.min() - 1e-9 <= hm <= c.max() + 1e-9


@pytest.mark.parametrize("top, bottom", [(13.99986, 14.0), (3.0, 3.0001), (8.5, 13.9)])
def test_harmonic_mean_over_a_short_span_inside_one_segment(top, bottom):
    # analytic closed form inside one linear segment c = c1 + g (z - z1):
    # integral dz / c = ln(c2 / c1) / g (elementary calculus), so the harmonic mean is
    # (z2 - z1) g / ln(c2 / c1); found by hypothesis: a difference of two integrals from
    # the surface lost ~1e-11 of the value over 0.1 mm
    z = np.array([0.0, 7.0, 14.0])
    flat = layers.harmonic_mean_sound_speed(np.full(3, 1450.0), z, top, bottom)
    assert abs(flat - 1450.0) <= 1e-12 * 1450.0
    c = np.array([1450.0, 1460.0, 1470.0])  # g = 10/7 s-1 throughout
    g = 10.0 / 7.0
    c1 = 1450.0 + g * top
    # ln(c2 / c1) as log1p((c2 - c1) / c1), c2 - c1 = g (z2 - z1): no cancellation
    expected = (bottom - top) * g / np.log1p(g * (bottom - top) / c1)
    got = layers.harmonic_mean_sound_speed(c, z, top, bottom)
    assert abs(got - expected) <= 1e-10 * expected
