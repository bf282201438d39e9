"""Sound absorption in sea water: four published formulas and one checked entry point.

One numpy function per published formula (array in, array out, the inputs that formula
was written for, no checks) and one entry point, :func:`absorption`, that picks a formula
from :data:`ABSORPTION`, refuses missing or impossible inputs naming the argument, warns
when inputs leave the formula's validity box and accepts numpy arrays, dask arrays and
xarray DataArrays through the one dispatcher (:func:`._apply.pointwise`).

Units everywhere: frequency Hz, temperature degC, practical salinity, depth m positive
down, pH (dimensionless); absorption dB/km. Formulas written in kHz, km or atm convert
inside their compiled kernels (``_absorption_kernels``: one scalar numba kernel and one
flat loop per formula, run by :func:`._apply.run_loop`; NaN in gives NaN out).

Coefficients are written from memory of the publications (each docstring says which we
are sure of); verify against the originals before relying on them for a survey or a
sonar decision. Not for navigation on its own.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .._validate import SeaprofileError, is_lazy, warn_outside
from . import _absorption_kernels as _k
from ._apply import output_attrs, pointwise, run_loop

__all__ = [
    "ABSORPTION",
    "AbsorptionFormula",
    "absorption",
    "francois_garrison1982",
    "ainslie_mccolm1998",
    "fisher_simmons1977",
    "thorp1967",
]

_ATTRS = {"long_name": "sound absorption coefficient", "units": "dB km-1"}


# --- layer 2: the published formulas -------------------------------------------------------


def francois_garrison1982(frequency, temperature, salinity, depth, ph=8.0):
    """Sound absorption in sea water, Francois & Garrison (1982).

    Parameters
    ----------
    frequency : array_like
        Frequency, Hz.
    temperature : array_like
        Temperature, degC.
    salinity : array_like
        Practical salinity, dimensionless.
    depth : array_like
        Depth, m, positive down.
    ph : array_like
        pH, dimensionless (default 8.0).

    Returns
    -------
    numpy.ndarray
        Absorption coefficient, dB/km.

    Notes
    -----
    R.E. Francois & G.R. Garrison, "Sound absorption based on ocean measurements. Part I:
    Pure water and magnesium sulfate contributions", J. Acoust. Soc. Am. 72(3), 896-907
    (1982), doi:10.1121/1.388170; "Part II: Boric acid contribution and equation for total
    absorption", J. Acoust. Soc. Am. 72(6), 1879-1890 (1982), doi:10.1121/1.388673.
    With f in kHz, T in degC, S practical salinity, D depth in m:

    .. math::

        \\alpha = \\frac{A_1 P_1 f_1 f^2}{f_1^2 + f^2}
                + \\frac{A_2 P_2 f_2 f^2}{f_2^2 + f^2} + A_3 P_3 f^2 \\quad
                \\mathrm{dB\\,km^{-1}}

    - sound speed :math:`c = 1412 + 3.21 T + 1.19 S + 0.0167 D` m/s;
    - boric acid: :math:`A_1 = (8.86/c)\\,10^{0.78\\,\\mathrm{pH} - 5}`, :math:`P_1 = 1`,
      :math:`f_1 = 2.8 \\sqrt{S/35}\\,10^{4 - 1245/(T + 273)}` kHz;
    - magnesium sulphate: :math:`A_2 = 21.44 (S/c)(1 + 0.025 T)`,
      :math:`P_2 = 1 - 1.37\\times10^{-4} D + 6.2\\times10^{-9} D^2`,
      :math:`f_2 = 8.17\\times10^{8 - 1990/(T + 273)} / (1 + 0.0018 (S - 35))` kHz;
    - pure water, :math:`T \\le 20` degC: :math:`A_3 = 4.937\\times10^{-4}
      - 2.59\\times10^{-5} T + 9.11\\times10^{-7} T^2 - 1.50\\times10^{-8} T^3`;
      :math:`T > 20` degC: :math:`A_3 = 3.964\\times10^{-4} - 1.146\\times10^{-5} T
      + 1.45\\times10^{-7} T^2 - 6.5\\times10^{-10} T^3`;
      :math:`P_3 = 1 - 3.83\\times10^{-5} D + 4.9\\times10^{-10} D^2`.

    The two pure-water branches meet at 20 degC to within 0.05 % of :math:`A_3`.
    Validity as registered in :data:`ABSORPTION` (from memory of the paper, to be checked
    against it): 200 Hz-1 MHz, -2..22 degC, salinity 30..35, depth 0..7000 m, pH 7.7..8.3.
    All coefficients are written from memory; they agree with the widely reproduced form
    of the equation as we recall it, but have not been checked against the original here.
    """
    return run_loop(_k._francois_garrison1982_loop, (frequency, temperature, salinity, depth, ph))


def ainslie_mccolm1998(frequency, temperature, salinity, depth, ph=8.0):
    """Sound absorption in sea water, Ainslie & McColm (1998) simplified formula.

    Parameters
    ----------
    frequency : array_like
        Frequency, Hz.
    temperature : array_like
        Temperature, degC.
    salinity : array_like
        Practical salinity, dimensionless.
    depth : array_like
        Depth, m, positive down.
    ph : array_like
        pH, dimensionless (default 8.0).

    Returns
    -------
    numpy.ndarray
        Absorption coefficient, dB/km.

    Notes
    -----
    M.A. Ainslie & J.G. McColm, "A simplified formula for viscous and chemical absorption
    in sea water", J. Acoust. Soc. Am. 103(3), 1671-1672 (1998), doi:10.1121/1.421258.
    With f in kHz, T in degC, S practical salinity, z depth in km:

    .. math::

        \\alpha = 0.106 \\frac{f_1 f^2}{f_1^2 + f^2} e^{(\\mathrm{pH} - 8)/0.56}
            + 0.52 \\left(1 + \\frac{T}{43}\\right) \\frac{S}{35}
              \\frac{f_2 f^2}{f_2^2 + f^2} e^{-z/6}
            + 0.00049 f^2 e^{-(T/27 + z/17)} \\quad \\mathrm{dB\\,km^{-1}}

    with :math:`f_1 = 0.78 \\sqrt{S/35}\\, e^{T/26}` kHz (boric acid) and
    :math:`f_2 = 42\\, e^{T/17}` kHz (magnesium sulphate). The authors fitted it to the
    Francois & Garrison (1982) equation. Validity (from memory of the paper): 100 Hz-1 MHz,
    -6..35 degC, salinity 5..50, depth 0..7 km, pH 7.7..8.3. We are confident of these
    coefficients (a short formula, widely reproduced), but they are still from memory.
    """
    return run_loop(_k._ainslie_mccolm1998_loop, (frequency, temperature, salinity, depth, ph))


def fisher_simmons1977(frequency, temperature, depth):
    """Sound absorption in sea water of salinity 35 and pH 8, Fisher & Simmons (1977).

    Parameters
    ----------
    frequency : array_like
        Frequency, Hz.
    temperature : array_like
        Temperature, degC.
    depth : array_like
        Depth, m, positive down (converted to gauge pressure in atm as
        ``depth * 1025 * 9.80665 / 101325``).

    Returns
    -------
    numpy.ndarray
        Absorption coefficient, dB/km.

    Notes
    -----
    F.H. Fisher & V.P. Simmons, "Sound absorption in sea water", J. Acoust. Soc. Am.
    62(3), 558-564 (1977), doi:10.1121/1.381574. With f in Hz, T in degC, P in atm,
    :math:`\\theta = T + 273.1` K, the absorption in Np/m (times 8686 for dB/km) is

    .. math::

        \\alpha = \\frac{A_1 P_1 f_1 f^2}{f_1^2 + f^2}
                + \\frac{A_2 P_2 f_2 f^2}{f_2^2 + f^2} + A_3 P_3 f^2

    - boric acid: :math:`f_1 = 1.32\\times10^3\\, \\theta\\, e^{-1700/\\theta}` Hz,
      :math:`A_1 = 1.03\\times10^{-8} + 2.36\\times10^{-10} T - 5.22\\times10^{-12} T^2`
      s/m, :math:`P_1 = 1`;
    - magnesium sulphate: :math:`f_2 = 1.55\\times10^7\\, \\theta\\, e^{-3052/\\theta}` Hz,
      :math:`A_2 = 5.62\\times10^{-8} + 7.52\\times10^{-10} T` s/m,
      :math:`P_2 = 1 - 10.3\\times10^{-4} P + 3.7\\times10^{-7} P^2`;
    - pure water: :math:`A_3 = (55.9 - 2.37 T + 4.77\\times10^{-2} T^2
      - 3.48\\times10^{-4} T^3)\\times10^{-15}` s2/m,
      :math:`P_3 = 1 - 3.84\\times10^{-4} P + 7.57\\times10^{-8} P^2`.

    Validity as registered (from memory): 10 kHz-1 MHz, 0..30 degC, depth 0..7000 m.
    All coefficients are from memory and less certain than those of the other formulas;
    the pure-water term matches Francois & Garrison's to a few per cent at 4 degC, which
    supports the Np/m reading.
    """
    return run_loop(_k._fisher_simmons1977_loop, (frequency, temperature, depth))


def thorp1967(frequency):
    """Sound absorption from frequency alone, Thorp (1967), in the dB/km form.

    Parameters
    ----------
    frequency : array_like
        Frequency, Hz.

    Returns
    -------
    numpy.ndarray
        Absorption coefficient, dB/km.

    Notes
    -----
    W.H. Thorp, "Analytic description of the low-frequency attenuation coefficient",
    J. Acoust. Soc. Am. 42(1), 270 (1967), doi:10.1121/1.1910566; fitted to measurements
    near 4 degC and about 1 km depth. Written in dB/km with f in kHz as (form recalled
    from Jensen, Kuperman, Porter & Schmidt, Computational Ocean Acoustics, 2nd ed. 2011,
    ch. 1; from memory)

    .. math::

        \\alpha = 3.3\\times10^{-3} + \\frac{0.11 f^2}{1 + f^2}
            + \\frac{44 f^2}{4100 + f^2} + 3.0\\times10^{-4} f^2

    Thorp's original is in dB/kyd without the constant and pure-water terms. Validity as
    registered (common practice): 100 Hz-50 kHz.
    """
    return run_loop(_k._thorp1967_loop, (frequency,))


# --- registry --------------------------------------------------------------------------------


@dataclass(frozen=True)
class AbsorptionFormula:
    """One absorption formula: its inputs, where it holds, where it comes from.

    Attributes
    ----------
    name : str
        Key in :data:`ABSORPTION`.
    function : callable
        ``function(frequency, *inputs)`` in project units, returning dB/km.
    inputs : tuple of str
        Arguments after ``frequency``, in order (from ``temperature``, ``salinity``,
        ``depth``, ``ph``).
    validity : dict
        ``{variable: (low, high, units)}``, frequency in Hz.
    reference : str
        Citation, with DOI.
    """

    name: str
    function: Callable
    inputs: tuple
    validity: dict
    reference: str


_UNITS = {"frequency": "Hz", "temperature": "degC", "salinity": "", "depth": "m", "ph": ""}

#: Absorption formulas by name; see each function's docstring for its source.
ABSORPTION = {
    a.name: a
    for a in (
        AbsorptionFormula(
            "francois_garrison1982",
            francois_garrison1982,
            ("temperature", "salinity", "depth", "ph"),
            {
                "frequency": (200.0, 1.0e6, "Hz"),
                "temperature": (-2.0, 22.0, "degC"),
                "salinity": (30.0, 35.0, "1"),
                "depth": (0.0, 7000.0, "m"),
                "ph": (7.7, 8.3, "1"),
            },
            "Francois, R.E. & Garrison, G.R. (1982), J. Acoust. Soc. Am. 72(3), 896-907, "
            "doi:10.1121/1.388170, and 72(6), 1879-1890, doi:10.1121/1.388673",
        ),
        AbsorptionFormula(
            "ainslie_mccolm1998",
            ainslie_mccolm1998,
            ("temperature", "salinity", "depth", "ph"),
            {
                "frequency": (100.0, 1.0e6, "Hz"),
                "temperature": (-6.0, 35.0, "degC"),
                "salinity": (5.0, 50.0, "1"),
                "depth": (0.0, 7000.0, "m"),
                "ph": (7.7, 8.3, "1"),
            },
            "Ainslie, M.A. & McColm, J.G. (1998), J. Acoust. Soc. Am. 103(3), 1671-1672, "
            "doi:10.1121/1.421258",
        ),
        AbsorptionFormula(
            "fisher_simmons1977",
            fisher_simmons1977,
            ("temperature", "depth"),
            {
                "frequency": (1.0e4, 1.0e6, "Hz"),
                "temperature": (0.0, 30.0, "degC"),
                "depth": (0.0, 7000.0, "m"),
            },
            "Fisher, F.H. & Simmons, V.P. (1977), J. Acoust. Soc. Am. 62(3), 558-564, "
            "doi:10.1121/1.381574",
        ),
        AbsorptionFormula(
            "thorp1967",
            thorp1967,
            (),
            {"frequency": (100.0, 5.0e4, "Hz")},
            "Thorp, W.H. (1967), J. Acoust. Soc. Am. 42(1), 270, doi:10.1121/1.1910566",
        ),
    )
}


# --- layer 2b: the entry point ---------------------------------------------------------------


def absorption(
    frequency,
    temperature=None,
    salinity=None,
    depth=None,
    *,
    ph=8.0,
    equation="francois_garrison1982",
):
    """Sound absorption coefficient of sea water by a named published formula.

    Parameters
    ----------
    frequency : array_like, dask array or xarray.DataArray
        Acoustic frequency, Hz, >= 0.
    temperature : array_like, dask array or xarray.DataArray, optional
        Temperature, degC. Required by every formula except ``thorp1967``.
    salinity : array_like, dask array or xarray.DataArray, optional
        Practical salinity, dimensionless, >= 0. Required by ``francois_garrison1982`` and
        ``ainslie_mccolm1998``.
    depth : array_like, dask array or xarray.DataArray, optional
        Depth, m, positive down. Required by every formula except ``thorp1967``.
    ph : float, array_like, dask array or xarray.DataArray
        pH, dimensionless (default 8.0); used by ``francois_garrison1982`` and
        ``ainslie_mccolm1998``.
    equation : str
        A key of :data:`ABSORPTION` (default ``"francois_garrison1982"``).

    Returns
    -------
    numpy.ndarray, dask array or xarray.DataArray
        Absorption coefficient, dB/km, shaped like the broadcast inputs (a numpy scalar
        for scalar inputs). NaN in gives NaN out. An xarray result is named
        ``sound_absorption`` and carries ``long_name`` "sound absorption coefficient",
        ``units`` "dB km-1", ``equation``, ``references`` and ``seaprofile_version``.
        Inputs a formula does not use still broadcast into the result's shape.

    Raises
    ------
    SeaprofileError
        Unknown ``equation`` (listing the valid names); an input the formula needs is
        missing; negative ``frequency`` or ``salinity`` (eager inputs); non-numeric input;
        shapes that do not broadcast; xarray inputs that do not align exactly.

    Warns
    -----
    OutsideValidityWarning
        When finite inputs leave the formula's validity box (naming the variable, the
        range seen and the valid range). Dask (lazy) inputs are not checked.

    Notes
    -----
    Each formula's citation, form and validity box are in its own function
    (:func:`francois_garrison1982`, :func:`ainslie_mccolm1998`,
    :func:`fisher_simmons1977`, :func:`thorp1967`) and in :data:`ABSORPTION`.
    """
    form = _lookup(equation)
    given = {"temperature": temperature, "salinity": salinity, "depth": depth, "ph": ph}
    for name in form.inputs:
        if given[name] is None:
            unit = _UNITS[name] or "dimensionless"
            raise SeaprofileError(f"equation {form.name!r} needs {name} ({unit})")
    named = [("frequency", frequency)]
    named += [(n, v) for n, v in given.items() if v is not None and (n != "ph" or n in form.inputs)]
    check = not any(is_lazy(v) for _, v in named)
    if check:
        for name in ("frequency", "salinity"):
            _check_not_negative(name, dict(named).get(name))
    func = functools.partial(_block, form, tuple(n for n, _ in named), check)
    out = pointwise(
        func, named, name="sound_absorption", attrs=output_attrs(_ATTRS, form.name, form.reference)
    )
    return out[()] if isinstance(out, np.ndarray) and out.ndim == 0 else out


def _lookup(equation):
    if isinstance(equation, AbsorptionFormula):
        return equation
    try:
        return ABSORPTION[equation]
    except (KeyError, TypeError):
        raise SeaprofileError(
            f"equation {equation!r} is unknown; choose one of {', '.join(ABSORPTION)}"
        ) from None


def _check_not_negative(name, value):
    if value is None:
        return
    arr = np.asarray(getattr(value, "values", value))
    try:
        bad = bool(np.any(arr < 0))
    except TypeError:
        return  # non-numeric: the dispatcher names it
    if bad:
        raise SeaprofileError(f"{name} must be >= 0, got a minimum of {np.nanmin(arr):g}")


def _block(form, names, check, *blocks):
    """Numpy function the dispatcher calls: absorption shaped like the broadcast inputs."""
    arrays = dict(zip(names, blocks))
    if check:
        for name, (lo, hi, _) in form.validity.items():
            warn_outside(
                name,
                arrays[name],
                lo,
                hi,
                unit=_UNITS[name],
                context=f"absorption equation {form.name!r}",
                stacklevel=6,
            )
    out = np.asarray(
        form.function(arrays["frequency"], *(arrays[n] for n in form.inputs)), dtype=np.float64
    )
    shape = np.broadcast_shapes(*(np.shape(b) for b in blocks))
    return out if out.shape == shape else np.broadcast_to(out, shape).copy()
