"""Tests for the nacelle drag component (component build-up, bypass-jet and core-jet scrubbing)."""

import numpy as np
import openmdao.api as om
import pytest
from bypassopt.components.installation.nacelle_drag_comp import NacelleDragComp
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.validation import InputRangeError

# Field-reference 8.2 quotes 889.9 N (4 significant digits, inputs rounded to 4 digits).
ATOL_FIELD_REF_DRAG = 0.1
# The ISA state at 10 668 m (field-reference 1.3) is given to 6 digits and Re/m to 4 digits.
RTOL_ISA_STATE = 1e-4
RTOL_EXACT = 1e-12
# Field-reference 8.2 prints the compressible Prandtl-Schlichting C_f to 4 significant digits (half a unit in
# the last digit: 0.5e-6 / 0.0028 = 1.8e-4 relative at worst).
RTOL_FIELD_REF_CF = 2e-4
PARTIALS_TOL = 1e-10
SEED = 8675309

# ISA 10 668 m (field-reference 1.3, computed there): T, rho, a; M 0.78.
T_CRUISE, RHO_CRUISE, A_CRUISE, MACH_CRUISE = 218.808, 0.379597, 296.535, 0.78

RANDOM_RANGES = {
    "q0": (4000.0, 15000.0),
    "Mach0": (0.2, 0.85),
    "Re_per_m0": (4e6, 8e6),
    "fan_cowl_length": (2.5, 5.0),
    "nacelle_max_diameter": (1.8, 3.2),
    "fan_cowl_wetted_area": (15.0, 40.0),
    "nacelle_interference_factor": (1.0, 1.3),
    "V18_jet": (200.0, 400.0),
    "rho18_jet": (0.3, 1.3),
    "Ts18_jet": (220.0, 330.0),
    "Mach18_jet": (0.6, 1.2),
    "V8_jet": (400.0, 750.0),
    "rho8_jet": (0.08, 0.6),
    "Ts8_jet": (500.0, 950.0),
    "Mach8_jet": (0.7, 1.4),
    "core_cowl_length": (0.8, 1.6),
    "core_cowl_wetted_area": (2.0, 6.0),
    "plug_length": (0.4, 0.9),
    "plug_wetted_area": (0.3, 1.0),
    "pylon_drag_area": (0.02, 0.08),
}


