"""Cycle carpet: the installed objective over a BPR x OPR grid, evaluated as one vectorized model run."""

import numpy as np
import openmdao.api as om

from bypassopt.problems.best_cycle import (GEOMETRY_CONSTRAINTS, OBJECTIVES, apply_scenario, build_installed_model,
                                          objective_output)
from bypassopt.problems.drivers import BackOffSLSQPDriver
from bypassopt.problems.parallel_cases import run_cases, self_comm, world_comm
from bypassopt.scenario import ScenarioError, constraint_limits, load_scenario

#: Jet velocity ratio V18/V8 the starting FPR of the 'optimal' mode aims at (near the installed optimum,
#: field-reference 5.2: optimum ratio about the product of fan and LPT transfer efficiencies, 0.8-0.85).
START_JET_VELOCITY_RATIO = 0.8
#: Largest FPR change of one secant step towards the starting jet velocity ratio.
SECANT_MAX_STEP = 0.1
#: Secant steps (each one vectorized model run) towards the starting jet velocity ratio.
SECANT_ITERATIONS = 6
#: A secant step that makes the batch fail is halved at most this many times.
SECANT_HALVINGS = 6

#: Outputs collected at every carpet point: name -> units.
CARPET_OUTPUTS = {
    "clearance_margin": "m",
    "diameter_margin": "m",
    "Tt41": "K",
    "Tt3": "K",
    "W3_corrected": "kg/s",
    "jet_velocity_ratio": None,
    "nacelle_max_diameter": "m",
    "installed_TSFC": "mg/(N*s)",
    "mission_fuel": "kg",
    "powerplant_mass": "kg",
}


class NodeSumComp(om.ExplicitComponent):
    """Sum of a vectorized quantity over the nodes, the scalar objective of a separable vector problem.

    total = sum_i values_i, so d total / d values_i = 1. Minimising the sum of node-wise objectives that
    depend only on their own node's design variables minimises every node's objective.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, desc="number of nodes summed")
        self.options.declare("units", types=(str, type(None)), default=None, desc="units of values and total")

    def setup(self):
        """Declare the vector input and the scalar sum."""
        nn, units = self.options["num_nodes"], self.options["units"]
        self.add_input("values", val=np.zeros(nn), units=units, desc="node-wise values to be summed")
        self.add_output("total", val=0.0, units=units, desc="sum of the values over the nodes")

    def setup_partials(self):
        """Constant partials."""
        nn = self.options["num_nodes"]
        self.declare_partials("total", "values", rows=np.zeros(nn, dtype=int), cols=np.arange(nn),
                              val=np.ones(nn))

    def compute(self, inputs, outputs):
        """Sum over the nodes."""
        outputs["total"] = np.sum(inputs["values"])


class CarpetModelGroup(om.Group):
    """The scenario's installed engine for ``num_nodes`` designs at once, optionally with a summed objective.

    Wraps ``build_installed_model`` and gives the flight Mach number a default of the right shape for
    any number of nodes. With ``objective`` set, ``objective_sum`` is the objective summed over the nodes.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("scenario", types=dict, recordable=False, desc="validated scenario")
        self.options.declare("num_nodes", types=int, default=1, desc="designs evaluated at once")
        self.options.declare("objective", types=(str, type(None)), default=None,
                             desc="objective (key of OBJECTIVES) to sum over the nodes, or None")

    def setup(self):
        """Add the installed engine and, optionally, the node sum."""
        scenario, nn = self.options["scenario"], self.options["num_nodes"]
        self.add_subsystem("engine", build_installed_model(scenario, nn), promotes=["*"])
        self.set_input_defaults("Mach0", scenario["design_point"]["mach"] * np.ones(nn))
        objective = self.options["objective"]
        if objective is not None:
            _, units, _ = OBJECTIVES[objective]
            out = objective_output(objective, scenario)
            self.add_subsystem("node_sum", NodeSumComp(num_nodes=nn, units=units),
                               promotes_inputs=[("values", out)], promotes_outputs=[("total", "objective_sum")])


