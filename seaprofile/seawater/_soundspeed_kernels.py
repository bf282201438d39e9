"""The sound-speed equations: compiled kernels and one documented function per equation.

Each ``_<name>_kernel`` is a scalar ``@numba.njit(cache=True)`` function of one point and
``_<name>_loop`` runs it over flat contiguous arrays; the public function broadcasts its
inputs and calls the loop through :func:`._apply.run_loop`, so NaN in gives NaN out and no
temporaries are made. Both compile lazily, on first use, and load from numba's on-disk
cache afterwards: nothing is compiled when the package is imported. Inputs are in the
project units (ITS-90 degC, practical salinity, sea pressure dbar or depth m, latitude
degrees); each kernel converts to the variables its source uses (IPTS-68, bar, kg/cm^2, km).

Next to each kernel sits its public function (``mackenzie1981``, ``chen_millero1977``, ...):
the equation exactly as published, with citation, form and validity in its docstring, no
range checks and no pressure <-> depth conversion. They are re-exported by
:mod:`seaprofile.seawater.soundspeed`, whose :func:`~seaprofile.seawater.soundspeed.sound_speed`
is the checked entry point. (Kept here, beside the coefficients, so each module stays short.)
"""

from __future__ import annotations

import math
from typing import Any

import gsw
import numba

from .._validate import SeaprofileError
from ._apply import output_attrs, pointwise, run_loop

# error_model="numpy": division by zero gives inf/NaN as in numpy, never an exception;
# nogil: the loops release the GIL, as numpy ufunc loops do (dask threads run in parallel)
_JIT: dict[str, Any] = {"cache": True, "nogil": True, "error_model": "numpy"}

# IPTS-68 from ITS-90 in the oceanographic range (Saunders 1990): T68 = 1.00024 T90.
_T68_PER_T90 = 1.00024
# Pressure in kg/cm^2 (kilogram-force per square centimetre):
# 1 kgf/cm^2 = 98.0665 kPa = 9.80665 dbar.
_DBAR_PER_KGCM2 = 9.80665


@numba.njit(**_JIT)
def _mackenzie1981_kernel(t, s, d):
    """Mackenzie (1981), JASA 70(3), 807: T degC, S, depth m."""
    s35 = s - 35.0
    return (
        1448.96
        + t * (4.591 + t * (-5.304e-2 + t * 2.374e-4))
        + 1.340 * s35
        + d * (1.630e-2 + d * 1.675e-7)
        - 1.025e-2 * t * s35
        - 7.139e-13 * t * d * d * d
    )


@numba.njit(**_JIT)
def _mackenzie1981_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _mackenzie1981_kernel(a[i], b[i], c[i])


def mackenzie1981(temperature, salinity, depth):
    """Sound speed, Mackenzie (1981) nine-term equation.

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90).
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    depth : array_like
        Depth, m, positive down.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    K.V. Mackenzie, "Nine-term equation for sound speed in the oceans", J. Acoust. Soc. Am.
    70(3), 807-812 (1981):

    ``c = 1448.96 + 4.591 T - 5.304e-2 T^2 + 2.374e-4 T^3 + 1.340 (S - 35) + 1.630e-2 D
    + 1.675e-7 D^2 - 1.025e-2 T (S - 35) - 7.139e-13 T D^3``.

    Validity: T -2..30 degC, S 25..40, D 0..8000 m. Check value 1550.744 m/s at 25 degC,
    S 35, 1000 m. Fitted to Del Grosso (1974) values (standard error 0.070 m/s); the
    temperature-scale difference (fit on IPTS-68) is far below that. Being depth-based
    with no latitude term, it drifts from Del Grosso below about 4000 m: we measure
    0.1-0.4 m/s at low latitudes and up to 0.9 m/s in near-freezing water at 70 degrees
    (depths from UNESCO 1983); prefer a pressure-based equation or ``leroy2008`` there.
    """
    return _run(_mackenzie1981_loop, "mackenzie1981", (temperature, salinity, depth))


