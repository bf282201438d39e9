"""Many casts at once: build profiles file by file, one bad file never stops the rest.

This is the layer scripted survey pipelines call (the ``build`` and ``demo`` commands use it
too). Each file gives one :class:`BuildResult` per cast, or one result carrying the error.
Batches run one after another by default, or through dask when a scheduler is named
(``"threads"``, ``"processes"`` or the address of a running ``dask.distributed`` cluster).
"""

from __future__ import annotations

import os
import uuid
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import _cf
from ._validate import InputFileError, SeaprofileError
from .casts import qc as _qc
from .casts._atomic import file_identities, is_among
from .casts._common import usable_sound_speed
from .casts.read import read_casts
from .casts.write import FORMATS, write
from .io import NETCDF_LOCK, ArgumentError, is_same_file
from .io.loading import _is_netcdf, directory_files, load_profile, read_as_profiles
from .io.options import (
    SCHEDULERS,
    check_build_options,
    check_read_options,
    check_replacement_salinity,
    check_scheduler,
)
from .layers import describe
from .profile import build_profile, interpolated_levels

__all__ = [
    "BuildResult",
    "assumptions",
    "build_files",
    "flags_by_test",
    "short_assumptions",
    "load_profile",
    "read_as_profiles",
    "summary_row",
    "usable_bins",
]


@dataclass
class BuildResult:
    """The outcome for one cast (or one unreadable file).

    Attributes
    ----------
    path : str
        The input file.
    cast : xarray.Dataset or None
        The Cast as read (None when :func:`build_files` was told ``keep_casts=False``).
    cast_name, instrument : str
        From the Cast's attributes ("" when the file could not be read).
    samples : int or None
        Number of samples in the Cast as read.
    profile : xarray.Dataset or None
        The built Profile.
    diagnostics : dict
        :func:`seaprofile.layers.describe` of the Profile.
    written : list of str
        Files written for this cast.
    error : str or None
        One line naming the file (and line and column) when the file failed.
    error_argument, error_reason : str or None
        When the error was about one argument (:class:`~seaprofile.io.ArgumentError`): its
        name (e.g. ``"reference"``) and what is wrong, so a caller can name it its own way.
    unusable : str or None
        Why the Profile has no usable sound speed (fewer than two good bins), else None.
    diagnostics_error : str or None
        The error of :func:`seaprofile.layers.describe` when the Profile is usable but a diagnostic failed.
    """

    path: str
    cast: object = None
    cast_name: str = ""
    instrument: str = ""
    samples: int | None = None
    profile: object = None
    diagnostics: dict = field(default_factory=dict)
    written: list = field(default_factory=list)
    error: str | None = None
    error_argument: str | None = None
    error_reason: str | None = None
    unusable: str | None = None
    diagnostics_error: str | None = None
    #: (temporary file, output) pairs written by a dask worker, renamed into place by
    #: :func:`build_files` once it has checked that no other cast claims the output
    staged: list = field(default_factory=list, repr=False)

    @property
    def ok(self):
        return self.error is None

    def fail(self, exc):
        """Record ``exc`` as this result's error (one line naming the file)."""
        if isinstance(exc, ArgumentError):
            self.error_argument, self.error_reason = exc.argument, exc.reason
        names_file = isinstance(exc, InputFileError) and is_same_file(exc.path, self.path)
        self.error = str(exc) if names_file else f"{self.path}: {exc}"
        return self


def usable_bins(profile):
    """Number of levels with a usable sound speed: finite and not flagged 3, 4 or 9
    (:func:`seaprofile.casts._common.usable_sound_speed`; a computed sound speed carries
    the worst flag of its temperature, salinity and pressure).

    Parameters
    ----------
    profile : xarray.Dataset
        A Profile (``sound_speed`` m/s and its ``sound_speed_qc`` flags).
    """
    return int(usable_sound_speed(profile).sum())


def _build_profile(cast, options):
    """build_profile; an error about one argument (bin size, latitude, reference) is an
    :class:`~seaprofile.io.ArgumentError` naming it, raised by the step that found it."""
    return build_profile(cast, **options)


def _build_one_file(
    path,
    read_options,
    build_options,
    out_dir,
    fmt,
    overwrite,
    bottom_depth,
    keep=(),
    keep_casts=True,
    used=None,
):
    """Every cast of one file; never raises (each failure is a result's error)."""
    try:
        results = _build_file(
            path, read_options, build_options, out_dir, fmt, overwrite, bottom_depth, keep, used
        )
    except Exception as exc:  # noqa: BLE001 - one bad file never stops a batch
        return [BuildResult(str(path)).fail(exc)]
    if not keep_casts:  # what a dask worker sends back stays small
        for r in results:
            r.cast = None
    return results


