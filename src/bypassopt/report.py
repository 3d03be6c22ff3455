"""Results of a bypassopt problem: key quantities, station table, optimum with shadow prices, text and files.

Every summary carries ``bypassopt.CAUTION``. The writers (``write_json``, ``write_csv``, ``write_text``)
serialise first and then replace the target file in one step (temporary file + ``os.replace``), so a
failure never leaves a half-written file behind.
"""

import csv
import io
import json
import math
import os
import re
import tempfile
import textwrap
import weakref

import numpy as np

from bypassopt import CAUTION, __version__

#: Key quantities of a design: (model variable, units shown, description, group).
QUANTITIES = (
    ("BPR", None, "bypass ratio", "cycle"),
    ("FPR", None, "fan pressure ratio", "cycle"),
    ("OPR", None, "overall pressure ratio Pt3/Pt2", "cycle"),
    ("Tt4", "K", "burner exit temperature T4", "cycle"),
    ("installed_TSFC", "mg/(N*s)", "installed TSFC (nacelle drag charged to the engine)", "performance"),
    ("TSFC", "mg/(N*s)", "uninstalled TSFC", "performance"),
    ("Fn_specific", "N*s/kg", "specific thrust (net thrust per unit inlet flow)", "performance"),
    ("installed_thrust", "N", "installed net thrust per engine", "performance"),
    ("Fn_required", "N", "net thrust the cycle delivers (need plus nacelle drag)", "performance"),
    ("W2", "kg/s", "inlet air flow", "performance"),
    ("fuel_flow", "kg/s", "fuel flow", "performance"),
    ("jet_velocity_ratio", None, "bypass / core jet velocity ratio", "performance"),
    ("thermal_efficiency", None, "thermal efficiency", "performance"),
    ("propulsive_efficiency", None, "propulsive efficiency", "performance"),
    ("overall_efficiency", None, "overall efficiency", "performance"),
    ("mission_fuel", "kg", "mission fuel (trip plus reserve)", "aircraft"),
    ("takeoff_mass", "kg", "take-off mass", "aircraft"),
    ("mtow_margin", "kg", "maximum take-off mass minus take-off mass", "aircraft"),
    ("powerplant_mass", "kg", "powerplant mass per engine (engine + nacelle)", "mass"),
    ("engine_dry_mass", "kg", "dry engine mass", "mass"),
    ("nacelle_mass", "kg", "nacelle and pylon mass", "mass"),
    ("nacelle_drag", "N", "nacelle drag per engine", "drag"),
    ("fan_cowl_drag", "N", "  fan cowl", "drag"),
    ("core_cowl_drag", "N", "  core cowl", "drag"),
    ("plug_drag", "N", "  plug", "drag"),
    ("pylon_drag", "N", "  pylon", "drag"),
    ("fan_tip_diameter", "m", "fan tip diameter", "size"),
    ("nacelle_max_diameter", "m", "largest nacelle diameter", "size"),
    ("ground_clearance", "m", "nacelle ground clearance", "size"),
    ("clearance_margin", "m", "ground clearance minus the minimum", "size"),
    ("diameter_margin", "m", "nacelle diameter limit minus the diameter", "size"),
    ("fan_tip_speed", "m/s", "fan tip speed", "fan"),
    ("fan_tip_relative_mach", None, "fan tip relative Mach number", "fan"),
    ("Tt3", "K", "HPC exit temperature T3", "limits"),
    ("Tt41", "K", "HPT rotor inlet temperature T41", "limits"),
    ("W3_corrected", "kg/s", "HPC exit corrected flow (core size)", "limits"),
)

#: Flight-point table of the multipoint model: (quantity at the design point, at the off-design points, units,
#: description). None: the point has no such quantity.
POINT_QUANTITIES = (
    ("altitude", "altitude", "m", "altitude"),
    ("Mach0", "Mach0", None, "flight Mach number"),
    ("dT_isa", "dT_isa", "K", "temperature offset from ISA"),
    ("Fn_required", "Fn_required", "N", "net thrust per engine"),
    ("installed_thrust", "installed_thrust", "N", "installed net thrust per engine"),
    ("nacelle_drag", "nacelle_drag", "N", "nacelle drag per engine"),
    ("TSFC", "TSFC", "mg/(N*s)", "uninstalled TSFC"),
    ("installed_TSFC", "installed_TSFC", "mg/(N*s)", "installed TSFC"),
    ("FPR", "FPR", None, "fan pressure ratio"),
    ("OPR", "OPR", None, "overall pressure ratio"),
    ("BPR", "BPR", None, "bypass ratio"),
    ("W2", "W2", "kg/s", "inlet air flow"),
    ("fuel_flow", "fuel_flow", "kg/s", "fuel flow"),
    ("Tt4", "Tt4", "K", "burner exit temperature T4"),
    ("Tt41", "Tt41", "K", "HPT rotor inlet temperature T41"),
    ("Tt3", "Tt3", "K", "HPC exit temperature T3"),
    ("W3_corrected", "W3_corrected", "kg/s", "HPC exit corrected flow"),
)
#: Points of the multipoint model in table order: (point, column title); the design point has no prefix.
POINTS = (("design", "top of climb (design)"), ("takeoff", "take-off"), ("cruise", "mid-cruise"))

