"""Flight-node engine: one design flown at several flight nodes; design reproduction, sparsity, partials, errors."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials, assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.flight_node_engine_group import (NACELLE, THROTTLE_MAX, FlightNodeBroadcastComp,
                                                                 FlightNodeEngineGroup, ThrottleRatingComp)
from bypassopt.components.cycle.flow_capacity_comp import FlowCapacityComp
from bypassopt.components.cycle.multipoint_group import SHARED_INPUTS
from bypassopt.components.cycle.off_design_group import GEOMETRY
from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.interface import ALL_PLAIN

DESIGN_RTOL = 1e-8
PARTIALS_TOL = 1e-10
# Totals through the per-node off-design Newton (normalised balances converged to 1e-8): as test_off_design_group.
TOTALS_TOL = 1e-8
# A re-evaluation at an unchanged converged state (the elements recomputed once): round-off only.
ROUND_OFF = 1e-12
SEED = 15

# Invented demo top of climb (shared/scenario.md, demo twin 170): M 0.78, 10 668 m, ISA+10, 24 kN installed per
# engine; cycle starting point BPR 10, FPR 1.5, OPR 40, Tt4 1650 K.
TOP_OF_CLIMB = {"altitude": 10668.0, "Mach0": 0.78, "dT_isa": 10.0, "thrust_required": 24.0e3,
                "BPR": 10.0, "FPR": 1.5, "OPR": 40.0, "Tt4": 1650.0}
RATING = (1150.0, 1750.0)  # Tt41 at throttle 0 and 1, K (the group's defaults)


@pytest.fixture(scope="module")
def design():
    """Installed demo engine sized at top of climb (its own nacelle drag included), with its flow capacities."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("engine", InstalledEngineGroup(include_mission=False, **ALL_PLAIN), promotes=["*"])
    prob.model.add_subsystem("capacity", FlowCapacityComp(), promotes=["*"])
    prob.setup()
    for k, v in TOP_OF_CLIMB.items():
        prob.set_val(k, v)
    prob.run_model()
    return prob


def build(design, nfn, setting="throttle", **options):
    """Flight-node engine with every per-engine input taken from the design run."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("fn", FlightNodeEngineGroup(num_flight_nodes=nfn, power_setting=setting, **options),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    g = design.get_val
    for k in GEOMETRY:
        prob.set_val(f"{k}_design", g(k))
    for k in ("FPR", "OPR", "BPR", "booster_PR", "Tt4", "Tt2", "Pt2"):
        prob.set_val(f"{k}_design", g(k))
    prob.set_val("Fn_design", g("Fn_required"))
    prob.set_val("hpt_vane_cooling_frac", g("cooling_frac_vane"))
    prob.set_val("hpt_rotor_cooling_frac", g("cooling_frac_rotor"))
    for k in list(SHARED_INPUTS) + list(NACELLE):
        prob.set_val(k, g(k))
    return prob


def design_throttle(design):
    """Throttle whose rated Tt41 is the design point's."""
    return (design.get_val("Tt41")[0] - RATING[0]) / (RATING[1] - RATING[0])


@pytest.mark.parametrize("setting", ["throttle", "thrust"])
def test_design_node_reproduces_design_point(design, setting):
    """At the design flight condition and power, a node returns the installed design point.

    The design point is sized by ``InstalledEngineGroup`` (thrust requirement plus its own nacelle drag); the node
    is matched map-free from the geometry alone (field-reference 12.2 test (a)). Its installed thrust is then the
    top-of-climb requirement (the scenario's 24 kN), and every other output the design's. The other two nodes fly
    elsewhere, so this also checks that nodes do not mix.
    """
    prob = build(design, 3, setting)
    g = design.get_val
    prob.set_val("engine:altitude", [9000.0, TOP_OF_CLIMB["altitude"], 10668.0])
    prob.set_val("engine:Mach0", [0.7, TOP_OF_CLIMB["Mach0"], 0.78])
    prob.set_val("engine:dT_isa", [0.0, TOP_OF_CLIMB["dT_isa"], 0.0])
    if setting == "throttle":
        prob.set_val("engine:throttle", [0.6, design_throttle(design), 0.5])
    else:
        prob.set_val("engine:Fn_required", [22.0e3, g("Fn_required")[0], 18.0e3])
    prob.run_model()
    assert_no_approx_partials(prob.model)
    np.testing.assert_allclose(prob.get_val("engine:installed_thrust")[1], TOP_OF_CLIMB["thrust_required"],
                               rtol=DESIGN_RTOL)
    for k in ("nacelle_drag", "fuel_flow", "TSFC", "Tt41", "Tt3", "Tt4", "W2"):
        np.testing.assert_allclose(prob.get_val(f"engine:{k}")[1], g(k)[0], rtol=DESIGN_RTOL, err_msg=k)
    if setting == "throttle":
        np.testing.assert_allclose(prob.get_val("engine:Fn")[1], g("Fn_required")[0], rtol=DESIGN_RTOL)
    assert abs(prob.get_val("engine:installed_thrust")[0] / TOP_OF_CLIMB["thrust_required"] - 1.0) > 0.01


