"""Bit-identity check of the seawater and layers numbers across a code change (not a test).

Run once on the old code with ``save OUT.npz`` and once on the new code with
``check OUT.npz``: every array computed here on valid numpy inputs must be bit for bit
the same (compared as raw 64-bit patterns, NaN positions included). The layer functions
changed their argument order to ``(sound_speed, depth, ...)``; the script detects the
order from the signature so that the same call runs on both versions.

    PYTHONPATH=<old tree> python tests/seawater/compare_before_after.py save /tmp/before.npz
    python tests/seawater/compare_before_after.py check /tmp/before.npz

All inputs are invented (synthetic), drawn from a fixed seed.
"""

from __future__ import annotations

import inspect
import os
import sys
import warnings

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "layers"))

from seaprofile import layers  # noqa: E402
from seaprofile.seawater import depth as dp  # noqa: E402
from seaprofile.seawater import state  # noqa: E402
from seaprofile.seawater.soundspeed import EQUATIONS, sound_speed, validity_mask  # noqa: E402


def _profile_first(func):
    """True when ``func`` takes (sound_speed, depth, ...) rather than (depth, sound_speed)."""
    return list(inspect.signature(func).parameters)[0] != "depth"


def _call(func, c, z, *args, **kwargs):
    return func(c, z, *args, **kwargs) if _profile_first(func) else func(z, c, *args, **kwargs)


