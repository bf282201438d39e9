"""Benchmark: Monte Carlo depth uncertainty, one compiled call against a loop of calls.

Scenario (synthetic): a 10-level (bottle) and a 200-level speed-only profile (0-400 m), 76 beams (0-75 degrees)
over a flat 300 m seafloor, 2000 Monte Carlo draws of a sound-speed offset (0.25 m/s) and
a depth offset (0.3 m).

* ``depth_uncertainty``: the whole public call (forward trace, linearised terms, 2000
  perturbed profiles reprocessed in one parallel kernel);
* baseline measured in the same run: the same 2000 reprocessings as a Python loop of
  ``beam_to_sounding`` calls, one per perturbed profile.

Prints a table and writes benchmarks/results/survey_uncertainty.json. Run:
``.venv/bin/python benchmarks/bench_survey_uncertainty.py``
"""

from __future__ import annotations

import numpy as np
from _results import best_of, machine, write_result

from seaprofile.survey import beam_to_sounding, depth_uncertainty, seafloor_travel_time

SAMPLES = 2000


def run(levels):
    z = np.linspace(0.0, 400.0, levels)
    c = 1485.0 + 22.0 * np.exp(-z / 40.0) + 0.016 * z
    angles = np.linspace(0.0, 75.0, 76)
    kw = dict(
        depth=z,
        sound_speed=c,
        water_depth=300.0,
        transducer_depth=3.0,
        sigma_sound_speed=0.25,
        sigma_depth=0.3,
        beam_angles=angles,
    )
    depth_uncertainty(**kw, samples=10)  # compile / load from cache
    vectorised = best_of(lambda: depth_uncertainty(**kw, samples=SAMPLES))

    t, _ = seafloor_travel_time(z, c, angles, 300.0, transducer_depth=3.0)
    rng = np.random.default_rng(0)
    draws = rng.standard_normal((SAMPLES, 2)) * [0.25, 0.3]

    def loop():
        for dc, dz in draws:  # the baseline: one call per perturbed profile
            beam_to_sounding(z + dz, c + dc, angles, t, transducer_depth=3.0)

    looped = best_of(loop)
    return vectorised, looped


def main():
    out = {"samples": SAMPLES, "beams": 76, **machine(), "runs": []}
    print(f"{SAMPLES} draws x 76 beams, {out['threads']} threads")
    print(f"{'levels':>6s} {'depth_uncertainty s':>20s} {'loop baseline s':>16s} {'loop/vec':>9s}")
    for levels in (10, 200):
        vectorised, looped = run(levels)
        print(f"{levels:6d} {vectorised:20.3f} {looped:16.3f} {looped / vectorised:9.1f}")
        out["runs"].append(
            {
                "levels": levels,
                "vectorised_s": vectorised,
                "loop_s": looped,
                "loop_over_vectorised": looped / vectorised,
            }
        )
    write_result("survey_uncertainty", out)


if __name__ == "__main__":
    main()
