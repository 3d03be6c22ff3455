"""Scenario files (TOML): schema, validation before any computation, and mapping onto model inputs.

Every value is in SI units, with the unit in the key name (``altitude_m``, ``thrust_required_N``);
dimensionless keys carry no suffix. The schema is a set of pydantic models, one per section (``Aircraft``,
``DesignPoint``, ``Installation``, ...): strict types (a bool is not a number, an integer key takes no
float; a number key takes a TOML integer), ranges, meanings and the model input each key sets. Unknown
sections or keys, wrong types, out-of-range values and limits no design can meet are all reported in one
``ScenarioError``, a line per error naming the key, the value, the allowed range and the key's meaning.

The ``[engine]`` and ``[installation]`` keys and ``limits.max_nacelle_diameter_m`` default to the model's own
input defaults (``bypassopt.components.defaults``). A key whose model input has a valid range in
``bypassopt.components.ranges.INPUT_RANGES`` takes that range (``_ranged``): the model and the scenario share one
table. Limits across keys (static temperature, the fan diameter a thrust or a nacelle limit implies) are checked
in ``_check_consistency``. The built-in demo scenario is
``src/bypassopt/data/demo_twin_170.toml`` (an invented aircraft concept).
"""

import copy
import functools
import tomllib
from importlib import resources
from typing import Annotated, Literal, get_args, get_origin

import annotated_types
from pydantic import AfterValidator, BaseModel, ConfigDict, Field, ValidationError, create_model, model_validator
from pydantic.fields import FieldInfo

from bypassopt.components.defaults import FUEL_HC_RATIO, GEARBOX_DEFAULTS, INPUT_DEFAULTS
from bypassopt.components.ranges import FAN_TIP_DIAMETER_MAX, FAN_TIP_DIAMETER_MIN, GAS_TEMPERATURE_RANGE, INPUT_RANGES

#: Path of the built-in demo scenario inside the installed package.
DEMO_SCENARIO = "demo_twin_170.toml"

#: Largest scenario file read (bytes); a scenario is a few kB of TOML.
MAX_FILE_BYTES = 1 << 20
#: Longest text value (aircraft name), in characters.
MAX_TEXT_LENGTH = 200
#: Most values of a list key (carpet axes, trade-curve values).
MAX_LIST_LENGTH = 200
#: Deepest nesting the schema has: scenario -> section -> key -> list item or design-variable entry.
MAX_DEPTH = 3


class ScenarioError(ValueError):
    """A scenario file is unreadable, has unknown keys, wrong types, out-of-range values or infeasible limits.

    The message has one line per error (a single error: one line). ``errors`` holds those lines.
    """

    def __init__(self, message, errors=None):
        super().__init__(message)
        self.errors = list(errors) if errors is not None else [str(message)]


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

#: Limits of the take-off point (``[takeoff]``, multipoint model): key -> (model output, 'upper', description).
TAKEOFF_LIMITS = {
    "max_Tt41_K": ("takeoff:Tt41", "upper", "HPT rotor inlet temperature T41 at take-off"),
    "max_Tt3_K": ("takeoff:Tt3", "upper", "HPC exit temperature T3 at take-off"),
}

#: Engine models of ``[optimizer] model``: the design point alone, or designed at the design point, checked at
#: take-off (``[takeoff]``) and flown at mid-cruise (``[cruise]``).
MODELS = ("multipoint", "design_point")

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
    # 0.3: the efficiencies the user gives are technology levels; the model lowers them for size, tip shock and
    # LP-turbine loading (InstalledEngineGroup's technology effects)
    ("engine", "fan_bypass_eff_poly"): "fan_bypass_eff_poly_ref",
    ("engine", "hpc_eff_poly"): "hpc_eff_poly_ref",
    ("engine", "hpt_eff_poly"): "hpt_eff_poly_ref",
    ("engine", "lpt_eff_poly"): "lpt_eff_poly_ref",
    ("engine", "LP_mech_eff"): "LP_mech_eff_ref",
}

# --------------------------------------------------------------------------------------------------------
# Field builders: the range, meaning and model input of every key live in the pydantic field.


def _bounds_kwargs(lo, hi, lo_open=False, hi_open=False):
    return {("gt" if lo_open else "ge"): lo, ("lt" if hi_open else "le"): hi}


def _num(lo, hi, desc, var=None, lo_open=False, hi_open=False, default=None):
    """Return a number field in [lo, hi] (open ends with ``lo_open``/``hi_open``); ``var`` is the model input it sets.

    Keys whose model input has a value in ``bypassopt.components.defaults`` take that value as default.
    """
    if var in INPUT_DEFAULTS or var in GEARBOX_DEFAULTS:
        default = {**INPUT_DEFAULTS, **GEARBOX_DEFAULTS}[var][0]
    extra = {"var": var} if var else None
    return Field(default, description=desc, allow_inf_nan=False, json_schema_extra=extra,
                 **_bounds_kwargs(lo, hi, lo_open, hi_open))


def _ranged(desc, var):
    """Return a number field whose range is the model's, ``INPUT_RANGES[var]`` (``bypassopt.components.ranges``).

    Parameters
    ----------
    desc : str
        Meaning of the key.
    var : str
        Model input the key sets; a key of ``INPUT_RANGES``.
    """
    lo, hi, lo_open, hi_open, _units = INPUT_RANGES[var]
    return _num(lo, hi, desc, var, lo_open=lo_open, hi_open=hi_open)


def _int(lo, hi, desc):
    return Field(None, description=desc, ge=lo, le=hi)


def _text(desc):
    return Field(None, description=desc, max_length=MAX_TEXT_LENGTH)


def _choice(desc):
    return Field(None, description=desc)


def _numbers(lo, hi, desc):
    """Annotation and field of a list of 2 to MAX_LIST_LENGTH numbers in [lo, hi]."""
    item = Annotated[float, Field(allow_inf_nan=False, ge=lo, le=hi)]
    return list[item], Field(None, description=desc, min_length=2, max_length=MAX_LIST_LENGTH)


class _BoundsError(ValueError):
    """Inconsistent bounds of a design-variable table; ``sub`` is the entry named in the message ('' for all)."""

    def __init__(self, message, sub=""):
        super().__init__(message)
        self.sub = sub