@numba.njit(**_JIT)
def _chen_millero1977_kernel(t90, s, p_dbar):
    """Chen & Millero (1977) as UNESCO 1983 (Fofonoff & Millard): T68 degC, S, p bar."""
    t = _T68_PER_T90 * t90
    p = 0.1 * p_dbar
    sr = math.sqrt(s)  # S < 0 (impossible) gives NaN; see chen_millero1977 Notes
    # pure-water part
    c0 = (
        (((3.1464e-9 * t - 1.47800e-6) * t + 3.3420e-4) * t - 5.80852e-2) * t + 5.03711
    ) * t + 1402.388
    c1 = (((-6.1185e-10 * t + 1.3621e-7) * t - 8.1788e-6) * t + 6.8982e-4) * t + 0.153563
    c2 = (((1.0405e-12 * t - 2.5335e-10) * t + 2.5974e-8) * t - 1.7107e-6) * t + 3.1260e-5
    c3 = (-2.3643e-12 * t + 3.8504e-10) * t - 9.7729e-9
    c = ((c3 * p + c2) * p + c1) * p + c0
    # S^1 part
    a0 = (((-3.21e-8 * t + 2.006e-6) * t + 7.164e-5) * t - 1.262e-2) * t + 1.389
    a1 = (((-2.0122e-10 * t + 1.0507e-8) * t - 6.4885e-8) * t - 1.2580e-5) * t + 9.4742e-5
    a2 = ((7.988e-12 * t - 1.6002e-10) * t + 9.1041e-9) * t - 3.9064e-7
    a3 = (-3.389e-13 * t + 6.649e-12) * t + 1.100e-10
    a = ((a3 * p + a2) * p + a1) * p + a0
    # S^3/2 and S^2 parts
    b = -1.922e-2 - 4.42e-5 * t + (7.3637e-5 + 1.7945e-7 * t) * p
    dd = 1.727e-3 - 7.9836e-6 * p
    return c + (a + b * sr + dd * s) * s


@numba.njit(**_JIT)
def _chen_millero1977_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _chen_millero1977_kernel(a[i], b[i], c[i])


def chen_millero1977(temperature, salinity, pressure):
    """Sound speed, Chen & Millero (1977) as the UNESCO 1983 algorithm.

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90); converted inside to IPTS-68.
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like
        Sea pressure, dbar; converted inside to bar.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    C.-T. Chen & F.J. Millero, "Speed of sound in seawater at high pressures", J. Acoust.
    Soc. Am. 62, 1129-1135 (1977), as coded in N.P. Fofonoff & R.C. Millard, "Algorithms
    for computation of fundamental properties of seawater", Unesco Tech. Pap. Mar. Sci. 44
    (1983):

    ``c = Cw(T, P) + A(T, P) S + B(T, P) S^(3/2) + D(P) S^2``, where Cw, A are polynomials
    of degree 3 in P whose coefficients are polynomials of degree up to 5 in T,
    ``B = B0(T) + B1(T) P`` and ``D = 1.727e-3 - 7.9836e-6 P``; T is IPTS-68 degC
    (``T68 = 1.00024 T90``) and P is in bar (``P = p_dbar / 10``).

    Validity: T 0..40 degC, S 0..40, 0..1000 bar (0..10000 dbar). Check value 1731.995 m/s
    at S 40, T68 40 degC, 10000 dbar. The UNESCO code takes ``sqrt(|S|)``; here a negative
    salinity (not a salinity at all) gives NaN instead.
    """
    return _run(_chen_millero1977_loop, "chen_millero1977", (temperature, salinity, pressure))


