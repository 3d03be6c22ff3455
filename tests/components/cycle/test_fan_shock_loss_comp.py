"""Tests of the fan tip shock loss: normal-shock entropy, its span average, and the bypass-stream efficiency."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials
from scipy.integrate import quad

from bypassopt.components.cycle.fan_shock_loss_comp import FanShockLossComp, normal_shock_entropy
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-12
#: The closed-form span average against adaptive quadrature of the shock entropy: measured 3e-13.
QUAD_RTOL = 1e-10
PARTIALS_TOL = 1e-10
SEED = 1961
GAMMA = 1.4

#: Normal-shock properties for gamma 1.4 as printed (4 figures) in J. D. Anderson, *Fundamentals of Aerodynamics*,
#: appendix Table A.2 "Normal shock properties" (read from a transcription of the table; the table evaluates the
#: NACA Report 1135 normal-shock relations): upstream Mach number -> (pt2/pt1, p2/p1, downstream Mach number).
#: The rows cover the tip relative Mach numbers of civil fans (1.0-1.4).
NORMAL_SHOCK_TABLE = {
    1.04: (0.9999, 1.095, 0.9620), 1.06: (0.9998, 1.144, 0.9444), 1.08: (0.9994, 1.194, 0.9277),
    1.10: (0.9989, 1.245, 0.9118), 1.12: (0.9982, 1.297, 0.8966), 1.16: (0.9961, 1.403, 0.8682),
    1.20: (0.9928, 1.513, 0.8422), 1.24: (0.9884, 1.627, 0.8183), 1.28: (0.9827, 1.745, 0.7963),
    1.30: (0.9794, 1.805, 0.7860), 1.34: (0.9718, 1.928, 0.7664),
}
#: Half a unit of the last printed figure.
TABLE_PT_ABS, TABLE_P_ABS, TABLE_M_ABS = 5e-5, 5e-4, 5e-5

def shock_pt_ratio(mach, gamma=GAMMA):
    """pt2/pt1 across a normal shock from the static-pressure jump and the downstream Mach number.

    Written from the Rankine-Hugoniot relations (NACA Report 1135): p2/p1 = 1 + 2 gamma (M^2 - 1)/(gamma + 1),
    M2^2 = (1 + (gamma - 1) M^2/2)/(gamma M^2 - (gamma - 1)/2), pt = p (1 + (gamma - 1) M^2/2)^(gamma/(gamma-1)).
    """
    m2 = mach**2
    p_jump = 1.0 + 2.0 * gamma * (m2 - 1.0) / (gamma + 1.0)
    m2_down = (1.0 + 0.5 * (gamma - 1.0) * m2) / (gamma * m2 - 0.5 * (gamma - 1.0))
    ex = gamma / (gamma - 1.0)
    return p_jump * ((1.0 + 0.5 * (gamma - 1.0) * m2_down) / (1.0 + 0.5 * (gamma - 1.0) * m2)) ** ex


def span_average_by_quadrature(m_tip, m_axial, hub_tip):
    """Mass-averaged -ln(pt2/pt1) over the annulus with uniform axial flow, by adaptive quadrature in radius."""
    def integrand(r):
        mach = np.sqrt(m_axial**2 + (m_tip**2 - m_axial**2) * r**2)
        return -np.log(shock_pt_ratio(mach)) * r if mach > 1.0 else 0.0
    sonic = np.sqrt((1.0 - m_axial**2) / (m_tip**2 - m_axial**2)) if m_tip > 1.0 else 1.0
    lo = max(hub_tip, min(sonic, 1.0))
    value, _ = quad(integrand, lo, 1.0, epsabs=0.0, epsrel=1e-13, limit=200)
    return 2.0 * value / (1.0 - hub_tip**2)


def _problem(nn=1, shock_effect=True, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("c", FanShockLossComp(num_nodes=nn, shock_effect=shock_effect), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def shock_static_jump_and_downstream_mach(mach, gamma=GAMMA):
    """p2/p1 and the downstream Mach number of a normal shock (Rankine-Hugoniot, as in ``shock_pt_ratio``)."""
    m2 = mach**2
    return (1.0 + 2.0 * gamma * (m2 - 1.0) / (gamma + 1.0),
            np.sqrt((1.0 + 0.5 * (gamma - 1.0) * m2) / (gamma * m2 - 0.5 * (gamma - 1.0))))


@pytest.mark.parametrize("mach, row", NORMAL_SHOCK_TABLE.items())
def test_normal_shock_against_published_table(mach, row):
    """exp(-entropy rise / R) is the tabulated total-pressure ratio (Anderson, Table A.2, its 4 printed figures), and
    the Rankine-Hugoniot form written in this test reproduces the table's p2/p1 and downstream Mach number too."""
    pt_ratio, p_jump, mach_down = row
    g, _ = normal_shock_entropy(mach**2)
    assert np.exp(-g) == pytest.approx(pt_ratio, abs=TABLE_PT_ABS)
    jump, down = shock_static_jump_and_downstream_mach(mach)
    assert jump == pytest.approx(p_jump, abs=TABLE_P_ABS)
    assert down == pytest.approx(mach_down, abs=TABLE_M_ABS)


