"""Depth uncertainty of soundings from the profile's sensor uncertainties, by beam angle.

Two ways, side by side: a seeded Monte Carlo (perturb the profile, reprocess fixed travel
times, vectorised in one compiled call) and a linearised budget (central finite-difference
sensitivities combined in quadrature). Both add the spread between published sound-speed
equations (:data:`seaprofile.seawater.soundspeed.EQUATIONS`) in quadrature, and are
reported beside the IHO S-44 TVU.
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .. import _cf
from .._validate import OutsideValidityWarning, as_float_array
from ..io.errors import ArgumentError
from ..seawater.depth import depth_from_pressure
from ..seawater.soundspeed import EQUATIONS, sound_speed, validity_mask
from ._kernels import _many_profiles_kernel
from .budget import tvu
from .compare import _angles
from .refraction import _check_profile, _check_scalar, seafloor_travel_time

__all__ = ["COVERAGE_FACTOR", "SENSORS", "depth_uncertainty"]

#: Coverage factor from 1-sigma to 95 % for a normal distribution (k = 1.96), the level of
#: the IHO S-44 TVU.
COVERAGE_FACTOR = 1.96

#: The uncertainty inputs, in order: name -> units.
SENSORS = {
    "temperature": "degC",
    "salinity": "1",
    "pressure": "dbar",
    "depth": "m",
    "sound_speed": "m s-1",
}


def _vector(name, value):
    v = np.ravel(as_float_array(name, value))
    if not np.all(np.isfinite(v)):
        raise ArgumentError(name, "has non-finite values")
    return v


def _sigma(name, value):
    v = _check_scalar(name, value)
    if v < 0:
        raise ArgumentError(name, "must not be negative (a 1-sigma uncertainty)")
    return v


class _Model:
    """Builds perturbed profiles (k, n) from offsets of each sensor (k,)."""

    def __init__(self, temperature, salinity, pressure, depth, sound_speed_, latitude, equation):
        self.speed_only = temperature is None and salinity is None
        if self.speed_only:
            if sound_speed_ is None or depth is None:
                raise ArgumentError(
                    "sound_speed",
                    "give temperature, salinity and pressure or depth, or sound_speed and depth",
                )
            self.z, self.c = _check_profile(depth, sound_speed_)
            self.p = None
            return
        if temperature is None or salinity is None:
            raise ArgumentError("salinity", "temperature and salinity go together")
        if latitude is None:
            raise ArgumentError("latitude", "is needed to convert pressure <-> depth")
        if (pressure is None) == (depth is None):
            raise ArgumentError("pressure", "give exactly one of pressure and depth")
        self.t = _vector("temperature", temperature)
        self.s = _vector("salinity", salinity)
        self.lat = _check_scalar("latitude", latitude)
        self.equation = equation
        if pressure is not None:
            self.p = _vector("pressure", pressure)
            z = np.asarray(depth_from_pressure(self.p, self.lat), dtype=float)
            self.dzdp = np.gradient(z, self.p) if z.size > 1 else np.ones(1)
        else:
            self.p = None
            z = _vector("depth", depth)
        if not (self.t.size == self.s.size == z.size):
            raise ArgumentError("salinity", "temperature, salinity and the vertical differ in size")
        self.z = z
        self.z, self.c = _check_profile(z, self.speed(self.t, self.s, 0.0, 0.0, equation))

    def speed(self, t, s, dp, dz, equation):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", OutsideValidityWarning)
            if self.p is not None:
                return np.asarray(
                    sound_speed(
                        t, s, np.maximum(self.p + dp, 0.0), latitude=self.lat, equation=equation
                    ),
                    dtype=float,
                )
            return np.asarray(
                sound_speed(
                    t, s, depth=np.maximum(self.z + dz, 0.0), latitude=self.lat, equation=equation
                ),
                dtype=float,
            )

    def profiles(self, offsets, equation=None):
        """Z, C (k, n) for offsets (k, 5) in the order of SENSORS."""
        d = offsets
        if self.speed_only:
            z = self.z[None, :] + d[:, 3:4]
            return z, self.c[None, :] + d[:, 4:5]
        eq = equation or self.equation
        t = self.t[None, :] + d[:, 0:1]
        s = self.s[None, :] + d[:, 1:2]
        if self.p is not None:
            dp = d[:, 2:3]
            z = self.z[None, :] + dp * self.dzdp[None, :]
            c = self.speed(t, s, dp, 0.0, eq)
        else:
            dz = d[:, 3:4]
            z = self.z[None, :] + dz
            c = self.speed(t, s, 0.0, dz, eq)
        return z, c + d[:, 4:5]


def _reprocess(z, c, sin_a, one_way, z0):
    k, m = z.shape[0], sin_a.size
    depth = np.empty((k, m))
    across = np.empty((k, m))
    _many_profiles_kernel(
        sin_a, one_way, z0, np.ascontiguousarray(z), np.ascontiguousarray(c), depth, across
    )
    return depth


def depth_uncertainty(
    temperature=None,
    salinity=None,
    pressure=None,
    *,
    depth=None,
    sound_speed=None,
    latitude=None,
    water_depth,
    transducer_depth=0.0,
    beam_angles=None,
    sigma_temperature=0.0,
    sigma_salinity=0.0,
    sigma_pressure=0.0,
    sigma_depth=0.0,
    sigma_sound_speed=0.0,
    equation="chen_millero1977",
    equation_spread=True,
    samples=2000,
    seed=0,
    order="1a",
):
    """Depth uncertainty by beam angle from the profile's sensor uncertainties, m.

    Parameters
    ----------
    temperature : array_like or None
        Profile temperature, degC (ITS-90); with ``salinity`` and ``pressure`` or ``depth``.
    salinity : array_like or None
        Practical salinity, dimensionless.
    pressure : array_like or None
        Sea pressure of the levels, dbar (converted to depth by UNESCO 1983 at
        ``latitude``).
    depth : array_like or None
        Depth of the levels, m, positive down (instead of ``pressure``; or with
        ``sound_speed`` for a speed-only profile).
    sound_speed : array_like or None
        Measured sound speed, m/s, for a speed-only profile (no temperature/salinity).
    latitude : float or None
        Latitude, degrees north; needed with temperature and salinity.
    water_depth : float
        Flat seafloor depth, m, positive down.
    transducer_depth : float
        Transducer depth, m, positive down.
    beam_angles : array_like or None
        Beam angles, degrees from vertical (default 0 to 75 by 1).
    sigma_temperature : float
        1-sigma temperature uncertainty, degC.
    sigma_salinity : float
        1-sigma salinity uncertainty, practical salinity.
    sigma_pressure : float
        1-sigma pressure uncertainty, dbar (with ``pressure``).
    sigma_depth : float
        1-sigma depth uncertainty of the levels, m (with ``depth``).
    sigma_sound_speed : float
        1-sigma uncertainty of the sound-speed sensor (or any speed offset), m/s.
    equation : str
        Sound-speed equation for temperature/salinity profiles (a key of ``EQUATIONS``).
    equation_spread : bool
        Add the spread between the published equations (temperature/salinity profiles).
    samples : int
        Monte Carlo draws (>= 10).
    seed : int
        Seed of the Monte Carlo generator (numpy ``default_rng``): repeatable results.
    order : str or None
        IHO S-44 order for the ``tvu`` variable beside the result.

    Returns
    -------
    xarray.Dataset
        Dimension ``beam_angle`` (degrees). 1-sigma depth uncertainties, m:
        ``depth_uncertainty_monte_carlo``, ``depth_uncertainty_linear`` (both including
        the equation spread), one ``depth_uncertainty_<input>`` per input and
        ``depth_uncertainty_equations``; ``expanded_uncertainty`` (linear x 1.96, 95 %),
        ``tvu`` (IHO S-44 at ``water_depth``, 95 %), ``depth_bias_monte_carlo`` (mean
        Monte Carlo depth minus the seafloor, m). Attributes give the model, coverage
        factor, samples, seed, provenance and the caution.

    Notes
    -----
    Model: each input's error is one offset for the whole cast (a calibration bias,
    fully correlated along the profile), normal with the given 1-sigma; the inputs are
    independent. Random noise from level to level averages down in binning and is left
    out. The beams' travel times to the flat seafloor are traced once with the nominal
    profile and held fixed; each perturbed profile reprocesses them (exact arcs,
    :func:`seaprofile.survey.beam_to_sounding`), so the spread of the depths is the
    depth uncertainty caused by the profile.

    Linearised: for each input s, the central difference
    dD/ds ~= [D(s + sigma_s) - D(s - sigma_s)] / (2 sigma_s), u_s = |dD/ds| sigma_s,
    combined u = sqrt(sum u_s^2 + u_eq^2) (JCGM 100:2008, Guide to the expression of
    uncertainty in measurement, eq. 10, uncorrelated inputs). Equation spread u_eq: the
    sample standard deviation (ddof 1) over the equations of ``EQUATIONS`` whose validity
    box holds the inputs, of the depths reprocessed with each. The Monte Carlo adds u_eq
    in quadrature to its own standard deviation (JCGM 101:2008 propagation of
    distributions). 95 %: k = 1.96 (normal distribution), the level of IHO S-44 Ed. 6.0.0
    (2020) Table 1.
    """
    model = _Model(temperature, salinity, pressure, depth, sound_speed, latitude, equation)
    z0 = _check_scalar("transducer_depth", transducer_depth)
    bottom = _check_scalar("water_depth", water_depth)
    if bottom <= z0:
        raise ArgumentError("water_depth", "must be deeper than transducer_depth (m)")
    angles = _angles(beam_angles)
    sig = np.array(
        [
            _sigma("sigma_temperature", sigma_temperature),
            _sigma("sigma_salinity", sigma_salinity),
            _sigma("sigma_pressure", sigma_pressure),
            _sigma("sigma_depth", sigma_depth),
            _sigma("sigma_sound_speed", sigma_sound_speed),
        ]
    )
    if model.speed_only and np.any(sig[:3] > 0):
        raise ArgumentError(
            "sigma_temperature",
            "a speed-only profile takes sigma_depth and sigma_sound_speed only",
        )
    if not model.speed_only and model.p is None and sig[2] > 0:
        raise ArgumentError("sigma_pressure", "needs pressure levels (use sigma_depth)")
    if not model.speed_only and model.p is not None and sig[3] > 0:
        raise ArgumentError("sigma_depth", "with pressure levels use sigma_pressure")
    n = int(samples)
    if n < 10:
        raise ArgumentError("samples", "must be at least 10")

    t, _ = seafloor_travel_time(model.z, model.c, angles, bottom, transducer_depth=z0)
    sin_a = np.ascontiguousarray(np.sin(np.radians(angles)))
    one_way = np.ascontiguousarray(0.5 * t)

    # linearised: +-sigma for each active input, all profiles in one compiled call
    active = [i for i in range(5) if sig[i] > 0]
    terms = {}
    if active:
        off = np.zeros((2 * len(active), 5))
        for j, i in enumerate(active):
            off[2 * j, i] = sig[i]
            off[2 * j + 1, i] = -sig[i]
        d = _reprocess(*model.profiles(off), sin_a, one_way, z0)
        for j, i in enumerate(active):
            terms[list(SENSORS)[i]] = np.abs(d[2 * j] - d[2 * j + 1]) / 2.0
    u_eq = np.zeros(angles.size)
    used_equations = []
    if equation_spread and not model.speed_only:
        zz, cc = [], []
        for name in EQUATIONS:
            kw = {"pressure": model.p} if model.p is not None else {"depth": model.z}
            inside = validity_mask(model.t, model.s, latitude=model.lat, equation=name, **kw)
            if not np.all(inside):
                continue
            z_e, c_e = model.profiles(np.zeros((1, 5)), equation=name)
            zz.append(z_e[0])
            cc.append(c_e[0])
            used_equations.append(name)
        if len(used_equations) >= 2:
            d = _reprocess(np.array(zz), np.array(cc), sin_a, one_way, z0)
            u_eq = np.std(d, axis=0, ddof=1)
    linear = np.sqrt(sum(v**2 for v in terms.values()) + u_eq**2)

    rng = np.random.default_rng(seed)
    draws = rng.standard_normal((n, 5)) * sig[None, :]
    d = _reprocess(*model.profiles(draws), sin_a, one_way, z0)
    mc = np.sqrt(np.std(d, axis=0, ddof=1) ** 2 + u_eq**2)
    bias = np.mean(d, axis=0) - bottom

    m = {"units": "m"}
    data = {
        "depth_uncertainty_monte_carlo": (
            "beam_angle",
            mc,
            {**m, "long_name": "1-sigma depth uncertainty, Monte Carlo"},
        ),
        "depth_uncertainty_linear": (
            "beam_angle",
            linear,
            {**m, "long_name": "1-sigma depth uncertainty, linearised (quadrature)"},
        ),
        "depth_uncertainty_equations": (
            "beam_angle",
            u_eq,
            {
                **m,
                "long_name": "spread between sound-speed equations (1-sigma)",
                "equations": " ".join(used_equations),
            },
        ),
        "expanded_uncertainty": (
            "beam_angle",
            COVERAGE_FACTOR * linear,
            {**m, "long_name": "expanded depth uncertainty at 95 % (k = 1.96, linearised)"},
        ),
        "depth_bias_monte_carlo": (
            "beam_angle",
            bias,
            {**m, "long_name": "mean Monte Carlo depth minus the seafloor depth"},
        ),
    }
    for name, v in terms.items():
        data[f"depth_uncertainty_{name}"] = (
            "beam_angle",
            v,
            {**m, "long_name": f"1-sigma depth uncertainty from the {name} input"},
        )
    if order is not None:
        data["tvu"] = (
            "beam_angle",
            np.full(angles.size, float(tvu(bottom, order))),
            {**m, "long_name": f"IHO S-44 Order {order} TVU at 95 % at the water depth"},
        )
    attrs = _cf.base_attrs(
        product="depth_uncertainty",
        water_depth=bottom,
        transducer_depth=z0,
        coverage_factor=COVERAGE_FACTOR,
        samples=n,
        seed=int(seed),
        model="one offset per input for the whole cast (bias), normal, independent inputs",
        references="JCGM 100:2008 (GUM) eq. 10; JCGM 101:2008 (Monte Carlo); "
        "IHO S-44 Ed. 6.0.0 (2020) Table 1",
    )
    attrs = _cf.record_step(
        attrs,
        "depth_uncertainty",
        **{f"sigma_{k}": float(v) for k, v in zip(SENSORS, sig)},
        equation=None if model.speed_only else equation,
        samples=n,
        seed=int(seed),
    )
    coords = {
        "beam_angle": (
            "beam_angle",
            angles,
            {"long_name": "beam angle from vertical, positive to starboard", "units": "degree"},
        )
    }
    return xr.Dataset(data, coords=coords, attrs=attrs)
