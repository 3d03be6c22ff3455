"""Tests for the turbine component."""

import itertools

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials
from scipy.optimize import brentq

from bypassopt.components.cycle.nozzle_comp import NozzleComp
from bypassopt.components.cycle.spool_power_comp import SpoolPowerComp
from bypassopt.components.cycle.turbine_comp import TurbineComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-11
# Field-reference 3.2 rounds eta_t to 5 decimals and temperatures to 3 decimals.
ATOL_FIELD_REF_ETA = 5e-6
ATOL_FIELD_REF_T = 1e-3
PARTIALS_TOL = 1e-10
SEED = 1618


def _problem(nn=1, gas=None, name="hpt", spool="HP", station_in="41", station_out="44"):
    kwargs = {} if gas is None else {"gas": gas}
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("turb", TurbineComp(num_nodes=nn, name=name, spool=spool, station_in=station_in,
                                                 station_out=station_out, **kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def _set(prob, Tt, Pt, far, W, demand, eff, mech, name="hpt", spool="HP", si="41"):
    prob.set_val(f"Tt{si}", Tt, units="K")
    prob.set_val(f"Pt{si}", Pt, units="Pa")
    prob.set_val(f"FAR{si}", far)
    prob.set_val(f"W{si}_frac", W)
    prob.set_val(f"{spool}_power_demand", demand, units="J/kg")
    prob.set_val(f"{name}_eff_poly", eff)
    prob.set_val(f"{spool}_mech_eff", mech)


def test_calorically_perfect_closed_form():
    """Constant-gamma polytropic turbine: T_out/T_in = ER^(-e(g-1)/g) (field-reference 3.1)."""
    cp, g = 1156.0, 1.33
    gas = CaloricallyPerfectGas(cp=cp, gamma=g)
    er = np.array([1.5, 2.0, 4.0, 5.0, 8.0])
    e = np.array([0.85, 0.88, 0.90, 0.91, 0.93])
    Tt_in = np.array([900.0, 1100.0, 1500.0, 1700.0, 1900.0])
    nn = er.size
    W, mech = 0.09, 0.99
    T_ratio = er ** (-e * (g - 1.0) / g)  # field-reference 3.1 (Saravanamuttoo et al., Gas Turbine Theory)
    work = cp * Tt_in * (1.0 - T_ratio)
    prob = _problem(nn=nn, gas=gas)
    _set(prob, Tt_in, 2.0e6, 0.02, W, work * W * mech, e, mech)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("hpt_expansion_ratio"), er, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Tt44") / Tt_in, T_ratio, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Pt44"), 2.0e6 / er, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("hpt_work"), work, rtol=RTOL_EXACT)


def test_isentropic_efficiency_field_reference():
    """eta_t = 0.91476 at ER 4, e 0.90, gamma 1.33: field-reference 3.2 (constant-gamma closed form)."""
    cp, g, e, er_target = 1156.0, 1.33, 0.90, 4.0
    gas = CaloricallyPerfectGas(cp=cp, gamma=g)
    Tt_in = 1500.0
    prob = _problem(gas=gas)
    _set(prob, Tt_in, 2.0e6, 0.0, 1.0, 1.0e5, e, 1.0)

    def er_minus_target(demand):
        prob.set_val("HP_power_demand", demand)
        prob.run_model()
        return prob.get_val("hpt_expansion_ratio")[0] - er_target

    brentq(er_minus_target, 1.0e4, 8.0e5, xtol=1e-9, rtol=1e-15)
    er = prob.get_val("hpt_expansion_ratio")[0]
    ideal_work = cp * Tt_in * (1.0 - er ** (-(g - 1.0) / g))
    eta_t = prob.get_val("hpt_work")[0] / ideal_work
    assert eta_t == pytest.approx(0.91476, abs=ATOL_FIELD_REF_ETA)  # field-reference 3.2


