"""Sound speed and layer maps on gridded temperature/salinity fields (lazy, dask-ready).

A gridded field is an ``xarray.Dataset`` with temperature and salinity on
``(time?, depth or pressure, latitude, longitude)`` (any order), as ocean model output
and climatologies come. The variables are found by their CF ``standard_name``
(``sea_water_temperature``, in situ: potential temperature is not taken for it;
``sea_water_practical_salinity``, vertical ``depth`` /
``sea_water_pressure`` or ``axis: Z``, ``latitude``, ``longitude``); ``names=`` maps a
role (``"temperature"``, ``"salinity"``, ``"vertical"``, ``"latitude"``, ``"longitude"``)
to a variable name for files that lack them.

- :func:`sound_speed_field`: sound speed on the same grid;
- :func:`layer_maps`: 2-D maps of surface sound speed, mixed layer depth, sonic layer
  depth, duct cut-off frequency, channel axis depth and speed, critical depth and depth
  excess;
- :func:`open_field` / :func:`write_field`: netCDF (zarr when installed);
- :func:`synthetic_field`: an invented field for tests and demos.

Everything stays lazy on dask data: the numeric work goes through the public functions
of :mod:`seaprofile.seawater` and :mod:`seaprofile.layers`, i.e. through the one
dispatcher :mod:`seaprofile.seawater._apply` (``xr.apply_ufunc(..., dask="parallelized")``);
nothing here reads ``.values`` of dask data. Column diagnostics need the vertical
dimension in one chunk: :func:`layer_maps` refuses a split vertical with a message naming
the dimension and the rechunk (``ds.chunk({dim: -1})``); :func:`open_field` opens files
with the vertical already in one chunk.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
import xarray as xr

from . import _cf
from ._progress import dask_progress
from ._validate import SeaprofileError
from ._version import __version__
from .io.write import register_product, write, write_product_netcdf
from .layers import (
    critical_depth,
    depth_excess,
    duct_cutoff_frequency,
    mixed_layer_depth,
    sonic_layer_depth,
    sound_channels,
)
from .seawater.depth import depth_from_pressure
from .seawater.soundspeed import sound_speed

__all__ = ["sound_speed_field", "layer_maps", "open_field", "write_field", "synthetic_field"]

ROLES = ("temperature", "salinity", "vertical", "latitude", "longitude")
_STANDARD_NAMES = {
    "temperature": ("sea_water_temperature",),
    "salinity": ("sea_water_practical_salinity", "sea_water_salinity"),
    "vertical": ("depth", "sea_water_pressure"),
    "latitude": ("latitude",),
    "longitude": ("longitude",),
}
_PLAIN_NAMES = {"latitude": ("latitude", "lat"), "longitude": ("longitude", "lon")}


# --- finding the variables -----------------------------------------------------------------


def _check_names(names):
    if names is None:
        return {}
    if not isinstance(names, dict):
        raise SeaprofileError(f"names must be a dict of role -> variable name, got {names!r}")
    unknown = [k for k in names if k not in ROLES]
    if unknown:
        raise SeaprofileError(f"names: unknown role(s) {unknown}; roles are {', '.join(ROLES)}")
    return names


def _find(ds, role, names, required=True):
    """The variable of ``ds`` playing ``role`` (by ``names``, standard_name, axis, name)."""
    if role in names:
        if names[role] not in ds.variables:
            raise SeaprofileError(
                f"names[{role!r}]: no variable {names[role]!r} in the dataset "
                f"(it has {', '.join(map(str, ds.variables))})"
            )
        return ds[names[role]]
    hits = [
        k for k, v in ds.variables.items() if v.attrs.get("standard_name") in _STANDARD_NAMES[role]
    ]
    if not hits and role == "vertical":
        hits = [k for k, v in ds.variables.items() if v.attrs.get("axis") == "Z"]
    if not hits:
        hits = [k for k in _PLAIN_NAMES.get(role, ()) if k in ds.variables]
    if len(hits) == 1:
        return ds[hits[0]]
    if not required and not hits:
        return None
    why = "several variables" if hits else "no variable"
    raise SeaprofileError(
        f"ds: {why} found for {role} (standard_name {' or '.join(_STANDARD_NAMES[role])}"
        f"{'' if not hits else ': ' + ', '.join(map(str, hits))}); pass names={{{role!r}: "
        "'variable name'}"
    )


def _vertical_kind(vertical):
    """``"pressure"`` or ``"depth"`` for the vertical coordinate."""
    sn = vertical.attrs.get("standard_name")
    if sn == "sea_water_pressure":
        return "pressure"
    if sn == "depth":
        return "depth"
    units = str(vertical.attrs.get("units", "")).strip().lower()
    if units in ("dbar", "decibar"):
        return "pressure"
    if units in ("m", "meter", "metre", "meters", "metres"):
        return "depth"
    raise SeaprofileError(
        f"ds: the vertical coordinate {vertical.name!r} is neither depth (units m) nor sea "
        "pressure (units dbar); set its standard_name to depth or sea_water_pressure"
    )


def _roles(ds, names):
    if not isinstance(ds, xr.Dataset):
        raise SeaprofileError(f"ds must be an xarray.Dataset, got {type(ds).__name__}")
    names = _check_names(names)
    found = {r: _find(ds, r, names, required=r not in ("temperature", "longitude")) for r in ROLES}
    vertical = found["vertical"]
    if vertical.ndim != 1 or vertical.dims[0] != vertical.name:
        raise SeaprofileError(
            f"ds: the vertical coordinate {vertical.name!r} must be a 1-D dimension "
            "coordinate (one depth or pressure per level)"
        )
    return found


def _provenance(attrs, step, **parameters):
    out = _cf.base_attrs(**{k: v for k, v in attrs.items() if k not in ("product",)})
    out["seaprofile_version"] = __version__
    out["history"] = (
        str(attrs.get("history", "")) + f"\n{_cf._now()} seaprofile {__version__}: {step}"
    ).strip()
    return _cf.record_step(out, step, **parameters)


# --- sound speed ----------------------------------------------------------------------------


def sound_speed_field(ds, *, equation="chen_millero1977", names=None):
    """Sound speed on the grid of a gridded temperature/salinity field, lazily.

    Parameters
    ----------
    ds : xarray.Dataset
        In-situ temperature (degC, ITS-90) and practical salinity on ``(time?, depth or
        pressure, latitude, longitude)``, numpy- or dask-backed. Depth in m positive
        down, or sea pressure in dbar; latitude, longitude in degrees.
    equation : str
        A key of :data:`seaprofile.seawater.soundspeed.EQUATIONS`.
    names : dict, optional
        Role -> variable name (``temperature``, ``salinity``, ``vertical``,
        ``latitude``, ``longitude``) for files without CF standard names.

    Returns
    -------
    xarray.Dataset
        ``sound_speed`` (m/s) on the input grid with the input's coordinates, CF
        attributes and provenance (``equation``, ``references``, ``seaprofile_version``,
        ``processing_steps``); dask-backed (nothing computed) when the input is.

    Notes
    -----
    The equation and its citation are those of
    :func:`seaprofile.seawater.soundspeed.sound_speed`; depth <-> pressure conversion,
    when the equation needs it, uses UNESCO 1983 (Fofonoff & Millard 1983) with the
    grid's latitude coordinate broadcast over the grid.
    """
    if isinstance(ds, xr.DataArray):
        raise SeaprofileError("ds must be an xarray.Dataset of temperature and salinity")
    found = _roles(ds, names)
    if found["temperature"] is None:
        raise SeaprofileError(
            "ds: no variable found for temperature (standard_name sea_water_temperature); "
            "pass names={'temperature': 'variable name'}"
        )
    vertical = found["vertical"]
    kind = _vertical_kind(vertical)
    position = {"latitude": found["latitude"]}
    if found["longitude"] is not None:
        position["longitude"] = found["longitude"]
    c = sound_speed(
        found["temperature"],
        found["salinity"],
        **{kind: vertical},
        **position,
        equation=equation,
    )
    c = c.transpose(*found["temperature"].dims)
    out = xr.Dataset({"sound_speed": c}, coords=found["temperature"].coords)
    out.attrs = _provenance(ds.attrs, "sound_speed_field", equation=equation)
    out.attrs["product"] = "sound_speed_field"
    return out


# --- layer maps -------------------------------------------------------------------------------


def _depth_grid(c, vertical, latitude):
    """Depth (m) of each sample of ``c``: the vertical itself, or from pressure (UNESCO 1983)."""
    if _vertical_kind(vertical) == "depth":
        return vertical
    z = depth_from_pressure(vertical, latitude)
    z = z.broadcast_like(c).transpose(*c.dims)
    return z.chunk(c.chunksizes) if c.chunks is not None else z


def _check_one_chunk(c, dim):
    if c.chunks is not None and len(c.chunksizes.get(dim, ())) > 1:
        raise SeaprofileError(
            f"ds: the vertical dimension {dim!r} is split into {len(c.chunksizes[dim])} dask "
            f"chunks; column diagnostics need it whole: ds.chunk({{{dim!r}: -1}}) (or open "
            "the file with seaprofile.gridded.open_field)"
        )


def layer_maps(ds_or_sound_speed, *, bathymetry=None, names=None, equation="chen_millero1977"):
    """2-D maps of the layer diagnostics of every water column of a gridded field.

    Parameters
    ----------
    ds_or_sound_speed : xarray.Dataset or xarray.DataArray
        A temperature/salinity field (as for :func:`sound_speed_field`; sound speed is
        computed first), the output of :func:`sound_speed_field`, or a sound speed
        DataArray (m/s) with a vertical depth (m) or pressure (dbar) coordinate. The
        vertical dimension must be one dask chunk.
    bathymetry : xarray.DataArray, optional
        Sea floor depth, m positive down, on the horizontal grid (aligned exactly).
    names : dict, optional
        Role -> variable name, as for :func:`sound_speed_field`.
    equation : str
        Sound speed equation when sound speed is computed here.

    Returns
    -------
    xarray.Dataset
        On the horizontal (and time) grid: ``surface_sound_speed`` (m/s, the shallowest
        level), ``mixed_layer_depth`` (m, temperature criterion; only when temperature
        is given), ``sonic_layer_depth`` (m), ``duct_cutoff_frequency`` (Hz),
        ``channel_axis_depth`` (m), ``channel_axis_speed`` (m/s), ``critical_depth`` (m,
        where the speed below the axis regains the sonic layer maximum) and, with
        ``bathymetry``, ``depth_excess`` (m). CF attributes and provenance; lazy on dask.

    Raises
    ------
    SeaprofileError
        Variables not found (the message names the role and ``names=``); a vertical
        dimension split into several dask chunks (the message names the dimension and
        the rechunk ``ds.chunk({dim: -1})``); bathymetry not aligned with the grid.

    Notes
    -----
    The methods and citations are those of :func:`seaprofile.layers.mixed_layer_depth`
    (de Boyer Montégut et al. 2004), :func:`~seaprofile.layers.sonic_layer_depth`,
    :func:`~seaprofile.layers.duct_cutoff_frequency`,
    :func:`~seaprofile.layers.sound_channels`, :func:`~seaprofile.layers.critical_depth`
    and :func:`~seaprofile.layers.depth_excess`; each column gives bit for bit the numbers
    of the point functions on that column.
    """
    obj = ds_or_sound_speed
    temperature = None
    if isinstance(obj, xr.DataArray):
        src = obj.to_dataset(name="sound_speed")
        src["sound_speed"].attrs.setdefault("standard_name", "speed_of_sound_in_sea_water")
        obj = src
    elif not isinstance(obj, xr.Dataset):
        raise SeaprofileError(
            f"ds_or_sound_speed must be an xarray Dataset or DataArray, got {type(obj).__name__}"
        )
    names = _check_names(names)
    if "sound_speed" in obj.data_vars:
        c = obj["sound_speed"]
        found = {r: _find(obj, r, names, required=r in ("vertical", "latitude")) for r in ROLES}
        temperature = found["temperature"]
    else:
        found = _roles(obj, names)
        temperature = found["temperature"]
        c = sound_speed_field(obj, equation=equation, names=names)["sound_speed"]
    vertical = found["vertical"]
    dim = vertical.name
    _check_one_chunk(c, dim)
    if temperature is not None:
        _check_one_chunk(temperature, dim)
    depth = _depth_grid(c, vertical, found["latitude"])

    maps = {"surface_sound_speed": c.isel({dim: 0}, drop=True)}
    maps["surface_sound_speed"].attrs = _cf.attrs_for(
        "sound_speed", long_name="sound speed at the shallowest level"
    )
    if temperature is not None:
        maps["mixed_layer_depth"] = mixed_layer_depth(temperature, depth, dim=dim)
    sld, sld_speed = sonic_layer_depth(c, depth, dim=dim)
    maps["sonic_layer_depth"] = sld
    maps["duct_cutoff_frequency"] = duct_cutoff_frequency(sld, sld_speed)
    channels = sound_channels(c, depth, below=sld, dim=dim)
    maps["channel_axis_depth"] = channels["axis_depth"]
    maps["channel_axis_speed"] = channels["axis_speed"]
    maps["critical_depth"] = critical_depth(c, depth, sld_speed, channels["axis_depth"], dim=dim)
    if bathymetry is not None:
        if not isinstance(bathymetry, xr.DataArray):
            raise SeaprofileError("bathymetry must be an xarray.DataArray on the horizontal grid")
        maps["depth_excess"] = depth_excess(bathymetry, maps["critical_depth"])
    order = [d for d in c.dims if d != dim]
    out = xr.Dataset(
        {k: v.transpose(*[d for d in order if d in v.dims], ...) for k, v in maps.items()}
    )
    out.attrs = _provenance(obj.attrs, "layer_maps", vertical=dim)
    out.attrs["product"] = "layer_maps"
    return out


# --- files -----------------------------------------------------------------------------------


def _is_zarr(path):
    return Path(path).suffix == ".zarr"


def open_field(path, names=None, chunks=None):
    """Open a gridded field lazily, the vertical dimension in one dask chunk.

    Parameters
    ----------
    path : str or pathlib.Path
        A netCDF file, or a ``.zarr`` store (needs the ``zarr`` package).
    names : dict, optional
        Role -> variable name, as for :func:`sound_speed_field` (checked here).
    chunks : dict, optional
        Dask chunks of the other dimensions (default: the file's own chunks); the
        vertical dimension is always made one chunk.

    Returns
    -------
    xarray.Dataset
        Dask-backed; nothing is read but the metadata and coordinates.
    """
    path = Path(path)
    if not path.exists():
        raise SeaprofileError(f"path: no such file {str(path)!r}")
    chunks = {} if chunks is None else dict(chunks)
    if _is_zarr(path):
        ds = xr.open_zarr(path, chunks=chunks)
    else:
        ds = xr.open_dataset(path, chunks=chunks)
    dim = _roles(ds, names)["vertical"].name
    return ds.chunk({dim: -1})


def write_field(ds, path, *, overwrite=False, quiet=False):
    """Write a gridded field or its layer maps: netCDF or a ``.zarr`` store, atomically.

    Dask-backed data is streamed: the store is laid out first (``compute=False``), then
    the graph is computed once, chunk by chunk into the file, with the dask progress bar
    on a terminal (:func:`seaprofile._progress.dask_progress`). Nothing is held whole in
    memory and nothing is computed twice.

    Parameters
    ----------
    ds : xarray.Dataset
        A field, :func:`sound_speed_field` or :func:`layer_maps` output.
    path : str or pathlib.Path
        ``*.nc`` (netCDF-4 through :func:`seaprofile.write`) or ``*.zarr`` (needs the
        ``zarr`` package).
    overwrite : bool
        Replace an existing file.
    quiet : bool
        No progress bar.

    Returns
    -------
    pathlib.Path
    """
    if not isinstance(ds, xr.Dataset):
        raise SeaprofileError(f"ds must be an xarray.Dataset, got {type(ds).__name__}")
    if _is_zarr(path):
        return _write_zarr(ds, Path(path), overwrite, quiet)
    if "product" not in ds.attrs:
        ds = ds.assign_attrs(product="gridded_field")
    write(ds, path, format="netcdf", overwrite=overwrite)
    return Path(path)


def _write_zarr(ds, path, overwrite, quiet):
    """A zarr store written beside ``path`` under a temporary name, then renamed into place."""
    if path.exists() and not overwrite:
        raise SeaprofileError(f"path: {str(path)!r} exists (pass overwrite=True)")
    if not path.parent.is_dir():
        raise SeaprofileError(f"path: directory {str(path.parent)!r} does not exist")
    tmp = Path(tempfile.mkdtemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp"))
    try:
        pending = ds.to_zarr(tmp, mode="w", compute=False)
        with dask_progress(quiet):
            pending.compute()
        if path.exists():
            shutil.rmtree(path)
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            shutil.rmtree(tmp)
    return path


for _kind, _description in (
    ("gridded_field", "gridded temperature/salinity field"),
    ("sound_speed_field", "gridded sound speed field"),
    ("layer_maps", "maps of layer diagnostics"),
):
    register_product(
        _kind,
        description=_description,
        detect=lambda ds, k=_kind: ds.attrs.get("product") == k,
        writers={"netcdf": write_product_netcdf},
    )


# --- a synthetic field ------------------------------------------------------------------------


def synthetic_field(nlat=3, nlon=4, ndepth=40, ntime=None, *, max_depth=4000.0, chunks=None):
    """An invented temperature/salinity field for tests and demos (labelled synthetic).

    A warm mixed layer over a thermocline and a cool deep ocean, varying smoothly with
    latitude and longitude, so that the columns have a sonic layer and a channel axis.

    Parameters
    ----------
    nlat, nlon, ndepth : int
        Grid sizes.
    ntime : int, optional
        Add a ``time`` dimension of this size.
    max_depth : float
        Deepest level, m.
    chunks : dict, optional
        Dask chunks (needs dask).

    Returns
    -------
    xarray.Dataset
        ``temperature`` (degC) and ``salinity`` on ``(time?, depth, latitude,
        longitude)`` with CF attributes.
    """
    for name, n in (("nlat", nlat), ("nlon", nlon), ("ndepth", ndepth)):
        if int(n) != n or n < 1 or (name == "ndepth" and n < 3):
            raise SeaprofileError(f"{name} must be a positive integer (ndepth >= 3), got {n!r}")
    depth = np.linspace(0.0, float(max_depth), int(ndepth))
    lat = np.linspace(20.0, 40.0, int(nlat))
    lon = np.linspace(-30.0, -20.0, int(nlon))
    z = depth[:, None, None]
    mld = 30.0 + 20.0 * np.cos(np.radians(lon))[None, None, :] + (lat[None, :, None] - 20.0)
    surface = 24.0 - 0.3 * (lat[None, :, None] - 20.0)
    deep = 2.5 + 0.0 * z
    thermo = 1.0 / (1.0 + np.exp((z - mld - 300.0) / 150.0))
    temp = deep + (surface - deep) * np.where(z <= mld, 1.0, thermo * (1 + (mld + 300 - z) / 3e3))
    temp = np.minimum(temp, surface + 0.0 * z)
    sal = 34.7 + 0.8 * np.exp(-z / 400.0) + 0.0 * lat[None, :, None] + 0.0 * lon[None, None, :]
    dims = ("depth", "latitude", "longitude")
    coords = {
        "depth": ("depth", depth, _cf.attrs_for("depth", axis="Z")),
        "latitude": ("latitude", lat, {"standard_name": "latitude", "units": "degrees_north"}),
        "longitude": ("longitude", lon, {"standard_name": "longitude", "units": "degrees_east"}),
    }
    data = {
        "temperature": (dims, temp, {"standard_name": "sea_water_temperature", "units": "degC"}),
        "salinity": (dims, sal, {"standard_name": "sea_water_practical_salinity", "units": "1"}),
    }
    ds = xr.Dataset(data, coords=coords)
    if ntime is not None:
        ds = ds.expand_dims(time=np.arange(int(ntime)) * 86400.0).transpose("time", *dims)
        ds = ds + 0.01 * ds["time"] / 86400.0
        ds["time"].attrs = {"standard_name": "time", "units": "seconds since 2000-01-01"}
        for k, v in data.items():
            ds[k].attrs = v[2]
    ds.attrs = {
        "title": "synthetic gridded temperature and salinity field",
        "comment": "synthetic: invented values for tests and demos, not observations",
        "source": f"seaprofile {__version__} synthetic_field",
    }
    return ds.chunk(chunks) if chunks is not None else ds