def carpet_limits(scenario):
    """Constraints drawn on a carpet: {model output: {kind, limit, units, label}} ('lower': output >= limit)."""
    labels = {"clearance_margin": "ground-clearance margin", "diameter_margin": "nacelle-diameter margin"}
    limits = {}
    for name, (var, kind, units, _) in GEOMETRY_CONSTRAINTS.items():
        limits[var] = {"kind": kind, "limit": 0.0, "units": units, "label": labels.get(name, name)}
    for var, kind, limit, desc in constraint_limits(scenario).values():
        limits[var] = {"kind": kind, "limit": float(limit), "units": CARPET_OUTPUTS[var.split(":")[-1]],
                       "label": desc}
    return limits


class _BatchEvaluator:
    """Vectorized evaluation of many designs; a batch that raises is bisected to find the failing designs."""

    def __init__(self, scenario, outputs, comm=None):
        self.scenario = scenario
        self.outputs = outputs
        self.comm = comm
        self._problems = {}
        self.model_runs = 0

    def _problem(self, n):
        """(problem with n nodes, whether it is freshly set up); one problem per size is reused."""
        if n not in self._problems:
            prob = om.Problem(CarpetModelGroup(scenario=self.scenario, num_nodes=n), reports=False, comm=self.comm)
            prob.setup()
            apply_scenario(prob, self.scenario)
            self._problems[n] = prob
            return prob, True
        return self._problems[n], False

    def evaluate(self, design):
        """Evaluate {input: 1-D array} -> ({output: array, NaN where failed}, ok mask)."""
        n = len(next(iter(design.values())))
        values = {name: np.full(n, np.nan) for name in self.outputs}
        ok = np.ones(n, dtype=bool)

        def run(idx):
            prob, fresh = self._problem(len(idx))
            try:
                for name, val in design.items():
                    prob.set_val(name, val[idx])
                self.model_runs += 1
                prob.run_model()
            except om.AnalysisError:
                if len(idx) > 1:
                    half = len(idx) // 2
                    run(idx[:half])
                    run(idx[half:])
                elif not fresh:  # a failed earlier run may have left its states unusable: retry afresh
                    self._problems.pop(1)
                    run(idx)
                else:
                    ok[idx] = False
                return
            for name, units in self.outputs.items():
                values[name][idx] = prob.get_val(name, units=units)

        run(np.arange(n))
        return values, ok


def _fpr_bounds(scenario):
    dv = scenario["design_variables"]["FPR"]
    return float(dv["lower"]), float(dv["upper"])


def _secant_start(prob, fpr, lower, upper):
    """Vectorized secant on FPR towards ``START_JET_VELOCITY_RATIO``; every step is one model run.

    A step that makes the batch fail is halved (all nodes) until it runs. Returns the FPR of the last
    successful run (the problem is left evaluated there).
    """
    target = START_JET_VELOCITY_RATIO

    def ratio(x):
        prob.set_val("FPR", x)
        prob.run_model()
        return prob.get_val("jet_velocity_ratio").copy()

    def try_step(x, step):
        for _ in range(SECANT_HALVINGS + 1):
            x_new = np.clip(x + step, lower, upper)
            try:
                return x_new, ratio(x_new)
            except om.AnalysisError:
                step = 0.5 * step
        return None, None

    x0 = np.array(fpr, dtype=float)
    r0 = ratio(x0)
    x1, r1 = try_step(x0, np.where(r0 < target, 0.05, -0.05))
    if x1 is None:
        ratio(x0)
        return x0
    for _ in range(SECANT_ITERATIONS):
        dx = x1 - x0
        dr = r1 - r0
        usable = (np.abs(dx) > 1e-9) & (np.abs(dr) > 1e-12)
        slope = np.where(usable, dr / np.where(usable, dx, 1.0), 2.0)  # dr/dFPR ~ 2 near the optimum
        slope = np.where(slope > 0.05, slope, 2.0)  # ratio rises with FPR
        step = np.clip((target - r1) / slope, -SECANT_MAX_STEP, SECANT_MAX_STEP)
        step = np.where(np.abs(r1 - target) < 0.01, 0.0, step)
        if np.all(step == 0.0):
            break
        x2, r2 = try_step(x1, step)
        if x2 is None:
            break
        x0, r0, x1, r1 = x1, r1, x2, r2
    ratio(x1)
    return x1


