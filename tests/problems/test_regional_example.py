"""The regional-jet example scenario: its optimum OPR lies inside the bounds because of the core size effect."""

from pathlib import Path

import pytest

from bypassopt.problems.best_cycle import apply_scenario, build_best_cycle_problem
from bypassopt.problems.drivers import driver_succeeded
from bypassopt.scenario import load_scenario

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "demo_regional_90.toml"
#: An OPR this close to a bound, or a T3 this close to its limit, counts as held there (K for T3): far more than
#: SLSQP's tolerance, far less than the distances the physics produces (several units of OPR, about 18 K).
OPR_MARGIN = 1.0
T3_MARGIN_K = 5.0


def _optimum(core_size_effect=True):
    scenario = load_scenario(EXAMPLE)
    prob, settings = build_best_cycle_problem(scenario, reports=False)
    if not core_size_effect:
        prob.model_options["*"] = {"core_size_effect": False}
        prob.setup()
        apply_scenario(prob, scenario)
    assert driver_succeeded(prob.run_driver())
    return prob, settings


@pytest.fixture(scope="module")
def optimum():
    """The example's optimum (design-point engine model, a few seconds)."""
    return _optimum()


def test_example_is_the_invented_regional_jet(optimum):
    """The file sets the second aircraft of shared/scenario.md (invented) and needs no core-size floor."""
    _, settings = optimum
    air = settings.scenario["aircraft"]
    assert (air["max_takeoff_mass_kg"], air["payload_kg"], air["design_range_m"]) == (42000.0, 8550.0, 3.0e6)
    assert settings.scenario["limits"]["min_core_size_kg_s"] == 0.0


def test_optimum_opr_inside_bounds_and_below_the_t3_limit(optimum):
    """OPR stops inside its bounds with the T3 limit inactive: nothing but the physics holds it."""
    prob, settings = optimum
    dv = settings.design_vars["OPR"]
    opr = prob.get_val("OPR")[0]
    assert dv["lower"] + OPR_MARGIN < opr < dv["upper"] - OPR_MARGIN
    _, t3_limit, units = settings.limits["Tt3"]
    assert prob.get_val("Tt3", units=units)[0] < t3_limit - T3_MARGIN_K


def test_core_size_effect_is_what_holds_opr(optimum):
    """Without the core size effect the optimizer raises OPR by several units, up to the T3 limit; with it the
    smaller core of a higher OPR loses HPC efficiency (below its technology level)."""
    prob, settings = optimum
    off, _ = _optimum(core_size_effect=False)
    assert off.get_val("OPR")[0] > prob.get_val("OPR")[0] + 3.0
    _, t3_limit, units = settings.limits["Tt3"]
    assert off.get_val("Tt3", units=units)[0] > t3_limit - T3_MARGIN_K
    assert prob.get_val("hpc_eff_poly")[0] < prob.get_val("hpc_eff_poly_ref")[0]
    assert off.get_val("W3_corrected")[0] < prob.get_val("W3_corrected")[0]
