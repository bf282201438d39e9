"""The acoustic environment: sound speed c(z), sea surface, bottom depth or bathymetry.

An :class:`Environment` is what the ray engine traces through. For the range-independent
engine the sound speed is **piecewise linear in depth between the nodes** ``depth`` /
``sound_speed``, so inside each layer the sound-speed gradient is constant and every ray is
an exact circular arc (see :mod:`seaprofile.propagation.kernels`). The surface (depth 0) is
flat and pressure-release; the bottom is flat at ``bottom_depth`` or follows ``bathymetry``
(piecewise linear in range; beyond the last point the last depth holds).

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
copy. ``section`` is set by :class:`seaprofile.propagation.section.Section` for c(r, z);
``None`` means range-independent.
"""

from __future__ import annotations

import numba
import numpy as np

from .. import _cf
from .._validate import SeaprofileError, as_float_array

__all__ = ["Environment", "thin_nodes", "BAD_SOUND_SPEED_FLAGS"]

#: Argo flags whose sound speeds are not used (probably bad, bad, missing). Flags 5
#: (value changed) and 8 (estimated, e.g. a profile extended to the bottom) are kept.
BAD_SOUND_SPEED_FLAGS = (_cf.PROBABLY_BAD, _cf.BAD, _cf.MISSING)


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


