"""Scenario files (TOML): schema, validation before any computation, and mapping onto model inputs.

Every value is in SI units, with the unit in the key name (``altitude_m``, ``thrust_required_N``);
dimensionless keys carry no suffix. Unknown sections or keys, wrong types and out-of-range values are
errors that name the key, the value and the allowed range. The built-in demo scenario is
``src/bypassopt/data/demo_twin_170.toml`` (an invented aircraft concept).
"""

import copy
import math
import tomllib
from importlib import resources

#: Path of the built-in demo scenario inside the installed package.
DEMO_SCENARIO = "demo_twin_170.toml"


class ScenarioError(ValueError):
    """A scenario file is unreadable, has an unknown key, a wrong type or an out-of-range value."""


def _num(lo, hi, desc, var=None, lo_open=False, hi_open=False):
    return {"type": "number", "lo": lo, "hi": hi, "desc": desc, "var": var, "lo_open": lo_open, "hi_open": hi_open}


def _int(lo, hi, desc):
    return {"type": "int", "lo": lo, "hi": hi, "desc": desc}


def _str(desc, choices=None):
    return {"type": "str", "desc": desc, "choices": choices}


def _bool(desc):
    return {"type": "bool", "desc": desc}


def _list(lo, hi, desc):
    return {"type": "list", "lo": lo, "hi": hi, "desc": desc}


#: Design variables: scenario key -> model input name and physical range.
DESIGN_VARIABLES = {
    "BPR": ("BPR", 1.0, 25.0, "bypass ratio"),
    "FPR": ("FPR", 1.1, 3.0, "fan (bypass) pressure ratio"),
    "OPR": ("OPR", 10.0, 80.0, "overall pressure ratio Pt3/Pt2"),
    "Tt4_K": ("Tt4", 1100.0, 2200.0, "burner exit total temperature, K"),
}

#: Limits that become optimisation constraints: key -> (model output, 'upper'/'lower', description).
CONSTRAINT_LIMITS = {
    "max_Tt41_K": ("Tt41", "upper", "HPT rotor inlet temperature T41"),
    "max_Tt3_K": ("Tt3", "upper", "HPC exit temperature T3"),
    "min_core_size_kg_s": ("W3_corrected", "lower", "HPC exit corrected flow (core size)"),
}

