"""Sound speed in sea water from temperature, salinity and pressure or depth.

One function per published equation (array in, array out, the inputs that equation was
written for, no checks; defined beside their kernels in ``_soundspeed_kernels`` and
re-exported here) and one entry point, :func:`sound_speed`, that picks an equation
from :data:`EQUATIONS`, converts pressure <-> depth as the equation needs, warns when the
inputs leave the equation's validity box and accepts numpy arrays, dask arrays and xarray
DataArrays. :func:`validity_mask` says point by point whether inputs lie in the box.

Units everywhere: temperature ITS-90 degC, practical salinity (PSS-78), sea pressure dbar,
depth m positive down, latitude/longitude degrees, sound speed m/s. Equations written on
IPTS-68 or in other pressure units convert inside their compiled kernels.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .._validate import SeaprofileError, is_lazy, value_range, warn_outside
from . import _box
from . import _soundspeed_kernels as _k
from ._apply import output_attrs, pointwise, run_loop
from ._soundspeed_kernels import (
    chen_millero1977,
    coppens1981,
    del_grosso1974,
    leroy2008,
    mackenzie1981,
    medwin1975,
    teos10,
    wong_zhu1995,
)

__all__ = [
    "EQUATIONS",
    "Equation",
    "sound_speed",
    "validity_mask",
    "mackenzie1981",
    "chen_millero1977",
    "wong_zhu1995",
    "del_grosso1974",
    "coppens1981",
    "medwin1975",
    "leroy2008",
    "teos10",
]


# --- registry ----------------------------------------------------------------------------


@dataclass(frozen=True)
class Equation:
    """One sound-speed equation: what it computes from, where it holds, where it comes from.

    Attributes
    ----------
    name : str
        Key in :data:`EQUATIONS`.
    function : callable
        ``function(temperature, salinity, pressure_or_depth[, latitude])``, project units.
    needs : {"pressure", "depth"}
        Vertical coordinate the equation is written in (pressure dbar or depth m).
    needs_latitude : bool
        True when the equation itself takes latitude.
    temperature_range : tuple of float
        Validity, degC (ITS-90).
    salinity_range : tuple of float
        Validity, practical salinity.
    vertical_range : tuple of float
        Validity of ``needs``, dbar for pressure or m for depth.
    reference : str
        Citation, with DOI where we are sure of it.
    uses_position : bool
        True when latitude/longitude are optional refinements (TEOS-10 absolute salinity).
    """

    name: str
    function: Callable
    needs: str
    needs_latitude: bool
    temperature_range: tuple
    salinity_range: tuple
    vertical_range: tuple
    reference: str
    uses_position: bool = False

    @property
    def vertical_units(self):
        """``"dbar"`` for pressure-based equations, ``"m"`` for depth-based ones."""
        return "dbar" if self.needs == "pressure" else "m"

    @property
    def validity(self):
        """The validity box as ``{variable: (low, high, units)}``."""
        return {
            "temperature": (*self.temperature_range, "degC"),
            "salinity": (*self.salinity_range, "1"),
            self.needs: (*self.vertical_range, self.vertical_units),
        }


def _eq(name, function, needs, t, s, v, reference, needs_latitude=False, uses_position=False):
    return Equation(name, function, needs, needs_latitude, t, s, v, reference, uses_position)


_R = _k.REFERENCES

#: Sound-speed equations by name; see each function's docstring for its source.
EQUATIONS = {
    e.name: e
    for e in (
        _eq(
            "mackenzie1981",
            mackenzie1981,
            "depth",
            (-2.0, 30.0),
            (25.0, 40.0),
            (0.0, 8000.0),
            _R["mackenzie1981"],
        ),
        _eq(
            "chen_millero1977",
            chen_millero1977,
            "pressure",
            (0.0, 40.0),
            (0.0, 40.0),
            (0.0, 10000.0),
            _R["chen_millero1977"],
        ),
        _eq(
            "wong_zhu1995",
            wong_zhu1995,
            "pressure",
            (0.0, 40.0),
            (0.0, 40.0),
            (0.0, 10000.0),
            _R["wong_zhu1995"],
        ),
        _eq(
            "del_grosso1974",
            del_grosso1974,
            "pressure",
            (0.0, 30.0),
            (30.0, 40.0),
            (0.0, 1000.0 * _k._DBAR_PER_KGCM2),
            _R["del_grosso1974"],
        ),
        _eq(
            "coppens1981",
            coppens1981,
            "depth",
            (0.0, 35.0),
            (0.0, 45.0),
            (0.0, 4000.0),
            _R["coppens1981"],
        ),
        _eq(
            "medwin1975",
            medwin1975,
            "depth",
            (0.0, 35.0),
            (0.0, 45.0),
            (0.0, 1000.0),
            _R["medwin1975"],
        ),
        _eq(
            "leroy2008",
            leroy2008,
            "depth",
            (-2.0, 34.0),
            (0.0, 42.0),
            (0.0, 12000.0),
            _R["leroy2008"],
            needs_latitude=True,
        ),
        _eq(
            "teos10",
            teos10,
            "pressure",
            (-2.0, 40.0),
            (0.0, 42.0),
            (0.0, 10000.0),
            _R["teos10"],
            uses_position=True,
        ),
    )
}


# --- layer 2b: the entry points ------------------------------------------------------------


def sound_speed(
    temperature,
    salinity,
    pressure=None,
    *,
    depth=None,
    latitude=None,
    longitude=None,
    equation="chen_millero1977",
):
    """Sound speed in sea water by a named published equation.

    Parameters
    ----------
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    salinity : array_like, dask array or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like, dask array or xarray.DataArray, optional
        Sea pressure, dbar. Give exactly one of ``pressure`` and ``depth``.
    depth : array_like, dask array or xarray.DataArray, optional
        Depth, m, positive down.
    latitude : float, array_like, dask array or xarray.DataArray, optional
        Latitude, degrees north, finite, -90..90 (NaN is refused: an unknown position).
        Required by ``leroy2008`` and whenever the given vertical coordinate must be
        converted (UNESCO 1983 pressure <-> depth,
        :func:`seaprofile.seawater.depth.depth_from_pressure`).
    longitude : float, array_like, dask array or xarray.DataArray, optional
        Longitude, degrees east, finite, -180..360; needs ``latitude``. Only ``teos10``
        uses it (with latitude) for absolute salinity; it is checked for every equation.
    equation : str
        A key of :data:`EQUATIONS` (default ``"chen_millero1977"``).

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Sound speed, m/s, shaped like the broadcast inputs. NaN in temperature,
        salinity, pressure or depth gives NaN. An xarray result carries the CF attributes
        (``speed_of_sound_in_sea_water``, ``m s-1``) and ``equation``, ``references`` and
        ``seaprofile_version`` attributes. Inputs reach the equation through the one
        dispatcher of :mod:`seaprofile.seawater._apply` (its alignment, position and
        attribute rules).

    Raises
    ------
    SeaprofileError
        Unknown ``equation`` (the message lists the valid names); both or neither of
        ``pressure``/``depth``; ``latitude`` missing when needed; ``latitude`` or
        ``longitude`` NaN, infinite or out of range (for dask inputs: when computed);
        ``longitude`` without ``latitude``; non-numeric input; shapes that do not
        broadcast; xarray inputs that do not align exactly (or a DataArray mixed with a
        non-scalar plain array).

    Warns
    -----
    OutsideValidityWarning
        When finite inputs leave the equation's validity box (naming the variable, the
        range seen and the valid range). Dask (lazy) inputs are not checked, to keep them
        lazy; use :func:`validity_mask` on them instead.

    Notes
    -----
    Each equation's citation, form and validity box are in its own function
    (:func:`chen_millero1977`, :func:`mackenzie1981`, ...) and in :data:`EQUATIONS`.
    Equations on IPTS-68 convert ``T68 = 1.00024 T90`` inside; depth/pressure
    conversions use UNESCO 1983 (Fofonoff & Millard 1983), i.e. the standard ocean.
    """
    eq = _lookup(equation)
    kind, vertical = _vertical(pressure, depth)
    _check_latitude_needed(eq, kind, latitude, longitude)
    named = [("temperature", temperature), ("salinity", salinity), (kind, vertical)]
    named += [
        (n, v) for n, v in (("latitude", latitude), ("longitude", longitude)) if v is not None
    ]
    check = not any(is_lazy(v) for _, v in named)  # lazy inputs are not range-checked
    func = functools.partial(_block, eq, kind, tuple(n for n, _ in named), check)
    out = pointwise(
        func, named, name="sound_speed", attrs=output_attrs("sound_speed", eq.name, eq.reference)
    )
    return out[()] if isinstance(out, np.ndarray) and out.ndim == 0 else out


def validity_mask(
    temperature, salinity, pressure=None, *, depth=None, latitude=None, equation="chen_millero1977"
):
    """True where the inputs lie inside an equation's validity box (edges included).

    Parameters
    ----------
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    salinity : array_like, dask array or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like, optional
        Sea pressure, dbar. Give exactly one of ``pressure`` and ``depth``.
    depth : array_like, optional
        Depth, m, positive down.
    latitude : float or array_like, optional
        Latitude, degrees north; needed only to convert pressure <-> depth (UNESCO 1983).
    equation : str
        A key of :data:`EQUATIONS`.

    Returns
    -------
    numpy.ndarray of bool (or dask array / xarray.DataArray)
        False where any input is NaN or outside the box of ``EQUATIONS[equation]``.

    Notes
    -----
    The box is the rectangle in (temperature, salinity, pressure-or-depth) listed in
    :attr:`Equation.validity`; for ``teos10`` that rectangle is wider than the TEOS-10
    "oceanographic funnel" (see ``gsw.infunnel``).
    """
    eq = _lookup(equation)
    kind, vertical = _vertical(pressure, depth)
    if kind != eq.needs:
        _require_latitude(latitude, f"convert {kind} to {eq.needs} for equation {eq.name!r}")
    named = [("temperature", temperature), ("salinity", salinity), (kind, vertical)]
    if latitude is not None:
        named.append(("latitude", latitude))
    func = functools.partial(_mask_block, eq, kind, tuple(n for n, _ in named))
    attrs = output_attrs(
        {"long_name": f"inside the validity box of equation {eq.name}", "units": "1"},
        eq.name,
        eq.reference,
    )
    return pointwise(func, named, name="valid", attrs=attrs, dtype=np.bool_)


# --- helpers -------------------------------------------------------------------------------


def _lookup(equation):
    if isinstance(equation, Equation):
        return equation
    try:
        return EQUATIONS[equation]
    except (KeyError, TypeError):
        raise SeaprofileError(
            f"equation {equation!r} is unknown; choose one of {', '.join(EQUATIONS)}"
        ) from None


def _vertical(pressure, depth):
    if (pressure is None) == (depth is None):
        raise SeaprofileError(
            "give exactly one of pressure (dbar) and depth (m), "
            + ("not both" if pressure is not None else "got neither")
        )
    return ("pressure", pressure) if pressure is not None else ("depth", depth)


def _require_latitude(latitude, why):
    if latitude is None:
        raise SeaprofileError(f"latitude (degrees north) is required to {why}")


def _check_latitude_needed(eq, kind, latitude, longitude):
    """Presence rules; the values are checked by the dispatcher (``check_position``)."""
    if kind != eq.needs:
        _require_latitude(latitude, f"convert {kind} to {eq.needs} for equation {eq.name!r}")
    elif eq.needs_latitude:
        _require_latitude(latitude, f"evaluate equation {eq.name!r}")
    if longitude is not None and latitude is None:
        raise SeaprofileError(
            "longitude is given without latitude; give both (degrees north / east) or neither"
        )


def _convert(v, kind, needs, latitude):
    """Vertical coordinate ``v`` given as ``kind`` expressed as ``needs`` (UNESCO 1983)."""
    if kind == needs:
        return v
    from .depth import depth_from_pressure, pressure_from_depth

    convert = depth_from_pressure if needs == "depth" else pressure_from_depth
    return convert(v, latitude, method="unesco1983")


def _value_range(a):
    """(min, max) ignoring NaN, (inf, -inf) when all NaN; one compiled pass."""
    a = np.asarray(a)
    if a.size == 1:
        x = float(a.reshape(-1)[0])
        return (np.inf, -np.inf) if np.isnan(x) else (x, x)
    return value_range(np.ravel(a, order="K"), False)[:2]


def _check_box(eq, kind, t, s, v, stacklevel):
    vname = eq.needs if kind == eq.needs else f"{eq.needs} (from {kind})"
    for name, values, (lo, hi), unit in (
        ("temperature", t, eq.temperature_range, "degC"),
        ("salinity", s, eq.salinity_range, ""),
        (vname, v, eq.vertical_range, eq.vertical_units),
    ):
        seen_lo, seen_hi = _value_range(values)
        if seen_lo <= seen_hi and (seen_lo < lo or seen_hi > hi):
            # one compiled pass found the range; warn_outside words the message
            warn_outside(
                name,
                np.array([seen_lo, seen_hi]),
                lo,
                hi,
                unit=unit,
                context=f"equation {eq.name!r}",
                stacklevel=stacklevel,
            )


def _evaluate(eq, kind, arrays, *, check, stacklevel=5):
    """Numpy core: convert the vertical coordinate, check the box, run the kernel."""
    t = np.asarray(arrays["temperature"], dtype=np.float64)
    s = np.asarray(arrays["salinity"], dtype=np.float64)
    lat = arrays.get("latitude")
    lat = None if lat is None else np.asarray(lat, dtype=np.float64)
    v = _convert(np.asarray(arrays[kind], dtype=np.float64), kind, eq.needs, lat)
    if check:
        _check_box(eq, kind, t, s, v, stacklevel)
    extra = {}
    if eq.needs_latitude:
        extra["latitude"] = lat
    elif eq.uses_position and lat is not None and arrays.get("longitude") is not None:
        extra = {"latitude": lat, "longitude": np.asarray(arrays["longitude"], dtype=np.float64)}
    loop = _LOOPS.get(eq.function)
    if loop is not None:  # the dispatcher has checked the inputs: straight to the loop
        return np.asarray(run_loop(loop, (t, s, v, *extra.values())), dtype=np.float64)
    return np.asarray(eq.function(t, s, v, **extra), dtype=np.float64)


_LOOPS = _k._loops()


def _block(eq, kind, names, check, *blocks):
    """Numpy function the dispatcher calls: sound speed shaped like the broadcast inputs."""
    out = _evaluate(eq, kind, dict(zip(names, blocks)), check=check, stacklevel=7)
    shape = np.broadcast_shapes(*(np.shape(b) for b in blocks))
    # e.g. a latitude array the equation itself does not use
    return out if out.shape == shape else np.broadcast_to(out, shape).copy()


def _mask_block(eq, kind, names, *blocks):
    arrays = dict(zip(names, blocks))
    v = _convert(arrays[kind], kind, eq.needs, arrays.get("latitude"))
    mask = _box.in_box(
        arrays["temperature"],
        arrays["salinity"],
        v,
        (*eq.temperature_range, *eq.salinity_range, *eq.vertical_range),
    )
    shape = np.broadcast_shapes(*(np.shape(b) for b in blocks))
    return mask if np.shape(mask) == shape else np.broadcast_to(mask, shape).copy()
