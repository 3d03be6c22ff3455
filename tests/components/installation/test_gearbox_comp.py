"""Tests of the LP spool mechanical efficiency with and without a fan reduction gearbox."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.defaults import GEARBOX_DEFAULTS
from bypassopt.components.installation.gearbox_comp import GearboxComp
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-12
PARTIALS_TOL = 1e-10
SEED = 2718

#: Published gearbox efficiency band: "98 % to 99 % for the best designed high power applications" (Stavytskyy et
#: al., Teka Kom. Mot. i Energ. Roln. OL PAN 10B, 2010, review of gear power losses).
PUBLISHED_EFFICIENCY_BAND = (0.98, 0.99)
#: Heat a fan drive gear's lubrication system is claimed to remove: "less than about 2 % of power input into the gear
#: system" (US patent 11,125,167, claims).
PUBLISHED_MAX_HEAT_FRACTION = 0.02

GEARED = {"LP_mech_eff_ref": 0.99, "gearbox_eff": 0.99, "BPR": 11.0, "fan_bypass_work": 3.8e4, "fan_core_work": 3.9e4,
          "booster_work": 6.1e4, "W2": 206.0, "fan_shaft_speed": 3555.0}


def _problem(nn=1, geared=True, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("gb", GearboxComp(num_nodes=nn, geared=geared), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def test_direct_drive_passes_the_mechanical_efficiency_through():
    """No gearbox: the LP spool keeps the user's mechanical efficiency."""
    prob = _problem(geared=False, LP_mech_eff_ref=0.985)
    prob.run_model()
    assert prob.get_val("LP_mech_eff")[0] == 0.985


def test_energy_balance_of_the_geared_spool():
    """First law on the LP spool: turbine power x mechanical efficiency = fan power / gearbox efficiency + booster
    power; the difference between gearbox input and output is the heat to the oil; torque = power / angular speed."""
    prob = _problem(**GEARED)
    prob.run_model()
    v = GEARED
    core = v["W2"] / (1.0 + v["BPR"])
    p_fan = core * (v["BPR"] * v["fan_bypass_work"] + v["fan_core_work"])
    p_booster = core * v["booster_work"]
    p_turbine = (p_fan / v["gearbox_eff"] + p_booster) / v["LP_mech_eff_ref"]
    # the cycle's LP turbine delivers (p_fan + p_booster)/LP_mech_eff: the same power
    assert (p_fan + p_booster) / prob.get_val("LP_mech_eff")[0] == pytest.approx(p_turbine, rel=EXACT_RTOL)
    assert prob.get_val("fan_shaft_power")[0] == pytest.approx(p_fan, rel=EXACT_RTOL)
    assert prob.get_val("gearbox_heat")[0] == pytest.approx(p_fan / v["gearbox_eff"] - p_fan, rel=EXACT_RTOL)
    omega = v["fan_shaft_speed"] * 2.0 * np.pi / 60.0
    assert prob.get_val("fan_shaft_torque", units="N*m")[0] == pytest.approx(p_fan / omega, rel=EXACT_RTOL)


@pytest.mark.parametrize("gearbox_eff", PUBLISHED_EFFICIENCY_BAND)
def test_heat_is_the_published_fraction_of_the_gearbox_input(gearbox_eff):
    """The gearbox heat is 1 - eta of the power into the gearbox (the LP turbine side), so across the published
    efficiency band 0.98-0.99 (Stavytskyy et al. 2010) it is 1-2 % of the input, at most the ~2 % the patented fan
    drive gear's oil system is sized for (US 11,125,167). A heat taken as (1 - eta) of the fan-side power would
    fail the first check."""
    prob = _problem(**{**GEARED, "gearbox_eff": gearbox_eff})
    prob.run_model()
    heat = prob.get_val("gearbox_heat", units="W")[0]
    gearbox_input = prob.get_val("fan_shaft_power", units="W")[0] + heat
    assert heat / gearbox_input == pytest.approx(1.0 - gearbox_eff, rel=EXACT_RTOL)
    assert heat / gearbox_input <= PUBLISHED_MAX_HEAT_FRACTION + EXACT_RTOL


def test_default_efficiency_inside_the_published_band():
    """The default gearbox efficiency (components/defaults.py) lies in the published 0.98-0.99 band (its top)."""
    lo, hi = PUBLISHED_EFFICIENCY_BAND
    assert lo <= GEARBOX_DEFAULTS["gearbox_eff"][0] <= hi


def test_gearbox_loss_is_about_its_inefficiency_times_the_fan_share():
    """The spool efficiency falls by about (1 - gearbox efficiency) x the fan's share of the LP power."""
    prob = _problem(**GEARED)
    prob.run_model()
    v = GEARED
    fan = v["BPR"] * v["fan_bypass_work"] + v["fan_core_work"]
    share = fan / (fan + v["booster_work"])
    drop = 1.0 - prob.get_val("LP_mech_eff")[0] / v["LP_mech_eff_ref"]
    assert drop == pytest.approx((1.0 - v["gearbox_eff"]) * share, rel=0.02)


def test_mass_scales_with_torque():
    """Gearbox mass grows with the torque to the 0.8 power (common practice 0.75-0.9): doubling the torque (half the
    fan speed) multiplies it by 2^0.8; it is proportional to the calibration factor."""
    prob = _problem(2, **{**GEARED, "fan_shaft_speed": [3555.0, 1777.5], "k_gearbox": [1.0, 1.0]})
    prob.run_model()
    mass = prob.get_val("gearbox_mass")
    assert mass[1] / mass[0] == pytest.approx(2.0**0.8, rel=EXACT_RTOL)
    assert 2.0**0.75 < mass[1] / mass[0] < 2.0**0.9


@pytest.mark.parametrize("geared", [True, False])
def test_partials_complex_step(geared):
    """Analytic partials against complex step."""
    nn = 4
    rng = np.random.default_rng(SEED)
    values = {"LP_mech_eff_ref": rng.uniform(0.98, 0.995, nn)}
    if geared:
        values.update(gearbox_eff=rng.uniform(0.98, 0.995, nn), BPR=rng.uniform(8.0, 15.0, nn),
                      fan_bypass_work=rng.uniform(2.5e4, 5.0e4, nn), fan_core_work=rng.uniform(2.5e4, 5.0e4, nn),
                      booster_work=rng.uniform(3.0e4, 8.0e4, nn), W2=rng.uniform(150.0, 350.0, nn),
                      fan_shaft_speed=rng.uniform(2000.0, 5000.0, nn), k_gearbox=rng.uniform(0.8, 1.2, nn))
    prob = _problem(nn, geared=geared, **values)
    prob.run_model()
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("values, pattern", [
    ({"gearbox_eff": 1.05}, r"gearbox_eff = 1\.05 is outside the valid range \(from 0\.9 up to 1\)"),
    ({"gearbox_eff": np.nan}, r"gearbox_eff = nan is outside the valid range"),
    ({"LP_mech_eff_ref": 0.5}, r"LP_mech_eff_ref = 0\.5 is outside the valid range \(above 0\.5 up to 1\)"),
    ({"fan_shaft_speed": 0.0}, r"fan_shaft_speed = 0 rpm is outside the valid range \(above 0"),
    ({"booster_work": -1.0}, r"booster_work = -1 J/kg is outside the valid range \(from 0"),
])
def test_bad_inputs_raise(values, pattern):
    """NaN or out-of-range inputs raise InputRangeError naming the variable and range."""
    prob = _problem(**{**GEARED, **values})
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