def _printable(text):
    if not text.isprintable():
        raise ValueError("contains control or other non-printable characters")
    return text


#: Text from a file: printable characters only (no control characters, no line breaks).
PrintableText = Annotated[str, AfterValidator(_printable)]


class _Section(BaseModel):
    """Common configuration: unknown keys are errors, types are strict (a TOML integer is a number)."""

    model_config = ConfigDict(extra="forbid", strict=True)


class DesignVariable(_Section):
    """One ``[design_variables]`` entry: starting value, bounds, and whether the optimizer moves it."""

    initial: float
    lower: float
    upper: float
    optimize: bool = Field(True, description="let the optimizer move this variable")

    @model_validator(mode="after")
    def _ordered(self):
        if not self.lower < self.upper:
            raise _BoundsError(f"lower = {self.lower:g} must be below upper = {self.upper:g}")
        if not self.lower <= self.initial <= self.upper:
            raise _BoundsError(f"= {self.initial:g} is outside its bounds (lower = {self.lower:g} to "
                               f"upper = {self.upper:g})", sub="initial")
        return self


def _design_variable_model(key, lo, hi, desc):
    fields = {name: (float, Field(..., description=f"{name} value of the {desc}", allow_inf_nan=False,
                                  ge=lo, le=hi))
              for name in ("initial", "lower", "upper")}
    return create_model(f"DesignVariable_{key}", __base__=DesignVariable, __doc__=f"Design variable {key}: {desc}.",
                        **fields)


_DV_MODELS = {key: _design_variable_model(key, lo, hi, desc) for key, (_, lo, hi, desc) in DESIGN_VARIABLES.items()}

# --------------------------------------------------------------------------------------------------------
# The sections


class Aircraft(_Section):
    """``[aircraft]``: the airframe the engine is installed on (mission fuel)."""

    name: PrintableText = _text("name of the (invented) aircraft concept")
    num_engines: int = _int(1, 4, "number of engines")
    max_takeoff_mass_kg: float = _ranged("maximum take-off mass", "max_takeoff_mass")
    empty_mass_no_engines_kg: float = _ranged("operating empty mass without engines and nacelles",
                                              "empty_mass_no_engines")
    payload_kg: float = _ranged("design payload", "payload")
    design_range_m: float = _num(1e5, 2e7, "design range flown in cruise", "design_range")
    lift_to_drag: float = _num(5.0, 40.0, "cruise lift-to-drag ratio of the airframe without nacelles (below 8 "
                               "is flagged in the results)", "lift_to_drag")
    reserve_fraction: float = _ranged("reserve fuel as a fraction of zero-fuel mass", "reserve_fraction")
    taxi_takeoff_fraction: float = _ranged("mass ratio end/start of taxi and take-off", "taxi_takeoff_fraction")
    climb_fraction: float = _ranged("mass ratio end/start of climb", "climb_fraction")
    descent_landing_fraction: float = _ranged("mass ratio end/start of descent and landing", "descent_landing_fraction")


class DesignPoint(_Section):
    """``[design_point]``: flight condition and thrust at which the cycle is designed and the engine sized."""

    altitude_m: float = _ranged("geopotential altitude of the cycle design (sizing) point", "altitude")
    dT_isa_K: float = _ranged("temperature offset from ISA", "dT_isa")
    mach: float = _num(0.0, 0.95, "flight Mach number", "Mach0", lo_open=True)
    thrust_required_N: float = _ranged("installed net thrust per engine the airframe needs", "thrust_required")


class Takeoff(_Section):
    """``[takeoff]`` (multipoint model): the hot-day take-off point where the temperature limits bind."""

    altitude_m: float = _num(-500.0, 4000.0, "airfield geopotential altitude", "takeoff:altitude")
    dT_isa_K: float = _num(-40.0, 40.0, "temperature offset from ISA (hot day: positive)", "takeoff:dT_isa")
    mach: float = _num(0.0, 0.4, "flight Mach number at the take-off point (end of the ground run)",
                       "takeoff:Mach0", lo_open=True)
    thrust_N: float = _num(1.0e3, 1.0e6, "uninstalled net thrust per engine required at take-off",
                           "takeoff:Fn_required")
    max_Tt41_K: float = _num(1000.0, 2400.0, "largest HPT rotor inlet temperature at take-off (from your engine data)")
    max_Tt3_K: float = _num(500.0, 1300.0, "largest HPC exit temperature at take-off (from your engine data)")


class Cruise(_Section):
    """``[cruise]`` (multipoint model): the cruise condition; the thrust is the airframe's drag at mid-cruise."""

    altitude_m: float = _num(0.0, 15000.0, "cruise geopotential altitude", "cruise:altitude")
    dT_isa_K: float = _num(-40.0, 40.0, "temperature offset from ISA", "cruise:dT_isa")
    mach: float = _num(0.0, 0.95, "cruise Mach number", "cruise:Mach0", lo_open=True)