@numba.njit(**_JIT)
def _wong_zhu1995_kernel(t, s, p_dbar):
    """Wong & Zhu (1995), JASA 97(3), 1732: ITS-90 refit; T90 degC, S, p bar."""
    p = 0.1 * p_dbar
    sr = math.sqrt(s)  # S < 0 (impossible) gives NaN; see chen_millero1977 Notes
    c0 = (
        (((3.1419e-9 * t - 1.47797e-6) * t + 3.3432e-4) * t - 5.81090e-2) * t + 5.03830
    ) * t + 1402.388
    c1 = (((-6.1260e-10 * t + 1.3632e-7) * t - 8.1829e-6) * t + 6.8999e-4) * t + 0.153563
    c2 = (((1.0415e-12 * t - 2.5353e-10) * t + 2.5986e-8) * t - 1.7111e-6) * t + 3.1260e-5
    c3 = (-2.3654e-12 * t + 3.8513e-10) * t - 9.7729e-9
    c = ((c3 * p + c2) * p + c1) * p + c0
    a0 = (((-3.21e-8 * t + 2.008e-6) * t + 7.166e-5) * t - 1.262e-2) * t + 1.389
    a1 = (((-2.0142e-10 * t + 1.0515e-8) * t - 6.4928e-8) * t - 1.2583e-5) * t + 9.4742e-5
    a2 = ((7.994e-12 * t - 1.6009e-10) * t + 9.1061e-9) * t - 3.9064e-7
    a3 = (-3.391e-13 * t + 6.651e-12) * t + 1.100e-10
    a = ((a3 * p + a2) * p + a1) * p + a0
    b = -1.922e-2 - 4.42e-5 * t + (7.3637e-5 + 1.7950e-7 * t) * p
    dd = 1.727e-3 - 7.9836e-6 * p
    return c + (a + b * sr + dd * s) * s


@numba.njit(**_JIT)
def _wong_zhu1995_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _wong_zhu1995_kernel(a[i], b[i], c[i])


def wong_zhu1995(temperature, salinity, pressure):
    """Sound speed, Wong & Zhu (1995) ITS-90 refit of Chen & Millero (1977).

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90), used directly.
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like
        Sea pressure, dbar; converted inside to bar.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    G.S.K. Wong & S. Zhu, "Speed of sound in seawater as a function of salinity,
    temperature and pressure", J. Acoust. Soc. Am. 97(3), 1732-1736 (1995). Same form as
    :func:`chen_millero1977` with its own coefficient set for ITS-90 temperatures (several
    coefficients differ, e.g. A02 = 7.166e-5 and A03 = 2.008e-6 against 7.164e-5 and
    2.006e-6); the two sets must not be mixed. Validity as Chen & Millero: T 0..40 degC,
    S 0..40, 0..1000 bar. Negative salinity gives NaN.
    """
    return _run(_wong_zhu1995_loop, "wong_zhu1995", (temperature, salinity, pressure))


@numba.njit(**_JIT)
def _del_grosso1974_kernel(t90, s, p_dbar):
    """Del Grosso (1974), JASA 56(4), 1084, original IPTS-68 set; p in kg/cm^2 gauge."""
    t = _T68_PER_T90 * t90
    p = p_dbar / _DBAR_PER_KGCM2
    d_t = t * (0.501109398873e1 + t * (-0.550946843172e-1 + t * 0.221535969240e-3))
    d_s = s * (0.132952290781e1 + s * 0.128955756844e-3)
    d_p = p * (0.156059257041e0 + p * (0.244998688441e-4 + p * -0.883392332513e-8))
    d_stp = (
        t * p * (0.635191613389e-2 + p * (-0.159349479045e-5 + p * 0.522116437235e-9))
        + t * t * p * (-0.438031096213e-6 * t + 0.265484716608e-7 * p)
        + s * t * (-0.127562783426e-1 + t * 0.968403156410e-4)
        + s * t * p * (-0.340597039004e-3 + s * 0.485639620015e-5)
        - 0.161674495909e-8 * s * s * p * p
    )
    return 1402.392 + d_t + d_s + d_p + d_stp


@numba.njit(**_JIT)
def _del_grosso1974_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _del_grosso1974_kernel(a[i], b[i], c[i])