@pytest.fixture(scope="module")
def random_nodes(design):
    """Three seeded random flight nodes inside the match's range (cruise altitudes, throttle 0.45-0.9)."""
    rng = np.random.default_rng(SEED)
    prob = build(design, 3)
    prob.set_val("engine:altitude", rng.uniform(9000.0, 11500.0, 3))
    prob.set_val("engine:Mach0", rng.uniform(0.7, 0.82, 3))
    prob.set_val("engine:dT_isa", rng.uniform(-5.0, 15.0, 3))
    prob.set_val("engine:throttle", rng.uniform(0.45, 0.9, 3))
    prob.run_model()
    return prob


def test_nodes_are_independent_and_partials_sparse(random_nodes):
    """The Jacobian of per-node outputs w.r.t. per-node inputs is diagonal: nodes are separate flight points."""
    of = ["engine:installed_thrust", "engine:fuel_flow", "engine:Tt3"]
    wrt = ["engine:throttle", "engine:altitude", "engine:Mach0"]
    totals = random_nodes.compute_totals(of=of, wrt=wrt)
    for key, jac in totals.items():
        assert np.all(np.diag(jac) != 0.0), key
        np.testing.assert_array_equal(jac - np.diag(np.diag(jac)), 0.0, err_msg=str(key))


