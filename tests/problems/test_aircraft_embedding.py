"""Tests of the embedding example: the installed engine inside an aircraft-sizing loop."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials, assert_check_totals, assert_no_approx_partials

from bypassopt.problems.aircraft_embedding import (
    G0,
    WING_LOADING_BOUNDS,
    AircraftSizingGroup,
    AirframeDragComp,
    WingSizingComp,
    apply_scenario_to_aircraft,
    build_embedding_problem,
)
from bypassopt.problems.best_cycle import GEOMETRY_CONSTRAINTS, BestCycleSettings, limit_scaling
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.scenario import constraint_limits, design_point_scenario, load_scenario
from bypassopt.components.validation import InputRangeError

PARTIALS_TOL = 1e-10
TOTALS_TOL = 1e-7
LOOP_RTOL = 1e-9
SEED = 4242
DESIGN_VARIABLES = ["BPR", "FPR", "OPR", "wing_loading"]

# Seeded random inputs inside the valid range of the two aircraft components.
DRAG_RANGES = {
    "takeoff_mass": (60e3, 90e3), "wing_area": (100.0, 170.0), "q0": (8e3, 12e3),
    "taxi_takeoff_fraction": (0.975, 0.995), "climb_fraction": (0.975, 0.995), "cd0_wing": (0.005, 0.008),
    "fixed_drag_area": (1.2, 2.0), "aspect_ratio": (8.0, 11.0), "oswald_efficiency": (0.7, 0.9),
    "climb_gradient": (0.0, 0.02),
}
WING_RANGES = {"takeoff_mass": (60e3, 90e3), "wing_loading": (450.0, 750.0),
               "airframe_fixed_mass": (30e3, 36e3), "wing_mass_per_area": (35.0, 60.0)}


#: Optimality of the aircraft-level optimum (as tests/problems/test_optimizer.py): the projected Lagrangian gradient
#: relative to the mission fuel, each design variable over its bound range.
PROJECTED_GRADIENT_TOL = 1e-3
COMPLEMENTARITY_TOL = 1e-6
#: The start must be clearly no optimum for "improves" to mean anything: its projected gradient at least this.
START_GRADIENT_MIN = 1e-2


@pytest.fixture(scope="module")
def sized():
    """The demo aircraft sized at the scenario's starting design (analysis only), with the demo's multipoint engine."""
    prob = build_embedding_problem(optimize=False, force_alloc_complex=True)
    prob.run_model()
    return prob


def _component_problem(comp, ranges, nn=4):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("comp", comp, promotes=["*"])
    prob.setup(force_alloc_complex=True)
    rng = np.random.default_rng(SEED)
    for name, (lo, hi) in ranges.items():
        prob.set_val(name, rng.uniform(lo, hi, nn))
    return prob


@pytest.mark.parametrize("comp, ranges", [(WingSizingComp(num_nodes=4), WING_RANGES),
                                          (AirframeDragComp(num_nodes=4), DRAG_RANGES),
                                          (AirframeDragComp(num_nodes=4, num_engines=4), DRAG_RANGES)])
def test_aircraft_component_partials_complex_step(comp, ranges):
    """Analytic partials of the aircraft components against complex step at seeded random points."""
    prob = _component_problem(comp, ranges)
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_polar_values():
    """Parabolic polar CD = CD0 + CL**2/(pi*AR*e) (Anderson, Aircraft Performance and Design, ch. 2),
    worked by hand here: 70 t at top of climb, q = 10 kPa, S = 125 m**2."""
    prob = _component_problem(AirframeDragComp(num_nodes=1), {}, nn=1)
    values = {"takeoff_mass": 70000.0 / (0.985 * 0.985), "wing_area": 125.0, "q0": 1.0e4, "cd0_wing": 0.006,
              "fixed_drag_area": 1.5, "aspect_ratio": 10.0, "oswald_efficiency": 0.8, "climb_gradient": 0.01}
    for name, value in values.items():
        prob.set_val(name, value)
    prob.run_model()
    weight = 70000.0 * G0
    cl = weight / (1.0e4 * 125.0)
    cd = 0.006 + 1.5 / 125.0 + cl**2 / (np.pi * 10.0 * 0.8)
    np.testing.assert_allclose(prob.get_val("lift_coeff"), cl, rtol=1e-12)
    np.testing.assert_allclose(prob.get_val("drag_coeff"), cd, rtol=1e-12)
    np.testing.assert_allclose(prob.get_val("lift_to_drag"), cl / cd, rtol=1e-12)
    np.testing.assert_allclose(prob.get_val("thrust_required"), (1.0e4 * 125.0 * cd + 0.01 * weight) / 2.0,
                               rtol=1e-12)


@pytest.mark.parametrize("name, bad, pattern", [
    ("wing_loading", 150.0, r"wing_loading = 150 kg/m\*\*2 .*from 200 up to 1000"),
    ("takeoff_mass", 0.0, r"takeoff_mass = 0 kg .*above 0"),
])
def test_wing_bad_input(name, bad, pattern):
    """Out-of-range input names the variable, value and range."""
    prob = _component_problem(WingSizingComp(num_nodes=1), {}, nn=1)
    prob.set_val(name, bad)
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()


def test_loop_converges_to_a_consistent_aircraft(sized):
    """At the converged point the aircraft and engine agree: the wing and drag follow from the take-off
    mass the mission gives, and each engine delivers the thrust requirement plus its own nacelle drag."""
    tom = sized.get_val("takeoff_mass", units="kg")[0]
    assert 60e3 < tom < 100e3
    np.testing.assert_allclose(sized.get_val("wing_area", units="m**2"), tom / 600.0, rtol=LOOP_RTOL)
    np.testing.assert_allclose(sized.get_val("engine.empty_mass_no_engines", units="kg"),
                               sized.get_val("empty_mass_no_engines", units="kg"), rtol=LOOP_RTOL)
    np.testing.assert_allclose(sized.get_val("engine.installed_thrust", units="N"),
                               sized.get_val("thrust_required", units="N"), rtol=LOOP_RTOL)
    # the aircraft's own thrust requirement is in the band of the demo scenario (24 kN per engine)
    assert 20e3 < sized.get_val("thrust_required", units="N")[0] < 28e3
    assert 15.0 < sized.get_val("lift_to_drag")[0] < 20.0


def test_no_approx_partials(sized):
    """Every component of the assembled aircraft has analytic partials."""
    assert_no_approx_partials(sized.model, include_self=True, recurse=True)


def test_totals_match_complex_step(sized):
    """Mission fuel (and the thrust requirement, take-off mass) through the converged aircraft-engine
    loop agree with complex step."""
    data = sized.check_totals(of=["mission_fuel", "takeoff_mass", "thrust_required"], wrt=DESIGN_VARIABLES,
                              method="cs", out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


def _embedding_kkt(prob, scenario):
    """``kkt_analysis`` of the embedding problem: its design variables (BPR, FPR, OPR within the scenario's bounds,
    the wing loading within ``WING_LOADING_BOUNDS``) and its constraints (the geometric margins and the scenario's
    temperature and core-size limits)."""
    dvs = scenario["design_variables"]
    design_vars = {key: {"lower": dvs[key]["lower"], "upper": dvs[key]["upper"]} for key in ("BPR", "FPR", "OPR")}
    design_vars["wing_loading"] = dict(zip(("lower", "upper"), WING_LOADING_BOUNDS))
    assert set(design_vars) == set(prob.model.get_design_vars(use_prom_ivc=True))
    limits = {var: (kind, 0.0, units) for var, kind, units, _ in GEOMETRY_CONSTRAINTS.values()}
    limits.update({var: (kind, limit, limit_scaling(var)[0])
                   for var, kind, limit, _ in constraint_limits(scenario).values()})
    return kkt_analysis(prob, BestCycleSettings(scenario=scenario, objective="mission_fuel", limits=limits,
                                                design_vars=design_vars))


def test_optimisation_improves_mission_fuel():
    """SLSQP over BPR, FPR, OPR and wing loading, with the demo's multipoint engine (take-off T41 and T3 limits
    beside the top-of-climb ones), lowers the mission fuel from a start that is no optimum to a point that is
    (KKT conditions: Nocedal and Wright, thm 12.1) and meets every limit the scenario sets.

    The size of the saving depends only on how far the scenario's starting design happens to lie from the optimum
    (with the multipoint engine about 1 %, measured), so it is not asserted; optimality at the end is."""
    scenario = load_scenario()
    prob = build_embedding_problem(optimize=True, scenario=scenario, reports=False)
    prob.run_model()
    start = prob.get_val("mission_fuel", units="kg")[0]
    assert {"takeoff:Tt41", "takeoff:Tt3"} <= set(prob.model.get_constraints(use_prom_ivc=True))
    kkt_start = _embedding_kkt(prob, scenario)
    assert kkt_start["projected_gradient"] > START_GRADIENT_MIN
    result = prob.run_driver()
    assert result.success
    final = prob.get_val("mission_fuel", units="kg")[0]
    assert final < start
    kkt = _embedding_kkt(prob, scenario)
    assert kkt["projected_gradient"] < PROJECTED_GRADIENT_TOL
    assert kkt["complementarity"] < COMPLEMENTARITY_TOL
    assert kkt["dual_feasible"]
    for name in ("clearance_margin", "diameter_margin"):
        assert prob.get_val(name, units="m")[0] >= -1e-6
    upper = {"Tt41": scenario["limits"]["max_Tt41_K"], "Tt3": scenario["limits"]["max_Tt3_K"],
             "takeoff:Tt41": scenario["takeoff"]["max_Tt41_K"], "takeoff:Tt3": scenario["takeoff"]["max_Tt3_K"]}
    for name, limit in upper.items():
        assert prob.get_val(name, units="K")[0] <= limit + 1e-4, name
    assert prob.get_val("W3_corrected", units="kg/s")[0] >= scenario["limits"]["min_core_size_kg_s"] - 1e-6


def test_group_options_vectorize():
    """The aircraft group runs several aircraft at once (num_nodes) with the same answer per node (with the
    design-point engine model: the vectorization of the aircraft group, not the engine model, is tested)."""
    scenario = design_point_scenario(load_scenario())
    prob = om.Problem(AircraftSizingGroup(num_nodes=2, engine_model="design_point"), reports=False)
    prob.setup()
    apply_scenario_to_aircraft(prob, scenario)
    prob.set_val("wing_loading", [600.0, 550.0])
    prob.run_model()
    single = build_embedding_problem(optimize=False, scenario=scenario, reports=False)
    single.set_val("wing_loading", 550.0)
    single.run_model()
    np.testing.assert_allclose(prob.get_val("mission_fuel")[1], single.get_val("mission_fuel")[0], rtol=1e-8)
