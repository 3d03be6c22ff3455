"""Tests for the coolant mixing component."""

import importlib
import itertools

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.cooling_mix_comp import CoolingMixComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# The gas module and Cantera use the same NASA 7-coefficient species data; the molar masses differ in
# the last digits (Cantera builds them from its element table) and Cantera's HP solve has its own
# tolerance.
RTOL_CANTERA = 1e-6
PARTIALS_TOL = 1e-10
SEED = 1729


def _problem(nn=1, gas=None, **opts):
    kwargs = {} if gas is None else {"gas": gas}
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("mix", CoolingMixComp(num_nodes=nn, **kwargs, **opts), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def _set(prob, Tt, Pt, far, W, Tt3, psi, basis, si="4", coolant="cooling_frac_vane",
         basis_name="core_flow_frac"):
    prob.set_val(f"Tt{si}", Tt, units="K")
    prob.set_val(f"Pt{si}", Pt, units="Pa")
    prob.set_val(f"FAR{si}", far)
    prob.set_val(f"W{si}_frac", W)
    prob.set_val("Tt3", Tt3, units="K")
    prob.set_val(coolant, psi)
    if basis_name is not None:
        prob.set_val(basis_name, basis)


def _random_inputs(rng, nn):
    return dict(Tt=rng.uniform(1200.0, 1900.0, nn), Pt=rng.uniform(5e5, 5e6, nn),
                far=rng.uniform(0.0, 0.035, nn), W=rng.uniform(0.03, 0.12, nn),
                Tt3=rng.uniform(600.0, 950.0, nn), psi=rng.uniform(0.0, 0.2, nn),
                basis=rng.uniform(0.03, 0.5, nn))


def test_calorically_perfect_mixing_temperature():
    """Constant cp: the steady-flow energy balance reduces to the flow-weighted mean temperature."""
    gas = CaloricallyPerfectGas(cp=1100.0, gamma=1.35)
    rng = np.random.default_rng(SEED)
    nn = 5
    x = _random_inputs(rng, nn)
    prob = _problem(nn=nn, gas=gas)
    _set(prob, **x)
    prob.run_model()
    W_c = x["basis"] * x["psi"]
    T_mix = (x["W"] * x["Tt"] + W_c * x["Tt3"]) / (x["W"] + W_c)
    np.testing.assert_allclose(prob.get_val("Tt41"), T_mix, rtol=RTOL_EXACT)


def test_thermally_perfect_against_cantera():
    """Mixed-stream temperature from an independent Cantera enthalpy balance of the frozen species mixture."""
    ct = importlib.import_module("cantera")
    gas = ThermallyPerfectGas()
    spc = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    names = ("N2", "O2", "Ar", "CO2", "H2O")
    sol = ct.Solution(thermo="ideal-gas", species=[spc[n] for n in names])
    y_air = np.array([gas.air_mass_fractions[n] for n in names])
    dy_fuel = np.array([gas.fuel_mass_change[n] for n in names])
    rng = np.random.default_rng(SEED + 1)
    nn = 4
    x = _random_inputs(rng, nn)
    prob = _problem(nn=nn, gas=gas)
    _set(prob, **x)
    prob.run_model()
    T_out = prob.get_val("Tt41")
    for i in range(nn):
        f = x["far"][i]
        Y_in = (y_air + f * dy_fuel) / (1.0 + f)  # frozen lean products per kg of mixture
        W_in, W_c = x["W"][i], x["basis"][i] * x["psi"][i]
        sol.TPY = x["Tt"][i], x["Pt"][i], Y_in
        H = W_in * sol.enthalpy_mass
        sol.TPY = x["Tt3"][i], x["Pt"][i], y_air
        H += W_c * sol.enthalpy_mass
        Y_out = (W_in * Y_in + W_c * y_air) / (W_in + W_c)
        sol.HPY = H / (W_in + W_c), x["Pt"][i], Y_out  # frozen: no equilibrium solve
        assert T_out[i] == pytest.approx(sol.T, rel=RTOL_CANTERA)


@pytest.mark.parametrize("include_fuel_mass", (True, False))
def test_conservation(include_fuel_mass):
    """Mass, fuel and energy are conserved; total pressure passes unchanged."""
    gas = ThermallyPerfectGas()
    rng = np.random.default_rng(SEED + 2)
    nn = 5
    x = _random_inputs(rng, nn)
    prob = _problem(nn=nn, gas=gas, station_in="44", station_out="45", coolant_name="cooling_frac_rotor",
                    include_fuel_mass=include_fuel_mass)
    _set(prob, **x, si="44", coolant="cooling_frac_rotor")
    prob.run_model()
    W_c = x["basis"] * x["psi"]
    W_out, far_out, T_out = prob.get_val("W45_frac"), prob.get_val("FAR45"), prob.get_val("Tt45")
    np.testing.assert_allclose(W_out, x["W"] + W_c, rtol=RTOL_EXACT)
    A_in = x["W"] / (1.0 + x["far"]) if include_fuel_mass else x["W"]
    A_out = W_out / (1.0 + far_out) if include_fuel_mass else W_out
    np.testing.assert_allclose(A_out, A_in + W_c, rtol=RTOL_EXACT)  # air
    np.testing.assert_allclose(far_out * A_out, x["far"] * A_in, rtol=RTOL_EXACT)  # fuel
    energy_in = x["W"] * gas.properties(x["Tt"], x["far"]).h + W_c * gas.properties(x["Tt3"], 0.0).h
    np.testing.assert_allclose(W_out * gas.properties(T_out, far_out).h, energy_in, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Pt45"), x["Pt"], rtol=0.0, atol=0.0)


def test_coolant_per_unit_inlet_flow():
    """coolant_basis_name=None: the coolant input is already per unit W2 and there is no basis input."""
    prob = _problem(nn=2, coolant_basis_name=None, coolant_name="cooling_frac_direct")
    _set(prob, 1600.0, 3e6, 0.025, 0.08, 800.0, np.array([0.0, 0.01]), None, coolant="cooling_frac_direct",
         basis_name=None)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("W41_frac"), [0.08, 0.09], rtol=RTOL_EXACT)
    # no coolant: the stream passes unchanged
    assert prob.get_val("Tt41")[0] == pytest.approx(1600.0, rel=RTOL_EXACT)
    assert prob.get_val("FAR41")[0] == pytest.approx(0.025, rel=RTOL_EXACT)
    inputs = [meta["prom_name"] for _, meta in prob.model.list_inputs(prom_name=True, out_stream=None)]
    assert "core_flow_frac" not in inputs


_COMBOS = list(itertools.product((True, False), ("core_flow_frac", None), ("tpg", "cpg"), (1, 4)))


# A calorically perfect gas does not depend on the fuel-air ratio, so check_partials warns about
# declared partials that are zero there; the pattern is declared for the thermally perfect gas.
@pytest.mark.filterwarnings("ignore::openmdao.utils.om_warnings.DerivativesWarning")
@pytest.mark.parametrize("include_fuel_mass, basis_name, gas_kind, nn", _COMBOS)
def test_partials(include_fuel_mass, basis_name, gas_kind, nn):
    """Analytic partials against complex step at seeded random points, every option combination."""
    gas = ThermallyPerfectGas() if gas_kind == "tpg" else CaloricallyPerfectGas(cp=1100.0, gamma=1.35)
    rng = np.random.default_rng(SEED + 10 * nn)
    prob = _problem(nn=nn, gas=gas, include_fuel_mass=include_fuel_mass, coolant_basis_name=basis_name)
    _set(prob, **_random_inputs(rng, nn), basis_name=basis_name)
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("var, val, match", [
    ("Tt4", np.nan, r"Tt4 = nan K is outside the valid range"),
    ("Tt3", 100.0, r"Tt3 = 100 K is outside the valid range \(from 200 up to 2400 K\)"),
    ("Pt4", 0.0, r"Pt4 = 0 Pa is outside the valid range \(above 0 Pa\)"),
    ("FAR4", 0.09, r"FAR4 = 0.09 is outside the valid range \(from 0 up to 0.068"),
    ("W4_frac", 0.0, r"W4_frac = 0 is outside the valid range \(above 0\)"),
    ("cooling_frac_vane", -0.01,
     r"cooling_frac_vane = -0.01 is outside the valid range \(from 0 up to 0.5\)"),
    ("core_flow_frac", np.nan, r"core_flow_frac = nan is outside the valid range"),
])
def test_bad_inputs_raise(var, val, match):
    prob = _problem()
    prob.set_val(var, val)
    with pytest.raises(InputRangeError, match=match):
        prob.run_model()
