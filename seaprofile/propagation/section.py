"""Sections: sound-speed profiles at ranges along a track, and c(r, z) between them.

A :class:`Section` holds ``n`` casts at ranges ``r_0 < r_1 < ... < r_{n-1}`` (m) on one
common depth grid ``z_0 < ... < z_{m-1}`` (m, positive down). The sound speed between the
nodes is

* **piecewise linear in depth** between the depth nodes, exactly as the range-independent
  engine treats a single profile (so a section of identical casts *is* that profile), and
* **piecewise cubic in range** at every depth node, by default the shape-preserving
  (monotone) cubic Hermite interpolant of Fritsch & Carlson (1980): continuous value and
  first derivative dc/dr, no overshoot between casts (a front never produces a sound speed
  outside the casts' values). ``range_interpolation="spline"`` uses the natural cubic spline
  instead (also continuous d2c/dr2, but it may overshoot), ``"linear"`` plain linear
  interpolation (dc/dr jumps at the casts). With two casts both cubic choices reduce to
  linear interpolation; with identical casts all three give a range-independent field.
* Outside the casts (r < r_0 or r > r_{n-1}) the nearest cast holds; above z_0 and below
  z_{m-1} the nearest node value holds (zero vertical gradient).

Inside one *cell* (one range interval times one depth layer) c(r, z) is a polynomial, so its
gradient (c_r, c_z) and second derivatives (c_rr, c_rz; c_zz = 0) are smooth there; across
a cell face only the *normal* derivative can jump (dc/dz across a depth node, and, for
``"linear"`` and at the end casts, dc/dr across a cast range). The integrator
(:mod:`seaprofile.propagation.integrate`) stops its steps on cell faces and applies the
dynamic-ray interface correction there.

Ranges between casts given by latitude and longitude are great-circle distances on a sphere
of the IUGG mean Earth radius R1 = 6 371 008.8 m (Moritz 2000, "Geodetic Reference System
1980", J. Geodesy 74, 128-133, doi:10.1007/s001900050278), by the haversine formula
(Sinnott 1984, "Virtues of the haversine", Sky and Telescope 68(2), 159), accumulated from
cast to cast along the track. The sphere differs from the WGS 84 ellipsoid by up to about
0.5 % of the distance; that is well inside the uncertainty of where a sound-speed field is
known between casts, but it is not survey-grade geodesy.

A Section is a pure field: it knows nothing of the Environment (which takes one with
:meth:`Environment.from_section <seaprofile.propagation.environment.Environment.from_section>`).
"""

from __future__ import annotations

import numba
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array

__all__ = [
    "EARTH_MEAN_RADIUS",
    "RANGE_INTERPOLATIONS",
    "Section",
    "great_circle_distance",
    "track_ranges",
]

#: IUGG mean Earth radius R1 (m), Moritz (2000), J. Geodesy 74, 128-133.
EARTH_MEAN_RADIUS = 6371008.8

RANGE_INTERPOLATIONS = ("pchip", "spline", "linear")


# --------------------------------------------------------------------------------------
# geodesy
# --------------------------------------------------------------------------------------
def great_circle_distance(latitude1, longitude1, latitude2, longitude2):
    """Great-circle distance between two points on a sphere of the mean Earth radius.

    Parameters
    ----------
    latitude1, longitude1 : array_like
        First point, degrees north / east.
    latitude2, longitude2 : array_like
        Second point, degrees north / east.

    Returns
    -------
    ndarray
        Distance, m.

    Notes
    -----
    Haversine formula (Sinnott 1984, Sky and Telescope 68(2), 159), well conditioned for
    short distances: d = 2 R asin(sqrt(hav(dphi) + cos(phi1) cos(phi2) hav(dlambda))),
    hav(x) = sin^2(x / 2), on a sphere of radius R = 6 371 008.8 m (IUGG mean radius R1,
    Moritz 2000, J. Geodesy 74, 128-133). Error against the WGS 84 ellipsoid: up to about
    0.5 % of the distance.
    """
    p1 = np.radians(as_float_array("latitude1", latitude1))
    p2 = np.radians(as_float_array("latitude2", latitude2))
    l1 = np.radians(as_float_array("longitude1", longitude1))
    l2 = np.radians(as_float_array("longitude2", longitude2))
    h = np.sin((p2 - p1) / 2.0) ** 2 + np.cos(p1) * np.cos(p2) * np.sin((l2 - l1) / 2.0) ** 2
    return 2.0 * EARTH_MEAN_RADIUS * np.arcsin(np.sqrt(np.clip(h, 0.0, 1.0)))


