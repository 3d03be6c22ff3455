"""Off-design match of a designed turbofan (map-free): design reproduction, closed forms, trends, derivatives."""

import sys
from pathlib import Path

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.cycle.flow_capacity_comp import FlowCapacityComp
from bypassopt.components.cycle.off_design_group import GEOMETRY, OffDesignGroup
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas

ROOT = Path(__file__).resolve().parents[3]
if str(ROOT) not in sys.path:  # benchmarks/ is not installed: import it from the checkout
    # appended, not prepended: the checkout's bypassopt/ folder must not shadow the installed package
    sys.path.append(str(ROOT))
from benchmarks.benchmark_off_design import envelope_convergence  # noqa: E402

DESIGN_RTOL = 1e-8
IDEAL_RTOL = 1e-9
CONSERVATION_RTOL = 1e-10
CAPACITY_RTOL = 1e-9
# Nozzle areas (about 0.2 m^2) are balanced by an absolute residual (BalanceComp normalises only for values >= 2),
# so over the envelope the Newton tolerance (1e-8 on the residual norm) allows about 1e-7 relative.
ENVELOPE_AREA_RTOL = 1e-7
TOTALS_TOL = 1e-8
CP, GAMMA = 1004.0, 1.4

# Demo top-of-climb design (invented demo inputs, scenario.md): 10 668 m, M 0.78, ISA+10, BPR 10, FPR 1.5,
# OPR 40, Tt4 1650 K, 24 kN, common-practice component values (field-reference 3.3).
DEMO = {"altitude": 10668.0, "dT_isa": 10.0, "Mach0": 0.78, "BPR": 10.0, "FPR": 1.5, "OPR": 40.0, "Tt4": 1650.0,
        "booster_PR": 1.8, "Fn_required": 24.0e3, "HP_power_offtake": 150.0e3, "customer_bleed_frac": 0.005,
        "fan_bypass_eff_poly": 0.92, "fan_core_eff_poly": 0.90, "booster_eff_poly": 0.90, "hpc_eff_poly": 0.91,
        "hpt_eff_poly": 0.90, "lpt_eff_poly": 0.91}
FLIGHT = ("altitude", "dT_isa", "Mach0")
SHARED = ("HP_power_offtake", "customer_bleed_frac", "fan_bypass_eff_poly", "fan_core_eff_poly", "booster_eff_poly",
          "hpc_eff_poly", "hpt_eff_poly", "lpt_eff_poly")
STATIONS = ("2", "13", "21", "25", "3", "4", "41", "44", "45", "5", "7", "17")


def run_design(gas=None, ideal=False, **overrides):
    """Design run: the cycle group with the capacity component beside it."""
    prob = om.Problem(reports=False)
    kw = {"include_fuel_mass": False, "cooling_model": "given"} if ideal else {}
    prob.model.add_subsystem("cycle", TurbofanCycleGroup(gas=gas or ThermallyPerfectGas(), **kw), promotes=["*"])
    prob.model.add_subsystem("capacity", FlowCapacityComp(), promotes=["*"])
    prob.setup()
    values = {k: v for k, v in {**DEMO, **overrides}.items() if not (ideal and k in SHARED)}
    if ideal:
        ideal_settings(prob)
    for k, v in values.items():
        prob.set_val(k, v)
    prob.run_model()
    return prob


def ideal_settings(prob):
    """All efficiencies 1, no losses, extractions or offtake (as tests/components/cycle/test_cycle_group.py)."""
    for name in ("fan_bypass_eff_poly", "fan_core_eff_poly", "booster_eff_poly", "hpc_eff_poly", "hpt_eff_poly",
                 "lpt_eff_poly", "HP_mech_eff", "LP_mech_eff", "combustion_eff", "inlet_recovery",
                 "core_nozzle_velocity_coeff", "bypass_nozzle_velocity_coeff", "core_nozzle_discharge_coeff",
                 "bypass_nozzle_discharge_coeff"):
        prob.set_val(name, 1.0)
    for name in ("burner_pressure_loss", "core_duct_pressure_loss", "bypass_duct_pressure_loss",
                 "hpt_vane_cooling_frac", "hpt_rotor_cooling_frac", "customer_bleed_frac", "HP_power_offtake"):
        prob.set_val(name, 0.0)


