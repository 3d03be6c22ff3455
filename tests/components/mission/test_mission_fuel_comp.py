"""Tests for the Breguet mission-fuel component."""

import numpy as np
import openmdao.api as om
import pytest
from bypassopt.components.mission.mission_fuel_comp import MissionFuelComp
from openmdao.utils.assert_utils import assert_check_partials
from scipy.integrate import solve_ivp

from bypassopt.components.validation import InputRangeError

G0 = 9.80665  # standard gravity, m/s^2 (ISO 80000-3; field-reference 1.2)
RTOL_EXACT = 1e-12
# Field-reference 11.2 quotes R = 6111.9 km (5 significant digits).
RTOL_FIELD_REF_RANGE = 1e-5
# Field-reference 11.2 quotes W_fuel/W_f = 0.20027 and -1.0931 % to 5 significant digits.
ATOL_FUEL_RATIO = 5e-6
ATOL_SENSITIVITY_PERCENT = 5e-4
# Independent ODE integration of the cruise (scipy solve_ivp, rtol 1e-11).
RTOL_ODE = 1e-9
PARTIALS_TOL = 1e-10
SEED = 1903

# Field-reference 11.2 case: V = M 0.78 at 10 668 m ISA, c = 15.5 mg/(N s), L/D = 18.
V_REF, C_REF, LD_REF = 231.298, 15.5e-6, 18.0

RANDOM_RANGES = {
    "installed_TSFC": (13e-6, 18e-6),
    "cruise_speed": (200.0, 260.0),
    "lift_to_drag": (14.0, 20.0),
    "design_range": (2.0e6, 8.0e6),
    "empty_mass_no_engines": (30000.0, 45000.0),
    "payload": (10000.0, 20000.0),
    "powerplant_mass": (2500.0, 4500.0),
    "max_takeoff_mass": (70000.0, 90000.0),
    "reserve_fraction": (0.03, 0.08),
    "descent_landing_fraction": (0.98, 0.995),
    "taxi_takeoff_fraction": (0.97, 0.995),
    "climb_fraction": (0.97, 0.995),
}


