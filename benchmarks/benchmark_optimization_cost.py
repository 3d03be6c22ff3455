"""Optimisation cost: the demo best-installed-cycle optimisation with analytic vs finite-difference derivatives."""

import contextlib
import io
import time


from benchmarks import FD_OPTIONS, count_approx_components, target, use_approx_partials
from bypassopt.problems.best_cycle import build_best_cycle_problem

#: Targets: analytic at least 3x faster in wall time than FD, optima equal within 0.01 %.
SPEEDUP_TARGET = 3.0
OPTIMUM_RTOL = 1.0e-4
#: Iteration cap of the quick (smoke-test) mode: it exercises the code paths, not convergence.
QUICK_MAXITER = 1

#: Derivative variants compared, in the order run.
VARIANTS = ("analytic", "fd_totals", "fd_partials")


def build_optimization_problem(derivatives="analytic", maxiter=None):
    """The demo best-installed-cycle problem (``build_best_cycle_problem``) with the chosen derivatives.

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
    prob, _ = build_best_cycle_problem(reports=False)
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


def _optimize(derivatives, maxiter):
    prob = build_optimization_problem(derivatives, maxiter)
    t0, c0 = time.perf_counter(), time.process_time()
    with contextlib.redirect_stdout(io.StringIO()):  # SciPy's closing message
        prob.run_driver()
    seconds, cpu_seconds = time.perf_counter() - t0, time.process_time() - c0
    if derivatives == "fd_partials" and count_approx_components(prob) == 0:
        raise RuntimeError("fd_partials: the finite-difference partials did not take")
    fan = prob.model.cycle.fan
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

    The optima reached with finite differences are compared with the analytic one (no stored value of the
    code's own output serves as a reference); the quick run stops after ``QUICK_MAXITER`` iterations.
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