@pytest.mark.parametrize("mach", [1.02, 1.25, 1.5, 1.8, 2.0])
def test_normal_shock_against_rankine_hugoniot(mach):
    """Over the whole valid range (tip Mach up to 2) the component's closed form equals the total-pressure ratio
    built here from the static-pressure jump and the downstream Mach number (to 1e-12)."""
    g, _ = normal_shock_entropy(mach**2)
    assert np.exp(-g) == pytest.approx(shock_pt_ratio(mach), rel=EXACT_RTOL)


def test_normal_shock_vanishes_smoothly_at_mach_one():
    """A sonic 'shock' has no loss and no slope (the weak-shock entropy rise is third order in M^2 - 1)."""
    g, dg = normal_shock_entropy(1.0)
    assert abs(g) < 1e-15 and abs(dg) < 1e-15
    g_small, _ = normal_shock_entropy(1.0 + 1e-2)
    assert 0.0 < g_small < 1e-5


@pytest.mark.parametrize("m_tip, m_axial, hub_tip", [(1.325, 0.65, 0.30), (1.6, 0.6, 0.28), (1.05, 0.7, 0.32),
                                                     (1.95, 0.8, 0.58)])
def test_span_average_against_quadrature(m_tip, m_axial, hub_tip):
    """The closed-form span average equals adaptive quadrature of the Rankine-Hugoniot entropy over the radius
    (the last case has a supersonic hub)."""
    prob = _problem(FPR=1.6, fan_tip_relative_mach=m_tip, fan_face_mach=m_axial, fan_hub_tip_ratio=hub_tip)
    prob.run_model()
    expected = span_average_by_quadrature(m_tip, m_axial, hub_tip)
    assert prob.get_val("fan_shock_entropy")[0] == pytest.approx(expected, rel=QUAD_RTOL)


def test_efficiency_adds_the_shock_entropy():
    """The efficiency carries exactly the shock's entropy on top of the shock-free fan's.

    Checked by another route: constant-gamma compression at polytropic efficiency e gives
    Tt13/Tt2 = FPR^((gamma-1)/(gamma e)) (field-reference 3.1) and entropy rise cp ln(Tt13/Tt2) - R ln FPR;
    the rise at the computed e minus the rise at e_ref must be k R times the shock entropy.
    """
    fpr, e_ref, k = 1.55, 0.93, 1.3
    prob = _problem(FPR=fpr, fan_tip_relative_mach=1.4, fan_face_mach=0.62, fan_hub_tip_ratio=0.3,
                    fan_bypass_eff_poly_ref=e_ref, fan_shock_loss_factor=k)
    prob.run_model()
    e, q = prob.get_val("fan_bypass_eff_poly")[0], prob.get_val("fan_shock_entropy")[0]

    def entropy_over_r(eff):
        cp_over_r = GAMMA / (GAMMA - 1.0)
        return cp_over_r * np.log(fpr ** ((GAMMA - 1.0) / (GAMMA * eff))) - np.log(fpr)

    assert entropy_over_r(e) - entropy_over_r(e_ref) == pytest.approx(k * q, rel=1e-12)


