"""Tests for polytropic compression and expansion (components/gas/processes.py)."""

import numpy as np
import pytest
from scipy.optimize import brentq

from bypassopt.components.gas.processes import expansion_from_work, polytropic_compression
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas

SEED = 20240611

# Closed-form calorically perfect relations; the exit temperature comes from a Newton inverse (1e-13).
RTOL_EXACT = 1e-12
# Field-reference 3.2 prints efficiencies with 5 decimals: half a unit of the last digit.
ATOL_EFF_TABLE = 5e-6
# Field-reference 3.2 thermally perfect temperatures are printed with 3 decimals (K) and the work with
# 3 decimals (kJ/kg), i.e. at most 1.5e-6 relative rounding.
RTOL_TPG_TABLE = 5e-6
# Round trips through two Newton inverses.
RTOL_ROUND_TRIP = 1e-11
# Analytic derivatives vs complex step.
RTOL_DERIV = 1e-10
CS_STEP = 1e-30


@pytest.fixture(scope="module")
def tpg():
    return ThermallyPerfectGas(hc_ratio=1.92)


def _cpg(gamma, R=287.05287):
    return CaloricallyPerfectGas(cp=R * gamma / (gamma - 1.0), gamma=gamma)


def _eta_c_closed_form(pr, e, g):
    """Constant-gamma compressor isentropic efficiency from polytropic efficiency (field-reference 3.1)."""
    return (pr ** ((g - 1.0) / g) - 1.0) / (pr ** ((g - 1.0) / (g * e)) - 1.0)


def _eta_t_closed_form(er, e, g):
    """Constant-gamma turbine isentropic efficiency from polytropic efficiency (field-reference 3.1)."""
    return (1.0 - er ** (-e * (g - 1.0) / g)) / (1.0 - er ** (-(g - 1.0) / g))


# -------------------------------------------------------------------------------------------------
# Calorically perfect gas: closed forms
# -------------------------------------------------------------------------------------------------

def test_cpg_compression_temperature_ratio():
    """Source: textbook constant-gamma relation Tt_out/Tt_in = PR^((g-1)/(g e)) (Saravanamuttoo et al.,
    Gas Turbine Theory; Walsh and Fletcher, Gas Turbine Performance - from memory, field-reference 3.1)."""
    rng = np.random.default_rng(SEED)
    for g in (1.4, 1.33):
        gas = _cpg(g)
        T1 = rng.uniform(200.0, 900.0, 20)
        pr = rng.uniform(1.0, 60.0, 20)
        e = rng.uniform(0.8, 1.0, 20)
        r = polytropic_compression(gas, T1, pr, e, 0.0)
        T2 = T1 * pr ** ((g - 1.0) / (g * e))
        np.testing.assert_allclose(r.Tt_out, T2, rtol=RTOL_EXACT)
        np.testing.assert_allclose(r.work, gas.cp * (T2 - T1), rtol=RTOL_EXACT)


# field-reference 3.2: (PR, e_poly, eta_c) at gamma = 1.4.
ETA_C_TABLE = [(1.5, 0.92, 0.91528), (1.45, 0.93, 0.92622), (20.0, 0.90, 0.85216), (40.0, 0.90, 0.83983),
               (40.0, 0.91, 0.85569)]


@pytest.mark.parametrize("pr, e, eta_ref", ETA_C_TABLE)
def test_cpg_compressor_isentropic_efficiency_field_reference(pr, e, eta_ref):
    """Source: field-reference 3.2 (textbook constant-gamma relation, Saravanamuttoo et al. / Walsh and
    Fletcher, from memory); the values also equal fluids.compressible.isentropic_efficiency (Couper, Penney
    and Fair, Chemical Process Equipment, 2009) to 5 digits according to field-reference 3.2."""
    gas = _cpg(1.4)
    T1 = 288.15
    actual = polytropic_compression(gas, T1, pr, e, 0.0)
    ideal = polytropic_compression(gas, T1, pr, 1.0, 0.0)
    eta = ideal.work / actual.work
    assert eta == pytest.approx(_eta_c_closed_form(pr, e, 1.4), rel=RTOL_EXACT)
    assert eta == pytest.approx(eta_ref, abs=ATOL_EFF_TABLE)
    assert eta < e  # field-reference 3.1: eta_c < e_c for compression


# field-reference 3.2: (ER, e_poly, eta_t) at gamma = 1.33.
ETA_T_TABLE = [(4.0, 0.90, 0.91476), (5.0, 0.91, 0.92545)]


