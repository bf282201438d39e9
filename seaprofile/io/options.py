"""Checks of reading and building options, done once before any file is touched.

Every check raises :class:`~seaprofile.io.ArgumentError` whose ``argument`` is the Python
keyword (``bin_size``, ``columns``, ...); the command line maps it to its option.
"""

from __future__ import annotations

import math
import re

from ..casts._qc_tests import MAX_OCEAN_DEPTH
from ..casts.binning import check_bin_count
from .errors import ArgumentError

__all__ = [
    "FULL_OCEAN_DEPTH",
    "SCHEDULERS",
    "check_build_options",
    "check_read_options",
    "check_replacement_salinity",
    "check_scheduler",
    "parse_pairs",
]

#: deepest water a cast can see, m: the bound used to size a profile before its cast is
#: read, the same bound that QC and the extension use (common practice, no source)
FULL_OCEAN_DEPTH = MAX_OCEAN_DEPTH

#: local dask schedulers by name; any other accepted value is a distributed address
SCHEDULERS = ("threads", "processes", "synchronous")
_ADDRESS = re.compile(r"^(?:(?:tcp|tls|ucx|ws|wss|inproc)://\S+|[A-Za-z0-9.\-]+:\d{1,5})$")


def parse_pairs(text, argument):
    """``"a=b,c=d"`` (or a dict) as ``{"a": "b", "c": "d"}``; keys must be cast variables.

    Parameters
    ----------
    text : str or dict
        The pairs.
    argument : str
        Name used in messages (``"columns"`` or ``"units"``).
    """
    from ..casts.columns import ALIASES, KIND

    if isinstance(text, dict):
        items = [(str(k), v) for k, v in text.items()]
    else:
        items = []
        for item in str(text).split(","):
            if not item.strip():
                continue
            key, eq, value = item.partition("=")
            if not eq:
                raise ArgumentError(
                    argument,
                    "expected VARIABLE=VALUE pairs separated by "
                    f"commas (e.g. temperature=T_deg,pressure=P), got {item!r}",
                )
            items.append((key.strip(), value.strip()))
    out = {}
    for key, value in items:
        if not key or not str(value).strip():
            raise ArgumentError(argument, f"empty variable or value in {key}={value}")
        if argument == "columns" and key.lstrip("#").isdigit():  # 1-based position=variable
            if int(key.lstrip("#")) < 1:
                raise ArgumentError(argument, f"column positions start at 1, got {key!r}")
            key, value = str(value).strip(), int(key.lstrip("#"))
        key = ALIASES.get(key, key)
        if key not in KIND:
            raise ArgumentError(
                argument, f"unknown variable {key!r}; expected one of {', '.join(KIND)}"
            )
        if key in out:
            raise ArgumentError(argument, f"{key!r} given twice")
        out[key] = value
    if not out:
        raise ArgumentError(argument, f"no VARIABLE=VALUE pairs in {text!r}")
    return out


def _number(argument, value, low=None, high=None, unit=""):
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ArgumentError(argument, f"expected a number, got {value!r}") from None
    if not math.isfinite(v) or (low is not None and v < low) or (high is not None and v > high):
        span = f" within {low:g}..{high:g}{unit}" if low is not None and high is not None else ""
        raise ArgumentError(argument, f"must be a finite number{span}, got {value!r}")
    return v


def check_read_options(
    *,
    columns=None,
    units=None,
    latitude=None,
    longitude=None,
    salinity=None,
    fall_rate=None,
    instrument=None,
):
    """Check the reading options; returns them parsed (``columns``/``units`` as dicts).

    Parameters
    ----------
    columns, units : str or dict, optional
        ``"temperature=T_deg,pressure=P"``; ``"pressure=MPa"`` (known unit spellings).
    latitude, longitude : float, optional
        Degrees north (-90..90) / east (-180..360).
    salinity : float, optional
        Practical salinity assumed for casts without one (0..42).
    fall_rate : str or (float, float), optional
        A key of :data:`seaprofile.casts.xbt.FALL_RATES` or ``(a, b)`` with a > 0 m/s,
        b >= 0 m/s^2.
    instrument : {"ctd", "xbt", "svp"}, optional

    Returns
    -------
    dict
        The options, ready for :func:`seaprofile.casts.read.read_casts` (None left out).
    """
    from ..casts.columns import KIND, parse_unit
    from ..casts.xbt import FALL_RATES

    out = {}
    if columns is not None:
        out["columns"] = parse_pairs(columns, "columns")
        if len(set(out["columns"].values())) != len(out["columns"]):
            raise ArgumentError("columns", "one file column is mapped to two variables")
    if units is not None:
        out["units"] = parse_pairs(units, "units")
        for var, spelling in out["units"].items():
            unit = parse_unit(spelling)
            if unit is None or unit.kind != KIND[var]:
                raise ArgumentError("units", f"{spelling!r} is not a {KIND[var]} unit for {var}")
    if latitude is not None:
        out["latitude"] = _number("latitude", latitude, -90.0, 90.0, " degrees")
    if longitude is not None:
        out["longitude"] = _number("longitude", longitude, -180.0, 360.0, " degrees")
    if salinity is not None:
        out["salinity"] = _number("salinity", salinity, 0.0, 42.0)
    if fall_rate is not None:
        if isinstance(fall_rate, str):
            if fall_rate not in FALL_RATES:
                raise ArgumentError(
                    "fall_rate",
                    f"expected one of {', '.join(FALL_RATES)} or A,B, got {fall_rate!r}",
                )
        else:
            try:
                a, b = (float(v) for v in fall_rate)
            except (TypeError, ValueError):
                raise ArgumentError(
                    "fall_rate", f"expected a name or a pair A,B, got {fall_rate!r}"
                ) from None
            if not (math.isfinite(a) and a > 0 and math.isfinite(b) and b >= 0):
                raise ArgumentError(
                    "fall_rate",
                    f"need A > 0 m/s and B >= 0 m/s^2 (depth = A t - B t^2), got {a:g},{b:g}",
                )
            fall_rate = (a, b)
        out["fall_rate"] = fall_rate
    if instrument is not None:
        if instrument not in ("ctd", "xbt", "svp"):
            raise ArgumentError("instrument", f"expected ctd, xbt or svp, got {instrument!r}")
        out["instrument"] = instrument
    return out


