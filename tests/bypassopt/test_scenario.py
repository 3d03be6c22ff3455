"""Scenario files: the demo covers the schema, units map onto the model, and bad files are rejected clearly."""

import copy
import tomllib
from importlib import resources

import pytest
from openmdao.utils.units import is_compatible

from bypassopt.problems.best_cycle import build_evaluation_problem
from bypassopt.scenario import (DESIGN_VARIABLES, SCHEMA, ScenarioError, demo_scenario, load_scenario,
                                model_inputs, validate)


def _write(tmp_path, text, name="scenario.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _error(tmp_path, text):
    with pytest.raises(ScenarioError) as info:
        load_scenario(_write(tmp_path, text))
    return str(info.value)


# --------------------------------------------------------------------------------------------------------
# The demo scenario


def test_demo_scenario_covers_every_schema_key():
    """The built-in file sets every key of every section, so it is a complete template."""
    raw = tomllib.loads(resources.files("bypassopt").joinpath("data", "demo_twin_170.toml").read_text("utf-8"))
    assert set(raw) == set(SCHEMA)
    for section, keys in SCHEMA.items():
        assert set(raw[section]) == set(keys), section
    scenario = load_scenario()
    assert scenario == demo_scenario()
    for key in DESIGN_VARIABLES:
        assert set(scenario["design_variables"][key]) == {"initial", "lower", "upper", "optimize"}


def test_demo_scenario_is_independent_copy():
    """Editing a loaded scenario does not change the next one."""
    a = load_scenario()
    a["aircraft"]["payload_kg"] = 1.0
    assert load_scenario()["aircraft"]["payload_kg"] == 16150.0


# --------------------------------------------------------------------------------------------------------
# Mapping onto model inputs

#: Expected (model input, units) of representative scenario keys, one per unit suffix.
EXPECTED_UNITS = {
    ("design_point", "altitude_m"): ("altitude", "m"),
    ("design_point", "dT_isa_K"): ("dT_isa", "K"),
    ("design_point", "mach"): ("Mach0", None),
    ("design_point", "thrust_required_N"): ("thrust_required", "N"),
    ("aircraft", "payload_kg"): ("payload", "kg"),
    ("aircraft", "lift_to_drag"): ("lift_to_drag", None),
    ("installation", "pylon_drag_area_m2"): ("pylon_drag_area", "m**2"),
    ("installation", "wing_height_m"): ("wing_height", "m"),
    ("engine", "HP_power_offtake_W"): ("HP_power_offtake", "W"),
    ("engine", "fuel_LHV_J_per_kg"): ("fuel_LHV", "J/kg"),
    ("engine", "vane_metal_temperature_K"): ("vane_metal_temperature", "K"),
    ("limits", "max_nacelle_diameter_m"): ("max_nacelle_diameter", "m"),
}


def test_model_inputs_units():
    """Unit suffixes become OpenMDAO units; dimensionless keys get None; values pass through."""
    scenario = load_scenario()
    inputs = model_inputs(scenario)
    for (section, key), (var, units) in EXPECTED_UNITS.items():
        assert inputs[var] == (scenario[section][key], units), key
    assert inputs["Tt4"] == (scenario["design_variables"]["Tt4_K"]["initial"], "K")
    assert inputs["BPR"] == (scenario["design_variables"]["BPR"]["initial"], None)


def test_model_inputs_match_model_variables():
    """Every mapped input exists in the installed-engine model with compatible units (dimensionless to None)."""
    prob = build_evaluation_problem()
    meta = prob.model.get_io_metadata(iotypes="input", metadata_keys=["units"], get_remote=True)
    model_units = {m["prom_name"]: m["units"] for m in meta.values()}
    for var, (value, units) in model_inputs(load_scenario()).items():
        assert var in model_units, var
        if units is None:
            assert model_units[var] is None, var
        else:
            assert is_compatible(units, model_units[var]), (var, units, model_units[var])


def test_model_inputs_applied_values():
    """A partial file's values reach the model in model units."""
    prob = build_evaluation_problem(validate({"design_point": {"altitude_m": 9000.0, "thrust_required_N": 20e3}},
                                             base=demo_scenario()))
    assert prob.get_val("altitude", units="m")[0] == 9000.0
    assert prob.get_val("thrust_required", units="kN")[0] == pytest.approx(20.0, rel=1e-15)


# --------------------------------------------------------------------------------------------------------
# Partial files


def test_partial_file_merges_over_demo(tmp_path):
    """Keys a file leaves out take the demo's values; a partial design-variable table needs all its bounds."""
    path = _write(tmp_path, "[design_point]\nthrust_required_N = 21000.0\n\n"
                            "[design_variables]\nBPR = { initial = 9.0, lower = 7.0, upper = 12.0 }\n")
    s = load_scenario(path)
    demo = demo_scenario()
    assert s["design_point"]["thrust_required_N"] == 21000.0
    assert s["design_variables"]["BPR"] == {"initial": 9.0, "lower": 7.0, "upper": 12.0, "optimize": True}
    expected = copy.deepcopy(demo)
    expected["design_point"]["thrust_required_N"] = 21000.0
    expected["design_variables"]["BPR"] = s["design_variables"]["BPR"]
    assert s == expected


def test_integer_accepted_for_number(tmp_path):
    """A whole number where a float is expected is fine (TOML writes 24000 as an integer)."""
    s = load_scenario(_write(tmp_path, "[design_point]\nthrust_required_N = 24000\n"))
    assert s["design_point"]["thrust_required_N"] == 24000.0
    assert isinstance(s["design_point"]["thrust_required_N"], float)


# --------------------------------------------------------------------------------------------------------
# Bad files: the message names the key, the value and the allowed range


def test_unknown_section(tmp_path):
    msg = _error(tmp_path, "[engines]\nBPR = 10.0\n")
    assert "[engines]" in msg and "aircraft" in msg and "design_point" in msg


def test_unknown_key(tmp_path):
    msg = _error(tmp_path, "[design_point]\nmach_number = 0.8\n")
    assert "design_point.mach_number" in msg and "mach" in msg.split("allowed keys")[1]


@pytest.mark.parametrize("text, key, value, bounds", [
    ("[design_point]\nmach = 1.2\n", "design_point.mach", "1.2", ("0", "0.95")),
    ("[installation]\nfan_hub_tip_ratio = 0.7\n", "installation.fan_hub_tip_ratio", "0.7", ("0", "0.6")),
    ("[aircraft]\nnum_engines = 6\n", "aircraft.num_engines", "6", ("1", "4")),
    ("[limits]\nmax_Tt41_K = 3000.0\n", "limits.max_Tt41_K", "3000", ("1000", "2400")),
    ("[carpet]\nBPR_values = [8.0, 30.0]\n", "carpet.BPR_values[1]", "30", ("1", "25")),
    ("[design_point]\naltitude_m = nan\n", "design_point.altitude_m", "nan", ("0", "20000")),
])
def test_out_of_range(tmp_path, text, key, value, bounds):
    msg = _error(tmp_path, text)
    assert key in msg and value in msg
    for b in bounds:
        assert b in msg, (b, msg)


@pytest.mark.parametrize("text, key, value", [
    ('[design_point]\nmach = "0.78"\n', "design_point.mach", "'0.78'"),
    ("[design_point]\nmach = true\n", "design_point.mach", "True"),
    ("[aircraft]\nnum_engines = 2.5\n", "aircraft.num_engines", "2.5"),
    ("[aircraft]\nname = 3\n", "aircraft.name", "3"),
    ('[carpet]\nBPR_values = "8, 10"\n', "carpet.BPR_values", "'8, 10'"),
    ('[optimizer]\ndriver = "Newton"\n', "optimizer.driver", "'Newton'"),
])
def test_wrong_type_names_key_and_value(tmp_path, text, key, value):
    """A string or a bool where a number belongs, a float for an integer: rejected, naming key and value."""
    msg = _error(tmp_path, text)
    assert key in msg and value in msg


@pytest.mark.parametrize("text", ['[design_point]\nmach = "0.78"\n', "[design_point]\nmach = true\n"])
def test_wrong_type_names_allowed_range(tmp_path, text):
    msg = _error(tmp_path, text)
    assert "0.95" in msg


@pytest.mark.parametrize("text, words", [
    ("[design_variables]\nBPR = { initial = 10.0, lower = 16.0, upper = 6.0 }\n",
     ("design_variables.BPR", "lower = 16", "upper = 6")),
    ("[design_variables]\nBPR = { initial = 10.0, lower = 8.0, upper = 8.0 }\n",
     ("design_variables.BPR", "lower = 8", "upper = 8")),
    ("[design_variables]\nOPR = { initial = 70.0, lower = 25.0, upper = 60.0 }\n",
     ("design_variables.OPR.initial", "70", "25", "60")),
    ("[design_variables]\nFPR = { initial = 1.5, lower = 1.3 }\n", ("design_variables.FPR", "upper")),
    ("[design_variables]\nFPR = { initial = 1.5, lower = 1.3, upper = 1.9, start = 1.4 }\n",
     ("design_variables.FPR", "start")),
    ("[design_variables]\nTt4_K = { initial = 1650.0, lower = 1000.0, upper = 1850.0 }\n",
     ("design_variables.Tt4_K.lower", "1000", "1100", "2200")),
    ("[design_variables]\nBPR = 10.0\n", ("design_variables.BPR", "table")),
])
def test_bad_design_variable_tables(tmp_path, text, words):
    msg = _error(tmp_path, text)
    for w in words:
        assert w in msg, (w, msg)


@pytest.mark.parametrize("text, words", [
    ("[installation]\nwing_height_m = 1.0\n", ("infeasible", "wing_height_m", "nacelle")),
    ("[installation]\nmin_ground_clearance_m = 2.6\n", ("infeasible", "min_ground_clearance_m")),
    ("[aircraft]\npayload_kg = 40000.0\n", ("infeasible", "payload_kg", "max_takeoff_mass_kg")),
])
def test_infeasible_limits(tmp_path, text, words):
    """Limits no nacelle (or aircraft) can meet are reported before any computation."""
    msg = _error(tmp_path, text)
    for w in words:
        assert w in msg, (w, msg)


def test_unreadable_files(tmp_path):
    """A missing file and a file that is not TOML are scenario errors naming the file."""
    with pytest.raises(ScenarioError, match="cannot read scenario file"):
        load_scenario(tmp_path / "missing.toml")
    msg = _error(tmp_path, "[aircraft\nname = 'x'\n")
    assert "not valid TOML" in msg and "scenario.toml" in msg


@pytest.mark.parametrize("section, old, new", [
    ("engine", "burner_dPqP", "burner_pressure_loss"),
    ("engine", "core_duct_dPqP", "core_duct_pressure_loss"),
    ("limits", "max_T41_K", "max_Tt41_K"),
    ("limits", "max_T3_K", "max_Tt3_K"),
])
def test_old_key_is_rejected_with_the_new_name(section, old, new):
    """A key renamed in 0.2 is an error that names its new spelling (kept for one release)."""
    with pytest.raises(ScenarioError, match=rf"{section}\.{old} was renamed to {section}\.{new}"):
        validate({section: {old: 0.04 if "dPqP" in old else 1500.0}}, base=demo_scenario())


def test_old_design_variable_key_is_rejected_with_the_new_name():
    """design_variables.T4_K became Tt4_K: one name (Tt4) for the burner exit temperature everywhere."""
    with pytest.raises(ScenarioError, match=r"design_variables\.T4_K was renamed to design_variables\.Tt4_K"):
        validate({"design_variables": {"T4_K": {"initial": 1650.0, "lower": 1400.0, "upper": 1800.0}}},
                 base=demo_scenario())


# --------------------------------------------------------------------------------------------------------
# All errors at once


def test_every_error_of_a_file_in_one_message(tmp_path):
    """An unknown key, a value out of range and a wrong type: all three reported together, a line each."""
    text = ("[design_point]\nmach = 1.2\nmach_number = 0.8\n\n"
            "[engine]\nhpc_eff_poly_ref = \"0.91\"\n")
    with pytest.raises(ScenarioError) as info:
        load_scenario(_write(tmp_path, text))
    msg = str(info.value)
    assert len(info.value.errors) == 3
    assert msg.splitlines()[0] == f"3 errors in scenario file {tmp_path / 'scenario.toml'}:"
    lines = msg.splitlines()[1:]
    assert len(lines) == 3
    assert any("design_point.mach = 1.2" in ln and "0.95" in ln and "flight Mach number" in ln for ln in lines)
    assert any("design_point.mach_number" in ln and "allowed keys" in ln for ln in lines)
    assert any("engine.hpc_eff_poly_ref = '0.91'" in ln and "HPC polytropic efficiency" in ln for ln in lines)


def test_field_errors_and_infeasible_limits_together():
    """Cross-key checks run on the valid values and are reported with the field errors."""
    with pytest.raises(ScenarioError) as info:
        validate({"installation": {"wing_height_m": 1.0}, "aircraft": {"num_engines": 0}}, base=demo_scenario())
    assert len(info.value.errors) == 2
    assert "aircraft.num_engines = 0" in str(info.value) and "infeasible limits" in str(info.value)


def test_one_error_is_one_line(tmp_path):
    """A single error is a single line (the command line prints it as is)."""
    msg = _error(tmp_path, "[design_point]\nmach = 1.2\n")
    assert "\n" not in msg


@pytest.mark.parametrize("text, key", [
    ("[design_point]\nthrust_required_N = true\n", "design_point.thrust_required_N"),
    ("[design_variables]\nBPR = { initial = 10.0, lower = false, upper = 16.0 }\n", "design_variables.BPR.lower"),
    ("[carpet]\nBPR_values = [8.0, true]\n", "carpet.BPR_values[1]"),
    ("[optimizer]\nmaxiter = true\n", "optimizer.maxiter"),
])
def test_bool_is_not_a_number(tmp_path, text, key):
    """true/false where a number or an integer belongs is a type error (no silent 1.0 or 0.0)."""
    msg = _error(tmp_path, text)
    assert f"{key} = True" in msg or f"{key} = False" in msg, msg


def test_design_variable_optimize_must_be_bool(tmp_path):
    msg = _error(tmp_path, "[design_variables]\nBPR = { initial = 10.0, lower = 6.0, upper = 16.0, optimize = 1 }\n")
    assert "design_variables.BPR.optimize = 1" in msg and "true or false" in msg


# --------------------------------------------------------------------------------------------------------
# Robust loading: bounded, UTF-8, shallow, printable


def _error_bytes(tmp_path, data):
    path = tmp_path / "scenario.toml"
    path.write_bytes(data)
    with pytest.raises(ScenarioError) as info:
        load_scenario(path)
    msg = str(info.value)
    assert "\n" not in msg
    return msg


def test_non_utf8_file(tmp_path):
    """Latin-1 text is not UTF-8: one line naming the file and the offending byte."""
    msg = _error_bytes(tmp_path, '[aircraft]\nname = "A\xe9ro"\n'.encode("latin-1"))
    assert "not UTF-8" in msg and "scenario.toml" in msg and "0xe9" in msg


def test_binary_file(tmp_path):
    msg = _error_bytes(tmp_path, b"\x7fELF\x02\x01\x01\x00\x00\x00" + bytes(range(256)))
    assert "binary" in msg and "scenario.toml" in msg


def test_file_larger_than_one_mib(tmp_path):
    msg = _error_bytes(tmp_path, b"# padding\n" * 110_000)
    assert "larger than 1 MiB" in msg


@pytest.mark.parametrize("data", [
    b"[carpet]\nBPR_values = [[8.0, 9.0], [10.0, 11.0]]\n",
    b"[design_variables]\nBPR = { initial = { a = 1 }, lower = 6.0, upper = 16.0 }\n",
    b"[carpet]\nBPR_values = " + b"[" * 100_000 + b"]" * 100_000 + b"\n",
])
def test_nesting_deeper_than_the_schema(tmp_path, data):
    """Arrays of arrays or tables in a design-variable entry: one line, no RecursionError."""
    msg = _error_bytes(tmp_path, data)
    assert "deeper than the scenario schema allows" in msg


@pytest.mark.parametrize("name", ["demo\x1b[31m twin", "demo\ttwin", "line\nbreak", "bell\x07"])
def test_control_characters_in_text(tmp_path, name):
    """Text with control characters is rejected; the message shows them escaped, never raw."""
    text = '[aircraft]\nname = "' + name.encode("unicode_escape").decode("ascii").replace("\\x", "\\u00") + '"\n'
    msg = _error(tmp_path, text)
    assert "aircraft.name" in msg and "non-printable" in msg
    assert not any(c in msg for c in "\x1b\x07\t")


def test_unknown_key_with_control_characters_is_shown_escaped(tmp_path):
    msg = _error(tmp_path, '[design_point]\n"mach\\u001b[2J" = 0.8\n')
    assert "\x1b" not in msg and "\\x1b" in msg and "allowed keys" in msg


def test_text_too_long(tmp_path):
    msg = _error(tmp_path, f'[aircraft]\nname = "{"x" * 300}"\n')
    assert "aircraft.name" in msg and "200 characters" in msg and len(msg) < 400


# --------------------------------------------------------------------------------------------------------
# The schema view and its models


def test_schema_view_comes_from_the_models():
    """SCHEMA holds every section and key of the pydantic models with the range, meaning and model input."""
    from bypassopt.scenario import SECTION_MODELS

    assert list(SCHEMA) == list(SECTION_MODELS)
    for section, model in SECTION_MODELS.items():
        assert list(SCHEMA[section]) == list(model.model_fields), section
        for key, field in model.model_fields.items():
            assert SCHEMA[section][key]["desc"] == field.description, (section, key)
    spec = SCHEMA["design_point"]["mach"]
    assert (spec["lo"], spec["hi"], spec["lo_open"], spec["hi_open"], spec["var"]) == (0.0, 0.95, True, False,
                                                                                      "Mach0")
    assert SCHEMA["installation"]["fan_hub_tip_ratio"]["hi_open"]
    assert SCHEMA["optimizer"]["driver"]["choices"] == ("SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP")
    assert SCHEMA["design_variables"]["OPR"] == {"type": "dv", "desc": "overall pressure ratio Pt3/Pt2",
                                                 "lo": 10.0, "hi": 80.0}
    assert SECTION_MODELS["engine"].model_fields["hpc_eff_poly_ref"].json_schema_extra == {"var": "hpc_eff_poly_ref"}
