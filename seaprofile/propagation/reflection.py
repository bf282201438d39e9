"""Plane-wave reflection at the boundaries: the seabed (Rayleigh) and the rough sea surface.

* :func:`rayleigh_reflection`: the complex reflection coefficient of a fluid half-space
  below water, with attenuation in dB per wavelength as a complex sound speed;
* :func:`surface_reflection`: the pressure-release surface (-1) times the coherent
  roughness factor of an rms wave height (Kirchhoff approximation);
* :func:`reflection_loss`: ``-20 log10 |R|``, dB;
* :data:`SEDIMENTS`: named sediment types with geoacoustic values recalled from a published
  compilation (marked "from memory"; give the site's own values whenever known).

Grazing angles are degrees from the horizontal (0 along the boundary, 90 normal to it). The
coefficients are complex: the phase is kept for coherent sums of arrivals. Time convention
``exp(-i omega t)``, depth positive down.
"""

from __future__ import annotations

import math

import numpy as np

from .._validate import SeaprofileError
from ..seawater._apply import output_attrs, pointwise

__all__ = [
    "DB_PER_WAVELENGTH",
    "SEDIMENTS",
    "complex_sound_speed",
    "rayleigh_reflection",
    "reflection_loss",
    "roughness_factor",
    "surface_reflection",
]

#: Imaginary fraction of the wavenumber per dB/wavelength: 1 / (40 pi log10 e), about
#: 0.01833 (Jensen, Kuperman, Porter & Schmidt 2011, ch. 1).
DB_PER_WAVELENGTH = 1.0 / (40.0 * math.pi * math.log10(math.e))

_JENSEN = (
    "Jensen, F.B., Kuperman, W.A., Porter, M.B. & Schmidt, H. (2011), Computational Ocean "
    "Acoustics, 2nd ed., Springer, ch. 1"
)
_ECKART = (
    "Eckart, C. (1953), The scattering of sound from the sea surface, J. Acoust. Soc. Am. "
    "25, 566-570 (from memory); " + _JENSEN
)

#: Named sediment types: compressional sound speed (m/s), density (kg m-3), attenuation
#: (dB per wavelength). From memory of the table of geoacoustic properties of continental
#: shelf and slope sediments in Jensen et al. (2011), ch. 1 (sound speed for water at
#: 1500 m/s; density ratio to water taken times 1000 kg m-3). Rock entries of that table
#: (chalk, limestone, basalt) are left out: their shear speed matters and a fluid half-space
#: would misrepresent them. Check against the source, and give the site's own values.
SEDIMENTS: dict[str, dict[str, float]] = {
    # name: sound_speed m/s, density kg m-3, attenuation dB/wavelength; all from memory
    "clay": {"sound_speed": 1500.0, "density": 1500.0, "attenuation": 0.2},
    "silt": {"sound_speed": 1575.0, "density": 1700.0, "attenuation": 1.0},
    "sand": {"sound_speed": 1650.0, "density": 1900.0, "attenuation": 0.8},
    "gravel": {"sound_speed": 1800.0, "density": 2000.0, "attenuation": 0.6},
    "moraine": {"sound_speed": 1950.0, "density": 2100.0, "attenuation": 0.4},
}

SEDIMENT_SOURCE = (
    "from memory of the sediment table (continental shelf and slope) in " + _JENSEN + "; "
    "not checked against the printed table"
)


def sediment(name):
    """The :data:`SEDIMENTS` entry ``name`` (case and surrounding blanks ignored)."""
    key = str(name).strip().lower()
    if key not in SEDIMENTS:
        raise SeaprofileError(
            f"seabed name {name!r} is not a known sediment; known: {', '.join(SEDIMENTS)} "
            "(or give Seabed(sound_speed=..., density=..., attenuation=..., name=...))"
        )
    return key, SEDIMENTS[key]


def _positive(name, value):
    v = float(value)
    if not (np.isfinite(v) and v > 0):
        raise SeaprofileError(f"{name} must be finite and positive, got {value!r}")
    return v


def _angles(values):
    """Grazing angles (degrees) checked to lie in [0, 90]; NaN passes through."""
    a = np.asarray(values, dtype=np.float64)
    bad = (a < 0.0) | (a > 90.0) | np.isinf(a)
    if np.any(bad):
        raise SeaprofileError(
            f"grazing_angle must be in 0..90 degrees from horizontal, got {a[bad].ravel()[0]!r}"
        )
    return a