def test_thermally_perfect_field_reference():
    """Frozen dry air, T1 = 1700 K, ER 4, e 0.90 -> T2 = 1262.780 K, eta_t = 0.91431 (field-reference 3.2)."""
    gas = ThermallyPerfectGas()
    prob = _problem(gas=gas, name="lpt", spool="LP", station_in="45", station_out="5")
    _set(prob, 1700.0, 1.0e6, 0.0, 1.0, 4.0e5, 0.90, 1.0, name="lpt", spool="LP", si="45")

    def er_minus_target(demand):
        prob.set_val("LP_power_demand", demand)
        prob.run_model()
        return prob.get_val("lpt_expansion_ratio")[0] - 4.0

    brentq(er_minus_target, 1.0e5, 8.0e5, xtol=1e-9, rtol=1e-15)
    assert prob.get_val("Tt5")[0] == pytest.approx(1262.780, abs=ATOL_FIELD_REF_T)  # field-reference 3.2
    # isentropic exit from phi(T2s) = phi(T1) - R ln ER (field-reference 3.1)
    p1 = gas.properties(1700.0, 0.0)
    T2s, _, _ = gas.T_from_phi(p1.phi - p1.R * np.log(4.0), 0.0)
    assert float(T2s) == pytest.approx(1220.806, abs=ATOL_FIELD_REF_T)  # field-reference 3.2
    eta_t = prob.get_val("lpt_work")[0] / (p1.h - gas.properties(T2s, 0.0).h)
    assert eta_t == pytest.approx(0.91431, abs=ATOL_FIELD_REF_ETA)  # field-reference 3.2


def test_conservation():
    """Energy: h(Tt_in) - h(Tt_out) = work; shaft: work*W*mech_eff = demand; FAR and flow pass through."""
    gas = ThermallyPerfectGas()
    rng = np.random.default_rng(SEED)
    nn = 5
    Tt, far, W = rng.uniform(1000, 1800, nn), rng.uniform(0.0, 0.03, nn), rng.uniform(0.05, 0.1, nn)
    demand, mech = rng.uniform(5e3, 2e4, nn), rng.uniform(0.97, 1.0, nn)
    prob = _problem(nn=nn)
    _set(prob, Tt, 3e6, far, W, demand, rng.uniform(0.85, 0.93, nn), mech)
    prob.run_model()
    work = prob.get_val("hpt_work")
    dh = gas.properties(Tt, far).h - gas.properties(prob.get_val("Tt44"), far).h
    np.testing.assert_allclose(dh, work, rtol=RTOL_EXACT)
    np.testing.assert_allclose(work * W * mech, demand, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("FAR44"), far, rtol=0.0, atol=0.0)
    np.testing.assert_allclose(prob.get_val("W44_frac"), W, rtol=0.0, atol=0.0)
    np.testing.assert_allclose(prob.get_val("Pt44") * prob.get_val("hpt_expansion_ratio"), 3e6,
                               rtol=RTOL_EXACT)


# A calorically perfect gas does not depend on the fuel-air ratio, so check_partials warns about
# declared partials that are zero there; the pattern is declared for the thermally perfect gas.
@pytest.mark.filterwarnings("ignore::openmdao.utils.om_warnings.DerivativesWarning")
@pytest.mark.parametrize("name, spool, gas_kind, nn",
                         list(itertools.product(("hpt", "lpt"), ("HP", "LP"), ("tpg", "cpg"), (1, 4))))
def test_partials(name, spool, gas_kind, nn):
    """Analytic partials against complex step at seeded random points (every option combination)."""
    gas = ThermallyPerfectGas() if gas_kind == "tpg" else CaloricallyPerfectGas(cp=1150.0, gamma=1.33)
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn=nn, gas=gas, name=name, spool=spool, station_in="45", station_out="5")
    W = rng.uniform(0.05, 0.1, nn)
    mech = rng.uniform(0.97, 1.0, nn)
    work = rng.uniform(1.0e5, 4.5e5, nn)
    _set(prob, rng.uniform(900.0, 1800.0, nn), rng.uniform(3e5, 4e6, nn), rng.uniform(0.0, 0.03, nn), W,
         work * W * mech, rng.uniform(0.85, 0.93, nn), mech, name=name, spool=spool, si="45")
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_work_too_large_raises():
    prob = _problem(nn=3)
    _set(prob, [1500.0, 900.0, 1500.0], 3e6, 0.02, 0.09, [5e4, 8e4, 5e4], 0.9, 0.99)
    with pytest.raises(InputRangeError,
                       match=r"turbine work 897868 J/kg is larger than the gas at Tt41 = 900 K can give "
                             r"\(.* J/kg down to .* 200 K\) at node 1"):
        prob.run_model()
    # calorically perfect gas: the limit is h(Tt_in) - h(T_MIN) = cp (Tt_in - 1 K)
    prob = _problem(gas=CaloricallyPerfectGas(cp=1000.0, gamma=1.4))
    _set(prob, 1000.0, 3e6, 0.0, 1.0, 1.0e6, 0.9, 1.0)
    with pytest.raises(InputRangeError, match=r"turbine work 1e\+06 J/kg is larger than the gas at "
                                              r"Tt41 = 1000 K can give \(999000 J/kg"):
        prob.run_model()


