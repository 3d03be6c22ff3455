"""How each turbomachinery technology effect moves the best installed cycle: re-optimised with it on and off.

The installed engine's efficiencies are technology levels that three models move with the design
(``InstalledEngineGroup`` options ``core_size_effect``, ``fan_shock_effect``, ``lp_spool_effect``). This study
re-optimises the scenario's best-cycle problem with none of them, with each alone and with all three, so the
README's account of what each effect does to the optimum is measured, not argued:

    python -m bypassopt.problems.technology_study
"""

from bypassopt.problems.best_cycle import apply_scenario, build_best_cycle_problem
from bypassopt.problems.drivers import driver_succeeded
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.scenario import load_scenario

#: The options of ``InstalledEngineGroup`` that switch one technology effect each.
EFFECTS = ("core_size_effect", "fan_shock_effect", "lp_spool_effect")
#: Cases: name -> the effects switched on.
CASES = {"none": (), **{effect: (effect,) for effect in EFFECTS}, "all": EFFECTS}
#: Quantities reported at each optimum: (model output, units).
REPORTED = (("BPR", None), ("FPR", None), ("OPR", None), ("Tt4", "K"), ("mission_fuel", "kg"),
            ("hpc_eff_poly", None), ("fan_bypass_eff_poly", None), ("lpt_eff_poly", None))


def build_effects_problem(scenario=None, effects=EFFECTS, reports=False):
    """Best-cycle problem (``build_best_cycle_problem``) with only ``effects`` switched on; set up, scenario set."""
    scenario = scenario or load_scenario()
    prob, settings = build_best_cycle_problem(scenario, reports=reports)
    prob.model_options["*"] = {effect: effect in effects for effect in EFFECTS}
    prob.setup()
    apply_scenario(prob, scenario)
    return prob, settings


def technology_effects(scenario=None, cases=None):
    """Re-optimise the scenario with each case of ``CASES`` (or the names in ``cases``).

    Returns {case: {output: value for ``REPORTED``, 'success': bool, 'active': [limit names],
    'fuel_vs_none': kg (when the 'none' case ran)}}.
    """
    scenario = scenario or load_scenario()
    out = {}
    for case in cases or CASES:
        prob, settings = build_effects_problem(scenario, CASES[case])
        success = driver_succeeded(prob.run_driver())
        row = {name: float(prob.get_val(name, units=units)[0]) for name, units in REPORTED}
        kkt = kkt_analysis(prob, settings)
        row["success"] = success
        row["active"] = sorted(name for name, c in kkt["constraints"].items() if c["active"])
        out[case] = row
    if "none" in out:
        for row in out.values():
            row["fuel_vs_none"] = row["mission_fuel"] - out["none"]["mission_fuel"]
    return out


def format_effects(result):
    """Plain-text table of ``technology_effects``'s result."""
    lines = [f"{'case':<18} {'BPR':>6} {'FPR':>6} {'OPR':>6} {'T4 K':>6} {'fuel kg':>9} {'vs none':>8}  active"]
    for case, r in result.items():
        delta = f"{r['fuel_vs_none']:+8.0f}" if "fuel_vs_none" in r else f"{'':>8}"
        flag = "" if r["success"] else "  NOT CONVERGED"
        lines.append(f"{case:<18} {r['BPR']:6.2f} {r['FPR']:6.3f} {r['OPR']:6.1f} {r['Tt4']:6.0f} "
                     f"{r['mission_fuel']:9.0f} {delta}  {', '.join(r['active']) or '-'}{flag}")
    return "\n".join(lines)


if __name__ == "__main__":  # pragma: no cover - a study run by hand
    print(format_effects(technology_effects()))
