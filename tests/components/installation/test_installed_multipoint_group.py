"""Installed multipoint engine: one geometry at every point, cooling from take-off, cruise thrust from the mission."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.off_design_group import GEOMETRY
from bypassopt.components.interface import ALL_PLAIN
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.problems.best_cycle import apply_scenario
from bypassopt.scenario import load_scenario

G0 = 9.80665  # standard gravity, m/s^2 (ISO 80000-3)
# The cruise and take-off Newton solves converge the normalised match residuals to 1e-8; consequences on the
# physical balances are checked at that level.
MATCH_RTOL = 1e-7
IDENTITY_RTOL = 1e-9
TOTALS_TOL = 1e-8


@pytest.fixture(scope="module")
def demo():
    """The demo scenario's engine (invented, shared/scenario.md) at its initial design."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("engine", InstalledMultipointGroup(**ALL_PLAIN), promotes=["*"])
    prob.setup()
    apply_scenario(prob, load_scenario())
    prob.run_model()
    return prob


def _g(prob, name, units=None):
    return float(np.real(prob.get_val(name, units=units))[0])


def test_one_geometry_at_every_point(demo):
    """The off-design points hold the design's NGV flow capacities, nozzle areas and booster rule (map-free)."""
    for point in ("takeoff", "cruise"):
        for name in GEOMETRY:
            np.testing.assert_allclose(demo.get_val(f"{point}.{name}"), demo.get_val(name), rtol=MATCH_RTOL,
                                       err_msg=f"{point}.{name}")


def test_takeoff_thrust_and_limits_bind_there(demo):
    """Take-off delivers the scenario's thrust and is the hottest point (common practice: hot-day take-off)."""
    scenario = load_scenario()
    np.testing.assert_allclose(_g(demo, "takeoff:W2") * _g(demo, "takeoff:Fn_specific"),
                               scenario["takeoff"]["thrust_N"], rtol=MATCH_RTOL)
    assert _g(demo, "takeoff:Tt41") > _g(demo, "Tt41") + 100.0
    assert _g(demo, "takeoff:Tt3") > _g(demo, "Tt3") + 50.0
    assert _g(demo, "cruise:Tt41") < _g(demo, "Tt41")


def test_cooling_sized_at_takeoff_used_everywhere(demo):
    """Cooling fractions: the Horlock/El-Masri correlation at the take-off Tt3/Tt4 (by hand), at every point.

    psi = K x+, x = (Tg - Tm)/(Tm - Tc), x+ = (x + sqrt(x^2 + 1e-4))/2 (CoolingBleedComp's smoothing), vane
    Tg = Tt4, rotor Tg = 0.92 Tt4, Tc = Tt3 (Horlock, Advanced Gas Turbine Cycles, 2003, eq. 5.8).
    """
    tt3, tt4 = _g(demo, "takeoff:Tt3", "K"), _g(demo, "takeoff:Tt4", "K")
    engine = load_scenario()["engine"]
    for row, tg in (("vane", tt4), ("rotor", engine["rotor_relative_temperature_ratio"] * tt4)):
        tm, k = engine[f"{row}_metal_temperature_K"], engine[f"{row}_cooling_constant"]
        x = (tg - tm) / (tm - tt3)
        psi = k * 0.5 * (x + np.sqrt(x * x + 1e-4))
        for where in ("hpt", "takeoff.hpt", "cruise.hpt"):
            np.testing.assert_allclose(demo.get_val(f"{where}_{row}_cooling_frac"), psi, rtol=IDENTITY_RTOL)


def test_cruise_thrust_is_mid_cruise_drag_plus_nacelle(demo):
    """Cruise: Fn = W g/(L/D)/n at half the range (geometric-mean mass) + the cruise nacelle drag."""
    scenario = load_scenario()
    ac = scenario["aircraft"]
    m_ec = (_g(demo, "zero_fuel_mass") + _g(demo, "reserve_fuel")) / ac["descent_landing_fraction"]
    m_sc = m_ec + _g(demo, "cruise_fuel")
    airframe = G0 * np.sqrt(m_sc * m_ec) / (ac["lift_to_drag"] * ac["num_engines"])
    np.testing.assert_allclose(_g(demo, "cruise:thrust_required"), airframe, rtol=IDENTITY_RTOL)
    fn = _g(demo, "cruise:W2") * _g(demo, "cruise:Fn_specific")
    np.testing.assert_allclose(fn, airframe + _g(demo, "cruise:nacelle_drag"), rtol=MATCH_RTOL)
    np.testing.assert_allclose(_g(demo, "cruise:installed_TSFC"), _g(demo, "cruise:fuel_flow") / airframe,
                               rtol=MATCH_RTOL)


def test_mission_flown_at_cruise_tsfc(demo):
    """Breguet: W_start/W_end of cruise = exp(R g c / (V L/D)) with the cruise point's c and V (field-ref 11.1)."""
    ac = load_scenario()["aircraft"]
    m_ec = (_g(demo, "zero_fuel_mass") + _g(demo, "reserve_fuel")) / ac["descent_landing_fraction"]
    m_sc = m_ec + _g(demo, "cruise_fuel")
    c, v = _g(demo, "cruise:installed_TSFC", "kg/(N*s)"), _g(demo, "cruise:V0", "m/s")
    np.testing.assert_allclose(m_sc / m_ec, np.exp(ac["design_range_m"] * G0 * c / (v * ac["lift_to_drag"])),
                               rtol=IDENTITY_RTOL)


def test_cruise_nacelle_drag_at_cruise_condition(demo):
    """The cruise nacelle drag scales with the cruise dynamic pressure: fan cowl drag/q0 equals the design's
    ratio up to the Reynolds-number and Mach effects of Schlichting's flat plate (within 5 %, same altitude)."""
    ratio_cruise = _g(demo, "cruise_drag.fan_cowl_drag") / _g(demo, "cruise:q0")
    ratio_design = _g(demo, "fan_cowl_drag") / _g(demo, "q0")
    assert abs(ratio_cruise / ratio_design - 1.0) < 0.05
    assert _g(demo, "cruise:nacelle_drag") != _g(demo, "nacelle_drag")


def test_totals_match_complex_step_at_random_designs():
    """Mission fuel and take-off T41/T3 w.r.t. BPR, FPR, OPR, T4 at 10 random designs (vectorized, directional cs).

    The designs lie in a box around the demo's initial design where every point can be matched.
    """
    n = 10
    rng = np.random.default_rng(2026)
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("engine", InstalledMultipointGroup(num_nodes=n, **ALL_PLAIN), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    apply_scenario(prob, load_scenario())
    prob.set_val("BPR", rng.uniform(9.0, 11.5, n))
    prob.set_val("FPR", rng.uniform(1.45, 1.6, n))
    prob.set_val("OPR", rng.uniform(32.0, 45.0, n))
    prob.set_val("Tt4", rng.uniform(1600.0, 1750.0, n), units="K")
    prob.run_model()
    assert_no_approx_partials(prob.model)
    data = prob.check_totals(of=["mission_fuel", "takeoff:Tt41", "takeoff:Tt3", "cruise:installed_TSFC"],
                             wrt=["BPR", "FPR", "OPR", "Tt4"], method="cs", directional=True, out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)
