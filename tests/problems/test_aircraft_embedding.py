"""Tests of the embedding example: the installed engine inside an aircraft-sizing loop."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials, assert_check_totals, assert_no_approx_partials

from bypassopt.problems.aircraft_embedding import (
    G0,
    AircraftSizingGroup,
    AirframeDragComp,
    WingSizingComp,
    apply_scenario_to_aircraft,
    build_embedding_problem,
)
from bypassopt.scenario import load_scenario
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


@pytest.fixture(scope="module")
def sized():
    """The demo aircraft sized at the scenario's starting design (analysis only)."""
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


def test_optimisation_improves_mission_fuel():
    """SLSQP over BPR, FPR, OPR and wing loading lowers the mission fuel and meets the constraints."""
    prob = build_embedding_problem(optimize=True, force_alloc_complex=True)
    prob.run_model()
    start = prob.get_val("mission_fuel", units="kg")[0]
    result = prob.run_driver()
    assert result.success
    final = prob.get_val("mission_fuel", units="kg")[0]
    assert final < 0.99 * start
    for name in ("clearance_margin", "diameter_margin"):
        assert prob.get_val(name, units="m")[0] >= -1e-6
    assert prob.get_val("Tt41", units="K")[0] <= 1750.0 + 1e-6
    assert prob.get_val("Tt3", units="K")[0] <= 900.0 + 1e-6


def test_group_options_vectorize():
    """The aircraft group runs several aircraft at once (num_nodes) with the same answer per node."""
    prob = om.Problem(AircraftSizingGroup(num_nodes=2), reports=False)
    prob.setup()
    apply_scenario_to_aircraft(prob, load_scenario())
    prob.set_val("wing_loading", [600.0, 550.0])
    prob.run_model()
    single = build_embedding_problem(optimize=False, force_alloc_complex=True)
    single.set_val("wing_loading", 550.0)
    single.run_model()
    np.testing.assert_allclose(prob.get_val("mission_fuel")[1], single.get_val("mission_fuel")[0], rtol=1e-8)
