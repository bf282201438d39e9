"""Transmission-loss field by Gaussian-beam summation over a traced ray fan.

Not for navigation on its own: verify results against the governing hydrographic standard,
local regulations and licensed practice.
"""

from __future__ import annotations

import warnings

import numba
import numpy as np
import xarray as xr

from .. import _cf
from .._validate import as_float_array
from ..io.errors import ArgumentError
from . import integrate, kernels
from ._loss_kernels import _beam_sum
from .codes import DEFAULT_MAX_BOUNCES, FAN_POINT_BYTES, check_memory
from .environment import Environment

__all__ = ["MODES", "transmission_loss"]

#: summation modes -> kernel code
MODES = {"coherent": 0, "incoherent": 1, "semicoherent": 2}

METHOD = "Gaussian beams, Porter & Bucker 1987"
REFERENCE = (
    "Porter, M.B. & Bucker, H.P. (1987), Gaussian beam tracing for computing ocean acoustic "
    "fields, J. Acoust. Soc. Am. 82(4), 1349-1359, doi:10.1121/1.395269; Jensen, F.B., "
    "Kuperman, W.A., Porter, M.B. & Schmidt, H. (2011), Computational Ocean Acoustics, 2nd "
    "ed., Springer, ch. 3"
)


def _grid(name, values):
    v = as_float_array(name, values).ravel()
    if v.size == 0 or not np.all(np.isfinite(v)) or np.any(np.diff(v) <= 0) or v[0] < 0:
        raise ArgumentError(name, "must be finite, >= 0 and strictly increasing (m)")
    return v


def _absorption_table(environment, frequency, absorption, temperature, salinity, ph):
    z = np.asarray(environment.depth, dtype=np.float64)
    if absorption is None:
        return z, np.zeros_like(z)
    from ..seawater.absorption import absorption as absorption_of

    t = np.broadcast_to(np.asarray(temperature, dtype=np.float64), z.shape)
    s = np.broadcast_to(np.asarray(salinity, dtype=np.float64), z.shape)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        a = absorption_of(frequency, t, s, z, ph=ph, equation=absorption)
    return z, np.asarray(a, dtype=np.float64) / 1000.0  # dB/km -> dB/m


def _trace(environment, zs, angles, grid_r, max_bounces):
    if environment.is_range_dependent:
        step = float(np.min(np.diff(np.concatenate([[0.0], grid_r]))))
        ds = integrate.trace_fan_integrated(
            environment, zs, angles, float(grid_r[-1]), range_step=step, max_bounces=max_bounces
        )
        return {k: ds[k].values for k in ds.variables}
    zn, cn = environment.layers()
    ranges = grid_r if grid_r[0] == 0.0 else np.concatenate([[0.0], grid_r])
    return kernels.fan_samples(zn, cn, zs, angles, ranges, max_bounces)


def _reflection_coefficients(environment, out, frequency):
    boundary = np.asarray(out["reflection_boundary"])
    rr = np.asarray(out["reflection_range"], dtype=np.float64)
    g = np.nan_to_num(np.asarray(out["grazing_angle"], dtype=np.float64))
    g = np.clip(g, 0.0, 90.0)
    c_top = float(environment.sound_speed_at(0.0))
    rs = np.asarray(environment.surface.reflection_coefficient(g, frequency, c_top), complex)
    rs = np.broadcast_to(rs, g.shape)
    if environment.seabed is None:
        rb = np.ones(g.shape, complex)
    else:
        # water at the bottom: the speed at the range-0 bottom depth (one value)
        cb = float(environment.sound_speed_at(environment.bottom_depth))
        rb = np.asarray(environment.seabed.reflection_coefficient(g, water_sound_speed=cb), complex)
    coef = np.where(boundary == 0, rs, np.where(boundary == 1, rb, 1.0 + 0j))
    rr = np.where(boundary >= 0, rr, np.nan)
    return rr, np.ascontiguousarray(coef.real), np.ascontiguousarray(coef.imag)


