"""Default values of the engine and installation inputs: the one table the model and the scenario files share.

``InstalledEngineGroup`` sets these (``INPUT_DEFAULTS``) as the defaults of its promoted inputs
(``set_input_defaults``), and the scenario schema (``bypassopt.scenario``) takes them as the defaults of its
``[engine]``, ``[installation]`` and ``limits.max_nacelle_diameter_m`` keys, so the bare group of the embedding
example and ``bypassopt evaluate`` compute the same engine. The built-in demo scenario (``demo_twin_170.toml``)
lists the same values so that it stays a complete template; a test keeps it identical to this table.

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

#: Cycle inputs of ENGINE_DEFAULTS that the installed engine computes from a technology level and the engine's
#: size, speeds and loadings (``InstalledEngineGroup``'s turbomachinery models); the group's inputs are the
#: ``<name>_ref`` entries of TURBOMACHINERY_DEFAULTS instead.
COMPUTED_ENGINE_INPUTS = ("fan_bypass_eff_poly", "hpc_eff_poly", "hpt_eff_poly", "lpt_eff_poly", "LP_mech_eff")

#: Inputs of the installed engine's turbomachinery models: promoted input name -> (value, units or None).
#: Technology levels (``<name>_ref``): the efficiency at the reference core size (HPC, HPT), without tip shock
#: loss (fan bypass stream), at the reference LP-turbine stage design, and without a gearbox (LP spool); the
#: values are those of ENGINE_DEFAULTS except the fan's, which is the shock-free level (the top of the
#: common-practice band 0.90-0.93, field-reference 3.3). Core size effect: reference HPC exit corrected flow
#: (current narrow-body cores run about 2-3 kg/s, common practice) and stage-averaged tip clearance / blade
#: height there (common practice 1-2 %). LP turbine: exit axial Mach number and hub-to-tip ratio, stage loading
#: dh/U^2 (common practice 0.3-0.5, 0.55-0.75, 1.5-3).
TURBOMACHINERY_DEFAULTS = {
    "fan_bypass_eff_poly_ref": (0.93, None),
    "hpc_eff_poly_ref": (0.91, None),
    "hpt_eff_poly_ref": (0.90, None),
    "lpt_eff_poly_ref": (0.91, None),
    "LP_mech_eff_ref": (0.99, None),
    "core_size_ref": (3.0, "kg/s"),
    "hpc_clearance_ratio_ref": (0.015, None),
    "hpt_clearance_ratio_ref": (0.010, None),
    "fan_shock_loss_factor": (1.0, None),
    "lpt_exit_mach": (0.40, None),
    "lpt_exit_hub_tip_ratio": (0.65, None),
    "lpt_stage_loading": (2.5, None),
}

#: Inputs of the fan reduction gearbox (``InstalledEngineGroup(gearbox=True)`` only): gear ratio LP turbine /
#: fan speed (common practice 2.5-3.5) and gearbox efficiency (common practice 0.99-0.995).
GEARBOX_DEFAULTS = {
    "gear_ratio": (3.0, None),
    "gearbox_eff": (0.99, None),
}

#: Every input default of the installed engine (direct drive): the cycle inputs it does not compute, the
#: turbomachinery models' inputs and the installation inputs.
INPUT_DEFAULTS = {**{k: v for k, v in ENGINE_DEFAULTS.items() if k not in COMPUTED_ENGINE_INPUTS},
                  **TURBOMACHINERY_DEFAULTS, **INSTALLATION_DEFAULTS}

#: Fuel hydrogen-to-carbon atom ratio (an option of the gas model, not a model input); equal to the default
#: of ``ThermallyPerfectGas`` (a test keeps them equal).
FUEL_HC_RATIO = 1.92
