"""Shadow prices: OpenMDAO's own Lagrange-multiplier estimate against this project's least-squares KKT solve."""

import numpy as np
import openmdao
import pytest

from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.scenario import design_point_scenario, load_scenario, validate

#: Relative agreement of the two multiplier estimates. Both solve the KKT stationarity conditions from the
#: same analytic totals (OpenMDAO in the driver-scaled problem, this project in physical units); they differ
#: by the optimizer's convergence tolerance (about 5e-5 seen on the demo).
MULTIPLIER_RTOL = 1e-3
#: Driver.compute_lagrange_multipliers first ships in OpenMDAO 3.39 (absent from the 3.37 and 3.38 sources).
HAS_OPENMDAO_MULTIPLIERS = tuple(int(p) for p in openmdao.__version__.split(".")[:2]) >= (3, 39)


@pytest.fixture(scope="module", params=["mission_fuel", "installed_TSFC"])
def optimum(request):
    """Optima of the demo with the design-point engine model and T4 held at 1650 K (the multiplier machinery, not
    the engine model, is tested): mission fuel and installed TSFC, the ground clearance active in both (measured)."""
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    scenario = validate({"design_variables": {"Tt4_K": held}, "optimizer": {"tol": 1e-10}},
                        base=design_point_scenario(load_scenario()))
    prob, settings = build_best_cycle_problem(scenario, objective=request.param, reports=False)
    assert prob.run_driver().success
    return prob, settings


def test_openmdao_multipliers_are_used_and_match_least_squares(optimum):
    """kkt_analysis takes OpenMDAO's Driver.compute_lagrange_multipliers (OpenMDAO >= 3.39), converted to
    this project's convention (every limit c <= 0, multiplier >= 0: Nocedal and Wright, theorem 12.1; objective
    units per limit unit), and it agrees with the project's own least-squares solve: same active set, same
    multipliers within MULTIPLIER_RTOL, same signs, and the KKT residuals stay small with either."""
    _assert_multipliers_agree(*optimum)


def _assert_multipliers_agree(prob, settings):
    auto = kkt_analysis(prob, settings)
    own = kkt_analysis(prob, settings, method="least_squares")
    assert auto["multiplier_source"] == ("openmdao" if HAS_OPENMDAO_MULTIPLIERS else "least_squares")
    assert own["multiplier_source"] == "least_squares"
    active = [n for n, c in own["constraints"].items() if c["active"]]
    assert active, "no active limit: the comparison would not test anything"
    assert active == [n for n, c in auto["constraints"].items() if c["active"]]
    for name in active:
        a, b = auto["constraints"][name], own["constraints"][name]
        assert a["multiplier"] > 0.0 and b["multiplier"] > 0.0
        np.testing.assert_allclose(a["multiplier"], b["multiplier"], rtol=MULTIPLIER_RTOL, err_msg=name)
        np.testing.assert_allclose(a["shadow_price"], b["shadow_price"], rtol=MULTIPLIER_RTOL, err_msg=name)
    for name, b in own["bounds"].items():
        assert auto["bounds"][name]["active"] == b["active"], name
        if b["active"]:
            np.testing.assert_allclose(auto["bounds"][name]["multiplier"], b["multiplier"], rtol=MULTIPLIER_RTOL)
    assert auto["dual_feasible"] and auto["projected_gradient"] < 1e-4


def test_multipoint_cruise_objective_multipliers_match_least_squares():
    """The demo's multipoint model with the installed TSFC objective, which it takes at the cruise point
    (``cruise:installed_TSFC``, the only objective with a point prefix): the same agreement as above. One
    multipoint optimisation (about 10 s)."""
    scenario = validate({"optimizer": {"tol": 1e-10}}, base=load_scenario())
    prob, settings = build_best_cycle_problem(scenario, objective="installed_TSFC", reports=False)
    assert settings.objective_output == "cruise:installed_TSFC"
    assert {"takeoff:Tt41", "takeoff:Tt3"} <= set(settings.limits)
    assert prob.run_driver().success
    _assert_multipliers_agree(prob, settings)


def test_unknown_method_is_rejected(optimum):
    prob, settings = optimum
    with pytest.raises(ValueError, match="method = 'lagrange'"):
        kkt_analysis(prob, settings, method="lagrange")
