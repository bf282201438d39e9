"""Profiles shared by the tests of seaprofile.layers (imported by tests/layers/test_*.py).

Not a test module: pytest puts this directory on sys.path (rootdir-based "prepend"
import mode, no __init__.py), so the test files import it by name.
"""

import numpy as np
import xarray as xr

from seaprofile import _cf
from seaprofile.seawater.depth import pressure_from_depth
from seaprofile.seawater.soundspeed import sound_speed


def munk(z):
    """Munk (1974), JASA 55, 220-226: c = 1500[1 + 0.00737(eta + exp(-eta) - 1)],
    eta = 2(z - 1300)/1300 (the canonical parameters)."""
    eta = 2.0 * (np.asarray(z, dtype=float) - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


def make_profile(
    depth,
    *,
    temperature=None,
    salinity=None,
    sound=None,
    flags=None,
    latitude=45.0,
    longitude=-10.0,
    name="test cast",
):
    """A Profile Dataset as described in DEVELOPERS.md ("The data model")."""
    z = np.asarray(depth, dtype=float)
    n = z.size
    t = np.full(n, 10.0) if temperature is None else np.asarray(temperature, float)
    s = np.full(n, 35.0) if salinity is None else np.asarray(salinity, float)
    p = np.asarray(pressure_from_depth(z, latitude), dtype=float)
    c = np.asarray(sound_speed(t, s, p), float) if sound is None else np.asarray(sound, float)
    q = np.ones(n, np.int8) if flags is None else np.asarray(flags, np.int8)
    data = {
        "sound_speed": ("depth", c, _cf.attrs_for("sound_speed")),
        "temperature": ("depth", t, _cf.attrs_for("temperature")),
        "salinity": ("depth", s, _cf.attrs_for("salinity")),
        "pressure": ("depth", p, _cf.attrs_for("pressure")),
        "samples_per_bin": ("depth", np.where(q == _cf.ESTIMATED, 0, 24).astype(np.int32)),
    }
    for v in ("sound_speed", "temperature", "salinity", "pressure"):
        data[f"{v}_qc"] = ("depth", q.copy(), _cf.flag_attrs(v))
    coords = {
        "depth": ("depth", z, _cf.attrs_for("depth")),
        "latitude": ((), latitude),
        "longitude": ((), longitude),
        "time": ((), np.datetime64("2031-07-14T09:12:00", "ns")),
        "profile_id": ((), name, {"cf_role": "profile_id"}),
    }
    est = z[q == _cf.ESTIMATED]
    attrs = _cf.base_attrs(
        featureType="profile",
        equation="chen_millero1977",
        depth_method="unesco1983",
        cast_name=name,
        cast_max_depth=float(est.min() if est.size else z.max()),
    )
    return xr.Dataset(data, coords=coords, attrs=attrs)
