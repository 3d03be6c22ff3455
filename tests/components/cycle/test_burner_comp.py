"""Tests for the burner component."""

import importlib
import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials
from scipy.optimize import brentq

from bypassopt.components.cycle.burner_comp import BurnerComp
from bypassopt.components.gas.thermo import T_REF, CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# Field-reference 2.7 prints fuel-air ratios to 6 decimals: half a unit of the last digit.
ATOL_FIELD_REF_FAR = 5e-7
# Field-reference 4.3 prints f = 0.021473.
ATOL_FIELD_REF_IDEAL = 5e-7
# The gas module and Cantera share the NASA 7-coefficient data; they differ in the last digits of the air
# composition and of the molar masses (which set the product composition).
RTOL_CANTERA = 1e-6  # observed 2e-7
PARTIALS_TOL = 1e-10
SEED = 20250106
HC_RATIO = 1.92
LHV = 43.0e6
CP, GAMMA = 1004.0, 1.4
GASES = [ThermallyPerfectGas(hc_ratio=HC_RATIO), CaloricallyPerfectGas(cp=CP, gamma=GAMMA)]
GAS_IDS = ["thermally_perfect", "calorically_perfect"]


def _problem(nn=1, gas=None, include_fuel_mass=True):
    prob = om.Problem(reports=False)
    kwargs = {} if gas is None else {"gas": gas}
    comp = BurnerComp(num_nodes=nn, include_fuel_mass=include_fuel_mass, **kwargs)
    prob.model.add_subsystem("burner", comp, promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def _cantera_far(T3, T4, lhv=LHV, eta=1.0, y=HC_RATIO):
    """Fuel-air ratio solved independently with Cantera 3 (nasa_gas.yaml, NASA TM-4513 data).

    Energy balance of field-reference 2.7, fuel supplied at 298.15 K where the LHV is defined, frozen
    complete lean combustion of C H_y: eta f LHV + [h_air(T3) - h_air(298.15)]
    = (1 + f) [h_prod(T4; f) - h_prod(298.15; f)], solved for f by bracketing.
    """
    ct = importlib.import_module("cantera")
    spc = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    names = ("N2", "O2", "Ar", "CO2", "H2O")
    gas = ct.Solution(thermo="ideal-gas", species=[spc[n] for n in names])
    mw = dict(zip(names, gas.molecular_weights, strict=True))
    # Dry air, 1976 US / ISO 2533 composition reduced to four species (field-reference 2.3).
    x_air = {"N2": 0.780863, "O2": 0.209482, "Ar": 0.009340, "CO2": 0.000314, "H2O": 0.0}
    m_air = sum(x * mw[n] for n, x in x_air.items())
    kmol_air = {n: x / m_air for n, x in x_air.items()}  # kmol per kg of air
    m_fuel = mw["CO2"] - mw["O2"] + y / 2.0 * (mw["H2O"] - 0.5 * mw["O2"])  # = M_C + y M_H
    p = 101325.0

    def sensible_h(kmol, T):
        gas.TPX = T, p, kmol
        h_T = gas.enthalpy_mass
        gas.TPX = T_REF, p, kmol
        return h_T - gas.enthalpy_mass

    def residual(f):
        n_f = f / m_fuel
        prod = dict(kmol_air)
        prod["CO2"] += n_f
        prod["H2O"] += y / 2.0 * n_f
        prod["O2"] -= (1.0 + y / 4.0) * n_f
        return eta * f * lhv + sensible_h(kmol_air, T3) - (1.0 + f) * sensible_h(prod, T4)

    return brentq(residual, 1e-6, 0.06, xtol=1e-14, rtol=1e-14)


@pytest.mark.parametrize("T3, T4, far_ref", [(800.0, 1600.0, 0.023826), (900.0, 1800.0, 0.027785)])
def test_thermally_perfect_field_reference(T3, T4, far_ref):
    """Source: field-reference 2.7 (Cantera nasa_gas, computed there): LHV 43 MJ/kg, eta 1, y = 1.92."""
    prob = _problem(1, ThermallyPerfectGas(hc_ratio=HC_RATIO))
    prob.set_val("Tt3", T3, units="K")
    prob.set_val("Tt4", T4, units="K")
    prob.set_val("combustion_eff", 1.0)
    prob.set_val("fuel_LHV", LHV, units="J/kg")
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("FAR4"), far_ref, rtol=0.0, atol=ATOL_FIELD_REF_FAR)


