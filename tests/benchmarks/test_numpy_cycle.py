"""The framework-overhead benchmark's plain NumPy cycle against ``TurbofanCycleGroup`` (same physics, no OpenMDAO).

A consistency check of two implementations of the same physics (both chain the package's own gas, process and
flow helpers), not a check against an outside reference: the outside-reference checks of that physics live in
``tests/components``.
"""

import sys
from pathlib import Path

import numpy as np
import openmdao.api as om
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:  # benchmarks/ is not installed: import it from the checkout (appended, see smoke test)
    sys.path.append(str(ROOT))

from benchmarks.numpy_cycle import CYCLE_INPUTS, DESIGN_POINT, default_inputs, evaluate_cycle  # noqa: E402
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup  # noqa: E402
from bypassopt.components.validation import InputRangeError  # noqa: E402

#: Two implementations of the same arithmetic; they differ only in how the W2 loop is converged.
CONSISTENCY_RTOL = 1.0e-8
SEED = 11
NUM_DESIGNS = 6
#: Outputs compared: performance, sizing, and every station's total temperature and pressure.
STATIONS = ("0", "2", "13", "21", "25", "3", "4", "41", "44", "45", "5", "7", "17")
COMPARED = ("TSFC", "Fn_specific", "W2", "fuel_flow", "FAR4", "W5_frac", "Fg8_specific", "Fg18_specific",
            "HP_power_demand", "LP_power_demand", "W3_corrected", "HP_shaft_power", "area8_per_flow",
            "area18_per_flow", "thermal_efficiency", "propulsive_efficiency") \
    + tuple(f"{q}{s}" for s in STATIONS for q in ("Tt", "Pt"))


def random_designs(n, seed=SEED):
    """Seeded designs inside the valid ranges: cycle choices, flight condition, thrust, offtake and efficiencies."""
    rng = np.random.default_rng(seed)
    inputs = default_inputs(n)
    bpr = rng.uniform(6.0, 12.0, n)
    inputs.update(BPR=bpr, FPR=1.0 + 0.6 * np.sqrt(10.0 / bpr) * rng.uniform(0.9, 1.05, n),
                  OPR=rng.uniform(30.0, 50.0, n), Tt4=rng.uniform(1550.0, 1800.0, n),
                  altitude=rng.uniform(9000.0, 12000.0, n), dT_isa=rng.uniform(-10.0, 15.0, n),
                  Mach0=rng.uniform(0.7, 0.82, n), Fn_required=rng.uniform(18e3, 30e3, n),
                  HP_power_offtake=rng.uniform(0.0, 3.0e5, n), booster_PR=rng.uniform(1.4, 2.2, n),
                  hpt_eff_poly=rng.uniform(0.88, 0.92, n), customer_bleed_frac=rng.uniform(0.0, 0.02, n))
    return inputs


def solve_group(inputs):
    """Outputs of ``TurbofanCycleGroup`` (default options and solver) for the NumPy function's input dict."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("m", TurbofanCycleGroup(num_nodes=len(inputs["BPR"])), promotes=["*"])
    prob.setup()
    for name, (_value, units) in CYCLE_INPUTS.items():
        prob.set_val(name, inputs[name], units=units)
    prob.run_model()
    return prob


def test_numpy_cycle_matches_group_at_random_designs():
    """Consistency (same physics, two implementations): every compared output within 1e-8 relative."""
    inputs = random_designs(NUM_DESIGNS)
    prob = solve_group(inputs)
    result = evaluate_cycle(inputs)
    for name in COMPARED:
        np.testing.assert_allclose(result[name], prob.get_val(name), rtol=CONSISTENCY_RTOL, atol=0.0, err_msg=name)


def test_warm_start_converges_in_one_pass_to_the_same_answer():
    """Started from the converged W2, the loop takes one pass and gives the same outputs."""
    inputs = random_designs(3, seed=SEED + 1)
    cold = evaluate_cycle(inputs)
    warm = evaluate_cycle(inputs, W2_guess=cold["W2"])
    assert cold["passes"] >= 3 and warm["passes"] == 1
    for name in ("TSFC", "W2", "Tt5", "Pt5"):
        np.testing.assert_allclose(warm[name], cold[name], rtol=1e-12, atol=0.0, err_msg=name)


def test_inputs_cover_the_group_and_the_design_point_is_the_demo():
    """The input dict holds every free input of the group; the design point is the demo scenario's."""
    from bypassopt.scenario import load_scenario, model_inputs

    prob = om.Problem(reports=False)
    prob.model.add_subsystem("m", TurbofanCycleGroup(), promotes=["*"])
    prob.setup()
    prob.final_setup()
    free = {meta["prom_name"] for meta in prob.model.get_io_metadata(iotypes="input").values()
            if prob.model.get_source(meta["prom_name"]).startswith("_auto_ivc.")}
    assert free == set(CYCLE_INPUTS)
    demo = model_inputs(load_scenario())
    demo["Fn_required"] = demo.pop("thrust_required")
    for name, (value, units) in DESIGN_POINT.items():
        assert demo[name] == (value, units), name


def test_nozzle_pressure_ratio_below_one_raises():
    """A design whose bypass jet cannot expand (Pt17 below Ps0) raises like the group, never returns NaN."""
    inputs = default_inputs(2)
    inputs["Mach0"][1] = 0.0  # no ram pressure: the fan's 0.01 % cannot make up the intake and duct losses
    inputs["FPR"][1] = 1.0001
    with pytest.raises(InputRangeError, match="nozzle"):
        evaluate_cycle(inputs)
