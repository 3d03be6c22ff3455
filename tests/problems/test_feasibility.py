"""Feasibility screen: limits no design within the bounds can meet are found before optimising, and cheaply."""

import time

import numpy as np
import pytest

from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.feasibility import (assess, check_feasibility, check_sweep, evaluate_design_space,
                                            grid_points)
from bypassopt.scenario import design_point_scenario, load_scenario, validate

#: The screen's budget (measured about 1 s on an idle core, 2-4 s on a shared, loaded machine); the
#: optimizer took 30-130 s to fail on these cases before.
SCREEN_BUDGET_S = 10.0


def _base():
    """The demo with the design-point model and T4 held at 1650 K: the screen's own model (see feasibility.py)."""
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


def _scenario(overrides):
    return validate(overrides, base=_base())


@pytest.fixture(scope="module")
def demo_screen():
    scenario = _base()
    start = time.perf_counter()
    screen = evaluate_design_space(scenario)
    return scenario, screen, time.perf_counter() - start


def test_grid_holds_corners_and_initial_design():
    names, points = grid_points(_base())
    assert names == ["BPR", "FPR", "OPR"]  # T4 is held fixed in the demo
    assert points[0].tolist() == [10.0, 1.5, 40.0]
    assert len(points) == 1 + 4**3
    for corner in ([6.0, 1.3, 25.0], [16.0, 1.9, 60.0], [6.0, 1.9, 25.0]):
        assert any(np.allclose(p, corner) for p in points[1:])


def test_demo_passes_the_screen(demo_screen):
    scenario, screen, seconds = demo_screen
    assert assess(screen, scenario) == []
    assert screen.evaluated[0] and screen.evaluated.sum() >= len(screen.points) // 2
    # designs the model cannot evaluate (a fan the core cannot drive) are dropped, those a failing check names
    # together, so at most one short run each
    assert 1 < screen.runs <= 1 + int((~screen.evaluated).sum())
    assert seconds < SCREEN_BUDGET_S


def test_screen_values_are_the_models(demo_screen):
    """A screened design's outputs equal those of the same design evaluated on its own."""
    from bypassopt.problems.best_cycle import build_evaluation_problem

    scenario, screen, _ = demo_screen
    i = int(np.flatnonzero(screen.evaluated)[-1])
    prob = build_evaluation_problem(scenario, design=dict(zip(screen.design_vars, screen.points[i])), reports=False)
    prob.run_model()
    for name, units in (("nacelle_max_diameter", "m"), ("Tt41", "K"), ("Tt3", "K"), ("W3_corrected", "kg/s")):
        assert screen.outputs[name][i] == pytest.approx(prob.get_val(name, units=units)[0], rel=1e-6)


@pytest.mark.parametrize("overrides, constraint, key, words", [
    ({"limits": {"max_nacelle_diameter_m": 0.5}}, "diameter_margin", "limits.max_nacelle_diameter_m",
     "smallest nacelle reachable"),
    ({"limits": {"max_Tt41_K": 1500.0}}, "Tt41", "limits.max_Tt41_K", "lowest T41 reachable"),
    ({"installation": {"wing_height_m": 2.0}}, "clearance_margin", "installation.min_ground_clearance_m",
     "largest ground clearance reachable"),
    ({"limits": {"max_Tt3_K": 600.0}}, "Tt3", "limits.max_Tt3_K", "lowest T3 reachable"),
    ({"limits": {"min_core_size_kg_s": 10.0}}, "W3_corrected", "limits.min_core_size_kg_s",
     "largest core size"),
])
def test_infeasible_limit_is_an_error(demo_screen, overrides, constraint, key, words):
    """Each limit missed everywhere: one error naming the limit, the best reachable value and the key."""
    _, screen, _ = demo_screen
    scenario = _scenario(overrides)
    findings = assess(screen, scenario)
    assert [f.severity for f in findings] == ["error"]
    f = findings[0]
    assert f.constraint == constraint and f.key == key
    assert words in f.message and key in f.message and "\n" not in f.message
    ok = screen.evaluated
    best = {"diameter_margin": np.min(screen.outputs["nacelle_max_diameter"][ok]),
            "Tt41": np.min(screen.outputs["Tt41"][ok]), "Tt3": np.min(screen.outputs["Tt3"][ok]),
            "W3_corrected": np.max(screen.outputs["W3_corrected"][ok]),
            "clearance_margin": 2.0 - 0.35 - np.min(screen.outputs["nacelle_max_diameter"][ok])}[constraint]
    assert f.best == pytest.approx(best)
    # the best reachable value really misses the limit
    assert (f.best > f.limit) if constraint in ("diameter_margin", "Tt41", "Tt3") else (f.best < f.limit)


