"""Thin wrappers over gsw (TEOS-10): salinity from conductivity, density, N^2.

These call the gsw library, they do not re-implement it. They take seaprofile's units and
argument order ``(temperature, salinity, pressure, latitude, longitude)`` -- in-situ
temperature ITS-90 degC, practical salinity, sea pressure dbar, degrees north / east -- and
accept numpy, dask or xarray inputs (xarray results carry CF attributes).

An unknown position (``None``, or all NaN as in a Cast without a fix) means: use Reference
Salinity (``gsw.SR_from_SP``) in place of Absolute Salinity, which differs from it by at
most about 0.03 g/kg in the open ocean (a density change of about 0.02 kg/m^3).
"""

from __future__ import annotations

import gsw
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import SeaprofileError, as_float_array, is_lazy
from ._apply import apply_pointwise

__all__ = [
    "salinity_from_conductivity",
    "absolute_salinity",
    "density",
    "potential_density_anomaly",
    "buoyancy_frequency_squared",
]

_ATTRS = {
    "absolute_salinity": {
        "standard_name": "sea_water_absolute_salinity",
        "long_name": "absolute salinity (TEOS-10)",
        "units": "g kg-1",
    },
    "reference_salinity": {
        "standard_name": "sea_water_reference_salinity",
        "long_name": "reference salinity (TEOS-10; used when the position is unknown)",
        "units": "g kg-1",
    },
    "potential_density_anomaly": {
        "standard_name": "sea_water_sigma_theta",
        "long_name": "potential density anomaly referenced to 0 dbar (sigma0, TEOS-10)",
        "units": "kg m-3",
    },
    "buoyancy_frequency_squared": {
        "standard_name": "square_of_brunt_vaisala_frequency_in_sea_water",
        "long_name": "buoyancy frequency squared at pressure mid-points (TEOS-10)",
        "units": "s-2",
    },
}


def _known(name, value):
    """None for a missing or all-NaN (unknown) position component, else the value."""
    if value is None or is_lazy(value):
        return value
    arr = as_float_array(name, getattr(value, "values", value))
    if arr.size and np.isnan(arr).all():
        return None
    limit = 90.0 if name == "latitude" else 360.0
    with np.errstate(invalid="ignore"):
        bad = (np.abs(arr) > limit) if name == "latitude" else ((arr < -180.0) | (arr > limit))
    if bad.any():
        valid = "-90..90" if name == "latitude" else "-180..360"
        raise SeaprofileError(f"{name} must lie within {valid} degrees")
    return value


def _position(latitude, longitude):
    lat, lon = _known("latitude", latitude), _known("longitude", longitude)
    if (lat is None) != (lon is None):
        missing = "longitude" if lon is None else "latitude"
        raise SeaprofileError(
            f"{missing} is required when the other coordinate is given "
            "(or give neither to use reference salinity)"
        )
    return lat, lon


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
    """Point-wise call with the position appended only when it is known."""
    args = list(named)
    if lat is not None:
        args += [("latitude", lat), ("longitude", lon)]
    out = apply_pointwise(lambda *a: np.asarray(func(*a), dtype=np.float64), args, attrs, out_name)
    return out


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
        _cf.attrs_for("salinity"),
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
        Degrees north / east. Both or neither; None or all-NaN means unknown.

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
        dict(_ATTRS[name]),
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
        _cf.attrs_for("density"),
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
        dict(_ATTRS["potential_density_anomaly"]),
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

    def _n2(t, sp, p, *pos):
        sa = _sa(sp, p, *(pos or (None, None)))
        ct = gsw.CT_from_t(sa, t, p)
        n2, pm = gsw.Nsquared(sa, ct, p, lat=pos[0] if pos else None, axis=-1)
        return np.asarray(n2, dtype=np.float64), np.asarray(pm, dtype=np.float64)

    arrays = [temperature, salinity, pressure]
    if any(isinstance(a, xr.DataArray) for a in arrays):
        if dim is None:
            ref = pressure if isinstance(pressure, xr.DataArray) else temperature
            if ref.ndim != 1:
                raise SeaprofileError("dim is required for xarray inputs with several dims")
            dim = ref.dims[0]
        mid = f"{dim}_mid"
        pos = [] if lat is None else [lat, lon]
        n = next(a.sizes[dim] for a in arrays if isinstance(a, xr.DataArray))
        n2, pm = xr.apply_ufunc(
            _n2,
            *arrays,
            *pos,
            input_core_dims=[[dim]] * 3 + [[]] * len(pos),
            output_core_dims=[[mid], [mid]],
            exclude_dims={dim},
            dask="parallelized",
            output_dtypes=[np.float64, np.float64],
            dask_gufunc_kwargs={"output_sizes": {mid: max(n - 1, 0)}},
        )
        n2.attrs = dict(_ATTRS["buoyancy_frequency_squared"])
        n2.name = "buoyancy_frequency_squared"
        pm.attrs = _cf.attrs_for(
            "pressure", long_name="sea pressure at the mid-point between adjacent samples"
        )
        return n2.assign_coords(pressure_mid=pm)

    t, sp, p = np.broadcast_arrays(
        as_float_array("temperature", temperature),
        as_float_array("salinity", salinity),
        as_float_array("pressure", pressure),
    )
    t, sp, p = (np.moveaxis(a, axis, -1) for a in (t, sp, p))
    pos = [] if lat is None else [as_float_array("latitude", lat), as_float_array("longitude", lon)]
    n2, pm = _n2(t, sp, p, *pos)
    return np.moveaxis(n2, -1, axis), np.moveaxis(pm, -1, axis)