def _problem(nn=1, num_engines=2, **values):
    prob = om.Problem()
    prob.model.add_subsystem("fuel", MissionFuelComp(num_nodes=nn, num_engines=num_engines),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def _cruise_end_and_start(prob):
    """Mass at the end and start of cruise rebuilt from the outputs and the fractions."""
    w_ec = ((prob.get_val("zero_fuel_mass") + prob.get_val("reserve_fuel"))
            / prob.get_val("descent_landing_fraction"))
    return w_ec, w_ec + prob.get_val("cruise_fuel")


def test_range_recovered_from_fuel_by_breguet():
    """Jet Breguet range R = V/(g0 c) (L/D) ln(Wi/Wf) (field-reference 11.1) evaluated on the masses
    the component returns gives back the design range; take-off mass closes the segment chain."""
    rng = np.random.default_rng(SEED)
    values = {n: rng.uniform(lo, hi, 3) for n, (lo, hi) in RANDOM_RANGES.items()}
    prob = _problem(3, **values)
    prob.run_model()
    w_ec, w_sc = _cruise_end_and_start(prob)
    R = (values["cruise_speed"] / (G0 * values["installed_TSFC"]) * values["lift_to_drag"]
         * np.log(w_sc / w_ec))
    np.testing.assert_allclose(R, values["design_range"], rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("takeoff_mass") * values["taxi_takeoff_fraction"]
                               * values["climb_fraction"], w_sc, rtol=RTOL_EXACT)
    zfm = values["empty_mass_no_engines"] + 2 * values["powerplant_mass"] + values["payload"]
    np.testing.assert_allclose(prob.get_val("zero_fuel_mass"), zfm, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("reserve_fuel"), values["reserve_fraction"] * zfm, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("mission_fuel"),
                               prob.get_val("takeoff_mass") - zfm - prob.get_val("reserve_fuel"),
                               rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("mtow_margin"),
                               values["max_takeoff_mass"] - prob.get_val("takeoff_mass"), rtol=RTOL_EXACT)


def test_field_reference_range_check_value():
    """Field-reference 11.2 (computed there): R = 6111.9 km for V 231.298 m/s, c 15.5 mg/(N s),
    L/D 18 and Wi/Wf = 1.25. Asking for that range must return cruise fuel = 0.25 W_f."""
    prob = _problem(installed_TSFC=C_REF, cruise_speed=V_REF, lift_to_drag=LD_REF, design_range=6111.9e3)
    prob.run_model()
    w_ec, w_sc = _cruise_end_and_start(prob)
    assert (w_sc / w_ec)[0] == pytest.approx(1.25, rel=RTOL_FIELD_REF_RANGE)


def test_cruise_fuel_fraction_and_tsfc_sensitivity():
    """Field-reference 11.2 (computed there): R 5000 km, same V, c, L/D: W_fuel/W_f = 0.20027, and
    1 % lower TSFC gives -1.0931 % cruise fuel (sensitivity factor x e^x/(e^x - 1) = 1.094)."""
    prob = _problem(2, installed_TSFC=[C_REF, 0.99 * C_REF], cruise_speed=V_REF, lift_to_drag=LD_REF,
                    design_range=5000e3)
    prob.run_model()
    w_ec, _ = _cruise_end_and_start(prob)
    fuel = prob.get_val("cruise_fuel")
    assert (fuel / w_ec)[0] == pytest.approx(0.20027, abs=ATOL_FUEL_RATIO)
    assert 100.0 * (fuel[1] / fuel[0] - 1.0) == pytest.approx(-1.0931, abs=ATOL_SENSITIVITY_PERCENT)


def test_cruise_matches_ode_integration():
    """Independent check: integrate dW/dR = -g0 c W / (V L/D) (constant V, L/D, c; field-reference
    11.1 before integration) from the start-of-cruise mass over the design range with scipy."""
    prob = _problem(installed_TSFC=14.8e-6, cruise_speed=230.0, lift_to_drag=17.5, design_range=5.0e6)
    prob.run_model()
    w_ec, w_sc = _cruise_end_and_start(prob)
    sol = solve_ivp(lambda r, w: -G0 * 14.8e-6 * w / (230.0 * 17.5), (0.0, 5.0e6), [w_sc[0]],
                    rtol=1e-11, atol=1e-9)
    assert sol.y[0, -1] == pytest.approx(w_ec[0], rel=RTOL_ODE)


def test_num_engines_option():
    """Zero-fuel mass counts num_engines powerplants."""
    prob = _problem(num_engines=4, empty_mass_no_engines=100000.0, payload=20000.0, powerplant_mass=5000.0,
                    max_takeoff_mass=300000.0)
    prob.run_model()
    assert prob.get_val("zero_fuel_mass")[0] == pytest.approx(140000.0, rel=RTOL_EXACT)


def _random_values(nn, seed):
    rng = np.random.default_rng(seed)
    return {name: rng.uniform(lo, hi, nn) for name, (lo, hi) in RANDOM_RANGES.items()}


@pytest.mark.parametrize("nn", [4, 1])
def test_partials_complex_step(nn):
    """Analytic partials against complex step at seeded random points."""
    prob = _problem(nn, **_random_values(nn, SEED))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, bad, pattern", [
    ("lift_to_drag", 0.0, r"lift_to_drag = 0 .*above 0 up to 40"),
    ("design_range", -1.0, r"design_range = -1 m .*above 0 up to 2e\+07 m"),
    ("installed_TSFC", 0.0, r"installed_TSFC = 0 kg/N/s .*above 0 up to 0.0001 kg/N/s"),
    ("climb_fraction", 0.85, r"climb_fraction = 0.85 .*above 0.9 up to 1"),
    ("taxi_takeoff_fraction", 1.01, r"taxi_takeoff_fraction = 1.01 .*above 0.9 up to 1"),
    ("descent_landing_fraction", np.nan, r"descent_landing_fraction = nan .*above 0.9 up to 1"),
])
def test_bad_input_names_variable_and_range(name, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    prob = _problem(2)
    prob.set_val(name, np.array([RANDOM_RANGES[name][0], bad]))
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
