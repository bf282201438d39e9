"""Thin wrappers over gsw (TEOS-10): salinity from conductivity, density, N^2.

These call the gsw library, they do not re-implement it. They take seaprofile's units and
argument order ``(temperature, salinity, pressure, latitude, longitude)`` -- in-situ
temperature ITS-90 degC, practical salinity, sea pressure dbar, degrees north / east -- and
accept numpy, dask or xarray inputs (xarray results carry CF attributes).

No position (``latitude=None, longitude=None``) means: use Reference Salinity
(``gsw.SR_from_SP``) in place of Absolute Salinity, which differs from it by at most about
0.03 g/kg in the open ocean (a density change of about 0.02 kg/m^3). A position that is
given must be known: NaN, infinite or out-of-range coordinates raise
:class:`SeaprofileError` (a Cast without a fix passes ``None``), as everywhere in
seaprofile. Inputs go through the one dispatcher of :mod:`._apply`.
"""

from __future__ import annotations

import gsw
import numpy as np

from .. import _cf
from .._validate import SeaprofileError, as_float_array, is_lazy
from ._apply import columnwise, output_attrs, pointwise

__all__ = [
    "salinity_from_conductivity",
    "absolute_salinity",
    "density",
    "potential_density_anomaly",
    "buoyancy_frequency_squared",
]

_ATTRS = {
    k: _cf.attrs_for(k)
    for k in (
        "absolute_salinity",
        "reference_salinity",
        "potential_density_anomaly",
        "buoyancy_frequency_squared",
    )
}


_REFERENCE = "IOC, SCOR & IAPSO (2010), TEOS-10 manual; gsw (McDougall & Barker 2011)"


def _position(latitude, longitude):
    """Both or neither; the values are checked by the dispatcher (``check_position``)."""
    if (latitude is None) != (longitude is None):
        missing = "longitude" if longitude is None else "latitude"
        raise SeaprofileError(
            f"{missing} is required when the other coordinate is given "
            "(or give neither to use reference salinity)"
        )
    return latitude, longitude


# --- numpy layer (plain float arrays) -------------------------------------------------


def _sa(sp, p, lat=None, lon=None):
    if lat is None:
        return gsw.SR_from_SP(sp)
    return gsw.SA_from_SP(sp, p, lon, lat)


def _rho(t, sp, p, lat=None, lon=None):
    sa = _sa(sp, p, lat, lon)
    return gsw.rho(sa, gsw.CT_from_t(sa, t, p), p)


def _sigma0(t, sp, p, lat=None, lon=None):
    sa = _sa(sp, p, lat, lon)
    return gsw.sigma0(sa, gsw.CT_from_t(sa, t, p))


def _call(func, named, lat, lon, attrs, out_name):
    """Point-wise call with the position appended only when it is given."""
    args = list(named)
    if lat is not None:
        args += [("latitude", lat), ("longitude", lon)]
    return pointwise(
        lambda *a: np.asarray(func(*a), dtype=np.float64), args, name=out_name, attrs=attrs
    )


# --- public functions -----------------------------------------------------------------


def salinity_from_conductivity(conductivity, temperature, pressure):
    """Practical salinity (PSS-78) from conductivity, via ``gsw.SP_from_C``.

    Parameters
    ----------
    conductivity : array_like, dask array or xarray.DataArray
        Electrical conductivity, mS/cm.
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    pressure : array_like, dask array or xarray.DataArray
        Sea pressure, dbar.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Practical salinity, dimensionless.

    Notes
    -----
    Practical Salinity Scale 1978: E.L. Lewis & R.G. Perkin, Deep-Sea Res. 28A, 307-328
    (1981); algorithm in Fofonoff & Millard, Unesco Tech. Pap. Mar. Sci. 44 (1983); gsw
    adds the Hill et al. (1986) extension below S = 2. Valid 2..42 (PSS-78),
    -2..35 degC, 0..10000 dbar. Conductivity ratio R = C / 42.914 mS/cm.
    """
    return _call(
        gsw.SP_from_C,
        [("conductivity", conductivity), ("temperature", temperature), ("pressure", pressure)],
        None,
        None,
        output_attrs("salinity", "gsw.SP_from_C (PSS-78)", _REFERENCE),
        "salinity",
    )