@pytest.mark.parametrize("var, val, match", [
    ("Tt41", np.nan, r"Tt41 = nan K is outside the valid range"),
    ("Tt41", 2500.0, r"Tt41 = 2500 K is outside the valid range \(from 200 up to 2400 K\)"),
    ("FAR41", 0.1, r"FAR41 = 0.1 is outside the valid range"),
    ("W41_frac", 0.0, r"W41_frac = 0 is outside the valid range \(above 0\)"),
    ("HP_power_demand", -1.0, r"HP_power_demand = -1 J/kg is outside the valid range"),
    ("hpt_eff_poly", 1.2, r"hpt_eff_poly = 1.2 is outside the valid range \(above 0 up to 1\)"),
    ("HP_mech_eff", 0.0, r"HP_mech_eff = 0 is outside the valid range \(above 0 up to 1\)"),
    ("Pt41", np.nan, r"Pt41 = nan Pa"),
])
def test_bad_inputs_raise(var, val, match):
    prob = _problem()
    prob.set_val(var, val)
    with pytest.raises(InputRangeError, match=match):
        prob.run_model()


def test_ideal_core_jet_velocity_field_reference():
    """HPT and LPT driven by the spool demands, then a fully expanding nozzle: V9 = 780.408 m/s.

    Ideal turbofan of field-reference 4.3 (M0 0.8, T0 216.65 K, gamma 1.4, cp 1004, Tt4 1600 K,
    pi_c 36, pi_f 1.6, alpha 10; relations of Mattingly & von Ohain, *Elements of Propulsion*, ch. 5,
    field-reference 4.2): efficiencies 1, fuel mass neglected, no cooling.
    """
    cp, gamma, T0, P0, M0 = 1004.0, 1.4, 216.65, 23842.27, 0.8
    Tt4, pi_c, pi_f, alpha = 1600.0, 36.0, 1.6, 10.0
    k = (gamma - 1.0) / gamma
    tau_r = 1.0 + 0.5 * (gamma - 1.0) * M0**2
    Tt2, Pt2 = T0 * tau_r, P0 * tau_r ** (1.0 / k)
    fan_work = cp * Tt2 * (pi_f**k - 1.0)
    hpc_work = cp * Tt2 * (pi_c**k - pi_f**k)
    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    prob = om.Problem(reports=False)
    model = prob.model
    model.add_subsystem("lp_power", SpoolPowerComp(spool="LP"), promotes=["*"])
    model.add_subsystem("hp_power", SpoolPowerComp(spool="HP"), promotes=["*"])
    model.add_subsystem("hpt", TurbineComp(gas=gas, station_in="4", station_out="45", name="hpt", spool="HP"),
                        promotes=["*"])
    model.add_subsystem("lpt", TurbineComp(gas=gas, station_in="45", station_out="5", name="lpt", spool="LP"),
                        promotes=["*"])
    model.add_subsystem("nozzle", NozzleComp(gas=gas, station_in="5", station_throat="8", expansion="full"),
                        promotes=["*"])
    model.connect("core_flow_frac", "W4_frac")
    prob.setup()
    for name, val in (("BPR", alpha), ("fan_bypass_work", fan_work), ("fan_core_work", fan_work),
                      ("booster_work", 0.0), ("hpc_work", hpc_work), ("HP_power_offtake", 0.0),
                      ("Tt4", Tt4), ("Pt4", Pt2 * pi_c), ("FAR4", 0.0), ("Ps0", P0),
                      ("hpt_eff_poly", 1.0), ("lpt_eff_poly", 1.0), ("HP_mech_eff", 1.0),
                      ("LP_mech_eff", 1.0), ("core_nozzle_velocity_coeff", 1.0)):
        prob.set_val(name, val)
    prob.run_model()
    assert prob.get_val("V8_jet")[0] == pytest.approx(780.408, rel=3e-6)  # field-reference 4.3
    tau_t = prob.get_val("Tt5")[0] / Tt4
    assert tau_t == pytest.approx(0.508010, rel=2e-6)  # field-reference 4.3