class Installation(_Section):
    """``[installation]``: wing and ground geometry, nacelle proportions, fan and core entry sizing."""

    wing_height_m: float = _num(0.0, 20.0, "wing lower-surface height above ground at the engine station",
                                "wing_height", lo_open=True)
    nacelle_wing_gap_m: float = _num(-3.0, 3.0, "gap from nacelle top to wing lower surface (negative: above it)",
                                     "nacelle_wing_gap")
    min_ground_clearance_m: float = _num(0.0, 5.0,
                                         "minimum nacelle ground clearance (from your airworthiness rules)",
                                         "min_ground_clearance")
    nacelle_diameter_ratio: float = _ranged("max nacelle diameter / fan tip diameter", "nacelle_diameter_ratio")
    containment_allowance_m: float = _ranged("fan case / containment allowance on the diameter",
                                             "containment_allowance")
    fan_cowl_length_ratio: float = _ranged("fan-cowl length / max nacelle diameter", "fan_cowl_length_ratio")
    core_cowl_diameter_ratio: float = _ranged("core-cowl max diameter / core entry tip diameter",
                                              "core_cowl_diameter_ratio")
    core_cowl_length_ratio: float = _ranged("exposed core-cowl length / its diameter", "core_cowl_length_ratio")
    core_exit_diameter_ratio: float = _ranged("core-cowl aft diameter / max diameter", "core_exit_diameter_ratio")
    plug_diameter_ratio: float = _ranged("plug base diameter / core-cowl max diameter", "plug_diameter_ratio")
    plug_length_ratio: float = _ranged("plug cone length / its base diameter", "plug_length_ratio")
    nacelle_interference_factor: float = _ranged("interference factor of the fan cowl", "nacelle_interference_factor")
    pylon_drag_area_m2: float = _ranged("pylon drag area CD*S", "pylon_drag_area")
    fan_face_mach: float = _num(0.3, 0.8, "design axial Mach number at the fan face", "fan_face_mach")
    fan_hub_tip_ratio: float = _ranged("fan hub-to-tip ratio", "fan_hub_tip_ratio")
    core_entry_mach: float = _ranged("axial Mach number at the core entry", "core_entry_mach")
    core_entry_hub_tip_ratio: float = _ranged("core entry hub-to-tip ratio", "core_entry_hub_tip_ratio")
    fan_tip_loading: float = _ranged("fan tip loading dh/U^2", "fan_tip_loading")


class Limits(_Section):
    """``[limits]``: the nacelle diameter limit (a model input) and the bounds of the cycle constraints."""

    max_nacelle_diameter_m: float = _num(0.3, 10.0, "largest nacelle diameter allowed", "max_nacelle_diameter")
    max_Tt41_K: float = _num(1000.0, 2400.0, "largest HPT rotor inlet temperature (from your engine data)")
    max_Tt3_K: float = _num(500.0, 1300.0, "largest HPC exit temperature (from your engine data)")
    min_core_size_kg_s: float = _num(0.0, 100.0, "smallest HPC exit corrected flow")
    enforce_max_takeoff_mass: bool = Field(False, description="add take-off mass <= maximum take-off mass as a "
                                                              "constraint of the best-cycle problem")


class Engine(_Section):
    """``[engine]``: component efficiencies and losses, extractions, fuel and turbine cooling data."""

    fan_bypass_eff_poly_ref: float = _ranged("fan bypass polytropic efficiency without tip shock loss (technology "
                                             "level)", "fan_bypass_eff_poly_ref")
    fan_core_eff_poly: float = _ranged("fan core-side polytropic efficiency", "fan_core_eff_poly")
    booster_eff_poly: float = _ranged("booster polytropic efficiency", "booster_eff_poly")
    hpc_eff_poly_ref: float = _ranged("HPC polytropic efficiency at the reference core size (technology level)",
                                      "hpc_eff_poly_ref")
    hpt_eff_poly_ref: float = _ranged("HPT polytropic efficiency at the reference core size (technology level)",
                                      "hpt_eff_poly_ref")
    lpt_eff_poly_ref: float = _ranged("LPT polytropic efficiency at the reference stage design (technology level)",
                                      "lpt_eff_poly_ref")
    HP_mech_eff: float = _num(0.5, 1.0, "HP spool mechanical efficiency", "HP_mech_eff", lo_open=True)
    LP_mech_eff_ref: float = _ranged("LP spool mechanical efficiency without a gearbox", "LP_mech_eff_ref")
    core_size_ref_kg_s: float = _ranged("HPC exit corrected flow below which HPC and HPT efficiency fall (core-size "
                                        "effect)", "core_size_ref")
    hpc_clearance_ratio_ref: float = _ranged("HPC tip clearance / blade height at the reference core size",
                                             "hpc_clearance_ratio_ref")
    hpt_clearance_ratio_ref: float = _ranged("HPT tip clearance / blade height at the reference core size",
                                             "hpt_clearance_ratio_ref")
    fan_shock_loss_factor: float = _ranged("scale of the fan tip's shock loss (0: none)", "fan_shock_loss_factor")
    lpt_exit_mach: float = _ranged("axial Mach number at the LPT exit (sets its annulus)", "lpt_exit_mach")
    lpt_exit_hub_tip_ratio: float = _ranged("LPT exit hub-to-tip ratio", "lpt_exit_hub_tip_ratio")
    lpt_stage_loading: float = _ranged("LPT stage loading dh/U^2 (sets its stage count)", "lpt_stage_loading")
    gearbox: bool = Field(False, description="fan reduction gearbox between the LP turbine and the fan")
    gear_ratio: float = _ranged("LP turbine speed / fan speed (with gearbox = true)", "gear_ratio")
    gearbox_eff: float = _ranged("gearbox efficiency (with gearbox = true)", "gearbox_eff")
    inlet_recovery: float = _ranged("intake total-pressure recovery", "inlet_recovery")
    burner_pressure_loss: float = _ranged("burner total-pressure loss fraction", "burner_pressure_loss")
    combustion_eff: float = _num(0.5, 1.0, "combustion efficiency", "combustion_eff", lo_open=True)
    core_duct_pressure_loss: float = _ranged("core exhaust duct pressure loss fraction", "core_duct_pressure_loss")
    bypass_duct_pressure_loss: float = _ranged("bypass duct pressure loss fraction", "bypass_duct_pressure_loss")
    core_nozzle_velocity_coeff: float = _ranged("core nozzle velocity coefficient", "core_nozzle_velocity_coeff")
    bypass_nozzle_velocity_coeff: float = _ranged("bypass nozzle velocity coefficient", "bypass_nozzle_velocity_coeff")
    core_nozzle_discharge_coeff: float = _ranged("core nozzle discharge coefficient", "core_nozzle_discharge_coeff")
    bypass_nozzle_discharge_coeff: float = _ranged("bypass nozzle discharge coefficient",
                                                   "bypass_nozzle_discharge_coeff")
    booster_PR: float = _num(1.0, 5.0, "booster pressure ratio", "booster_PR")
    customer_bleed_frac: float = _ranged("customer bleed per unit core flow", "customer_bleed_frac")
    HP_power_offtake_W: float = _ranged("HP shaft power offtake for aircraft systems", "HP_power_offtake")
    fuel_LHV_J_per_kg: float = _ranged("fuel lower heating value", "fuel_LHV")
    fuel_hc_ratio: float = _num(0.5, 4.0, "fuel hydrogen-to-carbon atom ratio", default=FUEL_HC_RATIO)
    vane_metal_temperature_K: float = _ranged("allowable HPT vane metal temperature (engine data)",
                                              "vane_metal_temperature")
    rotor_metal_temperature_K: float = _ranged("allowable HPT blade metal temperature (engine data)",
                                               "rotor_metal_temperature")
    vane_cooling_constant: float = _ranged("cooling correlation constant of the HPT vanes", "vane_cooling_constant")
    rotor_cooling_constant: float = _ranged("cooling correlation constant of the HPT blades", "rotor_cooling_constant")
    rotor_relative_temperature_ratio: float = _ranged("rotor-relative / absolute gas temperature",
                                                      "rotor_relative_temperature_ratio")


