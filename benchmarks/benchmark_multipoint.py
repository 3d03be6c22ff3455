"""Multipoint cost: one model evaluation, its total derivatives and a whole optimisation, against the design point.

The same demo scenario is built twice, with ``[optimizer] model = "multipoint"`` (``InstalledMultipointGroup``:
design point, hot-day take-off and mid-cruise, cooling sized at take-off) and ``"design_point"``
(``InstalledEngineGroup``). Each evaluation is timed as an optimizer sees it: a small step in every design variable
from the last converged design (warm solvers), then the totals of the objective and every constraint. The ratios
multipoint / design point are measured side by side in one run. The optimisations start from the same scenario.
"""

import time

import numpy as np

from benchmarks import median_time, target
from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.drivers import driver_succeeded
from bypassopt.scenario import design_point_scenario, load_scenario

#: Issue target: the three-point problem costs at most this many single design-point evaluations.
COST_RATIO_TARGET = 2.0
#: Relative step of the design variables between timed evaluations (an optimizer's late steps).
STEP = 1e-3
#: Timed repeats (median reported); ``quick`` uses two.
REPEATS = 7


def _time_model(scenario, repeats):
    """Median time of a run_model after a small design step, and of compute_totals there."""
    prob, settings = build_best_cycle_problem(scenario, reports=False)
    prob.run_model()
    names = list(settings.design_vars)
    base = {n: float(np.real(prob.get_val(n))[0]) for n in names}
    of = [settings.objective_output] + list(settings.limits)
    count = [0]

    def step():
        count[0] += 1
        for n in names:
            prob.set_val(n, base[n] * (1.0 + STEP * ((count[0] % 3) - 1)))
        prob.run_model()

    model_s, _ = median_time(step, repeats)
    totals_s, _ = median_time(lambda: prob.compute_totals(of=of, wrt=names), repeats)
    return model_s, totals_s, len(of), len(names)


def _optimise(scenario):
    prob, settings = build_best_cycle_problem(scenario, reports=False)
    t0 = time.perf_counter()
    result = prob.run_driver()
    seconds = time.perf_counter() - t0
    values = {n: float(np.real(prob.get_val(n))[0]) for n in ("BPR", "FPR", "OPR", "Tt4", "mission_fuel")}
    return seconds, driver_succeeded(result), prob.driver.model_evaluations, values


def run(quick=False):
    """Time evaluation, totals and (full run only) optimisation of both models; return rows, ratios and verdicts."""
    t0 = time.perf_counter()
    multipoint = load_scenario()
    single = design_point_scenario(multipoint)
    repeats = 2 if quick else REPEATS
    mp_model, mp_totals, n_of, n_wrt = _time_model(multipoint, repeats)
    dp_model, dp_totals, _, _ = _time_model(single, repeats)
    model_ratio, totals_ratio = mp_model / dp_model, mp_totals / dp_totals
    rows = [
        ("model evaluation after a small step, design point", f"{1e3 * dp_model:.0f} ms", "InstalledEngineGroup"),
        ("model evaluation after a small step, multipoint", f"{1e3 * mp_model:.0f} ms",
         f"{model_ratio:.1f}x the design point (design, take-off, cruise, cooling and mission loops)"),
        ("total derivatives, design point", f"{1e3 * dp_totals:.0f} ms", f"{n_of} outputs x {n_wrt} inputs"),
        ("total derivatives, multipoint", f"{1e3 * mp_totals:.0f} ms", f"{totals_ratio:.1f}x the design point"),
    ]
    result = {"benchmark": "multipoint", "quick": quick, "model_s": {"multipoint": mp_model, "design_point": dp_model},
              "totals_s": {"multipoint": mp_totals, "design_point": dp_totals}, "model_ratio": model_ratio,
              "totals_ratio": totals_ratio}
    if not quick:
        for label, scenario in (("design point", single), ("multipoint", multipoint)):
            seconds, ok, evals, values = _optimise(scenario)
            rows.append((f"optimisation wall time, {label}", f"{seconds:.1f} s",
                         f"{'converged' if ok else 'NOT converged'} in {evals} model evaluations; BPR "
                         f"{values['BPR']:.2f}, FPR {values['FPR']:.3f}, OPR {values['OPR']:.1f}, Tt4 "
                         f"{values['Tt4']:.0f} K, mission fuel {values['mission_fuel']:.0f} kg"))
            result[f"optimisation_{label.replace(' ', '_')}"] = {"seconds": seconds, "success": ok,
                                                                  "model_evaluations": evals, **values}
    result["rows"] = rows
    result["targets"] = [target("multipoint evaluation <= 2x the design point", f"{model_ratio:.1f}x",
                                f"<= {COST_RATIO_TARGET:g}x", model_ratio <= COST_RATIO_TARGET,
                                "issue 'off-design and multipoint'; per evaluation after a small design step"),
                         target("multipoint totals <= 2x the design point", f"{totals_ratio:.1f}x",
                                f"<= {COST_RATIO_TARGET:g}x", totals_ratio <= COST_RATIO_TARGET, "")]
    result["seconds"] = time.perf_counter() - t0
    return result


if __name__ == "__main__":  # pragma: no cover
    import json
    print(json.dumps(run(quick=True), indent=1, default=str))
