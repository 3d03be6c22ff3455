"""Tests of the assembled design-point cycle against textbook closed forms and conservation laws."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas

IDEAL_RTOL = 1e-9
TOTALS_TOL = 1e-8

# Ideal turbofan check case (field-reference section 4.3; Mattingly, *Elements of Propulsion*,
# chapter 5 "Parametric Cycle Analysis of Ideal Engines"): M0 0.8, T0 216.65 K (ISA 11 km),
# gamma 1.4, cp 1004 J/(kg K), h_PR 43 MJ/kg.
CP, GAMMA, LHV = 1004.0, 1.4, 43.0e6


def ideal_turbofan(M0, T0, bpr, fpr, opr, tt4, cp=CP, gamma=GAMMA, h_pr=LHV):
    """Closed-form ideal separate-exhaust turbofan (Mattingly, Elements of Propulsion, ch. 5).

    Written independently in the test from the textbook relations listed in field-reference 4.2.
    """
    R = cp * (gamma - 1.0) / gamma
    a0 = np.sqrt(gamma * R * T0)
    tau_r = 1.0 + 0.5 * (gamma - 1.0) * M0**2
    tau_lam = tt4 / T0
    tau_c = opr ** ((gamma - 1.0) / gamma)
    tau_f = fpr ** ((gamma - 1.0) / gamma)
    tau_t = 1.0 - tau_r / tau_lam * ((tau_c - 1.0) + bpr * (tau_f - 1.0))
    v9_a0 = np.sqrt(2.0 / (gamma - 1.0) * tau_lam / (tau_r * tau_c) * (tau_r * tau_c * tau_t - 1.0))
    v19_a0 = np.sqrt(2.0 / (gamma - 1.0) * (tau_r * tau_f - 1.0))
    fsp = a0 / (1.0 + bpr) * (v9_a0 - M0 + bpr * (v19_a0 - M0))
    f = cp * T0 * (tau_lam - tau_r * tau_c) / h_pr
    tsfc = f / ((1.0 + bpr) * fsp)
    return fsp, tsfc, v9_a0 * a0, v19_a0 * a0


def ideal_settings(prob):
    """All efficiencies 1, no losses, no extractions (textbook ideal cycle)."""
    for name in ("fan_bypass_eff_poly", "fan_core_eff_poly", "booster_eff_poly", "hpc_eff_poly", "hpt_eff_poly",
                 "lpt_eff_poly", "HP_mech_eff", "LP_mech_eff", "combustion_eff", "inlet_recovery",
                 "core_nozzle_velocity_coeff", "bypass_nozzle_velocity_coeff"):
        prob.set_val(name, 1.0)
    for name in ("burner_dPqP", "core_duct_dPqP", "bypass_duct_dPqP", "hpt_vane_cooling_frac",
                 "hpt_rotor_cooling_frac", "customer_bleed_frac", "HP_power_offtake"):
        prob.set_val(name, 0.0)
    prob.set_val("booster_PR", 1.0)


def build(nn=1, gas=None, **opts):
    """Set up a cycle problem."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("cycle", TurbofanCycleGroup(num_nodes=nn, gas=gas or ThermallyPerfectGas(), **opts),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


@pytest.fixture(scope="module")
def ideal_grid():
    """Ideal cycle over a grid of BPR, FPR, OPR, T4 and Mach, one vectorized run."""
    rng = np.random.default_rng(7)
    nn = 24
    grid = {
        "BPR": rng.uniform(2.0, 14.0, nn),
        "FPR": rng.uniform(1.3, 2.0, nn),
        "OPR": rng.uniform(20.0, 50.0, nn),
        "Tt4": rng.uniform(1400.0, 1900.0, nn),
        "Mach0": rng.uniform(0.3, 0.85, nn),
    }
    gas = CaloricallyPerfectGas(cp=CP, gamma=GAMMA)
    prob = build(nn, gas=gas, include_fuel_mass=False, nozzle_expansion="full", cooling_model="given")
    ideal_settings(prob)
    prob.set_val("altitude", 11000.0 * np.ones(nn), units="m")
    prob.set_val("dT_isa", 0.0)
    prob.set_val("fuel_LHV", LHV)
    for k, v in grid.items():
        prob.set_val(k, v)
    prob.run_model()
    return prob, grid


def test_ideal_cycle_matches_closed_form(ideal_grid):
    """Specific thrust, TSFC and jet velocities equal the ideal-turbofan closed form to 1e-9."""
    prob, g = ideal_grid
    fsp, tsfc, v9, v19 = ideal_turbofan(g["Mach0"], 216.65, g["BPR"], g["FPR"], g["OPR"], g["Tt4"])
    np.testing.assert_allclose(prob.get_val("Fn_specific"), fsp, rtol=IDEAL_RTOL)
    np.testing.assert_allclose(prob.get_val("TSFC"), tsfc, rtol=IDEAL_RTOL)
    np.testing.assert_allclose(prob.get_val("Fg8_specific"), v9, rtol=IDEAL_RTOL)
    np.testing.assert_allclose(prob.get_val("Fg18_specific"), v19, rtol=IDEAL_RTOL)


def test_ideal_check_values_field_reference():
    """The closed form itself reproduces field-reference 4.3 (computed there by two methods)."""
    fsp, tsfc, v9, v19 = ideal_turbofan(0.8, 216.65, 10.0, 1.6, 36.0, 1600.0)
    assert fsp == pytest.approx(157.936, rel=1e-5)
    assert tsfc == pytest.approx(1.2360e-5, rel=1e-4)
    assert v9 == pytest.approx(780.408, rel=1e-5)
    assert v19 == pytest.approx(355.261, rel=1e-5)
