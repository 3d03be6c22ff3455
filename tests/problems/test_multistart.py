"""Multistart study: seeded starts inside the bounds, every start optimised, the best and the spread."""

import numpy as np
import pytest

from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.drivers import run_record
from bypassopt.problems.multistart import (DESIGN_NAMES, FEASIBILITY_TOL, free_design_variables, run_multistart,
                                           starting_designs)
from bypassopt.scenario import ScenarioError, design_point_scenario, load_scenario, validate

#: The starts reach the optimum of one optimisation from the scenario's own initial design to SLSQP's tolerance
#: (1e-8 on the scaled objective, about 1e-4 kg of 16 t; measured spread 2e-10 relative).
OPTIMUM_RTOL = 1e-7
DESIGN_RTOL = 1e-4  # the design variables at a flat optimum move more than the objective


@pytest.fixture(scope="module")
def scenario():
    """The design-point demo with T4 held at 1650 K (the study's machinery; test_multipoint_multistart is the
    default model)."""
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


@pytest.fixture(scope="module")
def study(scenario):
    calls = []
    result = run_multistart(scenario, num_starts=3, seed=3, progress=lambda *a: calls.append(a))
    return result, calls


def test_latin_hypercube_has_one_start_per_stratum(scenario):
    """LHS: each free variable's range in n equal strata holds exactly one start; fixed variables are not drawn."""
    n = 7
    starts = starting_designs(scenario, n, "lhs", seed=11)
    free = free_design_variables(scenario)
    assert list(starts) == list(free) and "Tt4" not in starts
    for name, (lo, hi) in free.items():
        strata = np.floor((starts[name] - lo) / (hi - lo) * n).astype(int)
        assert sorted(strata) == list(range(n)), name
    again = starting_designs(scenario, n, "lhs", seed=11)
    for name in starts:
        np.testing.assert_array_equal(starts[name], again[name])
    other = starting_designs(scenario, n, "lhs", seed=12)
    assert not np.array_equal(starts["BPR"], other["BPR"])


def test_random_starts_lie_inside_the_bounds(scenario):
    starts = starting_designs(scenario, 50, "random", seed=0)
    for name, (lo, hi) in free_design_variables(scenario).items():
        assert np.all((starts[name] >= lo) & (starts[name] <= hi)), name


@pytest.mark.parametrize("kwargs, match", [({"method": "sobol"}, "method"), ({"num_starts": 0}, "num_starts")])
def test_bad_arguments_are_rejected(scenario, kwargs, match):
    with pytest.raises(ScenarioError, match=match):
        starting_designs(scenario, **{"num_starts": 3, "method": "lhs", **kwargs})


def test_every_start_reaches_the_optimum_of_a_plain_optimisation(study, scenario):
    """All starts converge, meet the limits and agree; the best equals one optimisation from the initial design."""
    result, _ = study
    assert [s["index"] for s in result["starts"]] == [0, 1, 2]
    assert all(s["success"] and s["feasible"] and s["violation"] <= FEASIBILITY_TOL for s in result["starts"])
    assert result["spread"]["converged"] == result["spread"]["agree"] == 3
    prob, settings = build_best_cycle_problem(scenario, reports=False)
    assert run_record(prob.driver, prob.run_driver())["success"]
    best = result["best"]
    np.testing.assert_allclose(best["objective"], prob.get_val(settings.objective_output)[0], rtol=OPTIMUM_RTOL)
    for name in DESIGN_NAMES:
        np.testing.assert_allclose(best["design"][name], prob.get_val(name, units="K" if name == "Tt4" else None)[0],
                                   rtol=DESIGN_RTOL, err_msg=name)
    spread = result["spread"]
    assert spread["min"] == best["objective"] <= spread["max"]
    assert spread["max"] - spread["min"] <= OPTIMUM_RTOL * spread["min"]


def test_starts_are_the_seeded_draw(study, scenario):
    result, calls = study
    drawn = starting_designs(scenario, 3, "lhs", seed=3)
    for k, start in enumerate(result["starts"]):
        assert start["start"] == {name: float(drawn[name][k]) for name in drawn}
    assert (result["method"], result["seed"], result["num_starts"], result["processes"]) == ("lhs", 3, 3, 1)
    assert [c[:2] for c in calls] == [(0, 2), (2, 2)]


def test_multipoint_multistart():
    """The default (multipoint) model from two LHS starts (seed 0): the start at T4 1835 K, FPR 1.84 ends in a design
    the model cannot evaluate (reported, not raised); the other converges to an optimum that meets every limit."""
    result = run_multistart(load_scenario(), num_starts=2, seed=0)
    assert result["objective_output"] == "mission_fuel"
    failed = [s for s in result["starts"] if not s["success"]]
    assert all(np.isnan(s["objective"]) and not s["feasible"] for s in failed)
    assert result["spread"]["converged"] == result["spread"]["agree"] == 2 - len(failed) >= 1
    assert result["best"]["feasible"] and result["best"]["violation"] <= FEASIBILITY_TOL


SCENARIO_TOML = """\
[design_variables.Tt4_K]
initial = 1650.0
lower = 1400.0
upper = 1850.0
optimize = false
"""


def test_multistart_command_writes_its_files(tmp_path):
    """``bypassopt multistart``: exit 0, multistart.json (best, spread, every start) and one CSV row per start."""
    import csv
    import json

    from bypassopt.cli import main

    path = tmp_path / "scenario.toml"
    path.write_text(SCENARIO_TOML)
    out = tmp_path / "res"
    assert main(["multistart", "--scenario", str(path), "--model", "design_point", "--starts", "2", "--seed", "4",
                 "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "multistart.json").read_text())
    assert data["num_starts"] == 2 and data["seed"] == 4 and data["best"]["feasible"]
    with open(out / "multistart.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    assert [r["start"] for r in rows] == ["0", "1"] and {"start_BPR", "final_BPR", "objective"} <= set(rows[0])