def absolute_salinity(salinity, pressure, latitude=None, longitude=None):
    """Absolute Salinity (TEOS-10), or Reference Salinity without a position.

    Parameters
    ----------
    salinity : array_like, dask array or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like, dask array or xarray.DataArray
        Sea pressure, dbar.
    latitude, longitude : float, array_like or xarray.DataArray, optional
        Degrees north / east, finite (-90..90 / -180..360). Both or neither; neither
        means reference salinity.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Absolute (``gsw.SA_from_SP``) or Reference (``gsw.SR_from_SP``) Salinity, g/kg.

    Notes
    -----
    IOC, SCOR & IAPSO (2010), TEOS-10 manual, section 2.5; McDougall et al. (2012), Ocean
    Sci. 8, 1123-1134 (the Absolute Salinity anomaly atlas inside gsw).
    """
    lat, lon = _position(latitude, longitude)
    name = "absolute_salinity" if lat is not None else "reference_salinity"
    return _call(
        _sa,
        [("salinity", salinity), ("pressure", pressure)],
        lat,
        lon,
        output_attrs(_ATTRS[name], f"gsw.{'SA' if lat is not None else 'SR'}_from_SP", _REFERENCE),
        name,
    )


def density(temperature, salinity, pressure, latitude=None, longitude=None):
    """In-situ density of sea water (TEOS-10), kg/m^3.

    Parameters
    ----------
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    salinity : array_like, dask array or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like, dask array or xarray.DataArray
        Sea pressure, dbar.
    latitude, longitude : float, array_like or xarray.DataArray, optional
        Degrees north / east; see :func:`absolute_salinity`.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        In-situ density, kg/m^3.

    Notes
    -----
    ``gsw.rho(SA, CT, p)`` with ``CT = gsw.CT_from_t(SA, t, p)``; TEOS-10 manual (2010),
    75-term expression of Roquet et al., Ocean Modell. 90, 29-43 (2015).
    """
    lat, lon = _position(latitude, longitude)
    return _call(
        _rho,
        [("temperature", temperature), ("salinity", salinity), ("pressure", pressure)],
        lat,
        lon,
        output_attrs("density", "gsw.rho (TEOS-10)", _REFERENCE),
        "density",
    )


def potential_density_anomaly(temperature, salinity, pressure, latitude=None, longitude=None):
    """Potential density anomaly referenced to the surface, sigma0 (TEOS-10), kg/m^3.

    Parameters
    ----------
    temperature : array_like, dask array or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    salinity : array_like, dask array or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like, dask array or xarray.DataArray
        Sea pressure, dbar.
    latitude, longitude : float, array_like or xarray.DataArray, optional
        Degrees north / east; see :func:`absolute_salinity`.

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Potential density at 0 dbar minus 1000 kg/m^3.

    Notes
    -----
    ``gsw.sigma0(SA, CT)``; TEOS-10 manual (2010), section 3.6. Used for mixed-layer depth
    (de Boyer Montegut et al. 2004, delta sigma = 0.03 kg/m^3) and density-inversion checks.
    """
    lat, lon = _position(latitude, longitude)
    return _call(
        _sigma0,
        [("temperature", temperature), ("salinity", salinity), ("pressure", pressure)],
        lat,
        lon,
        output_attrs(_ATTRS["potential_density_anomaly"], "gsw.sigma0 (TEOS-10)", _REFERENCE),
        "potential_density_anomaly",
    )


