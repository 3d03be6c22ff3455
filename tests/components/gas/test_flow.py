"""Tests for the compressible-flow functions (components/gas/flow.py)."""

import importlib
import numpy as np
import pytest
from scipy.optimize import brentq

from bypassopt.components.gas.flow import (mach_from_flow_per_area, sonic, static_from_total,
                                           total_from_static)
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas

SEED = 20240611
SPECIES = ("N2", "O2", "Ar", "CO2", "H2O")

# Closed-form isentropic relations of a calorically perfect gas, evaluated in floating point.
RTOL_EXACT = 1e-12
# Field-reference 7.2 prints the mass-flow function with 6 decimals (5 significant figures, up to
# 1.35e-5 relative rounding at M = 0.7) and the corrected flow per area with 2 decimals: half a unit
# of the last printed digit.
ATOL_MFP_TABLE = 5e-7
ATOL_FLOW_PER_AREA_TABLE = 5e-3
# Independent Cantera solution (same NASA data, root found with brentq to ~1e-15).
RTOL_CANTERA = 1e-8
# Round trips through two Newton solves (each converged to 1e-13).
RTOL_ROUND_TRIP = 1e-11
# Analytic derivatives vs complex step: chained implicit-function derivatives through two Newton solves.
RTOL_DERIV = 1e-9
CS_STEP = 1e-30

R_ISA = 287.05287  # J/(kg K), ISO 2533 (field-reference 7.2 uses it)
GAMMA = 1.4


@pytest.fixture(scope="module")
def cpg():
    """Calorically perfect air, gamma = 1.4 and R = 287.05287 J/(kg K): cp = R gamma/(gamma - 1)."""
    return CaloricallyPerfectGas(cp=R_ISA * GAMMA / (GAMMA - 1.0), gamma=GAMMA)


@pytest.fixture(scope="module")
def tpg():
    return ThermallyPerfectGas(hc_ratio=1.92)


def _assert_close_scaled(actual, desired, rtol, err_msg=""):
    """Relative check with an absolute floor of rtol times the largest reference magnitude."""
    desired = np.asarray(desired)
    np.testing.assert_allclose(actual, desired, rtol=rtol, atol=rtol * np.max(np.abs(desired)),
                               err_msg=err_msg)


# -------------------------------------------------------------------------------------------------
# Calorically perfect gas: NACA Report 1135
# -------------------------------------------------------------------------------------------------

def test_static_from_total_naca_1135(cpg):
    """Source: NACA Report 1135, Ames Research Staff, 1953 (isentropic flow of a perfect gas, eqs. 43-45)."""
    g, R = GAMMA, R_ISA
    Tt, Pt = 288.15, 101325.0
    M = np.linspace(0.0, 1.0, 101)
    s = static_from_total(cpg, Tt * np.ones_like(M), Pt, M, 0.0)
    fac = 1.0 + 0.5 * (g - 1.0) * M**2
    np.testing.assert_allclose(s.Ts / Tt, 1.0 / fac, rtol=RTOL_EXACT)  # NACA 1135
    np.testing.assert_allclose(s.Ps / Pt, fac ** (-g / (g - 1.0)), rtol=RTOL_EXACT)  # NACA 1135
    rho_t = Pt / (R * Tt)
    np.testing.assert_allclose(s.rho / rho_t, fac ** (-1.0 / (g - 1.0)), rtol=RTOL_EXACT)  # NACA 1135
    np.testing.assert_allclose(s.a, np.sqrt(g * R * s.Ts), rtol=RTOL_EXACT)
    np.testing.assert_allclose(s.V, M * s.a, rtol=RTOL_EXACT)
    # mass-flow function W sqrt(Tt)/(A Pt) = sqrt(g/R) M fac^(-(g+1)/(2(g-1))) (from NACA 1135 relations)
    mfp = np.sqrt(g / R) * M * fac ** (-(g + 1.0) / (2.0 * (g - 1.0)))
    np.testing.assert_allclose(s.W_per_A * np.sqrt(Tt) / Pt, mfp, rtol=RTOL_EXACT)


# field-reference 7.2: (Mach, MFP in kg K^0.5/(N s)), gamma 1.4, R 287.05287.
MFP_TABLE = [(0.50, 0.030164), (0.55, 0.032204), (0.60, 0.034013), (0.65, 0.035588), (0.70, 0.036930),
             (1.00, 0.040415)]