def track_ranges(latitude, longitude):
    """Ranges (m) of points along a track: cumulative great-circle distance from the first.

    Parameters
    ----------
    latitude, longitude : array_like
        Positions in track order, degrees north / east.

    Returns
    -------
    ndarray
        Range of each point, m; the first is 0.
    """
    lat = as_float_array("latitude", latitude).ravel()
    lon = as_float_array("longitude", longitude).ravel()
    if lat.shape != lon.shape:
        raise SeaprofileError("latitude and longitude must have the same length")
    if not (np.isfinite(lat).all() and np.isfinite(lon).all()):
        raise SeaprofileError(
            "ranges: not given and some casts have no latitude/longitude; give ranges (m)"
        )
    legs = great_circle_distance(lat[:-1], lon[:-1], lat[1:], lon[1:])
    return np.concatenate([[0.0], np.cumsum(legs)])


# --------------------------------------------------------------------------------------
# numba kernels: evaluation of c(r, z) inside one cell
# --------------------------------------------------------------------------------------
@numba.njit(cache=True)
def _find_interval(edges, x):
    """Index i with edges[i-1] <= x < edges[i] (0 below edges[0], len(edges) above)."""
    lo = 0
    hi = edges.shape[0]
    while lo < hi:
        mid = (lo + hi) // 2
        if x < edges[mid]:
            hi = mid
        else:
            lo = mid + 1
    return lo


@numba.njit(cache=True)
def _cell_eval(coef, ref, depth, i, j, r, z):
    """c and its derivatives at (r, z) with the polynomials of cell (range i, layer j).

    ``coef[i, k, :]`` are the cubic coefficients (a, b, c, d) of range interval ``i`` at
    depth node ``k`` in powers of (r - ref[i]); layer ``j`` lies between depth nodes j-1 and
    j (layer 0 above the first node, layer m below the last: constant in depth). The cell's
    polynomials are used even when (r, z) lies outside the cell (smooth extension), which is
    what a Runge-Kutta step needs. Returns (c, c_r, c_z, c_rr, c_rz).
    """
    m = depth.shape[0]
    dr = r - ref[i]
    ka = j - 1
    kb = j
    if ka < 0:
        ka = 0
    if kb > m - 1:
        kb = m - 1
    a0 = coef[i, ka, 0]
    a1 = coef[i, ka, 1]
    a2 = coef[i, ka, 2]
    a3 = coef[i, ka, 3]
    ca = a0 + dr * (a1 + dr * (a2 + dr * a3))
    da = a1 + dr * (2.0 * a2 + dr * 3.0 * a3)
    sa = 2.0 * a2 + 6.0 * a3 * dr
    if ka == kb:
        return ca, da, 0.0, sa, 0.0
    b0 = coef[i, kb, 0]
    b1 = coef[i, kb, 1]
    b2 = coef[i, kb, 2]
    b3 = coef[i, kb, 3]
    cb = b0 + dr * (b1 + dr * (b2 + dr * b3))
    db = b1 + dr * (2.0 * b2 + dr * 3.0 * b3)
    sb = 2.0 * b2 + 6.0 * b3 * dr
    dz = depth[kb] - depth[ka]
    w = (z - depth[ka]) / dz
    c = ca + w * (cb - ca)
    cr = da + w * (db - da)
    cz = (cb - ca) / dz
    crr = sa + w * (sb - sa)
    crz = (db - da) / dz
    return c, cr, cz, crr, crz


@numba.njit(cache=True, parallel=True)
def _eval_points(coef, ref, edges, depth, r, z, out):
    """Evaluate (c, c_r, c_z, c_rr, c_rz) at many points; out has shape (n, 5)."""
    for n in numba.prange(r.shape[0]):
        i = _find_interval(edges, r[n])
        j = _find_interval(depth, z[n])
        c, cr, cz, crr, crz = _cell_eval(coef, ref, depth, i, j, r[n], z[n])
        out[n, 0] = c
        out[n, 1] = cr
        out[n, 2] = cz
        out[n, 3] = crr
        out[n, 4] = crz