GROUP_TITLES = {
    "cycle": "Cycle", "performance": "Performance at the design point", "aircraft": "Aircraft mission",
    "mass": "Mass", "drag": "Nacelle drag", "size": "Size and installation", "fan": "Fan",
    "limits": "Temperatures and core size",
}

#: Stations of the table: (station, where it is).
STATIONS = (
    ("0", "free stream"),
    ("2", "fan face"),
    ("13", "fan exit, bypass side"),
    ("21", "fan exit, core side"),
    ("25", "booster exit / HPC entry"),
    ("3", "HPC exit"),
    ("4", "burner exit"),
    ("41", "HPT rotor entry (after vane coolant)"),
    ("44", "HPT exit"),
    ("45", "LPT entry (after rotor coolant)"),
    ("5", "LPT exit"),
    ("7", "core nozzle entry"),
    ("8", "core nozzle throat"),
    ("17", "bypass nozzle entry"),
    ("18", "bypass nozzle throat"),
)

#: Plain-words phrase and step for each constraint's shadow price: name -> (step, step words, phrase).
#: Lengths per cm, temperatures per K, core size per 0.1 kg/s.
CONSTRAINT_WORDS = {
    "clearance_margin": ("nacelle ground-clearance margin", 0.01, "1 cm",
                         "relaxing the nacelle ground-clearance margin by 1 cm"),
    "diameter_margin": ("nacelle diameter limit", 0.01, "1 cm",
                        "allowing a 1 cm larger nacelle diameter"),
    "Tt41": ("T41 limit", 1.0, "1 K", "raising the T41 limit by 1 K"),
    "Tt3": ("T3 limit", 1.0, "1 K", "raising the T3 limit by 1 K"),
    "W3_corrected": ("minimum core size", 0.1, "0.1 kg/s", "lowering the minimum core size by 0.1 kg/s"),
    "mtow_margin": ("maximum take-off mass", 100.0, "100 kg", "raising the maximum take-off mass by 100 kg"),
    "takeoff:Tt41": ("take-off T41 limit", 1.0, "1 K", "raising the take-off T41 limit by 1 K"),
    "takeoff:Tt3": ("take-off T3 limit", 1.0, "1 K", "raising the take-off T3 limit by 1 K"),
}

#: Plausibility thresholds of a result (common practice, no source): a design-mission fuel above this fraction
#: of the take-off mass, and a cruise lift-to-drag ratio below this, belong to no airliner (airliners carry
#: well under half their take-off mass as fuel and cruise at L/D of about 15 to 20).
MAX_FUEL_FRACTION = 0.5
MIN_AIRLINER_LIFT_TO_DRAG = 8.0

#: Steps for the shadow prices of design-variable bounds.
BOUND_STEPS = {"BPR": (0.1, "0.1"), "FPR": (0.01, "0.01"), "OPR": (1.0, "1"), "Tt4": (1.0, "1 K")}

OBJECTIVE_WORDS = {"mission_fuel": "of mission fuel", "installed_TSFC": "of installed TSFC"}


def _value(prob, name, units=None, node=0):
    val = np.asarray(prob.get_val(name, units=units)).ravel()
    return float(np.real(val[node]))


def _has(prob, name):
    """Whether ``name`` is a promoted name or a path of the problem's model (one metadata query per problem).

    Asking ``prob.get_val`` and catching its error costs OpenMDAO's close-match search over every name
    (measured: 3.4 s of a 4 s ``bypassopt evaluate``).
    """
    names = _NAMES.get(prob)
    if names is None:
        meta = prob.model.get_io_metadata(iotypes=("input", "output"), get_remote=True)
        names = _NAMES[prob] = {m["prom_name"] for m in meta.values()} | set(meta)
    return name in names


#: Names of each problem's model, for ``_has`` (forgotten with the problem).
_NAMES = weakref.WeakKeyDictionary()


def design_summary(prob, node=0, scenario=None):
    """Key quantities and the station table of the current point of an installed-engine problem.

    Parameters
    ----------
    prob : om.Problem
        A run problem built by ``bypassopt.problems.best_cycle`` (or any with an ``InstalledEngineGroup``
        promoted at the top).
    node : int
        Which design of a vectorized problem.

    Returns
    -------
    dict
        ``caution``, ``tool``, ``scenario`` (name or None), ``quantities`` {name: {value, units,
        description, group}} and ``stations`` (rows of ``station_table``).
    """
    quantities = {}
    for name, units, desc, group in QUANTITIES:
        if _has(prob, name):
            quantities[name] = {"value": _value(prob, name, units, node), "units": units, "description": desc,
                                "group": group}
    summary = {
        "caution": CAUTION,
        "tool": f"bypassopt {__version__}",
        "scenario": scenario["aircraft"].get("name") if scenario else None,
        "quantities": quantities,
        "stations": station_table(prob, node),
    }
    points = point_table(prob, node)
    if points:
        summary["points"] = points
        summary["point_stations"] = {p: station_table(prob, node, p) for p, _ in POINTS if p != "design"}
    if scenario:
        summary["limits"] = design_limits(prob, scenario, node)
        summary["warnings"] = result_warnings(prob, scenario, node)
    return summary