def _optimise_fpr(scenario, objective, bpr, opr, fpr_start, progress_step, comm=None):
    """Optimise FPR at every design of (bpr, opr) at once: min sum of objectives, FPR within bounds."""
    n = len(bpr)
    lower, upper = _fpr_bounds(scenario)
    opt = scenario["optimizer"]
    prob = om.Problem(CarpetModelGroup(scenario=scenario, num_nodes=n, objective=objective), reports=False,
                      comm=comm)
    prob.driver = BackOffSLSQPDriver(maxiter=opt["maxiter"], tol=opt["tol"], disp=False)
    prob.model.add_design_var("FPR", lower=lower, upper=upper, ref0=lower, ref=upper)
    _, _, ref = OBJECTIVES[objective]
    prob.model.add_objective("objective_sum", ref=ref)
    prob.setup()
    apply_scenario(prob, scenario)
    prob.set_val("BPR", bpr)
    prob.set_val("OPR", opr)
    x = _secant_start(prob, fpr_start, lower, upper)
    progress_step("optimising FPR at every point (SLSQP on the summed objective)")
    prob.run_driver()
    result = prob.driver.optimizer_result
    success = bool(result.success)
    fpr = np.clip(np.asarray(result.x, dtype=float) * (upper - lower) + lower, lower, upper)
    failed_evaluations = prob.driver.failed_evaluations
    model_evaluations = prob.driver.model_evaluations
    prob.set_val("FPR", fpr)
    try:
        prob.run_model()
    except om.AnalysisError:  # the returned point was not the last good one: the caller re-evaluates
        prob = None
    info = {"success": success, "message": str(result.message), "iterations": int(result.nit),
            "model_evaluations": model_evaluations, "failed_evaluations": failed_evaluations,
            "start_FPR": x}
    return prob, fpr, info


def _carpet_block(scenario, objective, outputs, bpr, opr, fpr_mode, fixed_fpr, step, comm):
    """Carpet values of the designs (bpr, opr) (1-D), computed from scratch as one vectorized case.

    Returns (values {output: array}, ok mask, FPR (NaN where failed), FPR optimisation summary or None, model runs,
    indices of the designs whose FPR was optimised or None).
    """
    lower, _ = _fpr_bounds(scenario)
    evaluator = _BatchEvaluator(scenario, outputs, comm)
    fpr_info = idx = None

    if fpr_mode == "fixed":
        fpr = np.full(bpr.size, float(fixed_fpr))
        step(f"evaluating {bpr.size} designs at FPR {fixed_fpr:g}")
        values, ok = evaluator.evaluate({"BPR": bpr, "OPR": opr, "FPR": fpr})
    else:
        start = np.full(bpr.size, lower)
        step(f"screening {bpr.size} designs at the lowest FPR {lower:g}")
        _, ok = evaluator.evaluate({"BPR": bpr, "OPR": opr, "FPR": start})
        fpr = np.full(bpr.size, np.nan)
        values = {name: np.full(bpr.size, np.nan) for name in outputs}
        idx = np.flatnonzero(ok)
        if idx.size:
            step(f"starting FPR of {idx.size} designs near jet velocity ratio {START_JET_VELOCITY_RATIO:g}")
            parts = _optimise_fpr_in_parts(scenario, objective, bpr[idx], opr[idx], start[idx], step, comm)
            for part, prob, fpr_opt, _ in parts:
                where = idx[part]
                if prob is None and fpr_opt is None:  # a single design whose vectorized start failed
                    ok[where] = False
                    continue
                fpr[where] = fpr_opt
                if prob is not None:
                    for name, units in outputs.items():
                        values[name][where] = prob.get_val(name, units=units)
                else:
                    sub, ok[where] = evaluator.evaluate({"BPR": bpr[where], "OPR": opr[where], "FPR": fpr_opt})
                    for name in outputs:
                        values[name][where] = sub[name]
            fpr_info = _merge_fpr_info([info for *_, info in parts if info is not None])
            idx = np.concatenate([idx[part] for part, prob, fpr_opt, _ in parts
                                  if not (prob is None and fpr_opt is None)]) if parts else idx
        else:
            step("no design could be evaluated")
            step("no design could be evaluated")

    fpr = np.where(ok, fpr, np.nan)
    return values, ok, fpr, fpr_info, evaluator.model_runs, idx


#: FPR optimisation summary numbers packed per case: name -> how the cases' values combine.
_FPR_INFO_SUMS = ("iterations", "model_evaluations", "failed_evaluations")


