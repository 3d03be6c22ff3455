"""Turbulent flat-plate skin friction, compressibility and form factors as values with derivatives.

Pure numpy: each function returns ``(value, derivative)`` so that components can assemble analytic
partials by the chain rule. All functions are complex-step safe (``np.log10`` and real powers of
positive quantities only; the range checks look at the real part). Reynolds-number, length-to-diameter
and temperature ranges are correlation validity (``check_validity``: judged on a coupled solve's converged
state); only the bounds the math needs raise on every evaluation.

Sources
-------
* Prandtl-Schlichting turbulent flat-plate line: H. Schlichting, *Boundary-Layer Theory*
  (McGraw-Hill), turbulent flat plate chapter.
* ITTC-1957 model-ship correlation line: International Towing Tank Conference, 1957.
* Compressibility factor and nacelle form factor: D. P. Raymer, *Aircraft Design: A Conceptual
  Approach* (AIAA), component build-up drag method -- from memory (field reference, section 8.1).
* Sutherland viscosity with the ISO 2533:1975 constants.
"""

import numpy as np

from bypassopt.components.validation import check_range, check_validity

#: Lowest Reynolds number (based on wetted length) for which the turbulent lines are used here.
RE_MIN = 1.0e5
#: Highest Reynolds number (based on wetted length) for which the turbulent lines are used here.
RE_MAX = 1.0e9
#: Mach range accepted by :func:`compressibility_factor`.
MACH_MAX = 2.0

#: Sutherland constant beta_s of ISO 2533:1975, kg/(m*s*K**0.5).
SUTHERLAND_BETA = 1.458e-6
#: Sutherland temperature S of ISO 2533:1975, K.
SUTHERLAND_S = 110.4

_LN10 = np.log(10.0)


def schlichting_cf(Re, name="Re"):
    r"""Prandtl-Schlichting turbulent flat-plate mean skin-friction coefficient.

    .. math:: C_f = \frac{0.455}{(\log_{10} Re)^{2.58}}

    Source: H. Schlichting, *Boundary-Layer Theory*, turbulent flat plate (Prandtl-Schlichting
    formula). Fully turbulent from the leading edge; valid here for 1e5 <= Re <= 1e9.

    Parameters
    ----------
    Re : float or ndarray
        Reynolds number based on the wetted length (real or complex).
    name : str
        Name used in the error message if ``Re`` is out of range.

    Returns
    -------
    cf : ndarray
        Mean skin-friction coefficient.
    dcf_dRe : ndarray
        Derivative of ``cf`` with respect to ``Re``.
    """
    Re = np.asarray(Re)
    check_validity(name, Re, RE_MIN, RE_MAX)  # the turbulent line
    check_range(name, Re, 1.0, np.inf, lower_inclusive=False)  # log10(Re) > 0
    lg = np.log10(Re)
    cf = 0.455 * lg ** -2.58
    dcf_dRe = -2.58 * 0.455 * lg ** -3.58 / (Re * _LN10)
    return cf, dcf_dRe


def ittc1957_cf(Re, name="Re"):
    r"""ITTC-1957 model-ship correlation line for the turbulent mean friction coefficient.

    .. math:: C_f = \frac{0.075}{(\log_{10} Re - 2)^2}

    Source: International Towing Tank Conference 1957 correlation line. Valid here for
    1e5 <= Re <= 1e9. Used as an independent cross-check of :func:`schlichting_cf`.

    Parameters
    ----------
    Re : float or ndarray
        Reynolds number based on the wetted length (real or complex).
    name : str
        Name used in the error message if ``Re`` is out of range.

    Returns
    -------
    cf : ndarray
        Mean skin-friction coefficient.
    dcf_dRe : ndarray
        Derivative of ``cf`` with respect to ``Re``.
    """
    Re = np.asarray(Re)
    check_validity(name, Re, RE_MIN, RE_MAX)  # the turbulent line
    check_range(name, Re, 1.0, np.inf, lower_inclusive=False)  # log10(Re) > 0
    t = np.log10(Re) - 2.0
    cf = 0.075 * t ** -2
    dcf_dRe = -0.15 * t ** -3 / (Re * _LN10)
    return cf, dcf_dRe