def del_grosso1974(temperature, salinity, pressure):
    """Sound speed, Del Grosso (1974), original coefficient set.

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90); converted inside to IPTS-68.
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like
        Sea pressure, dbar; converted inside to kg/cm^2 gauge (``p / 9.80665``).

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    V.A. Del Grosso, "New equation for the speed of sound in natural waters (with
    comparisons to other equations)", J. Acoust. Soc. Am. 56(4), 1084-1091 (1974):

    ``c = 1402.392 + dC_T(T) + dC_S(S) + dC_P(P) + dC_STP(S, T, P)``, with cubic
    ``dC_T``, ``dC_P``, quadratic ``dC_S`` and ten cross terms (T P, T^3 P, T P^2,
    T^2 P^2, T P^3, S T, S T^2, S T P, S^2 T P, S^2 P^2); T is IPTS-68 degC and P is
    kg/cm^2 gauge. The 1974 set is used (``CP3 = -0.883392332513e-8``; a copy with the
    digit 8 dropped circulates and is wrong by about 0.5 m/s at depth). Wong & Zhu (1995)
    give an ITS-90 refit of the same equation.

    Validity: T 0..30 degC, S 30..40, 0..1000 kg/cm^2 (0..9806.65 dbar).
    """
    return _run(_del_grosso1974_loop, "del_grosso1974", (temperature, salinity, pressure))


@numba.njit(**_JIT)
def _coppens1981_kernel(temp, s, d_m):
    """Coppens (1981), JASA 69(3), 862: t = T/10, depth km."""
    t = 0.1 * temp
    d = 1.0e-3 * d_m
    s35 = s - 35.0
    c_surface = (
        1449.05 + t * (45.7 + t * (-5.21 + t * 0.23)) + (1.333 + t * (-0.126 + t * 0.009)) * s35
    )
    return (
        c_surface
        + (16.23 + 0.253 * t) * d
        + (0.213 - 0.1 * t) * d * d
        + (0.016 + 0.0002 * s35) * s35 * t * d
    )


@numba.njit(**_JIT)
def _coppens1981_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _coppens1981_kernel(a[i], b[i], c[i])


def coppens1981(temperature, salinity, depth):
    """Sound speed, Coppens (1981).

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90).
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    depth : array_like
        Depth, m, positive down; converted inside to km.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    A.B. Coppens, "Simple equations for the speed of sound in Neptunian waters",
    J. Acoust. Soc. Am. 69(3), 862-863 (1981), with ``t = T/10`` and D in km:

    ``c(0,S,t) = 1449.05 + 45.7 t - 5.21 t^2 + 0.23 t^3 + (1.333 - 0.126 t + 0.009 t^2)(S - 35)``
    ``c = c(0,S,t) + (16.23 + 0.253 t) D + (0.213 - 0.1 t) D^2
    + [0.016 + 0.0002 (S - 35)](S - 35) t D``.

    Validity: T 0..35 degC, S 0..45, D 0..4 km.
    """
    return _run(_coppens1981_loop, "coppens1981", (temperature, salinity, depth))


@numba.njit(**_JIT)
def _medwin1975_kernel(t, s, z):
    """Medwin (1975), JASA 58, 1318: T degC, S, depth m."""
    return (
        1449.2
        + t * (4.6 + t * (-0.055 + t * 0.00029))
        + (1.34 - 0.010 * t) * (s - 35.0)
        + 0.016 * z
    )


@numba.njit(**_JIT)
def _medwin1975_loop(a, b, c, out):
    for i in range(out.size):
        out[i] = _medwin1975_kernel(a[i], b[i], c[i])


