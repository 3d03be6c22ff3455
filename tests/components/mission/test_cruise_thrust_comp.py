"""Mid-cruise thrust: the mass at half the range against an integration of the cruise; partials; bad input."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials
from scipy.integrate import solve_ivp

from bypassopt.components.mission.cruise_thrust_comp import CruiseThrustComp
from bypassopt.components.mission.mission_fuel_comp import MissionFuelComp
from bypassopt.components.validation import InputRangeError

G0 = 9.80665  # standard gravity, m/s^2 (ISO 80000-3)
# Independent ODE integration of the cruise (scipy solve_ivp, rtol 1e-11).
RTOL_ODE = 1e-8
PARTIALS_TOL = 1e-10
NUM_ENGINES = 2

# Invented demo-like values (shared/scenario.md): c = 16 mg/(N s), M 0.78 at 10 668 m ISA, L/D 17.5.
AIRCRAFT = {"installed_TSFC": 16.0e-6, "cruise_speed": 231.3, "lift_to_drag": 17.5, "design_range": 5.0e6,
            "empty_mass_no_engines": 38500.0, "payload": 16150.0, "powerplant_mass": 3500.0}


def _problem(nn=1):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("mission", MissionFuelComp(num_nodes=nn, num_engines=NUM_ENGINES), promotes=["*"])
    prob.model.add_subsystem("thrust", CruiseThrustComp(num_nodes=nn, num_engines=NUM_ENGINES), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def test_mid_cruise_mass_against_integrated_cruise():
    """Mass after half the design range, from integrating dm/dx = -g c m / (V L/D) with SciPy (Breguet's ODE).

    Source: jet Breguet range equation (field-reference 11.1), integrated here numerically from the start of
    cruise, an independent path to the mass at mid-range; then thrust = g m / (L/D) per engine.
    """
    prob = _problem()
    for k, v in AIRCRAFT.items():
        prob.set_val(k, v)
    prob.run_model()
    g = lambda n: float(prob.get_val(n)[0])  # noqa: E731
    m_ec = (g("zero_fuel_mass") + g("reserve_fuel")) / g("descent_landing_fraction")
    m_sc = m_ec + g("cruise_fuel")
    a = AIRCRAFT
    k = G0 * a["installed_TSFC"] / (a["cruise_speed"] * a["lift_to_drag"])
    sol = solve_ivp(lambda x, m: -k * m, (0.0, 0.5 * a["design_range"]), [m_sc], rtol=1e-11, atol=1e-6)
    m_mid = sol.y[0, -1]
    np.testing.assert_allclose(g("mid_cruise_mass"), m_mid, rtol=RTOL_ODE)
    np.testing.assert_allclose(g("cruise_thrust_required"), G0 * m_mid / (a["lift_to_drag"] * NUM_ENGINES),
                               rtol=RTOL_ODE)


def test_partials_complex_step():
    """Analytic partials against complex step at random inputs, three nodes."""
    prob = _problem(nn=3)
    rng = np.random.default_rng(7)
    prob.set_val("zero_fuel_mass", rng.uniform(4e4, 7e4, 3))
    prob.set_val("reserve_fuel", rng.uniform(1e3, 4e3, 3))
    prob.set_val("cruise_fuel", rng.uniform(5e3, 2e4, 3))
    prob.set_val("descent_landing_fraction", rng.uniform(0.98, 0.995, 3))
    prob.set_val("lift_to_drag", rng.uniform(14.0, 20.0, 3))
    # the thrust component alone: its inputs are set above as the mission's outputs would be
    comp = om.Problem(reports=False)
    comp.model.add_subsystem("thrust", CruiseThrustComp(num_nodes=3, num_engines=NUM_ENGINES), promotes=["*"])
    comp.setup(force_alloc_complex=True)
    for n in ("zero_fuel_mass", "reserve_fuel", "cruise_fuel", "descent_landing_fraction", "lift_to_drag"):
        comp.set_val(n, rng.uniform(0.98, 1.02, 3) * prob.get_val(n))
    comp.run_model()
    data = comp.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, value", [("lift_to_drag", 0.0), ("zero_fuel_mass", -1.0), ("cruise_fuel", np.nan)])
def test_bad_input_named(name, value):
    """A non-positive mass or L/D, or NaN, raises an error naming the input and its value."""
    comp = om.Problem(reports=False)
    comp.model.add_subsystem("thrust", CruiseThrustComp(), promotes=["*"])
    comp.setup()
    comp.set_val(name, value)
    with pytest.raises(InputRangeError, match=name):
        comp.run_model()