def compressibility_factor(Mach, name="Mach"):
    r"""Compressibility correction to the turbulent flat-plate skin friction.

    .. math:: K_M = (1 + 0.144 M^2)^{-0.65}

    Source: D. P. Raymer, *Aircraft Design: A Conceptual Approach*, component build-up method
    (from memory; field reference section 8.1). Valid here for 0 <= M <= 2.

    Parameters
    ----------
    Mach : float or ndarray
        Mach number at the edge of the boundary layer (real or complex).
    name : str
        Name used in the error message if ``Mach`` is out of range.

    Returns
    -------
    k : ndarray
        Factor multiplying the incompressible skin-friction coefficient.
    dk_dMach : ndarray
        Derivative of ``k`` with respect to ``Mach``.
    """
    Mach = np.asarray(Mach)
    check_range(name, Mach, 0.0, MACH_MAX)
    base = 1.0 + 0.144 * Mach ** 2
    k = base ** -0.65
    dk_dMach = -0.65 * base ** -1.65 * 0.288 * Mach
    return k, dk_dMach


def nacelle_form_factor(length_over_diameter, name="length_over_diameter"):
    r"""Form factor of a nacelle or smooth canopy.

    .. math:: FF = 1 + \frac{0.35}{l/d}

    Source: D. P. Raymer, *Aircraft Design: A Conceptual Approach*, component build-up method,
    nacelle and smooth canopy (from memory; field reference section 8.1). Valid here for
    0.5 <= l/d <= 10.

    Parameters
    ----------
    length_over_diameter : float or ndarray
        Nacelle length divided by its maximum diameter (real or complex).
    name : str
        Name used in the error message if the ratio is out of range.

    Returns
    -------
    ff : ndarray
        Form factor.
    dff_dld : ndarray
        Derivative of ``ff`` with respect to the length-to-diameter ratio.
    """
    ld = np.asarray(length_over_diameter)
    check_validity(name, ld, 0.5, 10.0)  # the correlation
    check_range(name, ld, 0.0, np.inf, lower_inclusive=False)  # the math
    ff = 1.0 + 0.35 / ld
    dff_dld = -0.35 / ld ** 2
    return ff, dff_dld


def sutherland_viscosity(T, name="T"):
    r"""Dynamic viscosity of air by Sutherland's law with the ISO 2533 constants.

    .. math:: \mu = \frac{\beta_s T^{3/2}}{T + S}, \quad
              \beta_s = 1.458\times10^{-6}\ \mathrm{kg/(m\,s\,K^{1/2})},\ S = 110.4\ \mathrm{K}

    Source: ISO 2533:1975 Standard Atmosphere (same constants as US Standard Atmosphere 1976).
    Valid here for 100 K <= T <= 1000 K.

    Parameters
    ----------
    T : float or ndarray
        Static temperature in K (real or complex).
    name : str
        Name used in the error message if ``T`` is out of range.

    Returns
    -------
    mu : ndarray
        Dynamic viscosity in Pa*s.
    dmu_dT : ndarray
        Derivative of ``mu`` with respect to ``T`` in Pa*s/K.
    """
    T = np.asarray(T)
    check_validity(name, T, 100.0, 1000.0, "K")  # the correlation
    check_range(name, T, 0.0, np.inf, "K", lower_inclusive=False)  # the math
    den = T + SUTHERLAND_S
    mu = SUTHERLAND_BETA * T ** 1.5 / den
    dmu_dT = SUTHERLAND_BETA * np.sqrt(T) * (0.5 * T + 1.5 * SUTHERLAND_S) / den ** 2
    return mu, dmu_dT