def _build_file(
    path, read_options, build_options, out_dir, fmt, overwrite, bottom_depth, keep, used
):
    results = []
    if Path(path).is_dir():  # left by _expand_directories: it holds no cast file
        directory_files(path)  # raises, naming the directory and the suffixes looked for
    try:
        if _is_netcdf(path):
            with NETCDF_LOCK:
                casts = read_casts(path, **read_options)
        else:
            casts = read_casts(path, **read_options)
    except (SeaprofileError, OSError) as exc:
        return [BuildResult(str(path)).fail(exc)]
    for cast in casts:
        res = BuildResult(
            str(path),
            cast=cast,
            cast_name=str(cast.attrs.get("cast_name", "")),
            instrument=str(cast.attrs.get("instrument", "")),
            samples=int(cast.sizes["sample"]),
        )
        options = dict(build_options)
        bottom = bottom_depth
        try:
            if isinstance(bottom, str):  # "bottom": each cast's own bottom_depth metadata
                bottom = _bottom_of(cast)
                if bottom is None:
                    raise ArgumentError(
                        "extend_to",
                        "'bottom' needs the cast's "
                        "sea-floor depth, and the file gives none (add a "
                        "bottom_depth line to its header, or give a depth)",
                    )
                options["extend_to"] = bottom
            res.profile = _build_profile(cast, options)
            res.diagnostics = _diagnostics(res, bottom)
            if out_dir is not None:
                target = _write_one(res, path, out_dir, fmt, overwrite, keep, used)
                if target is not None:
                    res.written.append(target)
        except (SeaprofileError, OSError) as exc:
            res.fail(exc)
        results.append(res)
    return results


def _diagnostics(res, bottom):
    if usable_bins(res.profile) < 2:
        res.unusable = "fewer than two bins with a usable sound speed (see the flags)"
        return {"notes": [res.unusable]}
    try:
        return describe(res.profile, bottom_depth=bottom)
    except SeaprofileError as exc:
        res.diagnostics_error = str(exc)
        return {"notes": [f"diagnostics failed: {exc}"]}


def _clash(target, name):
    return SeaprofileError(
        f"output {Path(target).name} was already written for another cast "
        f"of this batch (cast name {name!r}); rename one of the casts"
    )


def _write_one(res, path, out_dir, fmt, overwrite, keep, used):
    """Write the profile of ``res``; returns its output path (None while staged).

    ``used`` is the set of outputs already claimed in a sequential batch; ``None`` means a
    dask worker: the profile goes to a temporary name beside its output (recorded in
    ``res.staged``) and :func:`_commit_staged` renames it in the main process.
    """
    name = _safe_name(res.cast_name or Path(path).stem)
    target = Path(out_dir) / f"{name}{FORMATS[fmt][0]}"
    if is_among(target, keep):
        raise SeaprofileError(
            f"output {target} is an input of this batch; an input is "
            "never written over (give another output directory)"
        )
    if used is not None:
        if str(target) in used:  # two casts of one name in this batch
            raise _clash(target, name)
        used.add(str(target))
        where = target
    else:
        if target.exists() and not overwrite:  # refused early; checked again at the rename
            raise SeaprofileError(
                f"{target}: exists; pass overwrite=True (--overwrite) to replace it"
            )
        where = target.with_name(f".{target.name}.{uuid.uuid4().hex}.staged{target.suffix}")
    if fmt == "netcdf4":
        # HDF5 is never entered from two threads at once; the classic netCDF-3 of "netcdf"
        # is written in pure Python (scipy) and needs no lock
        with NETCDF_LOCK:
            write(res.profile, where, fmt, overwrite=overwrite)
    else:
        write(res.profile, where, fmt, overwrite=overwrite)
    if used is None:
        res.staged.append((str(where), str(target)))
        return None
    return str(target)