def test_thermally_perfect_matches_cantera():
    """Source: Cantera 3 with nasa_gas.yaml, energy balance solved independently in this test."""
    T3 = np.array([600.0, 750.0, 850.0, 950.0])
    T4 = np.array([1300.0, 1500.0, 1750.0, 2000.0])
    eta = np.array([1.0, 0.999, 0.995, 0.99])
    lhv = np.array([43.0e6, 42.8e6, 43.2e6, 43.0e6])
    prob = _problem(4, ThermallyPerfectGas(hc_ratio=HC_RATIO))
    prob.set_val("Tt3", T3)
    prob.set_val("Tt4", T4)
    prob.set_val("combustion_eff", eta)
    prob.set_val("fuel_LHV", lhv)
    prob.run_model()
    ref = [_cantera_far(a, b, lhv=c, eta=d) for a, b, c, d in zip(T3, T4, lhv, eta, strict=True)]
    np.testing.assert_allclose(prob.get_val("FAR4"), ref, rtol=RTOL_CANTERA)


def test_energy_balance_with_mixture_enthalpy():
    """Conservation: h_air(T3) + f eta LHV = (1 + f) h(T4, f) with the products' mixture enthalpy."""
    gas = ThermallyPerfectGas(hc_ratio=HC_RATIO)
    prob = _problem(3, gas)
    T3, T4, eta = np.array([700.0, 800.0, 900.0]), np.array([1400.0, 1700.0, 2100.0]), 0.998
    prob.set_val("Tt3", T3)
    prob.set_val("Tt4", T4)
    prob.set_val("combustion_eff", eta)
    prob.run_model()
    f = prob.get_val("FAR4")
    lhs = gas.properties(T3, 0.0).h + f * eta * LHV
    rhs = (1.0 + f) * gas.properties(T4, f).h
    np.testing.assert_allclose(lhs, rhs, rtol=RTOL_EXACT)


def test_calorically_perfect_with_fuel_mass():
    """Calorically perfect gas with fuel mass: closed form derived here.

    Constant cp, fuel supplied at T_REF where the LHV is defined, h = cp (T - T_REF):
    cp (T3 - T_REF) + f eta LHV = (1 + f) cp (T4 - T_REF)  =>  f = cp (T4 - T3) / (eta LHV - cp (T4 - T_REF)).
    This is the textbook constant-cp form f = (cp_t T4 - cp_c T3)/(eta LHV - cp_t T4) (field-reference 2.7)
    with cp_t = cp_c = cp, except that the textbook form refers the fuel enthalpy to 0 K instead of T_REF.
    """
    prob = _problem(3, CaloricallyPerfectGas(cp=CP, gamma=GAMMA))
    T3, T4 = np.array([600.0, 800.0, 900.0]), np.array([1400.0, 1600.0, 1800.0])
    eta = np.array([1.0, 0.999, 0.99])
    prob.set_val("Tt3", T3)
    prob.set_val("Tt4", T4)
    prob.set_val("combustion_eff", eta)
    prob.run_model()
    f = CP * (T4 - T3) / (eta * LHV - CP * (T4 - T_REF))
    np.testing.assert_allclose(prob.get_val("FAR4"), f, rtol=RTOL_EXACT)


def test_ideal_cycle_without_fuel_mass():
    """Ideal cycle, fuel mass neglected: field-reference 4.3 check value.

    Source: field-reference 4.3 (ideal turbofan, Mattingly-style closed form, computed there):
    T0 = 216.65 K, M0 = 0.8 (tau_r = 1.128), pi_c = 36, Tt4 = 1600 K, cp 1004, h_PR 43 MJ/kg -> f = 0.021473,
    f = cp T0 (tau_lambda - tau_r tau_c)/h_PR = cp (Tt4 - Tt3)/h_PR with the fuel mass neglected.
    """
    prob = _problem(1, CaloricallyPerfectGas(cp=CP, gamma=GAMMA), include_fuel_mass=False)
    Tt3 = 216.65 * 1.128 * 36.0 ** ((GAMMA - 1.0) / GAMMA)
    prob.set_val("Tt3", Tt3)
    prob.set_val("Tt4", 1600.0)
    prob.set_val("combustion_eff", 1.0)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("FAR4"), 0.021473, rtol=0.0, atol=ATOL_FIELD_REF_IDEAL)
    np.testing.assert_allclose(prob.get_val("FAR4"), CP * (1600.0 - Tt3) / LHV, rtol=RTOL_EXACT)