def result_warnings(prob, scenario, node=0):
    """Flag a result no airliner could have: sentences for the summary's ``warnings`` list.

    Flagged (thresholds ``MAX_FUEL_FRACTION`` and ``MIN_AIRLINER_LIFT_TO_DRAG``, common practice):
    take-off mass above the maximum take-off mass (one sentence, which also says when the design-mission fuel
    alone is more than the maximum take-off mass minus the zero-fuel mass); mission fuel above half the
    take-off mass; a cruise lift-to-drag ratio below 8. None of these stops the optimisation (unless the
    take-off mass is made a constraint): they say that the numbers describe no real aircraft.

    Parameters
    ----------
    prob : om.Problem
        A run problem with the aircraft mission (``mission_fuel``, ``takeoff_mass``, ``zero_fuel_mass``).
    scenario : dict
        The validated scenario it was built from.
    node : int
        Which design of a vectorized problem.

    Returns
    -------
    list of str
        One sentence per finding (empty when none).
    """
    out = []
    ac = scenario.get("aircraft", {})
    ld = ac.get("lift_to_drag")
    if ld is not None and ld < MIN_AIRLINER_LIFT_TO_DRAG:
        out.append(f"aircraft.lift_to_drag = {format_number(ld)} is below {format_number(MIN_AIRLINER_LIFT_TO_DRAG)}: "
                   "no jet airliner cruises at such a lift-to-drag ratio (about 15 to 20 is common practice); "
                   "the fuel and masses below describe no real aircraft.")
    if not all(_has(prob, n) for n in ("mission_fuel", "takeoff_mass", "mtow_margin")):
        return out
    fuel = _value(prob, "mission_fuel", "kg", node)
    tom = _value(prob, "takeoff_mass", "kg", node)
    mtom = tom + _value(prob, "mtow_margin", "kg", node)
    if tom > mtom:
        text = (f"The take-off mass {format_number(tom)} kg is above the maximum take-off mass "
                f"{format_number(mtom)} kg (aircraft.max_takeoff_mass_kg) by {format_number(tom - mtom)} kg")
        zfm = _value(prob, "zero_fuel_mass", "kg", node) if _has(prob, "zero_fuel_mass") else None
        if zfm is not None and fuel > mtom - zfm:
            text += (f"; the mission fuel alone, {format_number(fuel)} kg, is more than the maximum take-off mass "
                     f"minus the zero-fuel mass ({format_number(mtom - zfm)} kg), even without reserves")
        out.append(text + ": the aircraft cannot fly this mission as specified.")
    if tom > 0.0 and fuel / tom > MAX_FUEL_FRACTION:
        out.append(f"The mission fuel is {100.0 * fuel / tom:.0f} % of the take-off mass (above "
                   f"{100.0 * MAX_FUEL_FRACTION:.0f} %, which no airliner carries; common practice): check "
                   "aircraft.lift_to_drag, design_range_m and the masses.")
    return out


def point_table(prob, node=0):
    """Quantities at every flight point of a multipoint model, or None for the design-point model.

    Returns
    -------
    dict or None
        {point: {quantity: {value, units, description}}} for the points of ``POINTS`` (the design point's
        values are the unprefixed outputs and inputs; the others ``<point>:<name>``).
    """
    if not _has(prob, "takeoff:Tt41"):
        return None
    out = {}
    for point, _title in POINTS:
        values = {}
        for design_name, name, units, desc in POINT_QUANTITIES:
            var = design_name if point == "design" else f"{point}:{name}"
            if _has(prob, var):
                values[name] = {"value": _value(prob, var, units, node), "units": units, "description": desc}
        out[point] = values
    return out


def design_limits(prob, scenario, node=0):
    """Compare the current design with the scenario's limits.

    Returns
    -------
    dict
        {output: {description, kind, value, limit, units, margin, met}}; margin >= 0 meets the limit.
    """
    from bypassopt.scenario import constraint_limits

    checks = [("clearance_margin", "lower", 0.0, "m"), ("diameter_margin", "lower", 0.0, "m")]
    checks += [(var, kind, limit, None) for var, kind, limit, _ in constraint_limits(scenario).values()]
    units = {"Tt41": "K", "Tt3": "K", "W3_corrected": "kg/s"}
    out = {}
    for name, kind, limit, u in checks:
        u = u or units[name.split(":")[-1]]
        value = _value(prob, name, u, node)
        margin = value - limit if kind == "lower" else limit - value
        out[name] = {"description": CONSTRAINT_WORDS[name][0], "kind": kind, "value": value, "limit": float(limit),
                     "units": u, "margin": margin, "met": bool(margin >= -1e-9)}
    return out


