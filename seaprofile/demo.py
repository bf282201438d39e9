"""The demo: the main job end to end on the bundled synthetic casts.

Builds every demo cast into a profile (one deliberately broken file is reported and the
rest carry on), writes netCDF, CSV and plain speed tables, draws the profile figures and
ray fans of the deep and the shelf cast, transmission-loss and coverage maps of the same
two casts (``_demo_loss``), and returns the summary rows. All demo data are
synthetic (an invented survey); see ``demo_casts/README.md``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ._validate import SeaprofileError
from .batch import build_files, summary_row
from .casts.write import atomic_write, write

__all__ = ["DemoReport", "find_demo_casts", "run_demo"]

#: casts drawn as figures (file stem -> ray-fan settings: source depth m, launch angles
#: (lowest, highest) deg and number of rays, as ``seaprofile fan --angles LOW HIGH --rays
#: COUNT``, range m, ray shading)
FIGURE_CASTS = {
    "deep_ocean_ctd": dict(
        source_depth=100.0, angles=(-12.0, 12.0), rays=49, max_range=100e3, shade="launch_angle"
    ),
    "shelf_summer_ctd": dict(
        source_depth=20.0, angles=(-3.0, 3.0), rays=25, max_range=6e3, shade="reflections"
    ),
}


#: casts whose extension to the bottom is shaped by the deep CTD cast
SHAPED_BY_DEEP_CAST = ("xbt_drop", "messy_deep_ctd")
DEEP_REFERENCE = "deep_ocean_ctd"


@dataclass
class DemoReport:
    """What the demo did: summary rows, files written, failures (expected ones included)."""

    rows: list = field(default_factory=list)
    written: list = field(default_factory=list)
    failures: list = field(default_factory=list)
    survey: list = field(default_factory=list)
    loss: list = field(default_factory=list)
    loss_found: dict = field(default_factory=dict)


def find_demo_casts(casts_dir=None):
    """The demo cast files: ``casts_dir``, else ``./demo_casts``; sorted, README excluded."""
    root = Path(casts_dir) if casts_dir else Path.cwd() / "demo_casts"
    if not root.is_dir():
        raise SeaprofileError(
            f"--casts: no demo casts at {root}; run from the seaprofile checkout or give "
            "--casts DIR (python demo_casts/generate.py --output DIR makes them)"
        )
    files = sorted(p for p in root.rglob("*.csv"))
    if not files:
        raise SeaprofileError(f"--casts: {root} holds no .csv cast files")
    return files


def run_demo(out_dir="demo_output", *, casts_dir=None, equation="chen_millero1977", figures=True):
    """Run the demo.

    Parameters
    ----------
    out_dir : str or pathlib.Path
        Output folder (created; the demo rewrites its own files there on every run).
    casts_dir : str or pathlib.Path, optional
        Folder of demo casts (default ``./demo_casts``).
    equation : str
        Sound-speed equation.
    figures : bool
        Draw the profile figures and ray fans (PNG).

    Returns
    -------
    DemoReport
    """
    out = Path(out_dir)
    files = find_demo_casts(casts_dir)
    options = dict(
        out_dir=out / "profiles",
        format="netcdf",
        overwrite=True,
        equation=equation,
        extend_to="bottom",
    )
    # The expendable probe stops at 760 m over 3350 m of water (the messy deep cast at 1500 m
    # over 4980 m): holding the last temperature to the bottom would make the deep water
    # about 12 m/s too fast, so their extensions take their shape from the deep CTD cast of
    # the same survey instead (DEEP_REFERENCE).
    shaped = [f for f in files if f.stem in SHAPED_BY_DEEP_CAST]
    results = build_files([f for f in files if f not in shaped], **options)
    deep = next((r for r in results if Path(r.path).stem == DEEP_REFERENCE and r.ok), None)
    if shaped:
        extra = build_files(shaped, reference=deep.profile if deep else None, **options)
        order = {str(f): i for i, f in enumerate(files)}
        results = sorted(results + extra, key=lambda r: order[r.path])
    report = DemoReport()
    for r in results:
        report.rows.append(summary_row(r))
        report.written.extend(r.written)
        if not r.ok:
            report.failures.append(r.error)
            continue
        if r.unusable:
            report.failures.append(f"{r.path}: {r.unusable}")
        stem = Path(r.written[0]).stem if r.written else Path(r.path).stem
        for fmt, ext in (("csv", ".csv"), ("table", ".speed.txt")):
            if r.unusable and fmt == "table":
                continue
            target = out / "profiles" / f"{stem}{ext}"
            write(r.profile, target, fmt, overwrite=True)
            report.written.append(str(target))
    if figures:
        report.written.extend(_figures(results, out / "figures"))
    from ._demo_survey import _survey_demo

    root = Path(casts_dir) if casts_dir else Path.cwd() / "demo_casts"
    written, report.survey = _survey_demo(results, root, out)
    report.written.extend(written)
    from ._demo_loss import _loss_demo

    written, report.loss, report.loss_found = _loss_demo(results, out, figures=figures)
    report.written.extend(written)
    return report


def _figures(results, fig_dir):
    # plain matplotlib Figures: the backend of the user is never changed
    from .plots.profile import plot_profile

    fig_dir.mkdir(parents=True, exist_ok=True)
    written = []
    for r in results:
        stem = Path(r.path).stem
        if not r.ok or r.unusable or stem not in FIGURE_CASTS:
            continue
        fig = plot_profile(r.profile, diagnostics=r.diagnostics, cast=r.cast)
        written.append(_save(fig, fig_dir / f"{stem}_profile.png"))
        fan = _fan_figure(r, **FIGURE_CASTS[stem])
        if fan is not None:
            written.append(_save(fan, fig_dir / f"{stem}_fan.png"))
    return written


def _fan_figure(result, source_depth, angles, rays, max_range, shade):
    try:
        from .plots.rays import fan_for_drawing, plot_fan
        from .propagation import Environment, trace_fan
    except ImportError:  # the ray engine is optional for the cast demo
        return None
    bottom = result.diagnostics.get("bottom_depth") or float(result.profile["depth"].max())
    env = Environment.from_profile(result.profile, bottom_depth=bottom, thin_tolerance=0.05)
    fan = trace_fan(env, source_depth, np.linspace(angles[0], angles[1], rays), max_range)
    # the rays drawn with fine samples along their arcs (the traced rays themselves)
    return plot_fan(fan_for_drawing(fan, env), env, profile=result.profile, shade=shade)


def _save(fig, path):
    atomic_write(path, True, lambda tmp: fig.savefig(tmp, format="png", dpi=110))
    return str(path)
