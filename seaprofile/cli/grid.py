"""Sound speed and layer maps of a gridded temperature/salinity field (netCDF or zarr).

Reads the field lazily (dask), computes sound speed on the grid and the 2-D maps of
:func:`seaprofile.gridded.layer_maps` (surface sound speed, mixed and sonic layer depth,
duct cut-off frequency, channel axis, critical depth, and depth excess with
--bathymetry), and writes them to one file. Work runs on local threads by default, or on
a running dask.distributed cluster (--scheduler ADDRESS, e.g. tcp://10.0.0.5:8786); nothing
is started there, and an address that does not answer within 5 s is a one-line error.

Variables are found by their CF standard names; --names maps roles (temperature,
salinity, vertical, latitude, longitude) to the variable names of files without them.
The vertical dimension must be one dask chunk for the column diagnostics: when --chunks
splits it, it is put back in one chunk automatically and a note says so on stderr.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

from .._cf import CAUTION
from .._validate import SeaprofileError

NAME = "grid"
HELP = "sound speed and layer maps of a gridded temperature/salinity field"
EXAMPLE = """example:
  seaprofile grid demo_casts/grid/synthetic_grid.nc --out grid_maps.nc --quiet
  seaprofile grid demo_casts/grid/synthetic_grid.nc --out grid_maps2.nc \\
      --chunks latitude=6,longitude=8 --plot sonic_layer.png \\
      --map-variable sonic_layer_depth"""

ROLES = ("temperature", "salinity", "vertical", "latitude", "longitude")


def add_arguments(p):
    from ..seawater.soundspeed import EQUATIONS

    p.add_argument("input", metavar="INPUT", help="gridded field: netCDF (.nc) or zarr (.zarr)")
    p.add_argument("--out", required=True, help="output file: .nc (or .zarr with zarr installed)")
    p.add_argument(
        "--equation",
        default="chen_millero1977",
        choices=sorted(EQUATIONS),
        help="sound-speed equation (default chen_millero1977)",
    )
    p.add_argument(
        "--chunks",
        help="dask chunk sizes by dimension name, e.g. latitude=90,longitude=180 "
        "(default: the file's own; the vertical dimension is always one chunk)",
    )
    p.add_argument(
        "--names",
        help="variable names of a file without CF standard names, by role, e.g. "
        "'temperature=TEMP,salinity=SALT,vertical=lev' (roles: " + ", ".join(ROLES) + ")",
    )
    p.add_argument(
        "--bathymetry",
        metavar="GRID",
        help="netCDF of the sea-floor depth, m positive down, on the same latitude/longitude "
        "grid (adds depth_excess)",
    )
    p.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="address of a running dask.distributed scheduler (tcp://host:8786); "
        "default: local threads",
    )
    p.add_argument("--plot", metavar="FILE.png", help="also draw a map of one 2-D product")
    p.add_argument(
        "--map-variable",
        default="sonic_layer_depth",
        help="the product drawn by --plot (default sonic_layer_depth)",
    )
    p.add_argument("--overwrite", action="store_true", help="replace existing output files")
    p.add_argument("--quiet", action="store_true", help="no progress bar or notice on stderr")


def parse_mapping(text, option, *, integers=False, allowed=None):
    """``"a=b,c=d"`` as a dict; one-line errors naming ``option``."""
    out = {}
    for item in str(text).split(","):
        if not item.strip():
            continue
        key, eq, value = (s.strip() for s in item.partition("="))
        if not eq or not key or not value:
            raise SeaprofileError(
                f"{option}: expected NAME=VALUE pairs separated by commas, got {item!r}"
            )
        if allowed is not None and key not in allowed:
            raise SeaprofileError(f"{option}: unknown role {key!r}; roles are {', '.join(allowed)}")
        if integers:
            try:
                value = int(value)
            except ValueError:
                raise SeaprofileError(f"{option}: {key}={value!r} is not a whole number") from None
            if value < 1 and value != -1:
                raise SeaprofileError(f"{option}: {key}={value} must be >= 1 (or -1: whole)")
        out[key] = value
    return out


def _check_output(path, overwrite, option, suffixes):
    p = Path(path)
    if p.suffix.lower() not in suffixes:
        raise SeaprofileError(
            f"{option}: expected a file ending in {' or '.join(suffixes)}, got {path!r}"
        )
    if p.suffix.lower() == ".zarr":
        try:
            import zarr  # noqa: F401
        except ImportError:
            raise SeaprofileError(f"{option}: writing .zarr needs the zarr package") from None
    if p.exists() and not overwrite:
        raise SeaprofileError(f"{option}: {path} exists; pass --overwrite to replace it")
    if not p.parent.is_dir():
        raise SeaprofileError(f"{option}: directory {p.parent} does not exist")


def _client(address):
    from ..io.options import check_scheduler

    check_scheduler(address)
    try:
        from distributed import Client
    except ImportError:
        raise SeaprofileError(
            "--scheduler needs dask.distributed (pip install 'seaprofile[scale]')"
        ) from None
    try:
        return Client(address, timeout="5s")
    except (OSError, TimeoutError) as exc:
        raise SeaprofileError(
            f"--scheduler: cannot reach {address} within 5 s ({type(exc).__name__})"
        ) from None


def _open_bathymetry(path):
    import xarray as xr

    if not Path(path).exists():
        raise SeaprofileError(f"--bathymetry: no such file {path!r}")
    ds = xr.open_dataset(path)
    two_d = [k for k, v in ds.data_vars.items() if v.ndim == 2]
    if len(two_d) != 1:
        raise SeaprofileError(
            f"--bathymetry: expected one 2-D variable (sea-floor depth, m) in {path}, found "
            f"{', '.join(two_d) or 'none'}"
        )
    return ds[two_d[0]].load()


def run(args):
    import dask
    import xarray as xr

    from .. import _progress
    from ..gridded import layer_maps, open_field, sound_speed_field, write_field

    names = parse_mapping(args.names, "--names", allowed=ROLES) if args.names else None
    chunks = parse_mapping(args.chunks, "--chunks", integers=True) if args.chunks else None
    _check_output(args.out, args.overwrite, "--out", (".nc", ".zarr"))
    if args.plot:
        _check_output(args.plot, args.overwrite, "--plot", (".png",))
    if Path(args.input).suffix == ".zarr":
        try:
            import zarr  # noqa: F401
        except ImportError:
            raise SeaprofileError("INPUT: reading .zarr needs the zarr package") from None
    if not Path(args.input).exists():
        raise SeaprofileError(f"INPUT: no such file {args.input!r}")
    bathymetry = _open_bathymetry(args.bathymetry) if args.bathymetry else None
    client = _client(args.scheduler) if args.scheduler else None
    try:
        with (
            xr.open_dataset(args.input)
            if Path(args.input).suffix != ".zarr"
            else xr.open_zarr(args.input) as probe
        ):
            dims = set(probe.dims)
        if chunks:
            unknown = [k for k in chunks if k not in dims]
            if unknown:
                raise SeaprofileError(
                    f"--chunks: no dimension {', '.join(unknown)} in {args.input} "
                    f"(it has {', '.join(map(str, sorted(dims)))})"
                )
        from ..gridded import _roles

        with (
            xr.open_dataset(args.input)
            if Path(args.input).suffix != ".zarr"
            else xr.open_zarr(args.input) as probe
        ):
            try:
                vertical = _roles(probe, names)["vertical"].name
            except SeaprofileError as exc:
                raise SeaprofileError(_in_option_terms(str(exc))) from None
        horizontal_chunks = {k: v for k, v in (chunks or {}).items() if k != vertical}
        with warnings.catch_warnings():  # a chunking that splits the file's stored chunks
            warnings.filterwarnings("ignore", message=".*separate the stored chunks.*")
            ds = open_field(args.input, names=names, chunks=horizontal_chunks)
        if chunks and chunks.get(vertical, -1) != -1:
            print(
                f"seaprofile grid: note: the vertical dimension {vertical!r} is kept in one "
                f"chunk (column diagnostics need it whole); {vertical}={chunks[vertical]} ignored",
                file=sys.stderr,
            )
        if bathymetry is not None:
            bathymetry = bathymetry.rename(
                {d: n for d, n in zip(bathymetry.dims, _horizontal(ds, vertical, bathymetry))}
            )
        speed = sound_speed_field(ds, equation=args.equation, names=names)
        maps = layer_maps(ds, bathymetry=bathymetry, names=names, equation=args.equation)
        out = maps.assign(sound_speed=speed["sound_speed"])
        out.attrs = maps.attrs
        _progress.compile_notice(quiet=args.quiet)
        if client is not None:
            future = client.compute(out)
            _progress.distributed_progress(future, quiet=args.quiet)
            result = future.result()
        else:
            with dask.config.set(scheduler="threads"), _progress.dask_progress(args.quiet):
                result = out.compute()
    finally:
        if client is not None:
            client.close()
    write_field(result, args.out, overwrite=args.overwrite)
    written = [args.out]
    if args.plot:
        written.append(_plot(result, args))
    print(f"wrote {', '.join(written)}: " + ", ".join(sorted(maps.data_vars)) + ", sound_speed")
    print(f"Caution: {CAUTION}")
    return 0


def _in_option_terms(message):
    """A :mod:`seaprofile.gridded` message written with ``--names`` for ``names=``."""
    import re

    message = re.sub(r"names\['(\w+)'\]", r"--names \1", message)
    return re.sub(r"pass names=\{'(\w+)': 'variable name'\}", r"give --names \1=VARIABLE", message)


def _horizontal(ds, vertical, bathymetry):
    """The field's (latitude, longitude) dimension names, in the bathymetry's order."""
    horizontal = (
        [d for d in ds["temperature"].dims if d != vertical and d != "time"]
        if "temperature" in ds
        else []
    )
    sizes = {ds.sizes[d]: d for d in horizontal}
    out = []
    for d in bathymetry.dims:
        if d in horizontal:
            out.append(d)
        elif bathymetry.sizes[d] in sizes:
            out.append(sizes[bathymetry.sizes[d]])
        else:
            raise SeaprofileError(f"--bathymetry: dimension {d!r} does not match the grid")
    return out


def _plot(result, args):
    from ..io.outputs import save_figure
    from ..plots.maps import map_figure

    name = args.map_variable
    if name not in result.data_vars or "latitude" not in " ".join(map(str, result[name].dims)):
        two_d = [k for k, v in result.data_vars.items() if v.ndim <= 3 and k != "sound_speed"]
        raise SeaprofileError(
            f"--map-variable: no 2-D product {name!r}; choose from {', '.join(two_d)}"
        )
    da = result[name]
    title = None
    if "time" in da.dims:
        da = da.isel(time=0)
        title = f"{da.attrs.get('long_name', name)} (first time step)"
    save_figure(map_figure(da, title=title), args.plot, overwrite=args.overwrite)
    return args.plot