def station_table(prob, node=0, point=None):
    """Rows per station: total temperature (K), total pressure (kPa), fuel-air ratio and flow (kg/s).

    ``point`` names an off-design point of the multipoint model ('takeoff', 'cruise'); None is the design point.

    Flows are W2 times the per-unit-inlet-flow fractions of the cycle: bypass W2*BPR/(1+BPR), core
    W2/(1+BPR) up to the HPC exit (before the cooling and customer-bleed extractions), then the
    ``W*_frac`` outputs (with fuel). The fuel-air ratio is given for the core gas downstream of the
    burner and left empty for air. The nozzle throats carry the total state of their nozzle entry
    (the nozzle losses are in its velocity coefficient); their static pressure and Mach number are
    given too, as they are for the free stream.
    """
    def v(name, units=None):
        if point is None:
            return _value(prob, name, units, node)
        promoted = f"{point}:{name}"  # the point's interface name, else the path inside it
        return _value(prob, promoted if _has(prob, promoted) else f"{point}.{name}", units, node)

    w2, bpr = v("W2", "kg/s"), v("BPR")
    core, bypass = w2 / (1.0 + bpr), w2 * bpr / (1.0 + bpr)
    source = {"7": "7", "8": "7", "17": "17", "18": "17"}
    flow = {"0": w2, "2": w2, "13": bypass, "17": bypass, "18": bypass, "21": core, "25": core, "3": core}
    for st in ("4", "41", "44", "45", "5"):
        flow[st] = w2 * v(f"W{st}_frac")
    flow["7"] = flow["8"] = w2 * v("W5_frac")
    far = {st: v(f"FAR{st}") for st in ("4", "41", "44", "45", "5")}
    far["7"] = far["8"] = far["5"]
    statics = {"0": ("Ps0", "Mach0"), "8": ("Ps8", "Mach8"), "18": ("Ps18", "Mach18")}
    rows = []
    for st, where in STATIONS:
        src = source.get(st, st)
        row = {"station": st, "location": where, "Tt_K": v(f"Tt{src}", "K"), "Pt_kPa": v(f"Pt{src}", "kPa"),
               "FAR": far.get(st), "W_kg_s": flow.get(st), "Ps_kPa": None, "Mach": None}
        if st in statics:
            row["Ps_kPa"] = v(statics[st][0], "kPa")
            row["Mach"] = v(statics[st][1])
        rows.append(row)
    return rows


def _driver_name(driver):
    opt = driver.options["optimizer"] if "optimizer" in driver.options else None
    kind = type(driver).__name__
    if kind == "BackOffSLSQPDriver":
        return "SciPy SLSQP with back-off"
    import openmdao.api as om  # here, not at module level: reports are imported before the model is needed

    if isinstance(driver, om.pyOptSparseDriver):
        return f"{opt} (pyoptsparse)"
    return f"{opt} ({kind})" if opt else kind


def _saving_words(saving, objective, obj_units):
    what = OBJECTIVE_WORDS.get(objective, f"of {objective}")
    if saving == 0.0:
        return f"would not change the optimum {what.removeprefix('of ')} (to first order)"
    verb = "save" if saving > 0 else "cost"
    return f"would {verb} {format_number(abs(saving), 3)} {obj_units} {what}"


