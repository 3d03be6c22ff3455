"""Tests for the pure-numpy skin-friction, compressibility, form-factor and viscosity functions."""

import numpy as np
import pytest
from bypassopt.components.installation.skin_friction import (
    compressibility_factor,
    ittc1957_cf,
    nacelle_form_factor,
    schlichting_cf,
    sutherland_viscosity,
)
from scipy.optimize import brentq

from bypassopt.components.validation import InputRangeError

# Field-reference 8.2 tabulates C_f to 6 decimals (half a unit in the last place).
ATOL_TABLE_CF = 5.1e-7
# Field-reference 8.2 tabulates the compressibility factor to 6 decimals.
ATOL_TABLE_K = 5.1e-7
# Field-reference 1.3 tabulates the viscosity to 5 significant digits.
RTOL_MU_TABLE = 5e-5
RTOL_DERIV = 1e-12
CS_STEP = 1e-30

RE_TABLE = np.array([1e6, 1e7, 5e7, 1e8])
# Field-reference 8.2 table ("computed here" there from the published formulas themselves):
CF_PS_M0 = np.array([0.004471, 0.003004, 0.002350, 0.002128])      # Prandtl-Schlichting, M = 0
CF_PS_M080 = np.array([0.004222, 0.002836, 0.002219, 0.002010])    # P-S x Raymer factor, M = 0.8
CF_PS_M085 = np.array([0.004192, 0.002817, 0.002203, 0.001996])    # P-S x Raymer factor, M = 0.85
CF_ITTC = np.array([0.004687, 0.003000, 0.002309, 0.002083])       # ITTC-1957 line


def _cs_derivative(func, x):
    """Complex-step derivative of the value returned by ``func`` (independent of its own slope)."""
    x = np.asarray(x, dtype=float)
    return np.imag(func(x + 1j * CS_STEP)[0]) / CS_STEP


def test_schlichting_matches_field_reference_table():
    """Prandtl-Schlichting 0.455/(log10 Re)^2.58 (Schlichting, Boundary-Layer Theory); check values
    from field-reference 8.2, which computed them from the same formula ("computed here")."""
    cf, _ = schlichting_cf(RE_TABLE)
    np.testing.assert_allclose(cf, CF_PS_M0, atol=ATOL_TABLE_CF, rtol=0)


@pytest.mark.parametrize("Mach, expected", [(0.0, CF_PS_M0), (0.8, CF_PS_M080), (0.85, CF_PS_M085)])
def test_compressible_cf_matches_field_reference_table(Mach, expected):
    """P-S line times Raymer's (1 + 0.144 M^2)^-0.65 (from memory); field-reference 8.2 table,
    computed there from the formulas."""
    cf, _ = schlichting_cf(RE_TABLE)
    k, _ = compressibility_factor(Mach)
    np.testing.assert_allclose(cf * k, expected, atol=ATOL_TABLE_CF, rtol=0)


def test_compressibility_factor_matches_field_reference():
    """Field-reference 8.2: 1.000000 (M 0), 0.977274 (0.5), 0.944309 (0.8), 0.937691 (0.85),
    computed there from Raymer's formula."""
    k, _ = compressibility_factor(np.array([0.0, 0.5, 0.8, 0.85]))
    np.testing.assert_allclose(k, [1.0, 0.977274, 0.944309, 0.937691], atol=ATOL_TABLE_K, rtol=0)


def test_ittc1957_matches_field_reference_table():
    """ITTC-1957 line 0.075/(log10 Re - 2)^2; field-reference 8.2 table (computed there)."""
    cf, _ = ittc1957_cf(RE_TABLE)
    np.testing.assert_allclose(cf, CF_ITTC, atol=ATOL_TABLE_CF, rtol=0)


def test_schlichting_and_ittc1957_agree_within_4_percent():
    """Independent cross-check: Prandtl-Schlichting (Schlichting, Boundary-Layer Theory) and the
    ITTC-1957 line are separate fits of turbulent flat-plate data; over 1e7-1e8 they agree to 4 %."""
    Re = np.logspace(7.0, 8.0, 21)
    cf_ps, _ = schlichting_cf(Re)
    cf_ittc, _ = ittc1957_cf(Re)
    assert np.all(np.abs(cf_ps / cf_ittc - 1.0) < 0.04)


def test_schlichting_matches_karman_schoenherr_within_3_percent():
    """Kármán-Schoenherr 0.242/sqrt(Cf) = log10(Re Cf) (implicit; solved here with brentq) is an
    independent turbulent flat-plate line; field-reference 8.2 gives agreement within ~3 % over 1e6-1e8."""
    Re = np.logspace(6.0, 8.0, 21)
    cf_ps, _ = schlichting_cf(Re)
    cf_ks = np.array([brentq(lambda cf, r=r: 0.242 / np.sqrt(cf) - np.log10(r * cf), 1e-4, 1e-1)
                      for r in Re])
    np.testing.assert_allclose(cf_ks[[0, 10, -1]], [0.004409, 0.002934, 0.002072], atol=ATOL_TABLE_CF)
    assert np.all(np.abs(cf_ps / cf_ks - 1.0) < 0.03)


def test_nacelle_form_factor_value():
    """Raymer FF = 1 + 0.35/(l/d) (from memory); field-reference 8.2: FF = 1.2022 for L 4.5 m, D 2.6 m."""
    ff, _ = nacelle_form_factor(4.5 / 2.6)
    assert ff == pytest.approx(1.2022, abs=5e-5)


def test_sutherland_viscosity_matches_iso_table():
    """ISO 2533 Sutherland law; field-reference 1.3 table (computed there, = ambiance):
    1.7894e-5 Pa s at 288.15 K, 1.4216e-5 at 216.65 K, 1.4334e-5 at 218.808 K."""
    mu, _ = sutherland_viscosity(np.array([288.15, 216.65, 218.808]))
    np.testing.assert_allclose(mu, [1.7894e-5, 1.4216e-5, 1.4334e-5], rtol=RTOL_MU_TABLE)


@pytest.mark.parametrize("func, x", [
    (schlichting_cf, np.array([1.2e5, 3e6, 2.7e7, 8e8])),
    (ittc1957_cf, np.array([1.2e5, 3e6, 2.7e7, 8e8])),
    (compressibility_factor, np.array([0.0, 0.3, 0.78, 1.4])),
    (nacelle_form_factor, np.array([0.6, 1.4, 3.0, 9.0])),
    (sutherland_viscosity, np.array([150.0, 218.8, 300.0, 900.0])),
])
def test_derivatives_match_complex_step(func, x):
    """The returned slope equals the complex-step derivative of the returned value."""
    _, slope = func(x)
    np.testing.assert_allclose(slope, _cs_derivative(func, x), rtol=RTOL_DERIV, atol=0)


@pytest.mark.parametrize("func, bad, pattern", [
    (schlichting_cf, 5e4, r"Re = 50000 .*from 100000 up to 1e\+09"),
    (ittc1957_cf, 2e9, r"Re = 2e\+09 .*from 100000 up to 1e\+09"),
    (schlichting_cf, np.nan, r"Re = nan .*from 100000 up to 1e\+09"),
    (compressibility_factor, -0.1, r"Mach = -0.1 .*from 0 up to 2"),
    (nacelle_form_factor, 0.2, r"length_over_diameter = 0.2 .*from 0.5 up to 10"),
    (sutherland_viscosity, 50.0, r"T = 50 K .*from 100 up to 1000 K"),
])
def test_bad_input_names_variable_and_range(func, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    with pytest.raises(InputRangeError, match=pattern):
        func(np.array([bad]))
