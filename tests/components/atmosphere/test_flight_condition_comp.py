"""Tests for the free-stream flight-condition component and the flight-condition group."""

import importlib
import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import (assert_check_partials, assert_check_totals,
                                         assert_no_approx_partials)
from scipy.optimize import brentq

from bypassopt.components.atmosphere.flight_condition_comp import FlightConditionComp
from bypassopt.components.atmosphere.flight_condition_group import FlightConditionGroup
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# The gas module and Cantera use the same NASA 7-coefficient data and CODATA R*; what remains is the
# last digits of the composition (field-reference 2.3 rounds the mole fractions to 6 digits) and the
# root-finder tolerances.
RTOL_CANTERA = 1e-6
# Field-reference 8.2 computed these with the constant-gamma standard speed of sound (fluids package);
# the real-gas a0 differs by ~4e-4, so V0 and Re' by that and q0 by twice it: measured 4.0e-4 (Re') and
# 7.5e-4 (q0) against the printed 6.125e6 and 10 154 Pa; about twice the larger.
RTOL_FIELD_REF = 1.5e-3
PARTIALS_TOL = 1e-10
SEED = 31415


def _comp_problem(Ts, Ps, Mach, mu=1.6e-5, gas=None):
    Ts = np.atleast_1d(np.asarray(Ts, dtype=float))
    nn = Ts.size
    kwargs = {} if gas is None else {"gas": gas}
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fc", FlightConditionComp(num_nodes=nn, **kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("Ts0", Ts, units="K")
    prob.set_val("Ps0", Ps * np.ones(nn), units="Pa")
    prob.set_val("Mach0", Mach * np.ones(nn))
    prob.set_val("mu0", mu * np.ones(nn), units="Pa*s")
    return prob


