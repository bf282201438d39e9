"""The block kernels of sound_channels / critical_depth against scipy.signal.find_peaks.

Reference library: ``scipy.signal.find_peaks`` on ``-c`` (prominence = min_contrast,
width = 0, rel_height = 1) and ``numpy.interp``, one profile at a time, as the channel
rule in the docstring of :func:`seaprofile.layers.sound_channels` defines it; the
critical depth by its plain definition (first sample below the axis reaching the
reference speed, linear interpolation before it). Tolerance: exact (bit for bit), since
both evaluate the same floating-point operations. Profiles are random walks (invented),
rounded so that plateaus and ties occur, with missing samples.
"""

import numpy as np
import pytest
from scipy.signal import find_peaks

from seaprofile import layers

# find_peaks warns when some peaks have zero prominence (plateau ties); not a failure here
pytestmark = pytest.mark.filterwarnings("ignore:some peaks have a prominence of 0")


def _reference_channels(c, z, below, min_contrast, min_thickness):
    ok = np.isfinite(z) & np.isfinite(c)
    z, c = z[ok], c[ok]
    out = [np.nan] * 7 + [False]
    if np.isfinite(below):
        keep = z >= below
        z, c = z[keep], c[keep]
    if z.size < 3:
        return out
    i = int(np.argmin(c))
    out[7] = i == z.size - 1
    contrast = min(c[: i + 1].max(), c[i:].max()) - c[i]
    axis = -1
    if 0 < i < z.size - 1 and contrast >= min_contrast:
        axis = i
        out[:3] = z[i], c[i], contrast
    peaks, props = find_peaks(-c, prominence=min_contrast, width=0, rel_height=1.0)
    if peaks.size:
        idx = np.arange(z.size, dtype=float)
        thick = np.interp(props["right_ips"], idx, z) - np.interp(props["left_ips"], idx, z)
        good = (thick >= min_thickness) & (peaks != axis)
        if axis >= 0:
            good &= np.abs(c[peaks] - c[axis]) > 1e-9
        if good.any():
            k = np.flatnonzero(good)[np.argmax(props["prominences"][good])]
            out[3:7] = z[peaks[k]], c[peaks[k]], props["prominences"][k], thick[k]
    return out


def _reference_critical(c, z, reference, axis_depth):
    ok = np.isfinite(z) & np.isfinite(c)
    z, c = z[ok], c[ok]
    if not (np.isfinite(axis_depth) and np.isfinite(reference)):
        return np.nan
    k = z >= axis_depth
    z, c = z[k], c[k]
    hit = np.flatnonzero(c >= reference)
    if hit.size == 0:
        return np.nan
    j = hit[0]
    if j == 0:
        return z[0]
    return z[j - 1] + (reference - c[j - 1]) * (z[j] - z[j - 1]) / (c[j] - c[j - 1])


def _random_profiles(rng, count, n, decimals):
    c = 1500.0 + np.round(rng.normal(0.0, 3.0, (count, n)).cumsum(-1), decimals)
    c[rng.random(c.shape) < 0.08] = np.nan
    z = np.sort(rng.uniform(0.0, 3000.0, n))
    z[rng.random(n) < 0.05] = np.nan
    return c, z


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("min_contrast,min_thickness", [(1.0, 10.0), (0.5, 0.0), (3.0, 50.0)])
def test_channels_match_find_peaks(seed, min_contrast, min_thickness):
    rng = np.random.default_rng(seed)
    c, z = _random_profiles(rng, 60, int(rng.integers(2, 50)), seed % 3)
    below = rng.choice([np.nan, 0.0, 150.0, 900.0], c.shape[0])
    got = layers.sound_channels(
        c, z, below=below, min_contrast=min_contrast, min_thickness=min_thickness
    )
    keys = list(got)
    want = [_reference_channels(c[r], z, below[r], min_contrast, min_thickness) for r in range(60)]
    for j, key in enumerate(keys):
        expected = np.array([w[j] for w in want])
        np.testing.assert_array_equal(got[key], expected, err_msg=key)


def test_secondary_channels_occur_in_the_random_set():
    rng = np.random.default_rng(11)
    c = 1500.0 + np.round(rng.normal(0.0, 3.0, (300, 40)).cumsum(-1), 1)
    z = np.arange(40) * 10.0
    got = layers.sound_channels(c, z)
    want = np.array([_reference_channels(c[r], z, np.nan, 1.0, 10.0)[3] for r in range(300)])
    assert np.isfinite(got["secondary_depth"]).sum() > 100
    np.testing.assert_array_equal(got["secondary_depth"], want)


@pytest.mark.parametrize("seed", range(4))
def test_critical_depth_matches_definition(seed):
    rng = np.random.default_rng(100 + seed)
    c, z = _random_profiles(rng, 80, 30, 2)
    reference = rng.uniform(1490.0, 1530.0, 80)
    axis = rng.choice([np.nan, 0.0, 400.0, 1500.0], 80)
    got = layers.critical_depth(c, z, reference, axis)
    want = [_reference_critical(c[r], z, reference[r], axis[r]) for r in range(80)]
    np.testing.assert_array_equal(got, np.array(want))


def test_one_profile_gives_python_numbers():
    z = np.arange(40) * 10.0
    c = 1500.0 + np.abs(z - 200.0) * 0.05
    out = layers.sound_channels(c, z)
    assert isinstance(out["axis_depth"], float) and out["axis_depth"] == 200.0
    assert isinstance(out["still_decreasing"], bool)
    assert isinstance(layers.critical_depth(c, z, 1505.0, 200.0), float)


def test_layer_kernels_release_the_gil():
    # dask threads run the column diagnostics of different chunks side by side only when
    # the kernels drop the GIL (common practice, no source: numba's nogil option)
    from seaprofile.layers import _channel_kernels, mixed

    kernels = [
        _channel_kernels._channels_kernel,
        _channel_kernels._critical_kernel,
        mixed._crossing_kernel,
        mixed._sonic_layer_kernel,
    ]
    for kernel in kernels:
        assert kernel.targetoptions.get("nogil") is True, kernel.py_func.__name__