def _carpet_cases(scenario, objective, outputs, bpr, opr, fpr_mode, fixed_fpr, per_case, num_cases, comm):
    """Compute the carpet in ``num_cases`` cases of ``per_case`` designs (``run_cases``); return as _carpet_block."""
    names = list(outputs)
    n = bpr.size
    # per case: every output, ok, FPR, start FPR (per design), then model runs, has-summary, success, the sums
    width = (len(names) + 3) * per_case + 3 + len(_FPR_INFO_SUMS)

    def run_case(k, case_comm):
        idx = np.arange(k * per_case, min((k + 1) * per_case, n))
        values, ok, fpr, info, runs, optimised = _carpet_block(scenario, objective, outputs, bpr[idx], opr[idx],
                                                               fpr_mode, fixed_fpr, lambda message: None,
                                                               self_comm(case_comm))
        packed = np.full(width, np.nan)
        start = np.full(idx.size, np.nan)
        if info:
            start[optimised] = info["start_FPR"]
        cols = [values[name] for name in names] + [ok.astype(float), fpr, start]
        for c, col in enumerate(cols):
            packed[c * per_case:c * per_case + idx.size] = col
        tail = [runs, info is not None, bool(info and info["success"])]
        tail += [info[key] if info else 0 for key in _FPR_INFO_SUMS]
        packed[len(cols) * per_case:] = tail
        return packed

    table = run_cases(run_case, num_cases, width, comm=comm)
    values = {name: np.empty(n) for name in names}
    ok, fpr, start = np.zeros(n, dtype=bool), np.empty(n), np.empty(n)
    for k, row in enumerate(table):
        idx = np.arange(k * per_case, min((k + 1) * per_case, n))
        for c, name in enumerate(names):
            values[name][idx] = row[c * per_case:c * per_case + idx.size]
        c = len(names)
        ok[idx] = row[c * per_case:c * per_case + idx.size] > 0.5
        fpr[idx] = row[(c + 1) * per_case:(c + 1) * per_case + idx.size]
        start[idx] = row[(c + 2) * per_case:(c + 2) * per_case + idx.size]
    tails = table[:, (len(names) + 3) * per_case:]
    model_runs = int(np.sum(tails[:, 0]))
    fpr_info = None
    optimised = tails[:, 1] > 0.5
    if np.any(optimised):
        converged = int(np.sum(tails[optimised, 2] > 0.5))
        fpr_info = {"success": converged == int(np.sum(optimised)),
                    "message": f"{converged} of {int(np.sum(optimised))} cases converged",
                    "start_FPR": start[np.isfinite(start)]}
        for j, key in enumerate(_FPR_INFO_SUMS):
            fpr_info[key] = int(np.sum(tails[optimised, 3 + j]))
    return values, ok, fpr, fpr_info, model_runs


def _optimise_fpr_in_parts(scenario, objective, bpr, opr, fpr_start, progress_step, comm):
    """``_optimise_fpr`` of the designs, halved where the vectorized start itself raises; [(part, prob, FPR, info)].

    Every design passed the screen one batch or one design at a time, yet the vectorized start of the FPR
    optimisation can still fail (a batch's common Newton path differs from a smaller batch's). Such a batch is
    split in halves, each optimised on its own; a single design that still fails is returned with prob and FPR
    None (the caller marks it failed). A batch that runs is one part, as before.
    """
    try:
        prob, fpr, info = _optimise_fpr(scenario, objective, bpr, opr, fpr_start, progress_step, comm)
        return [(np.arange(bpr.size), prob, fpr, info)]
    except om.AnalysisError:
        if bpr.size == 1:
            return [(np.arange(1), None, None, None)]
    half = bpr.size // 2
    parts = []
    for part in (np.arange(half), np.arange(half, bpr.size)):
        for sub, prob, fpr, info in _optimise_fpr_in_parts(scenario, objective, bpr[part], opr[part],
                                                           fpr_start[part], lambda message: None, comm):
            parts.append((part[sub], prob, fpr, info))
    return parts


