"""Default values of the engine and installation inputs: the one table the model and the scenario files share.

``InstalledEngineGroup`` sets these as the defaults of its promoted inputs (``set_input_defaults``), and the
scenario schema (``bypassopt.scenario``) takes them as the defaults of its ``[engine]``, ``[installation]``
and ``limits.max_nacelle_diameter_m`` keys, so the bare group of the embedding example and
``bypassopt evaluate`` compute the same engine. The built-in demo scenario (``demo_twin_170.toml``) lists the
same values so that it stays a complete template; a test keeps it identical to this table.

Values are common-practice figures for a modern high-bypass engine and the installation of the invented demo
aircraft (see README); they are starting values, not data of any real engine. This module is pure data: it
imports nothing from OpenMDAO and nothing from the rest of the package.
"""

#: Cycle inputs: promoted input name -> (value, OpenMDAO units or None for dimensionless).
ENGINE_DEFAULTS = {
    "fan_bypass_eff_poly": (0.92, None),
    "fan_core_eff_poly": (0.90, None),
    "booster_eff_poly": (0.90, None),
    "hpc_eff_poly": (0.91, None),
    "hpt_eff_poly": (0.90, None),
    "lpt_eff_poly": (0.91, None),
    "HP_mech_eff": (0.99, None),
    "LP_mech_eff": (0.99, None),
    "inlet_recovery": (0.997, None),
    "burner_pressure_loss": (0.04, None),
    "combustion_eff": (0.999, None),
    "core_duct_pressure_loss": (0.01, None),
    "bypass_duct_pressure_loss": (0.015, None),
    "core_nozzle_velocity_coeff": (0.99, None),
    "bypass_nozzle_velocity_coeff": (0.99, None),
    "core_nozzle_discharge_coeff": (0.98, None),
    "bypass_nozzle_discharge_coeff": (0.98, None),
    "booster_PR": (1.8, None),
    "customer_bleed_frac": (0.005, None),
    "HP_power_offtake": (150.0e3, "W"),
    "fuel_LHV": (43.0e6, "J/kg"),
    "vane_metal_temperature": (1300.0, "K"),
    "rotor_metal_temperature": (1250.0, "K"),
    "vane_cooling_constant": (0.08, None),
    "rotor_cooling_constant": (0.08, None),
    "rotor_relative_temperature_ratio": (0.92, None),
}

#: Installation inputs (nacelle proportions, fan and core entry sizing, wing and ground geometry, the
#: nacelle diameter limit): promoted input name -> (value, OpenMDAO units or None).
INSTALLATION_DEFAULTS = {
    "wing_height": (3.15, "m"),
    "nacelle_wing_gap": (0.35, "m"),
    "min_ground_clearance": (0.50, "m"),
    "nacelle_diameter_ratio": (1.18, None),
    "containment_allowance": (0.05, "m"),
    "fan_cowl_length_ratio": (1.4, None),
    "core_cowl_diameter_ratio": (1.9, None),
    "core_cowl_length_ratio": (1.1, None),
    "core_exit_diameter_ratio": (0.75, None),
    "plug_diameter_ratio": (0.45, None),
    "plug_length_ratio": (1.2, None),
    "nacelle_interference_factor": (1.0, None),
    "pylon_drag_area": (0.025, "m**2"),
    "fan_face_mach": (0.65, None),
    "fan_hub_tip_ratio": (0.30, None),
    "core_entry_mach": (0.50, None),
    "core_entry_hub_tip_ratio": (0.55, None),
    "fan_tip_loading": (0.30, None),
    "max_nacelle_diameter": (2.60, "m"),
}

#: Every input default of the installed engine: ENGINE_DEFAULTS and INSTALLATION_DEFAULTS together.
INPUT_DEFAULTS = {**ENGINE_DEFAULTS, **INSTALLATION_DEFAULTS}

#: Fuel hydrogen-to-carbon atom ratio (an option of the gas model, not a model input); equal to the default
#: of ``ThermallyPerfectGas`` (a test keeps them equal).
FUEL_HC_RATIO = 1.92