def optimum_summary(prob, settings, driver_result):
    """``design_summary`` plus the optimizer's record, constraints with shadow prices and KKT residuals.

    Parameters
    ----------
    prob : om.Problem
        A best-cycle problem (``build_best_cycle_problem``) after ``run_driver``.
    settings : bypassopt.problems.best_cycle.BestCycleSettings
        What ``build_best_cycle_problem`` returned beside the problem.
    driver_result : openmdao DriverResult or bool
        What ``prob.run_driver()`` returned.

    Returns
    -------
    dict
        The design summary with ``optimizer`` (success, message, exit status, counts), ``objective``,
        ``constraints`` (value, limit, margin, status 'active'/'violated'/'inactive', multiplier, shadow price
        with units, and a plain-words sentence for each active one), ``bounds`` of the design variables,
        ``violated_limits``, ``kkt`` (projected gradient, complementarity, multiplier signs) and ``warnings``
        (``result_warnings``).

    Notes
    -----
    A limit missed by more than the tolerance of ``kkt_analysis`` is 'violated', not 'active', and has no
    multiplier or shadow price. When the optimizer did not succeed, the point is no optimum: no multiplier,
    shadow price or statement is given for any limit or bound (they would be numbers without meaning);
    ``violated_limits`` names the limits the last design misses.
    """
    from bypassopt.problems.kkt import kkt_analysis

    from bypassopt.problems.drivers import driver_message, driver_succeeded

    summary = design_summary(prob, scenario=settings.scenario)
    driver = prob.driver
    own = getattr(driver, "optimizer_result", None)  # BackOffSLSQPDriver keeps its own counts
    summary["optimizer"] = {
        "driver": _driver_name(driver),
        "success": driver_succeeded(driver_result),
        "exit_status": str(getattr(driver_result, "exit_status", "")),
        "message": driver_message(driver),
        "iterations": int(own.nit if own is not None else getattr(driver_result, "iter_count", driver.iter_count)),
        "model_evaluations": int(getattr(driver, "model_evaluations", getattr(driver_result, "model_evals", 0))),
        "derivative_evaluations": int(getattr(driver, "derivative_evaluations",
                                              getattr(driver_result, "deriv_evals", 0))),
        "failed_evaluations": int(getattr(driver, "failed_evaluations", 0)),
        "runtime_s": float(getattr(driver_result, "runtime", 0.0)),
    }
    kkt = kkt_analysis(prob, settings)
    objective = kkt["objective"]["name"]
    obj_units = kkt["objective"]["units"]
    summary["objective"] = kkt["objective"]
    success = summary["optimizer"]["success"]
    from bypassopt.problems.optimizer_multipliers import optimizer_multipliers

    # the optimizer's own multipliers (IPOPT through pyOptSparse returns them), beside the KKT analysis's
    own_prices = optimizer_multipliers(prob, settings) if success else None
    constraints, statements = {}, []
    for name, c in kkt["constraints"].items():
        label, step, step_words, phrase = CONSTRAINT_WORDS.get(name, (name, 1.0, "1 unit", f"relaxing {name}"))
        margin = c["limit"] - c["value"] if c["kind"] == "upper" else c["value"] - c["limit"]
        violated = bool(c.get("violated", False))
        priced = success and c["active"] and not violated
        entry = {"description": label, "kind": c["kind"], "value": c["value"], "limit": c["limit"],
                 "units": c["units"], "margin": margin, "active": c["active"] and not violated,
                 "violated": violated, "status": _constraint_status(c["active"], violated),
                 "multiplier": c["multiplier"] if success and not violated else None,
                 "shadow_price": c["shadow_price"] if success and not violated else None,
                 "shadow_price_units": f"{obj_units} per {c['units'] or 'unit'}",
                 "optimizer_shadow_price": (own_prices[name]["shadow_price"]
                                            if own_prices and name in own_prices and not violated else None),
                 "statement": None}
        if priced:
            entry["statement"] = f"{phrase} {_saving_words(c['multiplier'] * step, objective, obj_units)}."
            statements.append(entry["statement"])
        constraints[name] = entry
    bounds = {}
    for name, b in kkt["bounds"].items():
        entry = dict(b)
        entry["statement"] = None
        if not success:
            entry["multiplier"] = None
        elif b["active"]:
            step, step_words = BOUND_STEPS.get(name, (1.0, "1"))
            move = "raising the upper" if b["active"] == "upper" else "lowering the lower"
            entry["statement"] = (f"{move} bound of {name} by {step_words} "
                                  f"{_saving_words(b['multiplier'] * step, objective, obj_units)}.")
            statements.append(entry["statement"])
        bounds[name] = entry
    summary["constraints"] = constraints
    summary["fixed_design_variables"] = {
        var: {"value": summary["quantities"][var]["value"], "units": summary["quantities"][var]["units"]}
        for var in ("BPR", "FPR", "OPR", "Tt4") if var not in bounds and var in summary["quantities"]}
    summary["bounds"] = bounds
    summary["shadow_price_statements"] = statements
    summary["violated_limits"] = [name for name, c in constraints.items() if c["violated"]]
    summary["kkt"] = {"projected_gradient": kkt["projected_gradient"], "complementarity": kkt["complementarity"],
                      "multipliers_nonnegative": kkt["dual_feasible"], "gradient_norm": kkt["gradient_norm"]}
    return summary


def _constraint_status(active, violated):
    """'violated' (beyond the limit by more than the tolerance), 'active' (on it) or 'inactive'."""
    return "violated" if violated else ("active" if active else "inactive")


def summary_rows(summary):
    """One row per quantity of a summary, ``{name, value, units}``, for a CSV file.

    The ``value`` column holds numbers only: flags are written as 1 or 0, and an entry without a value is left
    out (the caution goes into a comment line, see ``write_csv``).
    """
    rows = [{"name": name, "value": q["value"], "units": q["units"] or ""}
            for name, q in summary.get("quantities", {}).items()]
    for point, values in (summary.get("points") or {}).items():
        rows += [{"name": f"{point}:{name}", "value": q["value"], "units": q["units"] or ""}
                 for name, q in values.items()]
    opt = summary.get("optimizer")
    if opt:
        for key in ("success", "iterations", "model_evaluations", "derivative_evaluations",
                    "failed_evaluations"):
            rows.append({"name": f"optimizer_{key}", "value": opt[key], "units": ""})
        rows.append({"name": "optimizer_runtime", "value": opt["runtime_s"], "units": "s"})
    if "objective" in summary:
        obj = summary["objective"]
        rows.append({"name": f"objective_{obj['name']}", "value": obj["value"], "units": obj["units"]})
    for name, c in summary.get("constraints", {}).items():
        rows.append({"name": f"{name}_limit", "value": c["limit"], "units": c["units"] or ""})
        rows.append({"name": f"{name}_margin", "value": c["margin"], "units": c["units"] or ""})
        rows.append({"name": f"{name}_shadow_price", "value": c["shadow_price"], "units": c["shadow_price_units"]})
    for key in ("projected_gradient", "complementarity"):
        if "kkt" in summary:
            rows.append({"name": f"kkt_{key}", "value": summary["kkt"][key], "units": ""})
    for row in rows:
        if isinstance(row["value"], (bool, np.bool_)):
            row["value"] = int(row["value"])
    return [r for r in rows if r["value"] is not None]