DesignVariables = create_model(
    "DesignVariables", __base__=_Section,
    __doc__="``[design_variables]``: starting value, bounds and 'optimize' flag of each cycle design variable.",
    **{key: (_DV_MODELS[key], Field(None, description=desc)) for key, (_, _, _, desc) in DESIGN_VARIABLES.items()})


class PreviousEngine(_Section):
    """``[previous_engine]``: the previous-generation engine of the re-engining comparison."""

    BPR: float = _num(1.0, 25.0, "bypass ratio of the previous-generation engine")
    FPR: float = _num(1.1, 3.0, "fan pressure ratio of the previous-generation engine")
    OPR: float = _num(10.0, 80.0, "overall pressure ratio of the previous-generation engine")
    Tt4_K: float = _num(1100.0, 2200.0, "burner exit temperature of the previous-generation engine")
    efficiency_drop: float = _num(0.0, 0.1, "points subtracted from every polytropic efficiency")


class Optimizer(_Section):
    """``[optimizer]``: objective, driver and its settings."""

    model: Literal[MODELS] = _choice("engine model: 'multipoint' (designed at [design_point], temperature limits "
                                     "at [takeoff], mission at [cruise]) or 'design_point' (everything at "
                                     "[design_point])")
    objective: Literal["mission_fuel", "installed_TSFC"] = _choice("quantity minimised")
    driver: Literal["SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP"] = _choice("optimizer")
    maxiter: int = _int(1, 1000, "largest number of optimizer iterations")
    tol: float = _num(1e-12, 1e-2, "optimizer convergence tolerance")


_BPR_LIST, _BPR_FIELD = _numbers(1.0, 25.0, "bypass ratios of the carpet (at least 2)")
_OPR_LIST, _OPR_FIELD = _numbers(10.0, 80.0, "overall pressure ratios of the carpet (at least 2)")
_TRADE_LIST, _TRADE_FIELD = _numbers(0.0, 1e4, "values of the swept limit (at least 2)")


class Carpet(_Section):
    """``[carpet]``: grid of the BPR-OPR carpet plot."""

    BPR_values: _BPR_LIST = _BPR_FIELD
    OPR_values: _OPR_LIST = _OPR_FIELD
    FPR_mode: Literal["fixed", "optimal"] = _choice("FPR at each carpet point")


class Trade(_Section):
    """``[trade]``: the limit swept by the trade curve and its values."""

    limit: Literal["max_nacelle_diameter_m", "wing_height_m", "min_ground_clearance_m", "max_Tt41_K",
                   "max_Tt3_K"] = _choice("limit swept by the trade curve")
    values: _TRADE_LIST = _TRADE_FIELD


#: The sections of a scenario file, in file order: name -> pydantic model.
SECTION_MODELS = {
    "aircraft": Aircraft,
    "design_point": DesignPoint,
    "takeoff": Takeoff,
    "cruise": Cruise,
    "installation": Installation,
    "limits": Limits,
    "engine": Engine,
    "design_variables": DesignVariables,
    "previous_engine": PreviousEngine,
    "optimizer": Optimizer,
    "carpet": Carpet,
    "trade": Trade,
}

# --------------------------------------------------------------------------------------------------------
# A plain view of the models: {section: {key: spec}} (spec: type, lo, hi, lo_open, hi_open, desc, var, choices)


def _bounds(items):
    """(lo, hi, lo_open, hi_open) from annotated-types constraints (also inside FieldInfo objects)."""
    lo = hi = None
    lo_open = hi_open = False
    for item in items:
        if isinstance(item, FieldInfo):
            b = _bounds(item.metadata)
            lo, lo_open = (b[0], b[2]) if b[0] is not None else (lo, lo_open)
            hi, hi_open = (b[1], b[3]) if b[1] is not None else (hi, hi_open)
        elif isinstance(item, annotated_types.Ge):
            lo, lo_open = item.ge, False
        elif isinstance(item, annotated_types.Gt):
            lo, lo_open = item.gt, True
        elif isinstance(item, annotated_types.Le):
            hi, hi_open = item.le, False
        elif isinstance(item, annotated_types.Lt):
            hi, hi_open = item.lt, True
    return lo, hi, lo_open, hi_open


def _field_spec(field):
    ann = field.annotation
    desc = field.description
    extra = field.json_schema_extra if isinstance(field.json_schema_extra, dict) else {}
    if isinstance(ann, type) and issubclass(ann, DesignVariable):
        lo, hi, lo_open, hi_open = _bounds(ann.model_fields["initial"].metadata)
        return {"type": "dv", "desc": desc, "lo": lo, "hi": hi}
    if get_origin(ann) is list:
        lo, hi, lo_open, hi_open = _bounds(get_args(get_args(ann)[0])[1:])
        return {"type": "list", "lo": lo, "hi": hi, "desc": desc}
    if get_origin(ann) is Literal:
        return {"type": "str", "desc": desc, "choices": get_args(ann)}
    if ann is bool:
        return {"type": "bool", "desc": desc}
    lo, hi, lo_open, hi_open = _bounds(field.metadata)
    if ann is int:
        return {"type": "int", "lo": lo, "hi": hi, "desc": desc}
    if ann is float:
        return {"type": "number", "lo": lo, "hi": hi, "desc": desc, "var": extra.get("var"), "lo_open": lo_open,
                "hi_open": hi_open}
    return {"type": "str", "desc": desc, "choices": None}