def _commit_staged(results, overwrite):
    """Rename the files the dask workers staged, in the order of the results.

    The first cast that claims an output keeps it; a later cast of the same name gets the
    clash as its error and its file is removed, so ``--overwrite`` never lets one cast of
    the batch replace another. Runs in the main process after every worker has finished.
    """
    claimed = set()
    for r in results:
        for tmp, target in r.staged:
            try:
                if target in claimed:
                    raise _clash(target, r.cast_name or Path(target).stem)
                if overwrite:
                    os.replace(tmp, target)
                else:
                    try:
                        os.link(tmp, target)  # fails if the output appeared meanwhile
                    except FileExistsError:
                        raise SeaprofileError(
                            f"{target}: exists; pass overwrite=True (--overwrite) to replace it"
                        ) from None
                claimed.add(target)
                r.written.append(target)
            except (SeaprofileError, OSError) as exc:
                r.fail(exc)
            finally:
                if os.path.exists(tmp):
                    os.remove(tmp)
        r.staged = []


def build_files(
    paths,
    *,
    out_dir=None,
    format="netcdf",
    overwrite=False,
    columns=None,
    units=None,
    instrument=None,
    latitude=None,
    longitude=None,
    salinity=None,
    fall_rate="hanawa1995",
    equation="chen_millero1977",
    bin_size=1.0,
    extend_to=None,
    reference=None,
    max_gap="auto",
    replacement_salinity=None,
    replace_salinity="bad",
    depth_method="unesco1983",
    scheduler=None,
    protect=(),
    progress=False,
    keep_casts=True,
):
    """Read, process, quality-control and write every cast in ``paths``.

    Parameters
    ----------
    paths : iterable of str or pathlib.Path
        Cast files (text, netCDF or JSON; a netCDF collection holds several casts), or
        directories: each stands for its cast files in name order
        (:func:`seaprofile.io.loading.directory_files`; not its subdirectories). A
        directory without cast files is reported as that entry's error.
    out_dir : str or pathlib.Path, optional
        Directory for the profiles (created if missing); nothing is written when None.
    format : {"netcdf", "netcdf4", "csv", "json", "table"}
        Output format: ``netcdf`` is classic netCDF-3 (``.nc``), ``netcdf4`` netCDF-4
        (``.nc4``; :func:`seaprofile.casts.write.write_netcdf`).
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
        takes each cast's own ``bottom_depth`` metadata (a cast without one is an error of
        that cast, reported with the others; the rest carry on).
    reference : xarray.Dataset, optional
        Deeper Profile that shapes the extension.
    max_gap : "auto", float or None
        Widest gap between measured levels, m, that is filled by linear interpolation
        (flag 8); ``"auto"``: up to max(5 m, 3 x the spacing of the levels beside it), so
        sparse casts stay joined and data loss in a dense cast stays missing; None: fill
        every gap. See :func:`seaprofile.casts.gaps.fill_gaps`.
    replacement_salinity : float, optional
        Practical salinity put in place of a failed salinity channel (flag 8, recorded in
        each profile's ``salinity_replaced`` and ``assumptions`` attributes); see
        :func:`seaprofile.profile.build_profile`.
    replace_salinity : {"bad", "all"}
        Where ``replacement_salinity`` goes: only where salinity is flagged bad or missing,
        or everywhere.
    depth_method : str
        Pressure-to-depth method.
    scheduler : str, optional
        None: one file after another. ``"threads"``/``"processes"``: local dask; any other
        string: the address of a ``dask.distributed`` scheduler (needs the ``scale`` extra).
        With threads, netCDF files are read, and netCDF-4 files written, one at a time
        (:data:`seaprofile.io.NETCDF_LOCK`): HDF5 must not be entered from two threads.
    protect : iterable of str or pathlib.Path
        Files read besides ``paths`` (e.g. the reference's file): like every input, never
        written over.
    progress : bool
        Show a progress bar on stderr (:mod:`seaprofile._progress`: only when stderr is a
        terminal) and the one-time notice when the kernels are compiled on this first run.
    keep_casts : bool
        Keep each Cast as read in its result (default). False: ``cast`` is None (its name,
        instrument and number of samples stay), so that a large batch on dask workers does
        not send every raw cast back to this process; the Profiles are the same.

    Returns
    -------
    list of BuildResult
        In the order of ``paths``; failed files carry ``error`` and never stop the others.

    Raises
    ------
    ArgumentError
        A bad option (checked once, before any file is read): ``argument`` names it.
    """
    if format not in FORMATS:
        raise ArgumentError("format", f"expected one of {', '.join(FORMATS)}, got {format!r}")
    read_options = check_read_options(
        columns=columns,
        units=units,
        instrument=instrument,
        latitude=latitude,
        longitude=longitude,
        salinity=salinity,
        fall_rate=fall_rate,
    )
    check_build_options(
        bin_size=bin_size, extend_to=extend_to, equation=equation, depth_method=depth_method
    )
    check_scheduler(scheduler)
    check_replacement_salinity(replacement_salinity, replace_salinity)
    paths = _expand_directories(paths)
    keep = file_identities([*paths, *(str(p) for p in protect)])  # found once, not per cast
    if out_dir is not None:
        for p in paths:
            if is_same_file(out_dir, p):
                raise ArgumentError("out_dir", f"{out_dir} is an input file of this batch")
        if Path(out_dir).exists() and not Path(out_dir).is_dir():
            raise ArgumentError("out_dir", f"{out_dir} exists and is not a directory")
        try:
            Path(out_dir).mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise ArgumentError(
                "out_dir", f"cannot create the directory {out_dir}: {exc.strerror or exc}"
            ) from None
    build_options = dict(
        equation=equation,
        bin_size=float(bin_size),
        latitude=latitude,
        extend_to=extend_to,
        reference=reference,
        depth_method=depth_method,
    )
    if max_gap != "auto":
        build_options["max_gap"] = max_gap
    if replacement_salinity is not None:
        build_options.update(
            replacement_salinity=float(replacement_salinity), replace_salinity=replace_salinity
        )
    args = (read_options, build_options, out_dir, format, overwrite, extend_to, keep, keep_casts)
    from . import _progress

    quiet = not progress
    _progress.compile_notice(quiet=quiet)
    if scheduler is None:
        used = set()
        groups = [
            _build_one_file(p, *args, used=used)
            for p in _progress.bar(paths, desc="building", unit="file", quiet=quiet)
        ]
        return [r for group in groups for r in group]
    # parallel: the names come from the casts, known only once read; the workers write to
    # temporary names and the outputs are claimed here, in the order of the inputs
    groups = _with_dask(paths, args, scheduler, quiet)
    results = [r for group in groups for r in group]
    _commit_staged(results, overwrite)
    return results


