"""Optimisation cost: the demo best-installed-cycle optimisation with analytic vs finite-difference derivatives."""

import contextlib
import copy
import io
import itertools
import time

import numpy as np
import openmdao.api as om

from benchmarks import FD_OPTIONS, count_approx_components, target, use_approx_partials
from bypassopt.components.cycle.fan_comp import FanComp
from bypassopt.problems.best_cycle import build_best_cycle_problem, build_evaluation_problem
from bypassopt.scenario import load_scenario

#: Targets: analytic at least 3x faster in wall time than FD, optima equal within 0.01 %.
SPEEDUP_TARGET = 3.0
OPTIMUM_RTOL = 1.0e-4
#: Iteration cap of the quick (smoke-test) mode: it exercises the code paths, not convergence.
QUICK_MAXITER = 1

#: Derivative variants compared, in the order run.
VARIANTS = ("analytic", "fd_totals", "fd_partials")


def benchmark_scenario():
    """The demo scenario with the design-point engine model (``[optimizer] model = "design_point"``).

    The multipoint model's off-design match is an implicit component, which ``benchmarks.use_approx_partials``
    does not switch to finite differences, so the 'fd_partials' variant needs the design-point model; all
    variants and the grid check use it, so they compare like with like.
    """
    scenario = copy.deepcopy(load_scenario())
    scenario.setdefault("optimizer", {})["model"] = "design_point"
    return scenario

#: Independent check of the analytic optimum: two dense 2-D grids of the same model around it (BPR x FPR at its
#: OPR and T4; OPR x T4 at its BPR and FPR), GRID_POINTS per axis (QUICK_GRID_POINTS in the quick run), each axis
#: spanning +-GRID_HALF_WIDTH of the design variable's bound range (clipped to the bounds). Even counts, so the
#: optimum itself is not a grid point: the best grid design must be worse, and next to it.
GRID_PAIRS = (("BPR", "FPR"), ("OPR", "Tt4"))
GRID_POINTS, QUICK_GRID_POINTS = 10, 4
GRID_HALF_WIDTH = 0.04
#: A grid point counts as feasible when no constraint is violated by more than this, in the constraint's units
#: (m, K, kg/s, kg): far below what the optimum's fuel could gain from it (shadow prices of tens of kg per m or K).
GRID_FEASIBILITY_ATOL = 1.0e-6
#: A feasible grid point better than the optimum by more than this fraction of its fuel fails the check (the
#: model's Newton solves reproduce the fuel to about 1e-9).
GRID_BETTER_RTOL = 1.0e-6


def build_optimization_problem(derivatives="analytic", maxiter=None):
    """The demo best-installed-cycle problem (``benchmark_scenario``) with the chosen derivatives.

    Parameters
    ----------
    derivatives : str
        'analytic' (as shipped); 'fd_totals': ``model.approx_totals(method='fd')`` (the driver's
        gradients by forward differences of the converged model, whose Newton solver still uses the
        analytic partials); 'fd_partials': every component's partials replaced by forward differences
        (``benchmarks.use_approx_partials``), so no analytic derivative is used anywhere, the Newton
        solver included. FD settings are ``benchmarks.FD_OPTIONS``.
    maxiter : int or None
        Override of the optimizer's iteration limit.
    """
    prob, _ = build_best_cycle_problem(benchmark_scenario(), reports=False)
    if maxiter is not None:
        prob.driver.options["maxiter"] = maxiter
    if derivatives == "fd_totals":
        # approx_totals only sets attributes that final_setup reads, so it may follow setup.
        prob.model.approx_totals(method="fd", **FD_OPTIONS)
    elif derivatives == "fd_partials":
        use_approx_partials(prob, "fd", **FD_OPTIONS)
    elif derivatives != "analytic":
        raise ValueError(f"derivatives = {derivatives!r} is not one of {', '.join(VARIANTS)}")
    return prob


def _feasible(prob, limits):
    """Per node: True where every constraint of the best-cycle problem holds (within GRID_FEASIBILITY_ATOL)."""
    ok = True
    for name, (kind, limit, units) in limits.items():
        value = np.real(prob.get_val(name, units=units))
        ok = ok & (value >= limit - GRID_FEASIBILITY_ATOL if kind == "lower"
                   else value <= limit + GRID_FEASIBILITY_ATOL)
    return ok


