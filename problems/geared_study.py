"""Geared against direct-drive fan: the best installed cycle of each on one aircraft, and what the gear is worth."""

from bypassopt.problems.best_cycle import apply_scenario, build_best_cycle_problem
from bypassopt.problems.drivers import driver_succeeded
from bypassopt.scenario import load_scenario

#: Largest A N^2 of the LP turbine's last stage, m^2 rpm^2: about 4.5e10 in^2 rpm^2 (turbine blade-root stress
#: limits of 4-5e10 in^2 rpm^2, Mattingly, Heiser and Pratt, *Aircraft Engine Design*, from memory). Applied at the
#: design point (top of climb, close to the highest LP speed of a civil mission; common practice simplification).
LPT_AN2_LIMIT = 4.5e10 * 0.0254**2
#: Bounds of the gear ratio (LP turbine / fan speed) as a design variable; common practice 2.5-3.5 in service.
GEAR_RATIO_BOUNDS = (1.5, 4.0)
#: Bounds of the LP turbine stage loading dh/U^2 when it is a design variable (``free_loading``); the region of
#: Soderberg's and Smith's turbine data (common practice).
LOADING_BOUNDS = (1.0, 3.0)

#: Quantities compared: (model output, units, description).
COMPARED = (
    ("BPR", None, "bypass ratio"),
    ("FPR", None, "fan pressure ratio"),
    ("OPR", None, "overall pressure ratio"),
    ("Tt4", "K", "burner exit temperature T4"),
    ("mission_fuel", "kg", "mission fuel"),
    ("powerplant_mass", "kg", "powerplant mass per engine"),
    ("fan_tip_diameter", "m", "fan tip diameter"),
    ("fan_shaft_speed", "rpm", "fan speed"),
    ("LP_shaft_speed", "rpm", "LP turbine speed"),
    ("lpt_stage_count", None, "LP turbine stages (continuous)"),
    ("lpt_stage_loading", None, "LP turbine stage loading dh/U^2"),
    ("lpt_eff_poly", None, "LP turbine polytropic efficiency"),
    ("lp_turbine_mass", "kg", "LP turbine mass"),
    ("fan_bypass_eff_poly", None, "fan bypass polytropic efficiency"),
    ("LP_mech_eff", None, "LP spool mechanical efficiency (gearbox included)"),
    ("lpt_AN2", "m**2*rpm**2", "LP turbine exit A N^2"),
)


def build_drive_problem(scenario=None, geared=False, free_loading=False, an2_limit=LPT_AN2_LIMIT, reports=False):
    """Best-installed-cycle problem (``build_best_cycle_problem``) of a direct-drive or a geared fan.

    Both add the LP turbine's stage loading as a design variable (``free_loading``: the designer trades turbine
    efficiency against stages, ``LPSpoolComp``) and its A N^2 limit as a constraint; the geared engine
    (``InstalledEngineGroup(gearbox=True)``, set through OpenMDAO's ``model_options``) adds the gear ratio as a
    design variable. Returns the set-up problem (scenario applied) and its ``BestCycleSettings``.
    """
    scenario = scenario or load_scenario()
    prob, settings = build_best_cycle_problem(scenario, reports=reports)
    prob.model_options["*"] = {"gearbox": geared}
    model = prob.model
    if free_loading:
        model.add_design_var("lpt_stage_loading", lower=LOADING_BOUNDS[0], upper=LOADING_BOUNDS[1],
                             ref0=LOADING_BOUNDS[0], ref=LOADING_BOUNDS[1])
    if geared:
        model.add_design_var("gear_ratio", lower=GEAR_RATIO_BOUNDS[0], upper=GEAR_RATIO_BOUNDS[1],
                             ref0=GEAR_RATIO_BOUNDS[0], ref=GEAR_RATIO_BOUNDS[1])
    model.add_constraint("lpt_AN2", upper=an2_limit, units="m**2*rpm**2", ref=1.0e7)
    prob.setup()
    apply_scenario(prob, scenario)
    return prob, settings