class Environment:
    """Sound speed c(z) (or c(r, z) through ``section``), flat surface, bottom.

    Parameters
    ----------
    depth : array_like
        Node depths, m, positive down, strictly increasing (at least two nodes). If the
        first node is below 0 a node at 0 with the first speed is added; if the last node
        is above the (deepest) bottom a node at the bottom with the last speed is added.
    sound_speed : array_like
        Sound speed at the nodes, m/s; piecewise linear in depth between them.
    bottom_depth : float, optional
        Flat bottom depth, m (> 0). Default: the bathymetry depth at range 0 when
        ``bathymetry`` is given, else the deepest node.
    bathymetry : (array_like, array_like), optional
        ``(ranges, depths)``: bottom depth (m) at ranges (m, strictly increasing),
        piecewise linear; the end depths hold outside the given ranges.
    bottom_type : str
        Bottom sediment name, carried for the loss computations (default ``"sand"``).
    section : Section, optional
        Range-dependent sound speed (set by :class:`~seaprofile.propagation.section.Section`).
    thin_tolerance : float, optional
        Thin the nodes to this tolerance, m/s (see :func:`thin_nodes`). ``None``: keep all.
    attrs : dict, optional
        Provenance attributes (``processing_steps``, ``history``, ``profile_id`` ...).

    Raises
    ------
    SeaprofileError
        Fewer than two nodes, NaN, non-increasing depths, bathymetry ranges not strictly
        increasing, bottom at or above the surface; the message names the argument.
    """

    __slots__ = (
        "depth",
        "sound_speed",
        "bottom_depth",
        "bathymetry",
        "bottom_type",
        "section",
        "attrs",
        "_frozen",
    )

    def __init__(
        self,
        depth,
        sound_speed,
        bottom_depth=None,
        *,
        bathymetry=None,
        bottom_type="sand",
        section=None,
        thin_tolerance=None,
        attrs=None,
    ):
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

        bathy = None
        if bathymetry is not None:
            try:
                br, bz = bathymetry
            except (TypeError, ValueError) as exc:
                raise SeaprofileError("bathymetry must be a pair (ranges, depths)") from exc
            br = as_float_array("bathymetry", br).ravel()
            bz = as_float_array("bathymetry", bz).ravel()
            if br.size != bz.size or br.size < 1:
                raise SeaprofileError("bathymetry ranges and depths must have one equal, non-zero length")
            if not (np.all(np.isfinite(br)) and np.all(np.isfinite(bz))):
                raise SeaprofileError("bathymetry contains NaN or infinite values")
            if np.any(np.diff(br) <= 0):
                raise SeaprofileError("bathymetry ranges must be strictly increasing (m)")
            if np.any(bz <= 0):
                raise SeaprofileError("bathymetry depths must be below the surface (> 0 m)")
            bathy = (_readonly(br), _readonly(bz))

        if bottom_depth is None:
            if bathy is not None:
                bottom = float(np.interp(0.0, bathy[0], bathy[1]))
            else:
                bottom = float(z[-1])
        else:
            try:
                bottom = float(bottom_depth)
            except (TypeError, ValueError) as exc:
                raise SeaprofileError(f"bottom_depth must be a number (m), got {bottom_depth!r}") from exc
        if not np.isfinite(bottom) or bottom <= 0:
            raise SeaprofileError(f"bottom_depth must be below the surface (> 0 m), got {bottom_depth!r}")
        if bathy is not None and np.all(bathy[1] == bathy[1][0]):
            if bottom_depth is not None and bottom != float(bathy[1][0]):
                raise SeaprofileError(
                    f"bottom_depth {bottom:g} m contradicts the flat bathymetry at {bathy[1][0]:g} m"
                )
            bottom = float(bathy[1][0])

        steps_attrs = dict(attrs) if attrs else _cf.base_attrs()
        n_in = z.size
        if thin_tolerance is not None:
            z, c = thin_nodes(z, c, thin_tolerance)
            steps_attrs = _cf.record_step(
                steps_attrs, "thin_nodes", tolerance_m_s=float(thin_tolerance),
                nodes_in=int(n_in), nodes_kept=int(z.size),
            )
        if z[0] > 0:
            z = np.concatenate([[0.0], z])
            c = np.concatenate([[c[0]], c])
        deepest = max(bottom, float(bathy[1].max()) if bathy is not None else bottom)
        if z[-1] < deepest:
            z = np.concatenate([z, [deepest]])
            c = np.concatenate([c, [c[-1]]])

        object.__setattr__(self, "depth", _readonly(z))
        object.__setattr__(self, "sound_speed", _readonly(c))
        object.__setattr__(self, "bottom_depth", bottom)
        object.__setattr__(self, "bathymetry", bathy)
        object.__setattr__(self, "bottom_type", str(bottom_type))
        object.__setattr__(self, "section", section)
        object.__setattr__(self, "attrs", steps_attrs)
        object.__setattr__(self, "_frozen", True)

    def __setattr__(self, name, value):
        raise AttributeError("Environment is immutable; use .replace(...)")

    # -- constructors ------------------------------------------------------------------
    @classmethod
    def from_arrays(cls, depth, sound_speed, bottom_depth=None, *, bathymetry=None,
                    thin_tolerance=None, bottom_type="sand"):
        """Environment from node arrays (see the class for the parameters and units)."""
        return cls(depth, sound_speed, bottom_depth, bathymetry=bathymetry,
                   thin_tolerance=thin_tolerance, bottom_type=bottom_type)

    @classmethod
    def from_section(cls, section, bottom_depth=None, *, bathymetry=None, bottom_type="sand"):
        """An Environment whose sound speed is a :class:`~seaprofile.propagation.Section`.

        Parameters
        ----------
        section : Section
            The range-dependent sound speed.
        bottom_depth : float, optional
            Flat bottom depth, m. Default: the bathymetry at range 0, else the deepest node.
        bathymetry : (array_like, array_like), optional
            ``(ranges, depths)`` in m, piecewise linear in range.
        bottom_type : str
            Bottom sediment name (carried for the loss computations).

        Returns
        -------
        Environment
            Its own c(z) (``depth``, ``sound_speed``) is the section at range 0; ray
            tracing uses the whole section (``environment.section``).
        """
        # the section module builds on this one, never the reverse (no import circle):
        # a Section is recognised by what it provides
        if not all(hasattr(section, k) for k in ("ranges", "depth", "sound_speed_at",
                                                 "range_interpolation", "attrs", "_coef")):
            raise SeaprofileError("section must be a seaprofile Section")
        c0 = section.sound_speed_at(np.zeros_like(section.depth), section.depth)
        attrs = _cf.record_step(dict(section.attrs), "environment_from_section",
                                casts=int(section.ranges.size),
                                range_interpolation=section.range_interpolation)
        return cls(section.depth, c0, bottom_depth, bathymetry=bathymetry,
                   bottom_type=bottom_type, section=section, attrs=attrs)

    @classmethod
    def from_profile(cls, profile, bottom_depth=None, *, thin_tolerance=None,
                     bathymetry=None, bottom_type="sand"):
        """Environment from a Profile Dataset (or any mapping with ``depth``, ``sound_speed``).

        Parameters
        ----------
        profile : xr.Dataset or mapping
            ``profile["depth"]`` (m) and ``profile["sound_speed"]`` (m/s); if
            ``sound_speed_qc`` is present, nodes flagged 3 (probably bad), 4 (bad) or
            9 (missing) are left out; NaN speeds are left out.
        bottom_depth : float, optional
            Bottom depth, m. Default: the deepest usable node.
        thin_tolerance : float, optional
            Thin the nodes to this tolerance, m/s.
        bathymetry, bottom_type
            As for the class.
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
            use &= ~np.isin(qc, BAD_SOUND_SPEED_FLAGS)
        if use.sum() < 2:
            raise SeaprofileError("profile has fewer than two usable sound-speed nodes")
        attrs = dict(getattr(profile, "attrs", {}) or {}) or _cf.base_attrs()
        attrs = _cf.record_step(attrs, "environment_from_profile",
                                nodes_used=int(use.sum()), nodes_total=int(c.size))
        pid = None
        try:
            pid = str(np.asarray(profile["profile_id"]).item())
        except Exception:  # noqa: BLE001 - optional metadata
            pid = None
        if pid:
            attrs["profile_id"] = pid
        return cls(z[use], c[use], bottom_depth, bathymetry=bathymetry,
                   thin_tolerance=thin_tolerance, bottom_type=bottom_type, attrs=attrs)

    def replace(self, **changes):
        """A copy with some constructor arguments changed (``section=...``, ``bottom_depth=...``)."""
        args = dict(depth=self.depth, sound_speed=self.sound_speed,
                    bottom_depth=self.bottom_depth, bathymetry=self.bathymetry,
                    bottom_type=self.bottom_type, section=self.section, attrs=self.attrs)
        args.update(changes)
        return Environment(args.pop("depth"), args.pop("sound_speed"), args.pop("bottom_depth"), **args)

    # -- properties --------------------------------------------------------------------
    @property
    def is_range_dependent(self):
        """True when a section is attached or the bathymetry is not flat."""
        if self.section is not None:
            return True
        if self.bathymetry is not None:
            d = self.bathymetry[1]
            return bool(np.any(d != d[0]))
        return False

    @property
    def gradient(self):
        """Sound-speed gradient in each layer between nodes, 1/s (length ``len(depth) - 1``)."""
        return np.diff(self.sound_speed) / np.diff(self.depth)

    def sound_speed_at(self, depth):
        """Sound speed at ``depth`` (m), m/s: linear between nodes, end values held."""
        return np.interp(as_float_array("depth", depth), self.depth, self.sound_speed)

    def bottom_at(self, ranges):
        """Bottom depth (m) at ``ranges`` (m)."""
        r = as_float_array("ranges", ranges)
        if self.bathymetry is None:
            return np.full(r.shape, self.bottom_depth)
        return np.interp(r, self.bathymetry[0], self.bathymetry[1])

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

    def __repr__(self):
        kind = "range-dependent" if self.is_range_dependent else "range-independent"
        return (f"<Environment {kind}: {self.depth.size} nodes 0..{self.depth[-1]:g} m, "
                f"c {self.sound_speed.min():.2f}..{self.sound_speed.max():.2f} m/s, "
                f"bottom {self.bottom_depth:g} m ({self.bottom_type})>")
