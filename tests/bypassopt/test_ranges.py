"""One table of valid ranges (``components.ranges.INPUT_RANGES``) for the model and the scenario schema.

Issue "Runs you can trust", item 1: a scenario value that passes validation must be one the model evaluates; limits
across keys (altitude with ISA offset, thrust, nacelle diameter limit) are scenario errors naming the keys, not
errors inside the model naming its internal variables.
"""

import re

import openmdao.api as om
import pytest

from bypassopt.api import build_evaluation_problem
from bypassopt.components.installation import nacelle_drag_comp, nacelle_geometry_comp
from bypassopt.components.mission import mission_fuel_comp
from bypassopt.components.ranges import INPUT_RANGES
from bypassopt.scenario import (FAN_ESTIMATE_TOLERANCE, SCHEMA, ScenarioError, _fan_tip_diameter_estimate,
                                demo_scenario, key_units, validate)

#: (section, key, model input) of every scenario key whose range comes from the table.
RANGED_KEYS = [(section, key, spec["var"]) for section, keys in SCHEMA.items() for key, spec in keys.items()
               if spec["type"] == "number" and spec.get("var") in INPUT_RANGES]


def test_every_table_entry_is_a_scenario_key():
    """The table holds only model inputs a scenario key sets, and each of them once; besides them, the efficiencies
    the installed engine's technology models compute from a key's ``_ref`` level (checked where the cycle reads
    them)."""
    from bypassopt.components.defaults import COMPUTED_ENGINE_INPUTS

    variables = [var for _, _, var in RANGED_KEYS]
    assert sorted(variables) == sorted(k for k in INPUT_RANGES if k not in COMPUTED_ENGINE_INPUTS)
    assert all(f"{k}_ref" in variables for k in COMPUTED_ENGINE_INPUTS if k in INPUT_RANGES)


@pytest.mark.parametrize("section, key, var", RANGED_KEYS, ids=[f"{s}.{k}" for s, k, _ in RANGED_KEYS])
def test_scenario_range_is_the_table_range(section, key, var):
    """Bounds, open ends and units of the scenario key are exactly the table's."""
    spec = SCHEMA[section][key]
    lo, hi, lo_open, hi_open, units = INPUT_RANGES[var]
    assert (spec["lo"], spec["hi"], spec["lo_open"], spec["hi_open"]) == (lo, hi, lo_open, hi_open)
    assert key_units(key) == units


def test_component_input_tables_list_the_shared_ranges():
    """Components that list their input ranges list the table's for the shared inputs (no misleading copies)."""
    for name, _default, lo, hi, inc, units, _desc in mission_fuel_comp._INPUTS + nacelle_drag_comp._INPUTS:
        if name in INPUT_RANGES:
            assert (lo, hi, not inc, units) == tuple(INPUT_RANGES[name][i] for i in (0, 1, 2, 4)), name
            assert not INPUT_RANGES[name][3], name  # these components check closed upper ends
    for name, _default, lo, hi, units, _desc in nacelle_geometry_comp._INPUTS:
        if name in INPUT_RANGES:
            assert (lo, hi, False, False, units) == INPUT_RANGES[name], name


def _ends():
    cases = []
    for section, key, var in RANGED_KEYS:
        lo, hi, lo_open, hi_open, _ = INPUT_RANGES[var]
        eps = 1e-6 * (hi - lo)
        cases.append((section, key, var, lo + eps if lo_open else lo))
        cases.append((section, key, var, hi - eps if hi_open else hi))
    return cases


ENDS = _ends()

#: Known failures: the installed engine's Newton solver (on the problem's root group, which holds the automatic
#: independent variables) moves the input containment_allowance = 0 by round-off to -7e-35 m, which its range
#: check refuses. A solver fix (independent variables outside the Newton group), not a range, is needed.
KNOWN = {}  # (section, key, value): reason, for a known failure marked xfail (strict); none at present


def _end_params():
    out = []
    for section, key, var, value in ENDS:
        reason = KNOWN.get((section, key, value))
        marks = [pytest.mark.xfail(reason=reason, strict=True)] if reason else []
        out.append(pytest.param(section, key, var, value, marks=marks, id=f"{section}.{key}={value:g}"))
    return out


@pytest.mark.parametrize("section, key, var, value", _end_params())
def test_value_at_either_end_of_the_range_is_accepted_by_the_model(section, key, var, value):
    """A value just inside the range, on the demo scenario, raises no range error of that input in the model.

    The scenario may refuse it for a limit across keys (a ScenarioError that is not a range error of the key),
    and the model may find another physical impossibility (an AnalysisError), but neither names the key's model
    input as out of range.
    """
    try:
        scenario = validate({section: {key: value}}, base=demo_scenario())
    except ScenarioError as err:
        own = [e for e in err.errors if e.startswith(f"{section}.{key} =") and "outside the allowed range" in e]
        assert not own, own
        return
    names_var = re.compile(rf"(?<![\w.]){re.escape(var)} = ")
    try:
        build_evaluation_problem(scenario).run_model()
    except om.AnalysisError as err:
        assert not names_var.search(str(err)), str(err)


MEASURED = [
    ({"design_point": {"thrust_required_N": 100.0}}, ["design_point.thrust_required_N", "fan tip diameter"]),
    ({"design_point": {"thrust_required_N": 1.0e6}}, ["design_point.thrust_required_N", "fan tip diameter"]),
    ({"design_point": {"altitude_m": 20000.0, "dT_isa_K": -60.0}},
     ["design_point.altitude_m = 20000", "design_point.dT_isa_K = -60", "static temperature", "200"]),
    ({"limits": {"max_nacelle_diameter_m": 9.0}},
     ["limits.max_nacelle_diameter_m = 9", "installation.nacelle_diameter_ratio", "5 m fan"]),
]


@pytest.mark.parametrize("data, words", MEASURED, ids=["thrust-100N", "thrust-1MN", "20km-ISA-60", "nacelle-9m"])
def test_measured_cases_are_scenario_errors_naming_the_keys(data, words):
    """The cases that passed validation and failed inside the model are refused before any computation."""
    with pytest.raises(ScenarioError) as info:
        validate(data, base=demo_scenario())
    assert len(info.value.errors) == 1
    for word in words:
        assert word in info.value.errors[0]


def test_cross_key_errors_are_reported_with_the_others():
    """Limits across keys are reported at once with the range errors of the file."""
    data = {"design_point": {"thrust_required_N": 1.0e6, "altitude_m": 20000.0, "dT_isa_K": -60.0},
            "engine": {"inlet_recovery": 0.5}}
    with pytest.raises(ScenarioError) as info:
        validate(data, base=demo_scenario())
    text = "\n".join(info.value.errors)
    assert "engine.inlet_recovery = 0.5 is outside the allowed range" in text
    assert "static temperature" in text
    assert "thrust_required_N = 1e+06 N needs a fan tip diameter" in text


def test_fan_estimate_is_within_its_tolerance_of_the_model():
    """The momentum estimate behind the thrust check is within its error bound of the model's fan sizing."""
    scenario = demo_scenario()
    prob = build_evaluation_problem(scenario)
    prob.run_model()
    ratio = _fan_tip_diameter_estimate(scenario) / prob.get_val("fan_tip_diameter")[0]
    assert 1.0 / FAN_ESTIMATE_TOLERANCE < ratio < FAN_ESTIMATE_TOLERANCE
