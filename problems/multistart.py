"""Multistart: the best-cycle optimisation from many starting designs inside the bounds; the best and the spread."""

import time

import numpy as np
import openmdao.api as om

from bypassopt.problems.best_cycle import (GEOMETRY_CONSTRAINTS, build_best_cycle_problem, limit_scaling,
                                          objective_output)
from bypassopt.problems.drivers import run_record
from bypassopt.problems.parallel_cases import run_cases, self_comm, world_comm
from bypassopt.scenario import DESIGN_VARIABLES, ScenarioError, load_scenario

#: Ways of drawing the starting designs.
METHODS = ("lhs", "random")
#: A converged start meets a limit when it misses it by at most this fraction of the limit's scaling magnitude
#: (the constraint's ``ref``: 0.1 m, 100 K, 1 kg/s, 1 t), about SLSQP's tolerance on the scaled constraint.
FEASIBILITY_TOL = 1e-6
#: Starts whose objective lies within this fraction of the best found the same optimum (``spread['agree']``).
SAME_OPTIMUM_RTOL = 1e-6
#: Model inputs of the design variables, in the order of the result vectors.
DESIGN_NAMES = tuple(var for var, *_ in DESIGN_VARIABLES.values())


def _units(name):
    return "K" if name == "Tt4" else None


def free_design_variables(scenario):
    """Return {model input: (lower, upper)} of the design variables the scenario optimises (DESIGN_VARIABLES order)."""
    free = {}
    for key, (var, *_) in DESIGN_VARIABLES.items():
        dv = scenario["design_variables"][key]
        if dv["optimize"]:
            free[var] = (float(dv["lower"]), float(dv["upper"]))
    if not free:
        raise ScenarioError("design_variables: no variable has optimize = true")
    return free


def starting_designs(scenario, num_starts, method="lhs", seed=0):
    """Return seeded starting designs inside the bounds of the free design variables: {model input: array}.

    ``'lhs'``: a Latin hypercube (McKay, Beckman & Conover, Technometrics 21, 1979): each variable's range is cut
    into ``num_starts`` equal strata and every stratum holds one start, at a uniform random place in it, the
    strata paired at random between variables. ``'random'``: independent uniform draws. Both come from
    ``numpy.random.default_rng(seed)``, so a seed gives the same starts on any machine and process.
    """
    if method not in METHODS:
        raise ScenarioError(f"multistart method {method!r} is not one of {', '.join(METHODS)}")
    if int(num_starts) < 1:
        raise ScenarioError(f"num_starts = {num_starts} must be at least 1")
    n = int(num_starts)
    free = free_design_variables(scenario)
    rng = np.random.default_rng(seed)
    if method == "lhs":
        unit = np.column_stack([(rng.permutation(n) + rng.uniform(size=n)) / n for _ in free])
    else:
        unit = rng.uniform(size=(n, len(free)))
    return {var: lo + unit[:, j] * (hi - lo) for j, (var, (lo, hi)) in enumerate(free.items())}


def _violation(prob, settings):
    """Largest limit miss of the current point, as a fraction of each limit's scaling magnitude (0 when all met)."""
    worst = 0.0
    refs = {var: ref for var, _, _, ref in GEOMETRY_CONSTRAINTS.values()}
    for var, (kind, limit, units) in settings.limits.items():
        value = float(np.squeeze(prob.get_val(var, units=units)))
        miss = (limit - value) if kind == "lower" else (value - limit)
        ref = refs.get(var) or (1000.0 if var == "mtow_margin" else limit_scaling(var)[1])
        worst = max(worst, miss / ref)
    return worst


#: Layout of one start's result vector: success, feasible, objective, violation, iterations, model evaluations,
#: failed evaluations, seconds, then the final design (DESIGN_NAMES) and the start (DESIGN_NAMES, NaN where fixed).
_HEAD = ("success", "feasible", "objective", "violation", "iterations", "model_evaluations", "failed_evaluations",
         "seconds")


def _run_start(scenario, start, comm):
    """Optimise from ``start`` {model input: value} on ``comm``; return the packed result vector (``_HEAD``)."""
    t0 = time.perf_counter()
    out = np.full(len(_HEAD) + 2 * len(DESIGN_NAMES), np.nan)
    for j, name in enumerate(DESIGN_NAMES):
        if name in start:
            out[len(_HEAD) + len(DESIGN_NAMES) + j] = start[name]
    prob, settings = build_best_cycle_problem(scenario, reports=False, comm=comm)
    for name, value in start.items():
        prob.set_val(name, value, units=_units(name))
    try:
        record = run_record(prob.driver, prob.run_driver())
        prob.run_model()  # the returned design, evaluated (the driver's last evaluation may be a trial point)
    except om.AnalysisError:
        out[:2] = 0.0
        out[len(_HEAD) - 1] = time.perf_counter() - t0
        return out
    violation = _violation(prob, settings)
    out[0] = float(record["success"])
    out[1] = float(violation <= FEASIBILITY_TOL)
    out[2] = float(np.squeeze(prob.get_val(settings.objective_output)))
    out[3] = max(violation, 0.0)
    out[4] = np.nan if record["iterations"] is None else record["iterations"]
    out[5] = record["model_evaluations"]
    out[6] = np.nan if record["failed_evaluations"] is None else record["failed_evaluations"]
    out[7] = time.perf_counter() - t0
    for j, name in enumerate(DESIGN_NAMES):
        out[len(_HEAD) + j] = float(np.squeeze(prob.get_val(name, units=_units(name))))
    return out