# ---------------------------------------------------------------------------------------------------------
# Text


def format_number(x, digits=5):
    """Format a number plainly: about ``digits`` significant figures, trailing zeros dropped.

    No exponent for everyday magnitudes (1e-3 to 1e7); magnitudes below 1e-9 print as 0.
    """
    if x is None:
        return ""
    if isinstance(x, (bool, np.bool_)):
        return "yes" if x else "no"
    if isinstance(x, (int, np.integer)):
        return str(int(x))
    x = float(x)
    if not math.isfinite(x):
        return str(x)
    mag = abs(x)
    if mag < 1e-9:  # below the model's convergence tolerance in every unit shown: print as zero
        return "0"
    if mag >= 1e7 or mag < 1e-3:
        return f"{x:.{max(digits - 3, 1)}e}"
    decimals = max(digits - 1 - int(math.floor(math.log10(mag))), 1)  # 15859.6 kg, not 15860
    text = f"{x:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def _plural(n, word):
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def text_table(headers, rows, align):
    """Aligned text table; ``align`` is a string of 'l'/'r' per column."""
    cells = [[str(c) for c in row] for row in rows]
    widths = [max([len(h)] + [len(r[i]) for r in cells]) for i, h in enumerate(headers)]

    def line(items):
        parts = [s.ljust(w) if a == "l" else s.rjust(w) for s, w, a in zip(items, widths, align)]
        return ("  " + "  ".join(parts)).rstrip()

    out = [line(headers), ("  " + "  ".join("-" * w for w in widths)).rstrip()]
    out += [line(r) for r in cells]
    return out


class TextTable:
    """A table inside a report: column headers, rows of cells and one alignment letter ('l'/'r') per column.

    A report is a list of blocks, each a string (one or more lines) or a ``TextTable``. ``render_plain``
    writes it as plain text (``text_table``; files, pipes and the tests), ``render_rich`` prints it on a
    terminal with rich tables.
    """

    def __init__(self, headers, rows, align):
        self.headers = [str(h) for h in headers]
        self.rows = [[str(c) for c in row] for row in rows]
        self.align = align

    def lines(self):
        """Return the plain-text lines of the table."""
        return text_table(self.headers, self.rows, self.align)


_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def clean_text(text, keep_newlines=False):
    """Return ``text`` with control characters (escape sequences, carriage returns, bidi overrides) removed.

    For strings that come from a scenario file (the aircraft name): they reach terminals and text files.
    Tabs, and newlines unless ``keep_newlines``, become spaces.
    """
    text = str(text).replace("\t", " ")
    if not keep_newlines:
        text = text.replace("\n", " ")
    return _CONTROL.sub("", text)


def render_plain(blocks):
    """Plain text of a report (a list of strings and ``TextTable`` blocks), ending in a newline."""
    lines = []
    for block in blocks:
        lines += block.lines() if isinstance(block, TextTable) else [block]
    return "\n".join(lines) + "\n"


def render_rich(blocks, console):
    """Print a report on a rich ``Console``: text as it is (markup escaped), tables as rich tables."""
    from rich import box
    from rich.markup import escape
    from rich.table import Table

    for block in blocks:
        if isinstance(block, TextTable):
            table = Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False, header_style="bold")
            for header, align in zip(block.headers, block.align):
                table.add_column(escape(clean_text(header)), justify="right" if align == "r" else "left")
            for row in block.rows:
                table.add_row(*(escape(clean_text(c)) for c in row))
            console.print(table)
        else:
            console.print(escape(clean_text(block, keep_newlines=True)), highlight=False)


def _wrap(text, indent=""):
    return textwrap.fill(text, width=100, initial_indent=indent, subsequent_indent=indent)


def format_summary(summary):
    """Readable terminal report of a design or optimum summary (plain words, aligned columns)."""
    return render_plain(summary_blocks(summary))