def test_calorically_perfect_gas_matches_naca_1135():
    """Source: NACA Report 1135 (1953), isentropic-flow relations for a perfect gas."""
    gamma, cp = 1.4, 1004.5
    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    Mach = np.array([0.0, 0.1, 0.3, 0.5, 0.78, 0.85, 0.95])
    Ts = np.linspace(200.0, 300.0, Mach.size)
    Ps = 30000.0
    prob = _comp_problem(Ts, Ps, 0.0, gas=gas)
    prob.set_val("Mach0", Mach)
    prob.run_model()
    T_ratio = 1.0 + 0.5 * (gamma - 1.0) * Mach ** 2  # NACA Report 1135, eq. 43
    P_ratio = T_ratio ** (gamma / (gamma - 1.0))  # NACA Report 1135, eq. 44
    R = cp * (gamma - 1.0) / gamma
    np.testing.assert_allclose(prob.get_val("Tt0") / Ts, T_ratio, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Pt0") / Ps, P_ratio, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("a0"), np.sqrt(gamma * R * Ts), rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("V0"), Mach * np.sqrt(gamma * R * Ts), rtol=RTOL_EXACT)
    # q = 0.5 rho V^2 = 0.5 gamma p M^2 for a perfect gas (NACA Report 1135, eq. 48)
    np.testing.assert_allclose(prob.get_val("q0"), 0.5 * gamma * Ps * Mach ** 2, rtol=RTOL_EXACT, atol=1e-9)


def _cantera_total_state(Ts, Ps, Mach):
    """Independent total state of 4-species dry air with Cantera (nasa_gas.yaml species data)."""
    ct = importlib.import_module("cantera")
    spc = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    air = ct.Solution(thermo="ideal-gas", species=[spc[n] for n in ("N2", "O2", "Ar", "CO2")])
    # Dry air, 1976 US / ISO 2533 composition reduced to four species (field-reference 2.3).
    X = {"N2": 0.780863, "O2": 0.209482, "Ar": 0.009340, "CO2": 0.000314}
    air.TPX = Ts, Ps, X
    h_s, s_s = air.enthalpy_mass, air.entropy_mass
    R = ct.gas_constant / air.mean_molecular_weight
    a = np.sqrt(air.cp_mass / air.cv_mass * R * Ts)  # ideal-gas speed of sound
    V = Mach * a
    h_t = h_s + 0.5 * V ** 2

    def h_residual(T):
        air.TP = T, Ps
        return air.enthalpy_mass - h_t

    Tt = brentq(h_residual, Ts, Ts + 200.0, xtol=1e-12, rtol=1e-14)

    def t_residual(P):
        air.SP = s_s, P  # isentropic: same entropy as the static state
        return air.T - Tt

    Pt = brentq(t_residual, Ps, 3.0 * Ps, xtol=1e-9, rtol=1e-14)
    return a, V, Tt, Pt


@pytest.mark.parametrize("Ts, Ps, Mach", [(288.15, 101325.0, 0.25),
                                          (218.808, 23842.27, 0.78),
                                          (216.65, 5474.88, 0.95),
                                          (250.0, 50000.0, 0.0)])
def test_thermally_perfect_gas_matches_cantera(Ts, Ps, Mach):
    """Source: Cantera 3 ideal-gas mixture with nasa_gas.yaml (NASA TM-4513 data), solved independently."""
    prob = _comp_problem(Ts, Ps, Mach, gas=ThermallyPerfectGas())
    prob.run_model()
    a, V, Tt, Pt = _cantera_total_state(Ts, Ps, Mach)
    np.testing.assert_allclose(prob.get_val("a0"), a, rtol=RTOL_CANTERA)
    np.testing.assert_allclose(prob.get_val("V0"), V, rtol=RTOL_CANTERA, atol=1e-9)
    np.testing.assert_allclose(prob.get_val("Tt0"), Tt, rtol=RTOL_CANTERA)
    np.testing.assert_allclose(prob.get_val("Pt0"), Pt, rtol=RTOL_CANTERA)


def test_cruise_reynolds_number_and_dynamic_pressure():
    """Source: field-reference 8.2 (computed there with fluids ATMOSPHERE_1976): M 0.78, 10 668 m ISA."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fc", FlightConditionGroup(), promotes=["*"])
    prob.setup()
    prob.set_val("altitude", 10668.0, units="m")
    prob.set_val("Mach0", 0.78)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Re_per_m0", units="1/m"), 6.125e6, rtol=RTOL_FIELD_REF)
    np.testing.assert_allclose(prob.get_val("q0", units="Pa"), 10154.0, rtol=RTOL_FIELD_REF)
    # Re' = rho V / mu with the group's own outputs (the gas R and the standard's R differ by 6e-6).
    Re = prob.get_val("rho0") * prob.get_val("V0") / prob.get_val("mu0")
    np.testing.assert_allclose(prob.get_val("Re_per_m0"), Re, rtol=1e-5)


@pytest.mark.parametrize("gas", [ThermallyPerfectGas(), CaloricallyPerfectGas(cp=1004.5, gamma=1.4)],
                         ids=["thermally_perfect", "calorically_perfect"])
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, gas):
    """Analytic partials match complex step for both gas models."""
    rng = np.random.default_rng(SEED + nn)
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fc", FlightConditionComp(num_nodes=nn, gas=gas), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("Ts0", rng.uniform(200.0, 320.0, nn))
    prob.set_val("Ps0", rng.uniform(5000.0, 101325.0, nn))
    prob.set_val("Mach0", rng.uniform(0.05, 0.95, nn))
    prob.set_val("mu0", rng.uniform(1.3e-5, 1.9e-5, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_group_totals():
    """The group uses analytic partials only, and its totals match complex step across both layers."""
    nn = 4
    rng = np.random.default_rng(SEED)
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fc", FlightConditionGroup(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    # both atmosphere layers
    prob.set_val("altitude", np.array([0.0, 4000.0, 10000.0, 16000.0]) + rng.uniform(100.0, 900.0, nn))
    prob.set_val("dT_isa", rng.uniform(-20.0, 20.0, nn))
    prob.set_val("Mach0", rng.uniform(0.1, 0.9, nn))
    prob.run_model()
    assert_no_approx_partials(prob.model)
    outs = ["Ts0", "Ps0", "rho0", "mu0", "a0_std", "a0", "V0", "Tt0", "Pt0", "q0", "Re_per_m0"]
    data = prob.check_totals(of=outs, wrt=["altitude", "dT_isa", "Mach0"], method="cs", out_stream=None)
    assert_check_totals(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("Mach", [-0.1, 0.96, np.nan])
def test_bad_mach(Mach):
    """Mach0 below 0, above 0.95 or NaN is refused with the variable and range named."""
    prob = _comp_problem([250.0, 250.0], 30000.0, 0.5)
    prob.set_val("Mach0", [0.5, Mach])
    with pytest.raises(InputRangeError, match=r"Mach0.*from 0 up to 0\.95"):
        prob.run_model()


def test_static_temperature_outside_gas_range():
    """ThermallyPerfectGas is valid from 200 K: a colder free stream is refused with a clear message."""
    prob = _comp_problem([190.0], 30000.0, 0.5)
    with pytest.raises(InputRangeError, match=r"Ts0.*from 200 up to 2400 K"):
        prob.run_model()
