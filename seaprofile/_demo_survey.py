"""The survey part of the demo: a synthetic swath line converted, and two shelf casts compared.

All data are synthetic (``demo_casts/README.md``): the swath line VS31-L07 was traced through
the afternoon cast VS31-S05; the morning cast VS31-S04 is the one a surveyor may still hold.
"""

from __future__ import annotations

from pathlib import Path

SWATH_FILE = Path("swath") / "line07_beams.txt"
EARLY_CAST = "shelf_summer_ctd"
LATE_CAST = "shelf_summer_late_ctd"
TRANSDUCER_DEPTH = 4.5
WATER_DEPTH = 116.0
ORDER = "1a"


def _survey_demo(results, casts_dir, out_dir):
    """Convert the swath file with the morning cast; advice line comparing the two casts.

    Parameters
    ----------
    results : list
        ``batch.build_files`` results of the demo (their built profiles are used).
    casts_dir : pathlib.Path
        The demo casts folder.
    out_dir : pathlib.Path
        Output folder of the demo.

    Returns
    -------
    written : list of str
        Files written.
    lines : list of str
        Short lines for the demo's printout.
    """
    from .cli.soundings import profile_nodes
    from .io.beams import convert_beam_file

    built = {Path(r.path).stem: r.profile for r in results if r.ok and not r.unusable}
    beams = Path(casts_dir) / SWATH_FILE
    if EARLY_CAST not in built or not beams.is_file():
        return [], []
    z, c = profile_nodes(built[EARLY_CAST])
    target = Path(out_dir) / "soundings" / "line07_soundings.csv"
    target.parent.mkdir(parents=True, exist_ok=True)
    summary = convert_beam_file(
        beams,
        target,
        z,
        c,
        transducer_depth=TRANSDUCER_DEPTH,
        straight_ray=True,
        overwrite=True,
        profile_name=EARLY_CAST,
    )
    lines = [f"swath line VS31-L07: {summary['rows']} beams -> {target}"]
    if LATE_CAST in built:
        try:
            from .survey import cast_advice, profile_error
        except ImportError:  # pragma: no cover - survey comparison not available
            return [str(target)], lines
        tz, tc = profile_nodes(built[LATE_CAST])
        errors = profile_error(
            z, c, tz, tc, water_depth=WATER_DEPTH, transducer_depth=TRANSDUCER_DEPTH
        )
        advice = cast_advice(errors, order=ORDER, swath_angle=65.0)
        lines.append(f"morning cast VS31-S04 against afternoon water (VS31-S05): {advice}")
    return [str(target)], lines