def _merge_fpr_info(infos):
    """One FPR optimisation summary of the parts' (the single part's own where there is one)."""
    if len(infos) == 1:
        return infos[0]
    if not infos:
        return None
    merged = {"success": all(i["success"] for i in infos),
              "message": "; ".join(sorted({i["message"] for i in infos})) + f" ({len(infos)} parts)",
              "start_FPR": np.concatenate([np.atleast_1d(i["start_FPR"]) for i in infos])}
    for key in _FPR_INFO_SUMS:
        merged[key] = sum(i[key] for i in infos)
    return merged


def run_carpet(scenario=None, bpr_values=None, opr_values=None, fpr_mode=None, fixed_fpr=None, progress=None,
               designs_per_case=None, comm=None):
    """Installed objective and constraint margins over a BPR x OPR grid, evaluated as one vectorized model.

    Every grid point is a node of one ``InstalledEngineGroup(num_nodes=N)``, so each model run evaluates
    the whole grid (no Python loop over points); T4 is the scenario's initial value.
    ``fpr_mode='fixed'`` evaluates all points at one FPR. ``'optimal'`` first moves every point's FPR
    towards jet velocity ratio 0.8 (vectorized secant), then minimises the sum over the points of the
    objective with FPR as a vector design variable (``BackOffSLSQPDriver``, FPR bounds from the
    scenario). Each point's objective depends only on its own FPR, so the minimum of the sum is every
    point's own minimum (FPR at its local optimum, or on a bound). The FPR optimisation ignores the
    limits: the carpet shows where they are violated. Points the model cannot evaluate (it raises
    ``om.AnalysisError`` for impossible cycles) are found by bisecting the batch, only when it fails,
    and are NaN with ``feasible`` False.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario (``bypassopt.scenario.load_scenario``); None gives the demo.
    bpr_values, opr_values : sequence of float or None
        Grid axes; None takes ``scenario['carpet']``.
    fpr_mode : {'fixed', 'optimal'} or None
        None takes ``scenario['carpet']['FPR_mode']``.
    fixed_fpr : float or None
        FPR of the 'fixed' mode; None takes the scenario's initial FPR.
    progress : callable or None
        ``progress(done, total, message)`` called as the stages finish.
    designs_per_case : int or None
        None (default): the whole grid is one vectorized case. A number splits the grid (in row-major order,
        OPR rows of BPR columns) into cases of at most that many designs, each computed from scratch as above
        (``_carpet_block``) and driven by ``om.DOEDriver``: under MPI (``mpiexec -n N``) with
        ``run_parallel=True``, case k on process k % N (``parallel_cases.run_cases``). The result is the same
        for any number of processes (each case starts from scratch), and equals the one-case carpet to the
        solvers' tolerances (the designs of a vectorized case share its Newton iterations).
    comm : MPI communicator or None
        Processes that share the cases; None takes every process of an ``mpiexec`` run (none outside MPI).

    Returns
    -------
    dict
        2-D arrays of shape (len(opr_values), len(bpr_values)) (rows: OPR, columns: BPR): ``BPR``,
        ``OPR``, ``FPR``, ``objective`` (values of ``objective_name`` in ``objective_units``) and the
        outputs of ``CARPET_OUTPUTS`` (``clearance_margin``, ``diameter_margin`` in m, ``Tt41``,
        ``Tt3`` in K, ``W3_corrected`` in kg/s, ...); ``margins`` {constraint: output minus limit, signed
        so that >= 0 meets it}; ``limits`` (``carpet_limits``); ``feasible`` (the model evaluated the
        point); ``meets_limits`` (feasible and every margin >= 0); ``optimum`` (grid point of least
        objective meeting all limits: BPR, OPR, FPR, objective, index; None if there is none);
        ``bpr_values``, ``opr_values``, ``fpr_mode``, ``T4`` (K), ``scenario``, ``units``,
        ``fpr_optimisation`` (driver summary, 'optimal' mode; summed over the cases), ``model_runs``,
        ``designs_per_case`` and ``cases``. Every process gets the whole result.
    """
    scenario = scenario or load_scenario()
    carpet = scenario.get("carpet", {})
    bpr_values = np.asarray(bpr_values if bpr_values is not None else carpet["BPR_values"], dtype=float)
    opr_values = np.asarray(opr_values if opr_values is not None else carpet["OPR_values"], dtype=float)
    fpr_mode = fpr_mode or carpet.get("FPR_mode", "fixed")
    if fpr_mode not in ("fixed", "optimal"):
        raise ScenarioError(f"fpr_mode = {fpr_mode!r} is not one of fixed, optimal.")
    if bpr_values.ndim != 1 or opr_values.ndim != 1 or bpr_values.size < 2 or opr_values.size < 2:
        raise ScenarioError("carpet: BPR and OPR values must be lists of at least 2 numbers.")
    lower, upper = _fpr_bounds(scenario)
    if fixed_fpr is None:
        fixed_fpr = scenario["design_variables"]["FPR"]["initial"]
    if fpr_mode == "fixed" and not 1.0 < fixed_fpr <= 3.0:
        raise ScenarioError(f"fixed_fpr = {fixed_fpr:g} is outside the valid range (above 1 up to 3).")
    objective = scenario["optimizer"]["objective"]
    _, obj_units, _ = OBJECTIVES[objective]
    obj_out = objective_output(objective, scenario)

    total = 2 if fpr_mode == "fixed" else 4
    done = [0]

    def step(message):
        done[0] += 1
        if progress is not None:
            progress(done[0], total, message)

    B, P = np.meshgrid(bpr_values, opr_values)
    shape = B.shape
    bpr, opr = B.ravel(), P.ravel()
    outputs = dict(CARPET_OUTPUTS)
    outputs[obj_out] = obj_units
    for var, lim in carpet_limits(scenario).items():  # the take-off limits of the multipoint model
        outputs.setdefault(var, lim["units"])
    if designs_per_case is not None and designs_per_case < 1:
        raise ScenarioError(f"designs_per_case = {designs_per_case} must be at least 1.")
    per_case = bpr.size if designs_per_case is None else min(int(designs_per_case), bpr.size)
    num_cases = -(-bpr.size // per_case)
    if num_cases == 1:  # one vectorized block on this process (every process under MPI)
        values, ok, fpr, fpr_info, model_runs, _ = _carpet_block(
            scenario, objective, outputs, bpr, opr, fpr_mode, fixed_fpr, step, self_comm(None))
    else:
        total = 2
        comm = comm if comm is not None else world_comm()
        nprocs = 1 if comm is None else comm.size
        step(f"evaluating {bpr.size} designs in {num_cases} cases of up to {per_case} on {nprocs} process"
             f"{'es' if nprocs > 1 else ''}")
        values, ok, fpr, fpr_info, model_runs = _carpet_cases(
            scenario, objective, outputs, bpr, opr, fpr_mode, fixed_fpr, per_case, num_cases, comm)

    limits = carpet_limits(scenario)
    margins = {}
    meets = ok.copy()
    for name, lim in limits.items():
        g = values[name]
        m = g - lim["limit"] if lim["kind"] == "lower" else lim["limit"] - g
        margins[name] = m.reshape(shape)
        meets &= np.where(ok, m, -np.inf) >= 0.0
    obj = values[obj_out]
    optimum = None
    if np.any(meets):
        k = int(np.argmin(np.where(meets, obj, np.inf)))
        i, j = np.unravel_index(k, shape)
        optimum = {"BPR": float(bpr[k]), "OPR": float(opr[k]), "FPR": float(fpr[k]), "objective": float(obj[k]),
                   "index": (int(i), int(j))}
    step("done")

    result = {
        "scenario": scenario["aircraft"].get("name", "scenario"),
        "fpr_mode": fpr_mode,
        "fixed_fpr": float(fixed_fpr) if fpr_mode == "fixed" else None,
        "FPR_bounds": (lower, upper),
        "Tt4": float(scenario["design_variables"]["Tt4_K"]["initial"]),
        "bpr_values": bpr_values,
        "opr_values": opr_values,
        "BPR": B,
        "OPR": P,
        "FPR": fpr.reshape(shape),
        "objective_name": objective,
        "objective_units": obj_units,
        "objective": obj.reshape(shape),
        "limits": limits,
        "margins": margins,
        "feasible": ok.reshape(shape),
        "meets_limits": meets.reshape(shape),
        "optimum": optimum,
        "units": dict(outputs, BPR=None, OPR=None, FPR=None, T4="K"),
        "fpr_optimisation": fpr_info,
        "model_runs": model_runs,
        "designs_per_case": per_case,
        "cases": num_cases,
    }
    for name in outputs:
        result[name] = values[name].reshape(shape)
    return result
