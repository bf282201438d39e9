"""The acoustic environment: one sound-speed field, a Surface, a Seabed, a Bathymetry.

An :class:`Environment` is what the ray engine traces through: a frozen value holding

* ``speed``: the sound-speed field, either a :class:`LayeredSpeed` (c(z) nodes) or a
  :class:`~seaprofile.propagation.section.Section` (c(r, z); a pure field that knows
  nothing of Environment);
* ``bathymetry``: a :class:`~seaprofile.propagation.boundaries.Bathymetry` (flat or
  piecewise linear in range; beyond the last point the last depth holds);
* ``surface``: a :class:`~seaprofile.propagation.boundaries.Surface` (flat, pressure
  release);
* ``seabed``: a :class:`~seaprofile.propagation.boundaries.Seabed` (fluid half-space) or
  None (unknown; the ray tracers do not need it);
* ``water``: the temperature and salinity of the water at depth (:class:`Water`), when the
  profile carried them, or None (the loss field then assumes a water for its absorption).

Every constructor (``Environment(...)``, :meth:`Environment.from_arrays`,
:meth:`~Environment.from_profile`, :meth:`~Environment.from_section`) ends in the same
``__post_init__``, which derives the tracer's c(z) nodes ``depth`` / ``sound_speed`` (the
field at range 0). For the range-independent engine the sound speed is **piecewise linear
in depth between these nodes**, so inside each layer the gradient is constant and every ray
is an exact circular arc (see :mod:`seaprofile.propagation.kernels`).

Choices made here (documented so they can be relied on):

* A profile that starts below the surface is extended to depth 0 with its first speed.
* A bottom below the deepest node is reached with **constant** sound speed (the last node's
  value), not with the last gradient: the last gradient of a measured cast is often a noisy
  end bin, and extrapolating it over kilometres could invent a duct or a shadow. Extend the
  profile physically first (``seaprofile.profile.extend``) when the deep water matters.
* Nodes deeper than the bottom are kept (a :class:`Section` or bathymetry may need them);
  the tracer cuts its layer grid at the bottom.
* Node thinning (``thin_tolerance``, m/s) keeps the fewest nodes whose piecewise-linear
  interpolant stays within the tolerance of every original node (Douglas & Peucker 1973,
  "Algorithms for the reduction of the number of points required to represent a digitized
  line or its caricature", Cartographica 10(2), 112-122, with the vertical sound-speed
  difference as the distance).

The object is immutable (arrays are read-only); :meth:`Environment.replace` makes a changed
copy. ``section`` is the Section when the field is one, else None (range-independent c(z)).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numba
import numpy as np

from .. import _cf
from .._validate import SeaprofileError, as_float_array
from .boundaries import Bathymetry, Seabed, Surface
from .section import Section

__all__ = [
    "Bathymetry",
    "Environment",
    "LayeredSpeed",
    "Seabed",
    "Surface",
    "Water",
    "thin_nodes",
]


@numba.njit(cache=True)
def _thin_kernel(z, c, tol):
    """Douglas-Peucker on (z, c) with vertical distance |c - interpolant|; keep mask."""
    n = z.size
    keep = np.zeros(n, dtype=np.bool_)
    keep[0] = True
    keep[n - 1] = True
    stack = np.empty((n, 2), dtype=np.int64)
    top = 0
    stack[0, 0] = 0
    stack[0, 1] = n - 1
    top = 1
    while top > 0:
        top -= 1
        a = stack[top, 0]
        b = stack[top, 1]
        if b - a < 2:
            continue
        slope = (c[b] - c[a]) / (z[b] - z[a])
        worst = -1.0
        iw = -1
        for k in range(a + 1, b):
            d = abs(c[k] - (c[a] + slope * (z[k] - z[a])))
            if d > worst:
                worst = d
                iw = k
        if worst > tol:
            keep[iw] = True
            stack[top, 0] = a
            stack[top, 1] = iw
            stack[top + 1, 0] = iw
            stack[top + 1, 1] = b
            top += 2
    return keep


def thin_nodes(depth, sound_speed, tolerance):
    """Fewest nodes whose linear interpolant stays within ``tolerance`` of every node.

    Parameters
    ----------
    depth : array_like
        Node depths, m, strictly increasing.
    sound_speed : array_like
        Sound speed at the nodes, m/s.
    tolerance : float
        Largest allowed difference between the thinned piecewise-linear profile and any
        original node, m/s (>= 0).

    Returns
    -------
    depth, sound_speed : ndarray
        The kept nodes (the first and last node are always kept).

    Notes
    -----
    Douglas & Peucker (1973), Cartographica 10(2), 112-122, with the sound-speed difference
    at equal depth as the distance, so the guarantee is in m/s. Compiled (numba) with an
    explicit stack; O(n log n) on typical casts.
    """
    z = as_float_array("depth", depth)
    c = as_float_array("sound_speed", sound_speed)
    tol = float(tolerance)
    if not np.isfinite(tol) or tol < 0:
        raise SeaprofileError(f"thin_tolerance must be a finite number >= 0 m/s, got {tolerance!r}")
    if z.size < 3:
        return z.copy(), c.copy()
    keep = _thin_kernel(z, c, tol)
    return z[keep], c[keep]


def _readonly(a):
    a = np.array(a, dtype=np.float64, copy=True)
    a.setflags(write=False)
    return a


def _check_nodes(depth, sound_speed):
    """Validated float copies of c(z) nodes; messages name ``depth`` / ``sound_speed``."""
    z = as_float_array("depth", depth).ravel()
    c = as_float_array("sound_speed", sound_speed).ravel()
    if z.size != c.size:
        raise SeaprofileError(
            f"depth and sound_speed must have the same length, got {z.size} and {c.size}"
        )
    if z.size < 2:
        raise SeaprofileError(f"depth needs at least two nodes, got {z.size}")
    if not np.all(np.isfinite(z)):
        raise SeaprofileError("depth contains NaN or infinite values")
    if not np.all(np.isfinite(c)):
        raise SeaprofileError("sound_speed contains NaN or infinite values")
    if np.any(c <= 0):
        raise SeaprofileError("sound_speed must be positive (m/s)")
    if np.any(np.diff(z) <= 0):
        raise SeaprofileError("depth must be strictly increasing (m, positive down)")
    if z[0] < 0:
        raise SeaprofileError(f"depth must start at or below the surface (0 m), got {z[0]:g}")
    return z, c


@dataclass(frozen=True, eq=False)
class LayeredSpeed:
    """Range-independent sound speed c(z): nodes, piecewise linear in depth between them.

    Parameters
    ----------
    depth : array_like
        Node depths, m, positive down, finite, strictly increasing, >= 0 (at least two).
    sound_speed : array_like
        Sound speed at the nodes, m/s (finite, > 0).

    Stored as read-only copies. :meth:`thinned` gives the thinned nodes (see
    :func:`thin_nodes`).
    """

    depth: np.ndarray
    sound_speed: np.ndarray

    def __post_init__(self):
        z, c = _check_nodes(self.depth, self.sound_speed)
        object.__setattr__(self, "depth", _readonly(z))
        object.__setattr__(self, "sound_speed", _readonly(c))

    def thinned(self, tolerance):
        """The fewest nodes within ``tolerance`` (m/s) of these (:func:`thin_nodes`)."""
        return LayeredSpeed(*thin_nodes(self.depth, self.sound_speed, tolerance))

    def sound_speed_at(self, depth):
        """Sound speed at ``depth`` (m), m/s: linear between nodes, end values held."""
        return np.interp(as_float_array("depth", depth), self.depth, self.sound_speed)


@dataclass(frozen=True, eq=False)
class Water:
    """Temperature and salinity of the water at depth: what the volume absorption needs.

    Parameters
    ----------
    depth : array_like
        Depths, m, positive down, finite, strictly increasing, >= 0 (at least one).
    temperature : array_like
        In-situ temperature at ``depth``, degC (ITS-90), finite.
    salinity : array_like
        Practical salinity at ``depth`` (PSS-78), finite.
    source : str
        Where the values come from (one line, for the record).

    Stored as read-only copies; between depths the values are linear, beyond the ends held
    (as the sound-speed nodes are).
    """

    depth: np.ndarray
    temperature: np.ndarray
    salinity: np.ndarray
    source: str = ""

    def __post_init__(self):
        z = as_float_array("depth", self.depth).ravel()
        t = as_float_array("temperature", self.temperature).ravel()
        s = as_float_array("salinity", self.salinity).ravel()
        if z.size < 1:
            raise SeaprofileError("Water: depth must have at least one level, got none")
        for name, values in (("temperature", t), ("salinity", s)):
            if values.size != z.size:
                raise SeaprofileError(
                    f"Water: {name} must have one value per depth ({z.size}), got {values.size}"
                )
        for name, values in (("depth", z), ("temperature", t), ("salinity", s)):
            if not np.all(np.isfinite(values)):
                raise SeaprofileError(f"Water: {name} must be finite (no NaN or inf)")
        if z[0] < 0:
            raise SeaprofileError(f"Water: depth must be >= 0 m, got {z[0]:g}")
        if np.any(np.diff(z) <= 0):
            raise SeaprofileError("Water: depth must be strictly increasing")
        object.__setattr__(self, "depth", _readonly(z))
        object.__setattr__(self, "temperature", _readonly(t))
        object.__setattr__(self, "salinity", _readonly(s))
        object.__setattr__(self, "source", str(self.source))

    @classmethod
    def from_profile(cls, profile, source=""):
        """The usable temperature and salinity levels of a Profile, or None without them.

        Levels where either is NaN, or flagged 3, 4 or 9 in ``temperature_qc`` /
        ``salinity_qc`` (:data:`seaprofile._cf.UNUSABLE_FLAGS`), are left out; None when
        the profile has no temperature or salinity, or no level keeps both.
        """
        try:
            if "temperature" not in profile or "salinity" not in profile:
                return None
            z = np.asarray(profile["depth"], dtype=np.float64).ravel()
            t = np.asarray(profile["temperature"], dtype=np.float64).ravel()
            s = np.asarray(profile["salinity"], dtype=np.float64).ravel()
        except (TypeError, ValueError, KeyError):
            return None
        if not (z.size == t.size == s.size):
            return None
        use = np.isfinite(z) & np.isfinite(t) & np.isfinite(s) & (z >= 0)
        for name in ("temperature_qc", "salinity_qc"):
            if name in profile:
                qc = np.asarray(profile[name]).ravel()
                if qc.size == z.size:
                    use &= ~np.isin(qc, _cf.UNUSABLE_FLAGS)
        if not use.any():
            return None
        z, t, s = z[use], t[use], s[use]
        order = np.argsort(z, kind="stable")
        z, t, s = z[order], t[order], s[order]
        keep = np.concatenate([[True], np.diff(z) > 0])
        return cls(z[keep], t[keep], s[keep], source=source)

    def at(self, depth):
        """Temperature (degC) and practical salinity at ``depth`` (m): linear, ends held."""
        d = as_float_array("depth", depth)
        return (
            np.interp(d, self.depth, self.temperature),
            np.interp(d, self.depth, self.salinity),
        )

    def describe(self):
        """One line: the source, the levels and the ranges of T and S."""
        return (
            f"{self.source or 'given water'}: {self.depth.size} levels 0..{self.depth[-1]:g} m, "
            f"temperature {self.temperature.min():.2f}..{self.temperature.max():.2f} degC, "
            f"salinity {self.salinity.min():.3f}..{self.salinity.max():.3f}"
        )


@dataclass(frozen=True, eq=False, repr=False)
class Environment:
    """Sound-speed field, sea surface, seabed and bottom depth: what rays are traced in.

    Parameters
    ----------
    speed : LayeredSpeed or Section
        The sound-speed field: c(z) nodes, or c(r, z) of a
        :class:`~seaprofile.propagation.section.Section`.
    bathymetry : Bathymetry, float or (array_like, array_like)
        Bottom depth: a :class:`Bathymetry`, a flat depth (m, > 0) or ``(ranges, depths)``
        (m, m).
    surface : Surface
        The sea surface (default: smooth, pressure release).
    seabed : Seabed or None
        The fluid half-space below the bottom; None when unknown (the ray tracers do not
        read it; the loss computations will). A sediment name string is not accepted.
    water : Water or None
        Temperature and salinity at depth (the volume absorption of the loss field), or
        None when unknown. :meth:`from_profile` takes them from the profile when it has them.
    attrs : dict, optional
        Provenance attributes (``processing_steps``, ``history``, ``profile_id`` ...).

    Attributes
    ----------
    depth, sound_speed : ndarray
        The tracer's c(z) nodes (m, m/s; read-only): the field at range 0, extended to the
        surface with the first speed and to the deepest bottom with the last speed.

    Raises
    ------
    SeaprofileError
        Bad nodes, bathymetry, surface or seabed; the message names the argument.

    Notes
    -----
    Build it with :meth:`from_arrays`, :meth:`from_profile` or :meth:`from_section` (which
    also thin nodes, take a ``bottom_depth`` and record provenance) or directly; all end in
    the same validation and node derivation.
    """

    speed: object
    bathymetry: Bathymetry
    surface: Surface = field(default_factory=Surface)
    seabed: Seabed | None = None
    attrs: dict | None = None
    water: Water | None = None
    depth: np.ndarray = field(init=False)
    sound_speed: np.ndarray = field(init=False)

    def __post_init__(self):
        speed = self.speed
        if isinstance(speed, LayeredSpeed):
            z, c = speed.depth, speed.sound_speed
        elif isinstance(speed, Section):
            c0 = speed.sound_speed_at(np.zeros_like(speed.depth), speed.depth)
            z, c = _check_nodes(speed.depth, c0)
        else:
            raise SeaprofileError(
                f"speed must be a LayeredSpeed or a Section, got {type(speed).__name__}"
            )
        bathy = Bathymetry.coerce(self.bathymetry)
        if not isinstance(self.surface, Surface):
            raise SeaprofileError(f"surface must be a Surface, got {self.surface!r}")
        if isinstance(self.seabed, str):
            from .reflection import SEDIMENTS

            raise SeaprofileError(
                f"seabed must be a Seabed or None, got the name {self.seabed!r}: use "
                f"Seabed.named({self.seabed!r}) (known: {', '.join(SEDIMENTS)}) or "
                "Seabed(sound_speed=..., density=..., attenuation=..., name=...) with the "
                "values of the site"
            )
        if self.seabed is not None and not isinstance(self.seabed, Seabed):
            raise SeaprofileError(f"seabed must be a Seabed or None, got {self.seabed!r}")
        if self.water is not None and not isinstance(self.water, Water):
            raise SeaprofileError(f"water must be a Water or None, got {self.water!r}")
        if z[0] > 0:
            z = np.concatenate([[0.0], z])
            c = np.concatenate([[c[0]], c])
        deepest = bathy.deepest
        if z[-1] < deepest:
            z = np.concatenate([z, [deepest]])
            c = np.concatenate([c, [c[-1]]])
        object.__setattr__(self, "bathymetry", bathy)
        object.__setattr__(self, "attrs", dict(self.attrs) if self.attrs else _cf.base_attrs())
        object.__setattr__(self, "depth", _readonly(z))
        object.__setattr__(self, "sound_speed", _readonly(c))

    # -- constructors ------------------------------------------------------------------
    @classmethod
    def _assemble(
        cls, speed, bottom_depth, bathymetry, surface, seabed, thin_tolerance, attrs, water=None
    ):
        """The one path of the classmethods: bottom, thinning, provenance, then ``cls``."""
        if bottom_depth is not None:
            try:
                bottom = float(bottom_depth)
            except (TypeError, ValueError) as exc:
                raise SeaprofileError(
                    f"bottom_depth must be a number (m), got {bottom_depth!r}"
                ) from exc
            if not np.isfinite(bottom) or bottom <= 0:
                raise SeaprofileError(
                    f"bottom_depth must be below the surface (> 0 m), got {bottom_depth!r}"
                )
        if bathymetry is not None:
            bathy = Bathymetry.coerce(bathymetry)
            at0 = float(bathy.depth_at(0.0))
            if bottom_depth is not None and bottom != at0:
                raise SeaprofileError(
                    f"bottom_depth {bottom:g} m contradicts the bathymetry at range 0 "
                    f"({at0:g} m); give one of them"
                )
        else:
            bathy = Bathymetry.flat(float(speed.depth[-1]) if bottom_depth is None else bottom)
        attrs = dict(attrs) if attrs else _cf.base_attrs()
        if thin_tolerance is not None:
            n_in = speed.depth.size
            speed = speed.thinned(thin_tolerance)
            attrs = _cf.record_step(
                attrs,
                "thin_nodes",
                tolerance_m_s=float(thin_tolerance),
                nodes_in=int(n_in),
                nodes_kept=int(speed.depth.size),
            )
        return cls(speed, bathy, Surface() if surface is None else surface, seabed, attrs, water)

    @classmethod
    def from_arrays(
        cls,
        depth,
        sound_speed,
        bottom_depth=None,
        *,
        bathymetry=None,
        thin_tolerance=None,
        surface=None,
        seabed=None,
    ):
        """Environment from c(z) node arrays.

        Parameters
        ----------
        depth, sound_speed : array_like
            Node depths (m, strictly increasing, >= 0) and sound speeds (m/s).
        bottom_depth : float, optional
            Flat bottom depth, m (> 0). Default: the bathymetry at range 0 when
            ``bathymetry`` is given (which must agree with ``bottom_depth`` at range 0 when
            both are given), else the deepest node.
        bathymetry : Bathymetry or (array_like, array_like), optional
            Bottom depth (m) at ranges (m), piecewise linear.
        thin_tolerance : float, optional
            Thin the nodes to this tolerance, m/s (see :func:`thin_nodes`). None: keep all.
        surface : Surface, optional
            Default: smooth pressure release.
        seabed : Seabed, optional
            The fluid half-space below the bottom; default None (unknown).
        """
        return cls._assemble(
            LayeredSpeed(depth, sound_speed),
            bottom_depth,
            bathymetry,
            surface,
            seabed,
            thin_tolerance,
            None,
        )

    @classmethod
    def from_section(
        cls, section, bottom_depth=None, *, bathymetry=None, surface=None, seabed=None, water=None
    ):
        """An Environment whose sound speed is a :class:`~seaprofile.propagation.Section`.

        Parameters
        ----------
        section : Section
            The range-dependent sound speed.
        bottom_depth : float, optional
            Flat bottom depth, m. Default: the bathymetry at range 0, else the deepest node.
        bathymetry : Bathymetry or (array_like, array_like), optional
            Bottom depth (m) at ranges (m), piecewise linear in range.
        surface, seabed
            As for :meth:`from_arrays`.
        water : Water, optional
            Temperature and salinity for the absorption (one column for the whole section,
            e.g. the cast at range 0); default None.

        Returns
        -------
        Environment
            Its c(z) nodes (``depth``, ``sound_speed``) are the section at range 0; ray
            tracing uses the whole section (``environment.section``).
        """
        if not isinstance(section, Section):
            raise SeaprofileError("section must be a seaprofile Section")
        attrs = _cf.record_step(
            dict(section.attrs),
            "environment_from_section",
            casts=int(section.ranges.size),
            range_interpolation=section.range_interpolation,
        )
        return cls._assemble(section, bottom_depth, bathymetry, surface, seabed, None, attrs, water)

    @classmethod
    def from_profile(
        cls,
        profile,
        bottom_depth=None,
        *,
        thin_tolerance=None,
        bathymetry=None,
        surface=None,
        seabed=None,
    ):
        """Environment from a Profile Dataset (or any mapping with ``depth``, ``sound_speed``).

        Parameters
        ----------
        profile : xr.Dataset or mapping
            ``profile["depth"]`` (m) and ``profile["sound_speed"]`` (m/s); if
            ``sound_speed_qc`` is present, nodes flagged 3 (probably bad), 4 (bad) or
            9 (missing) (:data:`seaprofile._cf.UNUSABLE_FLAGS`) are left out; NaN speeds
            are left out.
        bottom_depth : float, optional
            Bottom depth, m. Default: the deepest usable node.
        thin_tolerance : float, optional
            Thin the nodes to this tolerance, m/s.
        bathymetry, surface, seabed
            As for :meth:`from_arrays`.

        The profile's usable ``temperature`` and ``salinity`` levels, when it has both,
        become the environment's :class:`Water` (every level, not thinned).
        """
        try:
            z = as_float_array("profile['depth']", np.asarray(profile["depth"])).ravel()
            c = as_float_array("profile['sound_speed']", np.asarray(profile["sound_speed"])).ravel()
        except (KeyError, TypeError) as exc:
            raise SeaprofileError("profile must provide 'depth' and 'sound_speed'") from exc
        use = np.isfinite(c) & np.isfinite(z)
        qc = None
        try:
            if "sound_speed_qc" in profile:
                qc = np.asarray(profile["sound_speed_qc"]).ravel()
        except TypeError:
            qc = None
        if qc is not None and qc.size == c.size:
            use &= ~np.isin(qc, _cf.UNUSABLE_FLAGS)
        if use.sum() < 2:
            raise SeaprofileError("profile has fewer than two usable sound-speed nodes")
        attrs = dict(getattr(profile, "attrs", {}) or {}) or _cf.base_attrs()
        attrs = _cf.record_step(
            attrs, "environment_from_profile", nodes_used=int(use.sum()), nodes_total=int(c.size)
        )
        pid = None
        try:
            pid = str(np.asarray(profile["profile_id"]).item())
        except Exception:  # noqa: BLE001 - optional metadata
            pid = None
        if pid:
            attrs["profile_id"] = pid
        water = Water.from_profile(profile, source=f"profile {pid}" if pid else "the profile")
        return cls._assemble(
            LayeredSpeed(z[use], c[use]),
            bottom_depth,
            bathymetry,
            surface,
            seabed,
            thin_tolerance,
            attrs,
            water,
        )

    def replace(self, **changes):
        """A copy with some of ``speed``, ``bathymetry``, ``surface``, ``seabed``, ``attrs``,
        ``water`` changed (validated again)."""
        return dataclasses.replace(self, **changes)

    # -- properties --------------------------------------------------------------------
    @property
    def section(self):
        """The Section when the sound-speed field is one, else None."""
        return self.speed if isinstance(self.speed, Section) else None

    @property
    def bottom_depth(self):
        """Bottom depth at range 0, m."""
        return float(self.bathymetry.depth_at(0.0))

    @property
    def is_range_dependent(self):
        """True when the field is a Section or the bathymetry is not flat."""
        return self.section is not None or not self.bathymetry.is_flat

    @property
    def gradient(self):
        """Sound-speed gradient in each layer between nodes, 1/s (length ``len(depth) - 1``)."""
        return np.diff(self.sound_speed) / np.diff(self.depth)

    def sound_speed_at(self, depth):
        """Sound speed at ``depth`` (m), m/s: linear between nodes, end values held."""
        return np.interp(as_float_array("depth", depth), self.depth, self.sound_speed)

    def bottom_at(self, ranges):
        """Bottom depth (m) at ``ranges`` (m)."""
        return self.bathymetry.depth_at(ranges)

    def layers(self):
        """Node depths and speeds cut at the flat bottom: the tracer's layer grid.

        Returns
        -------
        depth, sound_speed : ndarray
            Nodes from 0 to ``bottom_depth`` (m, m/s); a node is inserted at the bottom.
        """
        z, c = self.depth, self.sound_speed
        d = self.bottom_depth
        inside = z < d
        zc = np.concatenate([z[inside], [d]])
        cc = np.concatenate([c[inside], [float(np.interp(d, z, c))]])
        return zc, cc

    def provenance_attrs(self):
        """Flat attributes recording the surface, the seabed and a bathymetry summary."""
        return {
            **self.surface.to_attrs(),
            **Seabed.attrs_of(self.seabed),
            **self.bathymetry.to_attrs(),
        }

    def __repr__(self):
        kind = "range-dependent" if self.is_range_dependent else "range-independent"
        seabed = "seabed unknown" if self.seabed is None else f"seabed {self.seabed.name!r}"
        return (
            f"<Environment {kind}: {self.depth.size} nodes 0..{self.depth[-1]:g} m, "
            f"c {self.sound_speed.min():.2f}..{self.sound_speed.max():.2f} m/s, "
            f"bottom {self.bottom_depth:g} m, {seabed}>"
        )