def test_check_feasibility_end_to_end_is_fast():
    start = time.perf_counter()
    findings = check_feasibility(_scenario({"limits": {"max_nacelle_diameter_m": 0.5}}))
    assert time.perf_counter() - start < SCREEN_BUDGET_S
    assert findings[0].severity == "error" and findings[0].best == pytest.approx(1.78, abs=0.05)


def test_limits_met_apart_but_not_together_is_a_warning(demo_screen):
    """T41 <= 1604 K needs a high OPR, T3 <= 780 K a low one: each met somewhere, never together."""
    _, screen, _ = demo_screen
    scenario = _scenario({"limits": {"max_Tt41_K": 1604.0, "max_Tt3_K": 780.0}})
    findings = assess(screen, scenario)
    assert [f.severity for f in findings] == ["warning"]
    assert "none of the" in findings[0].message and "meets all of them together" in findings[0].message


def test_takeoff_mass_limit_is_screened_when_asked(demo_screen):
    """The demo's take-off mass is above its maximum everywhere in the bounds: screened only when enforced."""
    scenario, screen, _ = demo_screen
    assert assess(screen, scenario) == []
    findings = assess(screen, scenario, limit_takeoff_mass=True)
    assert findings[0].constraint == "mtow_margin" and "aircraft.max_takeoff_mass_kg" in findings[0].message
    assert assess(screen, _scenario({"aircraft": {"max_takeoff_mass_kg": 95000.0}}), limit_takeoff_mass=True) == []


def test_multipoint_temperatures_are_left_to_the_optimizer(demo_screen):
    """With the multipoint model (the demo's), T41 and T3 limits are not screened: they depend on the take-off
    cooling sizing the screen's design-point model lacks; the geometric limits still are."""
    _, screen, _ = demo_screen
    multipoint = validate({"limits": {"max_Tt41_K": 1500.0, "max_Tt3_K": 600.0}}, base=load_scenario())
    assert assess(screen, multipoint) == []
    tight = validate({"limits": {"max_nacelle_diameter_m": 0.5}}, base=load_scenario())
    assert [f.constraint for f in assess(screen, tight)] == ["diameter_margin"]


def test_takeoff_mass_constraint_is_optional():
    _, settings = build_best_cycle_problem(reports=False)
    assert "mtow_margin" not in settings.limits
    prob, settings = build_best_cycle_problem(reports=False, limit_takeoff_mass=True)
    assert settings.limits["mtow_margin"] == ("lower", 0.0, "kg")
    prob.final_setup()
    assert "mtow_margin" in prob.model.get_constraints()


def test_sweep(demo_screen):
    """A sweep: a limit missed at every value is an error; at some values, a warning naming them."""
    scenario, _, _ = demo_screen
    findings = check_sweep(scenario, "max_nacelle_diameter_m", [0.5, 1.0])
    assert [f.severity for f in findings] == ["error"] and "every value of trade.values" in findings[0].message
    findings = check_sweep(scenario, "max_nacelle_diameter_m", [1.0, 2.2])
    assert [f.severity for f in findings] == ["warning"] and "= 1 m" in findings[0].message
    assert check_sweep(scenario, "wing_height_m", [3.0, 3.15]) == []


def test_initial_design_that_cannot_be_evaluated_is_reported():
    scenario = _scenario({"design_variables": {"FPR": {"initial": 3.0, "lower": 1.3, "upper": 3.0,
                                                       "optimize": True},
                                               "BPR": {"initial": 25.0, "lower": 6.0, "upper": 25.0,
                                                       "optimize": True}}})
    findings = check_feasibility(scenario)
    assert findings[0].severity == "error" and "initial design cannot be evaluated" in findings[0].message
