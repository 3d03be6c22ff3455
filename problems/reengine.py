"""Re-engining: the scenario's previous-generation engine against the best installed cycle on the same aircraft."""

import copy
import textwrap

import openmdao.api as om

from bypassopt import CAUTION
from bypassopt.report import design_summary, format_number, optimum_summary
from bypassopt.scenario import ScenarioError, load_scenario

from .best_cycle import build_best_cycle_problem, build_evaluation_problem

#: Polytropic efficiencies (technology levels; scenario keys in [engine]) that
#: ``previous_engine.efficiency_drop`` lowers.
POLYTROPIC_EFFICIENCIES = ("fan_bypass_eff_poly_ref", "fan_core_eff_poly", "booster_eff_poly",
                           "hpc_eff_poly_ref", "hpt_eff_poly_ref", "lpt_eff_poly_ref")

#: Compared quantities: (model variable, units, description).
COMPARED = (
    ("BPR", None, "bypass ratio"),
    ("FPR", None, "fan pressure ratio"),
    ("OPR", None, "overall pressure ratio"),
    ("Tt4", "K", "burner exit temperature T4"),
    ("installed_TSFC", "mg/(N*s)", "installed TSFC"),
    ("TSFC", "mg/(N*s)", "uninstalled TSFC"),
    ("W2", "kg/s", "inlet air flow"),
    ("powerplant_mass", "kg", "powerplant mass per engine"),
    ("nacelle_drag", "N", "nacelle drag per engine"),
    ("fan_tip_diameter", "m", "fan tip diameter"),
    ("nacelle_max_diameter", "m", "largest nacelle diameter"),
    ("clearance_margin", "m", "ground clearance minus the minimum"),
    ("Tt41", "K", "HPT rotor inlet temperature T41"),
    ("Tt3", "K", "HPC exit temperature T3"),
    ("mission_fuel", "kg", "mission fuel"),
    ("takeoff_mass", "kg", "take-off mass"),
)


def previous_engine_scenario(scenario):
    """Return the scenario with the previous engine's efficiencies (each polytropic one lowered by the drop).

    The aircraft, thrust requirement and the fan-face and nacelle proportions stay the scenario's.
    """
    prev = scenario.get("previous_engine")
    if not prev or not {"BPR", "FPR", "OPR", "Tt4_K"} <= set(prev):
        raise ScenarioError("previous_engine: the scenario needs BPR, FPR, OPR and Tt4_K of the previous "
                            "engine for a re-engining comparison.")
    out = copy.deepcopy(scenario)
    drop = prev.get("efficiency_drop", 0.0)
    for key in POLYTROPIC_EFFICIENCIES:
        out["engine"][key] = scenario["engine"][key] - drop
    return out


def evaluate_previous_engine(scenario):
    """Run the installed-engine model for the previous engine; returns the run problem.

    Raises
    ------
    ScenarioError
        When the previous engine's cycle cannot be evaluated (the message says why).
    """
    prev_scenario = previous_engine_scenario(scenario)
    prev = scenario["previous_engine"]
    design = {"BPR": prev["BPR"], "FPR": prev["FPR"], "OPR": prev["OPR"], "Tt4": prev["Tt4_K"]}
    prob = build_evaluation_problem(prev_scenario, design=design, reports=False)
    try:
        prob.run_model()
    except om.AnalysisError as err:
        raise ScenarioError(f"previous_engine: this cycle cannot be evaluated: {err}") from err
    return prob