def buoyancy_frequency_squared(
    temperature, salinity, pressure, latitude=None, longitude=None, *, axis=-1, dim=None
):
    """Buoyancy (Brunt-Vaisala) frequency squared N^2 between adjacent samples, s^-2.

    Parameters
    ----------
    temperature : array_like or xarray.DataArray
        In-situ temperature, degC (ITS-90).
    salinity : array_like or xarray.DataArray
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like or xarray.DataArray
        Sea pressure, dbar, increasing along ``axis`` / ``dim``.
    latitude, longitude : float, optional
        Degrees north / east. Latitude also sets gravity; without it gsw uses
        g = 9.7963 m/s^2.
    axis : int
        Numpy inputs: the axis along which pressure increases (default the last).
    dim : str, optional
        xarray inputs: the dimension along which pressure increases (default: the only
        dimension of ``pressure``).

    Returns
    -------
    (n2, pressure_mid) : tuple of numpy.ndarray
        For numpy inputs: N^2 (s^-2, radian frequency squared) and the mid-point pressures
        (dbar) where it lives; both one shorter than the inputs along ``axis``.
    xarray.DataArray
        For xarray inputs: N^2 along a new dimension ``<dim>_mid`` with coordinate
        ``pressure_mid`` (dbar). Works on dask-backed arrays when ``dim`` is one chunk.

    Notes
    -----
    ``gsw.Nsquared(SA, CT, p, lat)``: N^2 = g^2 rho (beta dSA - alpha dCT) / dP, evaluated
    at the mid-point between each pair of samples (TEOS-10 manual, 2010, section 3.10).
    Negative values mark static instability.
    """
    lat, lon = _position(latitude, longitude)
    columns = [("temperature", temperature), ("salinity", salinity), ("pressure", pressure)]
    params = [] if lat is None else [("latitude", lat), ("longitude", lon)]
    plain = not any(_is_xarray(v) for _, v in columns)
    if plain:
        columns = [(n, _last(n, v, axis)) for n, v in columns]
    elif dim is None:
        ref = pressure if _is_xarray(pressure) else temperature
        if not _is_xarray(ref) or ref.ndim != 1:
            raise SeaprofileError("dim is required for xarray inputs with several dims")
        dim = ref.dims[0]
    dim = dim or "depth"
    n = next(
        (np.shape(v)[-1] if plain else v.sizes[dim]) for _, v in columns if plain or _is_xarray(v)
    )
    mid = f"{dim}_mid"
    pm_attrs = output_attrs(
        "pressure",
        "gsw.Nsquared (TEOS-10)",
        _REFERENCE,
        long_name="sea pressure at the mid-point between adjacent samples",
    )
    outs = [
        (
            "buoyancy_frequency_squared",
            output_attrs(
                _ATTRS["buoyancy_frequency_squared"], "gsw.Nsquared (TEOS-10)", _REFERENCE
            ),
        ),
        ("pressure_mid", pm_attrs),
    ]
    n2, pm = columnwise(
        _n2, columns, dim=dim, params=params, outputs=outs, new_dim=(mid, max(n - 1, 0))
    )
    if plain:
        return _moveaxis(n2, -1, axis), _moveaxis(pm, -1, axis)
    return n2.assign_coords(pressure_mid=pm)


def _n2(t, sp, p, *pos):
    """N^2 and mid-point pressures along the last axis (numpy)."""
    t, sp, p = np.broadcast_arrays(t, sp, p)
    # a per-profile position applies to every sample of its profile
    pos = tuple(x[..., None] if np.ndim(x) else x for x in pos)
    sa = _sa(sp, p, *(pos or (None, None)))
    ct = gsw.CT_from_t(sa, t, p)
    n2, pm = gsw.Nsquared(sa, ct, p, lat=pos[0] if pos else None, axis=-1)
    return np.asarray(n2, dtype=np.float64), np.asarray(pm, dtype=np.float64)


def _moveaxis(a, source, destination):
    if is_lazy(a):
        import dask.array as da

        return da.moveaxis(a, source, destination)
    return np.moveaxis(a, source, destination)


def _last(name, v, axis):
    """A plain input with its vertical ``axis`` moved last (validated when not lazy)."""
    if not is_lazy(v):
        v = as_float_array(name, v)
    return _moveaxis(v, axis, -1) if np.ndim(v) else v


def _is_xarray(x):
    return type(x).__module__.split(".")[0] == "xarray"
