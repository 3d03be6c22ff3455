"""FlowCapacityComp: NGV flow capacities, nozzle throat areas and the booster temperature-rise ratio."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.flow_capacity_comp import FlowCapacityComp

PARTIALS_TOL = 1e-10
RTOL = 1e-13


def _problem(nn, seed=11):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("cap", FlowCapacityComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    rng = np.random.default_rng(seed)
    bpr = rng.uniform(6.0, 14.0, nn)
    vals = {"W2": rng.uniform(100.0, 600.0, nn), "BPR": bpr, "core_flow_frac": 1.0 / (1.0 + bpr),
            "W4_frac": rng.uniform(0.05, 0.1, nn), "W45_frac": rng.uniform(0.06, 0.12, nn),
            "W5_frac": rng.uniform(0.06, 0.12, nn), "Tt2": rng.uniform(240.0, 310.0, nn),
            "Tt21": rng.uniform(320.0, 360.0, nn), "Pt21": rng.uniform(5e4, 1.5e5, nn),
            "Tt25": rng.uniform(380.0, 420.0, nn), "Tt4": rng.uniform(1400.0, 1900.0, nn),
            "Pt4": rng.uniform(1e6, 4e6, nn), "Tt45": rng.uniform(1000.0, 1300.0, nn),
            "Pt45": rng.uniform(2e5, 8e5, nn), "area8_per_flow": rng.uniform(5e-3, 2e-2, nn),
            "area18_per_flow": rng.uniform(4e-3, 8e-3, nn)}
    for k, v in vals.items():
        prob.set_val(k, v)
    return prob, vals


def test_values_against_definitions():
    """Corrected flow W sqrt(Tt/T_std)/(Pt/p_std) (ISO 2533 sea level 288.15 K, 101 325 Pa; the definition of
    Walsh & Fletcher, *Gas Turbine Performance*, from memory), throat area = area per unit flow x stream flow
    (continuity), booster/fan temperature-rise ratio by its definition; written out here independently."""
    prob, v = _problem(5)
    prob.run_model()
    w2 = v["W2"]

    def corr(w, tt, pt):
        return w * np.sqrt(tt / 288.15) / (pt / 101325.0)

    np.testing.assert_allclose(prob.get_val("W4_corrected"), corr(w2 * v["W4_frac"], v["Tt4"], v["Pt4"]), rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("W45_corrected"), corr(w2 * v["W45_frac"], v["Tt45"], v["Pt45"]),
                               rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("W21_corrected"),
                               corr(w2 / (1.0 + v["BPR"]), v["Tt21"], v["Pt21"]), rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("area8"), v["area8_per_flow"] * w2 * v["W5_frac"], rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("area18"), v["area18_per_flow"] * w2 * v["BPR"] / (1.0 + v["BPR"]),
                               rtol=RTOL)
    ratio = (v["Tt25"] / v["Tt21"] - 1.0) / (v["Tt21"] / v["Tt2"] - 1.0)
    np.testing.assert_allclose(prob.get_val("booster_temperature_rise_ratio"), ratio, rtol=RTOL)


@pytest.mark.parametrize("nn", [1, 4])
def test_partials_complex_step(nn):
    """Analytic partials agree with complex step."""
    prob, _ = _problem(nn)
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, value, pattern", [
    ("W2", 0.0, r"W2 = 0 kg/s is outside the valid range \(above 0"),
    ("Pt4", -1.0, r"Pt4 = -1"),
    ("Tt21", 200.0, r"Tt21 - Tt2 = "),
    ("BPR", np.nan, r"BPR = nan"),
])
def test_bad_inputs_raise(name, value, pattern):
    """Bad inputs raise om.AnalysisError (InputRangeError) naming the variable."""
    prob, _ = _problem(1)
    prob.set_val(name, value)
    with pytest.raises(om.AnalysisError, match=pattern):
        prob.run_model()
