"""OpenConcept adapter: sized engine flown at mission nodes; design reproduction, derivatives, the example's optimum.

Needs OpenConcept (``pip install ".[openconcept]"``: OpenConcept 1.2.6, numpy < 2). Without it the module is
skipped, unless ``BYPASSOPT_REQUIRE_OPENCONCEPT=1`` (CI's OpenConcept step, ``.ci/openconcept``), where a missing
OpenConcept fails.
"""

import importlib.util
import os
from pathlib import Path

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials, assert_check_totals, assert_no_approx_partials

try:
    import openconcept  # noqa: F401
except ImportError:
    if os.environ.get("BYPASSOPT_REQUIRE_OPENCONCEPT") == "1":
        pytest.fail("BYPASSOPT_REQUIRE_OPENCONCEPT=1 but OpenConcept does not import: install the openconcept extra "
                    "(OpenConcept 1.2.6 with numpy < 2) in this environment", pytrace=False)
    pytest.skip("OpenConcept is not installed: pip install '.[openconcept]' (OpenConcept 1.2.6, numpy < 2) to run "
                "the adapter tests", allow_module_level=True)

from bypassopt.adapters.openconcept import AircraftTotalsComp, TurbofanPropulsionSystem, TurbofanSizingGroup

ROOT = Path(__file__).resolve().parents[2]
DESIGN_RTOL = 1e-8
PARTIALS_TOL = 1e-10
TOTALS_TOL = 1e-8
# First-order optimality of SLSQP's answer (tol 1e-8 on the scaled objective): the norm of the Lagrangian gradient
# over that of the objective's gradient, design variables measured in their bound ranges (common practice).
KKT_TOL = 1e-3
SEED = 1515
# Invented demo top of climb (shared/scenario.md): 10 668 m, M 0.78, ISA+10, 24 kN installed per engine.
TOP_OF_CLIMB = {"fltcond|h": 10668.0, "fltcond|M": 0.78, "fltcond|dT_isa": 10.0}
THRUST_PER_ENGINE = 24.0e3
RATING = ("ac|propulsion|engine|Tt41_min_rating", "ac|propulsion|engine|Tt41_max_rating")


