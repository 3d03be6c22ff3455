"""SizingComp: inlet air flow from the thrust requirement, corrected flows and spool powers."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.sizing_comp import P_STD, T_STD, SizingComp

PARTIALS_TOL = 1e-10
RTOL = 1e-12


def _problem(nn, seed=5):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("sizing", SizingComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    rng = np.random.default_rng(seed)
    vals = {"Fn_required": rng.uniform(2e4, 1.2e5, nn), "Fn_specific": rng.uniform(90.0, 200.0, nn),
            "fuel_flow_frac": rng.uniform(1e-3, 3e-3, nn), "core_flow_frac": rng.uniform(0.06, 0.15, nn),
            "HP_power_demand": rng.uniform(2e4, 6e4, nn), "LP_power_demand": rng.uniform(3e4, 7e4, nn),
            "Tt2": rng.uniform(240.0, 300.0, nn), "Pt2": rng.uniform(3e4, 1e5, nn),
            "Tt25": rng.uniform(300.0, 380.0, nn), "Pt25": rng.uniform(6e4, 2e5, nn),
            "Tt3": rng.uniform(750.0, 900.0, nn), "Pt3": rng.uniform(1e6, 4e6, nn)}
    for k, v in vals.items():
        prob.set_val(k, v)
    return prob, vals


def test_scaling_and_corrected_flows():
    """W2 = Fn/(Fn/W2); corrected flow W sqrt(theta)/delta with the ISO 2533 sea-level reference."""
    prob, v = _problem(4)
    prob.run_model()
    w2 = v["Fn_required"] / v["Fn_specific"]
    np.testing.assert_allclose(prob.get_val("W2"), w2, rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("fuel_flow"), w2 * v["fuel_flow_frac"], rtol=RTOL)
    assert T_STD == 288.15 and P_STD == 101325.0  # ISO 2533:1975 sea-level standard values
    for st, frac in (("2", 1.0), ("25", v["core_flow_frac"]), ("3", v["core_flow_frac"])):
        expect = frac * w2 * np.sqrt(v[f"Tt{st}"] / T_STD) / (v[f"Pt{st}"] / P_STD)
        np.testing.assert_allclose(prob.get_val(f"W{st}_corrected"), expect, rtol=RTOL)
    np.testing.assert_allclose(prob.get_val("HP_shaft_power"), w2 * v["HP_power_demand"], rtol=RTOL)


@pytest.mark.parametrize("nn", [1, 4])
def test_partials_complex_step(nn):
    prob, _ = _problem(nn)
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, value", [("Fn_required", 0.0), ("Fn_specific", -5.0), ("Fn_required", np.nan)])
def test_bad_inputs_raise(name, value):
    prob, _ = _problem(1)
    prob.set_val(name, value)
    with pytest.raises(om.AnalysisError, match=rf"{name} = .* is outside the valid range \(above 0"):
        prob.run_model()
