"""Tests of seaprofile.layers.channels (channels, critical depth, depth excess) on the
Munk profile, with scipy.optimize.brentq as the independent root finder."""

import numpy as np
import pytest
from _layer_test_profiles import make_profile, munk
from scipy.optimize import brentq

from seaprofile import layers

# --- channels, critical depth, depth excess on the Munk profile -------------------------
Z_MUNK = np.arange(0.0, 5001.0, 1.0)


def test_munk_channel_axis():
    # Munk (1974), JASA 55, 220: the axis of the canonical profile is at z1 = 1300 m.
    ch = layers.sound_channels(munk(Z_MUNK), Z_MUNK)
    assert ch["axis_depth"] == 1300.0
    assert ch["axis_speed"] == pytest.approx(1500.0, abs=1e-9)
    assert np.isnan(ch["secondary_depth"])


def test_munk_critical_depth_and_depth_excess():
    # Munk (1974), JASA 55, 220 profile; the depth below the axis where c(z) = c(0) is
    # found independently with scipy.optimize.brentq on the closed form. The profile is
    # sampled every 1 m and interpolated linearly: |c''| < 1e-4 1/(m s) there, so the
    # interpolation error is far below the 0.01 m tolerance.
    c = munk(Z_MUNK)
    expected = brentq(lambda z: munk(z) - munk(0.0), 1300.0, 5000.0, xtol=1e-10)
    got = layers.critical_depth(c, Z_MUNK, c[0], 1300.0)
    assert got == pytest.approx(expected, abs=0.01)
    assert layers.depth_excess(5000.0, got) == pytest.approx(5000.0 - expected, abs=0.01)
    assert layers.depth_excess(4000.0, got) < 0
    assert np.isnan(layers.depth_excess(5000.0, np.nan))  # was None: NaN is array-friendly

    d = layers.describe(make_profile(Z_MUNK, sound=c), bottom_depth=5000.0, source_depth=300.0)
    assert d["channel_axis_depth"] == 1300.0
    assert d["critical_depth_surface"] == pytest.approx(expected, abs=0.01)
    assert d["depth_excess_surface"] == pytest.approx(5000.0 - expected, abs=0.01)
    # the source's conjugate depth: c(z) = c(300 m) below the axis (brentq, closed form)
    conj = brentq(lambda z: munk(z) - munk(300.0), 1300.0, 5000.0, xtol=1e-10)
    assert d["source_sound_speed"] == pytest.approx(munk(300.0), abs=1e-6)
    assert d["critical_depth_source"] == pytest.approx(conj, abs=0.01)
    # a source below the axis has its conjugate above it
    d = layers.describe(make_profile(Z_MUNK, sound=c), source_depth=3000.0)
    conj = brentq(lambda z: munk(z) - munk(3000.0), 0.0, 1300.0, xtol=1e-10)
    assert d["critical_depth_source"] == pytest.approx(conj, abs=0.01)


def test_critical_depth_not_reached():
    z = np.arange(0.0, 3001.0, 1.0)
    d = layers.describe(make_profile(z, sound=munk(z)), bottom_depth=3000.0)
    assert d["channel_axis_depth"] == 1300.0
    assert d["critical_depth_surface"] is None and d["depth_excess_surface"] is None


def test_secondary_channel_rule():
    # Our documented rule: a second local minimum rising >= 1 m/s on its lower side,
    # with a trapping region >= 10 m thick. A 4 m/s Gaussian dip at 400 m qualifies.
    c = munk(Z_MUNK) - 4.0 * np.exp(-(((Z_MUNK - 400.0) / 40.0) ** 2))
    ch = layers.sound_channels(c, Z_MUNK)
    assert ch["axis_depth"] == 1300.0
    assert abs(ch["secondary_depth"] - 400.0) < 20.0
    assert ch["secondary_contrast"] > 1.0 and ch["secondary_thickness"] >= 10.0
    # a 0.3 m/s wiggle does not
    c = munk(Z_MUNK) - 0.3 * np.exp(-(((Z_MUNK - 400.0) / 40.0) ** 2))
    assert np.isnan(layers.sound_channels(c, Z_MUNK)["secondary_depth"])


def test_no_axis_when_speed_decreases_to_the_end():
    z = np.arange(0.0, 120.0, 1.0)
    ch = layers.sound_channels(1500.0 - 0.1 * z, z)
    assert np.isnan(ch["axis_depth"]) and ch["still_decreasing"]