SCHEMA = {
    "aircraft": {
        "name": _str("name of the (invented) aircraft concept"),
        "num_engines": _int(1, 4, "number of engines"),
        "max_takeoff_mass_kg": _num(1e3, 1e6, "maximum take-off mass", "max_takeoff_mass"),
        "empty_mass_no_engines_kg": _num(1e3, 1e6, "operating empty mass without engines and nacelles",
                                         "empty_mass_no_engines"),
        "payload_kg": _num(0.0, 5e5, "design payload", "payload"),
        "design_range_m": _num(1e5, 2e7, "design range flown in cruise", "design_range"),
        "lift_to_drag": _num(1.0, 40.0, "cruise lift-to-drag ratio of the airframe without nacelles",
                             "lift_to_drag"),
        "reserve_fraction": _num(0.0, 0.3, "reserve fuel as a fraction of zero-fuel mass", "reserve_fraction"),
        "taxi_takeoff_fraction": _num(0.9, 1.0, "mass ratio end/start of taxi and take-off",
                                      "taxi_takeoff_fraction", lo_open=True),
        "climb_fraction": _num(0.9, 1.0, "mass ratio end/start of climb", "climb_fraction", lo_open=True),
        "descent_landing_fraction": _num(0.9, 1.0, "mass ratio end/start of descent and landing",
                                         "descent_landing_fraction", lo_open=True),
    },
    "design_point": {
        "altitude_m": _num(0.0, 20000.0, "geopotential altitude of the cycle design (sizing) point", "altitude"),
        "dT_isa_K": _num(-60.0, 60.0, "temperature offset from ISA", "dT_isa"),
        "mach": _num(0.0, 0.95, "flight Mach number", "Mach0", lo_open=True),
        "thrust_required_N": _num(100.0, 1e6, "installed net thrust per engine the airframe needs",
                                  "thrust_required"),
    },
    "installation": {
        "wing_height_m": _num(0.0, 20.0, "wing lower-surface height above ground at the engine station",
                              "wing_height", lo_open=True),
        "nacelle_wing_gap_m": _num(-3.0, 3.0, "gap from nacelle top to wing lower surface (negative: above it)",
                                   "nacelle_wing_gap"),
        "min_ground_clearance_m": _num(0.0, 5.0, "minimum nacelle ground clearance (from your airworthiness rules)",
                                       "min_ground_clearance"),
        "nacelle_diameter_ratio": _num(1.0, 1.6, "max nacelle diameter / fan tip diameter", "nacelle_diameter_ratio"),
        "containment_allowance_m": _num(0.0, 0.5, "fan case / containment allowance on the diameter",
                                        "containment_allowance"),
        "fan_cowl_length_ratio": _num(0.5, 3.0, "fan-cowl length / max nacelle diameter", "fan_cowl_length_ratio"),
        "core_cowl_diameter_ratio": _num(1.0, 4.0, "core-cowl max diameter / core entry tip diameter",
                                         "core_cowl_diameter_ratio"),
        "core_cowl_length_ratio": _num(0.2, 4.0, "exposed core-cowl length / its diameter", "core_cowl_length_ratio"),
        "core_exit_diameter_ratio": _num(0.2, 1.0, "core-cowl aft diameter / max diameter",
                                         "core_exit_diameter_ratio"),
        "plug_diameter_ratio": _num(0.05, 1.0, "plug base diameter / core-cowl max diameter", "plug_diameter_ratio"),
        "plug_length_ratio": _num(0.2, 4.0, "plug cone length / its base diameter", "plug_length_ratio"),
        "nacelle_interference_factor": _num(1.0, 2.0, "interference factor of the fan cowl",
                                            "nacelle_interference_factor"),
        "pylon_drag_area_m2": _num(0.0, 5.0, "pylon drag area CD*S", "pylon_drag_area"),
        "fan_face_mach": _num(0.3, 0.8, "design axial Mach number at the fan face", "fan_face_mach"),
        "fan_hub_tip_ratio": _num(0.0, 0.6, "fan hub-to-tip ratio", "fan_hub_tip_ratio", hi_open=True),
        "core_entry_mach": _num(0.2, 0.8, "axial Mach number at the core entry", "core_entry_mach"),
        "core_entry_hub_tip_ratio": _num(0.0, 0.8, "core entry hub-to-tip ratio", "core_entry_hub_tip_ratio",
                                         hi_open=True),
        "fan_tip_loading": _num(0.05, 1.0, "fan tip loading dh/U^2", "fan_tip_loading"),
    },
    "limits": {
        "max_nacelle_diameter_m": _num(0.3, 10.0, "largest nacelle diameter allowed", "max_nacelle_diameter"),
        "max_Tt41_K": _num(1000.0, 2400.0, "largest HPT rotor inlet temperature (from your engine data)"),
        "max_Tt3_K": _num(500.0, 1300.0, "largest HPC exit temperature (from your engine data)"),
        "min_core_size_kg_s": _num(0.0, 100.0, "smallest HPC exit corrected flow"),
    },
    "engine": {
        "fan_bypass_eff_poly": _num(0.5, 1.0, "fan bypass polytropic efficiency", "fan_bypass_eff_poly"),
        "fan_core_eff_poly": _num(0.5, 1.0, "fan core-side polytropic efficiency", "fan_core_eff_poly"),
        "booster_eff_poly": _num(0.5, 1.0, "booster polytropic efficiency", "booster_eff_poly"),
        "hpc_eff_poly": _num(0.5, 1.0, "HPC polytropic efficiency", "hpc_eff_poly"),
        "hpt_eff_poly": _num(0.5, 1.0, "HPT polytropic efficiency", "hpt_eff_poly"),
        "lpt_eff_poly": _num(0.5, 1.0, "LPT polytropic efficiency", "lpt_eff_poly"),
        "HP_mech_eff": _num(0.5, 1.0, "HP spool mechanical efficiency", "HP_mech_eff", lo_open=True),
        "LP_mech_eff": _num(0.5, 1.0, "LP spool mechanical efficiency", "LP_mech_eff", lo_open=True),
        "inlet_recovery": _num(0.8, 1.0, "intake total-pressure recovery", "inlet_recovery"),
        "burner_pressure_loss": _num(0.0, 0.2, "burner total-pressure loss fraction", "burner_pressure_loss"),
        "combustion_eff": _num(0.5, 1.0, "combustion efficiency", "combustion_eff", lo_open=True),
        "core_duct_pressure_loss": _num(0.0, 0.2, "core exhaust duct pressure loss fraction",
                                        "core_duct_pressure_loss"),
        "bypass_duct_pressure_loss": _num(0.0, 0.2, "bypass duct pressure loss fraction", "bypass_duct_pressure_loss"),
        "core_nozzle_velocity_coeff": _num(0.8, 1.0, "core nozzle velocity coefficient", "core_nozzle_velocity_coeff"),
        "bypass_nozzle_velocity_coeff": _num(0.8, 1.0, "bypass nozzle velocity coefficient",
                                             "bypass_nozzle_velocity_coeff"),
        "core_nozzle_discharge_coeff": _num(0.8, 1.0, "core nozzle discharge coefficient",
                                            "core_nozzle_discharge_coeff"),
        "bypass_nozzle_discharge_coeff": _num(0.8, 1.0, "bypass nozzle discharge coefficient",
                                              "bypass_nozzle_discharge_coeff"),
        "booster_PR": _num(1.0, 5.0, "booster pressure ratio", "booster_PR"),
        "customer_bleed_frac": _num(0.0, 0.1, "customer bleed per unit core flow", "customer_bleed_frac"),
        "HP_power_offtake_W": _num(0.0, 2e6, "HP shaft power offtake for aircraft systems", "HP_power_offtake"),
        "fuel_LHV_J_per_kg": _num(1e7, 1.5e8, "fuel lower heating value", "fuel_LHV"),
        "fuel_hc_ratio": _num(0.5, 4.0, "fuel hydrogen-to-carbon atom ratio"),
        "vane_metal_temperature_K": _num(900.0, 1700.0, "allowable HPT vane metal temperature (engine data)",
                                         "vane_metal_temperature"),
        "rotor_metal_temperature_K": _num(900.0, 1700.0, "allowable HPT blade metal temperature (engine data)",
                                          "rotor_metal_temperature"),
        "vane_cooling_constant": _num(0.0, 0.5, "cooling correlation constant of the HPT vanes",
                                      "vane_cooling_constant"),
        "rotor_cooling_constant": _num(0.0, 0.5, "cooling correlation constant of the HPT blades",
                                       "rotor_cooling_constant"),
        "rotor_relative_temperature_ratio": _num(0.7, 1.0, "rotor-relative / absolute gas temperature",
                                                 "rotor_relative_temperature_ratio"),
    },
    "design_variables": {key: {"type": "dv", "desc": desc, "lo": lo, "hi": hi}
                         for key, (_, lo, hi, desc) in DESIGN_VARIABLES.items()},
    "previous_engine": {
        "BPR": _num(1.0, 25.0, "bypass ratio of the previous-generation engine"),
        "FPR": _num(1.1, 3.0, "fan pressure ratio of the previous-generation engine"),
        "OPR": _num(10.0, 80.0, "overall pressure ratio of the previous-generation engine"),
        "Tt4_K": _num(1100.0, 2200.0, "burner exit temperature of the previous-generation engine"),
        "efficiency_drop": _num(0.0, 0.1, "points subtracted from every polytropic efficiency"),
    },
    "optimizer": {
        "objective": _str("quantity minimised", ("mission_fuel", "installed_TSFC")),
        "driver": _str("optimizer", ("SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP")),
        "maxiter": _int(1, 1000, "largest number of optimizer iterations"),
        "tol": _num(1e-12, 1e-2, "optimizer convergence tolerance"),
    },
    "carpet": {
        "BPR_values": _list(1.0, 25.0, "bypass ratios of the carpet (at least 2)"),
        "OPR_values": _list(10.0, 80.0, "overall pressure ratios of the carpet (at least 2)"),
        "FPR_mode": _str("FPR at each carpet point", ("fixed", "optimal")),
    },
    "trade": {
        "limit": _str("limit swept by the trade curve",
                      ("max_nacelle_diameter_m", "wing_height_m", "min_ground_clearance_m", "max_Tt41_K",
                       "max_Tt3_K")),
        "values": _list(0.0, 1e4, "values of the swept limit (at least 2)"),
    },
}

