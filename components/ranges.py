"""Valid ranges of the model inputs that scenario keys set: the one table the components and the scenario share.

Each component that checks one of these inputs takes its range from ``INPUT_RANGES`` (``check_range``), and the
scenario schema (``bypassopt.scenario``) takes the allowed range of the key that sets the input from the same
entry, so a scenario value that passes validation is one the model accepts, and the two cannot drift (a test
keeps them equal). Units are the model input's OpenMDAO units; they are SI, as are the scenario keys (the unit
is in the key name).

Inputs whose component guards only the arithmetic with a wider range than the scenario allows (``Mach0``,
``lift_to_drag``, ``design_range``, the ground-geometry inputs, the turbine and combustion efficiencies,
``fan_face_mach``, ``booster_PR``) are not in the table: the scenario's range lies inside the model's there.

Limits that one range cannot express (static temperature from altitude and ISA offset, the fan diameter that a
thrust or a nacelle diameter limit implies) are checked across keys in ``bypassopt.scenario``, with the
constants below. This module is pure data: it imports nothing from OpenMDAO and nothing from the package.
"""

#: Model input name -> (lower, upper, lower_open, upper_open, OpenMDAO units or None for dimensionless).
INPUT_RANGES = {
    # --- flight condition of the design point (AtmosphereComp, InstalledPerformanceComp)
    # ISO 2533:1975 standard atmosphere, tabulated here up to 20 km geopotential (the model's atmosphere).
    "altitude": (0.0, 20000.0, False, False, "m"),
    # ISA offset: common practice for hot/cold-day studies (ISA+-60 K covers the recorded extremes aloft).
    "dT_isa": (-60.0, 60.0, False, False, "K"),
    # Installed net thrust per engine: positive; 1 MN is the upper end of the take-off thrust fitted by the
    # statistical mass correlation (common practice; the largest turbofans give about 0.5 MN at take-off).
    # Whether the fan that this thrust needs fits the fan-diameter range is a cross-key check of the scenario.
    "thrust_required": (0.0, 1.0e6, True, False, "N"),
    # --- aircraft (MissionFuelComp); common practice: light business jets (a few t) to the largest airliners
    # (about 600 t) with margin.
    "max_takeoff_mass": (1.0e3, 1.0e6, False, False, "kg"),
    "empty_mass_no_engines": (1.0e3, 1.0e6, False, False, "kg"),
    "payload": (0.0, 5.0e5, False, False, "kg"),
    # Reserve fuel fraction of zero-fuel mass: common practice 0.03-0.10; up to 0.3 for studies.
    "reserve_fraction": (0.0, 0.3, False, False, None),
    # Mission-segment mass ratios (Raymer, *Aircraft Design*, historical fractions 0.97-0.995).
    "taxi_takeoff_fraction": (0.9, 1.0, True, False, None),
    "climb_fraction": (0.9, 1.0, True, False, None),
    "descent_landing_fraction": (0.9, 1.0, True, False, None),
    # --- installation: nacelle proportions (NacelleGeometryComp; common practice, see its input table)
    "nacelle_diameter_ratio": (1.0, 1.6, False, False, None),
    "containment_allowance": (0.0, 0.5, False, False, "m"),
    "fan_cowl_length_ratio": (0.5, 3.0, False, False, None),
    "core_cowl_diameter_ratio": (1.0, 4.0, False, False, None),
    "core_cowl_length_ratio": (0.2, 4.0, False, False, None),
    "core_exit_diameter_ratio": (0.2, 1.0, False, False, None),
    "plug_diameter_ratio": (0.05, 1.0, False, False, None),
    "plug_length_ratio": (0.2, 4.0, False, False, None),
    # Nacelle drag (NacelleDragComp): Raymer's interference factor Q 1.0-1.5 (from memory), pylon drag area.
    "nacelle_interference_factor": (1.0, 2.0, False, False, None),
    "pylon_drag_area": (0.0, 5.0, False, False, "m**2"),
    # Fan and core entry sizing (FanSizingComp); common practice: hub-tip 0.25-0.35 fan, 0.5-0.65 core entry,
    # core entry Mach 0.4-0.6, fan tip loading dh/U^2 0.25-0.4.
    "fan_hub_tip_ratio": (0.0, 0.6, False, True, None),
    "core_entry_mach": (0.2, 0.8, False, False, None),
    "core_entry_hub_tip_ratio": (0.0, 0.8, False, True, None),
    "fan_tip_loading": (0.05, 1.0, False, False, None),
    # --- engine: component efficiencies and losses (common practice: polytropic 0.85-0.93, losses 1-5 %)
    "fan_bypass_eff_poly": (0.5, 1.0, False, False, None),
    "fan_core_eff_poly": (0.5, 1.0, False, False, None),
    "booster_eff_poly": (0.5, 1.0, False, False, None),
    "hpc_eff_poly": (0.5, 1.0, False, False, None),
    "inlet_recovery": (0.8, 1.0, False, False, None),
    "burner_pressure_loss": (0.0, 0.2, False, False, None),
    "core_duct_pressure_loss": (0.0, 0.2, False, False, None),
    "bypass_duct_pressure_loss": (0.0, 0.2, False, False, None),
    # Technology levels of the efficiencies that the turbomachinery models compute (CoreSizeEfficiencyComp,
    # FanShockLossComp, LPSpoolComp, GearboxComp): the same ranges as the efficiencies themselves.
    "fan_bypass_eff_poly_ref": (0.5, 1.0, False, False, None),
    "hpc_eff_poly_ref": (0.5, 1.0, False, False, None),
    "hpt_eff_poly_ref": (0.5, 1.0, False, False, None),
    "lpt_eff_poly_ref": (0.5, 1.0, False, False, None),
    "LP_mech_eff_ref": (0.5, 1.0, True, False, None),
    # Core size effect (CoreSizeEfficiencyComp): reference HPC exit corrected flow, small business-jet to the
    # largest civil cores; tip clearance / blade height at that size, common practice 0.5-3 %.
    "core_size_ref": (0.2, 50.0, False, False, "kg/s"),
    "hpc_clearance_ratio_ref": (0.0, 0.1, False, False, None),
    "hpt_clearance_ratio_ref": (0.0, 0.1, False, False, None),
    # Fan tip shock loss (FanShockLossComp): factor on the normal-shock model, 0 (off) to 5.
    "fan_shock_loss_factor": (0.0, 5.0, False, False, None),
    # LP turbine (LPSpoolComp): exit axial Mach 0.3-0.5 and hub-to-tip 0.55-0.75 (common practice), stage
    # loading dh/U^2 1.5-3 (common practice; Smith's and Soderberg's data cover about 0.5-4); gear ratio of
    # reduction gears (common practice 2.5-3.5 in geared turbofans); gearbox efficiency (GearboxComp), common
    # practice 0.99-0.995.
    "lpt_exit_mach": (0.1, 0.8, False, False, None),
    "lpt_exit_hub_tip_ratio": (0.0, 0.9, False, True, None),
    "lpt_stage_loading": (0.5, 4.0, False, False, None),
    "gear_ratio": (1.0, 6.0, False, False, None),
    "gearbox_eff": (0.9, 1.0, False, False, None),
    # Nozzle coefficients: common practice 0.97-0.995 (velocity) and 0.95-0.99 (discharge).
    "core_nozzle_velocity_coeff": (0.8, 1.0, False, False, None),
    "bypass_nozzle_velocity_coeff": (0.8, 1.0, False, False, None),
    "core_nozzle_discharge_coeff": (0.8, 1.0, False, False, None),
    "bypass_nozzle_discharge_coeff": (0.8, 1.0, False, False, None),
    # Extractions (CoolingBleedComp, SpoolPowerComp): customer bleed 0.5-2 %, HP offtake 50-500 kW in service.
    "customer_bleed_frac": (0.0, 0.1, False, False, None),
    "HP_power_offtake": (0.0, 2.0e6, False, False, "W"),
    # Fuel lower heating value (BurnerComp, PerformanceComp): kerosene 43 MJ/kg, hydrogen about 120 MJ/kg.
    "fuel_LHV": (1.0e7, 1.5e8, False, False, "J/kg"),
    # Turbine cooling (CoolingBleedComp): metal temperatures 1250-1350 K common practice (field-reference 6.2).
    "vane_metal_temperature": (900.0, 1700.0, False, False, "K"),
    "rotor_metal_temperature": (900.0, 1700.0, False, False, "K"),
    "vane_cooling_constant": (0.0, 0.5, False, False, None),
    "rotor_cooling_constant": (0.0, 0.5, False, False, None),
    "rotor_relative_temperature_ratio": (0.7, 1.0, False, False, None),
}