def build_off_design(design, setting="Tt4", nn=1, gas=None, ideal=False, **opts):
    """Off-design problem with the geometry, cooling and component values of ``design``, at its flight point."""
    prob = om.Problem(reports=False)
    kw = {"include_fuel_mass": False} if ideal else {}
    prob.model.add_subsystem("od", OffDesignGroup(num_nodes=nn, power_setting=setting,
                                                  gas=gas or ThermallyPerfectGas(), **kw, **opts), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    if ideal:
        ideal_settings(prob)
    for k in FLIGHT + SHARED + ("inlet_recovery",):
        if not (ideal and k in SHARED):
            prob.set_val(k, design.get_val(k))
    for k in GEOMETRY:
        prob.set_val(f"{k}_design", design.get_val(k))
    if not ideal:
        prob.set_val("hpt_vane_cooling_frac", design.get_val("cooling_frac_vane"))
        prob.set_val("hpt_rotor_cooling_frac", design.get_val("cooling_frac_rotor"))
    for k in ("FPR", "OPR", "BPR", "booster_PR", "Tt4", "Tt2", "Pt2"):
        prob.set_val(f"{k}_design", design.get_val(k))
    prob.set_val("Fn_design", design.get_val("Fn_required"))
    if setting == "Tt4":
        prob.set_val("Tt4", design.get_val("Tt4"))
    elif setting == "thrust":
        prob.set_val("Fn_required", design.get_val("Fn_required"))
    else:
        prob.set_val("Tt41_required", design.get_val("Tt41"))
    return prob


@pytest.fixture(scope="module")
def design():
    """Real-gas demo design point (cooling from the correlation, then held at off-design)."""
    return run_design()


@pytest.mark.parametrize("setting", ["Tt4", "thrust", "Tt41"])
def test_design_point_reproduced(design, setting):
    """At the design flight condition and power the match returns the design point (field-reference 12.2 test (a)).

    Started away from it (states 2-4 % off, no design start) so that the solver, not the guess, finds it.
    """
    prob = build_off_design(design, setting, start_from_design=False)
    for k, f in (("FPR", 0.98), ("OPR", 0.96), ("BPR", 1.03), ("booster_PR", 0.98)):
        prob.set_val(k, f * design.get_val(k))
    if setting == "thrust":
        prob.set_val("Tt4", 1600.0)
    else:
        prob.set_val("Fn", 0.97 * design.get_val("Fn_required"))
        if setting == "Tt41":
            prob.set_val("Tt4", 1600.0)
    prob.run_model()
    assert_no_approx_partials(prob.model)
    for st in STATIONS:
        for v in ("Tt", "Pt"):
            np.testing.assert_allclose(prob.get_val(f"{v}{st}"), design.get_val(f"{v}{st}"), rtol=DESIGN_RTOL,
                                       err_msg=f"{v}{st}")
    for k in ("TSFC", "W2", "FPR", "OPR", "BPR", "booster_PR", "Tt4", "fuel_flow"):
        np.testing.assert_allclose(prob.get_val(k), design.get_val(k), rtol=DESIGN_RTOL, err_msg=k)


@pytest.fixture(scope="module")
def ideal_case():
    """Calorically perfect, ideal components (test_cycle_group.py's ideal mode), convergent nozzles (Cv = Cd = 1).

    Design: 11 km ISA, M 0.8, BPR 10, FPR 1.6, booster 1.5, OPR 36, Tt4 1600 K; off-design at the same flight
    condition, Tt4 1600/1500/1400 K (both nozzles stay choked).
    """
    gas = CaloricallyPerfectGas(cp=CP, gamma=GAMMA)
    over = {"altitude": 11000.0, "dT_isa": 0.0, "Mach0": 0.8, "FPR": 1.6, "booster_PR": 1.5, "OPR": 36.0,
            "Tt4": 1600.0}
    design = run_design(gas=gas, ideal=True, **over)
    prob = build_off_design(design, "Tt4", nn=3, gas=gas, ideal=True)
    prob.set_val("Tt4", np.array([1600.0, 1500.0, 1400.0]))
    prob.run_model()
    return design, prob


def test_ideal_turbine_temperature_ratios_fixed(ideal_case):
    """Choked HPT and LPT NGVs fix the HPT temperature ratio; with the core nozzle choked the LPT's too.

    Field-reference 12.2 items 1-2 (Mattingly & von Ohain, *Elements of Propulsion*, engine performance
    analysis, from memory).
    """
    design, prob = ideal_case
    assert np.all(prob.get_val("Mach8") == pytest.approx(1.0, abs=1e-12))  # core nozzle choked at every node
    tau_th = prob.get_val("Tt44") / prob.get_val("Tt41")
    tau_tl = prob.get_val("Tt5") / prob.get_val("Tt45")
    np.testing.assert_allclose(tau_th, (design.get_val("Tt44") / design.get_val("Tt41"))[0], rtol=IDEAL_RTOL)
    np.testing.assert_allclose(tau_tl, (design.get_val("Tt5") / design.get_val("Tt45"))[0], rtol=IDEAL_RTOL)
    assert np.ptp(prob.get_val("FPR")) > 0.05  # the match did move


def test_ideal_hpc_closed_form(ideal_case):
    """HP spool closed form: tau_cH - 1 = (tau_cH,R - 1) (Tt4/Tt25)/(Tt4/Tt25)_R, pi_cH = tau_cH^(gamma/(gamma-1)).

    Field-reference 12.2 item 3 with the booster exit Tt25 as HPC entry (tau_lambda/(tau_r tau_f) there), ideal
    components (e = 1, eta_m = 1, no offtake, fuel mass neglected).
    """
    design, prob = ideal_case
    g = lambda p, k: p.get_val(k)  # noqa: E731
    tau_r = g(design, "Tt3")[0] / g(design, "Tt25")[0]
    tau = 1.0 + (tau_r - 1.0) * (g(prob, "Tt4") / g(prob, "Tt25")) / (g(design, "Tt4") / g(design, "Tt25"))
    np.testing.assert_allclose(g(prob, "Tt3") / g(prob, "Tt25"), tau, rtol=IDEAL_RTOL)
    np.testing.assert_allclose(g(prob, "hpc_PR"), tau ** (GAMMA / (GAMMA - 1.0)), rtol=IDEAL_RTOL)


def test_throttling_trends(design):
    """Lower Tt4 at fixed flight condition: lower FPR, OPR, W2 and thrust, higher BPR.

    Field-reference 12.2 test (b) (common practice, consistent with items 3-5).
    """
    prob = build_off_design(design, "Tt4", nn=3)
    for k in FLIGHT:
        prob.set_val(k, design.get_val(k)[0] * np.ones(3))
    prob.set_val("Tt4", np.array([1650.0, 1575.0, 1500.0]))
    prob.run_model()
    for k in ("FPR", "OPR", "W2", "Fn"):
        assert np.all(np.diff(prob.get_val(k)) < 0.0), k
    assert np.all(np.diff(prob.get_val("BPR")) > 0.0)


def test_hot_day_needs_higher_rotor_inlet_temperature(design):
    """The same thrust on an ISA+15 day needs a higher Tt41 than at ISA (common practice: hot-day derating)."""
    prob = build_off_design(design, "thrust", nn=2)
    prob.set_val("altitude", 10668.0 * np.ones(2))
    prob.set_val("Mach0", 0.78 * np.ones(2))
    prob.set_val("dT_isa", np.array([0.0, 15.0]))
    prob.set_val("Fn_required", 21.0e3 * np.ones(2))
    prob.run_model()
    tt41 = prob.get_val("Tt41")
    assert tt41[1] > tt41[0] + 5.0
    np.testing.assert_allclose(prob.get_val("W2") * prob.get_val("Fn_specific"), 21.0e3, rtol=1e-12)


@pytest.fixture(scope="module")
def part_power(design):
    """Off-design points at other flight conditions and powers (two nodes)."""
    prob = build_off_design(design, "Tt4", nn=2)
    prob.set_val("altitude", np.array([9000.0, 10668.0]))
    prob.set_val("Mach0", np.array([0.7, 0.8]))
    prob.set_val("dT_isa", np.array([0.0, 15.0]))
    prob.set_val("Tt4", np.array([1550.0, 1700.0]))
    prob.run_model()
    return prob


def test_balances_close(part_power):
    """Spool power and mass balances close at off-design (first law per spool; continuity, field-reference 4.4)."""
    prob = part_power
    g = prob.get_val
    c, bpr, w2 = g("core_flow_frac"), g("BPR"), g("W2")
    hp_turbine = g("hpt_work") * g("W41_frac") * g("HP_mech_eff")
    np.testing.assert_allclose(hp_turbine, g("hpc_work") * c + g("HP_power_offtake") / w2, rtol=CONSERVATION_RTOL)
    lp_turbine = g("lpt_work") * g("W45_frac") * g("LP_mech_eff")
    lp_absorbed = (bpr * g("fan_bypass_work") + g("fan_core_work") + g("booster_work")) * c
    np.testing.assert_allclose(lp_turbine, lp_absorbed, rtol=CONSERVATION_RTOL)
    # out of the engine = in - customer bleed + fuel: W8 + W18 = W2 (1 - c b) + fuel flow
    out = w2 * (g("W5_frac") + bpr * c)
    np.testing.assert_allclose(out, w2 * (1.0 - c * g("customer_bleed_frac")) + g("fuel_flow"),
                               rtol=CONSERVATION_RTOL)


def test_choked_corrected_flows_constant(part_power, design):
    """NGV capacities and nozzle areas equal the design geometry to solver tolerance (field-reference 12.2 (c))."""
    for k in GEOMETRY:
        np.testing.assert_allclose(part_power.get_val(k), design.get_val(k)[0], rtol=CAPACITY_RTOL, err_msg=k)


@pytest.mark.parametrize("setting, power", [("Tt4", "Tt4"), ("thrust", "Fn_required")])
def test_totals_match_complex_step(design, setting, power):
    """Totals through the match (Newton, direct solver) agree with complex step."""
    prob = build_off_design(design, setting, nn=1)
    prob.set_val("altitude", 9500.0)
    prob.set_val("Mach0", 0.72)
    prob.set_val(power, 1580.0 if setting == "Tt4" else 20.0e3)
    prob.run_model()
    assert_no_approx_partials(prob.model)
    fn = "Fn" if setting == "Tt4" else "Tt4"
    wrt = [power] + [f"{k}_design" for k in GEOMETRY]
    data = prob.check_totals(of=["TSFC", "Tt41", "Tt3", fn, "W2"], wrt=wrt, method="cs", out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


# Envelope sample, maximum rating and batched solve: benchmarks/benchmark_off_design.py (which reports the same figure).
ENVELOPE_FLOOR = 0.99  # issue 9's target; measured 500/500 with seed 20250 (see the test's docstring)


def test_convergence_over_envelope(design, capsys):
    """From the design-point start, 500 seeded random points of the envelope at 40-100 % of the maximum thrust.

    Sample (``envelope_sample``, seed 20250): altitude 0-13 km, M 0-0.9, ISA-20..+25, thrust fraction 0.4-1.0.
    Maximum rating at each flight condition: Tt4_max = min(1800 K, (Tt4/Tt2)_design * Tt2), the take-off
    temperature limit or the design's corrected core temperature ratio (a corrected-speed proxy, field-reference
    12.2 item 8; the textbook throttle-ratio schedule, Mattingly, Heiser & Pratt, from memory); Fn_max is the match
    there ('Tt4' setting), and the part-power point the match at fraction * Fn_max ('thrust' setting, as the
    multipoint group uses). A point converges when both do. The ISA offset is raised where the gas model's 200 K
    floor would be crossed: Ts0 >= 201 K, and Ts0 (1 + 0.2 M0^2) >= 229 K because the bypass nozzle's sonic static
    temperature (0.833 Tt17, evaluated choked or not) must stay at or above 200 K down to 40 % power, where
    Tt13/Tt2 falls to 1.05 (86 of the 500 points raised, the cold high-and-slow corner; without the raise 42 points
    fail, every one on that range check). Every failure must be an om.AnalysisError naming its cause (any other
    exception fails the test); the floor is issue 9's 99 % (measured: 500/500). Each converged point must hold the
    design geometry (NGV capacities, nozzle areas) and need a lower Tt4 at part power than at the maximum rating
    (thrust rises with Tt4 at a fixed flight condition, field-reference 12.2 test (b)).
    """
    env = envelope_convergence(design, build=build_off_design)
    sample, n = env["sample"], len(env["converged"])
    assert n == 500
    assert np.all((sample["altitude"] >= 0.0) & (sample["altitude"] <= 13000.0))
    assert np.all((sample["Mach0"] >= 0.0) & (sample["Mach0"] <= 0.9))
    assert np.all((sample["dT_drawn"] >= -20.0) & (sample["dT_drawn"] <= 25.0))
    assert np.all(sample["dT_isa"][~sample["raised"]] == sample["dT_drawn"][~sample["raised"]])
    for i in np.flatnonzero(env["converged"]):
        top, part = env["max_rating"][i], env["part_power"][i]
        for point in (top, part):
            assert np.isfinite(point["TSFC"]) and point["TSFC"] > 0.0
            for k in ("area8", "area18", "W4_corrected", "W45_corrected"):
                np.testing.assert_allclose(point[k], design.get_val(k)[0], rtol=ENVELOPE_AREA_RTOL, err_msg=f"{k} {i}")
        assert part["Tt4"] <= top["Tt4"] * (1.0 + 1e-9), i
    failures = [r for r in env["part_power"] if not isinstance(r, dict)]
    assert all(isinstance(r, str) and r for r in failures)
    ok = int(np.sum(env["converged"]))
    with capsys.disabled():
        print(f"\noff-design envelope sample: {ok}/{n} converged ({ok / n:.1%}), {int(sample['raised'].sum())} ISA "
              f"offsets raised, {env['solves']} vector solves in {env['seconds']:.1f} s; causes: {dict(env['causes'])}")
    assert ok / n >= ENVELOPE_FLOOR


def test_unmatched_point_raises_with_cause(design):
    """A point without an operating point, and a solve cut short, raise om.AnalysisError naming the cause.

    Tt4 = 1000 K (the burner's lowest) at 5 km, M 0.9 is an operating point, which the continuation from the
    corrected design point finds (the design-point start alone does not: its core stream's total pressure is
    below ambient, the cause this test used to name). A net thrust of 3 kN at sea level, M 0.5 is below the
    lowest the map-free match has there (about 5.5 kN, where Tt4 reaches the burner's 1000 K, measured): the
    error names the design start's failure and where the continuation stopped (at the burner's range). Two
    Newton iterations are not enough for an ordinary point: the message names the node, its flight condition and
    power, and the balance left unmatched.
    """
    prob = build_off_design(design, "Tt4", nn=2)
    prob.set_val("altitude", np.array([0.0, 5000.0]))
    prob.set_val("Mach0", np.array([0.5, 0.9]))
    prob.set_val("dT_isa", np.zeros(2))
    prob.set_val("Tt4", np.array([1600.0, 1000.0]))
    prob.run_model()
    for k in GEOMETRY:
        np.testing.assert_allclose(prob.get_val(k), design.get_val(k)[0], rtol=ENVELOPE_AREA_RTOL, err_msg=k)
    assert prob.get_val("Fn")[1] > 0.0 and prob.get_val("Pt7")[1] > prob.get_val("Ps0")[1]

    low = build_off_design(design, "thrust")
    low.set_val("altitude", 0.0)
    low.set_val("Mach0", 0.5)
    low.set_val("Fn_required", 3000.0)
    with pytest.raises(om.AnalysisError, match=r"Continuation in Fn_required from the corrected design point: "
                                               r"stopped .* of the way \(.*Tt4 = .* K is outside the valid range "
                                               r"\(from 1000"):
        low.run_model()

    prob.set_val("Tt4", np.array([1600.0, 1500.0]))
    prob.model.od.nonlinear_solver.options["maxiter"] = 2
    with pytest.raises(om.AnalysisError, match=r"No off-design match at node \d \(altitude = .* m, Mach0 = .*, "
                                               r"dT_isa = 0 K, Tt4 = .* K\): the .* balance is left unmatched"):
        prob.run_model()


# Low-power points near the ground, as a descent to 1500 ft flies them (Tt41 1000-1100 K, 0-6 km, M 0.39-0.55).
LOW_POWER = {"altitude": [457.2, 0.0, 3000.0, 6000.0], "Mach0": [0.39, 0.45, 0.45, 0.55],
             "Tt41_required": [1000.0, 1100.0, 1050.0, 1000.0]}
# Choked-vane validity of the map-free method: turbine expansion ratio above about 1.85 (OffDesignGroup docstring).
CHOKED_VANE_RATIO = 1.85
HAND_STEPS = 20


def test_low_power_reached_by_continuation(design):
    """Low power near the ground: the design start fails, the continuation finds the operating points.

    Checked against an independent path: the same points reached by plain steps of Tt41 from 1500 K, each Newton
    solve started from the previous solution as it is (no start relations, no continuation): the same operating
    points to 1e-8 (an isolated solution, whichever way it is reached). The points hold the design geometry, keep
    both turbines' vanes choked (expansion ratios above 1.85) and the core stream above ambient pressure.
    """
    def build(**opts):
        prob = build_off_design(design, "Tt41", nn=4, **opts)
        prob.set_val("altitude", LOW_POWER["altitude"])
        prob.set_val("Mach0", LOW_POWER["Mach0"])
        prob.set_val("dT_isa", np.zeros(4))
        return prob

    direct = build(continuation=False)
    direct.set_val("Tt41_required", LOW_POWER["Tt41_required"])
    with pytest.raises(om.AnalysisError, match="nozzle pressure ratio .* is not above 1"):
        direct.run_model()

    prob = build()
    prob.set_val("Tt41_required", LOW_POWER["Tt41_required"])
    prob.run_model()
    g = prob.get_val
    np.testing.assert_allclose(g("Tt41"), LOW_POWER["Tt41_required"], rtol=DESIGN_RTOL)
    for k in GEOMETRY:
        np.testing.assert_allclose(g(k), design.get_val(k)[0], rtol=ENVELOPE_AREA_RTOL, err_msg=k)
    assert np.all(g("Pt45") / g("Pt5") > CHOKED_VANE_RATIO) and np.all(g("Pt41") / g("Pt44") > CHOKED_VANE_RATIO)
    assert np.all(g("Pt7") > g("Ps0")) and np.all(g("Fn") > 0.0)

    hand = build(continuation=False)
    hand.set_val("Tt41_required", np.full(4, 1500.0))
    hand.run_model()
    hand.model.od.options["start_from_design"] = False
    for fraction in np.linspace(0.0, 1.0, HAND_STEPS + 1)[1:]:
        hand.set_val("Tt41_required", 1500.0 + fraction * (np.array(LOW_POWER["Tt41_required"]) - 1500.0))
        hand.run_model()
    for k in ("Fn", "FPR", "OPR", "BPR", "booster_PR", "Tt4", "TSFC"):
        np.testing.assert_allclose(g(k), hand.get_val(k), rtol=DESIGN_RTOL, err_msg=k)


def test_warm_start_at_unchanged_rotor_inlet_temperature(design):
    """'Tt41' with warm_start: a solve at unchanged inputs starts at the last solution and needs no iteration.

    The warm start takes the reference's own Tt4/Tt41 (1.06 here, at part power near the ground); a fixed start
    ratio (1.03) moved Tt4 away from a converged point and, step after step, stalled a warm sequence at low power.
    """
    prob = build_off_design(design, "Tt41", warm_start=True)
    prob.set_val("altitude", 457.2)
    prob.set_val("Mach0", 0.39)
    prob.set_val("Tt41_required", 1200.0)
    prob.run_model()
    first = prob.get_val("Fn").copy()
    prob.run_model()
    assert prob.model.od.nonlinear_solver._iter_count == 0
    np.testing.assert_array_equal(prob.get_val("Fn"), first)


def test_stale_residuals_of_a_failed_solve_are_not_reused(design):
    """A solve re-evaluates its start: residuals a failed solve's line search left are never taken as converged.

    ``MatchNewtonSolver`` skips the evaluation after a line search that already made one; a failed solve leaves
    that flag set, and the next solve (another power) took the stale residuals as its own and reported a
    converged point it had not moved from (measured before the reset). Simulated here by setting the flag.
    """
    prob = build_off_design(design, "thrust")
    prob.set_val("altitude", 9000.0)
    prob.set_val("Mach0", 0.7)
    prob.set_val("Fn_required", 20.0e3)
    prob.run_model()
    solver = prob.model.od.nonlinear_solver
    solver._residuals_current = True  # as a failed solve's last line-search trial leaves it
    prob.model.od.match._residuals.set_val(0.0)
    prob.set_val("Fn_required", 18.0e3)
    prob.run_model()
    fresh = build_off_design(design, "thrust")
    fresh.set_val("altitude", 9000.0)
    fresh.set_val("Mach0", 0.7)
    fresh.set_val("Fn_required", 18.0e3)
    fresh.run_model()
    for k in ("Tt4", "W2", "FPR", "TSFC"):
        np.testing.assert_allclose(prob.get_val(k), fresh.get_val(k), rtol=DESIGN_RTOL, err_msg=k)


def test_warm_start_equals_cold_start(design):
    """warm_start: the next solve starts from the last converged solution; same results, fewer iterations.

    A sequence of thrusts 0.5 % apart at one flight condition (an optimizer's steps); after a failed solve (an
    unreachable thrust) the next one starts from the design point again and still agrees.
    """
    probs = {warm: build_off_design(design, "thrust", warm_start=warm) for warm in (False, True)}
    results, iterations = {}, {}
    for warm, prob in probs.items():
        prob.set_val("altitude", 9000.0)
        prob.set_val("Mach0", 0.7)
        values, iters = [], []
        for fn in (20.0e3, 20.1e3, 20.2e3, 5.0e6, 20.3e3):
            prob.set_val("Fn_required", fn)
            try:
                prob.run_model()
            except om.AnalysisError:
                assert fn == 5.0e6
                continue
            values.append([prob.get_val(k)[0] for k in ("TSFC", "Tt4", "W2", "FPR", "OPR", "BPR")])
            iters.append(prob.model.od.nonlinear_solver._iter_count)
        results[warm], iterations[warm] = np.array(values), iters
    np.testing.assert_allclose(results[True], results[False], rtol=DESIGN_RTOL)
    assert iterations[True][1] < iterations[False][1] and iterations[True][2] < iterations[False][2]


def _lapse_model(theta0, delta0, mach):
    """F/F_SL = delta0 (1 - 0.49 sqrt(M0)) below the theta break (field-reference 12.3; Mattingly, Heiser & Pratt,
    Aircraft Engine Design, constraint analysis; from memory)."""
    return delta0 * (1.0 - 0.49 * np.sqrt(mach))


def test_thrust_lapse(design):
    """Thrust lapse of the demo engine at a corrected rating (Tt4/Tt2 of the design, capped at 1800 K).

    References (field-reference 12.3): the lapse model above gives F/F_SLS = 0.1995 at M 0.78, 10 668 m ISA and
    0.7886 at M 0.25, sea level (printed there); common practice puts top-of-climb thrust at 18-24 % of the
    sea-level static thrust for BPR 8-12. Measured: 0.173 and 0.763. The take-off lapse is within 4 % of the model;
    the top-of-climb ratio lies 13 % below the model and just below the common-practice band (the map-free match
    holds the design efficiencies; a rating schedule of a real engine differs), so it is checked against the
    model within 15 %, which catches a wrong spool or nozzle match (a factor, not a few per cent).
    """
    thrust = {}
    tt2_design, tt4_design = design.get_val("Tt2")[0], design.get_val("Tt4")[0]
    for point, (alt, mach) in {"top of climb": (10668.0, 0.78), "static": (0.0, 0.0), "take-off": (0.0, 0.25)}.items():
        prob = build_off_design(design, "Tt4")
        for k, v in (("altitude", alt), ("Mach0", mach), ("dT_isa", 0.0)):
            prob.set_val(k, v)
        prob.run_model()
        prob.set_val("Tt4", min(1800.0, tt4_design * prob.get_val("Tt0")[0] / tt2_design))
        prob.run_model()
        thrust[point] = prob.get_val("Fn")[0]
    toc, takeoff = thrust["top of climb"] / thrust["static"], thrust["take-off"] / thrust["static"]
    assert abs(takeoff / 0.7886 - 1.0) < 0.04, takeoff
    assert abs(toc / 0.1995 - 1.0) < 0.15, toc
    # the lapse model's printed values, from its formula (ISO 2533 theta0/delta0 as field-reference 12.3 gives)
    assert _lapse_model(0.8518, 0.3517, 0.78) == pytest.approx(0.1995, abs=5e-4)
    assert _lapse_model(1.0125, 1.0445, 0.25) == pytest.approx(0.7886, abs=5e-4)
