"""Optimizers: SciPy SLSQP, pyOptSparse SLSQP and IPOPT on the demo best-installed-cycle problem, side by side."""

import contextlib
import io
import os
import tempfile
import time

from benchmarks import target
from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.drivers import pyoptsparse_available

#: Drivers compared (names of ``make_driver``), with the pyOptSparse optimizer each needs (None: SciPy).
DRIVERS = {"SLSQP": None, "pyoptsparse-SLSQP": "SLSQP", "IPOPT": "IPOPT"}
#: Same optimum as SciPy's SLSQP: mission fuel within 0.01 %, each design variable within 1e-4 (relative).
OPTIMUM_RTOL = 1.0e-4
#: Iteration cap of the quick (smoke-test) mode: it exercises the code paths, not convergence.
QUICK_MAXITER = 2


def build_problem(driver, maxiter=None):
    """The demo best-installed-cycle problem (``build_best_cycle_problem``) with the named driver.

    Parameters
    ----------
    driver : str
        'SLSQP' (SciPy, ``BackOffSLSQPDriver``), 'pyoptsparse-SLSQP' or 'IPOPT' (``om.pyOptSparseDriver``).
    maxiter : int or None
        Override of the optimizer's iteration limit.
    """
    scenario = None
    if maxiter is not None:
        from bypassopt.scenario import load_scenario, validate

        scenario = validate({"optimizer": {"maxiter": maxiter}}, base=load_scenario())
    prob, _ = build_best_cycle_problem(scenario, driver=driver, reports=False)
    return prob


def _major_iterations(hist_file):
    """Major iterations pyOptSparse stored in its history file (None when it cannot be read)."""
    try:
        from pyoptsparse import History

        values = History(hist_file).getValues(names=["mission_fuel"], major=True)
        return len(values["mission_fuel"])
    except Exception:  # noqa: BLE001 - only a count for the table
        return None


def _optimize(driver, maxiter):
    prob = build_problem(driver, maxiter)
    with tempfile.TemporaryDirectory(prefix="bypassopt-hist-") as folder:
        hist = os.path.join(folder, "history.hst")
        if driver != "SLSQP":
            prob.driver.options["hist_file"] = hist
        t0 = time.perf_counter()
        with contextlib.redirect_stdout(io.StringIO()):  # pyOptSparse's notes on its history file
            result = prob.run_driver()
        seconds = time.perf_counter() - t0
        drv = prob.driver
        if driver == "SLSQP":
            iterations = int(drv.optimizer_result.nit)
            model_evals, deriv_evals = drv.model_evaluations, drv.derivative_evaluations
        else:
            iterations = _major_iterations(hist)
            model_evals, deriv_evals = int(result.model_evals), int(result.deriv_evals)
    out = {"success": bool(result.success), "iterations": iterations, "model_evals": model_evals,
           "deriv_evals": deriv_evals, "seconds": seconds,
           "mission_fuel_kg": float(prob.get_val("mission_fuel", units="kg")[0]),
           "design": {name: float(prob.get_val(name)[0]) for name in ("BPR", "FPR", "OPR")}}
    prob.cleanup()
    return out


def _design_rel_diff(r, ref):
    return max(abs(r["design"][n] - v) / abs(v) for n, v in ref["design"].items())


def run(quick=False):
    """Optimise the demo with each driver; return iterations, evaluations, wall time, optima and verdicts.

    The pyOptSparse optima are compared with SciPy SLSQP's from the same run. A driver whose optimizer does
    not load (pyoptsparse not installed, or IPOPT without cyipopt) is reported as 'not installed'.
    """
    t0 = time.perf_counter()
    maxiter = QUICK_MAXITER if quick else None
    results, rows, targets = {}, [], []
    for name, optimizer in DRIVERS.items():
        if optimizer is not None and not pyoptsparse_available(optimizer):
            results[name] = {"installed": False}
            rows.append((f"{name}: iterations / driver evals (f, grad) / wall", "not installed",
                         "pyoptsparse (and cyipopt for IPOPT) is not on PyPI; see README 'Optimizers'"))
            continue
        r = results[name] = dict(_optimize(name, maxiter), installed=True)
        its = "?" if r["iterations"] is None else r["iterations"]
        rows.append((f"{name}: iterations / driver evals (f, grad) / wall",
                     f"{its} / ({r['model_evals']}, {r['deriv_evals']}) / {r['seconds']:.1f} s",
                     f"mission fuel {r['mission_fuel_kg']:.3f} kg at BPR {r['design']['BPR']:.4f}, "
                     f"FPR {r['design']['FPR']:.4f}, OPR {r['design']['OPR']:.3f}"
                     + ("" if r["success"] else "; did not report success")))
    ref = results["SLSQP"]
    targets.append(target("SciPy SLSQP converges", "yes" if ref["success"] else "no", "success", ref["success"],
                           "quick run: two iterations only" if quick else ""))
    for name in ("pyoptsparse-SLSQP", "IPOPT"):
        r = results[name]
        if not r["installed"]:
            targets.append(target(f"{name}: same optimum as SciPy SLSQP", "not installed", "<= 0.01 %", False,
                                  "pyoptsparse (and cyipopt for IPOPT) not installed"))
            continue
        r["optimum_rel_diff"] = abs(r["mission_fuel_kg"] - ref["mission_fuel_kg"]) / ref["mission_fuel_kg"]
        r["design_rel_diff"] = _design_rel_diff(r, ref)
        r["time_ratio_vs_scipy"] = r["seconds"] / ref["seconds"]
        met = r["success"] and r["optimum_rel_diff"] <= OPTIMUM_RTOL and r["design_rel_diff"] <= OPTIMUM_RTOL
        targets.append(target(f"{name}: same optimum as SciPy SLSQP",
                              f"fuel {100 * r['optimum_rel_diff']:.1e} %, design {r['design_rel_diff']:.1e}",
                              "<= 0.01 %, <= 1e-4", met,
                              ("quick run: not converged; " if quick else "")
                              + f"wall time {r['time_ratio_vs_scipy']:.2f}x SciPy SLSQP's"))
    return {"benchmark": "optimizers", "quick": quick, "seconds": time.perf_counter() - t0, "results": results,
            "rows": rows, "targets": targets}


if __name__ == "__main__":  # pragma: no cover
    import json
    print(json.dumps(run(quick=False), indent=1, default=str))