def summary_blocks(summary):
    """Return the report of ``format_summary`` as blocks (strings and ``TextTable``) for the renderers."""
    out = []
    title = "bypassopt: best installed cycle" if "optimizer" in summary else "bypassopt: design evaluation"
    out.append(title)
    out.append("=" * len(title))
    if summary.get("scenario"):
        out.append(f"Scenario: {clean_text(summary['scenario'])}")
    out.append(_wrap("CAUTION: " + summary.get("caution", CAUTION)))
    out.append("")

    opt = summary.get("optimizer")
    if opt:
        state = "converged" if opt["success"] else "DID NOT CONVERGE"
        out.append(f"Optimizer: {opt['driver']}, {state}")
        if opt.get("message"):
            out.append(f"  message: {opt['message']}")
        out.append(f"  {_plural(opt['iterations'], 'iteration')}, "
                   f"{_plural(opt['model_evaluations'], 'model evaluation')}, "
                   f"{_plural(opt['derivative_evaluations'], 'derivative evaluation')}, "
                   f"{_plural(opt['failed_evaluations'], 'failed evaluation')}, {opt['runtime_s']:.1f} s")
        obj = summary["objective"]
        words = next((d for n, _, d, _ in QUANTITIES if n == obj["name"]), obj["name"])
        out.append(f"  objective (minimised): {words} = {format_number(obj['value'], 6)} {obj['units']}")
        out.append("")

    rows, group = [], None
    for name, q in summary["quantities"].items():
        if q["group"] != group:
            group = q["group"]
            if rows:
                rows.append(("", "", "", ""))
            rows.append((GROUP_TITLES.get(group, group) + ":", "", "", ""))
        rows.append(("  " + q["description"], format_number(q["value"]), q["units"] or "", name))
    out.append("Design")
    out.append(TextTable(("quantity", "value", "units", "variable"), rows, "lrll"))
    out.append("")

    points = summary.get("points")
    if points:
        out.append("Flight points (one engine: designed at top of climb, matched off-design at the others)")
        titles = [title for point, title in POINTS if point in points]
        rows = []
        for _, name, units, desc in POINT_QUANTITIES:
            cells = [format_number(points[p][name]["value"]) if name in points[p] else ""
                     for p, _ in POINTS if p in points]
            rows.append((desc, *cells, units or ""))
        out.append(TextTable(("quantity", *titles, "units"), rows, "l" + "r" * len(titles) + "l"))
        out.append("")

    if not opt and summary.get("limits"):
        out.append("Limits")
        rows = []
        for name, c in summary["limits"].items():
            words, value, sense, limit = _shown_limit(summary, name, c)
            rows.append((words, format_number(value), f"{sense} {format_number(limit)}",
                         format_number(c["margin"]), c["units"], "met" if c["met"] else "violated"))
        out.append(TextTable(("limit", "value", "limit", "margin", "units", ""), rows, "lrrrll"))
        out.append("")

    if opt:
        out.append("Limits")
        rows = []
        for name, c in summary["constraints"].items():
            words, value, sense, limit = _shown_limit(summary, name, c)
            priced = c["active"] and c.get("shadow_price") is not None
            status = "VIOLATED" if c.get("violated") else ("active" if c["active"] else "")
            rows.append((words, format_number(value), f"{sense} {format_number(limit)}",
                         format_number(c["margin"]), c["units"] or "", status,
                         format_number(c["shadow_price"], 4) if priced else "", c["shadow_price_units"]
                         if priced else ""))
        out.append(TextTable(("limit", "value", "limit", "margin", "units", "", "shadow price", "per"), rows,
                             "lrrrllrl"))
        bound_rows = [(name, format_number(b["value"]), format_number(b["lower"]), format_number(b["upper"]),
                       f"at {b['active']} bound" if b["active"] else "free")
                      for name, b in summary["bounds"].items()]
        out.append("")
        out.append("Design-variable bounds")
        out.append(TextTable(("variable", "value", "lower", "upper", "status"), bound_rows, "lrrrl"))
        fixed = summary.get("fixed_design_variables") or {}
        if fixed:
            out.append("  held fixed by the scenario: " + ", ".join(
                f"{n} = {format_number(v['value'])}{' ' + v['units'] if v['units'] else ''}" for n, v in fixed.items()))
        out.append("")
        violated = [c for c in summary["constraints"].values() if c.get("violated")]
        if violated:
            out.append(_wrap("Violated limits: " + "; ".join(_violation_words(c) for c in violated) + "."))
            out.append("")
        if not opt["success"]:
            out.append("What the active limits cost: not given. The optimizer did not converge, so this design is "
                       "no optimum and its Lagrange multipliers are no shadow prices.")
        else:
            out.append("What the active limits cost (first-order estimates from the Lagrange multipliers)")
            if summary["shadow_price_statements"]:
                for s in summary["shadow_price_statements"]:
                    out.append(_wrap_bullet(s[0].upper() + s[1:]))
            elif violated:
                out.append("  - none: a violated limit has no shadow price.")
            else:
                out.append("  - no limit or bound is active: the optimum is unconstrained.")
        k = summary["kkt"]
        out.append("")
        out.append(f"Optimality check: projected gradient {format_number(k['projected_gradient'], 2)}, "
                   f"complementarity {format_number(k['complementarity'], 2)}, multipliers of the right sign: "
                   f"{'yes' if k['multipliers_nonnegative'] else 'NO'}")
        out.append("")

    mtow = summary["quantities"].get("mtow_margin")
    if summary.get("warnings"):
        out.append("Warnings")
        for w in summary["warnings"]:
            out.append(_wrap_bullet(w))
        out.append("")
    elif "warnings" not in summary and mtow and mtow["value"] < 0.0:
        out.append(_wrap(f"Note: the take-off mass is {format_number(-mtow['value'])} kg above the maximum take-off "
                         "mass; this is reported, not a limit of the optimisation."))
        out.append("")
    fixed = lambda x, fmt: "" if x is None else format(x, fmt)  # noqa: E731
    titles = dict(POINTS)
    tables = [("Stations" + (" at top of climb (design point)" if summary.get("point_stations") else ""),
               summary["stations"])]
    tables += [(f"Stations at {titles[p]}", rows) for p, rows in (summary.get("point_stations") or {}).items()]
    for i, (title, stations) in enumerate(tables):
        if i:
            out.append("")
        out.append(title)
        rows = [(r["station"], r["location"], fixed(r["Tt_K"], ".1f"), fixed(r["Pt_kPa"], ".2f"),
                 fixed(r["FAR"], ".5f"), fixed(r["W_kg_s"], ".3f"), fixed(r["Ps_kPa"], ".2f"),
                 fixed(r["Mach"], ".3f")) for r in stations]
        out.append(TextTable(("station", "where", "Tt K", "Pt kPa", "fuel/air", "flow kg/s", "Ps kPa", "Mach"),
                             rows, "llrrrrrr"))
    return out


