"""Bit-identity of build_profile and describe across a code change (a tool, not a test).

    PYTHONPATH=<old tree> python tests/casts/compare_build_before_after.py save /tmp/before.pkl
    python tests/casts/compare_build_before_after.py check /tmp/before.pkl

Profiles from: every demo cast (dense CTD, messy, stuck salinity, XBT, SVP speed-only,
section), 40 dense synthetic benchmark casts, sparse 10-50 m bottle levels cut from them,
two-node planning casts, casts with NaN gaps and spikes, with options (replacement
salinity, extend_to, bin sizes, direction both/up, max_gap None, qc False). Every variable
(raw bits, NaN positions included), dtype, attrs (time stamps masked) is compared.
"""

import pickle
import re
import sys
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "benchmarks"))
import bench_casts as b  # noqa: E402

from seaprofile.casts.model import make_cast  # noqa: E402
from seaprofile.casts.read import read_cast  # noqa: E402
from seaprofile.layers import describe  # noqa: E402
from seaprofile.profile import build_profile  # noqa: E402

DEMO = ROOT / "demo_casts"
STAMP = re.compile(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?Z?")


def mask(v):
    if isinstance(v, str):
        return STAMP.sub("<t>", v)
    return v


def snap(ds):
    out = {"attrs": {k: mask(str(v)) for k, v in ds.attrs.items()}, "vars": {}}
    for name, var in ds.variables.items():
        a = np.asarray(var.values)
        raw = a.tobytes() if a.dtype.kind not in "OU" else repr(a.tolist()).encode()
        out["vars"][name] = (
            str(a.dtype),
            var.dims,
            raw,
            {k: mask(str(x)) for k, x in var.attrs.items()},
        )
    return out


def cases():
    rng = np.random.default_rng(7)
    for f in sorted(DEMO.rglob("*.csv")):
        if "broken" in f.parts or "swath" in f.parts or "grid" in f.parts:
            continue
        try:
            c = read_cast(f)
        except Exception as e:  # noqa: BLE001
            yield f.name, None, repr(e)
            continue
        yield f.name, c, {}
        yield f.name + ":both", c, {"direction": "both"}
        yield f.name + ":bin5", c, {"bin_size": 5.0}
        yield f.name + ":ext", c, {"extend_to": 3000.0}
        yield f.name + ":noqc", c, {"qc": False}
    for k in range(40):
        p, t, s = b.synthetic_cast(rng, 5000)
        c = make_cast(
            pressure=p,
            temperature=t,
            salinity=s,
            latitude=rng.uniform(-60, 60),
            longitude=10.0,
            cast_name=f"S{k}",
        )
        yield f"dense{k}", c, {}
        if k % 5 == 0:
            s2 = s.copy()
            s2[1000:1400] = np.nan
            t2 = t.copy()
            t2[2000:2050] += 5.0
            t2[3000] = 40.0
            yield f"gappy{k}", make_cast(pressure=p, temperature=t2, salinity=s2, latitude=30.0), {}
            yield (
                f"gappy{k}:maxgapNone",
                make_cast(pressure=p, temperature=t2, salinity=s2, latitude=30.0),
                {"max_gap": None},
            )
            yield (
                f"gappy{k}:repl",
                make_cast(pressure=p, temperature=t2, salinity=s2, latitude=30.0),
                {"replacement_salinity": 35.0},
            )
            yield f"dense{k}:up", c, {"direction": "up"}
            step = rng.choice([10.0, 25.0, 50.0])
            z = np.arange(0.0, p.max(), step)
            idx = np.searchsorted(p[200:], z) + 200
            idx = idx[idx < len(p)]
            yield (
                f"bottle{k}",
                make_cast(pressure=p[idx], temperature=t[idx], salinity=s[idx], latitude=-20.0),
                {},
            )
    yield (
        "two-node",
        make_cast(depth=np.array([0.0, 4000.0]), measured_sound_speed=np.array([1500.0, 1520.0])),
        {},
    )
    yield (
        "two-node-ts",
        make_cast(
            pressure=np.array([0.0, 1000.0]),
            temperature=np.array([15.0, 4.0]),
            salinity=np.array([35.0, 34.9]),
            latitude=45.0,
        ),
        {},
    )


def run():
    res = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for name, c, opts in cases():
            if c is None:
                res[name] = ("read-error", opts)
                continue
            try:
                p = build_profile(c, **opts)
                d = describe(p)
                res[name] = (snap(p), repr(d) if not hasattr(d, "variables") else snap(d))
            except Exception as e:  # noqa: BLE001
                res[name] = ("error", type(e).__name__, STAMP.sub("<t>", str(e)))
    return res


if __name__ == "__main__":
    mode, path = sys.argv[1], sys.argv[2]
    res = run()
    if mode == "save":
        pickle.dump(res, open(path, "wb"))
        print(f"saved {len(res)} cases")
    else:
        old = pickle.load(open(path, "rb"))
        bad = [k for k in old if old[k] != res.get(k)]
        for k in bad[:10]:
            o, n = old[k], res.get(k)
            if (
                isinstance(o, tuple)
                and isinstance(o[0], dict)
                and isinstance(n, tuple)
                and isinstance(n[0], dict)
            ):
                for part in ("attrs", "vars"):
                    for key in set(o[0][part]) | set(n[0][part]):
                        if o[0][part].get(key) != n[0][part].get(key):
                            print(
                                k,
                                part,
                                key,
                                str(o[0][part].get(key))[:200],
                                "||",
                                str(n[0][part].get(key))[:200],
                            )
                if o[1] != n[1]:
                    print(k, "describe differs")
            else:
                print(k, str(o)[:200], "||", str(n)[:200])
        print(f"{len(old)} cases, {len(bad)} differ" + ("" if bad else ": bit-identical"))
        sys.exit(1 if bad else 0)
