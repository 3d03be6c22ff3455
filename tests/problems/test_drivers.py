"""Optimizer drivers: SLSQP that backs off from failed evaluations; pyoptsparse when it imports."""

import numpy as np
import openmdao.api as om
import pytest

from bypassopt.problems.drivers import BackOffSLSQPDriver, make_driver, pyoptsparse_available
from bypassopt.scenario import ScenarioError
from bypassopt.components.validation import InputRangeError


class _WallComp(om.ExplicitComponent):
    """f = (x - 3)^2, but the 'model' cannot be evaluated for x > 2.5 (raises like an impossible cycle)."""

    def setup(self):
        self.add_input("x", val=0.0)
        self.add_output("f", val=0.0)
        self.declare_partials("f", "x")

    def compute(self, inputs, outputs):
        if inputs["x"][0] > 2.5:
            raise InputRangeError(f"x = {inputs['x'][0]:.4g} is outside the valid range (up to 2.5)")
        outputs["f"] = (inputs["x"] - 3.0) ** 2

    def compute_partials(self, inputs, J):
        J["f", "x"] = 2.0 * (inputs["x"] - 3.0)


def _wall_problem(driver):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("wall", _WallComp(), promotes=["*"])
    prob.model.add_design_var("x", lower=0.0, upper=10.0)
    prob.model.add_objective("f")
    prob.driver = driver
    prob.setup()
    prob.set_val("x", 0.0)
    return prob


def test_back_off_driver_survives_failed_evaluations_and_lists_them(tmp_path):
    """Plain SciPy SLSQP aborts on the first AnalysisError; the back-off driver shortens its step instead.

    The minimum of (x-3)^2 over the evaluable region x <= 2.5 is at the wall; SLSQP's first step lands
    beyond it, so the run must back off at least once. Failed evaluations are listed on the driver (design
    and message) and are not recorded as cases, so every recorded case is a complete evaluation.
    """
    plain = _wall_problem(om.ScipyOptimizeDriver(optimizer="SLSQP", disp=False))
    with pytest.raises(om.AnalysisError):
        plain.run_driver()

    driver = BackOffSLSQPDriver(maxiter=100, tol=1e-10, disp=False)
    rec = tmp_path / "wall.sqlite"
    driver.add_recorder(om.SqliteRecorder(str(rec)))
    prob = _wall_problem(driver)
    prob.run_driver()
    assert driver.failed_evaluations >= 1
    assert prob.get_val("x")[0] <= 2.5
    assert prob.get_val("x")[0] > 2.0  # it made progress towards the wall rather than stopping at the start
    cases = om.CaseReader(str(rec)).get_cases("driver", recurse=False)
    assert len(cases) == driver.model_evaluations - driver.failed_evaluations
    assert all(np.real(c.get_design_vars()["x"][0]) <= 2.5 for c in cases)
    # each evaluation is its own case: distinct names, and the recorded designs follow the optimizer's path
    assert len({c.name for c in cases}) == len(cases)
    xs = [float(np.real(c.get_design_vars()["x"][0])) for c in cases]
    assert xs[0] == 0.0 and xs[-1] > 2.0
    assert all("outside the valid range" in f["message"] for f in driver.failures)
    assert all(f["design"]["x"][0] > 2.5 for f in driver.failures)


def test_back_off_driver_matches_scipy_on_a_constrained_problem():
    """Where nothing fails, the driver reaches the analytic optimum of a scaled, constrained problem.

    min (x-3)^2 + (y-1)^2 subject to x + y <= 2: the optimum is the projection of (3, 1) on the line,
    (2, 0) (hand calculation); scaling by ref/ref0 must not move it.
    """
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("c", om.ExecComp(["f = (x - 3)**2 + (y - 1)**2", "g = x + y"]), promotes=["*"])
    prob.model.add_design_var("x", lower=0.0, upper=10.0, ref0=0.0, ref=10.0)
    prob.model.add_design_var("y", lower=-5.0, upper=10.0)
    prob.model.add_objective("f", ref=3.0)
    prob.model.add_constraint("g", upper=2.0, ref=10.0)
    prob.driver = BackOffSLSQPDriver(maxiter=50, tol=1e-12)
    prob.setup()
    result = prob.run_driver()
    assert result.success
    np.testing.assert_allclose([prob.get_val("x")[0], prob.get_val("y")[0]], [2.0, 0.0], atol=1e-8)
    assert prob.driver.failed_evaluations == 0


def test_make_driver_default_is_back_off_slsqp():
    assert isinstance(make_driver("SLSQP"), BackOffSLSQPDriver)


@pytest.mark.skipif(pyoptsparse_available(), reason="pyoptsparse is installed")
def test_pyoptsparse_drivers_need_pyoptsparse():
    """Without pyoptsparse, asking for SNOPT/IPOPT is a clear input error, not an ImportError."""
    for name in ("SNOPT", "IPOPT", "pyoptsparse-SLSQP"):
        with pytest.raises(ScenarioError, match="needs pyoptsparse"):
            make_driver(name)


@pytest.mark.skipif(not pyoptsparse_available(), reason="pyoptsparse is not installed (not on PyPI)")
def test_pyoptsparse_slsqp_reaches_the_wall():
    """With pyoptsparse, its SLSQP backs off from the failed evaluations natively."""
    prob = _wall_problem(make_driver("pyoptsparse-SLSQP"))
    prob.run_driver()
    assert prob.get_val("x")[0] <= 2.5