def _expand_directories(paths):
    """``paths`` as strings, each directory replaced by its cast files in name order.

    A directory holding no cast file stays as it is: reading it fails with that message,
    as the result of that entry, and the rest of the batch carries on.
    """
    out = []
    for p in paths:
        if Path(p).is_dir():
            try:
                out.extend(str(f) for f in directory_files(p))
                continue
            except InputFileError:
                pass
        out.append(str(p))
    return out


def _with_dask(paths, args, scheduler, quiet=True):
    import dask.bag as db  # check_scheduler made sure it is there

    from . import _progress

    bag = db.from_sequence(paths, npartitions=max(1, min(len(paths), 64)))
    work = bag.map(_build_one_file, *args)
    if scheduler in SCHEDULERS:
        with _progress.dask_progress(quiet=quiet):
            return work.compute(scheduler=scheduler)
    from dask.distributed import Client

    with Client(scheduler) as client:  # an existing cluster: never started here
        future = client.compute(work)
        _progress.distributed_progress(future, quiet=quiet)
        return future.result()


def _bottom_of(cast):
    try:
        value = float(cast.attrs.get("bottom_depth", "nan"))
    except (TypeError, ValueError):
        return None
    return value if np.isfinite(value) and value > 0 else None


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
        "cast": result.cast_name,
        "instrument": result.instrument,
        "depth_range_m": f"{depth[good].min():.0f}-{depth[good].max():.0f}" if good.any() else "-",
        "samples": result.samples,
        "samples_binned": int(p["samples_per_bin"].sum()) if "samples_per_bin" in p else None,
        "flags": " ".join(f"{k}:{v}" for k, v in flagged.items()) or "none",
        "surface_speed": d.get("surface_sound_speed"),
        "mixed_layer_m": d.get("mixed_layer_depth_temperature"),
        "sonic_layer_m": d.get("sonic_layer_depth"),
        "status": _status(result),
        "assumed": short_assumptions(p),
        "assumptions": "; ".join(assumptions(p)) or "none",
    }