@pytest.mark.parametrize("Tt, Pt", [(288.15, 101325.0), (250.0, 30000.0), (800.0, 3.0e6)])
def test_mass_flow_function_field_reference(cpg, Tt, Pt):
    """Source: field-reference 7.2 (mass-flow function check values, computed there)."""
    M = np.array([m for m, _ in MFP_TABLE])
    s = static_from_total(cpg, Tt, Pt, M, 0.0)
    np.testing.assert_allclose(s.W_per_A * np.sqrt(Tt) / Pt, [v for _, v in MFP_TABLE], rtol=0,
                               atol=ATOL_MFP_TABLE)


def test_corrected_flow_per_area_field_reference(cpg):
    """Source: field-reference 7.2 corrected flow per area at ISA sea-level reference (kg/(s m^2))."""
    M = np.array([0.50, 0.55, 0.60, 0.65, 0.70, 1.00])
    s = static_from_total(cpg, 288.15, 101325.0, M, 0.0)
    np.testing.assert_allclose(s.W_per_A, [180.05, 192.23, 203.03, 212.43, 220.44, 241.24], rtol=0,
                               atol=ATOL_FLOW_PER_AREA_TABLE)


def test_sonic_calorically_perfect(cpg):
    """Source: NACA Report 1135 critical ratios: Tt/T* = (g+1)/2, Pt/P* = ((g+1)/2)^(g/(g-1))."""
    g = GAMMA
    Tt = np.array([250.0, 288.15, 1500.0])
    Pt = np.array([3e4, 101325.0, 2e6])
    s = sonic(cpg, Tt, Pt, 0.0)
    np.testing.assert_allclose(s.V / s.a, 1.0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(Tt / s.Ts, (g + 1.0) / 2.0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(Pt / s.Ps, ((g + 1.0) / 2.0) ** (g / (g - 1.0)), rtol=RTOL_EXACT)
    assert ((g + 1.0) / 2.0) ** (g / (g - 1.0)) == pytest.approx(1.892929, rel=1e-6)  # NACA 1135 table


@pytest.mark.parametrize("far", [0.0, 0.03])
def test_sonic_is_maximum_flow_thermally_perfect(tpg, far):
    """Choked flow is the maximum of rho V along the isentrope: d(rho V)/dM = 0 at M = 1.

    Derivation: with dh = dp/rho and a^2 = (dp/drho)_s = gamma(T) R T for a thermally perfect gas,
    d ln(rho V) = (1 - M^2) dV/V. Checked both through the analytic derivative and by sampling.
    """
    Tt = np.array([250.0, 800.0, 1800.0])
    s = sonic(tpg, Tt, 2e5, far)
    np.testing.assert_allclose(s.V / s.a, 1.0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(s.d["W_per_A", "Mach"], 0.0, atol=1e-10 * np.max(s.W_per_A))
    M = np.linspace(0.9, 1.0, 21)
    for t, w in zip(Tt, s.W_per_A, strict=True):
        assert np.all(static_from_total(tpg, t, 2e5, M[:-1], far).W_per_A < w)


# -------------------------------------------------------------------------------------------------
# Thermally perfect gas vs an independent Cantera calculation
# -------------------------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def ct_solution():
    ct = importlib.import_module("cantera")
    spc = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    return ct.Solution(thermo="ideal-gas", species=[spc[s] for s in SPECIES])


def _cantera_static(sol, Y, Tt, Pt, M):
    """Static state by energy and entropy conservation, with Cantera's ideal-gas mixture properties."""
    sol.TPY = Tt, Pt, Y
    ht, st = sol.enthalpy_mass, sol.entropy_mass

    def sound_speed_sq(T):
        sol.TPY = T, Pt, Y
        return sol.cp_mass / sol.cv_mass * (sol.cp_mass - sol.cv_mass) * T  # ideal gas: a^2 = gamma R T

    def energy(T):
        a2 = sound_speed_sq(T)
        sol.TPY = T, Pt, Y
        return ht - sol.enthalpy_mass - 0.5 * M**2 * a2

    Ts = brentq(energy, 150.0, Tt, xtol=1e-13, rtol=4 * np.finfo(float).eps)

    def entropy(lnP):
        sol.TPY = Ts, np.exp(lnP), Y
        return sol.entropy_mass - st

    lnPs = brentq(entropy, np.log(Pt) - 3.0, np.log(Pt) + 1e-9, xtol=1e-14, rtol=4 * np.finfo(float).eps)
    sol.TPY = Ts, np.exp(lnPs), Y
    a = np.sqrt(sound_speed_sq(Ts))
    sol.TPY = Ts, np.exp(lnPs), Y
    return {"Ts": Ts, "Ps": np.exp(lnPs), "a": a, "V": M * a, "rho": sol.density_mass,
            "W_per_A": sol.density_mass * M * a}


@pytest.mark.parametrize("far", [0.0, 0.02, 0.05])
@pytest.mark.parametrize("Tt", [250.0, 288.15, 800.0, 1500.0, 2200.0])
def test_static_from_total_matches_cantera(tpg, ct_solution, Tt, far):
    """Source: independent solution with Cantera (nasa_gas.yaml, NASA TM-4513 data): h(Tt) = h(Ts) + V^2/2,
    V = M sqrt(cp/cv R Ts), s(Ts, Ps) = s(Tt, Pt)."""
    Y = {s: (tpg.air_mass_fractions[s] + far * tpg.fuel_mass_change[s]) / (1.0 + far) for s in SPECIES}
    Pt = 150000.0
    for M in (0.1, 0.5, 0.8, 1.0):
        ref = _cantera_static(ct_solution, Y, Tt, Pt, M)
        s = static_from_total(tpg, Tt, Pt, M, far)
        for key, val in ref.items():
            assert getattr(s, key) == pytest.approx(val, rel=RTOL_CANTERA), (key, M)


# -------------------------------------------------------------------------------------------------
# Inverses
# -------------------------------------------------------------------------------------------------

def _random_flow_states(n=6):
    rng = np.random.default_rng(SEED)
    return {"Tt": rng.uniform(250.0, 2000.0, n), "Pt": rng.uniform(2e4, 3e6, n),
            "Mach": rng.uniform(0.05, 0.95, n), "far": rng.uniform(0.0, 0.05, n)}


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_total_from_static_round_trip(model, tpg, cpg):
    gas = tpg if model == "tpg" else cpg
    x = _random_flow_states(50)
    s = static_from_total(gas, **x)
    t = total_from_static(gas, s.Ts, s.Ps, x["Mach"], x["far"])
    np.testing.assert_allclose(t.Tt, x["Tt"], rtol=RTOL_ROUND_TRIP)
    np.testing.assert_allclose(t.Pt, x["Pt"], rtol=RTOL_ROUND_TRIP)
    np.testing.assert_allclose(t.V, s.V, rtol=RTOL_ROUND_TRIP)
    np.testing.assert_allclose(t.a, s.a, rtol=RTOL_ROUND_TRIP)


def test_total_from_static_supersonic_naca_1135(cpg):
    """Source: NACA Report 1135 total-to-static ratios hold for any Mach number."""
    g = GAMMA
    M = np.array([0.0, 0.5, 1.0, 1.5, 2.0])
    t = total_from_static(cpg, 220.0, 25000.0, M, 0.0)
    fac = 1.0 + 0.5 * (g - 1.0) * M**2
    np.testing.assert_allclose(t.Tt / 220.0, fac, rtol=RTOL_EXACT)
    np.testing.assert_allclose(t.Pt / 25000.0, fac ** (g / (g - 1.0)), rtol=RTOL_EXACT)


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_mach_from_flow_per_area_inverts_static_from_total(model, tpg, cpg):
    gas = tpg if model == "tpg" else cpg
    x = _random_flow_states(50)
    x["Mach"][:3] = [0.01, 0.5, 0.99]
    s = static_from_total(gas, **x)
    m = mach_from_flow_per_area(gas, x["Tt"], x["Pt"], s.W_per_A, x["far"])
    np.testing.assert_allclose(m.Mach, x["Mach"], rtol=RTOL_ROUND_TRIP)


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_mach_from_flow_per_area_at_choked_raises(model, tpg, cpg):
    """The choked flow itself has no subsonic solution with a finite derivative: clear error."""
    gas = tpg if model == "tpg" else cpg
    choked = sonic(gas, 300.0, 1e5, 0.0).W_per_A
    with pytest.raises(ValueError, match=r"1 = choked"):
        mach_from_flow_per_area(gas, 300.0, 1e5, choked, 0.0)


def test_mach_from_flow_per_area_above_choked_raises(tpg):
    choked = sonic(tpg, 300.0, 1e5, 0.0).W_per_A
    with pytest.raises(ValueError, match=r"flow per unit area / choked flow per unit area \(1 = choked\) = 1.01 is "
                                         r"outside the valid range"):
        mach_from_flow_per_area(tpg, 300.0, 1e5, 1.01 * choked, 0.0)


@pytest.mark.parametrize("model, ratio", [("tpg", 0.99999), ("tpg", 0.9999999), ("cpg", 0.99999)])
def test_mach_from_flow_per_area_near_choked(model, ratio, tpg, cpg):
    gas = tpg if model == "tpg" else cpg
    choked = sonic(gas, 300.0, 1e5, 0.0).W_per_A
    m = mach_from_flow_per_area(gas, 300.0, 1e5, ratio * choked, 0.0)
    assert static_from_total(gas, 300.0, 1e5, m.Mach, 0.0).W_per_A == pytest.approx(ratio * choked,
                                                                                       rel=RTOL_ROUND_TRIP)


# -------------------------------------------------------------------------------------------------
# Derivatives vs complex step (6 random points, vectorized)
# -------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_static_from_total_derivatives(model, tpg, cpg, check_derivatives_vs_complex_step):
    gas = tpg if model == "tpg" else cpg
    x = _random_flow_states()
    check_derivatives_vs_complex_step(lambda *a: static_from_total(gas, *a), x,
                                      ("Ts", "Ps", "V", "a", "rho", "W_per_A"), rtol=RTOL_DERIV, check_values=True)


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_total_from_static_derivatives(model, tpg, cpg, check_derivatives_vs_complex_step):
    gas = tpg if model == "tpg" else cpg
    rng = np.random.default_rng(SEED + 1)
    n = 6
    x = {"Ts": rng.uniform(220.0, 1200.0, n), "Ps": rng.uniform(2e4, 3e6, n),
         "Mach": rng.uniform(0.05, 1.5, n), "far": rng.uniform(0.0, 0.05, n)}
    check_derivatives_vs_complex_step(lambda *a: total_from_static(gas, *a), x, ("Tt", "Pt", "V", "a"),
                                      rtol=RTOL_DERIV, check_values=True)


@pytest.mark.parametrize("model", ["tpg", "cpg"])
def test_mach_from_flow_per_area_derivatives(model, tpg, cpg, check_derivatives_vs_complex_step):
    gas = tpg if model == "tpg" else cpg
    x = _random_flow_states()
    rng = np.random.default_rng(SEED + 2)
    choked = sonic(gas, x["Tt"], x["Pt"], x["far"]).W_per_A
    args = {"Tt": x["Tt"], "Pt": x["Pt"], "W_per_A": rng.uniform(0.1, 0.95, 6) * choked, "far": x["far"]}
    check_derivatives_vs_complex_step(lambda *a: mach_from_flow_per_area(gas, *a), args, ("Mach",),
                                      rtol=RTOL_DERIV, check_values=True)


def test_sonic_derivatives(tpg):
    x = _random_flow_states()
    del x["Mach"]
    res = sonic(tpg, **x)
    for name in x:
        cargs = {k: np.asarray(v, dtype=complex) for k, v in x.items()}
        cargs[name] = cargs[name] + 1j * CS_STEP
        cs = sonic(tpg, **cargs)
        for out in ("Ts", "Ps", "W_per_A"):
            _assert_close_scaled(res.d[out, name], np.imag(getattr(cs, out)) / CS_STEP, RTOL_DERIV,
                                 err_msg=f"d{out}/d{name}")


# -------------------------------------------------------------------------------------------------
# Bad input
# -------------------------------------------------------------------------------------------------

def test_bad_flow_inputs(tpg):
    with pytest.raises(ValueError, match=r"Mach number = 1.2 is outside the valid range \(from 0 up to 1\)"):
        static_from_total(tpg, 300.0, 1e5, 1.2, 0.0)
    with pytest.raises(ValueError, match=r"total pressure = 0 Pa is outside the valid range \(above 0 Pa\)"):
        static_from_total(tpg, 300.0, 0.0, 0.5, 0.0)
    with pytest.raises(ValueError, match=r"total temperature = 2500 K is outside the valid range "
                                         r"\(from 200 up to 2400 K\)"):
        static_from_total(tpg, 2500.0, 1e5, 0.5, 0.0)
    with pytest.raises(ValueError, match=r"static temperature = .* K is outside the valid range "
                                         r"\(from 200 up to 2400 K\)"):
        static_from_total(tpg, 210.0, 1e5, 0.9, 0.0)
    with pytest.raises(ValueError, match=r"fuel-air ratio = -0.01 is outside the valid range"):
        static_from_total(tpg, 300.0, 1e5, 0.5, -0.01)
    with pytest.raises(ValueError, match=r"Mach number = -0.1 is outside the valid range \(from 0\)"):
        total_from_static(tpg, 300.0, 1e5, -0.1, 0.0)
    with pytest.raises(ValueError,
                       match=r"static pressure = -1 Pa is outside the valid range \(above 0 Pa\)"):
        total_from_static(tpg, 300.0, -1.0, 0.5, 0.0)
    with pytest.raises(ValueError,
                       match=r"temperature from total enthalpy = .* K is outside the valid range"):
        total_from_static(tpg, 1500.0, 1e5, 3.0, 0.0)
    with pytest.raises(ValueError, match=r"flow per unit area = 0 kg/\(s\*m\*\*2\) is outside the valid "
                                         r"range \(above 0 kg/\(s\*m\*\*2\)\)"):
        mach_from_flow_per_area(tpg, 300.0, 1e5, 0.0, 0.0)