def check_replacement_salinity(salinity, where="bad"):
    """Check a replacement salinity (practical, 0..42) and where it goes ("bad" or "all")."""
    if salinity is not None:
        _number("replacement_salinity", salinity, 0.0, 42.0)
    if where not in ("bad", "all"):
        raise ArgumentError("replace_salinity", f"expected 'bad' or 'all', got {where!r}")


def check_build_options(*, bin_size=1.0, extend_to=None, equation=None, depth_method=None):
    """Check the building options before any cast is read.

    Parameters
    ----------
    bin_size : float
        Bin size, m (> 0); refused when a full-ocean profile (:data:`FULL_OCEAN_DEPTH`, or
        ``extend_to`` when deeper) would not fit in :data:`~seaprofile.io.MEMORY_LIMIT`.
    extend_to : float or "bottom", optional
        Sea-floor depth, m (> 0), or ``"bottom"`` (each cast's own metadata).
    equation : str, optional
        A key of :data:`seaprofile.EQUATIONS`.
    depth_method : str, optional
        A key of :data:`seaprofile.seawater.depth.METHODS`.
    """
    size = _number("bin_size", bin_size)
    if size <= 0:
        raise ArgumentError("bin_size", f"must be positive (m), got {bin_size!r}")
    deepest = FULL_OCEAN_DEPTH
    if extend_to is not None and not (isinstance(extend_to, str) and extend_to == "bottom"):
        depth = _number("extend_to", extend_to)
        if depth <= 0:
            raise ArgumentError(
                "extend_to", f"the sea floor must lie below the surface (> 0 m), got {extend_to!r}"
            )
        if depth > MAX_OCEAN_DEPTH:
            raise ArgumentError(
                "extend_to", f"{depth:g} m is deeper than any ocean (at most {MAX_OCEAN_DEPTH:g} m)"
            )
        deepest = max(deepest, depth)
    # the same check, constant and message binning applies to each cast
    check_bin_count(deepest / size + 1.0, size, deepest, "bin_size")
    if equation is not None:
        from ..seawater.soundspeed import EQUATIONS

        if equation not in EQUATIONS:
            raise ArgumentError(
                "equation", f"expected one of {', '.join(EQUATIONS)}, got {equation!r}"
            )
    if depth_method is not None:
        from ..seawater.depth import METHODS

        if depth_method not in METHODS:
            raise ArgumentError(
                "depth_method", f"expected one of {', '.join(METHODS)}, got {depth_method!r}"
            )


def check_scheduler(scheduler):
    """Check a dask scheduler name or address before any work is started.

    Parameters
    ----------
    scheduler : str or None
        None (one file after another), one of :data:`SCHEDULERS`, or the address of a
        running ``dask.distributed`` scheduler (``tcp://host:8786`` or ``host:8786``).
    """
    if scheduler is None:
        return None
    if scheduler in SCHEDULERS:
        try:
            import dask.bag  # noqa: F401
        except ImportError:
            raise ArgumentError(
                "scheduler", "dask is not installed (pip install 'seaprofile[scale]')"
            ) from None
        return scheduler
    if not _ADDRESS.match(str(scheduler)):
        raise ArgumentError(
            "scheduler",
            f"unknown scheduler {scheduler!r}; use "
            f"{', '.join(SCHEDULERS)} or the address of a running "
            "dask.distributed scheduler (e.g. tcp://127.0.0.1:8786)",
        )
    try:
        import dask.distributed  # noqa: F401
    except ImportError:
        raise ArgumentError(
            "scheduler",
            f"{scheduler!r} is a cluster address, but "
            "dask.distributed is not installed (pip install "
            "'seaprofile[scale]')",
        ) from None
    return scheduler
