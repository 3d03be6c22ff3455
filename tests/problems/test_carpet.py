"""Tests of the cycle carpet: vectorized values equal point-by-point runs, optimal FPR, masked failures."""

import importlib
import numpy as np
import openmdao.api as om
import pytest

from bypassopt.problems.best_cycle import OBJECTIVES, build_evaluation_problem
from bypassopt.problems.carpet import CARPET_OUTPUTS, run_carpet
from bypassopt.scenario import ScenarioError, design_point_scenario, load_scenario, validate

VECTOR_RTOL = 1e-10       # vectorized carpet against one-design-per-problem evaluations
FPR_STEP = 5e-3           # neighbours of an optimal FPR
# At the neighbours FPR* +- FPR_STEP the mission fuel rises by 0.3 to 4 kg on this grid (0.5 f'' step^2);
# the allowance, 1e-8 of the fuel (0.00016 kg), only covers round-off.
NEIGHBOUR_RTOL = 1e-8
# d(fuel)/d(FPR) at an interior optimum, times the FPR range, relative to the fuel; SLSQP at the demo
# tolerance leaves at most 6e-6 on this grid (0.16 kg per unit FPR), 1e-4 would be 2.6 kg per unit FPR.
GRADIENT_RTOL = 1e-4

# Small grid: at FPR 1.5 the design BPR 16, OPR 60 has no core-jet pressure left (the model raises).
BPR_VALUES = [8.0, 12.0, 16.0]
OPR_VALUES = [30.0, 60.0]
FIXED_FPR = 1.5
INFEASIBLE = (1, 2)  # (OPR index, BPR index) of BPR 16, OPR 60


@pytest.fixture(scope="module")
def scenario():
    """The built-in demo with the design-point engine model and T4 held at 1650 K (the carpet machinery; the
    multipoint model's carpet is test_multipoint_carpet_has_the_takeoff_limits)."""
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


@pytest.fixture(scope="module")
def fixed_carpet(scenario):
    """Carpet at a fixed FPR, with the progress messages it reported."""
    calls = []
    result = run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="fixed", fixed_fpr=FIXED_FPR,
                        progress=lambda done, total, msg: calls.append((done, total, msg)))
    return result, calls


@pytest.fixture(scope="module")
def optimal_carpet(scenario):
    """Carpet with the FPR of every point at its own optimum."""
    return run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="optimal")


def point_problem(scenario, bpr, opr, fpr):
    """A one-design problem of the installed engine, evaluated."""
    prob = build_evaluation_problem(scenario, design={"BPR": bpr, "OPR": opr, "FPR": fpr})
    prob.run_model()
    return prob


def assert_matches_point_by_point(result, scenario, points):
    obj_out, obj_units, _ = OBJECTIVES[result["objective_name"]]
    for i, j in points:
        assert result["feasible"][i, j]
        prob = point_problem(scenario, result["BPR"][i, j], result["OPR"][i, j], result["FPR"][i, j])
        np.testing.assert_allclose(result["objective"][i, j], prob.get_val(obj_out, units=obj_units)[0],
                                   rtol=VECTOR_RTOL)
        for name, units in CARPET_OUTPUTS.items():
            np.testing.assert_allclose(result[name][i, j], prob.get_val(name, units=units)[0], rtol=VECTOR_RTOL,
                                       atol=1e-12, err_msg=f"{name} at BPR {result['BPR'][i, j]:g}, "
                                                           f"OPR {result['OPR'][i, j]:g}")


def test_grid_layout(fixed_carpet):
    """Rows are OPR, columns BPR; FPR is the fixed value wherever the design could be evaluated."""
    result, _ = fixed_carpet
    assert result["BPR"].shape == result["objective"].shape == (len(OPR_VALUES), len(BPR_VALUES))
    np.testing.assert_array_equal(result["BPR"][0], BPR_VALUES)
    np.testing.assert_array_equal(result["OPR"][:, 0], OPR_VALUES)
    np.testing.assert_array_equal(result["FPR"][result["feasible"]], FIXED_FPR)
    assert result["objective_name"] == "mission_fuel" and result["objective_units"] == "kg"


def test_fixed_carpet_equals_point_by_point_evaluations(fixed_carpet, scenario):
    """The one vectorized run gives the same numbers as separate one-design problems (to 1e-10)."""
    result, _ = fixed_carpet
    assert_matches_point_by_point(result, scenario, [(0, 0), (1, 1), (0, 2)])