def _evaluate_designs(scenario, designs, objective, limits):
    """Objective and feasibility of many designs, one vectorized model run per batch.

    A batch that cannot be evaluated (one design outside the model's range makes the whole vector raise) is split
    in two until the designs that fail stand alone; those count as infeasible.
    """
    n = len(next(iter(designs.values())))
    fuel, feasible = np.full(n, np.inf), np.zeros(n, dtype=bool)
    batches = [np.arange(n)]
    while batches:
        idx = batches.pop()
        prob = build_evaluation_problem(scenario, num_nodes=idx.size, reports=False,
                                        design={k: v[idx] for k, v in designs.items()})
        try:
            prob.run_model()
        except om.AnalysisError:
            if idx.size > 1:
                batches += [idx[: idx.size // 2], idx[idx.size // 2:]]
            continue
        fuel[idx] = np.real(prob.get_val(objective))
        feasible[idx] = _feasible(prob, limits)
    return fuel, feasible


def grid_check(settings, design, objective_value, points):
    """Dense-grid check of an optimum: no feasible design of two 2-D grids through it is better.

    The grids (``GRID_PAIRS``) run the same model, vectorized, at ``points`` x ``points`` designs around the
    optimum; the best feasible grid design must not beat the optimizer's objective by more than
    ``GRID_BETTER_RTOL``, and it should lie within one grid step of the optimum (the grid finds the same place;
    with an even ``points`` the optimum lies between grid lines).
    Returns per grid: the best feasible objective, its excess over the optimum (relative), its design, the step
    and whether it is adjacent to the optimum, and the number of feasible and unevaluable designs.
    """
    out = {}
    for pair in GRID_PAIRS:
        axes = []
        for var in pair:
            dv = settings.design_vars[var]
            half = GRID_HALF_WIDTH * (dv["upper"] - dv["lower"])
            axes.append(np.clip(np.linspace(design[var] - half, design[var] + half, points), dv["lower"], dv["upper"]))
        grid = np.array(list(itertools.product(*axes)))
        designs = {k: np.full(len(grid), v) for k, v in design.items()}
        for j, var in enumerate(pair):
            designs[var] = grid[:, j]
        fuel, feasible = _evaluate_designs(settings.scenario, designs, settings.objective_output, settings.limits)
        best = int(np.argmin(np.where(feasible, fuel, np.inf))) if feasible.any() else None
        steps = [float(a[1] - a[0]) for a in axes]
        entry = {"pair": pair, "feasible": int(feasible.sum()), "unevaluable": int(np.isinf(fuel).sum()),
                 "steps": steps}
        if best is not None:
            entry.update(best_objective=float(fuel[best]), best_design={v: float(grid[best, j]) for j, v in
                                                                       enumerate(pair)},
                         excess_rel=float(fuel[best] / objective_value - 1.0),
                         adjacent=all(abs(grid[best, j] - design[v]) <= 1.0001 * steps[j]
                                      for j, v in enumerate(pair)))
        out["x".join(pair)] = entry
    return out


def _optimize(derivatives, maxiter):
    prob = build_optimization_problem(derivatives, maxiter)
    t0, c0 = time.perf_counter(), time.process_time()
    with contextlib.redirect_stdout(io.StringIO()):  # SciPy's closing message
        prob.run_driver()
    seconds, cpu_seconds = time.perf_counter() - t0, time.process_time() - c0
    if derivatives == "fd_partials" and count_approx_components(prob) == 0:
        raise RuntimeError("fd_partials: the finite-difference partials did not take")
    # the design point's fan (the first FanComp: the design engine comes first in both engine models)
    fan = next(prob.model.system_iter(recurse=True, typ=FanComp))
    driver = prob.driver  # BackOffSLSQPDriver times its model solves and total derivatives itself
    return {"seconds": seconds, "cpu_seconds": cpu_seconds, "gradient_seconds": driver.derivative_time_s,
            "success": bool(driver.optimizer_result.success), "iterations": int(driver.optimizer_result.nit),
            "model_evals": driver.model_evaluations, "deriv_evals": driver.derivative_evaluations,
            # every evaluation of one element (Newton iterations, line searches, FD perturbations of
            # totals or partials included): the work actually done
            "fan_evaluations": int(fan.iter_count + fan.iter_count_apply),
            "mission_fuel_kg": float(prob.get_val("mission_fuel", units="kg")[0]),
            "design": {name: float(prob.get_val(name)[0]) for name in ("BPR", "FPR", "OPR", "Tt4")}}


def _counts(r):
    return (f"{r['iterations']} / ({r['model_evals']}, {r['deriv_evals']}) / {r['fan_evaluations']} / "
            f"{r['seconds']:.1f} s ({r['gradient_seconds']:.1f} s in gradients)")


def run(quick=False):
    """Run the optimisation with each derivative variant; return counts, times, ratios and verdicts.

    The analytic optimum is checked against an independent computation, dense grids of the same model through it
    (``grid_check``: no feasible grid design may be better), and the optima reached with finite differences are
    compared with it (no stored value of the code's own output serves as a reference); the quick run stops after
    ``QUICK_MAXITER`` iterations and uses 4 x 4 grids.
    """
    t0 = time.perf_counter()
    maxiter = QUICK_MAXITER if quick else None
    results = {name: _optimize(name, maxiter) for name in VARIANTS}
    an = results["analytic"]
    if not quick:
        assert an["success"], "analytic optimisation did not converge"
    rows, targets = [], []
    rows.append(("analytic: iterations / driver evals (f, grad) / fan evals / wall",
                 _counts(an), f"mission fuel {an['mission_fuel_kg']:.2f} kg"))
    _, settings = build_best_cycle_problem(benchmark_scenario(), reports=False)
    t_grid = time.perf_counter()
    grids = grid_check(settings, an["design"], an["mission_fuel_kg"], QUICK_GRID_POINTS if quick else GRID_POINTS)
    results["grid_check"] = {"seconds": time.perf_counter() - t_grid, "grids": grids}
    for name, g in grids.items():
        if "best_objective" not in g:
            targets.append(target(f"dense grid {name}: no better feasible design", "no feasible grid design",
                                  "a feasible design", False, "the grid found no feasible design"))
            continue
        rows.append((f"dense grid {name} ({g['feasible']} feasible, {g['unevaluable']} unevaluable)",
                     f"best {g['best_objective']:.2f} kg at "
                     + ", ".join(f"{k} {v:.4g}" for k, v in g["best_design"].items()),
                     f"{100 * g['excess_rel']:+.2e} % vs the optimizer"))
        targets.append(target(f"dense grid {name}: no feasible design beats the optimum",
                              f"{100 * g['excess_rel']:+.1e} %", f">= -{100 * GRID_BETTER_RTOL:g} %",
                              g["excess_rel"] >= -GRID_BETTER_RTOL,
                              "quick run: the optimizer stopped after one iteration" if quick else
                              ("best grid design next to the optimum" if g["adjacent"] else
                               "best grid design NOT next to the optimum")))
    for name, label in (("fd_totals", "FD totals"), ("fd_partials", "FD partials")):
        r = results[name]
        r["time_ratio_vs_analytic"] = r["seconds"] / an["seconds"]
        r["cpu_time_ratio_vs_analytic"] = r["cpu_seconds"] / an["cpu_seconds"]
        r["optimum_rel_diff"] = abs(r["mission_fuel_kg"] - an["mission_fuel_kg"]) / an["mission_fuel_kg"]
        rows.append((f"{label}: iterations / driver evals (f, grad) / fan evals / wall",
                     _counts(r),
                     f"{r['time_ratio_vs_analytic']:.1f}x analytic (CPU time {r['cpu_time_ratio_vs_analytic']:.1f}x); "
                     "optimum differs by "
                     f"{100 * r['optimum_rel_diff']:.1e} %"))
        targets.append(target(f"analytic >= 3x faster than {label}", f"{r['time_ratio_vs_analytic']:.1f}x",
                              f">= {SPEEDUP_TARGET:g}x", r["time_ratio_vs_analytic"] >= SPEEDUP_TARGET,
                              "quick run: one iteration only" if quick else
                              f"CPU-time ratio {r['cpu_time_ratio_vs_analytic']:.1f}x"))
        targets.append(target(f"same optimum with {label}", f"{100 * r['optimum_rel_diff']:.1e} %",
                              "<= 0.01 %", r["optimum_rel_diff"] <= OPTIMUM_RTOL and r["success"],
                              "" if r["success"] else "optimizer did not report success"))
    return {"benchmark": "optimization_cost", "quick": quick, "seconds": time.perf_counter() - t0,
            "fd_options": FD_OPTIONS, "results": results, "rows": rows, "targets": targets}


if __name__ == "__main__":  # pragma: no cover
    import json
    print(json.dumps(run(quick=False), indent=1, default=str))
