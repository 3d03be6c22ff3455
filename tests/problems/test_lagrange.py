"""The project's KKT multipliers against OpenMDAO's own Lagrange-multiplier estimate at the demo optimum."""

import numpy as np
import pytest
from openmdao.utils.units import unit_conversion

from bypassopt.problems.best_cycle import OBJECTIVES, build_best_cycle_problem
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.scenario import load_scenario, validate

#: Relative agreement of the two multiplier estimates. Both solve the same least-squares KKT system from
#: the same analytic totals; they differ by the optimizer's convergence tolerance (about 5e-5 seen).
MULTIPLIER_RTOL = 1e-3
#: Feasibility tolerance OpenMDAO uses to pick the active set (driver-scaled constraint values).
FEAS_TOL = 1e-4


@pytest.fixture(scope="module", params=["mission_fuel", "installed_TSFC"])
def optimum(request):
    """Demo optima: mission fuel (clearance active) and installed TSFC (clearance and the OPR upper bound)."""
    scenario = validate({"optimizer": {"tol": 1e-10}}, base=load_scenario())
    prob, settings = build_best_cycle_problem(scenario, objective=request.param, reports=False)
    assert prob.run_driver().success
    return prob, settings


def _model_units(prob, name):
    meta = prob.model.get_io_metadata(metadata_keys=["units"], iotypes="output")
    return next(m["units"] for m in meta.values() if m["prom_name"] == name)


def _factor(from_units, to_units):
    return 1.0 if from_units == to_units or not from_units else unit_conversion(from_units, to_units)[0]


def test_openmdao_lagrange_multipliers_match_the_kkt_analysis(optimum):
    """Driver.compute_lagrange_multipliers (OpenMDAO >= 3.36) gives the same active set and multipliers.

    OpenMDAO reports a multiplier of a lower bound with a negative sign (its convention: d f / d bound);
    this project's multipliers are nonnegative (Nocedal and Wright, theorem 12.1), so magnitudes are compared
    and the signs checked against the bound sides.
    """
    prob, settings = optimum
    kkt = kkt_analysis(prob, settings)
    om_dvs, om_cons = prob.driver.compute_lagrange_multipliers(driver_scaling=False, feas_tol=FEAS_TOL)
    # OpenMDAO's unscaled multipliers are in the model's own units: d(objective)/d(limit) in model units
    obj_name, obj_units, _ = OBJECTIVES[settings.objective]
    to_obj = _factor(_model_units(prob, obj_name), obj_units)
    ours = {name: c for name, c in kkt["constraints"].items() if c["active"]}
    assert set(om_cons) == set(ours)
    assert ours, "no active limit: the comparison would not test anything"
    for name, c in ours.items():
        theirs = float(np.ravel(om_cons[name]["multipliers"])[0]) * to_obj
        theirs /= _factor(_model_units(prob, name), c["units"])
        expected_sign = -1.0 if c["kind"] == "lower" else 1.0
        assert np.sign(theirs) == expected_sign
        np.testing.assert_allclose(abs(theirs), c["multiplier"], rtol=MULTIPLIER_RTOL, err_msg=name)
    for name, b in kkt["bounds"].items():
        assert (name in om_dvs) == bool(b["active"]), name
        if b["active"]:
            theirs = float(np.ravel(om_dvs[name]["multipliers"])[0]) * to_obj
            np.testing.assert_allclose(abs(theirs), b["multiplier"], rtol=MULTIPLIER_RTOL, err_msg=name)