def transmission_loss(
    environment,
    source_depth,
    frequency,
    *,
    ranges,
    depths,
    mode="coherent",
    beams=1000,
    angles=(-80.0, 80.0),
    band=None,
    band_points=9,
    absorption="francois_garrison1982",
    temperature=4.0,
    salinity=35.0,
    ph=8.0,
    max_bounces=DEFAULT_MAX_BOUNCES,
):
    """Transmission loss (dB re 1 m) on a depth x range grid by Gaussian-beam summation.

    Parameters
    ----------
    environment : Environment
        Sound speed, surface, seabed and bathymetry. Range-dependent environments are
        traced by the integrator. A seabed of None is taken as rigid and lossless (R = 1),
        with a warning.
    source_depth : float
        Source depth, m.
    frequency : float
        Frequency, Hz (> 0). With ``band`` it is recorded but the band is used.
    ranges : array_like
        Receiver ranges, m (>= 0, increasing).
    depths : array_like
        Receiver depths, m (>= 0, increasing).
    mode : {"coherent", "semicoherent", "incoherent"}
        ``coherent``: |sum of beam pressures|^2 (phases from travel time, caustics and
        reflection coefficients). ``incoherent``: sum of |beam pressure|^2 (phases
        dropped). ``semicoherent``: the incoherent sum with each beam weighted by the
        Lloyd's-mirror source pattern 2 sin^2(k z_s sin theta_0), which keeps the
        surface-image interference at the source and averages to the incoherent result
        (this weighting is written from memory of the beam-summation literature; no
        published check value is used for it).
    beams : int
        Number of beams (rays), evenly spaced in launch angle over ``angles``.
    angles : (float, float)
        Lowest and highest launch angle, degrees from horizontal, positive down.
    band : (float, float), optional
        Broadband: the intensity is averaged over ``band_points`` frequencies spaced
        evenly in log frequency from ``band[0]`` to ``band[1]`` (Hz).
    band_points : int
        Frequencies in the band.
    absorption : str or None
        Key of :data:`seaprofile.seawater.absorption.ABSORPTION`, or None for none.
    temperature, salinity, ph : float or array_like
        Water for the absorption, degC, practical salinity, pH; scalars or arrays on the
        environment's node depths (``environment.depth``). Default 4 degC, 35, pH 8
        (a deep-water value; common practice, no source).
    max_bounces : int
        Rays end after this many reflections.

    Returns
    -------
    xr.DataArray
        ``transmission_loss`` (dims ``depth``, ``range``; dB re 1 m), NaN below the seabed
        and where no beam reaches; 2-D coordinate ``beam_count`` (int32): beams within
        three beam widths of the cell (0: no ray coverage, a shadow zone).

    Notes
    -----
    Geometric-width Gaussian beams (Porter & Bucker 1987, JASA 82, 1349,
    doi:10.1121/1.395269; Jensen et al. 2011, ch. 3). Each ray j launched at theta_0 with
    spacing d theta carries, at arc length s, the dynamic-ray pair q (m/rad) and p; its beam
    at normal distance n from the ray is

        P_j = A_j (|q| d theta / W) / sqrt(2 pi) exp(-n^2 / (2 W^2))
              exp(i omega (tau + p n^2 / (2 q))) prod R_k exp(-i pi m / 2) 10^(-a/20)

    with the ray-tube amplitude A_j = sqrt(c cos theta_0 / (c_0 r |q|)) (pressure re the
    value at 1 m), the beam width W = max(|q| d theta, lambda), the travel time tau, m
    caustics (sign changes of q), the plane-wave reflection coefficients R_k of the surface
    and seabed at each reflection's grazing angle and a = integral of alpha(z) ds along the
    ray. Time convention exp(-i omega t). Beams are cut at 3 W. TL = -10 log10(I). Valid
    in the ray (high-frequency) approximation; not near the source (r < a few wavelengths).
    """
    if not isinstance(environment, Environment):
        raise ArgumentError("environment", "must be a seaprofile Environment")
    if mode not in MODES:
        raise ArgumentError("mode", f"must be one of {', '.join(MODES)}, got {mode!r}")
    f = float(frequency)
    if not np.isfinite(f) or f <= 0:
        raise ArgumentError("frequency", "must be a positive number (Hz)")
    grid_r = _grid("ranges", ranges)
    grid_z = _grid("depths", depths)
    nb = int(beams)
    if nb < 2:
        raise ArgumentError("beams", "must be at least 2")
    lo, hi = (float(a) for a in angles)
    if not (-90.0 <= lo < hi <= 90.0):
        raise ArgumentError("angles", "must be (low, high) within -90..90 degrees, low < high")
    zs = float(source_depth)
    if not 0.0 <= zs <= environment.bottom_depth:
        raise ArgumentError("source_depth", "must be within the water column at range 0")
    if band is None:
        freqs = np.array([f])
    else:
        fl, fh = (float(b) for b in band)
        if not (0 < fl < fh):
            raise ArgumentError("band", "must be (low, high) Hz with 0 < low < high")
        freqs = np.geomspace(fl, fh, int(band_points))
    check_memory(
        nb * float(grid_r.size + 1) * FAN_POINT_BYTES + 2 * float(grid_z.size * grid_r.size) * 40,
        "beams",
        f"{nb} beams x {grid_r.size} ranges x {grid_z.size} depths",
        "use fewer beams or a coarser grid",
    )
    if environment.seabed is None:
        warnings.warn(
            "environment has no seabed: the bottom is taken as rigid and lossless (R = 1)",
            stacklevel=2,
        )
    launch = np.linspace(lo, hi, nb)
    out = _trace(environment, zs, launch, grid_r, int(max_bounces))
    sr = np.ascontiguousarray(out["range"], dtype=np.float64)
    samples = [
        np.ascontiguousarray(out[k], dtype=np.float64)
        for k in ("depth", "travel_time", "angle", "sound_speed", "tube_width", "tube_slowness")
    ]
    samples[2] = np.deg2rad(samples[2])
    dtheta = float(np.deg2rad(launch[1] - launch[0]))
    c0 = float(environment.sound_speed_at(zs))
    bottom = np.asarray(environment.bottom_at(grid_r), dtype=np.float64)
    intensity = np.zeros((grid_z.size, grid_r.size))
    count = None
    nchunk = max(1, numba.get_num_threads())
    for fi in freqs:
        rr, rre, rim = _reflection_coefficients(environment, out, fi)
        az, av = _absorption_table(environment, fi, absorption, temperature, salinity, ph)
        inten, count = _beam_sum(
            sr, *samples, rr, rre, rim, np.deg2rad(launch), dtheta, c0, zs,
            grid_r, grid_z, bottom, az, av, 2.0 * np.pi * fi, MODES[mode], nchunk,
        )  # fmt: skip
        intensity += inten / freqs.size
    with np.errstate(divide="ignore"):
        tl = -10.0 * np.log10(intensity)
    below = grid_z[:, None] > bottom[None, :]
    tl[(count == 0) | below | ~np.isfinite(tl)] = np.nan
    count = np.where(below, 0, count).astype(np.int32)
    attrs = dict(environment.attrs or _cf.base_attrs())
    attrs.update(
        _cf.base_attrs(**{k: attrs[k] for k in ("processing_steps", "history") if k in attrs})
    )
    attrs = _cf.record_step(
        attrs,
        "transmission_loss",
        method=METHOD,
        mode=mode,
        frequency_hz=f,
        band_hz=None if band is None else [float(freqs[0]), float(freqs[-1])],
        band_points=int(freqs.size),
        beams=nb,
        angles_deg=[lo, hi],
        absorption=absorption or "none",
        source_depth_m=zs,
    )
    attrs.update(
        title="transmission loss field",
        product="loss_field",
        method=METHOD,
        references=REFERENCE,
        mode=mode,
        frequency=f,
        beams=nb,
        source_depth=zs,
        absorption=absorption or "none",
        seaprofile_version=_cf.__version__,
        **environment.provenance_attrs(),
    )
    if band is not None:
        attrs.update(band_low=float(freqs[0]), band_high=float(freqs[-1]),
                     band_points=int(freqs.size))  # fmt: skip
    if environment.seabed is None:
        attrs["seabed_assumed"] = "rigid lossless (no seabed given)"
    da = xr.DataArray(
        tl,
        dims=("depth", "range"),
        coords={
            "depth": ("depth", grid_z, _cf.attrs_for("depth")),
            "range": ("range", grid_r, _cf.attrs_for("range")),
            "beam_count": (
                ("depth", "range"),
                count,
                {"long_name": "number of beams reaching the cell", "units": "1"},
            ),
        },
        name="transmission_loss",
        attrs=attrs,
    )
    da.attrs.update(long_name="transmission loss (dB re 1 m)", units="dB")
    return da
