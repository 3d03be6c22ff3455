"""Tests for the fan and core-entry sizing component (annulus areas, tip diameters, tip speed)."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.installation.fan_sizing_comp import FanSizingComp
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-10
CHECK_VALUE_RTOL = 5e-5  # field-reference 7.2 prints areas and diameters to 5 figures
# Variable cp at 288 K against field-reference 7.2's constant-gamma values: measured 1.94e-4 (area) and
# 1.17e-4 (diameter) over the three cases; about twice the larger.
REAL_GAS_RTOL = 4e-4
PARTIALS_TOL = 1e-10
SEED = 4242

# ISO 2533 sea level (field-reference 1.2) and the constant-gamma air of field-reference 7.2.
T_SL, P_SL = 288.15, 101325.0
R_AIR, GAMMA = 287.05287, 1.4
CPG_AIR = CaloricallyPerfectGas(cp=R_AIR * GAMMA / (GAMMA - 1.0), gamma=GAMMA)

RANDOM_RANGES = {
    "W2": (100.0, 300.0), "BPR": (6.0, 14.0), "Tt2": (240.0, 300.0), "Pt2": (3.0e4, 1.0e5),
    "Tt25": (280.0, 360.0), "Pt25": (5.0e4, 1.5e5), "fan_bypass_work": (3.0e4, 6.0e4),
    "fan_face_mach": (0.55, 0.70), "fan_hub_tip_ratio": (0.25, 0.35), "core_entry_mach": (0.40, 0.60),
    "core_entry_hub_tip_ratio": (0.45, 0.65), "fan_tip_loading": (0.20, 0.40),
}


def _problem(nn=1, gas=None, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fan", FanSizingComp(num_nodes=nn, gas=gas or ThermallyPerfectGas()),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def mass_flow_parameter(mach, gamma=GAMMA, R=R_AIR):
    """W sqrt(Tt)/(A Pt) of an ideal gas (field-reference 7.1; NACA Report 1135), kg K^0.5/(N s)."""
    exponent = -(gamma + 1.0) / (2.0 * (gamma - 1.0))
    return np.sqrt(gamma / R) * mach * (1.0 + 0.5 * (gamma - 1.0) * mach**2) ** exponent


def annulus_tip_diameter(area, hub_tip):
    """Tip diameter of an annulus of area A and hub-to-tip ratio nu: A = pi/4 D^2 (1 - nu^2)."""
    return np.sqrt(4.0 * area / (np.pi * (1.0 - hub_tip**2)))


# field-reference 7.2 check values: (corrected flow kg/s, fan-face Mach, hub-to-tip, area m^2, tip diameter m)
FAN_CHECK_VALUES = [(500.0, 0.65, 0.30, 2.3537, 1.8147),
                    (500.0, 0.60, 0.30, 2.4627, 1.8563),
                    (700.0, 0.65, 0.28, 3.2952, 2.1337)]


@pytest.mark.parametrize("w_corr, mach, nu, area, diameter", FAN_CHECK_VALUES)
def test_fan_size_field_reference(w_corr, mach, nu, area, diameter):
    """Fan-face area and tip diameter at ISA sea-level total state (so W2 = corrected flow).

    Constant-gamma air (gamma 1.4, R 287.05287): field-reference 7.2 values to their 5 figures, and the
    mass-flow-function formula written here to 1e-10. Thermally perfect air: within 0.04 % (REAL_GAS_RTOL).
    """
    values = dict(W2=w_corr, Tt2=T_SL, Pt2=P_SL, fan_face_mach=mach, fan_hub_tip_ratio=nu)
    prob = _problem(gas=CPG_AIR, **values)
    prob.run_model()
    a_formula = w_corr * np.sqrt(T_SL) / (P_SL * mass_flow_parameter(mach))
    assert prob.get_val("fan_face_area")[0] == pytest.approx(a_formula, rel=EXACT_RTOL)
    d_formula = annulus_tip_diameter(a_formula, nu)
    assert prob.get_val("fan_tip_diameter")[0] == pytest.approx(d_formula, rel=EXACT_RTOL)
    assert prob.get_val("fan_face_area")[0] == pytest.approx(area, rel=CHECK_VALUE_RTOL)
    assert prob.get_val("fan_tip_diameter")[0] == pytest.approx(diameter, rel=CHECK_VALUE_RTOL)

    real = _problem(**values)
    real.run_model()
    assert real.get_val("fan_face_area")[0] == pytest.approx(area, rel=REAL_GAS_RTOL)
    assert real.get_val("fan_tip_diameter")[0] == pytest.approx(diameter, rel=REAL_GAS_RTOL)


def test_core_entry_size():
    """Core entry annulus passes W2/(1 + BPR) at its own total state, Mach number and hub-to-tip ratio."""
    bpr, tt25, pt25, mach, nu = 10.0, 330.0, 1.2e5, 0.5, 0.55
    prob = _problem(gas=CPG_AIR, W2=220.0, BPR=bpr, Tt25=tt25, Pt25=pt25, core_entry_mach=mach,
                    core_entry_hub_tip_ratio=nu)
    prob.run_model()
    area = 220.0 / (1.0 + bpr) * np.sqrt(tt25) / (pt25 * mass_flow_parameter(mach))
    assert prob.get_val("core_inlet_tip_diameter")[0] == pytest.approx(annulus_tip_diameter(area, nu),
                                                                        rel=EXACT_RTOL)


@pytest.mark.parametrize("loading, tip_speed", [(0.3171, 350.0), (0.2428, 400.0), (0.1918, 450.0)])
def test_tip_speed_from_loading_field_reference(loading, tip_speed):
    """psi = dh/U^2 with dh = 38.848 kJ/kg (pi_f 1.5, e 0.92, 288.15 K): field-reference 7.2 loadings.

    The loadings are printed to 4 figures, so U = sqrt(dh/psi) agrees to about 1.3e-4.
    """
    prob = _problem(gas=CPG_AIR, fan_bypass_work=38848.0, fan_tip_loading=loading, Tt2=T_SL, Pt2=P_SL)
    prob.run_model()
    assert prob.get_val("fan_tip_speed")[0] == pytest.approx(tip_speed, rel=2e-4)
    assert prob.get_val("fan_tip_speed")[0] == pytest.approx(np.sqrt(38848.0 / loading), rel=EXACT_RTOL)
    assert prob.get_val("fan_tip_speed_corrected")[0] == pytest.approx(prob.get_val("fan_tip_speed")[0],
                                                                        rel=EXACT_RTOL)


def test_corrected_tip_speed_and_relative_mach():
    """Corrected tip speed U/sqrt(Tt2/288.15); tip relative Mach sqrt(V2^2 + U^2)/a2 with the static state
    at the fan-face Mach number from the constant-gamma isentropic relations (NACA Report 1135)."""
    tt2, mach, dh, psi = 250.0, 0.62, 45.0e3, 0.30
    prob = _problem(gas=CPG_AIR, Tt2=tt2, Pt2=3.5e4, fan_face_mach=mach, fan_bypass_work=dh,
                    fan_tip_loading=psi)
    prob.run_model()
    u = np.sqrt(dh / psi)
    ts = tt2 / (1.0 + 0.5 * (GAMMA - 1.0) * mach**2)
    a = np.sqrt(GAMMA * R_AIR * ts)
    u_corr, mach_rel = u / np.sqrt(tt2 / T_SL), np.hypot(mach * a, u) / a
    assert prob.get_val("fan_tip_speed_corrected")[0] == pytest.approx(u_corr, rel=EXACT_RTOL)
    assert prob.get_val("fan_tip_relative_mach")[0] == pytest.approx(mach_rel, rel=EXACT_RTOL)


@pytest.mark.parametrize("nn", [4, 1])
@pytest.mark.parametrize("gas", [ThermallyPerfectGas(), CPG_AIR], ids=["real_gas", "constant_gamma"])
def test_partials_complex_step(nn, gas):
    """Analytic partials (through the flow-function derivatives) against complex step."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas=gas, **{n: rng.uniform(lo, hi, nn) for n, (lo, hi) in RANDOM_RANGES.items()})
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, value, pattern", [
    ("fan_hub_tip_ratio", 0.6, r"fan_hub_tip_ratio = 0\.6 is outside the valid range \(from 0 below 0\.6"),
    ("fan_hub_tip_ratio", -0.1, r"fan_hub_tip_ratio = -0\.1 is outside the valid range \(from 0 below 0\.6"),
    ("fan_face_mach", 1.0, r"fan_face_mach = 1 is outside the valid range \(above 0 below 1\)"),
    ("fan_face_mach", 0.0, r"fan_face_mach = 0 is outside the valid range \(above 0 below 1\)"),
    ("W2", np.nan, r"W2 = nan kg/s is outside the valid range"),
    ("fan_tip_loading", np.nan, r"fan_tip_loading = nan is outside the valid range"),
])
def test_bad_inputs_raise(name, value, pattern):
    """Out-of-range or NaN inputs raise InputRangeError (an om.AnalysisError) naming variable and range."""
    prob = _problem(**{name: value})
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