def run_multistart(scenario=None, num_starts=16, method="lhs", seed=0, comm=None, progress=None):
    """Best-cycle optimisation (``build_best_cycle_problem``) from ``num_starts`` seeded starts; best and spread.

    Every start is an independent case computed from scratch (a new problem on one process), driven by
    ``om.DOEDriver`` through ``parallel_cases.run_cases``: under ``mpiexec -n N`` the starts are shared by the N
    processes (start k on process k % N) and every process gets the whole result, the same for any N.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the demo. Its optimizer, objective, limits and free design variables are
        those of ``bypassopt optimize``; only the starting design changes.
    num_starts : int
        Number of starts.
    method : {'lhs', 'random'}
        How the starts are drawn inside the design-variable bounds (``starting_designs``).
    seed : int
        Seed of the draw.
    comm : MPI communicator or None
        Processes sharing the starts; None takes every process of an ``mpiexec`` run (none outside MPI).
    progress : callable or None
        ``progress(done, total, message)`` before and after the starts.

    Returns
    -------
    dict
        ``starts``: one dict per start (``start`` and ``design`` {model input: value}, ``success``, ``feasible``
        (every limit met within ``FEASIBILITY_TOL``), ``objective``, ``violation``, ``iterations``,
        ``model_evaluations``, ``failed_evaluations``, ``seconds``); ``best``: the start of least objective among
        those that converged and meet every limit (its index under ``start_index``), or None; ``spread``:
        ``converged`` (count of those), ``agree`` (how many of them lie within ``SAME_OPTIMUM_RTOL`` of the best
        objective), objective ``min``, ``max``, ``std`` and per design variable its ``min`` and ``max`` over
        them; ``objective_name``, ``objective_output``, ``method``, ``seed``, ``num_starts``, ``processes``.
    """
    scenario = scenario or load_scenario()
    starts = starting_designs(scenario, num_starts, method, seed)
    names = list(starts)
    n = int(num_starts)
    comm = comm if comm is not None else world_comm()
    nprocs = 1 if comm is None else comm.size
    if progress is not None:
        progress(0, 2, f"{n} optimisations from {method} starts (seed {seed}) on {nprocs} process"
                       f"{'es' if nprocs > 1 else ''}")

    def run_case(k, case_comm):
        return _run_start(scenario, {name: float(starts[name][k]) for name in names}, self_comm(case_comm))

    table = run_cases(run_case, n, len(_HEAD) + 2 * len(DESIGN_NAMES), comm=comm)
    rows = []
    for k, row in enumerate(table):
        entry = {key: row[j] for j, key in enumerate(_HEAD)}
        entry["success"], entry["feasible"] = bool(entry["success"] > 0.5), bool(entry["feasible"] > 0.5)
        for key in ("iterations", "model_evaluations", "failed_evaluations"):
            entry[key] = None if not np.isfinite(entry[key]) else int(entry[key])
        entry["design"] = {name: float(row[len(_HEAD) + j]) for j, name in enumerate(DESIGN_NAMES)}
        entry["start"] = {name: float(row[len(_HEAD) + len(DESIGN_NAMES) + j]) for j, name in enumerate(DESIGN_NAMES)
                          if name in names}
        entry["index"] = k
        rows.append(entry)
    good = [r for r in rows if r["success"] and r["feasible"]]
    best = min(good, key=lambda r: r["objective"]) if good else None
    spread = {"converged": len(good), "agree": 0}
    if good:
        obj = np.array([r["objective"] for r in good])
        spread.update(agree=int(np.sum(np.abs(obj - best["objective"]) <= SAME_OPTIMUM_RTOL * abs(best["objective"]))),
                      min=float(obj.min()), max=float(obj.max()), std=float(obj.std()),
                      design={name: {"min": min(r["design"][name] for r in good),
                                     "max": max(r["design"][name] for r in good)} for name in DESIGN_NAMES})
    if progress is not None:
        progress(2, 2, f"{len(good)} of {n} starts converged and meet every limit")
    settings_objective = scenario["optimizer"]["objective"]
    return {
        "starts": rows,
        "best": None if best is None else dict(best, start_index=best["index"]),
        "spread": spread,
        "objective_name": settings_objective,
        "objective_output": objective_output(settings_objective, scenario),
        "method": method,
        "seed": int(seed),
        "num_starts": n,
        "processes": nprocs,
    }