def test_pressure_loss():
    """Pt4 = Pt3 (1 - burner_pressure_loss) (definition of the burner loss); the default loss is 4 %."""
    prob = _problem(2)
    prob.set_val("Pt3", [2.0e6, 3.0e6])
    prob.set_val("burner_pressure_loss", [0.04, 0.05])
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Pt4"), [2.0e6 * 0.96, 3.0e6 * 0.95], rtol=RTOL_EXACT)


@pytest.mark.parametrize("gas", GASES, ids=GAS_IDS)
@pytest.mark.parametrize("include_fuel_mass", [True, False])
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, include_fuel_mass, gas):
    """Analytic partials match complex step for both gas models and both fuel-mass options."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas, include_fuel_mass)
    # Tt3 on both sides of the 1000 K split of the NASA polynomials (for nn = 4 with this seed).
    prob.set_val("Tt3", rng.uniform(600.0, 1100.0, nn))
    prob.set_val("Tt4", rng.uniform(1300.0, 2000.0, nn))
    prob.set_val("Pt3", rng.uniform(1.0e6, 5.0e6, nn))
    prob.set_val("burner_pressure_loss", rng.uniform(0.02, 0.06, nn))
    prob.set_val("combustion_eff", rng.uniform(0.98, 1.0, nn))
    prob.set_val("fuel_LHV", rng.uniform(42.0e6, 44.0e6, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_t4_not_above_t3():
    """A burner exit temperature not above the compressor exit temperature is refused."""
    prob = _problem(2)
    prob.set_val("Tt3", [800.0, 1100.0])
    prob.set_val("Tt4", [1600.0, 1050.0])
    with pytest.raises(InputRangeError, match=r"Tt4 = 1050 K at node 1 is not above the compressor exit "
                                              r"temperature Tt3 = 1100 K"):
        prob.run_model()


def test_far_above_stoichiometric():
    """A fuel-air ratio above stoichiometric is refused with the cause named."""
    prob = _problem(1)
    prob.set_val("Tt3", 300.0)
    prob.set_val("Tt4", 2400.0)
    prob.set_val("combustion_eff", 0.8)
    with pytest.raises(om.AnalysisError, match=r"fuel-air ratio FAR4 = 0\.0[89]\d* is above stoichiometric "
                                               r"\(0\.0681\d*\)"):
        prob.run_model()


def test_heat_release_below_product_enthalpy():
    """A combustion efficiency so low that the fuel cannot heat its own products is refused."""
    prob = _problem(1)
    prob.set_val("Tt3", 800.0)
    prob.set_val("Tt4", 2000.0)
    prob.set_val("combustion_eff", 0.1)
    with pytest.raises(InputRangeError, match=r"combustion_eff\*fuel_LHV = 4\.3e\+06 J/kg is not above"):
        prob.run_model()


@pytest.mark.parametrize("name, value, pattern", [
    ("Tt4", 2500.0, r"Tt4 = 2500 K .*from 1000 up to 2400 K"),
    ("Tt4", 950.0, r"Tt4 = 950 K .*from 1000 up to 2400 K"),
    ("Tt4", np.nan, r"Tt4 = nan K .*from 1000 up to 2400 K"),
    ("Tt3", 150.0, r"Tt3 = 150 K .*from 200 up to 2400 K"),
    ("burner_pressure_loss", 0.3, r"burner_pressure_loss = 0\.3 .*from 0 up to 0\.2"),
    ("combustion_eff", 0.0, r"combustion_eff = 0 .*above 0 up to 1"),
    ("combustion_eff", 1.01, r"combustion_eff = 1\.01 .*above 0 up to 1"),
    ("fuel_LHV", 5.0e6, r"fuel_LHV = 5e\+06 J/kg .*from 1e\+07 up to 1\.5e\+08 J/kg"),
    ("Pt3", np.nan, r"Pt3 = nan Pa"),
])
def test_bad_inputs(name, value, pattern):
    """Inputs outside their range (or NaN) are refused with the variable and range named."""
    prob = _problem(1)
    prob.set_val(name, value)
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()


def test_calorically_perfect_accepts_its_whole_range():
    """With a calorically perfect gas Tt4 may lie anywhere in the gas model's range (here 500 K)."""
    prob = _problem(1, CaloricallyPerfectGas(cp=CP, gamma=GAMMA))
    prob.set_val("Tt3", 300.0)
    prob.set_val("Tt4", 500.0)
    prob.run_model()
    assert 0.0 < prob.get_val("FAR4")[0] < 0.01
