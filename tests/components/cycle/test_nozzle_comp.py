"""Tests for the exhaust nozzle component."""

import itertools

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.nozzle_comp import NozzleComp
from bypassopt.components.gas.flow import sonic
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-11
# Field-reference 4.3 gives V9 and V19 to 6 significant digits.
RTOL_FIELD_REF = 3e-6
# Hand calculation of the choked nozzle with a calorically perfect gas (closed-form relations).
RTOL_HAND = 1e-12
# Offset of the test points from the choking pressure ratio, and the agreement required of value and
# slope on either side (the second derivative jumps at choking, so slopes differ by O(offset)).
CHOKE_OFFSET = 1e-7
RTOL_CONTINUITY = 1e-5
PARTIALS_TOL = 1e-10
SEED = 4242

STATIONS = {"core": ("7", "8", "core_nozzle"), "bypass": ("17", "18", "bypass_nozzle")}


def _problem(nn=1, gas=None, stream="core", expansion="convergent"):
    si, st, _ = STATIONS[stream]
    kwargs = {} if gas is None else {"gas": gas}
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("noz", NozzleComp(num_nodes=nn, stream=stream, expansion=expansion,
                                               station_in=si, station_throat=st, **kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def _set(prob, Tt, Pt, Ps0, far=None, Cv=1.0, Cd=1.0, stream="core"):
    si, _, px = STATIONS[stream]
    prob.set_val(f"Tt{si}", Tt, units="K")
    prob.set_val(f"Pt{si}", Pt, units="Pa")
    prob.set_val("Ps0", Ps0, units="Pa")
    if far is not None:
        prob.set_val(f"FAR{si}", far)
    prob.set_val(f"{px}_velocity_coeff", Cv)
    prob.set_val(f"{px}_discharge_coeff", Cd)


@pytest.mark.parametrize("expansion", ("convergent", "full"))
@pytest.mark.parametrize("gamma, cp", ((1.4, 1004.0), (1.33, 1156.0)))
def test_calorically_perfect_full_expansion(expansion, gamma, cp):
    """Fully expanded V = sqrt(2 cp Tt (1 - (Ps0/Pt)^((g-1)/g))): NACA Report 1135 isentropic relations."""
    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    # unchoked pressure ratios only for the convergent nozzle (critical ratio is 1.85-1.89 here)
    npr = np.array([1.05, 1.3, 1.6, 1.8]) if expansion == "convergent" else np.array([1.05, 1.6, 2.5, 6.0])
    Tt, Ps0, Cv, Cd = 700.0, 30000.0, 0.985, 0.97
    prob = _problem(nn=npr.size, gas=gas, expansion=expansion)
    _set(prob, Tt, npr * Ps0, Ps0, far=0.02, Cv=Cv, Cd=Cd)
    prob.run_model()
    k = (gamma - 1.0) / gamma
    R = cp * k
    V = np.sqrt(2.0 * cp * Tt * (1.0 - npr ** (-k)))  # NACA Report 1135 eqs. 43-44 with h_t = h + V^2/2
    Ts = Tt * npr ** (-k)  # NACA Report 1135, eq. 44
    M = np.sqrt(2.0 / (gamma - 1.0) * (npr**k - 1.0))  # NACA Report 1135, eq. 44 inverted
    rho = Ps0 / (R * Ts)
    np.testing.assert_allclose(prob.get_val("V8_full"), V, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Ts8_full"), Ts, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Mach8_full"), M, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("rho8_full"), rho, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Fg8_specific"), Cv * V, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("V8_jet"), Cv * V, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Mach8"), M, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Ps8"), Ps0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("area8_per_flow"), 1.0 / (Cd * rho * V), rtol=RTOL_EXACT)


@pytest.mark.parametrize("gamma, cp", ((1.4, 1004.0), (1.33, 1156.0)))
def test_calorically_perfect_choked(gamma, cp):
    """Choked convergent nozzle: critical ratio ((g+1)/2)^(g/(g-1)), sonic exit (NACA Report 1135)."""
    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    crit = ((gamma + 1.0) / 2.0) ** (gamma / (gamma - 1.0))  # NACA Report 1135, eq. 44 at M = 1
    npr = np.array([crit * 1.001, 2.5, 4.0])
    Tt, Ps0, Cv, Cd = 320.0, 25000.0, 0.99, 0.98
    prob = _problem(nn=npr.size, gas=gas, stream="bypass")
    _set(prob, Tt, npr * Ps0, Ps0, Cv=Cv, Cd=Cd, stream="bypass")
    prob.run_model()
    R = cp * (gamma - 1.0) / gamma
    P_star = npr * Ps0 / crit
    T_star = 2.0 * Tt / (gamma + 1.0)  # NACA Report 1135, eq. 43 at M = 1
    V_star = np.sqrt(gamma * R * T_star)
    rho_star = P_star / (R * T_star)
    np.testing.assert_allclose(prob.get_val("Mach18"), 1.0, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Ps18"), P_star, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("Fg18_specific"),
                               Cv * V_star + (P_star - Ps0) / (rho_star * V_star), rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("area18_per_flow"), 1.0 / (Cd * rho_star * V_star),
                               rtol=RTOL_EXACT)
    # just below the critical ratio the nozzle is unchoked
    prob.set_val("Pt17", crit * 0.999 * Ps0 * np.ones(npr.size))
    prob.run_model()
    assert np.all(prob.get_val("Mach18") < 1.0)
    np.testing.assert_allclose(prob.get_val("Ps18"), Ps0, rtol=RTOL_EXACT)


def test_choked_hand_calculation_velocity_coefficient_on_momentum_only():
    """Choked convergent nozzle, Cv = 0.98: Fg_sp = Cv V* + (p* - p0)/(rho* V*), by hand.

    Sonic state of a calorically perfect gas from the isentropic relations of NACA Report 1135 (eqs. 43
    and 44 at M = 1): T*/Tt = 2/(g+1), p*/Pt = (2/(g+1))^(g/(g-1)), V* = a* = sqrt(g R T*),
    rho* = p*/(R T*). The velocity coefficient scales the momentum term only (textbook definition,
    Walsh & Fletcher, *Gas Turbine Performance*, from memory); the discharge coefficient sets the
    geometric area 1/(Cd rho* V*) and leaves the thrust per unit flow unchanged.
    """
    gamma, cp = 1.4, 1004.5
    R = cp * (gamma - 1.0) / gamma
    Tt, Ps0, npr = 800.0, 30000.0, 2.5
    Pt = npr * Ps0
    T_star = Tt * 2.0 / (gamma + 1.0)  # NACA Report 1135, eq. 43 at M = 1
    p_star = Pt * (2.0 / (gamma + 1.0)) ** (gamma / (gamma - 1.0))  # NACA Report 1135, eq. 44 at M = 1
    V_star = np.sqrt(gamma * R * T_star)  # speed of sound at T*
    rho_star = p_star / (R * T_star)  # perfect-gas law
    pressure_term = (p_star - Ps0) / (rho_star * V_star)  # (p* - p0) A_eff/W, A_eff/W = 1/(rho* V*)

    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    prob = _problem(nn=4, gas=gas)
    Cv = np.array([0.98, 1.0, 0.98, 0.98])
    Cd = np.array([0.97, 0.97, 1.0, 0.9])
    _set(prob, Tt, Pt, Ps0, far=0.02, Cv=Cv, Cd=Cd)
    prob.run_model()
    Fg = prob.get_val("Fg8_specific")
    assert np.all(prob.get_val("Mach8") == 1.0)
    np.testing.assert_allclose(prob.get_val("Ps8"), p_star, rtol=RTOL_HAND)
    np.testing.assert_allclose(Fg, Cv * V_star + pressure_term, rtol=RTOL_HAND)
    np.testing.assert_allclose(prob.get_val("V8_jet"), Fg, rtol=0.0, atol=0.0)
    np.testing.assert_allclose(prob.get_val("area8_per_flow"), 1.0 / (Cd * rho_star * V_star), rtol=RTOL_HAND)
    # Cv = 1 vs 0.98 (same Cd): only the momentum term differs, by 0.02 V*; the pressure term is
    # the same and unscaled
    np.testing.assert_allclose(Fg[1] - Fg[0], 0.02 * V_star, rtol=1e-10)
    np.testing.assert_allclose(Fg - Cv * V_star, pressure_term, rtol=1e-10)
    # Cd does not change the thrust per unit flow
    np.testing.assert_allclose(Fg[2:], Fg[0], rtol=RTOL_HAND)
    # dFg/dCv = V* (the ideal exit velocity), dFg/dCd = 0 (not declared)
    J = prob.compute_totals(of=["Fg8_specific"], wrt=["core_nozzle_velocity_coeff"])
    np.testing.assert_allclose(np.diag(J["Fg8_specific", "core_nozzle_velocity_coeff"]), V_star,
                               rtol=RTOL_HAND)


def test_ideal_turbofan_jet_velocities_field_reference():
    """V19 = 355.261 m/s and V9 = 780.408 m/s of the ideal turbofan of field-reference 4.3.

    Inputs and relations: M0 0.8, T0 216.65 K, gamma 1.4, cp 1004, Tt4 1600 K, pi_c 36, pi_f 1.6,
    alpha 10; ideal-turbofan relations of Mattingly & von Ohain, *Elements of Propulsion*, ch. 5
    (field-reference 4.2); both nozzles fully expanded, no losses.
    """
    cp, gamma, T0, P0, M0 = 1004.0, 1.4, 216.65, 23842.27, 0.8
    Tt4, pi_c, pi_f, alpha = 1600.0, 36.0, 1.6, 10.0
    k = (gamma - 1.0) / gamma
    tau_r = 1.0 + 0.5 * (gamma - 1.0) * M0**2
    tau_f, tau_c, tau_lam = pi_f**k, pi_c**k, Tt4 / T0
    tau_t = 1.0 - tau_r / tau_lam * ((tau_c - 1.0) + alpha * (tau_f - 1.0))
    gas = CaloricallyPerfectGas(cp=cp, gamma=gamma)
    byp = _problem(gas=gas, stream="bypass", expansion="full")
    _set(byp, T0 * tau_r * tau_f, P0 * (tau_r * tau_f) ** (1.0 / k), P0, stream="bypass")
    byp.run_model()
    assert byp.get_val("V18_jet")[0] == pytest.approx(355.261, rel=RTOL_FIELD_REF)  # field-reference 4.3
    core = _problem(gas=gas, stream="core", expansion="full")
    _set(core, Tt4 * tau_t, P0 * (tau_r * tau_c * tau_t) ** (1.0 / k), P0, far=0.0)
    core.run_model()
    assert core.get_val("V8_jet")[0] == pytest.approx(780.408, rel=RTOL_FIELD_REF)  # field-reference 4.3


@pytest.mark.parametrize("Cv", (1.0, 0.99))
@pytest.mark.parametrize("stream, gas_kind", list(itertools.product(("core", "bypass"), ("tpg", "cpg"))))
def test_continuity_at_choking(stream, gas_kind, Cv):
    """Across choking: thrust and exit area continuous; area C1; thrust C1 only for Cv = 1.

    With the velocity coefficient on the momentum term only, the slope of the gross thrust jumps at
    choking by (1 - Cv)/(rho* V*) d(p* - p0)/dx (NozzleComp docstring): zero for Cv = 1, measured and
    checked against that formula for Cv = 0.99 (about 1 % of the slope in Pt and Ps0).
    """
    gas = ThermallyPerfectGas() if gas_kind == "tpg" else CaloricallyPerfectGas(cp=1150.0, gamma=1.33)
    Tt, far = (750.0, 0.02) if stream == "core" else (300.0, 0.0)
    Ps0 = 24000.0
    star = sonic(gas, Tt, 1.0e5, far)
    crit = 1.0e5 / float(star.Ps)
    npr = crit * np.array([1.0 - CHOKE_OFFSET, 1.0 + CHOKE_OFFSET])
    si, st, _ = STATIONS[stream]
    prob = _problem(nn=2, gas=gas, stream=stream)
    _set(prob, Tt, npr * Ps0, Ps0, far=far if stream == "core" else None, Cv=Cv, Cd=0.98, stream=stream)
    prob.run_model()
    mach = prob.get_val(f"Mach{st}")
    assert mach[0] < 1.0 and mach[1] == 1.0  # unchoked, then choked
    fg, area = f"Fg{st}_specific", f"area{st}_per_flow"
    wrts = [f"Pt{si}", "Ps0", f"Tt{si}"] + ([f"FAR{si}"] if stream == "core" else [])
    J = prob.compute_totals(of=[fg, area], wrt=wrts)
    for name in (fg, area):
        val = prob.get_val(name)
        np.testing.assert_allclose(val[0], val[1], rtol=RTOL_CONTINUITY)
    # sonic state at the joint (p* = Ps0) and d(p* - p0)/dx there
    Pt_joint = crit * Ps0
    star = sonic(gas, Tt, Pt_joint, far)
    rho_V = float(star.rho * star.V)
    dp_star = {f"Pt{si}": star.d["Ps", "Pt"], "Ps0": -1.0, f"Tt{si}": star.d["Ps", "Tt"],
               f"FAR{si}": star.d["Ps", "far"]}
    for wrt in wrts:
        x = prob.get_val(wrt)
        # exit area: compared as elasticities (x/y) dy/dx (its Ps0 slope vanishes when choked)
        e_area = np.diag(J[area, wrt]) * x / prob.get_val(area)
        np.testing.assert_allclose(e_area[0], e_area[1], rtol=RTOL_CONTINUITY, atol=RTOL_CONTINUITY)
        # gross thrust: choked minus unchoked slope
        slope = np.diag(J[fg, wrt])
        jump = slope[1] - slope[0]
        expected = (1.0 - Cv) / rho_V * float(np.real(dp_star[wrt]))
        scale = np.max(np.abs(slope))
        np.testing.assert_allclose(jump, expected, rtol=0.0, atol=RTOL_CONTINUITY * scale)
    # slopes in Pt: unchoked Cv Ps0/(rho* V* Pt), choked Ps0/(rho* V* Pt) (NozzleComp docstring)
    slope = np.diag(J[fg, f"Pt{si}"])
    np.testing.assert_allclose(slope, np.array([Cv, 1.0]) * Ps0 / (rho_V * Pt_joint), rtol=RTOL_CONTINUITY)
    # as elasticities 1/gamma* and 1/(Cv gamma*): a jump of (1 - Cv)/(Cv gamma*) (0 for Cv = 1,
    # 0.0075 to 0.0077 for Cv = 0.99 and gamma* = 1.31 to 1.40)
    gamma_star = float(star.rho * star.V**2 / star.Ps)
    elasticity = slope * npr * Ps0 / prob.get_val(fg)
    np.testing.assert_allclose(elasticity[1] - elasticity[0], (1.0 - Cv) / (Cv * gamma_star),
                               rtol=0.0, atol=RTOL_CONTINUITY)


def _random_state(rng, nn, stream, npr):
    Tt = rng.uniform(600.0, 1000.0, nn) if stream == "core" else rng.uniform(290.0, 340.0, nn)
    Ps0 = rng.uniform(2.0e4, 1.0e5, nn)
    far = rng.uniform(0.01, 0.03, nn) if stream == "core" else None
    return dict(Tt=Tt, Pt=npr * Ps0, Ps0=Ps0, far=far, Cv=rng.uniform(0.97, 1.0, nn),
                Cd=rng.uniform(0.95, 1.0, nn), stream=stream)


_COMBOS = list(itertools.product(("core", "bypass"), ("convergent", "full"), ("tpg", "cpg")))


# check_partials warns about declared partials that are zero at a point: the fuel-air ratio with a
# calorically perfect gas, and on one side of choking Mach (choked) or Ps (unchoked). Expected.
@pytest.mark.filterwarnings("ignore::openmdao.utils.om_warnings.DerivativesWarning")
@pytest.mark.parametrize("stream, expansion, gas_kind", _COMBOS)
@pytest.mark.parametrize("nn", (1, 4))
def test_partials(stream, expansion, gas_kind, nn):
    """Analytic partials against complex step on both sides of choking, every option combination.

    The np.where branch point (choking) is 5 % or more away from every test point (pressure ratios
    below 1.75 and above 2.0; the critical ratio is 1.85-1.89), so the complex-step perturbation
    never crosses it.
    """
    gas = ThermallyPerfectGas() if gas_kind == "tpg" else CaloricallyPerfectGas(cp=1150.0, gamma=1.33)
    rng = np.random.default_rng(SEED + nn)
    # bypass pressure ratios stay below 3 so that the fully expanded jet stays above 200 K
    npr_max = 4.0 if stream == "core" else 3.0
    if nn == 1:
        cases = [rng.uniform(1.1, 1.75, 1), rng.uniform(2.0, npr_max, 1)]
    else:
        cases = [np.concatenate([rng.uniform(1.1, 1.75, 2), rng.uniform(2.0, npr_max, 2)])]
    for npr in cases:
        prob = _problem(nn=nn, gas=gas, stream=stream, expansion=expansion)
        _set(prob, **_random_state(rng, nn, stream, npr))
        prob.run_model()
        data = prob.check_partials(method="cs", out_stream=None)
        assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("expansion", ("convergent", "full"))
@pytest.mark.parametrize("npr", (0.9, 1.0, 1.0 + 1e-12))
def test_pressure_ratio_not_above_one_raises(expansion, npr):
    """At or below ambient, and within round-off above it (where the jet-velocity derivatives are 0/0), the nozzle
    raises a range error naming the node instead of returning NaN partials."""
    prob = _problem(nn=2, stream="bypass", expansion=expansion)
    _set(prob, 300.0, np.array([1.5, npr]) * 30000.0, 30000.0, stream="bypass")
    with pytest.raises(InputRangeError, match=rf"nozzle pressure ratio Pt/Ps0 = {npr:g} is not above 1: "
                                              r"the stream cannot produce thrust \(Pt17 = .* at node 1\)"):
        prob.run_model()


@pytest.mark.parametrize("var, val, match", [
    ("Tt7", np.nan, r"Tt7 = nan K is outside the valid range"),
    ("Pt7", np.nan, r"Pt7 = nan Pa is outside the valid range"),
    ("Ps0", 0.0, r"Ps0 = 0 Pa is outside the valid range \(above 0 Pa\)"),
    ("FAR7", -0.01, r"FAR7 = -0.01 is outside the valid range"),
    ("core_nozzle_velocity_coeff", 1.1, r"core_nozzle_velocity_coeff = 1.1 is outside the valid range"),
    ("core_nozzle_discharge_coeff", 0.0, r"core_nozzle_discharge_coeff = 0 is outside the valid range"),
])
def test_bad_inputs_raise(var, val, match):
    prob = _problem()
    prob.set_val(var, val)
    with pytest.raises(InputRangeError, match=match):
        prob.run_model()
