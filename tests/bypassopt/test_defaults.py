"""One table of defaults: the bare installed-engine group and the demo scenario compute the same engine."""

import tomllib
from importlib import resources

import openmdao.api as om
import pytest
from openmdao.utils.units import unit_conversion

from bypassopt.components.defaults import (COMPUTED_ENGINE_INPUTS, ENGINE_DEFAULTS, FUEL_HC_RATIO, INPUT_DEFAULTS,
                                           INSTALLATION_DEFAULTS, TURBOMACHINERY_DEFAULTS)
from bypassopt.components.gas.thermo import ThermallyPerfectGas
from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.problems.best_cycle import build_evaluation_problem
from bypassopt.scenario import SCHEMA, design_point_scenario, load_scenario, model_defaults, model_inputs

#: The design both problems evaluate (README's embedding example).
DESIGN = {"BPR": 10.0, "FPR": 1.55, "OPR": 45.0, "Tt4": 1650.0}


#: Prefix of the groups' promoted interface (their default ``name_prefix``).
PREFIX = "engine:"


def _bare(cls):
    """README's embedding example: the group with its default (interface) promotion, promoted with ``*``; only the
    flight condition, the thrust and the cycle choices are set."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("engine", cls(num_engines=2), promotes=["*"])
    prob.setup()
    prob.set_val(PREFIX + "altitude", 35000.0, units="ft")
    prob.set_val(PREFIX + "dT_isa", 10.0, units="K")
    prob.set_val(PREFIX + "Mach0", 0.78)
    prob.set_val(PREFIX + "thrust_required", 24.0, units="kN")
    for name, value in DESIGN.items():
        prob.set_val(PREFIX + name, value, units="K" if name == "Tt4" else None)
    return prob


@pytest.fixture(scope="module")
def bare():
    """The bare design-point group (README's embedding example)."""
    return _bare(InstalledEngineGroup)


def _promoted_inputs(prob):
    """{plain name: [units of every input promoted to it]}, the interface prefix removed."""
    meta = prob.model.get_io_metadata(iotypes="input", metadata_keys=["units"], get_remote=True)
    out = {}
    for m in meta.values():
        out.setdefault(m["prom_name"].removeprefix(PREFIX), []).append(m["units"])
    return out


def test_table_is_split_in_engine_and_installation():
    """INPUT_DEFAULTS: the engine table less what the technology models compute, their inputs, the installation."""
    assert not set(ENGINE_DEFAULTS) & set(INSTALLATION_DEFAULTS)
    assert not set(TURBOMACHINERY_DEFAULTS) & (set(ENGINE_DEFAULTS) | set(INSTALLATION_DEFAULTS))
    engine = {k: v for k, v in ENGINE_DEFAULTS.items() if k not in COMPUTED_ENGINE_INPUTS}
    assert INPUT_DEFAULTS == {**engine, **TURBOMACHINERY_DEFAULTS, **INSTALLATION_DEFAULTS}


def test_every_table_key_is_a_promoted_input_with_matching_units(bare):
    """Each key names a promoted input of the group; its units equal every connected input's units."""
    inputs = _promoted_inputs(bare)
    for name, (value, units) in INPUT_DEFAULTS.items():
        assert name in inputs, name
        for model_units in inputs[name]:
            if units is None:
                assert model_units is None, name
            else:
                assert unit_conversion(units, model_units) == (1.0, 0.0), (name, units, model_units)


def test_group_defaults_are_the_table(bare):
    """Before anything is set, the group's inputs hold the table's values."""
    prob = om.Problem(InstalledEngineGroup(num_engines=2), reports=False)
    prob.setup()
    for name, (value, units) in INPUT_DEFAULTS.items():
        assert prob.get_val(PREFIX + name, units=units)[0] == value, name


def test_scenario_defaults_are_the_table():
    """The scenario keys that set a table input default to its value, in the same units."""
    inputs = model_inputs(model_defaults())
    assert set(INPUT_DEFAULTS) <= set(inputs)
    for name, (value, units) in INPUT_DEFAULTS.items():
        assert inputs[name] == (value, units), name
    assert model_defaults()["engine"]["fuel_hc_ratio"] == FUEL_HC_RATIO == ThermallyPerfectGas().hc_ratio


def test_demo_file_repeats_the_table():
    """The demo file lists every engine and installation key (a complete template) with the table's values."""
    raw = tomllib.loads(resources.files("bypassopt").joinpath("data", "demo_twin_170.toml").read_text("utf-8"))
    for section, values in model_defaults().items():
        for key, value in values.items():
            assert raw[section][key] == value, (section, key)
    switches = {k for k, spec in SCHEMA["engine"].items() if spec["type"] == "bool"}  # gearbox: no model input
    assert set(model_defaults()["engine"]) == set(SCHEMA["engine"]) - switches
    assert set(model_defaults()["installation"]) == set(SCHEMA["installation"])


def test_bare_group_equals_demo_scenario_evaluation(bare):
    """The bare group (README embedding example) and the demo's design-point evaluation problem agree to 1e-10."""
    bare.run_model()
    prob = build_evaluation_problem(design_point_scenario(load_scenario()), design=DESIGN)
    prob.run_model()
    for name, units in (("installed_TSFC", "mg/(N*s)"), ("mission_fuel", "kg"), ("nacelle_max_diameter", "m"),
                        ("powerplant_mass", "kg")):
        expected = prob.get_val(name, units=units)[0]
        assert bare.get_val(PREFIX + name, units=units)[0] == pytest.approx(expected, rel=1e-10), name


def test_bare_multipoint_group_equals_demo_evaluation():
    """The bare multipoint group, with the design flight condition, thrust and cycle set as README shows, gives the
    demo scenario's multipoint engine (its take-off and cruise defaults are the demo's) to 1e-9."""
    prob = _bare(InstalledMultipointGroup)
    prob.run_model()
    demo = build_evaluation_problem(load_scenario(), design=DESIGN)
    demo.run_model()
    for name, units in (("cruise:installed_TSFC", "mg/(N*s)"), ("mission_fuel", "kg"), ("takeoff:Tt41", "K"),
                        ("takeoff:Tt3", "K"), ("nacelle_max_diameter", "m")):
        expected = demo.get_val(name, units=units)[0]
        assert prob.get_val(PREFIX + name, units=units)[0] == pytest.approx(expected, rel=1e-9), name
