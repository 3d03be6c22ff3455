"""The technology-effects study: each case reaches the model, and its table reports what it ran."""

import pytest

from bypassopt.problems.technology_study import CASES, build_effects_problem, format_effects
from bypassopt.scenario import design_point_scenario, load_scenario

#: Computed efficiency -> its technology level, and the effect that moves it.
MOVED = {"hpc_eff_poly": ("hpc_eff_poly_ref", "core_size_effect"),
         "fan_bypass_eff_poly": ("fan_bypass_eff_poly_ref", "fan_shock_effect"),
         "lpt_eff_poly": ("lpt_eff_poly_ref", "lp_spool_effect")}


@pytest.mark.parametrize("case", sorted(CASES))
def test_each_case_switches_exactly_its_effects(case):
    """An effect that is off leaves its efficiency at the technology level; one that is on moves it (the demo
    design sits away from every reference: a core below 3 kg/s, a supersonic fan tip, an LP turbine off its
    reference stage design). Design-point model (one evaluation each)."""
    prob, _ = build_effects_problem(design_point_scenario(load_scenario()), CASES[case])
    prob.run_model()
    for computed, (reference, effect) in MOVED.items():
        value, ref = prob.get_val(computed)[0], prob.get_val(reference)[0]
        if effect in CASES[case]:
            assert abs(value - ref) > 1e-4, (case, computed)
        else:
            assert value == ref, (case, computed)


def test_format_lists_every_case_with_its_fuel_difference():
    row = {"BPR": 10.0, "FPR": 1.5, "OPR": 40.0, "Tt4": 1700.0, "mission_fuel": 16000.0, "success": True,
           "active": ["clearance_margin"]}
    result = {"none": {**row, "fuel_vs_none": 0.0}, "all": {**row, "mission_fuel": 16100.0, "fuel_vs_none": 100.0,
                                                            "success": False, "active": []}}
    text = format_effects(result).splitlines()
    assert text[1].startswith("none") and "clearance_margin" in text[1]
    assert text[2].startswith("all") and "+100" in text[2] and "NOT CONVERGED" in text[2]