def _problem(nn=1, **values):
    prob = om.Problem()
    prob.model.add_subsystem("drag", NacelleDragComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def test_fan_cowl_reproduces_field_reference_case():
    """Field-reference 8.2 (computed there): L 4.5 m, D 2.6 m, M 0.78, 10 668 m, S_wet 30 m^2, Q 1,
    Re/m 6.125e6, q 10 154 Pa -> C_f 0.002430, FF 1.2022, D_nac = 889.9 N."""
    prob = _problem(q0=10154.0, Mach0=0.78, Re_per_m0=6.125e6, fan_cowl_length=4.5,
                    nacelle_max_diameter=2.6, fan_cowl_wetted_area=30.0, nacelle_interference_factor=1.0,
                    pylon_drag_area=0.0)
    prob.run_model()
    assert prob.get_val("fan_cowl_drag")[0] == pytest.approx(889.9, abs=ATOL_FIELD_REF_DRAG)
    # Interference factor multiplies the fan-cowl drag only (Raymer's Q, from memory).
    prob.set_val("nacelle_interference_factor", 1.3)
    prob.run_model()
    assert prob.get_val("fan_cowl_drag")[0] == pytest.approx(1.3 * 889.9, abs=1.3 * ATOL_FIELD_REF_DRAG)


def test_jet_path_with_free_stream_state_matches_fan_cowl_path():
    """Consistency of the two paths: giving the jet the free-stream ISA state at 10 668 m
    (field-reference 1.3: T 218.808 K, rho 0.379597, a 296.535 m/s) makes the core-cowl Re/m, from
    Sutherland's law, equal field-reference 8.2's 6.125e6 and the scrubbing drag equal the fan-cowl
    drag without form factor: 889.9 N / 1.2022."""
    V = MACH_CRUISE * A_CRUISE
    q = 0.5 * RHO_CRUISE * V ** 2
    assert q == pytest.approx(10154.0, rel=RTOL_ISA_STATE)  # field-reference 8.2: q = 10 154 Pa
    prob = _problem(q0=q, Mach0=MACH_CRUISE, Re_per_m0=6.125e6, fan_cowl_length=4.5,
                    nacelle_max_diameter=2.6, fan_cowl_wetted_area=30.0,
                    V18_jet=V, rho18_jet=RHO_CRUISE, Ts18_jet=T_CRUISE, Mach18_jet=MACH_CRUISE,
                    core_cowl_length=4.5, core_cowl_wetted_area=30.0, pylon_drag_area=0.0)
    prob.run_model()
    ff = 1.0 + 0.35 / (4.5 / 2.6)  # Raymer nacelle form factor (from memory)
    assert prob.get_val("core_cowl_drag")[0] == pytest.approx(
        prob.get_val("fan_cowl_drag")[0] / ff, rel=RTOL_ISA_STATE)
    assert prob.get_val("core_cowl_drag")[0] == pytest.approx(889.9 / 1.2022, rel=2 * RTOL_ISA_STATE)


# Core-jet state of the demo engine's cruise point (a plausible hot jet: fully expanded core nozzle,
# Tt7 about 823 K, Ps 23.8 kPa) and its plug geometry; only the inputs of the hand calculation below.
CORE_JET = {"V8_jet": 643.59, "rho8_jet": 0.13034, "Ts8_jet": 637.28, "Mach8_jet": 1.2921,
            "plug_length": 0.46483, "plug_wetted_area": 0.30640}
BYPASS_JET = {"V18_jet": 343.73, "rho18_jet": 0.35750, "Ts18_jet": 232.33, "Mach18_jet": 1.1245}


def _plug_drag_by_hand(V, rho, Ts, M, L, S):
    """Field-reference 8.1 written out independently of the component: Sutherland's law with the ISO 2533
    constants (field-reference 1.2), Prandtl-Schlichting C_f = 0.455/(log10 Re)^2.58 (Schlichting,
    Boundary-Layer Theory), Raymer's compressibility factor (1 + 0.144 M^2)^-0.65 (from memory),
    D = 1/2 rho V^2 C_f K_M S."""
    mu = 1.458e-6 * Ts ** 1.5 / (Ts + 110.4)
    Re = rho * V * L / mu
    cf = 0.455 / np.log10(Re) ** 2.58
    return 0.5 * rho * V ** 2 * cf * (1.0 + 0.144 * M ** 2) ** -0.65 * S


def test_plug_is_scrubbed_by_the_core_jet():
    """The plug sits in the core jet: its drag is the field-reference 8.1 scrubbing formula evaluated with
    the core-jet state (station 8), by hand; the bypass-jet state (station 18) does not change it, and the
    core-jet state does not change the core-cowl drag."""
    prob = _problem(**CORE_JET, **BYPASS_JET)
    prob.run_model()
    expected = _plug_drag_by_hand(*(CORE_JET[k] for k in ("V8_jet", "rho8_jet", "Ts8_jet", "Mach8_jet",
                                                         "plug_length", "plug_wetted_area")))
    assert prob.get_val("plug_drag")[0] == pytest.approx(expected, rel=RTOL_EXACT)
    # The same plug in the bypass jet (the former, wrong, wiring) would give a different number: this
    # test distinguishes the two jets (about 2/3 of the core-jet value at this state).
    in_bypass_jet = _plug_drag_by_hand(*(BYPASS_JET[k] for k in ("V18_jet", "rho18_jet", "Ts18_jet",
                                                                "Mach18_jet")),
                                       CORE_JET["plug_length"], CORE_JET["plug_wetted_area"])
    assert abs(in_bypass_jet / expected - 1.0) > 0.2

    plug, core_cowl = prob.get_val("plug_drag")[0], prob.get_val("core_cowl_drag")[0]
    prob.set_val("V18_jet", 1.2 * BYPASS_JET["V18_jet"])
    prob.set_val("Ts18_jet", 1.3 * BYPASS_JET["Ts18_jet"])
    prob.run_model()
    assert prob.get_val("plug_drag")[0] == plug
    assert prob.get_val("core_cowl_drag")[0] != core_cowl
    core_cowl = prob.get_val("core_cowl_drag")[0]
    prob.set_val("V8_jet", 0.8 * CORE_JET["V8_jet"])
    prob.set_val("Ts8_jet", 1.3 * CORE_JET["Ts8_jet"])
    prob.run_model()
    assert prob.get_val("core_cowl_drag")[0] == core_cowl
    assert prob.get_val("plug_drag")[0] != plug


@pytest.mark.parametrize("Re, Mach, cf_field_ref", [(1e6, 0.8, 0.004222), (1e7, 0.85, 0.002817),
                                                    (1e8, 0.0, 0.002128)])
def test_plug_friction_coefficient_matches_field_reference_table(Re, Mach, cf_field_ref):
    """Field-reference 8.2 table (computed there, Prandtl-Schlichting with Raymer's compressibility factor):
    choosing a hot core-jet state and a plug length that give the tabulated Reynolds number, the plug drag
    divided by q8 S_plug is the tabulated C_f."""
    V, rho, Ts = 900.0, 1.0, 700.0
    mu = 1.458e-6 * Ts ** 1.5 / (Ts + 110.4)  # Sutherland, ISO 2533 constants (field-reference 1.2)
    S = 0.4
    prob = _problem(V8_jet=V, rho8_jet=rho, Ts8_jet=Ts, Mach8_jet=Mach, plug_length=Re * mu / (rho * V),
                    plug_wetted_area=S)
    prob.run_model()
    assert prob.get_val("plug_drag")[0] / (0.5 * rho * V ** 2 * S) == pytest.approx(cf_field_ref,
                                                                                    rel=RTOL_FIELD_REF_CF)


def test_pylon_and_total():
    """Pylon drag = q0 (C_D S); total = sum of the four parts (component definition)."""
    prob = _problem(2, **_random_values(2, SEED))
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("pylon_drag"),
                               prob.get_val("q0") * prob.get_val("pylon_drag_area"), rtol=RTOL_EXACT)
    parts = sum(prob.get_val(n) for n in ("fan_cowl_drag", "core_cowl_drag", "plug_drag", "pylon_drag"))
    np.testing.assert_allclose(prob.get_val("nacelle_drag"), parts, rtol=RTOL_EXACT)


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
    ("Mach0", 1.1, r"Mach0 = 1.1 .*from 0 up to 0.95"),
    ("q0", 0.0, r"q0 = 0 Pa .*above 0 up to 100000 Pa"),
    ("Ts18_jet", np.nan, r"Ts18_jet = nan K .*from 100 up to 1000 K"),
    ("Ts8_jet", np.nan, r"Ts8_jet = nan K .*from 100 up to 1200 K"),
    ("V8_jet", 1300.0, r"V8_jet = 1300 m/s .*above 0 up to 1200 m/s"),
    ("Mach8_jet", 2.5, r"Mach8_jet = 2.5 .*from 0 up to 2"),
    ("nacelle_interference_factor", 0.9, r"nacelle_interference_factor = 0.9 .*from 1 up to 2"),
    ("Re_per_m0", 1e4, r"fan-cowl Reynolds number Re_per_m0\*fan_cowl_length = .*from 100000 up to 1e\+09"),
    ("plug_length", 0.01, r"plug Reynolds number .* = .*from 100000 up to 1e\+09"),
])
def test_bad_input_names_variable_and_range(name, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    prob = _problem(2)
    prob.set_val(name, np.array([RANDOM_RANGES[name][0], bad]))
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