def complex_sound_speed(sound_speed, attenuation):
    """Complex sound speed of a lossy medium from its attenuation in dB per wavelength.

    Parameters
    ----------
    sound_speed : float or array_like
        Real (phase) sound speed, m/s.
    attenuation : float or array_like
        Attenuation, dB per wavelength (>= 0).

    Returns
    -------
    complex or numpy.ndarray
        ``c / (1 + i eta alpha)``, m/s, with ``eta = 1 / (40 pi log10 e)``.

    Notes
    -----
    With time dependence ``exp(-i omega t)`` the wavenumber ``k = (omega / c)(1 + i eta
    alpha)`` decays by ``alpha`` dB over one wavelength: ``20 log10 e * Im(k) * lambda =
    alpha`` (Jensen, Kuperman, Porter & Schmidt 2011, *Computational Ocean Acoustics*, 2nd
    ed., ch. 1).
    """
    return np.asarray(sound_speed, dtype=np.float64) / (
        1.0 + 1j * DB_PER_WAVELENGTH * np.asarray(attenuation, dtype=np.float64)
    )


def _rayleigh(grazing_angle, c1, rho1, c2, rho2, attenuation):
    theta = np.deg2rad(_angles(grazing_angle))
    n = c1 / complex_sound_speed(c2, attenuation)  # refraction index, k2 / k1
    kz1 = np.sin(theta) + 0j  # vertical wavenumbers over k1
    kz2 = np.sqrt(n * n - np.cos(theta) ** 2 + 0j)
    # the branch whose field exp(i kz2 z) decays into the seabed (z down): Im(kz2) >= 0
    kz2 = np.where(kz2.imag < 0, -kz2, kz2)
    num = rho2 * kz1 - rho1 * kz2
    den = rho2 * kz1 + rho1 * kz2
    # den == 0 only at grazing 0 with a lossless seabed as fast as the water (kz1 = kz2 = 0):
    # the limit along kz2 = kz1 is the density contrast
    limit = (rho2 - rho1) / (rho2 + rho1)
    safe = np.where(den == 0, 1.0, den)
    return np.where(den == 0, limit + 0j, num / safe)


def rayleigh_reflection(grazing_angle, c1, rho1, c2, rho2, attenuation=0.0):
    """Plane-wave reflection coefficient of a fluid half-space below water (Rayleigh).

    Parameters
    ----------
    grazing_angle : float or array_like
        Grazing angle of the incident wave in the water, degrees from horizontal (0..90).
        numpy, dask or xarray (through :func:`seaprofile.seawater._apply.pointwise`).
    c1 : float
        Sound speed of the water at the boundary, m/s (> 0).
    rho1 : float
        Density of the water, kg m-3 (> 0).
    c2 : float
        Compressional sound speed of the seabed, m/s (> 0).
    rho2 : float
        Density of the seabed, kg m-3 (> 0).
    attenuation : float
        Seabed compressional attenuation, dB per wavelength (>= 0; default 0, lossless).

    Returns
    -------
    complex numpy.ndarray, dask array or xarray.DataArray
        The complex reflection coefficient R (dimensionless; ``|R| <= 1``), shaped as
        ``grazing_angle``. The phase is kept for coherent sums; the loss is
        :func:`reflection_loss`.

    Notes
    -----
    Jensen, Kuperman, Porter & Schmidt (2011), *Computational Ocean Acoustics*, 2nd ed.,
    ch. 1 (Rayleigh reflection coefficient):

    ``R = (rho2 kz1 - rho1 kz2) / (rho2 kz1 + rho1 kz2)``, ``kz1 = k1 sin(theta)``,
    ``kz2 = sqrt(k2^2 - k1^2 cos^2(theta))``, ``k2 = omega / c2~`` with the complex sound
    speed ``c2~`` of :func:`complex_sound_speed`. The branch of ``kz2`` with ``Im(kz2) >= 0``
    is taken, so that the transmitted field decays into the seabed. Below the critical angle
    ``acos(c1 / c2)`` of a lossless faster seabed ``|R| = 1`` (total reflection, phase
    shift only). At grazing 0, ``R = -1``; at normal incidence ``R = (Z2 - Z1) / (Z2 + Z1)``
    with ``Z = rho c``. Shear in the seabed is neglected (fluid half-space).
    """
    c1 = _positive("c1 (m/s)", c1)
    rho1 = _positive("rho1 (kg m-3)", rho1)
    c2 = _positive("c2 (m/s)", c2)
    rho2 = _positive("rho2 (kg m-3)", rho2)
    attenuation = float(attenuation)
    if not (np.isfinite(attenuation) and attenuation >= 0):
        raise SeaprofileError(
            f"attenuation (dB per wavelength) must be finite and >= 0, got {attenuation!r}"
        )
    attrs = output_attrs(
        {"long_name": "plane-wave reflection coefficient of the seabed", "units": "1"},
        "rayleigh_fluid_half_space",
        _JENSEN,
    )
    return pointwise(
        lambda a: _rayleigh(a, c1, rho1, c2, rho2, attenuation),
        [("grazing_angle", grazing_angle)],
        name="reflection_coefficient",
        attrs=attrs,
        dtype=np.complex128,
    )


