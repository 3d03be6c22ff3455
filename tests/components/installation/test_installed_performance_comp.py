"""Tests for the installed-performance component (nacelle drag booked as a thrust debit)."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.installation.installed_performance_comp import InstalledPerformanceComp
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-12
PARTIALS_TOL = 1e-10
SEED = 31

RANDOM_RANGES = {
    "thrust_required": (15.0e3, 40.0e3), "nacelle_drag": (500.0, 2000.0), "W2": (120.0, 300.0),
    "Fn_specific": (100.0, 180.0), "fuel_flow": (0.2, 0.6),
}


def _problem(nn=1, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("inst", InstalledPerformanceComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def test_thrust_bookkeeping():
    """Fn_required = thrust + drag; installed thrust = W2 Fn_sp - drag; installed TSFC = fuel/that thrust.

    Installed TSFC with the nacelle drag as a thrust debit (field-reference 8.1 and 11.1, common practice).
    Values chosen so the answers are exact in binary.
    """
    prob = _problem(3, thrust_required=[24.0e3, 24.0e3, 30.0e3], nacelle_drag=[1000.0, 1500.0, 0.0],
                    W2=[200.0, 160.0, 250.0], Fn_specific=[125.0, 160.0, 120.0], fuel_flow=[0.375, 0.4, 0.48])
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Fn_required"), [25.0e3, 25.5e3, 30.0e3], rtol=EXACT_RTOL)
    np.testing.assert_allclose(prob.get_val("installed_thrust"), [24.0e3, 24.1e3, 30.0e3], rtol=EXACT_RTOL)
    np.testing.assert_allclose(prob.get_val("installed_TSFC"), [0.375 / 24.0e3, 0.4 / 24.1e3, 0.48 / 30.0e3],
                               rtol=EXACT_RTOL)
    # at a converged sizing loop (W2 Fn_sp = Fn_required) the installed thrust is the requirement
    thrust = prob.get_val("thrust_required")[0]
    assert prob.get_val("installed_thrust")[0] == pytest.approx(thrust, rel=EXACT_RTOL)
    # installed TSFC = uninstalled TSFC x (1 + drag/installed thrust) (field-reference 11.1)
    tsfc = 0.375 / (200.0 * 125.0)
    assert prob.get_val("installed_TSFC")[0] == pytest.approx(tsfc * (1.0 + 1000.0 / 24.0e3), rel=EXACT_RTOL)


@pytest.mark.parametrize("nn", [4, 1])
def test_partials_complex_step(nn):
    """Analytic partials against complex step at seeded random points."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, **{n: rng.uniform(lo, hi, nn) for n, (lo, hi) in RANDOM_RANGES.items()})
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("values, pattern", [
    ({"W2": 10.0, "Fn_specific": 100.0, "nacelle_drag": 1000.0},
     r"installed thrust = 0 N is not positive: the nacelle drag exceeds"),
    ({"W2": 5.0, "Fn_specific": 100.0, "nacelle_drag": 1000.0},
     r"installed thrust = -500 N is not positive"),
    ({"thrust_required": 0.0}, r"thrust_required = 0 N is outside the valid range \(above 0"),
    ({"nacelle_drag": -1.0}, r"nacelle_drag = -1 N is outside the valid range \(from 0"),
    ({"fuel_flow": np.nan}, r"fuel_flow = nan"),
])
def test_bad_inputs_raise(values, pattern):
    """Non-positive installed thrust and out-of-range inputs raise InputRangeError naming the cause."""
    prob = _problem(**values)
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