#: {section: {key: spec}}: a plain view of the pydantic models (read-only by convention), in file order.
SCHEMA = {section: {key: _field_spec(field) for key, field in model.model_fields.items()}
          for section, model in SECTION_MODELS.items()}

_DV_KEYS = tuple(DesignVariable.model_fields)

# --------------------------------------------------------------------------------------------------------
# Error messages: one line per error, naming the key, the value, what is wrong, the range and the meaning


def _fmt_range(spec):
    lo = ("above " if spec.get("lo_open") else "from ") + f"{spec['lo']:g}"
    hi = ("below " if spec.get("hi_open") else "up to ") + f"{spec['hi']:g}"
    return f"{lo} {hi}"


def _show(value, limit=60):
    """Return a value as written in a message: short, and with control characters escaped."""
    text = repr(value)
    return text if len(text) <= limit else text[:limit - 3] + "..."


def _show_number(value):
    if isinstance(value, float):
        return f"{value:g}"
    return _show(value)


def _name(key):
    """Return a key or section name from a file, safe to print."""
    return key if isinstance(key, str) and key.isprintable() and len(key) <= 60 else _show(key)


_RANGE_ERRORS = {"greater_than", "greater_than_equal", "less_than", "less_than_equal", "finite_number"}
_MISSING = object()


def _number_message(where, value, spec, kind):
    if kind in _RANGE_ERRORS:
        return (f"{where} = {_show_number(value)} is outside the allowed range ({_fmt_range(spec)}) "
                f"for {spec['desc']}.")
    return f"{where} = {_show(value)} must be a number in the range {_fmt_range(spec)} ({spec['desc']})."


def _describe(section, error):
    """One line for one pydantic error of a section."""
    loc, kind, value = error["loc"], error["type"], error.get("input", _MISSING)
    if not loc:  # pragma: no cover - sections are checked to be tables before validation
        return f"[{section}]: {error['msg']}."
    key, sub = loc[0], loc[1:]
    if kind == "extra_forbidden" and not sub:
        if (section, key) in RENAMED_KEYS:
            new = RENAMED_KEYS[section, key]
            return (f"{section}.{key} was renamed to {section}.{new} in bypassopt 0.2; write "
                    f"{new} = {_show(value)} instead.")
        return f"unknown key {section}.{_name(key)}; allowed keys in [{section}]: {', '.join(SCHEMA[section])}."
    spec = SCHEMA[section][key]
    where = f"{section}.{key}" + "".join(f"[{s}]" if isinstance(s, int) else f".{_name(s)}" for s in sub)
    desc = spec["desc"]
    if spec["type"] == "dv":
        if kind == "extra_forbidden":
            return f"unknown key {where}; allowed keys: {', '.join(_DV_KEYS)}."
        if kind == "missing":
            return (f"{where} is missing: a design variable needs initial, lower and upper "
                    f"({desc}, {_fmt_range(spec)}).")
        if kind == "value_error" and isinstance(error.get("ctx", {}).get("error"), _BoundsError):
            bounds_error = error["ctx"]["error"]
            if bounds_error.sub:
                return f"{where}.{bounds_error.sub} {bounds_error} ({desc})."
            return f"{where}: {bounds_error} ({desc})."
        if not sub:
            return (f"{where} = {_show(value)} must be a table with keys {', '.join(_DV_KEYS)} "
                    f"({desc}, {_fmt_range(spec)}).")
        if sub == ("optimize",):
            return f"{where} = {_show(value)} must be true or false."
        return _number_message(where, value, spec, kind)
    if spec["type"] == "number":
        return _number_message(where, value, spec, kind)
    if spec["type"] == "int":
        if kind in _RANGE_ERRORS:
            return (f"{where} = {_show(value)} is outside the allowed range (from {spec['lo']} up to {spec['hi']}) "
                    f"for {desc}.")
        return f"{where} = {_show(value)} must be a whole number from {spec['lo']} up to {spec['hi']} ({desc})."
    if spec["type"] == "list":
        if sub:
            return _number_message(where, value, spec, kind)
        return (f"{where} = {_show(value)} must be a list of 2 to {MAX_LIST_LENGTH} numbers in the range "
                f"{_fmt_range(spec)} ({desc}).")
    if spec["type"] == "str":
        if spec["choices"]:
            return f"{where} = {_show(value)} is not one of {', '.join(spec['choices'])} ({desc})."
        if kind == "string_type":
            return f"{where} = {_show(value)} must be text ({desc})."
        if kind == "string_too_long":
            return f"{where} = {_show(value)} is longer than {MAX_TEXT_LENGTH} characters ({desc})."
        reason = error.get("ctx", {}).get("error", error["msg"])
        return f"{where} = {_show(value)} {reason}; allowed: printable text ({desc})."
    return f"{where} = {_show(value)}: {error['msg']} ({desc})."  # pragma: no cover


def _too_deep(data):
    """Where the mapping nests deeper than the schema allows (MAX_DEPTH containers), or None."""
    stack = [(data, 1, "")]
    while stack:
        node, depth, where = stack.pop()
        children = node.items() if isinstance(node, dict) else enumerate(node)
        for key, child in children:
            if isinstance(child, (dict, list)):
                path = f"{where}.{_name(key)}" if isinstance(key, str) else f"{where}[{key}]"
                if depth >= MAX_DEPTH:
                    return path.lstrip(".")
                stack.append((child, depth + 1, path))
    return None


def _raise(errors, source=None):
    if len(errors) == 1:
        raise ScenarioError(errors[0], errors)
    where = f"scenario file {source}" if source is not None else "the scenario"
    raise ScenarioError(f"{len(errors)} errors in {where}:\n" + "\n".join(f"  {e}" for e in errors), errors)


