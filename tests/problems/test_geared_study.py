"""Geared against direct-drive fan on the demo aircraft (design-point engine model, for speed)."""

import copy

import pytest

from bypassopt.problems.geared_study import LPT_AN2_LIMIT, compare_drives, format_drives
from bypassopt.scenario import load_scenario

#: The optimizer's constraint tolerance on A N^2 (m^2 rpm^2): SLSQP's feasibility at its tol 1e-8 on the scaled
#: constraint (reference 1e7).
AN2_ATOL = 1.0
#: Newton solves reproduce the mission fuel to about 1e-9 relative; the derivative comes from the linear solve.
SENSITIVITY_RTOL = 1.0e-6


@pytest.fixture(scope="module")
def result():
    """Both optima on the demo aircraft with the design-point engine model (about 10 s)."""
    scenario = copy.deepcopy(load_scenario())
    scenario["optimizer"]["model"] = "design_point"
    return scenario, compare_drives(scenario)


def test_both_optimise(result):
    _, r = result
    assert r["direct"]["success"] and r["geared"]["success"]


def test_gear_speeds_the_lp_turbine(result):
    """The geared LP turbine turns gear-ratio times faster than its fan, needs fewer stages of the same loading
    (n = w/(psi U^2): about G^2 fewer) and is lighter; the direct drive's turbine turns with its fan."""
    _, r = result
    d, g = r["direct"], r["geared"]
    assert d["LP_shaft_speed"] == pytest.approx(d["fan_shaft_speed"], rel=1e-12)
    assert g["LP_shaft_speed"] == pytest.approx(g["gear_ratio"] * g["fan_shaft_speed"], rel=1e-12)
    assert g["gear_ratio"] > 1.2
    assert g["lpt_stage_count"] < d["lpt_stage_count"] / 1.5
    assert g["lp_turbine_mass"] < d["lp_turbine_mass"]
    assert g["LP_mech_eff"] < d["LP_mech_eff"]  # the gearbox loss
    for row in (d, g):
        assert row["lpt_AN2"] <= LPT_AN2_LIMIT + AN2_ATOL


def test_gearbox_mass_shadow_price_by_breguet(result):
    """Fuel per kg of gearbox equals field-reference 11.1's first-order Breguet: a mass change at fixed TSFC changes
    the landing mass one for one, dW_fuel/W_fuel = n_eng dm/W_landing. With the model's mission (reserve and
    segment fractions proportional to the zero-fuel mass) this is d(fuel)/dm = n_eng fuel / ZFM, with ZFM and fuel
    written here from the scenario and the optimum's masses. (Design-point model: the TSFC does not depend on the
    aircraft mass.)"""
    scenario, r = result
    g = r["geared"]
    n_eng = scenario["aircraft"]["num_engines"]
    zfm = (scenario["aircraft"]["empty_mass_no_engines_kg"] + scenario["aircraft"]["payload_kg"]
           + n_eng * g["powerplant_mass"])
    assert r["dfuel_dgearbox_mass"] == pytest.approx(n_eng * g["mission_fuel"] / zfm, rel=SENSITIVITY_RTOL)
    assert r["dfuel_dgearbox_eff"] < 0.0  # a better gearbox saves fuel


def test_fuel_difference_and_break_even(result):
    """The reported difference is geared minus direct; at the break-even gearbox mass the first-order fuel
    difference vanishes."""
    _, r = result
    diff = r["geared"]["mission_fuel"] - r["direct"]["mission_fuel"]
    assert r["fuel_difference"] == pytest.approx(diff, rel=1e-12)
    shift = r["break_even_gearbox_mass"] - r["geared"]["gearbox_mass"]
    assert diff + r["dfuel_dgearbox_mass"] * shift == pytest.approx(0.0, abs=1e-6)
    text = format_drives(r)
    assert "geared - direct" in text and "break-even gearbox mass" in text