def test_subsonic_tip_has_no_loss():
    """A subsonic tip (a low-speed fan) keeps the shock-free efficiency exactly."""
    prob = _problem(2, FPR=[1.25, 1.3], fan_tip_relative_mach=[0.95, 1.0], fan_bypass_eff_poly_ref=0.935)
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("fan_bypass_eff_poly"), [0.935, 0.935])
    np.testing.assert_array_equal(prob.get_val("fan_shock_entropy"), [0.0, 0.0])


def test_plausible_efficiency_band_along_fpr():
    """Tip Mach number from FPR at the demo's tip loading (0.30) and fan face: the efficiency falls with FPR and
    stays in the band of modern fans (polytropic 0.90-0.93 at FPR 1.5-1.7, field-reference 3.3, common practice;
    a plausibility band, not a reference value)."""
    fpr = np.array([1.3, 1.45, 1.6, 1.75])
    tt2, mx, psi, e_ref = 256.7, 0.65, 0.30, 0.93
    cp, r_air = 1004.0, 287.05
    dh = cp * tt2 * (fpr ** (r_air / cp / e_ref) - 1.0)
    u_tip = np.sqrt(dh / psi)
    a2 = np.sqrt(GAMMA * r_air * tt2 / (1.0 + 0.2 * mx**2))
    m_tip = np.hypot(mx * a2, u_tip) / a2
    prob = _problem(len(fpr), FPR=fpr, fan_tip_relative_mach=m_tip, fan_face_mach=mx, fan_bypass_eff_poly_ref=e_ref)
    prob.run_model()
    eff = prob.get_val("fan_bypass_eff_poly")
    assert np.all(np.diff(eff) < 0.0)
    assert np.all((eff[1:] > 0.90) & (eff[1:] <= 0.93)), eff


def test_switched_off_passes_the_reference_through():
    """shock_effect=False: the efficiency is the reference whatever the tip Mach number (entropy still reported)."""
    prob = _problem(shock_effect=False, fan_tip_relative_mach=1.6, fan_bypass_eff_poly_ref=0.92)
    prob.run_model()
    assert prob.get_val("fan_bypass_eff_poly")[0] == 0.92
    assert prob.get_val("fan_shock_entropy")[0] > 0.0


@pytest.mark.parametrize("shock_effect", [True, False])
def test_partials_complex_step(shock_effect):
    """Analytic partials against complex step: subsonic tip, shocked tip, shocked hub."""
    nn = 5
    rng = np.random.default_rng(SEED)
    prob = _problem(nn, shock_effect=shock_effect, FPR=rng.uniform(1.3, 1.9, nn),
                    fan_tip_relative_mach=np.array([0.9, 1.15, 1.35, 1.6, 1.95]),
                    fan_face_mach=rng.uniform(0.55, 0.75, nn), fan_hub_tip_ratio=np.array([0.3, 0.25, 0.32, 0.3, 0.58]),
                    fan_bypass_eff_poly_ref=rng.uniform(0.91, 0.95, nn),
                    fan_shock_loss_factor=rng.uniform(0.5, 1.5, nn))
    prob.run_model()
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("values, pattern", [
    ({"FPR": 1.0}, r"FPR = 1 is outside the valid range \(above 1\)"),
    ({"fan_tip_relative_mach": np.nan}, r"fan_tip_relative_mach = nan is outside the valid range"),
    ({"fan_tip_relative_mach": 2.5}, r"fan_tip_relative_mach = 2\.5 is outside the valid range \(from 0 up to 2\)"),
    ({"fan_shock_loss_factor": -1.0}, r"fan_shock_loss_factor = -1 is outside the valid range \(from 0 up to 5\)"),
    ({"fan_tip_relative_mach": 0.5}, r"fan_tip_relative_mach is below fan_face_mach"),
    ({"FPR": 1.01, "fan_tip_relative_mach": 1.9}, r"fan_bypass_eff_poly = .* outside the valid range \(above 0\.5"),
])
def test_bad_inputs_raise(values, pattern):
    """NaN or out-of-range inputs, and a loss that leaves no efficiency, raise InputRangeError."""
    prob = _problem(**values)
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