def validate(data, base=None, source=None):
    """Validate a scenario mapping and return it merged over ``base`` (default: nothing).

    Every section is checked against its pydantic model; all errors of the mapping are collected,
    together with the cross-key checks of the merged result, and reported at once.

    Parameters
    ----------
    data : dict
        Scenario sections as read from TOML: {section: {key: value}}.
    base : dict or None
        Validated scenario the keys of ``data`` override (the demo scenario for files).
    source : str or path-like or None
        File the mapping came from, named in a message of several errors.

    Returns
    -------
    dict
        {section: {key: value}}: numbers as float, design variables as {initial, lower, upper, optimize}.

    Raises
    ------
    ScenarioError
        A line per error, naming the section and key, the value, the allowed range and the key's meaning.
    """
    if not isinstance(data, dict):
        raise ScenarioError("a scenario must be a TOML table")
    deep = _too_deep(data)
    if deep is not None:
        raise ScenarioError(f"{deep} nests deeper than the scenario schema allows (a section holds keys whose "
                            f"values are numbers, text, lists of numbers or design-variable tables).")
    merged = copy.deepcopy(base) if base is not None else {}
    errors = []
    for section, table in data.items():
        if section not in SECTION_MODELS:
            errors.append(f"unknown section [{_name(section)}]; allowed: {', '.join(SECTION_MODELS)}.")
            continue
        if not isinstance(table, dict):
            errors.append(f"[{section}] must be a table of keys, not {_show(table)}.")
            continue
        model = SECTION_MODELS[section]
        try:
            checked = model.model_validate(table)
        except ValidationError as err:
            details = err.errors(include_url=False)
            errors.extend(_describe(section, e) for e in details)
            bad = {e["loc"][0] for e in details if e["loc"]}
            checked = model.model_validate({k: v for k, v in table.items() if k not in bad})
        out = merged.setdefault(section, {})
        for key in table:
            if key in checked.model_fields_set:
                value = getattr(checked, key)
                out[key] = value.model_dump() if isinstance(value, BaseModel) else value
    errors.extend(_check_consistency(merged))
    if errors:
        _raise(errors, source)
    return merged


def _check_consistency(s):
    """Cross-key checks: limits that no design can meet are reported before any computation.

    Returns
    -------
    list of str
        One line per infeasible combination (empty when consistent).
    """
    errors = []
    inst, lim = s.get("installation", {}), s.get("limits", {})
    if {"wing_height_m", "nacelle_wing_gap_m", "min_ground_clearance_m"} <= set(inst):
        room = inst["wing_height_m"] - inst["nacelle_wing_gap_m"] - inst["min_ground_clearance_m"]
        if room <= 0.3:
            errors.append(
                f"infeasible limits: installation.wing_height_m - nacelle_wing_gap_m - min_ground_clearance_m = "
                f"{room:g} m leaves no room for a nacelle (needs more than 0.3 m).")
    if "max_nacelle_diameter_m" in lim and lim["max_nacelle_diameter_m"] <= 0.3:
        errors.append("infeasible limits: limits.max_nacelle_diameter_m must exceed 0.3 m.")
    ac = s.get("aircraft", {})
    if {"max_takeoff_mass_kg", "empty_mass_no_engines_kg", "payload_kg"} <= set(ac):
        if ac["empty_mass_no_engines_kg"] + ac["payload_kg"] >= ac["max_takeoff_mass_kg"]:
            errors.append("infeasible aircraft: empty_mass_no_engines_kg + payload_kg is not below "
                          "max_takeoff_mass_kg.")
    if "Tt4_K" in s.get("design_variables", {}) and "max_Tt41_K" in lim:
        if lim["max_Tt41_K"] <= 1000.0:
            errors.append("infeasible limits: limits.max_Tt41_K must exceed 1000 K.")
    eng = s.get("engine", {})
    t3_key = "takeoff" if is_multipoint(s) else "limits"
    t3_limit = s.get(t3_key, {}).get("max_Tt3_K")
    for key in ("vane_metal_temperature_K", "rotor_metal_temperature_K"):
        if t3_limit is not None and key in eng and eng[key] <= t3_limit:
            errors.append(f"infeasible limits: engine.{key} = {eng[key]:g} K is not above {t3_key}.max_Tt3_K = "
                          f"{t3_limit:g} K: the cooling air is HPC exit air, so the metal must be allowed hotter "
                          f"than the compressor exit temperature the limit permits.")
    errors.extend(_check_model_limits(s))
    return errors


#: Error bound of ``_fan_tip_diameter_estimate`` against the model's fan sizing: within 30 % over the design
#: variables' and flight conditions' common range (measured on the demo scenario: ratio 0.93-1.28).
FAN_ESTIMATE_TOLERANCE = 1.3


def _static_temperature(altitude_m, dT_isa_K):
    """Return the static temperature (K) and pressure (Pa) of the model's atmosphere (``AtmosphereComp``)."""
    import numpy as np

    from bypassopt.components.atmosphere.atmosphere_comp import AtmosphereComp

    T_std, _, p, _ = AtmosphereComp._standard(np.array([float(altitude_m)]))
    return float(T_std[0]) + dT_isa_K, float(p[0])