def test_infeasible_point_is_masked(fixed_carpet, scenario):
    """A design the model cannot evaluate is NaN with feasible False; the others are finite."""
    result, _ = fixed_carpet
    i, j = INFEASIBLE
    expected = np.ones(result["feasible"].shape, dtype=bool)
    expected[i, j] = False
    np.testing.assert_array_equal(result["feasible"], expected)
    for name in ["objective", "FPR", *CARPET_OUTPUTS]:
        assert np.isnan(result[name][i, j]), name
        assert np.all(np.isfinite(result[name][expected])), name
    assert not result["meets_limits"][i, j]
    with pytest.raises(om.AnalysisError):  # the point-by-point model raises there too
        point_problem(scenario, BPR_VALUES[j], OPR_VALUES[i], FIXED_FPR)


def test_grid_optimum_meets_all_limits(fixed_carpet):
    """The grid optimum is the least objective among points with every margin >= 0."""
    result, _ = fixed_carpet
    meets = result["feasible"].copy()
    for name, lim in result["limits"].items():
        g = result[name]
        margin = g - lim["limit"] if lim["kind"] == "lower" else lim["limit"] - g
        np.testing.assert_allclose(result["margins"][name][meets], margin[meets])
        meets &= np.where(result["feasible"], margin, -1.0) >= 0.0
    np.testing.assert_array_equal(result["meets_limits"], meets)
    assert not np.all(meets)  # the small grid has points outside the limits, so the choice is tested
    best = result["optimum"]
    assert best["objective"] == np.min(result["objective"][meets])
    i, j = best["index"]
    assert meets[i, j] and (best["BPR"], best["OPR"]) == (result["BPR"][i, j], result["OPR"][i, j])
    assert result["limits"]["Tt41"] == {"kind": "upper", "limit": 1750.0, "units": "K",
                                        "label": "HPT rotor inlet temperature T41"}


def test_progress_reports_every_stage(fixed_carpet):
    """progress(done, total, message) counts up to total."""
    _, calls = fixed_carpet
    assert [c[0] for c in calls] == list(range(1, calls[0][1] + 1))
    assert all(isinstance(c[2], str) and c[2] for c in calls)


def test_optimal_fpr_is_a_local_optimum(optimal_carpet, scenario):
    """Each point's FPR is its own optimum: neighbours are not better, and d(fuel)/d(FPR) ~ 0 inside the bounds."""
    result = optimal_carpet
    lower, upper = result["FPR_bounds"]
    assert result["fpr_optimisation"]["success"]
    assert np.all(result["feasible"])  # every point of this grid has a valid cycle at some FPR
    prob = build_evaluation_problem(scenario)
    for i, j in np.ndindex(result["FPR"].shape):
        bpr, opr, fpr = result["BPR"][i, j], result["OPR"][i, j], result["FPR"][i, j]
        f_opt = result["objective"][i, j]
        prob.set_val("BPR", bpr)
        prob.set_val("OPR", opr)
        for x in (fpr - FPR_STEP, fpr + FPR_STEP):
            if lower <= x <= upper:
                prob.set_val("FPR", x)
                prob.run_model()
                assert prob.get_val("mission_fuel", units="kg")[0] >= f_opt * (1.0 - NEIGHBOUR_RTOL), (bpr, opr, x)
        prob.set_val("FPR", fpr)
        prob.run_model()
        dfdx = prob.compute_totals(of=["mission_fuel"], wrt=["FPR"])[("mission_fuel", "FPR")][0, 0]
        if lower + 1e-6 < fpr < upper - 1e-6:
            assert abs(dfdx) * (upper - lower) / f_opt < GRADIENT_RTOL, (bpr, opr, dfdx)
        elif fpr >= upper - 1e-6:
            assert dfdx < 0.0  # optimum beyond the upper bound
        else:
            assert dfdx > 0.0  # optimum below the lower bound


def test_optimal_carpet_equals_point_by_point_evaluations(optimal_carpet, scenario):
    """Values reported at the optimal FPRs are those of one-design problems there (to 1e-10)."""
    assert_matches_point_by_point(optimal_carpet, scenario, [(0, 1), (1, 2)])


def test_optimal_fpr_beats_the_fixed_fpr(optimal_carpet, fixed_carpet):
    """Optimising FPR never gives more fuel than the fixed FPR, and jet velocity ratios are 0.5 to 1.1."""
    fixed, _ = fixed_carpet
    ok = fixed["feasible"]
    assert np.all(optimal_carpet["objective"][ok] <= fixed["objective"][ok] * (1.0 + NEIGHBOUR_RTOL))
    assert np.all((optimal_carpet["jet_velocity_ratio"] > 0.5) & (optimal_carpet["jet_velocity_ratio"] < 1.1))