def outputs():
    rng = np.random.default_rng(19)
    out = {}
    n = 100_000
    for name, eq in EQUATIONS.items():
        (tl, th), (sl, sh), (vl, vh) = eq.temperature_range, eq.salinity_range, eq.vertical_range
        t, s = rng.uniform(tl, th, n), rng.uniform(sl, sh, n)
        v, lat = rng.uniform(vl, vh, n), rng.uniform(-80, 80, n)
        out[f"{name}/own"] = sound_speed(t, s, equation=name, latitude=lat, **{eq.needs: v})
        other = "depth" if eq.needs == "pressure" else "pressure"
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            out[f"{name}/converted"] = sound_speed(t, s, equation=name, latitude=lat, **{other: v})
            out[f"{name}/mask"] = validity_mask(
                t, s, equation=name, latitude=lat, **{other: v}
            ).astype(np.float64)
        out[f"{name}/2d"] = sound_speed(
            t[:600].reshape(20, 30),
            s[:30],
            equation=name,
            latitude=45.0,
            **{eq.needs: v[:20, None]},
        )
        if eq.uses_position:
            out[f"{name}/position"] = sound_speed(
                t[:999],
                s[:999],
                v[:999],
                latitude=lat[:999],
                longitude=rng.uniform(-180, 360, 999),
                equation=name,
            )
    p, lat = rng.uniform(-1, 11000, n), rng.uniform(-90, 90, n)
    for m in dp.METHODS:
        out[f"depth/{m}"] = dp.depth_from_pressure(p, lat, m)
        out[f"pressure/{m}"] = dp.pressure_from_depth(p, lat, m)
    out["depth/common"] = dp.depth_from_pressure(
        p, lat, "leroy_parthiot1998", correction="common_ocean"
    )
    t, s, p = rng.uniform(0, 25, 5000), rng.uniform(30, 38, 5000), rng.uniform(0, 5000, 5000)
    out["state/sp"] = state.salinity_from_conductivity(rng.uniform(20, 60, 5000), t, p)
    for pos in ((), (24.0, -38.0)):
        key = "pos" if pos else "nopos"
        out[f"state/sa/{key}"] = state.absolute_salinity(s, p, *pos)
        out[f"state/rho/{key}"] = state.density(t, s, p, *pos)
        out[f"state/sigma0/{key}"] = state.potential_density_anomaly(t, s, p, *pos)
        n2, pm = state.buoyancy_frequency_squared(np.sort(t)[::-1], s, np.sort(p), *pos)
        out[f"state/n2/{key}"], out[f"state/pmid/{key}"] = n2, pm

    from _layer_test_profiles import make_profile, munk

    z = np.arange(0.0, 5001.0, 5.0)
    profiles = {
        "munk": munk(z),
        "dip": munk(z) - 4.0 * np.exp(-(((z - 400.0) / 40.0) ** 2)),
        "duct": np.where(z <= 35, 1500 + 0.016 * z, 1500.56 - 0.01 * (z - 35)) + 0.001 * np.sin(z),
    }
    for key, c in profiles.items():
        cn = c.copy()
        cn[rng.integers(0, z.size, 40)] = np.nan
        for k2, cc in (("", c), ("nan", cn)):
            tag = f"{key}{k2}"
            sld, sc, end = layers.sonic_layer_depth(cc, z, return_reached_end=True)
            out[f"layers/sld/{tag}"] = np.array([sld, sc, end], dtype=float)
            out[f"layers/grad/{tag}"] = np.array(_call(layers.layer_gradients, cc, z, sld))
            ch = _call(layers.sound_channels, cc, z, below=sld)
            out[f"layers/channels/{tag}"] = np.array([float(v) for v in ch.values()])
            crit = _call(
                layers.critical_depth,
                cc,
                z,
                float(cc[0]) if np.isfinite(cc[0]) else 1500.0,
                ch["axis_depth"],
            )
            out[f"layers/critical/{tag}"] = np.array([crit])
            out[f"layers/at/{tag}"] = np.asarray(
                _call(layers.speed_at, cc, z, [3.0, 777.7, 4999.0])
            )
            out[f"layers/hm/{tag}"] = np.asarray(
                _call(layers.harmonic_mean_sound_speed, cc, z, 4.0, np.array([10.0, 333.0, 4444.4]))
            )
            temp = 20.0 - 0.01 * np.maximum(z - 37.0, 0.0) + 0.0 * cc
            out[f"layers/mld/{tag}"] = np.array(
                layers.mixed_layer_depth(temp, z, return_reached_end=True)
            )
            out[f"layers/mldd/{tag}"] = np.array(
                layers.mixed_layer_depth_density(
                    26.0 + 0.001 * np.maximum(z - 41.0, 0.0), z, return_reached_end=True
                )
            )
    out["layers/duct"] = np.asarray(
        layers.duct_cutoff_frequency(np.array([1.0, 30.0, 0.0]), 1499.0)
    )
    out["layers/excess"] = np.array([layers.depth_excess(5000.0, 4321.0)])
    zs = np.arange(0.5, 120.0, 1.0)
    t = np.where(zs <= 30.0, 17.0, 17.0 - 0.3 * (zs - 30.0)).clip(10.5)
    for key, prof in (
        ("shelf", make_profile(zs, temperature=t, salinity=np.full(zs.size, 35.2))),
        ("munk", make_profile(z, sound=munk(z))),
    ):
        d = layers.describe(
            prof, bottom_depth=float(prof.depth[-1]), source_depth=300.0, transducer_depth=4.0
        )
        keys = sorted(d["units"])
        out[f"describe/{key}"] = np.array(
            [np.nan if d[k] is None else d[k] for k in keys], dtype=float
        )
    return out


def main(argv):
    mode, path = argv[1], argv[2]
    got = {k: np.asarray(v, dtype=np.float64) for k, v in outputs().items()}
    if mode == "save":
        np.savez(path, **got)
        print(f"saved {len(got)} arrays to {path}")
        return 0
    ref = np.load(path)
    bad = [
        k
        for k in ref.files
        if k not in got
        or ref[k].shape != got[k].shape
        or not np.array_equal(ref[k].view(np.uint64), got[k].view(np.uint64))
    ]
    total = sum(ref[k].size for k in ref.files)
    print(
        f"compared {len(ref.files)} arrays ({total:,} numbers) bit for bit: "
        f"{len(bad)} differ" + (f": {', '.join(bad)}" if bad else "")
    )
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