def load_example():
    """The example module examples/openconcept_mission.py (not a package: loaded from its path)."""
    spec = importlib.util.spec_from_file_location("openconcept_mission", ROOT / "examples" / "openconcept_mission.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def build_engine(nn=3):
    """The sizing group and one phase's propulsion system side by side, joined by their ac|propulsion| names."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("sizing", TurbofanSizingGroup(), promotes=["*"])
    prob.model.add_subsystem("phase", TurbofanPropulsionSystem(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def design_throttle(prob):
    """Throttle whose rated Tt41 is the top-of-climb design point's."""
    lo, hi = (float(prob.get_val(k)[0]) for k in RATING)
    return (float(prob.get_val("ac|propulsion|design|Tt41")[0]) - lo) / (hi - lo)


@pytest.fixture(scope="module")
def engine():
    """Demo engine sized at top of climb, flown at the design node and two other nodes."""
    prob = build_engine()
    prob.run_model()  # size first: the design node's throttle follows from the design Tt41
    for k, v in TOP_OF_CLIMB.items():
        prob.set_val(k, [v, v, v])
    prob.set_val("fltcond|h", [10668.0, 9500.0, 10668.0])
    prob.set_val("fltcond|M", [0.78, 0.74, 0.78])
    prob.set_val("throttle", [design_throttle(prob), 0.55, 0.5])
    prob.run_model()
    return prob


def test_design_node_reproduces_design_point(engine):
    """At the top-of-climb condition and the design Tt41, a mission node returns the sized design point.

    Aircraft totals: the thrust of both engines is twice the scenario's 24 kN (installed, the nacelle drag booked);
    the fuel flow twice the design point's (field-reference 12.2 test (a), through the adapter's names).
    """
    g = engine.get_val
    assert_no_approx_partials(engine.model)
    np.testing.assert_allclose(g("thrust")[0], 2 * THRUST_PER_ENGINE, rtol=DESIGN_RTOL)
    np.testing.assert_allclose(g("fuel_flow")[0], 2 * g("multipoint.design:fuel_flow")[0], rtol=DESIGN_RTOL)
    for k in ("Tt41", "Tt3"):
        np.testing.assert_allclose(g(f"engine.engine:{k}")[0], g(f"ac|propulsion|design|{k}")[0],
                                   rtol=DESIGN_RTOL, err_msg=k)
    np.testing.assert_allclose(g("engine.engine:nacelle_drag")[0], g("drag.nacelle_drag")[0], rtol=DESIGN_RTOL)
    assert g("thrust")[1] > g("thrust")[2]  # lower and slower at a higher throttle: more thrust


def test_totals_through_sizing_and_nodes_match_complex_step(engine):
    """Node totals w.r.t. the framework's inputs and the cycle choices (through the sizing) agree with complex step."""
    wrt = ["throttle", "fltcond|h", "fltcond|M", "fltcond|dT_isa", "ac|propulsion|engine|BPR",
           "ac|propulsion|engine|FPR", "ac|propulsion|engine|OPR", "ac|propulsion|design|thrust"]
    data = engine.check_totals(of=["thrust", "fuel_flow", "ac|propulsion|clearance_margin", "ac|propulsion|mass"],
                               wrt=wrt, method="cs", out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


def test_per_node_partials_match_complex_step():
    """Partials of the adapter's aircraft totals and the flight-node components at seeded random nodes."""
    rng = np.random.default_rng(SEED)
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("phase", TurbofanPropulsionSystem(num_nodes=3), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("fltcond|h", rng.uniform(9500.0, 11000.0, 3))
    prob.set_val("fltcond|M", rng.uniform(0.72, 0.8, 3))
    prob.set_val("throttle", rng.uniform(0.5, 0.9, 3))
    prob.run_model()
    data = prob.check_partials(method="cs", includes=["phase.totals", "phase.engine.rating", "phase.engine.broadcast",
                                                      "phase.engine.drag"], out_stream=None)
    assert len(data) == 4
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_aircraft_totals_count_engines():
    """Three engines: three times each per-engine value."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("t", AircraftTotalsComp(num_nodes=2, num_engines=3,
                                                     quantities={"thrust": ("engine_thrust", "N", "thrust")}),
                             promotes=["*"])
    prob.setup()
    prob.set_val("engine_thrust", [1.0e4, 2.5e4])
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("thrust"), [3.0e4, 7.5e4])


def test_node_without_operating_point_raises():
    """A rating below the map-free match's lowest power raises an AnalysisError naming the cause, not NaN.

    Throttle 0 on an 850 K rating at sea level, M 0.3: the match's lowest power there is about Tt41 = 950 K
    (the core nozzle pressure ratio falls to 1, and Tt4 reaches the burner's 1000 K; ``OffDesignGroup``,
    measured), so neither the design start nor the continuation finds an operating point. The default rating's
    throttle 0 (1150 K) is an operating point there.
    """
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("phase", TurbofanPropulsionSystem(num_nodes=1), promotes=["*"])
    prob.setup()
    prob.set_val("fltcond|h", 0.0)
    prob.set_val("fltcond|M", 0.3)
    prob.set_val("throttle", 0.0)
    prob.run_model()
    assert prob.get_val("thrust")[0] > 0.0
    prob.set_val(RATING[0], 850.0)
    with pytest.raises(om.AnalysisError, match="Continuation in Tt41_required from the corrected design point"):
        prob.run_model()


def test_promote_star_beside_aircraft_names():
    """Both groups promoted with '*' next to a model's own altitude, thrust and fuel_flow: no collision.

    The sizing group promotes only ac|propulsion| names; the propulsion system promotes the framework's per-node
    thrust and fuel_flow, which here feed the aircraft's consumer, and reads fltcond|h, not the model's altitude.
    """
    nn = 3
    prob = om.Problem(reports=False)
    ivc = prob.model.add_subsystem("aircraft", om.IndepVarComp(), promotes=["*"])
    ivc.add_output("altitude", np.array([3.5e4, 3.0e4, 2.6e4]), units="ft")
    ivc.add_output("fltcond|h", np.array([10668.0, 9144.0, 8000.0]), units="m")
    prob.model.add_subsystem("sizing", TurbofanSizingGroup(), promotes=["*"])
    prob.model.add_subsystem("phase", TurbofanPropulsionSystem(num_nodes=nn), promotes=["*"])
    consumer = AircraftTotalsComp(num_nodes=nn, num_engines=1, quantities={
        "thrust_copy": ("thrust", "lbf", "thrust"), "fuel_copy": ("fuel_flow", "lb/h", "fuel flow")})
    prob.model.add_subsystem("consumer", consumer, promotes=["*"])
    prob.setup()
    prob.final_setup()
    meta = prob.model.get_io_metadata(iotypes=("input", "output"))
    from_sizing = {m["prom_name"] for path, m in meta.items() if path.startswith("sizing.")}
    assert all(n.startswith("ac|propulsion|") or "." in n for n in from_sizing)  # else reachable by path only
    assert not from_sizing & {"altitude", "thrust", "fuel_flow", "TSFC", "payload"}
    from_phase = {m["prom_name"] for path, m in meta.items() if path.startswith("phase.")}
    assert {"thrust", "fuel_flow", "throttle", "fltcond|h"} <= from_phase
    assert "altitude" not in from_phase


@pytest.fixture(scope="module")
def example():
    """The example's mission problem, run at the scenario's start and then optimised (SLSQP)."""
    module = load_example()
    prob = module.build_problem(optimize=True, force_alloc_complex=True)
    prob.run_model()
    start = module.limit_margins(prob)
    prob.run_driver()
    return module, prob, start


def test_optimisation_converges_with_active_limits(example):
    """SLSQP converges to a feasible point that satisfies the KKT conditions, and the active limits are named.

    Independent of the optimizer's own stopping test: the Lagrangian gradient from the analytic totals, with
    non-negative multipliers of the active limits (Nocedal & Wright, *Numerical Optimization*, theorem 12.1).
    The scenario's start violates the clearance limit (a 1.96 m fan), so at least one limit must bind.
    """
    module, prob, start = example
    assert start["ac|propulsion|clearance_margin"][2] < 0.0
    assert prob.driver.optimizer_result.success, prob.driver.optimizer_result.message
    margins = module.limit_margins(prob)
    assert all(m >= -module.ACTIVE_TOL for _, _, m in margins.values()), margins
    active, gradient = module.kkt_check(prob)
    assert active, "no active limit or bound named at the optimum"
    assert set(active) <= set(module.LIMITS) | {f"{k} {b} bound" for k in module.DESIGN_VARIABLES
                                                for b in ("lower", "upper")}
    assert all(lam >= 0.0 for lam in active.values()), active
    assert gradient < KKT_TOL
    # the flown cruise agrees with Breguet's closed form at its own mean TSFC, L/D and speed (jet Breguet,
    # field-reference 11.1): a check of OpenConcept's integration of the engine's fuel flow, to 0.5 %
    summary = module.report(prob)
    np.testing.assert_allclose(summary["breguet_flown_cruise"], summary["flown"]["cruise"]["fuel"], rtol=5e-3)
    # and the example's closed form reproduces MissionFuelComp's cruise fuel from the same inputs
    b = summary["breguet"]
    np.testing.assert_allclose(module.breguet_cruise_fuel(b["cruise_end_mass"], module.DESIGN_RANGE, b["TSFC"],
                                                          b["speed"], module.LIFT_TO_DRAG), b["cruise_fuel"],
                               rtol=1e-12)


def test_example_totals_match_complex_step(example):
    """Mission fuel and the limits w.r.t. BPR, FPR, OPR at the optimum: analytic (Newton, direct) vs complex step."""
    module, prob, _ = example
    assert_no_approx_partials(prob.model)
    data = prob.check_totals(of=[module.MISSION_FUEL] + list(module.LIMITS),
                             wrt=[f"ac|propulsion|engine|{k}" for k in module.DESIGN_VARIABLES], method="cs",
                             out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


# Choked-vane validity of the map-free match: turbine expansion ratios above about 1.85 (OffDesignGroup docstring).
CHOKED_VANE_RATIO = 1.85
# The framework's throttle balance bounds (OpenConcept 1.2.6, mission/phases.py).
THROTTLE_BOUNDS = (0.01, 1.05)
# Descent end: OpenConcept's descent duration balances the final altitude to takeoff|h (its Newton's tolerance).
ALTITUDE_ATOL = 0.1


def test_example_flies_the_full_mission_with_the_engine_at_every_node(example):
    """At the optimum the aircraft climbs from 1500 ft, cruises, descends to 1500 ft, its engine matched at each node.

    Every node of the three phases is an off-design match of the sized engine inside the map-free method's range:
    throttle strictly inside the framework's balance bounds (so no node sits on a bound), Tt41 at least the idle
    rating, both turbines' expansion ratios above 1.85 (vanes choked) and the core stream above ambient pressure.
    """
    module, prob, _ = example
    g = prob.get_val
    assert g("mission.climb.fltcond|h", units="m")[0] == pytest.approx(module.TERMINAL_ALTITUDE)
    assert g("mission.climb.fltcond|h", units="m")[-1] == pytest.approx(module.CRUISE_ALTITUDE, abs=ALTITUDE_ATOL)
    assert g("mission.descent.fltcond|h", units="m")[-1] == pytest.approx(module.TERMINAL_ALTITUDE, abs=ALTITUDE_ATOL)
    for phase in ("climb", "cruise", "descent"):
        node = f"mission.{phase}.engine.off_design."
        throttle = g(f"mission.{phase}.throttle")
        assert np.all((throttle > THROTTLE_BOUNDS[0]) & (throttle < THROTTLE_BOUNDS[1])), (phase, throttle)
        assert np.all(g(f"mission.{phase}.engine.engine:Tt41", units="K") >= module.TT41_IDLE), phase
        assert np.all(g(node + "Pt45") / g(node + "Pt5") > CHOKED_VANE_RATIO), phase
        assert np.all(g(node + "Pt41") / g(node + "Pt44") > CHOKED_VANE_RATIO), phase
        assert np.all(g(node + "Pt7") > g(node + "Ps0")), phase
    assert np.min(g("mission.descent.throttle")) < 0.1  # the descent does reach low power near the ground
