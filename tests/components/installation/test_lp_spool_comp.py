"""Tests of the LP spool: shaft speeds, LP turbine exit annulus, blade speed, stage count, Soderberg efficiency."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.installation.lp_spool_comp import (FLOW_COEFF_REF, LOADING_REF, LPSpoolComp,
                                                             soderberg_stage_efficiency)
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-10
PARTIALS_TOL = 1e-10
SEED = 1965

# Constant-gamma hot gas for hand calculations (the gas model's frozen products at about 750 K: gamma 1.33).
GAMMA_T, CP_T = 1.33, 1156.0
R_T = CP_T * (GAMMA_T - 1.0) / GAMMA_T
CPG_HOT = CaloricallyPerfectGas(cp=CP_T, gamma=GAMMA_T)

DEMO_LIKE = {"fan_tip_speed": 356.0, "fan_tip_diameter": 1.91, "W2": 206.0, "W5_frac": 0.0844, "Tt5": 760.0,
             "Pt5": 4.0e4, "FAR5": 0.023, "lpt_work": 5.17e5, "lpt_exit_mach": 0.40, "lpt_exit_hub_tip_ratio": 0.65,
             "lpt_stage_loading": 2.5, "lpt_eff_poly_ref": 0.91}

RANDOM_RANGES = {"fan_tip_speed": (300.0, 450.0), "fan_tip_diameter": (1.5, 2.6), "W2": (120.0, 320.0),
                 "W5_frac": (0.06, 0.11), "Tt5": (650.0, 850.0), "Pt5": (3.0e4, 6.0e4), "FAR5": (0.015, 0.03),
                 "lpt_work": (3.0e5, 6.0e5), "lpt_exit_mach": (0.3, 0.5), "lpt_exit_hub_tip_ratio": (0.55, 0.75),
                 "lpt_stage_loading": (1.5, 3.0), "lpt_eff_poly_ref": (0.89, 0.93)}


def _problem(nn=1, gas=None, **options_and_values):
    options = {k: options_and_values.pop(k) for k in ("geared", "stage_effect") if k in options_and_values}
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("lp", LPSpoolComp(num_nodes=nn, gas=gas or ThermallyPerfectGas(), **options),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in options_and_values.items():
        prob.set_val(name, val)
    return prob


def soderberg_by_triangles(loading, flow_coeff):
    """Stage efficiency from explicitly built velocity triangles of a repeating stage (blade speed 1).

    Stator exit swirl c_theta2 = (1 + psi)/2 and stage exit swirl c_theta3 = c_theta2 - psi (Euler: dh = U dc_theta);
    relative swirls w = c - U. Deflections from the flow angles; Soderberg loss zeta = 0.04 (1 + 1.5 (eps/100)^2)
    (Dixon, 4th ed., pp. 97-98: conditions read, constants from memory);
    eta_tt = dh / (dh + zeta_N c2^2/2 + zeta_R w3^2/2).
    Returns (eta, stator deflection, rotor deflection, reaction).
    """
    cx = flow_coeff
    c_t2 = 0.5 * (1.0 + loading)
    c_t3 = c_t2 - loading
    w_t2, w_t3 = c_t2 - 1.0, c_t3 - 1.0
    stator = np.degrees(np.arctan2(c_t2, cx) - np.arctan2(c_t3, cx))  # inlet angle = stage exit angle (repeating)
    rotor = np.degrees(np.arctan2(w_t2, cx) - np.arctan2(w_t3, cx))
    zeta = lambda eps: 0.04 * (1.0 + 1.5 * (eps / 100.0) ** 2)  # noqa: E731
    c2_sq, w3_sq = cx**2 + c_t2**2, cx**2 + w_t3**2
    eta = loading / (loading + 0.5 * zeta(stator) * c2_sq + 0.5 * zeta(rotor) * w3_sq)
    # reaction: static enthalpy drop in the rotor / stage drop, (w3^2 - w2^2)/2 over dh
    w2_sq = cx**2 + w_t2**2
    reaction = 0.5 * (w3_sq - w2_sq) / loading
    return eta, stator, rotor, reaction


@pytest.mark.parametrize("loading, flow_coeff", [(1.0, 0.6), (2.5, 1.0), (2.0, 0.8), (3.0, 1.4), (0.8, 0.4)])
def test_soderberg_against_velocity_triangles(loading, flow_coeff):
    """The closed form equals the efficiency built from the stage's velocity triangles; the stage has 50 %
    reaction and equal stator and rotor deflections."""
    eta, _, _ = soderberg_stage_efficiency(loading, flow_coeff)
    expected, stator, rotor, reaction = soderberg_by_triangles(loading, flow_coeff)
    assert eta == pytest.approx(expected, rel=EXACT_RTOL)
    assert stator == pytest.approx(rotor, rel=EXACT_RTOL)
    assert reaction == pytest.approx(0.5, rel=EXACT_RTOL)


def test_soderberg_trends_and_plausible_level():
    """Efficiency falls as the stage is loaded beyond psi about 1-1.5 (Smith 1965 chart and Soderberg's correlation
    as drawn by Dixon and Hall, from memory: peaks of 92-94 % at psi about 1 and phi 0.5-0.7, common practice)."""
    psi = np.array([1.0, 1.5, 2.0, 2.5, 3.0, 3.5])
    eta, _, _ = soderberg_stage_efficiency(psi, 0.8)
    assert np.all(np.diff(eta) < 0.0)
    peak, _, _ = soderberg_stage_efficiency(1.0, 0.6)
    assert 0.91 < peak < 0.95


def test_speeds_annulus_and_stage_count_by_hand():
    """Constant-gamma gas: annulus from the mass-flow function (NACA Report 1135 isentropic relations), speeds from
    the fan tip speed and diameter, stage count w/(psi U^2), AN^2, flow coefficient."""
    v = DEMO_LIKE
    prob = _problem(gas=CPG_HOT, **v)
    prob.run_model()
    n_fan = v["fan_tip_speed"] / (np.pi * v["fan_tip_diameter"])
    m, tt = v["lpt_exit_mach"], v["Tt5"]
    ts = tt / (1.0 + 0.5 * (GAMMA_T - 1.0) * m**2)
    ps = v["Pt5"] * (ts / tt) ** (GAMMA_T / (GAMMA_T - 1.0))
    vel = m * np.sqrt(GAMMA_T * R_T * ts)
    area = v["W2"] * v["W5_frac"] / (ps / (R_T * ts) * vel)
    nu = v["lpt_exit_hub_tip_ratio"]
    d_tip = np.sqrt(4.0 * area / (np.pi * (1.0 - nu**2)))
    u = np.pi * 0.5 * d_tip * (1.0 + nu) * n_fan
    expected = {"fan_shaft_speed": 60.0 * n_fan, "LP_shaft_speed": 60.0 * n_fan, "lpt_exit_area": area,
                "lpt_tip_diameter": d_tip, "lpt_blade_speed": u, "lpt_flow_coefficient": vel / u,
                "lpt_stage_count": v["lpt_work"] / (v["lpt_stage_loading"] * u**2),
                "lpt_AN2": area * (60.0 * n_fan) ** 2}
    for name, value in expected.items():
        assert prob.get_val(name)[0] == pytest.approx(value, rel=1e-9), name


def test_efficiency_follows_the_stage_design():
    """lpt_eff_poly = reference + Soderberg(psi, phi) - Soderberg(2.5, 1.0) (triangles written in this test)."""
    prob = _problem(**DEMO_LIKE)
    prob.run_model()
    phi = prob.get_val("lpt_flow_coefficient")[0]
    delta = soderberg_by_triangles(2.5, phi)[0] - soderberg_by_triangles(LOADING_REF, FLOW_COEFF_REF)[0]
    assert prob.get_val("lpt_eff_poly")[0] == pytest.approx(0.91 + delta, rel=EXACT_RTOL)


def test_gear_ratio_speeds_the_turbine():
    """A reduction gear of ratio G turns the LP turbine G times faster than the fan: G^2 fewer stages, G^2 more
    AN^2, a lower flow coefficient; the fan speed is unchanged."""
    direct = _problem(**DEMO_LIKE)
    direct.run_model()
    geared = _problem(geared=True, gear_ratio=2.5, **DEMO_LIKE)
    geared.run_model()
    g = lambda p, n: p.get_val(n)[0]  # noqa: E731
    assert g(geared, "fan_shaft_speed") == pytest.approx(g(direct, "fan_shaft_speed"), rel=EXACT_RTOL)
    assert g(geared, "LP_shaft_speed") == pytest.approx(2.5 * g(direct, "LP_shaft_speed"), rel=EXACT_RTOL)
    assert g(geared, "lpt_stage_count") == pytest.approx(g(direct, "lpt_stage_count") / 6.25, rel=EXACT_RTOL)
    assert g(geared, "lpt_AN2") == pytest.approx(6.25 * g(direct, "lpt_AN2"), rel=EXACT_RTOL)


def test_switched_off_passes_the_reference_through():
    """stage_effect=False: the efficiency is the reference; the stage count is still computed."""
    prob = _problem(stage_effect=False, **{**DEMO_LIKE, "lpt_stage_loading": 1.2})
    prob.run_model()
    assert prob.get_val("lpt_eff_poly")[0] == 0.91
    assert prob.get_val("lpt_stage_count")[0] > 0.0


@pytest.mark.parametrize("geared", [False, True])
@pytest.mark.parametrize("stage_effect", [True, False])
def test_partials_complex_step(geared, stage_effect):
    """Analytic partials against complex step, direct drive and geared."""
    nn = 4
    rng = np.random.default_rng(SEED)
    values = {n: rng.uniform(lo, hi, nn) for n, (lo, hi) in RANDOM_RANGES.items()}
    if geared:
        values["gear_ratio"] = rng.uniform(2.0, 3.5, nn)
    prob = _problem(nn, geared=geared, stage_effect=stage_effect, **values)
    prob.run_model()
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("values, pattern", [
    ({"fan_tip_speed": 0.0}, r"fan_tip_speed = 0 m/s is outside the valid range \(above 0"),
    ({"lpt_work": np.nan}, r"lpt_work = nan J/kg is outside the valid range"),
    ({"lpt_exit_mach": 0.9}, r"lpt_exit_mach = 0\.9 is outside the valid range \(from 0\.1 up to 0\.8\)"),
    ({"lpt_exit_hub_tip_ratio": 0.95},
     r"lpt_exit_hub_tip_ratio = 0\.95 is outside the valid range \(from 0 below 0\.9"),
    ({"lpt_stage_loading": 5.0}, r"lpt_stage_loading = 5 is outside the valid range \(from 0\.5 up to 4\)"),
    ({"fan_tip_speed": 40.0}, r"lpt_flow_coefficient = .* is outside the valid range \(from 0\.2 up to 3\)"),
])
def test_bad_inputs_raise(values, pattern):
    """NaN or out-of-range inputs raise InputRangeError naming the variable and range."""
    prob = _problem(**{**DEMO_LIKE, **values})
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()


def test_bad_gear_ratio_raises():
    """A gear ratio below 1 (an overdrive) is outside the range."""
    prob = _problem(geared=True, **{**DEMO_LIKE, "gear_ratio": 0.5})
    with pytest.raises(InputRangeError, match=r"gear_ratio = 0\.5 is outside the valid range \(from 1 up to 6\)"):
        prob.run_model()
