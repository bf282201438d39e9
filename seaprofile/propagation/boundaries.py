"""The boundaries of an Environment: the sea Surface, the Seabed and the Bathymetry.

These are plain frozen values, validated when made (messages name the argument), that the
ray tracers and the later loss computations read from an
:class:`~seaprofile.propagation.environment.Environment`:

* :class:`Surface`: flat and pressure release (plane-wave reflection coefficient -1), with an
  optional root-mean-square wave height (m) kept for a coherent roughness loss;
* :class:`Seabed`: a fluid half-space below the bottom: compressional sound speed (m/s),
  density (**kg m-3**, SI, the unit of ``_cf`` density) and attenuation (dB per wavelength),
  with a free-text ``name`` ("sand", "silty clay" ...); :meth:`Seabed.named` gives an entry
  of a small table of sediment types recalled from a published compilation (from memory;
  give the values of the site whenever known);
* :class:`Bathymetry`: bottom depth (m, > 0) at ranges (m, strictly increasing), piecewise
  linear in range, the end depths held outside; a flat bottom is one depth at range 0.

Each one writes itself into flat, netCDF-safe attributes (``to_attrs``) and reads back
(``from_attrs``), so a RayFan or PathTable records the environment it was traced in. Their
plane-wave reflection coefficients (``reflection_coefficient``) are computed in
:mod:`~seaprofile.propagation.reflection`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from .._validate import SeaprofileError, as_float_array
from . import reflection

__all__ = ["Bathymetry", "Seabed", "Surface"]


def _number(owner, name, value, *, minimum=None, positive=False):
    """``value`` as a finite float, or SeaprofileError naming ``owner`` and ``name``."""
    try:
        v = float(value)
    except (TypeError, ValueError) as exc:
        raise SeaprofileError(f"{owner} {name} must be a number, got {value!r}") from exc
    if not np.isfinite(v):
        raise SeaprofileError(f"{owner} {name} must be finite, got {value!r}")
    if positive and v <= 0:
        raise SeaprofileError(f"{owner} {name} must be positive, got {value!r}")
    if minimum is not None and v < minimum:
        raise SeaprofileError(f"{owner} {name} must be >= {minimum:g}, got {value!r}")
    return v


@dataclass(frozen=True)
class Surface:
    """The sea surface: flat, pressure release.

    Parameters
    ----------
    rms_wave_height : float
        Root-mean-square wave height, m (>= 0; default 0, a smooth surface). Not used by the
        ray tracers (the surface stays flat); kept for a coherent roughness loss.

    Notes
    -----
    A pressure-release boundary reflects a plane wave with coefficient -1 at every grazing
    angle (Jensen, Kuperman, Porter & Schmidt, *Computational Ocean Acoustics*, 2nd ed.,
    Springer 2011, ch. 1): :attr:`PRESSURE_RELEASE`. :meth:`reflection_coefficient` adds
    the coherent roughness loss of ``rms_wave_height``.
    """

    rms_wave_height: float = 0.0

    #: Plane-wave reflection coefficient of a smooth pressure-release surface.
    PRESSURE_RELEASE: ClassVar[float] = -1.0

    def __post_init__(self):
        object.__setattr__(
            self,
            "rms_wave_height",
            _number("Surface", "rms_wave_height (m)", self.rms_wave_height, minimum=0.0),
        )

    def to_attrs(self):
        """Flat attributes (``surface_*``) recording this surface."""
        return {
            "surface": "pressure_release",
            "surface_reflection_coefficient": self.PRESSURE_RELEASE,
            "surface_rms_wave_height": self.rms_wave_height,
        }

    def reflection_coefficient(self, grazing_angle, frequency=None, sound_speed=1500.0):
        """Plane-wave reflection coefficient R = ``-exp(-2 (k h sin theta)^2)`` of this surface.

        ``grazing_angle`` in degrees from horizontal (0..90; numpy, dask or xarray),
        ``frequency`` in Hz (needed when ``rms_wave_height > 0``), ``sound_speed`` of the water
        at the surface in m/s; R is complex and dimensionless, -1 for a smooth surface. See
        :func:`~seaprofile.propagation.reflection.surface_reflection` (pressure release times
        the coherent roughness factor; Kirchhoff approximation, Eckart 1953, from memory).
        """
        return reflection.surface_reflection(
            grazing_angle, frequency, self.rms_wave_height, sound_speed
        )

    @classmethod
    def from_attrs(cls, attrs):
        """The Surface recorded by :meth:`to_attrs` in ``attrs``."""
        if "surface_rms_wave_height" not in attrs:
            raise SeaprofileError("attrs: no surface recorded (surface_rms_wave_height)")
        return cls(rms_wave_height=float(attrs["surface_rms_wave_height"]))


@dataclass(frozen=True)
class Seabed:
    """A fluid half-space below the bottom.

    Parameters
    ----------
    sound_speed : float
        Compressional sound speed in the sediment, m/s (> 0, finite).
    density : float
        Sediment density, kg m-3 (> 0, finite; sea water is about 1025 kg m-3).
    attenuation : float
        Compressional attenuation, dB per wavelength (>= 0, finite).
    name : str
        Free-text name ("sand", "site 4 core" ...), for the record only.

    Notes
    -----
    The ray tracers take the bottom as a reflector; the Seabed is carried for the loss:
    :meth:`reflection_coefficient` (Rayleigh reflection coefficient of a fluid half-space,
    Jensen et al. 2011, ch. 1). :meth:`named` gives a sediment type of
    :data:`~seaprofile.propagation.reflection.SEDIMENTS` (values from memory of Jensen et al.
    2011, ch. 1); the values of the site are better whenever known.
    """

    sound_speed: float
    density: float
    attenuation: float
    name: str = ""

    def __post_init__(self):
        object.__setattr__(
            self,
            "sound_speed",
            _number("Seabed", "sound_speed (m/s)", self.sound_speed, positive=True),
        )
        object.__setattr__(
            self, "density", _number("Seabed", "density (kg m-3)", self.density, positive=True)
        )
        object.__setattr__(
            self,
            "attenuation",
            _number("Seabed", "attenuation (dB per wavelength)", self.attenuation, minimum=0.0),
        )
        if not isinstance(self.name, str):
            raise SeaprofileError(f"Seabed name must be a string, got {self.name!r}")

    def to_attrs(self):
        """Flat attributes (``seabed_*``) recording this seabed."""
        return {
            "seabed": "fluid_half_space",
            "seabed_name": self.name,
            "seabed_sound_speed": self.sound_speed,
            "seabed_density": self.density,
            "seabed_attenuation": self.attenuation,
        }

    @classmethod
    def named(cls, name):
        """The sediment type ``name`` of :data:`~seaprofile.propagation.reflection.SEDIMENTS`.

        Values from memory of the sediment table in Jensen et al. (2011), *Computational
        Ocean Acoustics*, ch. 1; an unknown name raises SeaprofileError listing the known ones.
        """
        key, values = reflection.sediment(name)
        return cls(name=key, **values)

    def reflection_coefficient(
        self, grazing_angle, frequency=None, water_sound_speed=1500.0, water_density=1025.0
    ):
        """Rayleigh plane-wave reflection coefficient of this seabed below the water.

        Parameters
        ----------
        grazing_angle : float or array_like
            Grazing angle in the water, degrees from horizontal (0..90); numpy, dask or
            xarray.
        frequency : float, optional
            Frequency, Hz (> 0 when given). The attenuation is per wavelength, so a fluid
            half-space reflects alike at every frequency: checked, not used.
        water_sound_speed : float
            Sound speed of the water at the bottom, m/s (default 1500).
        water_density : float
            Density of the water at the bottom, kg m-3 (default 1025).

        Returns
        -------
        complex array (or DataArray)
            R, dimensionless, ``|R| <= 1``; the loss is ``-20 log10 |R|``
            (:func:`~seaprofile.propagation.reflection.reflection_loss`).

        Notes
        -----
        :func:`~seaprofile.propagation.reflection.rayleigh_reflection` (Jensen et al. 2011,
        ch. 1).
        """
        if frequency is not None:
            _number("Seabed", "frequency (Hz)", frequency, positive=True)
        return reflection.rayleigh_reflection(
            grazing_angle,
            water_sound_speed,
            water_density,
            self.sound_speed,
            self.density,
            self.attenuation,
        )

    def reflection_loss(self, grazing_angle, **water):
        """Bottom reflection loss, dB, ``-20 log10 |R|`` (see :meth:`reflection_coefficient`)."""
        return reflection.reflection_loss(self.reflection_coefficient(grazing_angle, **water))

    @staticmethod
    def attrs_of(seabed):
        """:meth:`to_attrs` of ``seabed``, or ``{"seabed": "none"}`` for None."""
        return {"seabed": "none"} if seabed is None else seabed.to_attrs()

    @classmethod
    def from_attrs(cls, attrs):
        """The Seabed recorded in ``attrs`` (see :meth:`attrs_of`), or None."""
        if attrs.get("seabed", "none") == "none":
            return None
        return cls(
            sound_speed=float(attrs["seabed_sound_speed"]),
            density=float(attrs["seabed_density"]),
            attenuation=float(attrs["seabed_attenuation"]),
            name=str(attrs.get("seabed_name", "")),
        )


def _readonly(values):
    a = np.array(values, dtype=np.float64, copy=True).ravel()
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class Bathymetry:
    """Bottom depth along the track, piecewise linear in range.

    Parameters
    ----------
    ranges : array_like
        Ranges, m, finite and strictly increasing (at least one).
    depths : array_like
        Bottom depth at each range, m, positive down, finite and > 0. Outside the given
        ranges the end depths hold.

    Use :meth:`flat` for a flat bottom. The arrays are stored read-only copies.
    """

    ranges: np.ndarray
    depths: np.ndarray

    def __post_init__(self):
        r = as_float_array("bathymetry ranges", self.ranges).ravel()
        z = as_float_array("bathymetry depths", self.depths).ravel()
        if r.size != z.size or r.size < 1:
            raise SeaprofileError(
                "bathymetry ranges and depths must have one equal, non-zero length"
            )
        if not (np.all(np.isfinite(r)) and np.all(np.isfinite(z))):
            raise SeaprofileError("bathymetry contains NaN or infinite values")
        if np.any(np.diff(r) <= 0):
            raise SeaprofileError("bathymetry ranges must be strictly increasing (m)")
        if np.any(z <= 0):
            raise SeaprofileError("bathymetry depths must be below the surface (> 0 m)")
        object.__setattr__(self, "ranges", _readonly(r))
        object.__setattr__(self, "depths", _readonly(z))

    @classmethod
    def flat(cls, depth):
        """A flat bottom at ``depth`` (m, > 0)."""
        return cls([0.0], [_number("bottom_depth", "(m)", depth, positive=True)])

    @classmethod
    def coerce(cls, value):
        """A Bathymetry from a Bathymetry, a pair ``(ranges, depths)`` or one depth (m)."""
        if isinstance(value, cls):
            return value
        if np.ndim(value) == 0:
            return cls([0.0], [_number("bathymetry", "(a flat depth, m)", value, positive=True)])
        try:
            r, z = value
        except (TypeError, ValueError) as exc:
            raise SeaprofileError(
                "bathymetry must be a Bathymetry or a pair (ranges, depths)"
            ) from exc
        return cls(r, z)

    @property
    def is_flat(self):
        """True when every depth is the same."""
        return bool(np.all(self.depths == self.depths[0]))

    @property
    def deepest(self):
        """The greatest bottom depth, m."""
        return float(self.depths.max())

    def depth_at(self, ranges):
        """Bottom depth (m) at ``ranges`` (m): linear between points, end depths held."""
        return np.interp(as_float_array("ranges", ranges), self.ranges, self.depths)

    def __eq__(self, other):
        if not isinstance(other, Bathymetry):
            return NotImplemented
        return np.array_equal(self.ranges, other.ranges) and np.array_equal(
            self.depths, other.depths
        )

    __hash__ = None  # type: ignore[assignment]

    def to_attrs(self):
        """A summary (``bathymetry_*``): kind, points, depth and range span, m."""
        return {
            "bathymetry": "flat" if self.is_flat else "piecewise_linear",
            "bathymetry_points": int(self.ranges.size),
            "bathymetry_min_depth": float(self.depths.min()),
            "bathymetry_max_depth": self.deepest,
            "bathymetry_first_range": float(self.ranges[0]),
            "bathymetry_last_range": float(self.ranges[-1]),
        }

    def __repr__(self):
        if self.ranges.size == 1:
            return f"Bathymetry.flat({self.depths[0]:g})"
        return (
            f"Bathymetry({self.ranges.size} points over {self.ranges[0]:g}.."
            f"{self.ranges[-1]:g} m, depth {self.depths.min():g}..{self.deepest:g} m)"
        )