def _fan_tip_diameter_estimate(s):
    """Fan tip diameter (m) the design-point thrust needs at the starting design, or None when not estimable.

    Momentum estimate with air as a perfect gas (gamma = 1.4): the whole flow W2 leaves through an ideally expanded
    bypass nozzle, W2 = thrust / (V19 - V0), and passes the fan face at ``fan_face_mach`` with the intake's total
    state; the annulus with ``fan_hub_tip_ratio`` gives the diameter. The core jet is faster than the bypass jet,
    so the estimate tends to be above the model's sizing (within ``FAN_ESTIMATE_TOLERANCE``).
    """
    import math

    from bypassopt.components.atmosphere.atmosphere_comp import R_AIR

    dp, inst, eng, dv = (s.get(k, {}) for k in ("design_point", "installation", "engine", "design_variables"))
    need = {"altitude_m", "dT_isa_K", "mach", "thrust_required_N"}
    if not (need <= set(dp) and "FPR" in dv and {"fan_face_mach", "fan_hub_tip_ratio"} <= set(inst)):
        return None
    Ts, Ps = _static_temperature(dp["altitude_m"], dp["dT_isa_K"])
    if Ts <= 0.0:
        return None
    g = 1.4
    x = (g - 1.0) / g
    cp = R_AIR / x
    M0 = dp["mach"]
    Tt0 = Ts * (1.0 + 0.5 * (g - 1.0) * M0 ** 2)
    Pt2 = Ps * (Tt0 / Ts) ** (1.0 / x) * eng.get("inlet_recovery", 1.0)
    V0 = M0 * math.sqrt(g * R_AIR * Ts)
    fpr = dv["FPR"]["initial"]
    Tt13 = Tt0 * fpr ** (x / eng.get("fan_bypass_eff_poly_ref", 1.0))
    Pt13 = Pt2 * fpr * (1.0 - eng.get("bypass_duct_pressure_loss", 0.0))
    V19 = eng.get("bypass_nozzle_velocity_coeff", 1.0) * math.sqrt(2.0 * cp * Tt13 * max(0.0, 1.0 - (Ps / Pt13) ** x))
    if V19 <= V0:
        return None  # no thrust from the bypass stream: the model reports it with its own message
    W2 = dp["thrust_required_N"] / (V19 - V0)
    Mf = inst["fan_face_mach"]
    flow_per_area = Pt2 * math.sqrt(g / (R_AIR * Tt0)) * Mf * (1.0 + 0.5 * (g - 1.0) * Mf ** 2) ** (
        -(g + 1.0) / (2.0 * (g - 1.0)))
    return math.sqrt(4.0 * W2 / flow_per_area / (math.pi * (1.0 - inst["fan_hub_tip_ratio"] ** 2)))


def _check_model_limits(s):
    """Cross-key limits of the model that no single key range expresses (``bypassopt.components.ranges``).

    * the design point's static temperature (altitude with ISA offset) must lie in the gas model's range;
    * ``limits.max_nacelle_diameter_m`` must be a nacelle the model can size: at most the largest fan
      (``FAN_TIP_DIAMETER_MAX``) times ``nacelle_diameter_ratio`` plus ``containment_allowance_m``;
    * the design-point thrust must need a fan inside the model's fan-diameter range at the starting design
      (``_fan_tip_diameter_estimate``, judged with its error bound ``FAN_ESTIMATE_TOLERANCE``).

    Returns
    -------
    list of str
        One line per violated limit, naming the keys, their values and the reason.
    """
    errors = []
    dp, inst, lim = s.get("design_point", {}), s.get("installation", {}), s.get("limits", {})
    t_lo, t_hi = GAS_TEMPERATURE_RANGE
    if {"altitude_m", "dT_isa_K"} <= set(dp):
        Ts, _ = _static_temperature(dp["altitude_m"], dp["dT_isa_K"])
        if not t_lo <= Ts <= t_hi:
            errors.append(
                f"design_point.altitude_m = {dp['altitude_m']:g} with design_point.dT_isa_K = {dp['dT_isa_K']:g} gives "
                f"a static temperature of {Ts:.5g} K, outside the gas model's range ({t_lo:g} to {t_hi:g} K); "
                f"lower the altitude or raise dT_isa_K.")
    if {"nacelle_diameter_ratio", "containment_allowance_m"} <= set(inst) and "max_nacelle_diameter_m" in lim:
        largest = FAN_TIP_DIAMETER_MAX * inst["nacelle_diameter_ratio"] + inst["containment_allowance_m"]
        if lim["max_nacelle_diameter_m"] > largest:
            errors.append(
                f"limits.max_nacelle_diameter_m = {lim['max_nacelle_diameter_m']:g} m is above the largest nacelle the "
                f"model can size, {largest:.4g} m (the {FAN_TIP_DIAMETER_MAX:g} m fan tip diameter cap times "
                f"installation.nacelle_diameter_ratio = {inst['nacelle_diameter_ratio']:g}, plus "
                f"installation.containment_allowance_m = {inst['containment_allowance_m']:g} m).")
    d_fan = _fan_tip_diameter_estimate(s)
    if d_fan is not None and not (FAN_TIP_DIAMETER_MIN / FAN_ESTIMATE_TOLERANCE <= d_fan
                                  <= FAN_TIP_DIAMETER_MAX * FAN_ESTIMATE_TOLERANCE):
        fpr = s["design_variables"]["FPR"]["initial"]
        errors.append(
            f"design_point.thrust_required_N = {dp['thrust_required_N']:g} N needs a fan tip diameter of about "
            f"{d_fan:.3g} m at design_point.altitude_m = {dp['altitude_m']:g}, mach = {dp['mach']:g}, "
            f"dT_isa_K = {dp['dT_isa_K']:g} and design_variables.FPR.initial = {fpr:g} (momentum estimate), outside "
            f"the model's fan range ({FAN_TIP_DIAMETER_MIN:g} to {FAN_TIP_DIAMETER_MAX:g} m).")
    return errors


def model_defaults():
    """Scenario values that default to the model's input defaults (``bypassopt.components.defaults``).

    Returns
    -------
    dict
        {section: {key: value}} of the ``[engine]`` and ``[installation]`` keys and
        ``limits.max_nacelle_diameter_m``.
    """
    out = {}
    for section, model in SECTION_MODELS.items():
        values = {key: field.default for key, field in model.model_fields.items()
                  if not field.is_required() and field.default is not None and not isinstance(field.default, bool)}
        if values:
            out[section] = values
    return out


@functools.lru_cache(maxsize=1)
def _demo():
    text = resources.files("bypassopt").joinpath("data", DEMO_SCENARIO).read_text(encoding="utf-8")
    s = validate(tomllib.loads(text), base=model_defaults(), source=DEMO_SCENARIO)
    missing = [f"{sec}.{key}" for sec, keys in SCHEMA.items() for key in keys
               if sec not in ("previous_engine",) and key not in s.get(sec, {})]
    if missing:  # pragma: no cover - guarded by tests
        raise ScenarioError(f"built-in demo scenario lacks {', '.join(missing)}")
    return s


def demo_scenario():
    """Return the validated built-in demo scenario (an invented 170-seat twin; see the file's header).

    Keys the file leaves out of ``[engine]``, ``[installation]`` and ``limits.max_nacelle_diameter_m``
    take the model's input defaults; every call returns an independent copy.
    """
    return copy.deepcopy(_demo())