def compare_reengining(scenario=None, objective=None, driver=None, before_run=None):
    """Compare the previous-generation engine with the optimised one on the same aircraft and thrust need.

    The previous engine is the scenario's ``[previous_engine]`` cycle (BPR, FPR, OPR, T4) with every
    polytropic efficiency lowered by ``efficiency_drop``; the new engine is the optimum of
    ``build_best_cycle_problem``. Both keep the scenario's fan-face and nacelle proportions, so the
    comparison isolates the cycle and technology. The previous engine is evaluated as it is: where it
    breaks today's limits (ground clearance, for instance) its margin is reported, not enforced.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the built-in demo.
    objective, driver : str or None
        Overrides of the scenario's optimizer settings for the new engine.
    before_run : callable or None
        Called with the set-up optimisation problem before it runs (to add a recorder, say).

    Returns
    -------
    dict
        ``caution``, ``scenario``, ``previous_engine`` (its inputs), ``optimizer`` (record of the new
        engine's optimisation), ``comparison`` (rows: name, description, units, previous, new,
        difference = new - previous, difference_pct relative to the previous engine), ``notes``, and the
        full ``previous`` and ``new`` summaries.
    """
    scenario = scenario or load_scenario()
    prev_prob = evaluate_previous_engine(scenario)
    previous = design_summary(prev_prob, scenario=scenario)

    prob, settings = build_best_cycle_problem(scenario, objective=objective, driver=driver, reports=False)
    if before_run is not None:
        before_run(prob)
    result = prob.run_driver()
    new = optimum_summary(prob, settings, result)

    rows = []
    for name, units, desc in COMPARED:
        a = float(prev_prob.get_val(name, units=units)[0])
        b = float(prob.get_val(name, units=units)[0])
        rows.append({"name": name, "description": desc, "units": units, "previous": a, "new": b,
                     "difference": b - a, "difference_pct": 100.0 * (b - a) / abs(a) if a != 0.0 else None})
    notes = []
    margin = previous["quantities"]["clearance_margin"]["value"]
    if margin < 0.0:
        notes.append(f"The previous engine's nacelle sits {format_number(-100.0 * margin, 3)} cm below today's "
                     "minimum ground clearance; it is reported as it is, not enforced.")
    dmargin = previous["quantities"]["diameter_margin"]["value"]
    if dmargin < 0.0:
        notes.append(f"The previous engine's nacelle is {format_number(-100.0 * dmargin, 3)} cm wider than "
                     "today's diameter limit; reported, not enforced.")
    for key, label in (("max_Tt41_K", "Tt41"), ("max_Tt3_K", "Tt3")):
        val = previous["quantities"][label]["value"]
        if val > scenario["limits"][key]:
            notes.append(f"The previous engine's {label} of {format_number(val)} K is above today's limit "
                         f"limits.{key} = {format_number(scenario['limits'][key])} K; reported, not enforced.")
    if not result.success:
        notes.append("The optimisation of the new engine did not converge; its numbers are those of the last "
                     "design the optimizer tried.")
    return {
        "caution": CAUTION,
        "scenario": scenario["aircraft"].get("name"),
        "thrust_required_N": scenario["design_point"]["thrust_required_N"],
        "previous_engine": dict(scenario["previous_engine"]),
        "optimizer": new["optimizer"],
        "comparison": rows,
        "notes": notes,
        "previous": previous,
        "new": new,
    }


def reengining_blocks(result):
    """Report of a ``compare_reengining`` result as blocks (strings and ``report.TextTable``s)."""
    from bypassopt.report import TextTable, clean_text

    prev = result["previous_engine"]
    lines = ["bypassopt: re-engining comparison", "=" * 33]
    if result.get("scenario"):
        lines.append(f"Scenario: {clean_text(result['scenario'])}")
    lines.append(textwrap.fill("CAUTION: " + result["caution"], width=100))
    lines.append("")
    lines.append(f"Previous engine: BPR {format_number(prev['BPR'])}, FPR {format_number(prev['FPR'])}, "
                 f"OPR {format_number(prev['OPR'])}, Tt4 {format_number(prev['Tt4_K'])} K, polytropic "
                 f"efficiencies {format_number(100.0 * prev.get('efficiency_drop', 0.0), 3)} points lower.")
    opt = result["optimizer"]
    state = "converged" if opt["success"] else "DID NOT CONVERGE"
    lines.append(f"New engine: best installed cycle ({opt['driver']}, {state}, {opt['iterations']} iterations).")
    lines.append(f"Both deliver {format_number(result['thrust_required_N'])} N per engine on the same aircraft.")
    lines.append("")
    rows = []
    for r in result["comparison"]:
        pct = "" if r["difference_pct"] is None or r["name"] == "clearance_margin" else \
            f"{r['difference_pct']:+.1f} %"
        rows.append((r["description"], format_number(r["previous"]), format_number(r["new"]),
                     format_number(r["difference"]) if r["difference"] <= 0 else "+" + format_number(r["difference"]),
                     pct, r["units"] or ""))
    blocks = ["\n".join(lines), TextTable(("quantity", "previous", "new", "new - previous", "change", "units"),
                                          rows, "lrrrrl")]
    if result["notes"]:
        blocks.append("\n" + "\n".join(f"Note: {n}" for n in result["notes"]))
    return blocks


def format_reengining(result):
    """Readable plain-text table of a ``compare_reengining`` result."""
    from bypassopt.report import render_plain

    return render_plain(reengining_blocks(result))