def medwin1975(temperature, salinity, depth):
    """Sound speed, Medwin (1975) simple equation.

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90).
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    depth : array_like
        Depth, m, positive down.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    H. Medwin, "Speed of sound in water: a simple equation for realistic parameters",
    J. Acoust. Soc. Am. 58, 1318-1319 (1975):

    ``c = 1449.2 + 4.6 T - 0.055 T^2 + 0.00029 T^3 + (1.34 - 0.010 T)(S - 35) + 0.016 z``.

    Validity: T 0..35 degC, S 0..45, z 0..1000 m.
    """
    return _run(_medwin1975_loop, "medwin1975", (temperature, salinity, depth))


@numba.njit(**_JIT)
def _leroy2008_kernel(t, s, z, lat):
    """Leroy, Robinson & Goldsmith (2008), JASA 124(5), 2774: T90, S, depth m, latitude."""
    z3 = z * z * z
    return (
        1402.5
        + t * (5.0 + t * (-5.44e-2 + t * 2.1e-4))
        + s * (1.33 + t * (-1.23e-2 + t * 8.7e-5))
        + z * (1.56e-2 + z * 2.55e-7)
        - 7.3e-12 * z3
        + 1.2e-6 * z * (lat - 45.0)
        - 9.5e-13 * t * z3
        + 3.0e-7 * t * t * z
        + 1.43e-5 * s * z
    )


@numba.njit(**_JIT)
def _leroy2008_loop(a, b, c, d, out):
    for i in range(out.size):
        out[i] = _leroy2008_kernel(a[i], b[i], c[i], d[i])


def leroy2008(temperature, salinity, depth, latitude):
    """Sound speed, Leroy, Robinson & Goldsmith (2008).

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90).
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    depth : array_like
        Depth, m, positive down.
    latitude : array_like
        Latitude, degrees north.

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    C.C. Leroy, S.P. Robinson & M.J. Goldsmith, "A new equation for the accurate
    calculation of sound speed in all oceans", J. Acoust. Soc. Am. 124(5), 2774-2782
    (2008), doi:10.1121/1.2988296:

    ``c = 1402.5 + 5 T - 5.44e-2 T^2 + 2.1e-4 T^3 + 1.33 S - 1.23e-2 S T + 8.7e-5 S T^2
    + 1.56e-2 Z + 2.55e-7 Z^2 - 7.3e-12 Z^3 + 1.2e-6 Z (phi - 45) - 9.5e-13 T Z^3
    + 3e-7 T^2 Z + 1.43e-5 S Z``.

    Stated accuracy +/-0.2 m/s against the reference equations in all oceans, including
    the Baltic and Black Seas. The validity box in ``EQUATIONS`` (T -2..34 degC,
    S 0..42, 0..12000 m) is our choice to cover the waters the paper names, not a range
    quoted from it.
    """
    return _run(_leroy2008_loop, "leroy2008", (temperature, salinity, depth, latitude))


def teos10(temperature, salinity, pressure, latitude=None, longitude=None):
    """Sound speed from TEOS-10 through gsw.

    Parameters
    ----------
    temperature : array_like
        In-situ temperature, degC (ITS-90).
    salinity : array_like
        Practical salinity (PSS-78), dimensionless.
    pressure : array_like
        Sea pressure, dbar.
    latitude, longitude : array_like, optional
        Position, degrees north / east. With both, absolute salinity is
        ``gsw.SA_from_SP(SP, p, lon, lat)`` (with the atlas salinity anomaly); without
        either, the reference salinity ``gsw.SR_from_SP(SP)`` is used instead (no anomaly,
        which changes c by at most a few cm/s in the open ocean).

    Returns
    -------
    numpy.ndarray
        Sound speed, m/s.

    Notes
    -----
    IOC, SCOR & IAPSO, "The international thermodynamic equation of seawater - 2010"
    (TEOS-10), Intergovernmental Oceanographic Commission, Manuals and Guides 56.
    ``SA`` as above, ``CT = gsw.CT_from_t(SA, T, p)``, ``c = gsw.sound_speed(SA, CT, p)``
    (the 75-term expression for specific volume, Roquet et al. 2015, Ocean Modelling 90,
    29-43; ``c = sqrt(dp/drho)`` at constant entropy and composition).

    Validity: the "oceanographic funnel" (p up to 8000 dbar, SA up to 42 g/kg, T from
    freezing to about 40 degC near the surface); ``EQUATIONS`` uses the box
    T -2..40 degC, S 0..42, 0..10000 dbar around it.
    """
    named = [("temperature", temperature), ("salinity", salinity), ("pressure", pressure)]
    if (latitude is None) != (longitude is None):
        missing = "longitude" if longitude is None else "latitude"
        raise SeaprofileError(
            f"{missing} is required when the other coordinate is given "
            "(or give neither to use reference salinity)"
        )
    if latitude is not None:
        named += [("latitude", latitude), ("longitude", longitude)]
    return pointwise(
        _teos10_numpy,
        named,
        name="sound_speed",
        attrs=output_attrs("sound_speed", "teos10", REFERENCES["teos10"]),
    )