def test_bad_mode_is_rejected(scenario):
    """An unknown FPR mode is a ScenarioError naming it."""
    with pytest.raises(ScenarioError, match="fpr_mode = 'best'"):
        run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="best")


def test_carpet_plot(optimal_carpet, fixed_carpet, tmp_path):
    """plot_carpet writes PNGs for both FPR modes, with and without a continuous optimum marked."""
    importlib.import_module("matplotlib")
    from bypassopt.plots import plot_carpet

    fixed, _ = fixed_carpet
    for name, result, optimum in (("optimal.png", optimal_carpet, {"BPR": 10.4, "OPR": 54.3, "FPR": 1.58,
                                                                     "objective": 15860.0}),
                                  ("fixed.png", fixed, None)):
        plot_carpet(result, tmp_path / name, optimum=optimum)
        data = (tmp_path / name).read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20000


def test_node_sum_comp_partials():
    """NodeSumComp: the sum and its constant partials (complex step)."""
    from openmdao.utils.assert_utils import assert_check_partials

    from bypassopt.problems.carpet import NodeSumComp

    prob = om.Problem(reports=False)
    prob.model.add_subsystem("s", NodeSumComp(num_nodes=4, units="kg"), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("values", [1.0, 2.5, -3.0, 4.0])
    prob.run_model()
    assert prob.get_val("total")[0] == pytest.approx(4.5, rel=1e-15)
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=1e-12, rtol=1e-12)


def test_multipoint_carpet_has_the_takeoff_limits():
    """The demo's multipoint model: the carpet draws the take-off T41/T3 limits and its values are the model's."""
    scenario = load_scenario()
    result = run_carpet(scenario, [9.0, 11.0], [30.0, 35.0], fpr_mode="fixed", fixed_fpr=1.55)
    assert {"takeoff:Tt41", "takeoff:Tt3"} <= set(result["limits"])
    assert result["feasible"][0, 1]
    prob = point_problem(scenario, 11.0, 30.0, 1.55)
    for name, units in (("takeoff:Tt41", "K"), ("mission_fuel", "kg")):
        np.testing.assert_allclose(result[name][0, 1], prob.get_val(name, units=units)[0], rtol=1e-8)


# The same grid as cases of 2 designs (parallel_cases: what mpiexec shares out; tests/mpi checks the parallel run).
DESIGNS_PER_CASE = 2
# A case's designs share its Newton iterations: the cases differ from the one-case carpet by the solvers' tolerance.
CASES_RTOL = 1e-8


@pytest.fixture(scope="module")
def fixed_carpet_in_cases(scenario):
    """The fixed-FPR carpet evaluated as 3 cases of 2 designs (om.DOEDriver over the cases)."""
    return run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="fixed", fixed_fpr=FIXED_FPR,
                      designs_per_case=DESIGNS_PER_CASE)


def test_carpet_in_cases_equals_point_by_point_and_the_one_case_carpet(fixed_carpet_in_cases, fixed_carpet,
                                                                         scenario):
    """Cases of 2 designs: the point-by-point values (1e-10), the one-case carpet's mask and values, one optimum."""
    result, (one, _) = fixed_carpet_in_cases, fixed_carpet
    assert (result["cases"], result["designs_per_case"]) == (3, DESIGNS_PER_CASE)
    assert_matches_point_by_point(result, scenario, [(0, 0), (1, 1), (0, 2)])
    np.testing.assert_array_equal(result["feasible"], one["feasible"])
    np.testing.assert_array_equal(result["meets_limits"], one["meets_limits"])
    for name in ["objective", "FPR", *CARPET_OUTPUTS]:
        np.testing.assert_allclose(result[name], one[name], rtol=CASES_RTOL, atol=1e-12, err_msg=name)
    assert result["optimum"]["index"] == one["optimum"]["index"]


def test_optimal_carpet_in_cases_finds_each_points_fpr(scenario, optimal_carpet):
    """'optimal' mode in cases: every case optimises its own designs' FPR; the same optima as the one-case carpet."""
    result = run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="optimal", designs_per_case=4)
    assert result["cases"] == 2 and result["fpr_optimisation"]["success"]
    np.testing.assert_array_equal(result["feasible"], optimal_carpet["feasible"])
    ok = result["feasible"]
    # each point's optimum, reached by two differently batched SLSQP runs (tolerance 1e-8 on the summed objective)
    np.testing.assert_allclose(result["objective"][ok], optimal_carpet["objective"][ok], rtol=1e-7)


def test_designs_per_case_must_be_positive(scenario):
    with pytest.raises(ScenarioError, match="designs_per_case"):
        run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="fixed", designs_per_case=0)