@pytest.mark.parametrize("er, e, eta_ref", ETA_T_TABLE)
def test_cpg_turbine_isentropic_efficiency_field_reference(er, e, eta_ref):
    """Source: field-reference 3.1/3.2 constant-gamma turbine relations (textbook, from memory):
    T2/T1 = ER^(-e (g-1)/g), eta_t = (1 - ER^(-e(g-1)/g))/(1 - ER^(-(g-1)/g))."""
    g = 1.33
    gas = _cpg(g)
    T1 = 1500.0
    work = gas.cp * T1 * (1.0 - er ** (-e * (g - 1.0) / g))
    r = expansion_from_work(gas, T1, work, e, 0.0)
    assert r.expansion_ratio == pytest.approx(er, rel=RTOL_EXACT)
    assert r.Tt_out == pytest.approx(T1 * er ** (-e * (g - 1.0) / g), rel=RTOL_EXACT)
    work_s = gas.cp * T1 * (1.0 - er ** (-(g - 1.0) / g))
    eta = work / work_s
    assert eta == pytest.approx(_eta_t_closed_form(er, e, g), rel=RTOL_EXACT)
    assert eta == pytest.approx(eta_ref, abs=ATOL_EFF_TABLE)
    assert eta > e  # field-reference 3.1: eta_t > e_t for expansion


# -------------------------------------------------------------------------------------------------
# Thermally perfect gas: field-reference 3.2 (computed there with the same NASA data via Cantera)
# -------------------------------------------------------------------------------------------------

# (T1, PR, e, T2s, T2, eta_c, work kJ/kg)
COMPRESSION_TABLE = [(288.15, 40.0, 0.90, 801.530, 891.206, 0.84330, 634.970),
                     (288.15, 1.5, 0.92, 323.522, 326.792, 0.91529, 38.848),
                     (250.0, 50.0, 0.91, 745.967, 825.600, 0.85472, 600.273)]


@pytest.mark.parametrize("T1, pr, e, T2s, T2, eta_c, work_kj", COMPRESSION_TABLE)
def test_tpg_compression_field_reference(tpg, T1, pr, e, T2s, T2, eta_c, work_kj):
    """Source: field-reference 3.2 (variable-cp dry air, nasa_gas.yaml 4-species model, computed there)."""
    r = polytropic_compression(tpg, T1, pr, e, 0.0)
    rs = polytropic_compression(tpg, T1, pr, 1.0, 0.0)
    assert r.Tt_out == pytest.approx(T2, rel=RTOL_TPG_TABLE)
    assert rs.Tt_out == pytest.approx(T2s, rel=RTOL_TPG_TABLE)
    assert r.work / 1e3 == pytest.approx(work_kj, rel=RTOL_TPG_TABLE)
    assert rs.work / r.work == pytest.approx(eta_c, abs=ATOL_EFF_TABLE)


def test_tpg_turbine_field_reference(tpg):
    """Source: field-reference 3.2: frozen air, T1 = 1700 K, ER = 4, e = 0.90 -> T2s = 1220.806 K,
    T2 = 1262.780 K, eta_t = 0.91431 (computed there with Cantera nasa_gas.yaml)."""
    T1, er, e = 1700.0, 4.0, 0.90

    def work_for(eff):
        return brentq(lambda w: expansion_from_work(tpg, T1, w, eff, 0.0).expansion_ratio - er,
                      1e3, 1e6, xtol=1e-9, rtol=4 * np.finfo(float).eps)

    w = work_for(e)
    w_s = work_for(1.0)
    assert expansion_from_work(tpg, T1, w, e, 0.0).Tt_out == pytest.approx(1262.780, rel=RTOL_TPG_TABLE)
    assert expansion_from_work(tpg, T1, w_s, 1.0, 0.0).Tt_out == pytest.approx(1220.806, rel=RTOL_TPG_TABLE)
    assert w / w_s == pytest.approx(0.91431, abs=ATOL_EFF_TABLE)


def test_tpg_compression_entropy_function_relation(tpg):
    """Definition (field-reference 3.1): phi(T2) = phi(T1) + R ln(PR)/e and work = h(T2) - h(T1)."""
    rng = np.random.default_rng(SEED)
    T1 = rng.uniform(200.0, 900.0, 30)
    pr = rng.uniform(1.0, 30.0, 30)
    e = rng.uniform(0.85, 1.0, 30)
    far = rng.uniform(0.0, 0.05, 30)
    r = polytropic_compression(tpg, T1, pr, e, far)
    p1, p2 = tpg.properties(T1, far), tpg.properties(r.Tt_out, far)
    np.testing.assert_allclose(p2.phi - p1.phi, p1.R * np.log(pr) / e, rtol=RTOL_ROUND_TRIP,
                               atol=1e-9 * np.max(p1.R))
    np.testing.assert_allclose(r.work, p2.h - p1.h, rtol=RTOL_EXACT, atol=1e-9)


