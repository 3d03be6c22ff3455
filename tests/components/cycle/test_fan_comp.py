"""Tests for the fan component."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.fan_comp import FanComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# Field-reference 3.2 prints temperatures to 3 decimals (6 significant figures) and works to 3 decimals
# in kJ/kg: half a unit of the last printed digit.
RTOL_FIELD_REF = 2e-6
ATOL_FIELD_REF_WORK = 5e-4  # kJ/kg
# The gas module and Cantera use the same NASA 7-coefficient data; they differ only in the last digits of
# the air composition and of the molar masses.
RTOL_CANTERA = 1e-6
PARTIALS_TOL = 1e-10
SEED = 20250103
CP, GAMMA = 1004.0, 1.4
GASES = [ThermallyPerfectGas(), CaloricallyPerfectGas(cp=CP, gamma=GAMMA)]
GAS_IDS = ["thermally_perfect", "calorically_perfect"]


def _problem(nn=1, gas=None, core_side_ratio="equal"):
    prob = om.Problem(reports=False)
    kwargs = {} if gas is None else {"gas": gas}
    prob.model.add_subsystem("fan", FanComp(num_nodes=nn, core_side_ratio=core_side_ratio, **kwargs),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def test_thermally_perfect_check_values():
    """Thermally perfect gas: field-reference 3.2 check values.

    Source: field-reference 3.2 (variable-cp dry air, Cantera nasa_gas, computed there):
    T1 = 288.15 K, pi = 1.5, e = 0.92 -> T2 = 326.792 K, dh = 38.848 kJ/kg.
    """
    prob = _problem(1, ThermallyPerfectGas(), core_side_ratio="input")
    prob.set_val("Tt2", 288.15, units="K")
    prob.set_val("Pt2", 101325.0, units="Pa")
    prob.set_val("FPR", 1.5)
    prob.set_val("fan_bypass_eff_poly", 0.92)
    prob.set_val("fan_core_PR", 1.5)
    prob.set_val("fan_core_eff_poly", 0.92)
    prob.run_model()
    for T_name, w_name in (("Tt13", "fan_bypass_work"), ("Tt21", "fan_core_work")):
        np.testing.assert_allclose(prob.get_val(T_name, units="K"), 326.792, rtol=RTOL_FIELD_REF)
        np.testing.assert_allclose(prob.get_val(w_name, units="kJ/kg"), 38.848, rtol=0.0,
                                   atol=ATOL_FIELD_REF_WORK)
    np.testing.assert_allclose(prob.get_val("Pt13"), 1.5 * 101325.0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Pt21"), 1.5 * 101325.0, rtol=RTOL_EXACT)


def test_work_equals_cantera_enthalpy_rise(cantera_air_enthalpy):
    """Conservation: the work is the enthalpy rise h(Tt_out) - h(Tt2), here from Cantera (nasa_gas.yaml)."""
    nn = 3
    prob = _problem(nn, ThermallyPerfectGas(), core_side_ratio="input")
    Tt2 = np.array([244.4, 288.15, 310.0])
    prob.set_val("Tt2", Tt2)
    prob.set_val("FPR", [1.35, 1.6, 2.2])
    prob.set_val("fan_core_PR", [1.2, 1.4, 1.9])
    prob.run_model()
    h2 = cantera_air_enthalpy(Tt2)
    for T_name, w_name in (("Tt13", "fan_bypass_work"), ("Tt21", "fan_core_work")):
        dh = cantera_air_enthalpy(prob.get_val(T_name)) - h2
        np.testing.assert_allclose(prob.get_val(w_name), dh, rtol=RTOL_CANTERA)


def test_calorically_perfect_closed_form():
    """Calorically perfect gas: closed-form temperature ratio and isentropic efficiency.

    Source: constant-gamma polytropic relations (field-reference 3.1; Saravanamuttoo et al., Gas Turbine
    Theory): T2/T1 = pi**((g-1)/(g e)), w = cp (T2 - T1); the isentropic efficiency
    (pi**((g-1)/g) - 1)/(T2/T1 - 1) reproduces the field-reference 3.2 values 0.91528 (pi 1.5, e 0.92) and
    0.92622 (pi 1.45, e 0.93), which equal fluids.compressible.isentropic_efficiency.
    """
    prob = _problem(1, CaloricallyPerfectGas(cp=CP, gamma=GAMMA), core_side_ratio="input")
    Tt2 = 250.0
    prob.set_val("Tt2", Tt2)
    prob.set_val("FPR", 1.5)
    prob.set_val("fan_bypass_eff_poly", 0.92)
    prob.set_val("fan_core_PR", 1.45)
    prob.set_val("fan_core_eff_poly", 0.93)
    prob.run_model()
    k = (GAMMA - 1.0) / GAMMA
    for T_name, w_name, pr, e, eta_ref in (("Tt13", "fan_bypass_work", 1.5, 0.92, 0.91528),
                                           ("Tt21", "fan_core_work", 1.45, 0.93, 0.92622)):
        tau = prob.get_val(T_name)[0] / Tt2
        np.testing.assert_allclose(tau, pr ** (k / e), rtol=RTOL_EXACT)
        np.testing.assert_allclose(prob.get_val(w_name), CP * (tau - 1.0) * Tt2, rtol=RTOL_EXACT)
        eta = (pr**k - 1.0) / (tau - 1.0)
        np.testing.assert_allclose(eta, eta_ref, atol=5e-6)  # 5 printed decimals


def test_equal_core_side_ratio():
    """With core_side_ratio='equal' the core-side stream has the bypass pressure ratio FPR."""
    prob = _problem(1, ThermallyPerfectGas())
    prob.set_val("FPR", 1.55)
    prob.set_val("fan_bypass_eff_poly", 0.91)
    prob.set_val("fan_core_eff_poly", 0.91)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Pt21"), prob.get_val("Pt13"), rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Tt21"), prob.get_val("Tt13"), rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("fan_core_work"), prob.get_val("fan_bypass_work"),
                               rtol=RTOL_EXACT)


@pytest.mark.parametrize("gas", GASES, ids=GAS_IDS)
@pytest.mark.parametrize("core_side_ratio", ["equal", "input"])
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, core_side_ratio, gas):
    """Analytic partials match complex step for both gas models and both core-side options."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas, core_side_ratio)
    prob.set_val("Tt2", rng.uniform(220.0, 320.0, nn))
    prob.set_val("Pt2", rng.uniform(20000.0, 120000.0, nn))
    prob.set_val("FPR", rng.uniform(1.2, 2.5, nn))
    prob.set_val("fan_bypass_eff_poly", rng.uniform(0.88, 0.94, nn))
    prob.set_val("fan_core_eff_poly", rng.uniform(0.86, 0.92, nn))
    if core_side_ratio == "input":
        prob.set_val("fan_core_PR", rng.uniform(1.1, 2.0, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("value", [1.0, 0.9, 4.5, np.nan])
def test_bad_fpr(value):
    """FPR must be above 1 and at most 4 (FPR = 1 is no fan): refused with the variable and range named."""
    prob = _problem(2)
    prob.set_val("FPR", [1.5, value])
    with pytest.raises(InputRangeError, match=r"FPR = .* at node 1 .*above 1 up to 4"):
        prob.run_model()


def test_fpr_one_message():
    """The message for FPR = 1 says that it must be above 1."""
    prob = _problem()
    prob.set_val("FPR", 1.0)
    with pytest.raises(om.AnalysisError, match=r"FPR = 1 is outside the valid range \(above 1 up to 4\)"):
        prob.run_model()


def test_bad_core_side_ratio_and_efficiency():
    """fan_core_PR below 1 and an efficiency above 1 are refused with the variable named."""
    prob = _problem(1, core_side_ratio="input")
    prob.set_val("fan_core_PR", 0.95)
    with pytest.raises(ValueError, match=r"fan_core_PR = 0\.95 .*from 1 up to 4"):
        prob.run_model()
    prob.set_val("fan_core_PR", 1.4)
    prob.set_val("fan_bypass_eff_poly", 1.2)
    with pytest.raises(ValueError, match=r"fan_bypass_eff_poly = 1\.2 .*from 0\.5 up to 1"):
        prob.run_model()


def test_exit_temperature_outside_gas_range():
    """An exit temperature beyond the gas model's range names the station."""
    prob = _problem(1)
    prob.set_val("Tt2", 2000.0)
    prob.set_val("FPR", 4.0)
    with pytest.raises(InputRangeError, match=r"Tt13 is outside the gas model's range"):
        prob.run_model()
