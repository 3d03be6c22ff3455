"""PerformanceComp: specific thrust, TSFC and efficiencies from the jet velocities."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.performance_comp import PerformanceComp

PARTIALS_TOL = 1e-10
RTOL = 1e-12


def _problem(nn):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("perf", PerformanceComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def _random_inputs(prob, nn, seed=3):
    rng = np.random.default_rng(seed)
    bpr = rng.uniform(4.0, 14.0, nn)
    c = 1.0 / (1.0 + bpr)
    vals = {"BPR": bpr, "core_flow_frac": c, "burner_air_frac": rng.uniform(0.75, 0.9, nn),
            "FAR4": rng.uniform(0.018, 0.03, nn), "Fg8_specific": rng.uniform(450.0, 700.0, nn),
            "Fg18_specific": rng.uniform(300.0, 420.0, nn), "V0": rng.uniform(150.0, 250.0, nn),
            "fuel_LHV": rng.uniform(42.0e6, 44.0e6, nn)}
    vals["W5_frac"] = c * (1.0 + vals["FAR4"]) * 0.97
    for k, v in vals.items():
        prob.set_val(k, v)
    return vals


def test_single_stream_textbook_relations():
    """Equal jet velocities Vj, no fuel mass: Fn/W2 = Vj - V0 and eta_p = 2/(1 + Vj/V0).

    Textbook relations for a single fully expanded stream (Mattingly, *Elements of Propulsion*, ch. 1;
    field-reference section 5.1).
    """
    prob = _problem(3)
    bpr = np.array([5.0, 10.0, 12.0])
    vj, v0 = np.array([300.0, 350.0, 420.0]), np.array([200.0, 230.0, 250.0])
    prob.set_val("BPR", bpr)
    prob.set_val("W5_frac", 1.0 / (1.0 + bpr))
    prob.set_val("Fg8_specific", vj)
    prob.set_val("Fg18_specific", vj)
    prob.set_val("V0", v0)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Fn_specific"), vj - v0, rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("propulsive_efficiency"), 2.0 / (1.0 + vj / v0), rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("jet_velocity_ratio"), 1.0, rtol=RTOL)


def test_overall_is_thermal_times_propulsive_and_tsfc_definition():
    """eta_o = eta_th * eta_p = Fn V0/(wf LHV); TSFC = wf / Fn (definitions stated in the docstring)."""
    nn = 5
    prob = _problem(nn)
    v = _random_inputs(prob, nn)
    prob.run_model()
    wf = v["core_flow_frac"] * v["burner_air_frac"] * v["FAR4"]
    w18 = v["BPR"] / (1.0 + v["BPR"])
    fn = v["W5_frac"] * v["Fg8_specific"] + w18 * v["Fg18_specific"] - v["V0"]
    np.testing.assert_allclose(prob.get_val("Fn_specific"), fn, rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("TSFC"), wf / fn, rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("overall_efficiency"),
                               prob.get_val("thermal_efficiency") * prob.get_val("propulsive_efficiency"),
                               rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("overall_efficiency"), fn * v["V0"] / (wf * v["fuel_LHV"]), rtol=RTOL)


@pytest.mark.parametrize("nn", [1, 4])
def test_partials_complex_step(nn):
    prob = _problem(nn)
    _random_inputs(prob, nn)
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_non_positive_thrust_raises():
    """Jets slower than the flight speed: clear error naming the net thrust and the cause."""
    prob = _problem(1)
    prob.set_val("Fg8_specific", 200.0)
    prob.set_val("Fg18_specific", 200.0)
    prob.set_val("V0", 250.0)
    with pytest.raises(om.AnalysisError, match=r"net thrust per unit air flow = .* not positive.*fan too weak"):
        prob.run_model()


def test_bad_bpr_raises():
    prob = _problem(1)
    prob.set_val("BPR", -1.0)
    with pytest.raises(om.AnalysisError, match=r"BPR = -1 is outside the valid range \(above 0\)"):
        prob.run_model()