#: Temperatures the gas models are valid for, K: the NASA 7-coefficient fits (McBride, Gordon and Reno) start
#: at 200 K; above about 2400 K dissociation, which the frozen mixture ignores, matters (``gas.thermo``).
GAS_TEMPERATURE_RANGE = (200.0, 2400.0)

#: Largest fan tip diameter the engine mass and nacelle correlations are valid for, m (the largest fan in
#: service is about 3.4 m, from memory; common practice caps studies at 5 m).
FAN_TIP_DIAMETER_MAX = 5.0

#: Smallest fan tip diameter of the nacelle geometry's range, m (common practice: small business jets).
FAN_TIP_DIAMETER_MIN = 0.2


def range_kwargs(name, lower=None, upper=None, units="", lower_inclusive=True, upper_inclusive=True):
    """Return the ``check_range`` keyword arguments (lower, upper, units and inclusiveness) of a table entry.

    Components whose input names are options (a compressor, duct or nozzle used for several streams) pass the
    range they check for a name outside the table as the fallback arguments.

    Parameters
    ----------
    name : str
        Model input name; a key of ``INPUT_RANGES``, or any name when the fallback range is given.
    lower, upper, units, lower_inclusive, upper_inclusive
        Fallback range for a name outside the table (``lower`` None: the name must be in the table).

    Returns
    -------
    dict
        ``lower``, ``upper``, ``units`` ('' when dimensionless), ``lower_inclusive`` and ``upper_inclusive``.
    """
    if name not in INPUT_RANGES and lower is not None:
        return {"lower": lower, "upper": upper, "units": units, "lower_inclusive": lower_inclusive,
                "upper_inclusive": upper_inclusive}
    lo, hi, lo_open, hi_open, units = INPUT_RANGES[name]
    return {"lower": lo, "upper": hi, "units": units or "", "lower_inclusive": not lo_open,
            "upper_inclusive": not hi_open}