def _roughness(grazing_angle, frequency, rms_wave_height, sound_speed):
    theta = np.deg2rad(_angles(grazing_angle))
    kh = 2.0 * np.pi * frequency / sound_speed * rms_wave_height
    return np.exp(-2.0 * (kh * np.sin(theta)) ** 2)


def roughness_factor(grazing_angle, frequency, rms_wave_height, sound_speed=1500.0):
    """Coherent reflection factor of a rough surface, ``exp(-2 (k h sin theta)^2)``.

    Parameters
    ----------
    grazing_angle : float or array_like
        Grazing angle, degrees from horizontal (0..90); numpy, dask or xarray.
    frequency : float
        Frequency, Hz (> 0).
    rms_wave_height : float
        Root-mean-square height of the surface about its mean, m (>= 0).
    sound_speed : float
        Sound speed of the water at the surface, m/s (> 0; default 1500).

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        The factor, dimensionless, in (0, 1]; 1 for a smooth surface.

    Notes
    -----
    Kirchhoff approximation for a Gaussian rough surface, ``k = 2 pi f / c``, the Rayleigh
    roughness parameter ``Gamma = 2 k h sin(theta)`` and the factor ``exp(-Gamma^2 / 2)``
    (Eckart 1953, J. Acoust. Soc. Am. 25, 566-570, from memory; Jensen et al. 2011, ch. 1).
    """
    frequency = _positive("frequency (Hz)", frequency)
    sound_speed = _positive("sound_speed (m/s)", sound_speed)
    h = float(rms_wave_height)
    if not (np.isfinite(h) and h >= 0):
        raise SeaprofileError(f"rms_wave_height (m) must be finite and >= 0, got {h!r}")
    attrs = output_attrs(
        {"long_name": "coherent roughness reflection factor", "units": "1"},
        "kirchhoff_gaussian_roughness",
        _ECKART,
    )
    return pointwise(
        lambda a: _roughness(a, frequency, h, sound_speed),
        [("grazing_angle", grazing_angle)],
        name="roughness_factor",
        attrs=attrs,
    )


def surface_reflection(grazing_angle, frequency=None, rms_wave_height=0.0, sound_speed=1500.0):
    """Reflection coefficient of the pressure-release sea surface, ``-1`` times roughness.

    Parameters
    ----------
    grazing_angle : float or array_like
        Grazing angle, degrees from horizontal (0..90); numpy, dask or xarray.
    frequency : float, optional
        Frequency, Hz (> 0); needed when ``rms_wave_height > 0``.
    rms_wave_height : float
        Root-mean-square wave height, m (>= 0; 0 is a smooth surface, R = -1).
    sound_speed : float
        Sound speed of the water at the surface, m/s (> 0; default 1500).

    Returns
    -------
    complex numpy.ndarray, dask array or xarray.DataArray
        ``R = -exp(-2 (k h sin theta)^2)``, dimensionless.

    Notes
    -----
    Pressure release (R = -1, Jensen et al. 2011, ch. 1) with the coherent roughness factor
    of :func:`roughness_factor` (Kirchhoff approximation; Eckart 1953, from memory).
    """
    if frequency is None:
        if float(rms_wave_height) > 0:
            raise SeaprofileError(
                "frequency (Hz) is needed for the roughness loss of a surface with "
                "rms_wave_height > 0"
            )
        frequency = 1.0  # h = 0: the factor is 1 at any frequency
    factor = roughness_factor(grazing_angle, frequency, rms_wave_height, sound_speed)
    out = -factor + 0j
    if hasattr(out, "attrs"):
        out.name = "reflection_coefficient"
        out.attrs = output_attrs(
            {"long_name": "plane-wave reflection coefficient of the sea surface", "units": "1"},
            "pressure_release_kirchhoff_roughness",
            _ECKART,
        )
    return out


def reflection_loss(coefficient):
    """Reflection loss, dB: ``-20 log10 |R|`` (0 for total reflection, > 0 otherwise).

    Parameters
    ----------
    coefficient : complex or array_like
        Plane-wave reflection coefficient R (dimensionless), numpy, dask or xarray.

    Returns
    -------
    float or array
        Loss in dB (infinite where ``R = 0``).
    """
    with np.errstate(divide="ignore"):
        return -20.0 * np.log10(abs(coefficient))
