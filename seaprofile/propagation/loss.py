"""Transmission-loss field of a point source by geometric-beam summation over a ray fan.

Layers: :mod:`._loss_kernels` (numba, the beam sum) -> :func:`transmission_loss` (checks,
the fan, reflection coefficients, absorption, the DataArray). Not for navigation on its own:
verify against the governing hydrographic standards, local regulations and licensed
practice.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from .. import _cf, _progress
from .._validate import as_float_array
from .._version import __version__
from ..io.errors import ArgumentError
from . import _loss_kernels as _k
from .codes import AT_BOTTOM, AT_SURFACE
from .environment import Environment
from .rays import trace_fan

__all__ = ["MODES", "DEFAULT_TEMPERATURE", "DEFAULT_SALINITY", "transmission_loss"]

#: Summation modes and their kernel codes.
MODES = {"coherent": 0, "semicoherent": 1, "incoherent": 2}
#: Temperature (degC) and practical salinity used for the absorption when the environment
#: carries none (common practice, no source: a temperate mid-water value).
DEFAULT_TEMPERATURE = 10.0
DEFAULT_SALINITY = 35.0
_MAX_CELLS = 5_000_000
#: Beam summations of at least this many beams x depths x ranges show a progress bar when
#: asked (``progress=True`` on a terminal), summed in groups of beams; smaller ones stay
#: one compiled call. The benchmark field (2000 beams, 500 x 1000 cells, ~1e9) takes about
#: a second; this threshold about a tenth of that work.
PROGRESS_WORK = 100_000_000
_METHOD = (
    "geometric Gaussian-beam summation (geometric-beam variant of Porter & Bucker 1987, "
    "J. Acoust. Soc. Am. 82, 1349-1359, doi:10.1121/1.395269)"
)


def _grid(name, values, low, high):
    a = as_float_array(name, values).ravel()
    if a.size == 0 or not np.all(np.isfinite(a)):
        raise ArgumentError(name, "must be finite numbers (m)")
    if np.any(np.diff(a) <= 0):
        raise ArgumentError(name, "must be strictly increasing (m)")
    if a[0] < low or a[-1] > high:
        raise ArgumentError(name, f"must lie within {low:g}..{high:g} m")
    return a


def _positive(name, value, unit):
    v = as_float_array(name, value)
    if v.ndim != 0 or not np.isfinite(v) or v <= 0:
        raise ArgumentError(name, f"must be one positive number ({unit})")
    return float(v)


def _absorption_profile(environment, frequency, absorption):
    """Absorption alpha(z), dB/m, at depths z (m), and the attributes saying which water.

    With ``environment.water`` (the profile's temperature and salinity) alpha is evaluated
    at each of its levels; otherwise at the sound-speed nodes with
    :data:`DEFAULT_TEMPERATURE` and :data:`DEFAULT_SALINITY`. One array call of the
    formula either way (no loop over levels).
    """
    water = environment.water
    if water is None:
        zn = np.asarray(environment.depth, dtype=np.float64)
        t = np.full_like(zn, DEFAULT_TEMPERATURE)
        s = np.full_like(zn, DEFAULT_SALINITY)
        attrs = {
            "absorption_water": "assumed (the environment carries no temperature or "
            f"salinity): {DEFAULT_TEMPERATURE:g} degC, salinity {DEFAULT_SALINITY:g} at "
            "every depth",
            "absorption_temperature": DEFAULT_TEMPERATURE,
            "absorption_salinity": DEFAULT_SALINITY,
        }
    else:
        zn = np.asarray(water.depth, dtype=np.float64)
        t = np.asarray(water.temperature, dtype=np.float64)
        s = np.asarray(water.salinity, dtype=np.float64)
        attrs = {
            "absorption_water": "measured: temperature and salinity of " + water.describe(),
            "absorption_temperature": np.array([t.min(), t.max()]),
            "absorption_salinity": np.array([s.min(), s.max()]),
        }
    if absorption is None:
        attrs["absorption_water"] = "not used (no absorption)"
        return zn, np.zeros_like(zn), attrs
    from ..seawater.absorption import absorption as _absorption

    # one absorption (at the centre frequency) for a band
    alpha = np.asarray(_absorption(frequency, t, s, zn, equation=absorption), dtype=np.float64)
    return zn, alpha / 1000.0, attrs


def _beam_sum(rays, grid, min_width, *, progress=False):
    """Intensity (nf, nz, nr) and beam count (nz, nr) of the beam sum, in groups of rays.

    ``rays``: the per-ray arrays of :func:`._loss_kernels._beam_add` (range .. launch
    angle, rad); ``grid``: its scalars and grids (dtheta rad, c0 m/s, source depth m,
    absorption depths m and dB/m, ranges m, depths m, angular frequencies rad/s, mode
    code); ``min_width``: least beam width, m. With a bar (``progress`` on a terminal
    and beams x cells >= :data:`PROGRESS_WORK`) the rays are added in a few consecutive
    groups (:class:`seaprofile._progress.Pieces`), in launch order: the sums are the same.
    """
    nray = rays[0].shape[0]
    r, z, omegas = grid[5], grid[6], grid[7]
    shape = (omegas.size, z.size, r.size)
    # the complex field is only summed in the coherent mode (code 0)
    field = np.zeros(shape if grid[8] == 0 else (0, 0, 0), dtype=np.complex128)
    inten = np.zeros(shape, dtype=np.float64)
    count = np.zeros(shape[1:], dtype=np.int32)
    large = nray * z.size * r.size >= PROGRESS_WORK
    # a serial kernel: a call costs microseconds, so the bar keeps equal tenths
    with _progress.pieces(
        nray, progress=progress, large=large, desc="summing beams", unit="beam", min_seconds=0.0
    ) as groups:
        for part in groups.split(nray):
            _k._beam_add(part.start, part.stop, *rays, *grid, min_width, field, inten, count)
    _k._beam_power(field, inten, grid[8])
    return inten, count


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
    absorption="francois_garrison1982",
    band=None,
    band_frequencies=5,
    progress=False,
):
    """Transmission loss re 1 m on a (depth, range) grid, from a fan of geometric beams.

    Parameters
    ----------
    environment : Environment
        Sound speed, surface, seabed (None: a rigid lossless bottom, R = +1) and bottom.
    source_depth : float
        Source depth, m (0 .. bottom).
    frequency : float
        Frequency, Hz (> 0); the centre frequency when ``band`` is given.
    ranges : array_like
        Receiver ranges, m, > 0, strictly increasing.
    depths : array_like
        Receiver depths, m, 0 .. bottom, strictly increasing.
    mode : {"coherent", "semicoherent", "incoherent"}
        How the beams add (see Notes).
    beams : int
        Number of rays (beams) launched evenly over ``angles`` (>= 10).
    angles : (float, float)
        Lowest and highest launch angle, degrees from horizontal, positive down.
    absorption : str or None
        A key of :data:`seaprofile.seawater.absorption.ABSORPTION`, or None for no
        volume absorption.
    band : (float, float), optional
        ``(f_low, f_high)``, Hz: average the intensity over ``band_frequencies``
        log-spaced frequencies of the band instead of using ``frequency`` alone.
    band_frequencies : int
        Number of frequencies across ``band`` (>= 2).
    progress : bool
        Show progress bars on stderr, only when stderr is a terminal
        (:mod:`seaprofile._progress`): one for the ray fan when it is large (see
        :func:`~seaprofile.propagation.rays.trace_fan`) and one for the beam summation
        when beams x depths x ranges >= :data:`PROGRESS_WORK`. The beams are then summed
        in a few consecutive groups (:class:`seaprofile._progress.Pieces`), in launch
        order as in one pass, so every cell is the same to the bit with or without bars.

    Returns
    -------
    xr.DataArray
        ``transmission_loss`` (dB, dims ``("depth", "range")``; inf where no beam reaches)
        with the 2-D coordinate ``beam_count`` (int32: beams contributing with a Gaussian
        weight above exp(-4.5); 0 = no ray coverage) and provenance attributes.

    Notes
    -----
    Each ray of :func:`~seaprofile.propagation.rays.trace_fan` carries the dynamic-ray
    width q (m/rad, q(0) = 0, dq/ds(0) = 1). Energy conservation in a ray tube with the
    source normalised to |p| = 1 at 1 m gives the ray amplitude (Jensen, Kuperman, Porter
    & Schmidt 2011, *Computational Ocean Acoustics*, 2nd ed., ch. 3)

        A = sqrt( c(s) cos(theta0) / (c0 r |q|) ).

    Each ray is widened to a Gaussian beam of standard deviation
    sigma = max(|q| dtheta0, lambda / 2) normal to the ray (dtheta0 the launch-angle
    spacing); a receiver at normal distance n from the ray gets

        p_j = A |q| dtheta0 / (sigma sqrt(2 pi)) exp(-n^2 / (2 sigma^2))
              * prod(R_k) * exp(i omega tau - i m pi / 2) * 10^(-a / 20),

    with tau the travel time projected to the receiver (tau + dz sin(theta) / c), R_k the
    plane-wave reflection coefficient of each surface (:meth:`Surface.reflection_coefficient`,
    -1 when smooth) and bottom (:meth:`Seabed.reflection_coefficient`, Rayleigh) reflection
    so far, m the number of caustics (sign changes of q) so far and a the absorption
    (dB) integrated along the path (alpha at each segment's middle depth, path length c dt).
    Gaussians spaced by their own width sum to one (Poisson summation), so away from
    caustics the sum reproduces the ray field; the lower bound on sigma keeps the field
    finite at caustics and shadow edges. This is the geometric-beam variant of the
    Gaussian beams of Porter & Bucker (1987), J. Acoust. Soc. Am. 82, 1349-1359,
    doi:10.1121/1.395269 (their beam widths come from a complex q; ours from the ray tube).

    Modes: coherent ``TL = -20 log10 |sum p_j|``; incoherent ``TL = -10 log10 sum |p_j|^2``;
    semicoherent: the incoherent sum with each ray weighted by the Lloyd-mirror factor of
    the source and its surface image, ``2 sin^2(k z_s sin theta0)`` (mean 1 over angle),
    i.e. the near-surface source interference kept, the phases between distinct paths
    taken as random.

    Absorption: alpha(z) of the chosen formula (default Francois & Garrison 1982, J. Acoust.
    Soc. Am. 72, 896-907 and 1879-1890) at the levels of ``environment.water`` with the
    profile's own temperature and salinity when the environment carries them (a profile
    with T and S), else at the sound-speed nodes with :data:`DEFAULT_TEMPERATURE` and
    :data:`DEFAULT_SALINITY`; pH 8; linear in depth between levels. The attribute
    ``absorption_water`` says which water was used.

    Cells below the local bottom (``environment.bottom_at(range)``) are in the seabed:
    loss inf and ``beam_count`` 0 there.

    Validity: high frequency (many wavelengths per water depth and per layer); beams miss
    diffraction into shadow zones and the seabed's lateral waves; steep rays
    (cos theta < 1e-6) are skipped. Range-dependent environments use the integrating
    tracer's record in the same way.
    """
    if not isinstance(environment, Environment):
        raise ArgumentError("environment", "must be a seaprofile Environment")
    f0 = _positive("frequency", frequency, "Hz")
    if mode not in MODES:
        raise ArgumentError("mode", f"must be one of {', '.join(MODES)}, got {mode!r}")
    nb = as_float_array("beams", beams)
    if nb.ndim != 0 or not np.isfinite(nb) or nb < 10 or nb != np.floor(nb):
        raise ArgumentError("beams", "must be a whole number >= 10")
    nb = int(nb)
    try:
        lo, hi = (float(v) for v in angles)
    except (TypeError, ValueError):
        raise ArgumentError("angles", "must be (low, high) in degrees") from None
    if not (-90.0 < lo < hi < 90.0):
        raise ArgumentError("angles", "must satisfy -90 < low < high < 90 degrees")
    bottom = float(np.max(environment.bathymetry.depth_at(np.asarray([0.0]))))
    deepest = float(environment.bathymetry.deepest)
    r = _grid("ranges", ranges, 0.0, np.inf)
    if r[0] <= 0:
        raise ArgumentError("ranges", "must be > 0 m")
    z = _grid("depths", depths, 0.0, deepest)
    if r.size * z.size > _MAX_CELLS:
        raise ArgumentError(
            "ranges", f"{z.size} depths x {r.size} ranges exceeds {_MAX_CELLS} cells"
        )
    zs = as_float_array("source_depth", source_depth)
    if zs.ndim != 0 or not np.isfinite(zs) or not 0.0 <= float(zs) <= bottom:
        raise ArgumentError("source_depth", f"must be one depth within 0..{bottom:g} m")
    zs = float(zs)
    if band is None:
        freqs = np.array([f0])
    else:
        try:
            fl, fh = (float(v) for v in band)
        except (TypeError, ValueError):
            raise ArgumentError("band", "must be (f_low, f_high) in Hz") from None
        if not (0 < fl < fh and np.isfinite(fh)):
            raise ArgumentError("band", "must satisfy 0 < f_low < f_high (Hz)")
        nf = int(band_frequencies)
        if nf < 2:
            raise ArgumentError("band_frequencies", "must be >= 2")
        freqs = np.geomspace(fl, fh, nf)

    launch = np.linspace(lo, hi, nb)
    dtheta = np.deg2rad(launch[1] - launch[0])
    rmax = float(r[-1]) * (1.0 + 1e-6) + 1e-3
    fan = trace_fan(environment, zs, launch, rmax, progress=progress)
    tube = fan["tube_width"].values
    if not np.any(np.isfinite(tube[:, 1:])):
        raise ArgumentError(
            "environment", "the ray tracer gave no tube width (q) for this environment"
        )
    c0 = float(environment.sound_speed_at(zs))

    # reflection coefficients, per ray and reflection, as numpy arrays (complex)
    boundary = fan["reflection_boundary"].values
    graze = np.nan_to_num(fan["grazing_angle"].values)
    refl = np.ones(boundary.shape, dtype=np.complex128)
    surf = boundary == AT_SURFACE
    if surf.any():
        refl[surf] = environment.surface.reflection_coefficient(
            graze[surf], f0, float(environment.sound_speed_at(0.0))
        )
    bot = boundary == AT_BOTTOM
    seabed = environment.seabed
    if bot.any() and seabed is not None:
        refl[bot] = seabed.reflection_coefficient(
            graze[bot], water_sound_speed=float(environment.sound_speed_at(bottom))
        )

    zn, alpha, water_attrs = _absorption_profile(environment, f0, absorption)

    wavelength = c0 / float(np.max(freqs))
    rays = (
        fan["range"].values,
        fan["depth"].values,
        fan["travel_time"].values,
        np.deg2rad(fan["angle"].values),
        fan["sound_speed"].values,
        np.nan_to_num(tube),
        fan["point_kind"].values,
        fan["point_count"].values.astype(np.int64),
        refl,
        np.deg2rad(launch),
    )
    grid = (float(dtheta), c0, zs, zn, alpha, r, z, 2.0 * np.pi * freqs, MODES[mode])
    inten, count = _beam_sum(rays, grid, 0.5 * wavelength, progress=progress)
    mean = inten.mean(axis=0)
    # cells below the local bottom are in the seabed, not in the water: no field there
    below = z[:, None] > np.asarray(environment.bottom_at(r), dtype=np.float64)[None, :]
    mean[below] = 0.0
    count[below] = 0
    with np.errstate(divide="ignore"):
        tl = -10.0 * np.log10(mean)
    attrs = dict(
        _cf.base_attrs(
            **{
                k: environment.attrs[k]
                for k in ("processing_steps", "history")
                if k in environment.attrs
            }
        )
    )
    attrs = _cf.record_step(
        attrs,
        "transmission_loss",
        method="geometric_gaussian_beams",
        mode=mode,
        frequency_hz=f0,
        beams=nb,
        source_depth_m=zs,
    )
    attrs.update(
        product="loss_field",
        title="transmission loss field",
        method=_METHOD,
        references="Porter, M.B. & Bucker, H.P. (1987), J. Acoust. Soc. Am. 82(4), 1349-1359, "
        "doi:10.1121/1.395269",
        mode=mode,
        frequency=f0,
        beams=nb,
        launch_angle_min=lo,
        launch_angle_max=hi,
        source_depth=zs,
        absorption="none" if absorption is None else str(absorption),
        **water_attrs,
        bottom_reflection="rigid (R=+1, seabed unknown)" if seabed is None else "rayleigh",
        seaprofile_version=__version__,
        caution=_cf.CAUTION,
        **environment.provenance_attrs(),
    )
    if band is not None:
        attrs["band_low"] = float(freqs[0])
        attrs["band_high"] = float(freqs[-1])
        attrs["band_frequencies"] = int(freqs.size)
    da = xr.DataArray(
        tl,
        dims=("depth", "range"),
        coords={
            "depth": ("depth", z, _cf.attrs_for("depth")),
            "range": ("range", r, _cf.attrs_for("range")),
            "beam_count": (
                ("depth", "range"),
                count.astype(np.int32),
                {"long_name": "number of beams contributing", "units": "1"},
            ),
        },
        name="transmission_loss",
        attrs={**attrs, "units": "dB", "long_name": "transmission loss re 1 m"},
    )
    return da
