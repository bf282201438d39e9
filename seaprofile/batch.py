"""Many casts at once: build profiles file by file, one bad file never stops the rest.

This is the layer scripted survey pipelines call (the ``build`` and ``demo`` commands use it
too). Each file gives one :class:`BuildResult` per cast, or one result carrying the error.
Batches run one after another by default, or through dask when a scheduler is named
(``"threads"``, ``"processes"`` or the address of a running ``dask.distributed`` cluster).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import _cf
from ._validate import InputFileError, SeaprofileError
from .casts import qc as _qc
from .casts.read import read_casts, read_profiles
from .casts.write import FORMATS, write
from .layers import describe
from .profile import build_profile

__all__ = ["BuildResult", "build_files", "flags_by_test", "load_profile", "read_as_profiles",
           "summary_row"]


@dataclass
class BuildResult:
    """The outcome for one cast (or one unreadable file).

    Attributes
    ----------
    path : str
        The input file.
    cast : xarray.Dataset or None
        The Cast as read.
    profile : xarray.Dataset or None
        The built Profile.
    diagnostics : dict
        :func:`seaprofile.layers.describe` of the Profile.
    written : list of str
        Files written for this cast.
    error : str or None
        One line naming the file (and line and column) when the file failed.
    """

    path: str
    cast: object = None
    profile: object = None
    diagnostics: dict = field(default_factory=dict)
    written: list = field(default_factory=list)
    error: str | None = None
    unusable: str | None = None

    @property
    def ok(self):
        return self.error is None


def _build_one_file(path, read_options, build_options, out_dir, fmt, overwrite, bottom_depth,
                    used=None):
    results = []
    try:
        casts = read_casts(path, **read_options)
    except (SeaprofileError, OSError) as exc:
        return [BuildResult(str(path), error=str(exc))]
    for cast in casts:
        res = BuildResult(str(path), cast=cast)
        options = dict(build_options)
        bottom = bottom_depth
        if isinstance(bottom, str):  # "bottom": each cast's own bottom_depth metadata
            bottom = _bottom_of(cast)
            options["extend_to"] = bottom
        try:
            res.profile = build_profile(cast, **options)
            try:
                res.diagnostics = describe(res.profile, bottom_depth=bottom)
            except SeaprofileError as exc:  # e.g. no usable sound speed: flags say why
                res.diagnostics = {"notes": [str(exc)]}
                res.unusable = str(exc)
            if out_dir is not None:
                name = _safe_name(cast.attrs.get("cast_name") or Path(path).stem)
                target = Path(out_dir) / f"{name}{FORMATS[fmt][0]}"
                if used is not None:
                    if str(target) in used:  # two casts of one name in this batch
                        raise SeaprofileError(
                            f"output {target.name} was already written for another cast of "
                            f"this batch (cast name {name!r}); rename one of the casts")
                    used.add(str(target))
                write(res.profile, target, fmt, overwrite=overwrite)
                res.written.append(str(target))
        except (SeaprofileError, OSError) as exc:
            res.error = f"{path}: {exc}" if str(path) not in str(exc) else str(exc)
        results.append(res)
    return results


def build_files(paths, *, out_dir=None, format="netcdf", overwrite=False, columns=None,
                units=None, instrument=None, latitude=None, longitude=None, salinity=None,
                fall_rate="hanawa1995_t7", equation="chen_millero1977", bin_size=1.0, extend_to=None, reference=None,
                depth_method="unesco1983", scheduler=None):
    """Read, process, quality-control and write every cast in ``paths``.

    Parameters
    ----------
    paths : iterable of str or pathlib.Path
        Cast files (text, netCDF or JSON; a netCDF collection holds several casts).
    out_dir : str or pathlib.Path, optional
        Directory for the profiles (created if missing); nothing is written when None.
    format : {"netcdf", "csv", "json", "table"}
        Output format.
    overwrite : bool
        Replace existing output files (default: an existing file is an error for that cast).
    columns, units, instrument, latitude, longitude, salinity, fall_rate
        Passed to :func:`seaprofile.casts.read.read_casts` (latitude/longitude in degrees,
        salinity practical, fall rate a name or ``(a m/s, b m/s2)``).
    equation : str
        Sound-speed equation, a key of ``seaprofile.EQUATIONS``.
    bin_size : float
        Bin size, m.
    extend_to : float or "bottom", optional
        Sea-floor depth, m, to extend every profile to (flagged estimated); ``"bottom"``
        takes each cast's own ``bottom_depth`` metadata (casts without one stay as they are).
    reference : xarray.Dataset, optional
        Deeper Profile that shapes the extension.
    depth_method : str
        Pressure-to-depth method.
    scheduler : str, optional
        None: one file after another. ``"threads"``/``"processes"``: local dask; any other
        string: the address of a ``dask.distributed`` scheduler (needs the ``scale`` extra).

    Returns
    -------
    list of BuildResult
        In the order of ``paths``; failed files carry ``error`` and never stop the others.
    """
    if format not in FORMATS:
        raise SeaprofileError(f"format must be one of {', '.join(FORMATS)}, got {format!r}")
    if out_dir is not None:
        Path(out_dir).mkdir(parents=True, exist_ok=True)
    read_options = dict(columns=columns, units=units, instrument=instrument,
                        latitude=latitude, longitude=longitude, salinity=salinity,
                        fall_rate=fall_rate)
    build_options = dict(equation=equation, bin_size=bin_size, latitude=latitude,
                         extend_to=extend_to, reference=reference, depth_method=depth_method)
    args = (read_options, build_options, out_dir, format, overwrite, extend_to)
    paths = [str(p) for p in paths]
    if scheduler is None:
        used = set()
        groups = [_build_one_file(p, *args, used) for p in paths]
    else:  # parallel: collisions can only be found afterwards, and are reported
        groups = _with_dask(paths, args, scheduler)
    results = [r for group in groups for r in group]
    seen = {}
    for r in results:
        for target in r.written:
            if target in seen:
                r.error = (f"{r.path}: output {target} collides with the one written for "
                           f"{seen[target]} (same cast name); rename one of the casts")
            seen.setdefault(target, r.path)
    return results


def _with_dask(paths, args, scheduler):
    try:
        import dask.bag as db
    except ImportError as exc:  # pragma: no cover - depends on the installed extras
        raise SeaprofileError("scheduler: dask is not installed (pip install 'seaprofile[scale]')") from exc
    bag = db.from_sequence(paths, npartitions=max(1, min(len(paths), 64)))
    work = bag.map(_build_one_file, *args)
    if scheduler in ("threads", "processes", "synchronous"):
        return work.compute(scheduler=scheduler)
    from dask.distributed import Client

    with Client(scheduler) as client:  # an existing cluster: never started here
        return client.compute(work).result()


def _bottom_of(cast):
    try:
        value = float(cast.attrs.get("bottom_depth", "nan"))
    except (TypeError, ValueError):
        return None
    return value if np.isfinite(value) and value > 0 else None


def read_as_profiles(path, **build_options):
    """Profiles in one file: raw casts built on the fly, or profiles written by seaprofile.

    The cast reader is asked first: it recognises a file of profiles written by
    :mod:`seaprofile.casts.write` by its metadata and says so, while the profile reader
    would take any text table with a depth column for a profile.

    Returns
    -------
    profiles : list of xarray.Dataset
    kind : {"cast", "profile"}
        What the file held.
    """
    try:
        casts = read_casts(path)
    except InputFileError as as_cast:
        if "use read_profile" not in str(as_cast):
            raise
        return read_profiles(path), "profile"
    return [build_profile(c, **build_options) for c in casts], "cast"


def load_profile(path, **build_options):
    """A Profile from ``path``: a built profile as written by seaprofile, or a raw cast.

    Raw casts are built on the fly with :func:`seaprofile.profile.build_profile`
    (``build_options`` passed through, defaults otherwise).
    """
    profiles, _ = read_as_profiles(path, **build_options)
    if len(profiles) != 1:
        raise SeaprofileError(f"{path}: holds {len(profiles)} profiles; give one")
    return profiles[0]


def summary_row(result):
    """One row of the per-cast summary table (a dict of plain values)."""
    if not result.ok:
        return {"file": Path(result.path).name, "cast": "-", "status": "FAILED"}
    p, d = result.profile, result.diagnostics
    depth = p["depth"].values
    good = np.isfinite(p["sound_speed"].values)
    flagged = flags_by_test(p)
    return {
        "file": Path(result.path).name,
        "cast": result.cast.attrs.get("cast_name", ""),
        "instrument": result.cast.attrs.get("instrument", ""),
        "depth_range_m": f"{depth[good].min():.0f}-{depth[good].max():.0f}" if good.any() else "-",
        "samples": int(result.cast.sizes["sample"]),
        "samples_binned": int(p["samples_per_bin"].sum()) if "samples_per_bin" in p else None,
        "flags": " ".join(f"{k}:{v}" for k, v in flagged.items()) or "none",
        "surface_speed": d.get("surface_sound_speed"),
        "mixed_layer_m": d.get("mixed_layer_depth_temperature"),
        "sonic_layer_m": d.get("sonic_layer_depth"),
        "status": "ok" if result.unusable is None else "no usable sound speed",
    }


def flags_by_test(profile):
    """Samples flagged by each test (despiking included), from the provenance record."""
    out = {}
    for step in _cf.steps_of(profile.attrs):
        if step.get("step") == "despike":
            n = sum(int(v) for v in step.get("flagged", {}).values())
            if n:
                out["despike"] = out.get("despike", 0) + n
    for test, per_var in _qc.qc_summary(profile).items():
        n = int(sum(per_var.values())) if isinstance(per_var, dict) else int(per_var)
        if n:
            out[test] = out.get(test, 0) + n
    return out


def _safe_name(name):
    keep = "".join(ch if ch.isalnum() or ch in "-_." else "_" for ch in str(name))
    return keep.strip("._") or "cast"


CAUTION = _cf.CAUTION
