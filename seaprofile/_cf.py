"""The data model in one place: variable names, CF attributes, quality flags, provenance.

Every Dataset seaprofile makes takes its variable attributes from :data:`VARIABLES` and its
flag attributes from :func:`flag_attrs`, and records what was done to it with
:func:`record_step`. See CONVENTIONS in DEVELOPERS.md for the Cast and Profile layouts.
"""

from __future__ import annotations

import datetime as _dt
import json

import numpy as np

from ._version import __version__

# --- quality flags: Argo reference table 2 -------------------------------------------
NO_QC = 0
GOOD = 1
PROBABLY_GOOD = 2
PROBABLY_BAD = 3
BAD = 4
CHANGED = 5
ESTIMATED = 8
MISSING = 9

#: Flags of values no one should use: probably bad (3), bad (4) and missing (9). Values
#: flagged so are left out of bin averages, extensions, comparisons, plots, ray tracing
#: and layer diagnostics. Estimated values (8: filled, extended, replaced) stay usable.
UNUSABLE_FLAGS = (PROBABLY_BAD, BAD, MISSING)
#: Flags of values quality-control tests neither test nor use as a neighbour: the
#: unusable ones and, in addition, estimated values (8), which were not measured.
NOT_MEASURED_FLAGS = (PROBABLY_BAD, BAD, ESTIMATED, MISSING)
#: Flags of values that failed a test (3, 4): a quantity derived from such a value is
#: flagged the same (quality control passes them on; see ``derived_from``).
FAILED_FLAGS = (PROBABLY_BAD, BAD)

FLAG_VALUES = np.array([0, 1, 2, 3, 4, 5, 8, 9], dtype=np.int8)
FLAG_MEANINGS = (
    "no_qc_performed good_data probably_good_data bad_data_that_are_potentially_correctable "
    "bad_data value_changed estimated_value missing_value"
)


def usable(values, flags):
    """Where ``values`` may be used: finite and not flagged 3, 4 or 9.

    Parameters
    ----------
    values : array_like of float
        Values of any variable, in its own units.
    flags : array_like of int
        Their Argo flags (same shape), see :data:`UNUSABLE_FLAGS`.

    Returns
    -------
    numpy.ndarray of bool
    """
    return np.isfinite(values) & ~flags_in(flags, UNUSABLE_FLAGS)


_FLAG_TABLES: dict[tuple, np.ndarray] = {}


def flags_in(flags, which):
    """``numpy.isin(flags, which)``, by a 256-entry look-up table for int8 flags.

    Parameters
    ----------
    flags : array_like of int
        Argo flags (any shape; int8 as stored in every ``<var>_qc``, or uint8).
    which : tuple of int
        The flag values looked for, e.g. :data:`UNUSABLE_FLAGS`.

    Returns
    -------
    numpy.ndarray of bool
        True where a flag is one of ``which``. Wider integer types fall back to
        :func:`numpy.isin` (same answer; the table is one indexing pass instead of a sort).
    """
    f = np.asarray(flags)
    if f.dtype != np.int8 and f.dtype != np.uint8:
        return np.isin(f, which)
    table = _FLAG_TABLES.get(which)
    if table is None:
        table = np.zeros(256, dtype=bool)
        table[np.array(which, dtype=np.int8).view(np.uint8)] = True
        _FLAG_TABLES[which] = table
    return table[f.view(np.uint8)]


def flag_attrs(variable):
    """CF attributes of the ``<variable>_qc`` flag array."""
    long = VARIABLES.get(variable, {}).get("long_name", variable)
    return {
        "long_name": f"quality flag of {long}",
        "standard_name": "status_flag",
        "flag_values": FLAG_VALUES,
        "flag_meanings": FLAG_MEANINGS,
        "conventions": "Argo reference table 2",
    }


