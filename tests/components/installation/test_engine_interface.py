"""Interface-only promotion of the installed engine groups (``components.interface.InterfaceGroup``).

Style rule (shared/style.md, "groups promote their documented interface only"): a model that embeds the group with
``promotes=['*']`` keeps its own ``thrust``, ``fuel_flow`` and ``altitude``, and every station stays reachable by
its path.
"""

import numpy as np
import openmdao.api as om
import pytest

from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.components.interface import ALL_PLAIN, DEFAULT_PREFIX, MODEL_NAME
from bypassopt.problems.best_cycle import GEOMETRY_CONSTRAINTS, MTOW_CONSTRAINT, OBJECTIVES, objective_output
from bypassopt.scenario import constraint_limits, design_point_scenario, load_scenario

GROUPS = {"design_point": InstalledEngineGroup, "multipoint": InstalledMultipointGroup}
#: Aircraft-level names an aircraft framework promotes beside the engine (per flight node, its own units).
AIRCRAFT_NAMES = {"altitude": ("ft", [0.0, 1.0e4, 3.5e4]), "thrust": ("lbf", [3.0e4, 2.0e4, 1.0e4]),
                  "fuel_flow": ("lb/h", [9.0e3, 6.0e3, 4.0e3])}


def _promoted(prob, path, iotype):
    """Names the subsystem at ``path`` promotes to the top (those left by path, with a dot, excluded)."""
    meta = prob.model.get_io_metadata(iotypes=iotype, get_remote=True)
    return {m["prom_name"] for p, m in meta.items() if p.startswith(path + ".") and "." not in m["prom_name"]}


def _embedded(cls, **options):
    """The group promoted with '*' into a model that has its own altitude, thrust and fuel_flow."""
    prob = om.Problem(reports=False)
    ivc = prob.model.add_subsystem("aircraft", om.IndepVarComp(), promotes=["*"])
    for name, (units, value) in AIRCRAFT_NAMES.items():
        ivc.add_output(name, np.array(value), units=units)
    prob.model.add_subsystem("engine", cls(**options), promotes=["*"])
    prob.setup()
    prob.final_setup()
    return prob


@pytest.mark.parametrize("model", sorted(GROUPS))
def test_promote_star_beside_aircraft_names(model):
    """No collision with the aircraft's names; they keep their shapes, units and values; the engine's interface
    carries the prefix."""
    prob = _embedded(GROUPS[model])
    promoted = _promoted(prob, "engine", "input") | _promoted(prob, "engine", "output")
    assert not promoted & set(AIRCRAFT_NAMES)
    assert all(name.startswith(DEFAULT_PREFIX) for name in promoted), sorted(promoted)
    assert {"engine:altitude", "engine:BPR", "engine:fuel_flow", "engine:installed_TSFC"} <= promoted
    for name, (units, value) in AIRCRAFT_NAMES.items():
        np.testing.assert_array_equal(prob.get_val(name, units=units), value)


@pytest.mark.parametrize("model", sorted(GROUPS))
def test_interface_is_free_inputs_and_documented_outputs(model):
    """Interface inputs are exactly the inputs the in-place group leaves to the user (those no output of its own
    drives); interface outputs are the documented ones, and they hold every objective and limit of the best-cycle
    problem, so a user can pose it on the interface alone."""
    cls = GROUPS[model]
    plain = om.Problem(reports=False)
    plain.model.add_subsystem("engine", cls(**ALL_PLAIN), promotes=["*"])
    plain.setup()
    free = _promoted(plain, "engine", "input") - _promoted(plain, "engine", "output")

    prob = _embedded(cls)
    interface_in = {n.removeprefix(DEFAULT_PREFIX) for n in _promoted(prob, "engine", "input")}
    interface_out = {n.removeprefix(DEFAULT_PREFIX) for n in _promoted(prob, "engine", "output")}
    assert interface_in - interface_out == free
    assert interface_out == set(cls().interface_outputs()) | (interface_in & interface_out)

    scenario = load_scenario() if model == "multipoint" else design_point_scenario(load_scenario())
    needed = {objective_output(name, scenario) for name in OBJECTIVES}
    needed |= {var for var, *_ in GEOMETRY_CONSTRAINTS.values()} | {MTOW_CONSTRAINT}
    needed |= {var for var, *_ in constraint_limits(scenario).values()}
    assert needed <= interface_out, sorted(needed - interface_out)


@pytest.mark.parametrize("model", sorted(GROUPS))
def test_all_with_prefix_promotes_every_plain_name(model):
    """``expose='all'`` with a prefix: every variable the in-place group promotes, each under the prefix."""
    cls = GROUPS[model]
    plain = om.Problem(reports=False)
    plain.model.add_subsystem("engine", cls(**ALL_PLAIN), promotes=["*"])
    plain.setup()
    names = _promoted(plain, "engine", "input") | _promoted(plain, "engine", "output")
    prob = _embedded(cls, expose="all", name_prefix="eng|")
    promoted = _promoted(prob, "engine", "input") | _promoted(prob, "engine", "output")
    assert promoted == {"eng|" + n for n in names}


def test_stations_reachable_by_path_with_the_same_values():
    """Interface promotion changes names, not numbers: the design-point group's interface outputs and a station
    reached by its path equal the in-place group's to round-off."""
    design = {"BPR": 10.0, "FPR": 1.55, "OPR": 45.0, "Tt4": 1650.0, "altitude": 10668.0, "dT_isa": 10.0,
              "thrust_required": 24.0e3}  # README's embedding example, SI units
    plain = om.Problem(reports=False)
    plain.model.add_subsystem("engine", InstalledEngineGroup(**ALL_PLAIN), promotes=["*"])
    plain.setup()
    prob = _embedded(InstalledEngineGroup)
    for name, value in design.items():
        plain.set_val(name, value)
        prob.set_val(DEFAULT_PREFIX + name, value)
    plain.run_model()
    prob.run_model()
    for name in ("installed_TSFC", "mission_fuel", "clearance_margin"):
        assert prob.get_val(DEFAULT_PREFIX + name)[0] == pytest.approx(plain.get_val(name)[0], rel=1e-12), name
    for station in ("Tt3", "Pt25", "fan_tip_speed"):
        path = f"engine.{MODEL_NAME}.{station}"
        assert prob.get_val(path)[0] == pytest.approx(plain.get_val(station)[0], rel=1e-12), station