# -------------------------------------------------------------------------------------------------
# Expansion as the inverse of compression
# -------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_expansion_inverts_isentropic_compression(model, tpg):
    """With e = 1 both processes are isentropic: expanding the compressed gas by the compression work
    returns to the inlet temperature at an expansion ratio equal to the pressure ratio."""
    gas = tpg if model == "tpg" else _cpg(1.4)
    rng = np.random.default_rng(SEED)
    T1 = rng.uniform(200.0, 800.0, 30)
    pr = rng.uniform(1.05, 40.0, 30)
    far = rng.uniform(0.0, 0.05, 30)
    c = polytropic_compression(gas, T1, pr, 1.0, far)
    x = expansion_from_work(gas, c.Tt_out, c.work, 1.0, far)
    np.testing.assert_allclose(x.Tt_out, T1, rtol=RTOL_ROUND_TRIP)
    np.testing.assert_allclose(x.expansion_ratio, pr, rtol=RTOL_ROUND_TRIP)
    # with e_c and e_t: phi(T2) - phi(T1) = R ln(PR)/e_c = e_t R ln(ER), so ER = PR^(1/(e_c e_t))
    e_c, e_t = 0.9, 0.88
    c = polytropic_compression(gas, T1, pr, e_c, far)
    x = expansion_from_work(gas, c.Tt_out, c.work, e_t, far)
    np.testing.assert_allclose(x.Tt_out, T1, rtol=RTOL_ROUND_TRIP)
    np.testing.assert_allclose(x.expansion_ratio, pr ** (1.0 / (e_c * e_t)), rtol=RTOL_ROUND_TRIP)


# -------------------------------------------------------------------------------------------------
# Derivatives vs complex step
# -------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_compression_derivatives(model, tpg, check_derivatives_vs_complex_step):
    gas = tpg if model == "tpg" else _cpg(1.4)
    rng = np.random.default_rng(SEED)
    n = 6
    args = {"Tt_in": rng.uniform(220.0, 800.0, n), "pressure_ratio": rng.uniform(1.1, 30.0, n),
            "eff_poly": rng.uniform(0.85, 0.95, n), "far": rng.uniform(0.0, 0.05, n)}
    check_derivatives_vs_complex_step(lambda *a: polytropic_compression(gas, *a), args, ("Tt_out", "work"),
                                      rtol=RTOL_DERIV)


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_expansion_derivatives(model, tpg, check_derivatives_vs_complex_step):
    gas = tpg if model == "tpg" else _cpg(1.33)
    rng = np.random.default_rng(SEED + 1)
    n = 6
    args = {"Tt_in": rng.uniform(1000.0, 2000.0, n), "work": rng.uniform(5e4, 4e5, n),
            "eff_poly": rng.uniform(0.85, 0.95, n), "far": rng.uniform(0.0, 0.05, n)}
    check_derivatives_vs_complex_step(lambda *a: expansion_from_work(gas, *a), args,
                                      ("Tt_out", "expansion_ratio"), rtol=RTOL_DERIV)


# -------------------------------------------------------------------------------------------------
# Bad input
# -------------------------------------------------------------------------------------------------

def test_bad_process_inputs(tpg):
    with pytest.raises(ValueError, match=r"compression pressure ratio = 0.9 is outside the valid range "
                                         r"\(from 1\)"):
        polytropic_compression(tpg, 300.0, 0.9, 0.9, 0.0)
    for e, shown in ((0.0, "0"), (1.1, "1.1")):
        with pytest.raises(ValueError, match=rf"polytropic efficiency = {shown} is outside the valid range "
                                             r"\(above 0 up to 1\)"):
            polytropic_compression(tpg, 300.0, 2.0, e, 0.0)
        with pytest.raises(ValueError, match=rf"polytropic efficiency = {shown} is outside the valid range"):
            expansion_from_work(tpg, 1500.0, 1e5, e, 0.0)
    with pytest.raises(ValueError, match=r"temperature from compressor exit entropy function = .* K is "
                                         r"outside the valid range \(from 200 up to 2400 K\)"):
        polytropic_compression(tpg, 800.0, 100.0, 0.9, 0.0)
    with pytest.raises(ValueError, match=r"temperature from turbine exit enthalpy = .* K is outside "
                                         r"the valid range \(from 200 up to 2400 K\)"):
        expansion_from_work(tpg, 500.0, 4e5, 0.9, 0.0)
    with pytest.raises(ValueError, match=r"temperature = 2500 K is outside the valid range"):
        expansion_from_work(tpg, 2500.0, 1e5, 0.9, 0.0)