# --- variables -----------------------------------------------------------------------
VARIABLES = {
    "temperature": {
        "standard_name": "sea_water_temperature",
        "long_name": "in-situ sea water temperature (ITS-90)",
        "units": "degree_Celsius",
    },
    "salinity": {
        "standard_name": "sea_water_practical_salinity",
        "long_name": "practical salinity (PSS-78)",
        "units": "1",
    },
    "pressure": {
        "standard_name": "sea_water_pressure",
        "long_name": "sea pressure (zero at the sea surface)",
        "units": "dbar",
        "positive": "down",
    },
    "depth": {
        "standard_name": "depth",
        "long_name": "depth below the sea surface",
        "units": "m",
        "positive": "down",
        "axis": "Z",
    },
    "conductivity": {
        "standard_name": "sea_water_electrical_conductivity",
        "long_name": "electrical conductivity of sea water",
        "units": "mS cm-1",
    },
    "sound_speed": {
        "standard_name": "speed_of_sound_in_sea_water",
        "long_name": "speed of sound in sea water",
        "units": "m s-1",
    },
    "measured_sound_speed": {
        "standard_name": "speed_of_sound_in_sea_water",
        "long_name": "speed of sound in sea water measured by a sound-speed probe",
        "units": "m s-1",
    },
    "elapsed_time": {
        "long_name": "time since the probe entered the water",
        "units": "s",
    },
    "samples_per_bin": {
        "long_name": "number of raw samples averaged into the bin",
        "units": "1",
    },
    "latitude": {"standard_name": "latitude", "long_name": "latitude", "units": "degrees_north"},
    "longitude": {"standard_name": "longitude", "long_name": "longitude", "units": "degrees_east"},
    "time": {"standard_name": "time", "long_name": "time of the cast"},
    "bottom_depth": {
        "standard_name": "sea_floor_depth_below_sea_surface",
        "long_name": "sea floor depth below the sea surface",
        "units": "m",
    },
    "mixed_layer_depth": {
        "standard_name": "ocean_mixed_layer_thickness",
        "long_name": "mixed layer depth",
        "units": "m",
    },
    "density": {
        "standard_name": "sea_water_density",
        "long_name": "in-situ density of sea water",
        "units": "kg m-3",
    },
    "range": {"long_name": "horizontal range from the source", "units": "m"},
    "travel_time": {"long_name": "one-way travel time", "units": "s"},
    "transmission_loss": {"long_name": "transmission loss", "units": "dB"},
    "profile_id": {"cf_role": "profile_id", "long_name": "cast name"},
    # --- derived products of a Cast or a Profile
    "sound_speed_difference": {"long_name": "sound speed difference (a - b)", "units": "m s-1"},
    # ``{equation}``: the key of the sound-speed equation (filled in by casts.probe)
    "probe_sound_speed_difference": {
        "long_name": "measured minus computed ({equation}) sound speed",
        "units": "m s-1",
    },
    "absolute_salinity": {
        "standard_name": "sea_water_absolute_salinity",
        "long_name": "absolute salinity (TEOS-10)",
        "units": "g kg-1",
    },
    "reference_salinity": {
        "standard_name": "sea_water_reference_salinity",
        "long_name": "reference salinity (TEOS-10; used when the position is unknown)",
        "units": "g kg-1",
    },
    "potential_density_anomaly": {
        "standard_name": "sea_water_sigma_theta",
        "long_name": "potential density anomaly referenced to 0 dbar (sigma0, TEOS-10)",
        "units": "kg m-3",
    },
    "buoyancy_frequency_squared": {
        "standard_name": "square_of_brunt_vaisala_frequency_in_sea_water",
        "long_name": "buoyancy frequency squared at pressure mid-points (TEOS-10)",
        "units": "s-2",
    },
    "sonic_layer_depth": {
        "long_name": "sonic layer depth (near-surface sound speed maximum)",
        "units": "m",
        "positive": "down",
    },
    # --- ray fans (propagation.rays) and eigenrays (propagation.eigenrays)
    "angle": {
        "long_name": "ray angle from horizontal, positive toward the bottom",
        "units": "degree",
    },
    "launch_angle": {
        "long_name": "launch angle from horizontal, positive toward the bottom",
        "units": "degree",
    },
    "arrival_angle": {
        "long_name": "ray angle at the receiver from horizontal, positive toward the bottom",
        "units": "degree",
    },
    "point_count": {"long_name": "number of valid points along the ray", "units": "1"},
    "surface_reflections": {"long_name": "number of surface reflections", "units": "1"},
    "bottom_reflections": {"long_name": "number of bottom reflections", "units": "1"},
    "turning_points": {"long_name": "number of refracted turning points", "units": "1"},
    "caustics": {
        "long_name": "number of caustics passed (ray-tube width changes sign)",
        "units": "1",
    },
    "spreading": {
        "long_name": "dynamic-ray spreading q: distance between neighbouring rays per radian "
        "of launch angle",
        "units": "m rad-1",
    },
    "tube_width": {
        "long_name": "dynamic-ray q: distance between neighbouring rays per radian "
        "of launch angle (sign changes are caustics)",
        "units": "m rad-1",
    },
    "tube_slowness": {
        "long_name": "dynamic-ray p: rate of change of q along the ray over c",
        "units": "s m-1 rad-1",
    },
    "grazing_angle": {
        "long_name": "grazing angle of the reflection (between ray and boundary)",
        "units": "degree",
    },
    "receiver_range_index": {"long_name": "index of the receiver range", "units": "1"},
    "receiver_depth_index": {"long_name": "index of the receiver depth", "units": "1"},
    "spreading_loss": {
        "long_name": "geometric spreading loss of the eigenray (ray-tube area)",
        "units": "dB",
        "reference": "re 1 m",
    },
    "phase": {
        "long_name": "phase shift: pi per surface reflection plus pi/2 per caustic",
        "units": "rad",
    },
    "depth_miss": {
        "long_name": "depth of the eigenray at the receiver range minus receiver depth",
        "units": "m",
    },
    "arrival_count": {"long_name": "number of eigenrays found", "units": "1"},
}