def short_assumptions(profile):
    """The assumptions of a Profile in a few words, for one column of a summary table.

    The full sentences are :func:`assumptions` (and the Profile's ``assumptions``
    attribute, written with every output file); this is their index: what was assumed,
    not the values. ``"none"`` when the profile rests on its data alone.
    """
    a = profile.attrs
    words = []
    if str(a.get("salinity_assumed", "")).lower() in ("yes", "true", "1"):
        source = str(a.get("salinity_source", "")).split("(")[0].strip()
        words.append(f"salinity {source}" if source.startswith("assumed") else "salinity assumed")
    if a.get("salinity_replaced") not in (None, ""):
        words.append(f"salinity replaced ({str(a['salinity_replaced']).split(':')[0]})")
    if a.get("fall_rate") not in (None, ""):
        words.append(f"fall rate {a['fall_rate']}")
    filled, _ = interpolated_levels(profile)
    if filled:
        words.append(f"{filled} levels interpolated")
    if a.get("unfilled_gaps") not in (None, "", "none"):
        words.append(f"gaps left ({a['unfilled_gaps']})")
    if a.get("extension_method") not in (None, ""):
        ref = a.get("extension_reference")
        below = a.get("join_depth", a.get("cast_max_depth"))
        words.append(
            "extended"
            + (f" below {float(below):.0f} m" if below is not None else "")
            + (
                f" from {ref}"
                if ref not in (None, "", "none")
                else " at constant T/S"
                if "constant" in str(a["extension_method"])
                else ""
            )
        )
    return ", ".join(words) or "none"


def _status(result):
    if result.unusable is not None:
        return "no usable sound speed"
    if result.diagnostics_error is not None:
        return f"diagnostics failed: {result.diagnostics_error}"
    return "ok"


def _text(value):
    if isinstance(value, (list, tuple)):
        return ", ".join(_text(v) for v in value)
    if isinstance(value, dict):
        return ", ".join(f"{k} {_text(v)}" for k, v in value.items())
    if isinstance(value, (float, np.floating)):
        return f"{float(value):g}"
    return str(value).strip()


def assumptions(profile):
    """What was assumed rather than measured for a Profile, as short sentences.

    Read defensively from the Profile's attributes and processing steps (any of them may
    be absent): the Profile's own one-line ``assumptions`` attribute when it has one (its
    parts separated by ``"; "``, ``"none"`` for nothing); otherwise ``assumed_salinity``
    or ``salinity_assumed`` with ``salinity_source``; ``salinity_replaced``; ``fall_rate``
    with ``fall_rate_coefficients``; ``extension``, ``extension_method`` or the
    ``extend_to`` step (method, bottom depth, reference; left out when it added no level).

    Returns
    -------
    list of str
    """
    a = profile.attrs
    own = a.get("assumptions")
    if isinstance(own, str) and own.strip():
        return [] if own.strip() == "none" else [p.strip() for p in own.split("; ") if p.strip()]
    out = []
    if a.get("assumed_salinity") not in (None, "", "no"):
        out.append(f"salinity assumed {_text(a['assumed_salinity'])}")
    elif str(a.get("salinity_assumed", "")).lower() in ("yes", "true", "1"):
        out.append(f"salinity {_text(a.get('salinity_source') or 'assumed')}")
    if a.get("salinity_replaced") not in (None, ""):
        out.append(f"salinity replaced: {_text(a['salinity_replaced'])}")
    if a.get("fall_rate") not in (None, ""):
        coefficients = a.get("fall_rate_coefficients")
        out.append(
            f"fall rate {_text(a['fall_rate'])}"
            + (f" ({_text(coefficients)})" if coefficients not in (None, "") else "")
        )
    filled, inside = interpolated_levels(profile)
    if filled:
        out.append(f"{filled} of {inside} levels interpolated linearly in depth")
    if a.get("unfilled_gaps") not in (None, "", "none"):
        out.append(f"no data over {_text(a['unfilled_gaps'])}, left missing")
    if a.get("extension") not in (None, ""):
        out.append(f"extended: {_text(a['extension'])}")
    elif a.get("extension_method") not in (None, ""):
        start = a.get("join_depth", a.get("cast_max_depth", "?"))
        out.append(
            f"extended from {_text(start)} m to "
            f"{_text(a.get('bottom_depth', '?'))} m with {_text(a['extension_method'])}"
        )
    else:
        steps = [st for st in _cf.steps_of(a) if st.get("step") == "extend_to"]
        if steps:
            st = steps[-1]
            if st.get("skipped"):
                out.append(f"not extended: {_text(st['skipped'])}")
            elif st.get("added_levels", 1) or st.get("replaced_bins", 1):  # else: nothing added
                ref = f" {_text(st['reference'])}" if st.get("reference") else ""
                start = a.get("join_depth", a.get("cast_max_depth"))
                start = f" from {_text(start)} m" if start is not None else ""
                out.append(
                    f"extended{start} to {_text(st.get('bottom_depth', '?'))} m by "
                    f"{_text(st.get('method', 'an unrecorded method'))}{ref}"
                )
    return out


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
