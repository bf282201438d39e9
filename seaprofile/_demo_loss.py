"""The loss part of the demo: transmission-loss and coverage maps of two synthetic casts.

All data are synthetic (``demo_casts/README.md``). The summer shelf cast VS31-S04 has a
surface duct over a sharp thermocline: a source in the duct is heard far inside the duct
and lost early below the layer (the shadow zone). The deep basin cast VS31-D01 gives
convergence zones: detection near the source, none for tens of kilometres, then again.

The sonar terms are invented for the demo (a plausible passive planning case), not the
figures of any real system.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np


@dataclass(frozen=True)
class LossCase:
    """One demo loss map: the cast, the seabed, the sonar and the grid (units in names)."""

    cast: str
    label: str
    seabed: str
    frequency_hz: float
    source_depth_m: float
    max_range_m: float
    ranges: int
    depths: int
    beams: int
    receiver_depths_m: tuple
    #: passive sonar terms, dB (invented for the demo)
    source_level: float
    noise_level: float
    directivity_index: float
    detection_threshold: float


#: Absorption of the demo's loss maps: the casts' salinity reaches 36, outside the 30-35
#: box of Francois & Garrison (1982), inside that of Ainslie & McColm (1998)
ABSORPTION = "ainslie_mccolm1998"

#: the two loss maps of the demo; beam and grid counts keep the pair near 2 s of compute
CASES = (
    LossCase(
        cast="shelf_summer_ctd",
        label="VS31-S04, summer shelf (synthetic)",
        seabed="silt",
        frequency_hz=3500.0,
        source_depth_m=15.0,
        max_range_m=20e3,
        ranges=400,
        depths=121,
        beams=400,
        receiver_depths_m=(15.0, 60.0),
        source_level=130.0,
        noise_level=60.0,
        directivity_index=10.0,
        detection_threshold=10.0,
    ),
    LossCase(
        cast="deep_ocean_ctd",
        label="VS31-D01, deep basin (synthetic)",
        seabed="clay",
        frequency_hz=1000.0,
        source_depth_m=50.0,
        max_range_m=150e3,
        ranges=600,
        depths=201,
        beams=1500,
        receiver_depths_m=(100.0,),
        source_level=150.0,
        noise_level=65.0,
        directivity_index=15.0,
        detection_threshold=5.0,
    ),
)
#: the receiver depth of the shelf case that lies below the layer
BELOW_LAYER_DEPTH = 60.0
#: gaps between detection intervals shorter than this are merged into one band when
#: reported (fine interference ripple of the beam sum; common practice, no source)
MERGE_GAP_M = 1000.0


def merge_bands(intervals, gap=MERGE_GAP_M):
    """Detection intervals ``[[start, end], ...]`` (m) with gaps shorter than ``gap`` (m) closed."""
    bands = []
    for a, b in intervals:
        if bands and a - bands[-1][1] < gap:
            bands[-1][1] = max(bands[-1][1], b)
        else:
            bands.append([a, b])
    return bands


def _row(cov, depth):
    i = int(np.argmin(np.abs(cov.signal_excess["depth"].values - depth)))
    return i, cov.intervals[i]


def _bands_text(bands):
    return ", ".join(f"{a / 1000:.1f}-{b / 1000:.1f}" for a, b in bands) or "none"


def _one(case, result, out_dir, figures):
    from .io.write import write
    from .propagation import Environment
    from .propagation.boundaries import Seabed
    from .propagation.coverage import coverage, figure_of_merit
    from .propagation.loss import transmission_loss

    bottom = result.diagnostics.get("bottom_depth") or float(result.profile["depth"].max())
    env = Environment.from_profile(
        result.profile, bottom_depth=bottom, thin_tolerance=0.05, seabed=Seabed.named(case.seabed)
    )
    ranges = np.linspace(case.max_range_m / case.ranges, case.max_range_m, case.ranges)
    # the receiver depths on the grid itself, so their bands are read at those depths
    depths = np.union1d(np.linspace(0.0, bottom, case.depths), case.receiver_depths_m)
    loss = transmission_loss(
        env,
        case.source_depth_m,
        case.frequency_hz,
        ranges=ranges,
        depths=depths,
        mode="semicoherent",
        beams=case.beams,
        angles=(-20.0, 20.0),
        absorption=ABSORPTION,
    )
    terms = figure_of_merit(
        case.source_level,
        case.noise_level,
        case.detection_threshold,
        directivity_index=case.directivity_index,
    )
    cov = coverage(loss, terms)
    written = []
    for product, name in ((loss, "loss"), (cov.to_dataset(), "coverage")):
        target = out_dir / f"{case.cast}_{name}.nc"
        write(product, target, "netcdf", overwrite=True)
        written.append(str(target))
    if figures:
        from .plots.coverage import plot_coverage

        fig = plot_coverage(
            cov,
            loss,
            environment=env,
            profile=result.profile,
            receiver_depths=case.receiver_depths_m,
            title=(
                f"{case.label}: {case.frequency_hz / 1000:g} kHz, source {case.source_depth_m:g} m,"
                f" {case.seabed} seabed"
            ),
        )
        from .demo import _save

        written.append(_save(fig, out_dir / f"{case.cast}_coverage.png"))
    return env, loss, cov, written


def _loss_demo(results, out_dir, *, figures=True):
    """Loss and coverage maps of the shelf and the deep demo casts; report lines.

    Parameters
    ----------
    results : list
        ``batch.build_files`` results of the demo (their built profiles are used).
    out_dir : pathlib.Path
        Output folder of the demo (files go to ``loss/`` in it).
    figures : bool
        Draw the coverage figures (PNG).

    Returns
    -------
    written : list of str
        Files written.
    lines : list of str
        Short lines for the demo's printout.
    found : dict
        Per cast: ``first_shadow_m`` (shelf, at :data:`BELOW_LAYER_DEPTH`) or
        ``bands_m`` (per receiver depth), for tests.
    """
    try:
        from .propagation import loss as _  # noqa: F401 - the ray engine is optional
    except ImportError:  # pragma: no cover
        return [], [], {}
    built = {Path(r.path).stem: r for r in results if r.ok and not r.unusable}
    loss_dir = Path(out_dir) / "loss"
    loss_dir.mkdir(parents=True, exist_ok=True)
    written, lines, found = [], [], {}
    for case in CASES:
        if case.cast not in built:
            continue
        _, _, cov, files = _one(case, built[case.cast], loss_dir, figures)
        written.extend(files)
        t = cov.terms.terms
        lines.append(
            f"loss map {case.label}: {case.frequency_hz:g} Hz, source {case.source_depth_m:g} m, "
            f"{case.seabed} seabed; assumed passive sonar SL {t['source_level']:g} dB, "
            f"NL {t['noise_level']:g} dB, DI {t['directivity_index']:g} dB, "
            f"DT {t['detection_threshold']:g} dB -> figure of merit "
            f"{cov.terms.figure_of_merit:.0f} dB"
        )
        entry = {"bands_m": {}}
        for depth in case.receiver_depths_m:
            i, row = _row(cov, depth)
            bands = merge_bands(row["intervals"])
            entry["bands_m"][row["depth"]] = bands
            shadow = float(cov.first_shadow.values[i])
            text = f"  receiver {row['depth']:g} m:"
            if case.cast == CASES[0].cast and math.isfinite(shadow):
                text += f" first shadow zone from {shadow / 1000:.1f} km;"
                if depth == BELOW_LAYER_DEPTH:
                    entry["first_shadow_m"] = shadow
            text += f" detected at {_bands_text(bands)} km"
            if case.cast != CASES[0].cast and len(bands) > 1:
                text += f" ({len(bands) - 1} convergence zone(s) beyond the direct zone)"
            lines.append(text)
        found[case.cast] = entry
    if lines:
        # the caution itself is printed once by the demo command (and is in every figure
        # and netCDF file written here)
        lines.append(
            f"  (detection gaps under {MERGE_GAP_M / 1000:g} km merged; semicoherent "
            f"geometric-beam loss; absorption {ABSORPTION}, whose validity box holds the "
            "casts' salinity above 35; synthetic casts; assumed sonar terms)"
        )
    return written, lines, found