def _teos10_numpy(temperature, salinity, pressure, latitude=None, longitude=None):
    if latitude is not None:
        sa = gsw.SA_from_SP(salinity, pressure, longitude, latitude)
    else:
        sa = gsw.SR_from_SP(salinity)
    ct = gsw.CT_from_t(sa, temperature, pressure)
    return gsw.sound_speed(sa, ct, pressure)


# --- helpers of the public entry points -------------------------------------------------


def _loops():
    """Each compiled equation function -> its loop, for callers whose inputs are checked."""
    return {
        mackenzie1981: _mackenzie1981_loop,
        chen_millero1977: _chen_millero1977_loop,
        wong_zhu1995: _wong_zhu1995_loop,
        del_grosso1974: _del_grosso1974_loop,
        coppens1981: _coppens1981_loop,
        medwin1975: _medwin1975_loop,
        leroy2008: _leroy2008_loop,
    }


#: Citation of each equation (shown in ``EQUATIONS`` and in the ``references`` attribute).
REFERENCES = {
    "mackenzie1981": "K.V. Mackenzie, J. Acoust. Soc. Am. 70(3), 807-812 (1981)",
    "chen_millero1977": "C.-T. Chen & F.J. Millero, J. Acoust. Soc. Am. 62, 1129-1135 "
    "(1977); N.P. Fofonoff & R.C. Millard, Unesco Tech. Pap. Mar. Sci. 44 (1983)",
    "wong_zhu1995": "G.S.K. Wong & S. Zhu, J. Acoust. Soc. Am. 97(3), 1732-1736 (1995)",
    "del_grosso1974": "V.A. Del Grosso, J. Acoust. Soc. Am. 56(4), 1084-1091 (1974)",
    "coppens1981": "A.B. Coppens, J. Acoust. Soc. Am. 69(3), 862-863 (1981)",
    "medwin1975": "H. Medwin, J. Acoust. Soc. Am. 58, 1318-1319 (1975)",
    "leroy2008": "C.C. Leroy, S.P. Robinson & M.J. Goldsmith, J. Acoust. Soc. Am. 124(5), "
    "2774-2782 (2008), doi:10.1121/1.2988296",
    "teos10": "IOC, SCOR & IAPSO (2010), TEOS-10 Manual (IOC Manuals and Guides 56); "
    "gsw sound_speed (Roquet et al. 2015, Ocean Modelling 90, 29-43)",
}

_ARGUMENTS = ("temperature", "salinity")


def _run(loop, name, arrays):
    """An equation's compiled loop through the dispatcher (names for messages, CF attrs)."""
    vertical = (
        ("depth",)
        if name in ("mackenzie1981", "coppens1981", "medwin1975", "leroy2008")
        else ("pressure",)
    )
    names = _ARGUMENTS + vertical + ("latitude",) * (len(arrays) - 3)
    return run_loop(
        loop,
        arrays,
        names=names,
        name="sound_speed",
        attrs=output_attrs("sound_speed", name, REFERENCES[name]),
    )