# --------------------------------------------------------------------------------------
# coefficient tables
# --------------------------------------------------------------------------------------
def _range_coefficients(ranges, sound_speed, method):
    """Cell table: coef (n+1, m, 4), ref (n+1,), edges (n,) for n casts, m depth nodes.

    Interval 0 is r < r_0 and interval n is r >= r_{n-1} (constant in range); interval i
    (1 <= i <= n-1) is [r_{i-1}, r_i) with polynomials in (r - r_{i-1}).
    """
    from scipy.interpolate import CubicSpline, PchipInterpolator

    n, m = sound_speed.shape
    coef = np.zeros((n + 1, m, 4))
    ref = np.empty(n + 1)
    coef[0, :, 0] = sound_speed[0]
    ref[0] = ranges[0]
    coef[n, :, 0] = sound_speed[n - 1]
    ref[n] = ranges[n - 1]
    if n >= 2:
        ref[1:n] = ranges[:-1]
        if method == "linear" or n == 2:
            slope = np.diff(sound_speed, axis=0) / np.diff(ranges)[:, None]
            coef[1:n, :, 0] = sound_speed[:-1]
            coef[1:n, :, 1] = slope
        else:
            if method == "pchip":
                poly = PchipInterpolator(ranges, sound_speed, axis=0)
            else:
                poly = CubicSpline(ranges, sound_speed, axis=0, bc_type="natural")
            # scipy stores highest power first, shape (4, n - 1, m)
            for power in range(4):
                coef[1:n, :, power] = poly.c[3 - power]
    return coef, ref, ranges.copy()