_DV_KEYS = {"initial", "lower", "upper", "optimize"}

#: Keys renamed in 0.2 (one name per quantity; loss and Mach names in this project's own words):
#: (section, old key) -> new key. An old key is an error that names the new one, for one release.
RENAMED_KEYS = {
    ("engine", "burner_dPqP"): "burner_pressure_loss",
    ("engine", "core_duct_dPqP"): "core_duct_pressure_loss",
    ("engine", "bypass_duct_dPqP"): "bypass_duct_pressure_loss",
    ("design_variables", "T4_K"): "Tt4_K",
    ("previous_engine", "T4_K"): "Tt4_K",
    ("limits", "max_T41_K"): "max_Tt41_K",
    ("limits", "max_T3_K"): "max_Tt3_K",
}


def _fmt_range(spec):
    lo = ("above " if spec.get("lo_open") else "from ") + f"{spec['lo']:g}"
    hi = ("below " if spec.get("hi_open") else "up to ") + f"{spec['hi']:g}"
    return f"{lo} {hi}"


def _check_number(where, value, spec):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ScenarioError(f"{where} = {value!r} must be a number in the range {_fmt_range(spec)} "
                            f"({spec['desc']}).")
    value = float(value)
    lo, hi = spec["lo"], spec["hi"]
    bad = (not math.isfinite(value) or (value <= lo if spec.get("lo_open") else value < lo)
           or (value >= hi if spec.get("hi_open") else value > hi))
    if bad:
        raise ScenarioError(f"{where} = {value:g} is outside the allowed range ({_fmt_range(spec)}) "
                            f"for {spec['desc']}.")
    return value


