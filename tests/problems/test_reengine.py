"""Re-engining: the previous-generation engine against the best installed cycle on the demo aircraft."""

import copy

import pytest

from bypassopt import CAUTION
from bypassopt.problems.best_cycle import build_evaluation_problem
from bypassopt.problems.reengine import (COMPARED, POLYTROPIC_EFFICIENCIES, compare_reengining,
                                         format_reengining, previous_engine_scenario)
from bypassopt.scenario import ScenarioError, load_scenario

#: Re-evaluating a converged design reproduces it to the Newton solver's tolerance.
REEVAL_RTOL = 1e-7


@pytest.fixture(scope="module")
def comparison():
    return compare_reengining(load_scenario())


def test_previous_engine_is_worse(comparison):
    """Lower BPR and OPR with poorer components: more fuel per thrust and more mission fuel."""
    rows = {r["name"]: r for r in comparison["comparison"]}
    assert comparison["optimizer"]["success"]
    assert rows["installed_TSFC"]["previous"] > rows["installed_TSFC"]["new"]
    assert rows["mission_fuel"]["previous"] > rows["mission_fuel"]["new"]
    assert rows["installed_TSFC"]["difference_pct"] < -5.0  # a generation of technology and cycle
    assert rows["fan_tip_diameter"]["previous"] < rows["fan_tip_diameter"]["new"]  # smaller, lower-BPR fan


def test_differences_consistent(comparison):
    """Each row is the two summaries' values; difference = new - previous; percent of the previous value."""
    prev_q = comparison["previous"]["quantities"]
    new_q = comparison["new"]["quantities"]
    assert [r["name"] for r in comparison["comparison"]] == [name for name, _, _ in COMPARED]
    for r in comparison["comparison"]:
        assert r["units"] == prev_q[r["name"]]["units"] == new_q[r["name"]]["units"]
        assert r["previous"] == prev_q[r["name"]]["value"]
        assert r["new"] == new_q[r["name"]]["value"]
        assert r["difference"] == pytest.approx(r["new"] - r["previous"], rel=1e-15, abs=1e-15)
        assert r["difference_pct"] == pytest.approx(100.0 * r["difference"] / abs(r["previous"]), rel=1e-12)


def test_previous_engine_evaluation_independent(comparison):
    """Re-evaluating the previous engine by hand (efficiencies lowered, same installation) gives the same numbers."""
    scenario = load_scenario()
    prev = scenario["previous_engine"]
    lowered = copy.deepcopy(scenario)
    for key in POLYTROPIC_EFFICIENCIES:
        lowered["engine"][key] -= prev["efficiency_drop"]
    prob = build_evaluation_problem(lowered, design={"BPR": prev["BPR"], "FPR": prev["FPR"], "OPR": prev["OPR"],
                                                     "Tt4": prev["Tt4_K"]})
    prob.run_model()
    rows = {r["name"]: r for r in comparison["comparison"]}
    for name, units, _ in COMPARED:
        assert rows[name]["previous"] == pytest.approx(prob.get_val(name, units=units)[0], rel=REEVAL_RTOL), name
    assert prob.get_val("hpc_eff_poly")[0] == pytest.approx(scenario["engine"]["hpc_eff_poly"] - 0.025)


def test_new_engine_evaluation_independent(comparison):
    """The new engine's optimum design re-evaluated with the scenario's efficiencies gives the same numbers."""
    q = comparison["new"]["quantities"]
    prob = build_evaluation_problem(load_scenario(), design={k: q[k]["value"] for k in ("BPR", "FPR", "OPR", "Tt4")})
    prob.run_model()
    for name, units, _ in COMPARED:
        assert q[name]["value"] == pytest.approx(prob.get_val(name, units=units)[0], rel=REEVAL_RTOL, abs=1e-6), name


def test_same_installation_and_efficiencies_lowered():
    """Only the polytropic efficiencies change; fan-face and nacelle proportions stay the scenario's."""
    scenario = load_scenario()
    prev = previous_engine_scenario(scenario)
    assert prev["installation"] == scenario["installation"]
    assert prev["aircraft"] == scenario["aircraft"] and prev["design_point"] == scenario["design_point"]
    for key, value in scenario["engine"].items():
        drop = scenario["previous_engine"]["efficiency_drop"] if key in POLYTROPIC_EFFICIENCIES else 0.0
        assert prev["engine"][key] == pytest.approx(value - drop, abs=1e-15), key


def test_report_text(comparison):
    text = format_reengining(comparison)
    assert CAUTION in " ".join(text.split())
    assert "installed TSFC" in text and "mission fuel" in text and "%" in text


def test_previous_engine_breaking_todays_clearance_is_reported():
    """A previous engine too big for today's ground clearance is evaluated and its negative margin noted."""
    scenario = load_scenario()
    scenario["previous_engine"].update(BPR=9.0, FPR=1.5, OPR=36.0)
    scenario["installation"]["min_ground_clearance_m"] = 0.9
    result = compare_reengining(scenario)
    rows = {r["name"]: r for r in result["comparison"]}
    assert rows["clearance_margin"]["previous"] < 0.0
    assert rows["clearance_margin"]["new"] > -1e-6
    assert any("ground clearance" in note for note in result["notes"])


def test_missing_previous_engine():
    scenario = load_scenario()
    del scenario["previous_engine"]["OPR"]
    with pytest.raises(ScenarioError, match="previous_engine"):
        compare_reengining(scenario)