# --------------------------------------------------------------------------------------
# the Section
# --------------------------------------------------------------------------------------
class Section:
    """Sound-speed profiles at ranges along a track, and the field c(r, z) between them.

    Parameters
    ----------
    ranges : array_like, shape (n,)
        Range of each cast along the track, m, strictly increasing.
    depth : array_like, shape (m,)
        Common depth grid, m, positive down, strictly increasing.
    sound_speed : array_like, shape (n, m)
        Sound speed of cast ``i`` at depth node ``k``, m/s (one row per cast).
    range_interpolation : {"pchip", "spline", "linear"}
        Interpolation in range at every depth node (see the module notes). Default
        ``"pchip"``: monotone cubic Hermite (Fritsch & Carlson 1980, SIAM J. Numer. Anal.
        17(2), 238-246, doi:10.1137/0717021), continuous dc/dr, no overshoot.
    latitude, longitude : array_like, optional
        Position of each cast, degrees north / east (kept for the record).
    profile_ids : sequence of str, optional
        Identifier of each cast.
    attrs : dict, optional
        Global attributes of :meth:`to_dataset` (provenance).

    Notes
    -----
    The field is piecewise linear in depth (as a single profile is for the exact
    range-independent solver) and piecewise cubic in range; see the module docstring for
    the continuity of its derivatives and the behaviour outside the casts.
    """

    def __init__(
        self,
        ranges,
        depth,
        sound_speed,
        *,
        range_interpolation="pchip",
        latitude=None,
        longitude=None,
        profile_ids=None,
        attrs=None,
    ):
        r = np.array(as_float_array("ranges", ranges), dtype=np.float64, copy=True).ravel()
        z = np.array(as_float_array("depth", depth), dtype=np.float64, copy=True).ravel()
        c = np.array(as_float_array("sound_speed", sound_speed), dtype=np.float64, copy=True)
        if r.size < 1:
            raise SeaprofileError("ranges must hold at least one cast range")
        if not np.isfinite(r).all() or (r.size > 1 and np.any(np.diff(r) <= 0)):
            raise SeaprofileError("ranges must be finite and strictly increasing (m)")
        if z.size < 1 or not np.isfinite(z).all() or np.any(np.diff(z) <= 0):
            raise SeaprofileError("depth must be finite and strictly increasing (m, positive down)")
        if c.ndim == 1 and r.size == 1:
            c = c[None, :]
        if c.shape != (r.size, z.size):
            raise SeaprofileError(
                f"sound_speed must have shape (len(ranges), len(depth)) = ({r.size}, {z.size}),"
                f" got {c.shape}"
            )
        if not np.isfinite(c).all() or np.any(c <= 0):
            raise SeaprofileError("sound_speed must be finite and positive (m/s); fill gaps first")
        if range_interpolation not in RANGE_INTERPOLATIONS:
            raise SeaprofileError(
                f"range_interpolation must be one of {RANGE_INTERPOLATIONS}, "
                f"got {range_interpolation!r}"
            )
        self.ranges = r
        self.depth = z
        self.sound_speed = c
        self.range_interpolation = range_interpolation
        n = r.size
        self.latitude = (
            np.full(n, np.nan) if latitude is None else as_float_array("latitude", latitude).ravel()
        )
        self.longitude = (
            np.full(n, np.nan)
            if longitude is None
            else as_float_array("longitude", longitude).ravel()
        )
        if self.latitude.size != n or self.longitude.size != n:
            raise SeaprofileError("latitude and longitude need one value per cast")
        self.profile_ids = (
            [f"cast{i}" for i in range(n)] if profile_ids is None else [str(p) for p in profile_ids]
        )
        if len(self.profile_ids) != n:
            raise SeaprofileError("profile_ids needs one identifier per cast")
        self.attrs = _cf.base_attrs() if attrs is None else dict(attrs)
        for arr in (self.ranges, self.depth, self.sound_speed):
            arr.setflags(write=False)
        coef, ref, edges = _range_coefficients(r, c, range_interpolation)
        self._coef = np.ascontiguousarray(coef)
        self._ref = ref
        self._edges = edges

    # ---- construction ----------------------------------------------------------------
    @classmethod
    def from_profiles(cls, profiles, ranges=None, *, depth=None, range_interpolation="pchip"):
        """Build a Section from Profile Datasets (in track order).

        Parameters
        ----------
        profiles : sequence of xr.Dataset
            Profiles (dimension ``depth``, m; variable ``sound_speed``, m/s), in track order.
        ranges : array_like, optional
            Range of each profile along the track, m. Default: cumulative great-circle
            distance between the profiles' ``latitude``/``longitude`` (first at 0); see
            :func:`great_circle_distance`.
        depth : array_like, optional
            Common depth grid, m. Default: the union of the profiles' depth nodes, so that
            every profile is represented exactly.
        range_interpolation : {"pchip", "spline", "linear"}
            See :class:`Section`.

        Returns
        -------
        Section

        Notes
        -----
        Each profile is put on the common grid by linear interpolation in depth over its
        finite values (exact at its own nodes); above its shallowest and below its deepest
        finite value the end value is held (zero gradient). Extend profiles to the bottom
        first (flagged "estimated") if the holding matters.
        """
        profiles = list(profiles)
        if not profiles:
            raise SeaprofileError("profiles must hold at least one Profile")
        nodes = []
        for k, prof in enumerate(profiles):
            if "sound_speed" not in prof or "depth" not in prof.coords:
                raise SeaprofileError(
                    f"profiles[{k}] must be a Profile with coordinate depth and sound_speed"
                )
            zk = np.asarray(prof["depth"].values, dtype=float)
            ck = np.asarray(prof["sound_speed"].values, dtype=float)
            ok = np.isfinite(zk) & np.isfinite(ck)
            if ok.sum() < 1:
                raise SeaprofileError(f"profiles[{k}] has no finite sound speed")
            order = np.argsort(zk[ok])
            nodes.append((zk[ok][order], ck[ok][order]))
        if depth is None:
            grid = np.unique(np.concatenate([zk for zk, _ in nodes]))
        else:
            grid = as_float_array("depth", depth).ravel()
        table = np.vstack([np.interp(grid, zk, ck) for zk, ck in nodes])

        def coord(prof, name):
            v = prof.coords.get(name, prof.attrs.get(name, np.nan))
            try:
                return float(np.asarray(v, dtype=float))
            except (TypeError, ValueError):
                return np.nan

        lat = np.array([coord(p, "latitude") for p in profiles])
        lon = np.array([coord(p, "longitude") for p in profiles])
        if ranges is None:
            rng = track_ranges(lat, lon)
            how = "great_circle_haversine_R6371008.8m"
        else:
            rng = as_float_array("ranges", ranges).ravel()
            if rng.size != len(profiles):
                raise SeaprofileError("ranges needs one value (m) per profile")
            how = "given"
        ids = []
        for k, p in enumerate(profiles):
            pid = p.coords.get("profile_id", p.attrs.get("profile_id", f"cast{k}"))
            ids.append(str(np.asarray(pid).item() if hasattr(pid, "values") else pid))
        attrs = _cf.record_step(
            _cf.base_attrs(),
            "section_from_profiles",
            ranges=how,
            range_interpolation=range_interpolation,
            profile_ids=ids,
        )
        return cls(
            rng,
            grid,
            table,
            range_interpolation=range_interpolation,
            latitude=lat,
            longitude=lon,
            profile_ids=ids,
            attrs=attrs,
        )

    @classmethod
    def from_dataset(cls, dataset):
        """Rebuild a Section from the Dataset written by :meth:`to_dataset`."""
        ds = dataset
        for name in ("range", "depth", "sound_speed"):
            if name not in ds.variables:
                raise SeaprofileError(f"dataset: a section Dataset needs {name!r}")
        c = ds["sound_speed"].transpose("range", "depth").values
        return cls(
            ds["range"].values,
            ds["depth"].values,
            c,
            range_interpolation=ds.attrs.get("range_interpolation", "pchip"),
            latitude=ds["latitude"].values if "latitude" in ds else None,
            longitude=ds["longitude"].values if "longitude" in ds else None,
            profile_ids=ds["profile_id"].values if "profile_id" in ds else None,
            attrs=dict(ds.attrs),
        )

    # ---- output ------------------------------------------------------------------------
    def to_dataset(self):
        """The section as an ``xr.Dataset`` (dims ``range``, ``depth``) with CF attributes."""
        ds = xr.Dataset(
            {
                "sound_speed": (
                    ("range", "depth"),
                    np.array(self.sound_speed),
                    _cf.attrs_for("sound_speed"),
                ),
                "latitude": ("range", self.latitude.copy(), _cf.attrs_for("latitude")),
                "longitude": ("range", self.longitude.copy(), _cf.attrs_for("longitude")),
                "profile_id": (
                    "range",
                    np.array(self.profile_ids, dtype=str),
                    {"cf_role": "profile_id", "long_name": "cast identifier"},
                ),
            },
            coords={
                "range": ("range", np.array(self.ranges), _cf.attrs_for("range")),
                "depth": ("depth", np.array(self.depth), _cf.attrs_for("depth")),
            },
        )
        ds.attrs.update(self.attrs)
        ds.attrs["range_interpolation"] = self.range_interpolation
        ds.attrs.setdefault("caution", _cf.CAUTION)
        return ds

    # ---- evaluation --------------------------------------------------------------------
    def sound_speed_at(self, range, depth):
        """Sound speed c(r, z), m/s, at ranges (m) and depths (m), broadcast together."""
        return self.gradient_at(range, depth)[0]

    def gradient_at(self, range, depth):
        """c and its derivatives at ranges (m) and depths (m), broadcast together.

        Parameters
        ----------
        range : array_like
            Range along the track, m.
        depth : array_like
            Depth, m, positive down.

        Returns
        -------
        c, c_r, c_z, c_rr, c_rz : ndarray
            Sound speed (m/s), its range and depth derivatives (1/s) and second derivatives
            (1/(m s)). On a cell face the value of the cell above / beyond is returned.
        """
        r = as_float_array("range", range)
        z = as_float_array("depth", depth)
        r, z = np.broadcast_arrays(r, z)
        shape = r.shape
        out = np.empty((r.size, 5))
        _eval_points(
            self._coef,
            self._ref,
            self._edges,
            self.depth,
            np.ascontiguousarray(r.ravel()),
            np.ascontiguousarray(z.ravel()),
            out,
        )
        return tuple(out[:, k].reshape(shape) for k in range_(5))

    @property
    def is_range_independent(self):
        """True when every cast has the same sound speed at every depth node."""
        return bool(np.all(self.sound_speed == self.sound_speed[0]))

    def __repr__(self):
        return (
            f"Section({self.ranges.size} casts over {self.ranges[0]:.0f}..{self.ranges[-1]:.0f}"
            f" m, {self.depth.size} depth nodes {self.depth[0]:g}..{self.depth[-1]:g} m,"
            f" range_interpolation={self.range_interpolation!r})"
        )


range_ = range  # the builtin, shadowed by an argument name in gradient_at