def attrs_for(name, **extra):
    """A fresh copy of the CF attributes for ``name``, updated with ``extra``."""
    out = dict(VARIABLES.get(name, {}))
    out.update(extra)
    return out


# --- provenance ----------------------------------------------------------------------
def _now():
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def base_attrs(**extra):
    """Global attributes every seaprofile Dataset starts with."""
    out = {
        "Conventions": "CF-1.10",
        "source": f"seaprofile {__version__}",
        "seaprofile_version": __version__,
        "processing_steps": "[]",
        "history": "",
        "caution": CAUTION,
    }
    out.update(extra)
    return out


def record_step(attrs, step, **parameters):
    """Return a copy of ``attrs`` with one processing step appended.

    The step goes to ``processing_steps`` (a JSON list of ``{"step": ..., parameters}``)
    and, as one readable line, to the CF ``history`` attribute.
    """
    out = dict(attrs)
    steps = json.loads(out.get("processing_steps", "[]") or "[]")
    clean = {k: _jsonable(v) for k, v in parameters.items()}
    steps.append({"step": step, **clean})
    out["processing_steps"] = json.dumps(steps)
    params = ", ".join(f"{k}={v}" for k, v in clean.items())
    line = f"{_now()} seaprofile {__version__}: {step}({params})"
    out["history"] = (out.get("history", "") + "\n" + line).strip()
    out.setdefault("seaprofile_version", __version__)
    return out


def steps_of(attrs):
    """The processing steps recorded in ``attrs`` as a list of dicts."""
    return json.loads(attrs.get("processing_steps", "[]") or "[]")


def _jsonable(v):
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (np.floating,)):
        return float(v)
    if isinstance(v, np.ndarray):
        return v.tolist()
    if isinstance(v, (str, int, float, bool)) or v is None:
        return v
    if isinstance(v, (list, tuple)):
        return [_jsonable(x) for x in v]
    if isinstance(v, dict):
        return {str(k): _jsonable(x) for k, x in v.items()}
    return str(v)


CAUTION = (
    "Not for navigation on its own. Verify against the governing hydrographic standard "
    "(e.g. IHO S-44), local regulations and licensed practice before use."
)