def _check_value(where, value, spec):
    kind = spec["type"]
    if kind == "number":
        return _check_number(where, value, spec)
    if kind == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            raise ScenarioError(f"{where} = {value!r} must be a whole number ({spec['desc']}).")
        if not spec["lo"] <= value <= spec["hi"]:
            raise ScenarioError(f"{where} = {value} is outside the allowed range (from {spec['lo']} up to "
                                f"{spec['hi']}) for {spec['desc']}.")
        return value
    if kind == "str":
        if not isinstance(value, str):
            raise ScenarioError(f"{where} = {value!r} must be a string ({spec['desc']}).")
        if spec.get("choices") and value not in spec["choices"]:
            raise ScenarioError(f"{where} = {value!r} is not one of {', '.join(spec['choices'])}.")
        return value
    if kind == "bool":
        if not isinstance(value, bool):
            raise ScenarioError(f"{where} = {value!r} must be true or false.")
        return value
    if kind == "list":
        if not isinstance(value, list) or len(value) < 2:
            raise ScenarioError(f"{where} = {value!r} must be a list of at least 2 numbers ({spec['desc']}).")
        return [_check_number(f"{where}[{i}]", v, spec) for i, v in enumerate(value)]
    if kind == "dv":
        if not isinstance(value, dict):
            raise ScenarioError(f"{where} must be a table with keys initial, lower, upper, optimize.")
        unknown = set(value) - _DV_KEYS
        if unknown:
            raise ScenarioError(f"{where}: unknown key(s) {', '.join(sorted(unknown))}; allowed: "
                                f"{', '.join(sorted(_DV_KEYS))}.")
        missing = {"initial", "lower", "upper"} - set(value)
        if missing:
            raise ScenarioError(f"{where}: missing key(s) {', '.join(sorted(missing))}.")
        out = {k: _check_number(f"{where}.{k}", value[k], spec) for k in ("initial", "lower", "upper")}
        out["optimize"] = _check_value(f"{where}.optimize", value.get("optimize", True), _bool("optimize"))
        if not out["lower"] < out["upper"]:
            raise ScenarioError(f"{where}: lower = {out['lower']:g} must be below upper = {out['upper']:g}.")
        if not out["lower"] <= out["initial"] <= out["upper"]:
            raise ScenarioError(f"{where}.initial = {out['initial']:g} is outside its bounds "
                                f"({out['lower']:g} to {out['upper']:g}).")
        return out
    raise AssertionError(kind)  # pragma: no cover


def validate(data, base=None):
    """Validate a scenario mapping and return it merged over ``base`` (default: the demo scenario).

    Raises
    ------
    ScenarioError
        Naming the section and key, the value and the allowed range.
    """
    if not isinstance(data, dict):
        raise ScenarioError("a scenario must be a TOML table")
    merged = copy.deepcopy(base) if base is not None else {}
    for section, table in data.items():
        if section not in SCHEMA:
            raise ScenarioError(f"unknown section [{section}]; allowed: {', '.join(SCHEMA)}.")
        if not isinstance(table, dict):
            raise ScenarioError(f"[{section}] must be a table.")
        out = merged.setdefault(section, {})
        for key, value in table.items():
            if (section, key) in RENAMED_KEYS:
                raise ScenarioError(f"{section}.{key} was renamed to {section}.{RENAMED_KEYS[section, key]} in "
                                    f"bypassopt 0.2; write {RENAMED_KEYS[section, key]} = {value!r} instead.")
            if key not in SCHEMA[section]:
                raise ScenarioError(f"unknown key {section}.{key}; allowed keys in [{section}]: "
                                    f"{', '.join(SCHEMA[section])}.")
            out[key] = _check_value(f"{section}.{key}", value, SCHEMA[section][key])
    _check_consistency(merged)
    return merged


