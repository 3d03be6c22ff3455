"""Tests for the intake component."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.inlet_comp import InletComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-14
PARTIALS_TOL = 1e-10
SEED = 20250101
GASES = [ThermallyPerfectGas(), CaloricallyPerfectGas(cp=1004.0, gamma=1.4)]
GAS_IDS = ["thermally_perfect", "calorically_perfect"]


def _problem(nn=1, gas=None):
    prob = om.Problem(reports=False)
    kwargs = {} if gas is None else {"gas": gas}
    prob.model.add_subsystem("inlet", InletComp(num_nodes=nn, **kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def test_adiabatic_intake_with_recovery():
    """Adiabatic intake: total temperature conserved, total pressure times the recovery.

    Source: definition of the intake total-pressure recovery Pt2/Pt0 and the steady-flow energy equation
    for an adiabatic, work-free duct (total temperature conserved).
    """
    Tt0 = np.array([244.38, 288.15, 310.0])
    Pt0 = np.array([35000.0, 101325.0, 120000.0])
    rec = np.array([0.997, 0.995, 1.0])
    prob = _problem(3)
    prob.set_val("Tt0", Tt0, units="K")
    prob.set_val("Pt0", Pt0, units="Pa")
    prob.set_val("inlet_recovery", rec)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Tt2", units="K"), Tt0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Pt2", units="Pa"), rec * Pt0, rtol=RTOL_EXACT)


def test_default_recovery():
    """The default recovery is 0.997 (common practice 0.995-0.998, field-reference 3.3)."""
    prob = _problem()
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Pt2"), 0.997 * 101325.0, rtol=RTOL_EXACT)


@pytest.mark.parametrize("gas", GASES, ids=GAS_IDS)
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, gas):
    """Analytic partials match complex step."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas)
    prob.set_val("Tt0", rng.uniform(220.0, 320.0, nn))
    prob.set_val("Pt0", rng.uniform(20000.0, 120000.0, nn))
    prob.set_val("inlet_recovery", rng.uniform(0.9, 1.0, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("value", [0.7, 1.01, np.nan])
def test_bad_recovery(value):
    """A recovery outside 0.8-1 (or NaN) is refused with the variable and range named."""
    prob = _problem(2)
    prob.set_val("inlet_recovery", [0.997, value])
    with pytest.raises(InputRangeError, match=r"inlet_recovery = .* at node 1 .*from 0\.8 up to 1"):
        prob.run_model()


def test_bad_total_state():
    """A temperature outside the gas range, or a non-positive pressure, is refused."""
    prob = _problem()
    prob.set_val("Tt0", 150.0)
    with pytest.raises(om.AnalysisError, match=r"Tt0 = 150 K .*from 200 up to 2400 K"):
        prob.run_model()
    prob.set_val("Tt0", 288.15)
    prob.set_val("Pt0", 0.0)
    with pytest.raises(ValueError, match=r"Pt0 = 0 Pa .*above 0 Pa"):
        prob.run_model()