def _value(prob, name, units):
    return float(prob.get_val(name, units=units)[0])


def compare_drives(scenario=None, free_loading=False, an2_limit=LPT_AN2_LIMIT):
    """Optimise the scenario's engine as a direct drive and with a fan reduction gearbox; compare the optima.

    Returns
    -------
    dict
        ``direct`` and ``geared`` ({output: value} of ``COMPARED``, plus ``success``, and for the geared engine
        ``gear_ratio``, ``gearbox_mass``, ``gearbox_heat``), ``fuel_difference`` (geared - direct, kg; negative:
        the gear saves fuel), ``fuel_difference_pct``, and the geared optimum's sensitivities
        ``dfuel_dgearbox_mass`` (kg of fuel per kg of gearbox, through the calibration factor) and
        ``dfuel_dgearbox_eff`` (kg of fuel per unit gearbox efficiency), taken at the fixed optimal design, and
        ``break_even_gearbox_mass``: the gearbox mass at which the geared engine would burn as much fuel as the
        direct drive, to first order.
    """
    scenario = scenario or load_scenario()
    out = {}
    for name, geared in (("direct", False), ("geared", True)):
        prob, settings = build_drive_problem(scenario, geared=geared, free_loading=free_loading, an2_limit=an2_limit)
        success = driver_succeeded(prob.run_driver())
        row = {n: _value(prob, n, u) for n, u, _ in COMPARED}
        row["success"] = success
        if geared:
            for n, u in (("gear_ratio", None), ("gearbox_mass", "kg"), ("gearbox_heat", "W")):
                row[n] = _value(prob, n, u)
            objective = settings.objective_output
            totals = prob.compute_totals(of=[objective], wrt=["k_gearbox", "gearbox_eff"])
            mass_ref = row["gearbox_mass"]  # d(mass)/d(k_gearbox) = mass at k = 1
            row["dfuel_dgearbox_mass"] = float(totals[objective, "k_gearbox"][0, 0]) / mass_ref
            row["dfuel_dgearbox_eff"] = float(totals[objective, "gearbox_eff"][0, 0])
        out[name] = row
    diff = out["geared"]["mission_fuel"] - out["direct"]["mission_fuel"]
    geared = out["geared"]
    return {"direct": out["direct"], "geared": geared, "fuel_difference": diff,
            "fuel_difference_pct": 100.0 * diff / out["direct"]["mission_fuel"],
            "dfuel_dgearbox_mass": geared["dfuel_dgearbox_mass"], "dfuel_dgearbox_eff": geared["dfuel_dgearbox_eff"],
            "break_even_gearbox_mass": geared["gearbox_mass"] - diff / geared["dfuel_dgearbox_mass"],
            "an2_limit": an2_limit, "free_loading": free_loading}


def format_drives(result):
    """Plain-text table of ``compare_drives``'s result."""
    lines = [f"{'':<48} {'direct':>12} {'geared':>12}"]
    for name, units, desc in COMPARED:
        label = f"{desc} ({units})" if units else desc
        lines.append(f"{label:<48} {result['direct'][name]:>12.5g} {result['geared'][name]:>12.5g}")
    g = result["geared"]
    lines += [f"gear ratio {g['gear_ratio']:.3f}, gearbox mass {g['gearbox_mass']:.0f} kg, "
              f"gearbox heat {g['gearbox_heat'] / 1e3:.0f} kW at the design point",
              f"mission fuel geared - direct: {result['fuel_difference']:+.0f} kg "
              f"({result['fuel_difference_pct']:+.2f} %)",
              f"geared optimum: {result['dfuel_dgearbox_mass']:.2f} kg fuel per kg of gearbox, "
              f"{result['dfuel_dgearbox_eff'] / 100.0:.1f} kg fuel per point of gearbox efficiency; "
              f"break-even gearbox mass {result['break_even_gearbox_mass']:.0f} kg"]
    return "\n".join(lines)


if __name__ == "__main__":  # pragma: no cover
    print(format_drives(compare_drives()))