def _read_toml(path):
    """Parse a scenario file: bounded size, UTF-8 text, TOML; every failure is a one-line ScenarioError."""
    try:
        with open(path, "rb") as fh:
            raw = fh.read(MAX_FILE_BYTES + 1)
    except OSError as err:
        raise ScenarioError(f"cannot read scenario file {path}: {err.strerror or err}") from err
    if len(raw) > MAX_FILE_BYTES:
        raise ScenarioError(f"scenario file {path} is larger than {MAX_FILE_BYTES // 2**20} MiB; a scenario is a "
                            f"few kB of TOML text.")
    if b"\x00" in raw:
        raise ScenarioError(f"scenario file {path} is a binary file (it contains NUL bytes), not TOML text.")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as err:
        raise ScenarioError(f"scenario file {path} is not UTF-8 text (byte 0x{raw[err.start]:02x} at offset "
                            f"{err.start}); save it as UTF-8.") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise ScenarioError(f"scenario file {path} is not valid TOML: {_one_line(err)}") from err
    except RecursionError:
        raise ScenarioError(f"scenario file {path} nests deeper than the scenario schema allows.") from None


def _one_line(err):
    return " ".join(str(err).split())


def load_scenario(path=None):
    """Load and validate a scenario file; keys it leaves out take the demo scenario's values.

    Parameters
    ----------
    path : str or path-like or None
        TOML file (UTF-8, at most 1 MiB); None gives the built-in demo scenario.

    Returns
    -------
    dict
        The validated scenario merged over the demo: {section: {key: value}}.

    Raises
    ------
    ScenarioError
        The file cannot be read or parsed (one line), or has errors (a line per error, all at once).
    """
    base = demo_scenario()
    if path is None:
        return base
    return validate(_read_toml(path), base=base, source=path)


#: Unit suffixes of scenario keys -> OpenMDAO units (SI; a key without a suffix is dimensionless).
KEY_UNITS = {"_m": "m", "_K": "K", "_N": "N", "_kg": "kg", "_W": "W", "_m2": "m**2", "_J_per_kg": "J/kg",
             "_kg_s": "kg/s"}


def key_units(key):
    """Return the OpenMDAO units of a scenario key from its name's suffix (None: dimensionless)."""
    return next((u for suffix, u in sorted(KEY_UNITS.items(), key=lambda kv: -len(kv[0])) if key.endswith(suffix)),
                None)


def _check_table_units():
    """Require each key that takes its range from ``INPUT_RANGES`` to carry the table's units (import-time check)."""
    for section, keys in SCHEMA.items():
        for key, spec in keys.items():
            var = spec.get("var")
            if var in INPUT_RANGES and key_units(key) != INPUT_RANGES[var][4]:  # pragma: no cover - guarded by tests
                raise RuntimeError(f"{section}.{key} is in {key_units(key)} but INPUT_RANGES[{var!r}] is in "
                                   f"{INPUT_RANGES[var][4]}; the shared range would be wrong.")


_check_table_units()


def is_multipoint(scenario):
    """Return True when the scenario uses the multipoint engine model (``[optimizer] model``, the default)."""
    return scenario.get("optimizer", {}).get("model", "multipoint") == "multipoint"


#: ``[engine]`` keys of the fan reduction gearbox (model inputs only with ``gearbox = true``).
GEARBOX_KEYS = ("gear_ratio", "gearbox_eff")

#: Sections only the multipoint model reads.
MULTIPOINT_SECTIONS = ("takeoff", "cruise")


def design_point_scenario(scenario):
    """Return a copy of the scenario whose engine model is the design point alone (``[optimizer] model``)."""
    out = copy.deepcopy(scenario)
    out.setdefault("optimizer", {})["model"] = "design_point"
    return out


def constraint_limits(scenario):
    """Return the temperature and core-size limits of the scenario's engine model.

    Returns
    -------
    dict
        {"section.key": (model output, 'upper'/'lower', limit, description)}: ``[limits]`` at the design point
        (every model) and, for the multipoint model, ``[takeoff]`` at take-off.
    """
    out = {f"limits.{key}": (var, kind, scenario["limits"][key], desc)
           for key, (var, kind, desc) in CONSTRAINT_LIMITS.items() if key in scenario.get("limits", {})}
    if is_multipoint(scenario):
        out.update({f"takeoff.{key}": (var, kind, scenario["takeoff"][key], desc)
                    for key, (var, kind, desc) in TAKEOFF_LIMITS.items() if key in scenario.get("takeoff", {})})
    return out


def model_inputs(scenario):
    """Map a validated scenario onto promoted model input names: {name: (value, units)}.

    The ``[takeoff]`` and ``[cruise]`` inputs are included only for the multipoint model.
    """
    out = {}
    geared = bool(scenario.get("engine", {}).get("gearbox", False))
    for section, keys in SCHEMA.items():
        if section in MULTIPOINT_SECTIONS and not is_multipoint(scenario):
            continue
        if section == "engine" and not geared:  # the gearbox's inputs exist only with it
            keys = {k: v for k, v in keys.items() if k not in GEARBOX_KEYS}
        for key, spec in keys.items():
            var = spec.get("var")
            if var and key in scenario.get(section, {}):
                out[var] = (scenario[section][key], key_units(key))
    for key, (var, _, _, _) in DESIGN_VARIABLES.items():
        if key in scenario.get("design_variables", {}):
            out[var] = (scenario["design_variables"][key]["initial"], "K" if key.endswith("_K") else None)
    return out


def schema_markdown():
    """Markdown rows (key | meaning | allowed) of every section and key, generated from the models, as in README."""
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
                allowed = (", ".join(spec["choices"]) if spec.get("choices")
                           else f"printable text, ≤ {MAX_TEXT_LENGTH} characters")
            elif kind == "list":
                allowed = f"list of 2 – {MAX_LIST_LENGTH} numbers, {spec['lo']:g} – {spec['hi']:g}"
            elif kind == "dv":
                allowed = f"{{initial, lower, upper, optimize}}, {spec['lo']:g} – {spec['hi']:g}"
            else:  # pragma: no cover
                allowed = kind
            lines.append(f"| `{key}` | {spec['desc']} | {allowed} |")
    return "\n".join(lines)