#: How a limit reads in the text tables: output -> (words, quantity shown instead of a margin, its sense).
_SHOWN = {
    "clearance_margin": ("nacelle ground clearance", "ground_clearance", ">="),
    "diameter_margin": ("nacelle diameter", "nacelle_max_diameter", "<="),
    "Tt41": ("HPT rotor inlet temperature T41", None, None),
    "Tt3": ("HPC exit temperature T3", None, None),
    "W3_corrected": ("core size (HPC exit corrected flow)", None, None),
    "mtow_margin": ("take-off mass", "takeoff_mass", "<="),
}


def _shown_limit(summary, name, c):
    """(words, value, sense, limit) of a limit for the tables: the margins read as the quantity they bound."""
    words, quantity, sense = _SHOWN.get(name, (c.get("description", name), None, None))
    q = summary["quantities"].get(quantity) if quantity else None
    if q is None:
        return words, c["value"], "<=" if c["kind"] == "upper" else ">=", c["limit"]
    limit = q["value"] - c["margin"] if sense == ">=" else q["value"] + c["margin"]
    return words, q["value"], sense, limit


def _violation_words(c):
    """'nacelle diameter limit: 1.93 against <= 0.5 m' for a violated constraint of a summary."""
    sense = "<=" if c["kind"] == "upper" else ">="
    units = f" {c['units']}" if c.get("units") else ""
    return (f"{c['description']} missed by {format_number(-c['margin'], 4)}{units} (value "
            f"{format_number(c['value'])}, limit {sense} {format_number(c['limit'])}{units})")


def _wrap_bullet(text):
    lines = textwrap.wrap(text, width=96)
    return "\n".join(("  - " if i == 0 else "    ") + ln for i, ln in enumerate(lines))


# ---------------------------------------------------------------------------------------------------------
# Files


def _json_default(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, np.bool_):
        return bool(obj)
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.floating):
        return float(obj)
    if isinstance(obj, os.PathLike):
        return os.fspath(obj)
    raise TypeError(f"cannot write a {type(obj).__name__} to JSON")


def to_json(obj):
    """JSON text of a result (numpy values converted; NaN written as null)."""
    return json.dumps(_finite(obj), indent=2, default=_json_default, allow_nan=False) + "\n"


def _finite(obj):
    """Replace NaN/inf by None so the JSON is standard."""
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _finite(obj.tolist())
    if isinstance(obj, (float, np.floating)) and not math.isfinite(float(obj)):
        return None
    return obj


def _file_mode(path):
    """Permissions for a new file: the existing file's, else what the umask gives an ordinary file."""
    try:
        return os.stat(path).st_mode & 0o777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def write_text(path, text):
    """Write ``text`` to ``path`` atomically (temporary file in the same folder, then ``os.replace``)."""
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    mode = _file_mode(path)
    fd, tmp = tempfile.mkstemp(prefix="." + os.path.basename(path) + ".", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path


def write_json(path, obj):
    """Write ``obj`` as JSON, atomically: nothing is written if serialisation fails."""
    return write_text(path, to_json(obj))


def write_csv(path, rows, comments=()):
    """Write rows atomically: a list of dicts (header from their keys) or of sequences (first row = header).

    None is written as an empty cell; floats with full precision. Each of ``comments`` becomes a leading
    ``# ...`` line (the caution, say), so that the columns hold data only; read such a file with
    ``pandas.read_csv(path, comment="#")``, or skip the lines that start with '#' before ``csv.DictReader``.
    """
    buf = io.StringIO()
    for comment in comments:
        for line in clean_text(comment, keep_newlines=True).splitlines() or [""]:
            buf.write(f"# {line}".rstrip() + "\n")
    rows = list(rows)
    if rows and isinstance(rows[0], dict):
        fields = []
        for r in rows:
            fields += [k for k in r if k not in fields]
        writer = csv.DictWriter(buf, fieldnames=fields, lineterminator="\n")
        writer.writeheader()
        for r in rows:
            writer.writerow({k: _cell(r.get(k)) for k in fields})
    else:
        writer = csv.writer(buf, lineterminator="\n")
        for r in rows:
            writer.writerow([_cell(c) for c in r])
    return write_text(path, buf.getvalue())


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return str(bool(value)).lower()
    if isinstance(value, (float, np.floating)):
        return repr(float(value))
    if isinstance(value, (int, np.integer, str)):
        return value
    raise TypeError(f"cannot write a {type(value).__name__} to a CSV cell")
