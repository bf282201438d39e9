"""Detection coverage from a transmission-loss field: the sonar equation, in decibels.

A coverage is plain xarray arithmetic on a loss field (``transmission_loss``, dims
``("depth", "range")``, dB re 1 m, optionally with a 2-D ``beam_count`` coordinate where 0
means that no beam reaches the cell). Nothing here traces rays.

The sonar equation (all terms in dB) is written as a figure of merit, the largest loss the
system can tolerate and still detect:

- passive:                   FOM = SL - (NL - DI) - DT,       SE = FOM - TL
- active, noise-limited:     FOM = SL + TS - (NL - DI) - DT,  SE = FOM - 2 TL (monostatic)

with SL the source level (dB re 1 uPa at 1 m), TS the target strength (dB re 1 m^2), NL the
noise spectrum level in the receiver band (dB re 1 uPa^2 / Hz, or band level, consistently
with DT), DI the receiver directivity index (dB), DT the detection threshold (dB) and TL the
one-way transmission loss (dB re 1 m). A cell is *detected* where SE >= 0.

References
----------
R.J. Urick (1983), Principles of Underwater Sound, 3rd ed., McGraw-Hill, ch. 2 (the sonar
equations, passive and active noise-limited forms, and the figure of merit).
M.A. Ainslie (2010), Principles of Sonar Performance Modelling, Springer-Praxis, ch. 3
(signal excess and the figure of merit).

Not for navigation on its own: verify against the governing hydrographic standard, local
regulations and licensed practice.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field

import numpy as np
import xarray as xr

from .. import _cf
from .._cf import CAUTION
from .._version import __version__
from ..io.errors import ArgumentError

__all__ = [
    "Coverage",
    "SonarTerms",
    "coverage",
    "detection_intervals",
    "figure_of_merit",
    "first_shadow_range",
    "shadow_zones",
    "signal_excess",
]

REFERENCES = (
    "Urick, R.J. (1983), Principles of Underwater Sound, 3rd ed., McGraw-Hill, ch. 2; "
    "Ainslie, M.A. (2010), Principles of Sonar Performance Modelling, Springer-Praxis, ch. 3"
)
EQUATION_PASSIVE = "SE = FOM - TL, FOM = SL - (NL - DI) - DT"
EQUATION_ACTIVE = "SE = FOM - 2 TL, FOM = SL + TS - (NL - DI) - DT (monostatic, noise-limited)"
EQUATION_GIVEN = "SE = FOM - TL (figure of merit given)"
EQUATION_GIVEN_TWO_WAY = "SE = FOM - 2 TL (figure of merit given, two-way loss)"


def _finite(name, value):
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ArgumentError(name, f"expected a number in dB, got {value!r}") from None
    if not math.isfinite(v):
        raise ArgumentError(name, f"must be finite, got {value!r}")
    return v


@dataclass(frozen=True)
class SonarTerms:
    """The terms of the sonar equation, dB, and the figure of merit they give.

    Attributes
    ----------
    figure_of_merit : float
        FOM, dB: the largest one-way loss (passive, or a given FOM) or two-way loss (active)
        at which a target is still detected.
    mode : {"passive", "active", "given"}
        Which form of the equation; ``"given"`` when the FOM was given directly.
    two_way : bool
        Whether the loss enters twice (active monostatic: SE = FOM - 2 TL).
    terms : dict
        The terms used (``source_level``, ``noise_level``, ``directivity_index``,
        ``detection_threshold``, ``target_strength``), dB; only those given.
    """

    figure_of_merit: float
    mode: str
    two_way: bool
    terms: dict = field(default_factory=dict)

    @property
    def equation(self):
        if self.mode == "passive":
            return EQUATION_PASSIVE
        if self.mode == "active":
            return EQUATION_ACTIVE
        return EQUATION_GIVEN_TWO_WAY if self.two_way else EQUATION_GIVEN

    def to_dict(self):
        return {
            "figure_of_merit_db": self.figure_of_merit,
            "mode": self.mode,
            "two_way_loss": self.two_way,
            "equation": self.equation,
            "terms_db": dict(self.terms),
        }


def figure_of_merit(
    source_level=None,
    noise_level=None,
    detection_threshold=None,
    *,
    directivity_index=0.0,
    target_strength=None,
    figure_of_merit=None,
    two_way=False,
):
    """The figure of merit of a sonar from the terms of the sonar equation, dB.

    Parameters
    ----------
    source_level : float
        SL, dB re 1 uPa at 1 m (the target's radiated level when passive, the projector's
        level when active).
    noise_level : float
        NL, background noise level in the receiver band, dB re 1 uPa^2 (or spectrum level,
        dB re 1 uPa^2/Hz, when ``detection_threshold`` is referred to 1 Hz).
    detection_threshold : float
        DT, dB: signal-to-noise ratio needed at the receiver for the wanted probability of
        detection and false alarm.
    directivity_index : float
        DI, dB (default 0: an omnidirectional receiver).
    target_strength : float, optional
        TS, dB re 1 m^2. Given: the active, noise-limited form, and the loss counts twice.
    figure_of_merit : float, optional
        FOM, dB, given directly instead of the terms above.
    two_way : bool
        With ``figure_of_merit`` given: whether it is an active FOM (loss counts twice).

    Returns
    -------
    SonarTerms
        ``.figure_of_merit`` (dB), the mode and the terms used.

    Raises
    ------
    ArgumentError
        Naming the argument: a term missing, not a number, not finite, or terms given
        together with ``figure_of_merit``.

    Notes
    -----
    Urick (1983), Principles of Underwater Sound, 3rd ed., ch. 2, all in dB:

    passive:  FOM = SL - (NL - DI) - DT, detection where TL <= FOM;
    active (noise-limited, monostatic): FOM = SL + TS - (NL - DI) - DT, detection where
    2 TL <= FOM. Reverberation-limited active detection is not modelled.
    """
    if figure_of_merit is not None:
        for name, value in (
            ("source_level", source_level),
            ("noise_level", noise_level),
            ("detection_threshold", detection_threshold),
            ("target_strength", target_strength),
        ):
            if value is not None:
                raise ArgumentError(
                    name, "give either the figure of merit or the terms of the sonar equation"
                )
        fom = _finite("figure_of_merit", figure_of_merit)
        return SonarTerms(fom, "given", bool(two_way), {})
    for name, value in (
        ("source_level", source_level),
        ("noise_level", noise_level),
        ("detection_threshold", detection_threshold),
    ):
        if value is None:
            raise ArgumentError(name, "needed (or give the figure of merit directly)")
    sl = _finite("source_level", source_level)
    nl = _finite("noise_level", noise_level)
    dt = _finite("detection_threshold", detection_threshold)
    di = _finite("directivity_index", directivity_index)
    terms = {
        "source_level": sl,
        "noise_level": nl,
        "directivity_index": di,
        "detection_threshold": dt,
    }
    if target_strength is None:
        return SonarTerms(sl - (nl - di) - dt, "passive", False, terms)
    ts = _finite("target_strength", target_strength)
    terms["target_strength"] = ts
    return SonarTerms(sl + ts - (nl - di) - dt, "active", True, terms)


def _as_terms(fom):
    if isinstance(fom, SonarTerms):
        return fom
    return SonarTerms(_finite("fom", fom), "given", False, {})


def _check_loss(loss):
    if not isinstance(loss, xr.DataArray):
        raise ArgumentError("loss", f"expected an xarray.DataArray, got {type(loss).__name__}")
    for dim in ("depth", "range"):
        if dim not in loss.dims:
            raise ArgumentError("loss", f"needs a {dim!r} dimension, has {tuple(loss.dims)}")
    return loss.transpose("depth", "range", ...)


def _unreached(loss):
    """Cells no beam reaches (from the ``beam_count`` coordinate), or None."""
    if "beam_count" in loss.coords:
        return loss.coords["beam_count"] == 0
    return None


def signal_excess(loss, fom):
    """Signal excess SE = FOM - TL (or FOM - 2 TL, active), dB, on the loss field's grid.

    Parameters
    ----------
    loss : xarray.DataArray
        One-way transmission loss, dB re 1 m, dims ``("depth", "range")`` (m, m); an
        optional ``beam_count`` coordinate (0: no beam reaches the cell, SE there is NaN).
    fom : SonarTerms or float
        From :func:`figure_of_merit`, or a passive figure of merit in dB.

    Returns
    -------
    xarray.DataArray
        ``signal_excess``, dB; attributes ``long_name``, ``units``, ``equation``,
        ``references``, ``figure_of_merit``, ``seaprofile_version``, provenance.

    Notes
    -----
    Urick (1983), ch. 2: SE = FOM - TL (passive), SE = FOM - 2 TL (active monostatic);
    detection where SE >= 0. Cells where the loss is NaN or infinite (no energy) get NaN
    or -inf signal excess and never count as detected.
    """
    loss = _check_loss(loss)
    terms = _as_terms(fom)
    factor = 2.0 if terms.two_way else 1.0
    se = terms.figure_of_merit - factor * loss
    unreached = _unreached(loss)
    if unreached is not None:
        se = se.where(~unreached)
    se.name = "signal_excess"
    attrs = _cf.base_attrs(**{k: v for k, v in loss.attrs.items() if k in _KEPT})
    attrs = _cf.record_step(
        attrs,
        "signal_excess",
        figure_of_merit=terms.figure_of_merit,
        mode=terms.mode,
        two_way=terms.two_way,
        **terms.terms,
    )
    attrs.update(
        {
            "long_name": "signal excess (sonar equation)",
            "units": "dB",
            "equation": terms.equation,
            "references": REFERENCES,
            "figure_of_merit": terms.figure_of_merit,
            "sonar_equation_mode": terms.mode,
            "seaprofile_version": __version__,
            "comment": "detection where signal_excess >= 0",
        }
    )
    se.attrs = attrs
    return se


_KEPT = ("processing_steps", "history", "source_depth", "frequency", "input")


def shadow_zones(loss, fom):
    """Cells out of reach: no beam arrives (``beam_count == 0``) or SE < 0, as a boolean mask.

    Parameters
    ----------
    loss : xarray.DataArray
        Transmission loss, dB re 1 m, dims ``("depth", "range")``; optional ``beam_count``.
    fom : SonarTerms or float
        Figure of merit (dB), as for :func:`signal_excess`.

    Returns
    -------
    xarray.DataArray of bool
        ``shadow``: True where no beam reaches the cell, where the loss is NaN, or where
        TL > FOM (2 TL > FOM active).
    """
    se = signal_excess(loss, fom)
    mask = ~(se >= 0)  # NaN (unreached or no loss value) counts as shadow
    mask.name = "shadow"
    mask.attrs = {
        "long_name": "shadow zone: no beam reaches the cell or the loss exceeds the figure "
        "of merit",
        "units": "1",
    }
    return mask


def _crossing(r0, s0, r1, s1):
    """Range where SE crosses 0 between two samples: linear when both are finite."""
    with np.errstate(invalid="ignore", divide="ignore"):
        t = s0 / (s0 - s1)
        x = r0 + t * (r1 - r0)
    ok = np.isfinite(s0) & np.isfinite(s1) & np.isfinite(x)
    return np.where(ok, x, r1)


def _intervals_array(ranges, se):
    """Starts, ends and which depth row, of every run of SE >= 0 (vectorised over depths).

    A run that starts at the first sample starts at the first range (grid edge); one that
    ends at the last sample ends at the last range and is flagged as cut by the grid.
    Inside the grid, edges are interpolated linearly in range between the samples either
    side where both are finite (else the first detected / first undetected sample).
    """
    det = np.asarray(se >= 0)
    nz, nr = det.shape
    padded = np.zeros((nz, nr + 2), dtype=np.int8)
    padded[:, 1:-1] = det
    d = np.diff(padded, axis=1)
    zs, i_start = np.nonzero(d == 1)  # first detected sample of a run
    ze, i_stop = np.nonzero(d == -1)  # first undetected sample after it (nr: grid end)
    # np.nonzero walks rows in order, so starts and stops pair up
    assert np.array_equal(zs, ze)
    start = ranges[i_start].astype(float)
    inner = i_start > 0
    if inner.any():
        j = i_start[inner]
        start[inner] = _crossing(ranges[j - 1], se[zs[inner], j - 1], ranges[j], se[zs[inner], j])
        # a NaN/-inf neighbour: the run starts at the detected sample itself
        bad = ~(np.isfinite(se[zs[inner], j - 1]))
        start[inner] = np.where(bad, ranges[j], start[inner])
    stop = np.empty(i_stop.size, dtype=float)
    at_edge = i_stop == nr
    stop[at_edge] = ranges[-1]
    k = i_stop[~at_edge]
    if k.size:
        zk = zs[~at_edge]
        s1 = se[zk, k]
        c = _crossing(ranges[k - 1], se[zk, k - 1], ranges[k], s1)
        stop[~at_edge] = np.where(np.isfinite(s1), c, ranges[k])
    return zs, start, stop, at_edge


def detection_intervals(signal_excess):
    """Range intervals [start, end) where SE >= 0, for each receiver depth.

    Parameters
    ----------
    signal_excess : xarray.DataArray
        From :func:`signal_excess`: dB, dims ``("depth", "range")`` (m, m).

    Returns
    -------
    list of dict
        One per depth, in the grid's order: ``{"depth": m, "intervals": [[start, end], ...]
        (m), "reaches_grid_end": bool}``. Convergence zones show as separate intervals.

    Notes
    -----
    Edges inside the grid are where SE crosses 0, interpolated linearly in range between
    the two samples either side (both finite); next to a NaN or -inf sample (no beam) the
    edge is the detected/undetected sample itself. A run detected at the first range
    sample starts there (the grid's edge, not necessarily the edge of detection); one
    detected at the last sample ends at the last range with ``reaches_grid_end`` True:
    detection may go on beyond the grid.
    """
    se = _check_loss(signal_excess)
    ranges = np.asarray(se["range"].values, dtype=float)
    depths = np.asarray(se["depth"].values, dtype=float)
    values = np.asarray(se.values, dtype=float)
    zs, start, stop, at_edge = _intervals_array(ranges, values)
    out = [{"depth": float(z), "intervals": [], "reaches_grid_end": False} for z in depths]
    for z, a, b, e in zip(zs.tolist(), start.tolist(), stop.tolist(), at_edge.tolist()):
        out[z]["intervals"].append([a, b])
        out[z]["reaches_grid_end"] = out[z]["reaches_grid_end"] or bool(e)
    return out


def first_shadow_range(loss, fom):
    """Per depth, the first range (m) where a shadow starts after detection, else NaN.

    Parameters
    ----------
    loss : xarray.DataArray
        Transmission loss, dB re 1 m, dims ``("depth", "range")``; optional ``beam_count``.
    fom : SonarTerms or float
        Figure of merit (dB), as for :func:`signal_excess`.

    Returns
    -------
    xarray.DataArray
        ``first_shadow_range``, m, on ``depth``: the end of the first detection interval
        at that depth (the range at which the target is first lost going outward); NaN where
        nothing is detected at that depth or detection reaches the end of the grid.
    """
    se = signal_excess(loss, fom)
    return _first_shadow(detection_intervals(se), se["depth"])


def _first_shadow(rows, depth):
    values = np.full(len(rows), np.nan)
    for i, row in enumerate(rows):
        iv = row["intervals"]
        if iv and not (len(iv) == 1 and row["reaches_grid_end"]):
            values[i] = iv[0][1]
    return xr.DataArray(
        values,
        dims=("depth",),
        coords={"depth": depth},
        name="first_shadow_range",
        attrs={
            "long_name": "range at which detection is first lost, going outward",
            "units": "m",
        },
    )


@dataclass
class Coverage:
    """A detection coverage: signal excess, shadow mask, intervals, and how to show them.

    Attributes
    ----------
    signal_excess : xarray.DataArray
        dB, dims ``("depth", "range")``.
    shadow : xarray.DataArray
        bool, True where no detection (see :func:`shadow_zones`).
    intervals : list of dict
        From :func:`detection_intervals`.
    first_shadow : xarray.DataArray
        From :func:`first_shadow_range`, m.
    terms : SonarTerms
        The sonar equation used.
    """

    signal_excess: xr.DataArray
    shadow: xr.DataArray
    intervals: list
    first_shadow: xr.DataArray
    terms: SonarTerms

    def max_detection_range(self):
        """Per depth, the far end of the farthest detection interval, m (NaN: none)."""
        return [r["intervals"][-1][1] if r["intervals"] else math.nan for r in self.intervals]

    def to_dataset(self):
        """The coverage as one CF-style Dataset (product ``"coverage"``)."""
        se = self.signal_excess
        ds = xr.Dataset(
            {
                "signal_excess": se,
                "detected": (se >= 0).assign_attrs(
                    long_name="detected (signal excess >= 0)", units="1"
                ),
                "first_shadow_range": self.first_shadow,
                "max_detection_range": xr.DataArray(
                    np.asarray(self.max_detection_range(), dtype=float),
                    dims=("depth",),
                    attrs={"long_name": "farthest detection range at this depth", "units": "m"},
                ),
            }
        )
        ds["detected"] = ds["detected"].astype(np.int8)
        attrs = {k: v for k, v in se.attrs.items() if k not in ("long_name", "units")}
        attrs["product"] = "coverage"
        attrs["detection_intervals"] = json.dumps(self.intervals)
        attrs["caution"] = CAUTION
        ds.attrs = attrs
        return ds

    def to_dict(self):
        """JSON-ready summary: sonar equation, and per depth the intervals (m)."""
        return {
            "sonar_equation": self.terms.to_dict(),
            "depths": [
                {
                    "depth_m": r["depth"],
                    "detection_intervals_m": r["intervals"],
                    "reaches_grid_end": r["reaches_grid_end"],
                    "max_detection_range_m": m,
                    "first_shadow_range_m": float(f),
                }
                for r, m, f in zip(
                    self.intervals, self.max_detection_range(), self.first_shadow.values
                )
            ],
            "range_grid_m": [
                float(self.signal_excess["range"].min()),
                float(self.signal_excess["range"].max()),
            ],
            "caution": CAUTION,
        }

    def to_json(self, **kwargs):
        from ..cli._common import _clean  # NaN -> null

        return json.dumps(_clean(self.to_dict()), **kwargs)

    def to_text(self):
        """Plain text for people: the equation, then one line per receiver depth."""
        t = self.terms
        lines = [f"sonar equation: {t.equation}"]
        if t.terms:
            lines.append(
                "terms: " + ", ".join(f"{k.replace('_', ' ')} {v:g} dB" for k, v in t.terms.items())
            )
        lines.append(f"figure of merit: {t.figure_of_merit:.1f} dB")
        r = self.signal_excess["range"]
        lines.append(
            f"range grid: {float(r.min()) / 1000:g} to {float(r.max()) / 1000:g} km; "
            "detection where signal excess >= 0"
        )
        lines.append("")
        rows = []
        for row, far in zip(self.intervals, self.max_detection_range()):
            if row["intervals"]:
                text = ", ".join(f"{a / 1000:.2f}-{b / 1000:.2f}" for a, b in row["intervals"])
                if row["reaches_grid_end"]:
                    text += " (to the grid's end)"
                far_text = f"{far / 1000:.2f}"
            else:
                text, far_text = "none", "-"
            rows.append((f"{row['depth']:g}", far_text, text))
        head = ("receiver depth (m)", "farthest (km)", "detection ranges (km)")
        widths = [
            max(len(h), *(len(x[i]) for x in rows)) if rows else len(h) for i, h in enumerate(head)
        ]
        lines.append("  ".join(h.ljust(w) for h, w in zip(head, widths)).rstrip())
        lines.append("  ".join("-" * w for w in widths))
        for x in rows:
            lines.append(f"{x[0].rjust(widths[0])}  {x[1].rjust(widths[1])}  {x[2]}")
        lines.append("")
        lines.append(f"Caution: {CAUTION}")
        return "\n".join(lines)

    def __str__(self):
        return self.to_text()


def coverage(loss, fom):
    """Detection coverage of a loss field for one sonar: everything in one record.

    Parameters
    ----------
    loss : xarray.DataArray
        Transmission loss, dB re 1 m, dims ``("depth", "range")`` (m, m); optional
        ``beam_count`` coordinate.
    fom : SonarTerms or float
        From :func:`figure_of_merit`, or a passive figure of merit in dB.

    Returns
    -------
    Coverage
        ``str()`` is plain text, ``.to_json()`` JSON, ``.to_dataset()`` a Dataset.
    """
    terms = _as_terms(fom)
    se = signal_excess(loss, terms)
    shadow = ~(se >= 0)
    shadow.name = "shadow"
    rows = detection_intervals(se)
    return Coverage(se, shadow, rows, _first_shadow(rows, se["depth"]), terms)