def test_totals_match_complex_step(random_nodes):
    """Per-node and design-input totals (Newton, direct solver) agree with complex step."""
    of = ["engine:installed_thrust", "engine:fuel_flow", "engine:Tt41", "engine:Tt3", "engine:nacelle_drag"]
    wrt = ["engine:throttle", "engine:altitude", "engine:Mach0", "area8_design", "hpc_eff_poly",
           "nacelle_max_diameter", "Tt41_max_rating"]
    data = random_nodes.check_totals(of=of, wrt=wrt, method="cs", out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


def test_partials_of_the_new_components_and_the_drag(random_nodes):
    """Partials of the rating, the broadcast and the per-node drag agree with complex step.

    (The installed thrust is OpenMDAO's ``AddSubtractComp``, which opts out of ``check_partials``; the totals test
    covers it. The match's elements are checked in their own test modules.)
    """
    data = random_nodes.check_partials(method="cs", includes=["fn.rating", "fn.broadcast", "fn.drag"],
                                       out_stream=None)
    assert sorted(data) == ["fn.broadcast", "fn.drag", "fn.rating"]
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_low_power_nodes_near_the_ground(design):
    """Throttle 0 (the default 1150 K rating) at 1500 ft and at sea level: operating points, reached warm.

    The design-point start has none there (the match's continuation finds them; ``OffDesignGroup``); with
    ``warm_start`` a second solve of the same nodes starts at the solution and needs no iteration. Thrust falls
    with throttle at each node and stays positive.
    """
    prob = build(design, 2, warm_start=True)
    assert prob.model.fn.off_design.options["warm_start"]
    prob.set_val("engine:altitude", [457.2, 0.0])
    prob.set_val("engine:Mach0", [0.39, 0.3])
    prob.set_val("engine:dT_isa", [0.0, 15.0])
    prob.set_val("engine:throttle", [0.2, 0.2])
    prob.run_model()
    higher = prob.get_val("engine:installed_thrust").copy()
    prob.set_val("engine:throttle", [0.0, 0.0])
    prob.run_model()
    idle = prob.get_val("engine:installed_thrust").copy()
    assert np.all(idle > 0.0) and np.all(idle < higher)
    np.testing.assert_allclose(prob.get_val("engine:Tt41"), RATING[0], rtol=DESIGN_RTOL)
    prob.run_model()
    assert prob.model.fn.off_design.nonlinear_solver._iter_count == 0
    np.testing.assert_allclose(prob.get_val("engine:installed_thrust"), idle, rtol=ROUND_OFF)


def test_throttle_rating_is_linear():
    """Throttle 0, 1/2, 1 and 1.05 give the two ratings, their mean and the 5 % extrapolation (the rating line)."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("rating", ThrottleRatingComp(num_flight_nodes=4), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("throttle", [0.0, 0.5, 1.0, THROTTLE_MAX])
    prob.set_val("Tt41_min_rating", 1200.0)
    prob.set_val("Tt41_max_rating", 1800.0)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Tt41_required"), [1200.0, 1500.0, 1800.0, 1830.0], rtol=1e-15)
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_broadcast_copies_every_value():
    """Each per-engine value appears unchanged at every node."""
    prob = om.Problem(reports=False)
    quantities = {"a": (2.0, "m", "a length"), "b": (3.0, None, "a ratio")}
    prob.model.add_subsystem("b", FlightNodeBroadcastComp(num_flight_nodes=3, quantities=quantities),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("a", 7.5)
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("a_nodes"), [7.5, 7.5, 7.5])
    np.testing.assert_array_equal(prob.get_val("b_nodes"), [3.0, 3.0, 3.0])
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, value, match", [
    ("throttle", [0.5, 1.2], r"throttle = 1\.2 at node 1 is outside the valid range \(from 0 up to 1\.05\)"),
    ("throttle", [-0.1, 0.5], r"throttle = -0\.1 at node 0 is outside the valid range"),
    ("Tt41_min_rating", 1800.0, r"Tt41_max_rating - Tt41_min_rating = -50 K is outside the valid range"),
])
def test_bad_power_setting_raises(name, value, match):
    """A throttle outside 0-1.05 or a rating with max below min raises an AnalysisError naming value and range."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("rating", ThrottleRatingComp(num_flight_nodes=2), promotes=["*"])
    prob.setup()
    prob.set_val("Tt41_max_rating", 1750.0)
    prob.set_val(name, value)
    with pytest.raises(om.AnalysisError, match=match):
        prob.run_model()


def test_bad_option():
    """No flight nodes is rejected."""
    with pytest.raises(ValueError, match="num_flight_nodes"):
        FlightNodeEngineGroup(num_flight_nodes=0)


def test_promote_star_beside_aircraft_names():
    """Promoted with '*' into a model that has its own altitude, thrust and fuel_flow, nothing collides.

    The model's names keep their own shapes and units (ft, lbf, lb/h) and values; the engine's per-node names
    carry the 'engine:' prefix and the per-engine names are plain (style.md: groups promote their interface).
    """
    prob = om.Problem(reports=False)
    ivc = prob.model.add_subsystem("aircraft", om.IndepVarComp(), promotes=["*"])
    ivc.add_output("altitude", np.array([0.0, 1.0e4, 3.5e4, 3.5e4]), units="ft")
    ivc.add_output("thrust", 2.0e4 * np.ones(4), units="lbf")
    ivc.add_output("fuel_flow", 5.0e3 * np.ones(4), units="lb/h")
    prob.model.add_subsystem("engine", FlightNodeEngineGroup(num_flight_nodes=2), promotes=["*"])
    prob.setup()
    prob.final_setup()
    meta = prob.model.get_io_metadata(iotypes=("input", "output"))
    promoted = {m["prom_name"] for path, m in meta.items() if path.startswith("engine.")}
    assert not promoted & {"altitude", "thrust", "fuel_flow", "TSFC", "Fn", "Mach0"}
    assert {"engine:altitude", "engine:throttle", "engine:fuel_flow", "engine:installed_thrust"} <= promoted
    np.testing.assert_array_equal(prob.get_val("altitude", units="ft"), [0.0, 1.0e4, 3.5e4, 3.5e4])