def _check_consistency(s):
    """Cross-key checks: limits that no design can meet are reported before any computation."""
    inst, lim = s.get("installation", {}), s.get("limits", {})
    if {"wing_height_m", "nacelle_wing_gap_m", "min_ground_clearance_m"} <= set(inst):
        room = inst["wing_height_m"] - inst["nacelle_wing_gap_m"] - inst["min_ground_clearance_m"]
        if room <= 0.3:
            raise ScenarioError(
                f"infeasible limits: installation.wing_height_m - nacelle_wing_gap_m - min_ground_clearance_m = "
                f"{room:g} m leaves no room for a nacelle (needs more than 0.3 m).")
    if "max_nacelle_diameter_m" in lim and lim["max_nacelle_diameter_m"] <= 0.3:
        raise ScenarioError("infeasible limits: limits.max_nacelle_diameter_m must exceed 0.3 m.")
    ac = s.get("aircraft", {})
    if {"max_takeoff_mass_kg", "empty_mass_no_engines_kg", "payload_kg"} <= set(ac):
        if ac["empty_mass_no_engines_kg"] + ac["payload_kg"] >= ac["max_takeoff_mass_kg"]:
            raise ScenarioError("infeasible aircraft: empty_mass_no_engines_kg + payload_kg is not below "
                                "max_takeoff_mass_kg.")
    if "Tt4_K" in s.get("design_variables", {}) and "max_Tt41_K" in lim:
        if lim["max_Tt41_K"] <= 1000.0:
            raise ScenarioError("infeasible limits: limits.max_Tt41_K must exceed 1000 K.")


def demo_scenario():
    """Return the validated built-in demo scenario (an invented 170-seat twin; see the file's header)."""
    text = resources.files("bypassopt").joinpath("data", DEMO_SCENARIO).read_text(encoding="utf-8")
    data = tomllib.loads(text)
    s = validate(data)
    missing = [f"{sec}.{key}" for sec, keys in SCHEMA.items() for key in keys
               if sec not in ("previous_engine",) and key not in s.get(sec, {})]
    if missing:  # pragma: no cover - guarded by tests
        raise ScenarioError(f"built-in demo scenario lacks {', '.join(missing)}")
    return s


def load_scenario(path=None):
    """Load and validate a scenario file; keys it leaves out take the demo scenario's values.

    Parameters
    ----------
    path : str or path-like or None
        TOML file; None gives the built-in demo scenario.
    """
    base = demo_scenario()
    if path is None:
        return base
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except OSError as err:
        raise ScenarioError(f"cannot read scenario file {path}: {err.strerror}") from err
    except tomllib.TOMLDecodeError as err:
        raise ScenarioError(f"scenario file {path} is not valid TOML: {err}") from err
    return validate(data, base=base)


def model_inputs(scenario):
    """Map a validated scenario onto promoted model input names: {name: (value, units)}."""
    units = {"_m": "m", "_K": "K", "_N": "N", "_kg": "kg", "_W": "W", "_m2": "m**2", "_J_per_kg": "J/kg",
             "_kg_s": "kg/s"}
    out = {}
    for section, keys in SCHEMA.items():
        for key, spec in keys.items():
            var = spec.get("var")
            if var and key in scenario.get(section, {}):
                unit = next((u for suffix, u in sorted(units.items(), key=lambda kv: -len(kv[0]))
                             if key.endswith(suffix)), None)
                out[var] = (scenario[section][key], unit)
    for key, (var, _, _, _) in DESIGN_VARIABLES.items():
        if key in scenario.get("design_variables", {}):
            out[var] = (scenario["design_variables"][key]["initial"], "K" if key.endswith("_K") else None)
    return out


def schema_markdown():
    """Markdown rows (key | meaning | allowed) of every section and key, as shown in README."""
    lines = []
    for section, keys in SCHEMA.items():
        lines.append(f"| **[{section}]** | | |")
        for key, spec in keys.items():
            kind = spec["type"]
            if kind == "number":
                allowed = f"{spec['lo']:g} – {spec['hi']:g}"
            elif kind == "int":
                allowed = f"{spec['lo']} – {spec['hi']} (integer)"
            elif kind == "str":
                allowed = ", ".join(spec["choices"]) if spec.get("choices") else "text"
            elif kind == "list":
                allowed = f"list of ≥ 2 numbers, {spec['lo']:g} – {spec['hi']:g}"
            elif kind == "dv":
                allowed = f"{{initial, lower, upper, optimize}}, {spec['lo']:g} – {spec['hi']:g}"
            else:  # pragma: no cover
                allowed = kind
            lines.append(f"| `{key}` | {spec['desc']} | {allowed} |")
    return "\n".join(lines)
