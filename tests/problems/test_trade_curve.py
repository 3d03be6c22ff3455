"""Tests of the limit trade curve: active clearance, positive shadow prices, sensitivities against re-solves."""

import numpy as np
import pytest

from bypassopt.problems.trade_curve import run_trade_curve
from bypassopt.scenario import ScenarioError, design_point_scenario, load_scenario, validate

# m, tightening (less room for the nacelle under the wing); equally spaced, for Simpson's rule.
WING_HEIGHTS = [3.15, 3.05, 2.95]
# K, tightening below the optimum's T3 (measured about 860 K at OPR 51): T3 rises with OPR, so these bind.
# (T41 would not do: with T4 fixed at 1650 K it only moves between about 1599 K and 1609 K over OPR 60-25.)
T3_LIMITS = [850.0, 845.0]
ACTIVE_MARGIN_TOL = 1e-6           # m
# The sensitivity from the multipliers is the exact slope at each optimum; the change between re-solved
# optima is its integral. Over the 5 K of T3 the trapezoidal rule is used: 1 % covers its curvature. Over the
# wing heights the slope grows about six-fold (from about -135 kg/m at 3.15 m, where the clearance only just
# binds, to -815 kg/m at 3.05 m; measured), so the trapezoidal rule is off by about 1.3 % on the first 0.1 m
# step; Simpson's rule over the three equally spaced heights (error of order h^4) is used there instead,
# measured within 2e-5 of the re-solved change, and held to SIMPSON_RTOL.
SLOPE_RTOL = 0.01
SIMPSON_RTOL = 1e-3


@pytest.fixture(scope="module")
def scenario():
    """The built-in demo with the design-point engine model and T4 held at 1650 K: these tests are about the
    trade-curve machinery (warm starts, shadow prices against re-solves, refinement), not the engine model."""
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


@pytest.fixture(scope="module")
def wing_trade(scenario):
    """Best cycle along a tightening wing height, with the progress messages it reported."""
    calls = []
    result = run_trade_curve(scenario, "wing_height_m", WING_HEIGHTS,
                             progress=lambda done, total, msg: calls.append((done, total, msg)))
    return result, calls


def simpson_change(result):
    """Objective change from the first to the last of three equally spaced points (Simpson's rule on the slopes)."""
    s, v = result["d_objective_d_limit"], result["values"]
    assert len(v) == 3 and v[1] - v[0] == pytest.approx(v[2] - v[1], rel=1e-12)
    return (v[2] - v[0]) / 6.0 * (s[0] + 4.0 * s[1] + s[2])


def trapezoid_change(result):
    """Objective change between successive points from the slopes at both ends (trapezoidal rule)."""
    s = result["d_objective_d_limit"]
    return 0.5 * (s[1:] + s[:-1]) * np.diff(result["values"])


def test_clearance_is_active_with_a_positive_shadow_price(wing_trade):
    """Along the tightening, every optimum sits on the clearance limit and its shadow price is positive."""
    result, _ = wing_trade
    assert np.all(result["success"])
    for point in result["points"]:
        assert "clearance_margin" in point["active"]
        assert abs(point["outputs"]["clearance_margin"]) < ACTIVE_MARGIN_TOL
        assert point["shadow_prices"]["clearance_margin"] > 0.0  # kg of fuel per m of required clearance
        assert point["multipliers"]["clearance_margin"] > 0.0
        assert point["projected_gradient"] < 1e-3
        assert not point["degenerate"]


def test_fuel_rises_as_the_wing_height_tightens(wing_trade):
    """Less room under the wing: more mission fuel and a smaller BPR at each optimum (physics sanity)."""
    result, _ = wing_trade
    assert np.all(np.diff(result["objective"]) > 0.0)
    assert np.all(np.diff(result["BPR"]) < 0.0)
    assert np.all(np.diff([p["outputs"]["nacelle_max_diameter"] for p in result["points"]]) < 0.0)


def test_wing_height_sensitivity_matches_the_resolved_optima(wing_trade):
    """d(fuel*)/d(wing height) from the multipliers integrates to the fuel change between re-solves."""
    result, _ = wing_trade
    assert np.all(result["d_objective_d_limit"] < 0.0)  # more height saves fuel
    # the clearance margin grows 1:1 with the wing height, so the slope is minus the shadow price
    for point in result["points"]:
        assert point["d_objective_d_limit"] == pytest.approx(-point["shadow_prices"]["clearance_margin"],
                                                             rel=1e-9)
    change = result["objective"][-1] - result["objective"][0]
    np.testing.assert_allclose(change, simpson_change(result), rtol=SIMPSON_RTOL)


def test_sentence_and_progress(wing_trade):
    """Each point has the one-line statement in kg per cm; progress counts the points."""
    result, calls = wing_trade
    for point in result["points"]:
        saved = -point["d_objective_d_limit"] * 0.01
        assert point["sentence"] == (f"At {point['value']:g} m, one more cm of wing height above the ground at "
                                     f"the engine station saves {saved:.3g} kg of fuel.")
    assert [(c[0], c[1]) for c in calls] == [(k + 1, len(WING_HEIGHTS)) for k in range(len(WING_HEIGHTS))]
    assert result["limit_units"] == "m" and result["objective_units"] == "kg"


def test_no_refinement_without_a_change_of_the_active_set(wing_trade):
    """With the same active set at every value, no optimum is added and the given order is kept."""
    result, _ = wing_trade
    np.testing.assert_array_equal(result["values"], WING_HEIGHTS)
    assert not np.any(result["refined"]) and result["active_set_changes"] == []


def test_constraint_bound_limit_t3(scenario):
    """A T3 limit below the demo optimum's T3 binds; its shadow price matches the re-solved optimum."""
    result = run_trade_curve(scenario, "max_Tt3_K", T3_LIMITS)
    assert np.all(result["success"])
    for point, limit in zip(result["points"], T3_LIMITS):
        assert "Tt3" in point["active"]
        assert point["outputs"]["Tt3"] == pytest.approx(limit, abs=1e-4)
        assert point["d_objective_d_limit"] < 0.0  # a higher allowed T3 saves fuel
        assert point["d_objective_d_limit"] == pytest.approx(point["shadow_prices"]["Tt3"], rel=1e-12)
        assert "one more K of allowed T3 saves" in point["sentence"]
    assert np.diff(result["objective"])[0] > 0.0
    np.testing.assert_allclose(np.diff(result["objective"]), trapezoid_change(result), rtol=SLOPE_RTOL)


def test_bad_limits_are_rejected_before_solving(scenario):
    """An unknown limit, and a wing height that leaves no room for a nacelle, are ScenarioErrors."""
    with pytest.raises(ScenarioError, match="trade limit 'max_fan_speed' is not one of"):
        run_trade_curve(scenario, "max_fan_speed", [1.0, 2.0])
    with pytest.raises(ScenarioError, match="wing_height_m"):
        run_trade_curve(scenario, "wing_height_m", [3.15, 1.0])


def test_trade_curve_plot(wing_trade, tmp_path):
    """plot_trade_curve writes a PNG."""
    pytest.importorskip("matplotlib")
    from bypassopt.plots import plot_trade_curve

    result, _ = wing_trade
    plot_trade_curve(result, tmp_path / "trade.png")
    data = (tmp_path / "trade.png").read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20000
