"""Optimizer drivers: SciPy SLSQP that backs off from failed evaluations, and pyoptsparse when it imports."""

import time

import numpy as np
import openmdao
import openmdao.api as om
from openmdao.core.driver import Driver
from openmdao.recorders.recording_iteration_stack import Recording
from scipy.optimize import minimize

#: Added to the (scaled) objective at a design the model cannot evaluate, so the line search backs off.
FAILED_EVALUATION_PENALTY = 1.0e3
#: Bisections along the segment from an unevaluable start to an evaluable design (a step of 2**-8 of it).
START_BISECTIONS = 8

#: Before OpenMDAO 3.44 the ``lower``/``upper``/``equals`` of ``get_design_vars``/``get_constraints`` come
#: already driver-scaled; from 3.44 on they are in the declared (physical) units. Checked on 3.41 and 3.45.
_BOUNDS_ALREADY_SCALED = tuple(int(p) for p in openmdao.__version__.split(".")[:2]) < (3, 44)


class BackOffSLSQPDriver(Driver):
    """SciPy's SLSQP as an OpenMDAO driver that treats ``om.AnalysisError`` as a failed evaluation.

    The model raises ``om.AnalysisError`` (``bypassopt.components.validation.InputRangeError``) for
    cycles that cannot exist (a core jet with no pressure left, a turbine asked for more work than the
    gas holds). pyOptSparse optimizers back off from such points natively, through their failure flag.
    SciPy's SLSQP has none, and OpenMDAO's ``ScipyOptimizeDriver`` stops the run at the first such error.
    This driver calls ``scipy.optimize.minimize(method='SLSQP')`` itself with its own callbacks, built on
    the public driver and problem API only (``Driver.run``, ``get_design_var_values``,
    ``get_objective_values``, ``get_constraint_values``, ``record_iteration``, ``Problem.set_val`` and
    ``Problem.compute_totals``; no private method of another driver is overridden). At a failed
    evaluation it returns the last good objective plus ``FAILED_EVALUATION_PENALTY`` (in scaled units)
    with the last good constraint values, so the merit function rises and SLSQP's line search shortens
    its step. Failed evaluations are not recorded as cases; they are listed in ``failures`` (design and
    message). Any other exception aborts the run as usual. At the end the model is left evaluated at the
    point SLSQP returned (not at its last trial point), so what a caller reads is the optimum.

    Design variables and responses are handed to SLSQP in OpenMDAO's driver scaling (``ref``/``ref0``).

    A start the model cannot evaluate is moved rather than rejected: the driver bisects
    (``START_BISECTIONS`` times) the segment from the start to an evaluable design, the option
    ``fallback_design`` (for the best-cycle problem, the scenario's initial design) or else the last
    design this driver evaluated in an earlier run, and starts SLSQP from the evaluable end of the last
    bracket, the evaluable point found nearest the start on that segment. The move is recorded in
    ``start_moved`` and the failed trials in ``failures``. Only when neither exists, or the fallback
    design itself cannot be evaluated, does the run raise the model's error.

    Attributes
    ----------
    optimizer_result : scipy.optimize.OptimizeResult or None
        What ``minimize`` returned in the last run (``success``, ``message``, ``nit``, ``x``).
    model_evaluations, derivative_evaluations : int
        Model solves and total-derivative computations of the last run (failed ones included).
    model_time_s, derivative_time_s : float
        Wall time of the last run spent in model solves and in total derivatives.
    failures : list of dict
        ``{"design": {name: value}, "message": str}`` of each failed evaluation of the last run.
    start_moved : dict or None
        None when the last run started where it was asked to; else ``{"from": design, "to": design,
        "towards": design, "fraction": t}`` with designs as {name: list of values} and t the fraction of the
        segment from the requested start towards the evaluable design at which SLSQP started.
    """

    def __init__(self, **kwargs):
        """Create the driver; keyword arguments set options."""
        super().__init__(**kwargs)
        self.supports["optimization"] = True
        self.supports["inequality_constraints"] = True
        self.supports["equality_constraints"] = True
        self.supports["two_sided_constraints"] = True
        self.supports["linear_constraints"] = True
        self.supports["multiple_objectives"] = False
        self.optimizer_result = None
        self.model_evaluations = 0
        self.derivative_evaluations = 0
        self.failures = []
        self.start_moved = None
        self._known_good = None
        self._iterations = 0
        self.model_time_s = self.derivative_time_s = 0.0

    def _declare_options(self):
        self.options.declare("optimizer", default="SLSQP", values=("SLSQP",), desc="SciPy optimizer used")
        self.options.declare("maxiter", types=int, default=100, lower=1, desc="largest number of iterations")
        self.options.declare("tol", types=float, default=1e-8, lower=0.0, desc="SLSQP convergence tolerance")
        self.options.declare("disp", types=bool, default=False, desc="let SciPy print its summary")
        self.options.declare("fallback_design", default=None, types=dict, allow_none=True, recordable=False,
                             desc="{design variable: value} in the units given to add_design_var, known to be "
                                  "evaluable; a start that cannot be evaluated is moved towards it (None: the "
                                  "last design evaluated in an earlier run)")
        self.options.declare("callback", default=None, allow_none=True, recordable=False,
                             desc="called after each model evaluation as callback(evaluation, objective, ok, "
                                  "iteration) with the objective in its declared units (None where it failed)")

    def _get_name(self):
        return "BackOffSLSQP"

    @property
    def failed_evaluations(self):
        """Number of evaluations of the last run that raised ``om.AnalysisError``."""
        return len(self.failures)

    # -- helpers on the public API --------------------------------------------------------------------

    @staticmethod
    def _scaling(meta):
        """(scaler, adder) of a design variable or response in its declared units: scaled = (v + adder) * scaler.

        From ``scaler``/``adder`` or ``ref``/``ref0`` as given to ``add_design_var``/``add_constraint``/
        ``add_objective`` (OpenMDAO's definition: ref0 maps to 0 and ref to 1).
        """
        if meta.get("ref") is not None or meta.get("ref0") is not None:
            ref0 = 0.0 if meta.get("ref0") is None else meta["ref0"]
            ref = 1.0 if meta.get("ref") is None else meta["ref"]
            return 1.0 / (ref - ref0), -ref0
        scaler = 1.0 if meta.get("scaler") is None else meta["scaler"]
        adder = 0.0 if meta.get("adder") is None else meta["adder"]
        return scaler, adder

    def _scaled(self, meta, value):
        scaler, adder = self._scaling(meta)
        return (np.ravel(value) + adder) * scaler

    def _scaled_bound(self, meta, value):
        """Return a bound from the metadata in driver scaling (already scaled before OpenMDAO 3.44)."""
        return np.ravel(value).astype(float) if _BOUNDS_ALREADY_SCALED else self._scaled(meta, value)

    def _get(self, name, meta):
        return np.ravel(self._problem().get_val(name, units=meta.get("units"))).astype(float)

    def _set_x(self, x):
        """Set the design variables from a scaled vector."""
        prob = self._problem()
        i = 0
        for name in self._dv_names:
            meta = self._dv_meta[name]
            size = int(meta["size"])
            scaler, adder = self._scaling(meta)
            prob.set_val(name, np.asarray(x[i:i + size], dtype=float) / scaler - adder, units=meta.get("units"))
            i += size

    def _evaluate(self, x):
        """Run the model at scaled x; cache objective and constraints, or record the failure."""
        key = np.asarray(x, dtype=float).tobytes()
        if self._cache_key == key:
            return self._cache
        self._set_x(x)
        prob = self._problem()
        self.model_evaluations += 1
        self.iter_count += 1
        t0 = time.perf_counter()
        try:
            try:
                prob.model.run_solve_nonlinear()
            finally:
                self.model_time_s += time.perf_counter() - t0
        except om.AnalysisError as err:
            design = {name: self._get(name, self._dv_meta[name]).tolist() for name in self._dv_names}
            self.failures.append({"design": design, "message": str(err).strip().splitlines()[-1][:500]})
            if self._last_good is None:  # the start itself cannot be evaluated: nothing to back off to
                if self._moving_start:
                    self._cache_key, self._cache = key, (np.nan, None, False)
                    return self._cache
                raise
            f_good, g_good, _ = self._last_good
            self._cache_key, self._cache = key, (f_good + FAILED_EVALUATION_PENALTY, g_good, False)
            self._notify(None, False)
            return self._cache
        # record the completed evaluation under its own iteration coordinate (the context records on exit)
        with Recording(self._get_name(), self.iter_count, self):
            pass
        f = float(self._scaled(self._obj_meta, self._get(self._obj_name, self._obj_meta))[0])
        g = np.concatenate([self._con_margins(n) for n in self._con_names] or [np.zeros(0)])
        self._cache_key, self._cache = key, (f, g, True)
        self._last_good = (f, g, np.array(x, dtype=float))
        self._known_good = {name: self._get(name, self._dv_meta[name]) for name in self._dv_names}
        self._notify(float(self._get(self._obj_name, self._obj_meta)[0]), True)
        return self._cache

    def _notify(self, objective, ok):
        if self.options["callback"] is not None:
            self.options["callback"](self.model_evaluations, objective, ok, self._iterations)

    def _con_sides(self, name):
        """[(sign, scaled bound)] of one constraint: SLSQP's g = sign * (scaled value - scaled bound)."""
        meta = self._con_meta[name]
        if meta.get("equals") is not None:
            return [(1.0, self._scaled_bound(meta, meta["equals"]))]
        sides = []
        if meta.get("lower") is not None and np.all(np.asarray(meta["lower"]) > -1e29):
            sides.append((1.0, self._scaled_bound(meta, meta["lower"])))
        if meta.get("upper") is not None and np.all(np.asarray(meta["upper"]) < 1e29):
            sides.append((-1.0, self._scaled_bound(meta, meta["upper"])))
        return sides

    def _con_margins(self, name):
        value = self._scaled(self._con_meta[name], self._get(name, self._con_meta[name]))
        return np.concatenate([sign * (value - bound) for sign, bound in self._con_sides(name)] or [np.zeros(0)])

    def _gradients(self, x):
        """Objective gradient and constraint Jacobian (SLSQP form) at scaled x, from the analytic totals."""
        key = np.asarray(x, dtype=float).tobytes()
        if self._grad_key == key:
            return self._grad
        _, _, ok = self._evaluate(x)
        if not ok:  # asked at a failed point: the last good point's derivatives keep SLSQP going
            if self._last_good_grad is not None and self._last_good_grad[0] == self._last_good[2].tobytes():
                return self._last_good_grad[1]
            _, _, ok = self._evaluate(self._last_good[2])
            if not ok:  # the model no longer evaluates there (a solve that depends on its start): give up
                raise om.AnalysisError(f"{self._get_name()}: the last evaluable design no longer evaluates "
                                       f"({self.failures[-1]['message']})")
            return self._gradients(self._last_good[2])
        prob = self._problem()
        self.derivative_evaluations += 1
        of = [self._obj_name] + self._con_names
        # in the units given to add_design_var/add_constraint/add_objective; scaled here
        t0 = time.perf_counter()
        totals = prob.compute_totals(of=of, wrt=self._dv_names, driver_scaling=False, return_format="flat_dict")
        self.derivative_time_s += time.perf_counter() - t0
        x_scalers = [self._scaling(self._dv_meta[w])[0] for w in self._dv_names]

        def row(of_name, meta):
            f_scaler = self._scaling(meta)[0]
            return np.hstack([np.atleast_2d(totals[of_name, w]) * f_scaler / xs
                              for w, xs in zip(self._dv_names, x_scalers)])

        grad_f = np.ravel(row(self._obj_name, self._obj_meta))
        blocks = []
        for name in self._con_names:
            jac = row(name, self._con_meta[name])
            blocks.extend(sign * jac for sign, _ in self._con_sides(name))
        jac_g = np.vstack(blocks) if blocks else np.zeros((0, grad_f.size))
        self._grad_key, self._grad = key, (grad_f, jac_g)
        if self._last_good is not None and key == self._last_good[2].tobytes():
            self._last_good_grad = (key, self._grad)
        return self._grad

    @property
    def iterations(self):
        """Completed SLSQP iterations so far (the count ``optimizer_result.nit`` reports at the end)."""
        return self._iterations

    def _bound(self, name, which):
        """Scaled lower or upper bound of a design variable (None or |bound| >= 1e29: unbounded)."""
        meta = self._dv_meta[name]
        value = meta.get(which)
        size = int(meta["size"])
        if value is None or np.max(np.abs(value)) >= 1e29:
            return np.full(size, -np.inf if which == "lower" else np.inf)
        return np.broadcast_to(self._scaled_bound(meta, value), (size,))

    def _design(self, x):
        """{name: list of values} of a scaled design vector."""
        out, i = {}, 0
        for name in self._dv_names:
            meta = self._dv_meta[name]
            size = int(meta["size"])
            scaler, adder = self._scaling(meta)
            out[name] = (np.asarray(x[i:i + size], dtype=float) / scaler - adder).tolist()
            i += size
        return out

    def _fallback_x(self):
        """Scaled evaluable design to move an unevaluable start towards, or None."""
        design = self.options["fallback_design"] or self._known_good
        if not design:
            return None
        return np.concatenate([self._scaled(self._dv_meta[n],
                                            np.broadcast_to(design[n], (int(self._dv_meta[n]["size"]),)))
                               for n in self._dv_names])

    def _evaluable_start(self, x0, lower, upper):
        """Return x0, or the evaluable point nearest x0 on the segment towards the fallback design.

        Bisection keeps a bracket [t_bad, t_good] along x(t) = x0 + t (x_fallback - x0), t_good evaluable.
        Raises the model's error when x0 cannot be evaluated and no evaluable fallback exists.
        """
        self._moving_start = True
        try:
            if self._evaluate(x0)[2]:
                return x0
            target = self._fallback_x()
            if target is None:
                self._moving_start = False
                self._cache_key = None
                self._evaluate(x0)  # raises the model's error
            target = np.clip(target, lower, upper)
            t_bad, t_good = 0.0, 1.0
            if not self._evaluate(target)[2]:
                self._moving_start = False
                self._cache_key = None
                self._evaluate(target)  # the fallback cannot be evaluated either: raise its error
            for _ in range(START_BISECTIONS):
                t = 0.5 * (t_bad + t_good)
                if self._evaluate(x0 + t * (target - x0))[2]:
                    t_good = t
                else:
                    t_bad = t
            moved = x0 + t_good * (target - x0)
            self.start_moved = {"from": self._design(x0), "to": self._design(moved), "towards": self._design(target),
                                "fraction": t_good}
            self._cache_key = None
            return moved
        finally:
            self._moving_start = False

    # -- the run --------------------------------------------------------------------------------------

    def run(self):
        """Optimise with SLSQP; return True when it failed (OpenMDAO's driver convention)."""
        start = time.perf_counter()
        model = self._problem().model
        self._dv_meta = model.get_design_vars(recurse=True, get_sizes=True, use_prom_ivc=True)
        self._dv_names = list(self._dv_meta)
        self._con_meta = model.get_constraints(recurse=True, get_sizes=True, use_prom_ivc=True)
        self._con_names = list(self._con_meta)
        objectives = model.get_objectives(recurse=True, get_sizes=True, use_prom_ivc=True)
        self._obj_name, self._obj_meta = next(iter(objectives.items()))
        self.optimizer_result = None
        self.model_evaluations = self.derivative_evaluations = 0
        self.model_time_s = self.derivative_time_s = 0.0
        self.failures = []
        self.start_moved = None
        self._cache_key = self._grad_key = None
        self._last_good = None
        self._last_good_grad = None
        self._moving_start = False
        self._iterations = 0

        def count_iteration(_x):
            self._iterations += 1

        x0 = np.concatenate([self._scaled(self._dv_meta[n], self._get(n, self._dv_meta[n])) for n in self._dv_names])

        lower = np.concatenate([self._bound(n, "lower") for n in self._dv_names])
        upper = np.concatenate([self._bound(n, "upper") for n in self._dv_names])
        x0 = np.clip(x0, lower, upper)
        x0 = self._evaluable_start(x0, lower, upper)
        eq = [n for n in self._con_names if self._con_meta[n].get("equals") is not None]
        constraints = []
        ineq_names = [n for n in self._con_names if n not in eq]
        if self._con_names:
            # rows of g in _con_names order; split equality rows from inequality rows
            rows_of = {}
            k = 0
            for n in self._con_names:
                width = int(self._con_meta[n]["size"]) * len(self._con_sides(n))
                rows_of[n] = np.arange(k, k + width)
                k += width
            eq_rows = np.concatenate([rows_of[n] for n in eq]) if eq else np.zeros(0, int)
            in_rows = np.concatenate([rows_of[n] for n in ineq_names]) if ineq_names else np.zeros(0, int)
            if eq_rows.size:
                constraints.append({"type": "eq", "fun": lambda x: self._evaluate(x)[1][eq_rows],
                                    "jac": lambda x: self._gradients(x)[1][eq_rows]})
            if in_rows.size:
                constraints.append({"type": "ineq", "fun": lambda x: self._evaluate(x)[1][in_rows],
                                    "jac": lambda x: self._gradients(x)[1][in_rows]})

        result = minimize(lambda x: self._evaluate(x)[0], x0, jac=lambda x: self._gradients(x)[0],
                          method="SLSQP", bounds=list(zip(lower, upper)), constraints=constraints,
                          tol=self.options["tol"], callback=count_iteration,
                          options={"maxiter": self.options["maxiter"], "disp": self.options["disp"]})
        self.optimizer_result = result
        # leave the model at the returned point (SLSQP's last trial may have been a line-search step)
        final = result.x if result.x is not None else self._last_good[2]
        try:
            self._cache_key = None
            _, _, ok = self._evaluate(final)
        except om.AnalysisError:
            ok = False
        if not ok and self._last_good is not None:
            self._cache_key = None
            self._evaluate(self._last_good[2])
        if hasattr(self, "result"):  # OpenMDAO >= 3.27 reports counts in a DriverResult
            self.result.iter_count = int(result.nit)
            self.result.model_evals = self.model_evaluations
            self.result.deriv_evals = self.derivative_evaluations
            self.result.exit_status = "SUCCESS" if result.success else "FAIL"
            self.result.runtime = time.perf_counter() - start
        return not bool(result.success)


def driver_succeeded(driver_result):
    """Return True when a driver run succeeded (OpenMDAO >= 3.27 returns a DriverResult, older a failure flag)."""
    if isinstance(driver_result, (bool, np.bool_)):
        return not bool(driver_result)
    return bool(driver_result.success)


def driver_message(driver):
    """Return the optimizer's closing message: SciPy's result (``BackOffSLSQPDriver``) or pyOptSparse's."""
    res = getattr(driver, "optimizer_result", None)
    if res is not None and getattr(res, "message", None) is not None:
        return str(res.message)
    sol = getattr(driver, "pyopt_solution", None)
    inform = getattr(sol, "optInform", None) if sol is not None else None
    if isinstance(inform, dict):  # older pyOptSparse: {"value": ..., "text": ...}
        return str(inform.get("text", ""))
    return str(getattr(inform, "message", "") or "")  # pyOptSparse 2.x: a SolutionInform


def run_record(driver, driver_result):
    """Return what a driver's last run did, the same way for every driver (success, message, counts).

    ``BackOffSLSQPDriver`` keeps SciPy's result (``optimizer_result``) and its own counts; ``om.pyOptSparseDriver``
    keeps pyOptSparse's solution (``pyopt_solution``: its ``optInform`` text) and OpenMDAO's DriverResult, whose
    ``iter_count`` counts model evaluations (pyOptSparse reports no iteration count of its own).

    Parameters
    ----------
    driver : om.Driver
        The driver after ``run_driver``.
    driver_result : DriverResult or bool
        What ``run_driver`` returned (a failure flag before OpenMDAO 3.27).

    Returns
    -------
    dict
        ``success``, ``message``, ``iterations`` (None where the optimizer does not report them),
        ``model_evaluations``, ``failed_evaluations``.
    """
    success = driver_succeeded(driver_result)
    own = getattr(driver, "optimizer_result", None)
    if own is not None:
        return {"success": success, "message": str(own.message), "iterations": int(own.nit),
                "model_evaluations": driver.model_evaluations, "failed_evaluations": driver.failed_evaluations}
    message = driver_message(driver) or str(getattr(driver_result, "exit_status", ""))
    evaluations = int(getattr(driver_result, "model_evals", getattr(driver, "iter_count", 0)))
    return {"success": success, "message": message, "iterations": None, "model_evaluations": evaluations,
            "failed_evaluations": None}


def pyoptsparse_available(optimizer=None):
    """Return True when pyoptsparse imports (and, if named, its ``optimizer`` loads; IPOPT needs cyipopt).

    pyoptsparse is not on PyPI: see README for conda-forge and the source build.
    """
    try:
        import pyoptsparse
    except ImportError:
        return False
    if optimizer is None:
        return True
    try:
        pyoptsparse.OPT(optimizer)
    except Exception:  # noqa: BLE001 - pyoptsparse raises its own Error, or ImportError of the optimizer
        return False
    return True


def move_to_evaluable_start(prob, fallback, bisections=START_BISECTIONS):
    """Leave the design variables where the model can be evaluated, moving them towards ``fallback`` if needed.

    When the model raises ``om.AnalysisError`` at the current design (a cycle that cannot exist), the design
    is moved along the straight line towards ``fallback`` (an evaluable design, e.g. the scenario's initial
    one) by bisection, to the evaluable point nearest the start found in ``bisections`` halvings. Used before
    optimizers that cannot start from a failed evaluation (IPOPT stops with "Invalid Number Detected").

    Parameters
    ----------
    prob : om.Problem
        A set-up problem with design variables.
    fallback : dict
        {design variable: value} of an evaluable design, in the design variables' units.
    bisections : int
        Halvings of the segment.

    Returns
    -------
    dict or None
        ``{"from", "to", "towards", "fraction"}`` when the start was moved, None when it could be evaluated.

    Raises
    ------
    om.AnalysisError
        When the fallback design cannot be evaluated either.
    """
    meta = prob.model.get_design_vars(recurse=True, use_prom_ivc=True)
    names = [n for n in meta if n in fallback]
    units = {n: meta[n].get("units") for n in names}
    x0 = {n: np.ravel(prob.get_val(n, units=units[n])).astype(float).copy() for n in names}
    target = {n: np.broadcast_to(np.asarray(fallback[n], dtype=float), x0[n].shape) for n in names}

    def evaluable(t):
        for n in names:
            prob.set_val(n, x0[n] + t * (target[n] - x0[n]), units=units[n])
        try:
            prob.run_model()
        except om.AnalysisError:
            return False
        return True

    if evaluable(0.0):
        return None
    if not evaluable(1.0):
        prob.run_model()  # raises the fallback's own error
    t_bad, t_good = 0.0, 1.0
    for _ in range(bisections):
        t = 0.5 * (t_bad + t_good)
        if evaluable(t):
            t_good = t
        else:
            t_bad = t
    evaluable(t_good)
    return {"from": {n: x0[n].tolist() for n in names},
            "to": {n: (x0[n] + t_good * (target[n] - x0[n])).tolist() for n in names},
            "towards": {n: np.asarray(target[n]).tolist() for n in names}, "fraction": t_good}


def _start_moving_pyoptsparse_driver(**kwargs):
    """``om.pyOptSparseDriver`` that first moves an unevaluable start towards ``fallback_design``."""

    class StartMovingPyOptSparseDriver(om.pyOptSparseDriver):
        """pyOptSparse driver whose ``run`` first makes the start evaluable (``move_to_evaluable_start``)."""

        def _declare_options(self):
            super()._declare_options()
            self.options.declare("fallback_design", default=None, types=dict, allow_none=True, recordable=False,
                                 desc="evaluable design {name: value} to move an unevaluable start towards")

        def run(self):
            """Move the start if the model cannot evaluate it, then optimise."""
            self.start_moved = None
            if self.options["fallback_design"]:
                self.start_moved = move_to_evaluable_start(self._problem(), self.options["fallback_design"])
            return super().run()

    return StartMovingPyOptSparseDriver(**kwargs)


def make_driver(name="SLSQP", maxiter=100, tol=1e-8):
    """Return an optimizer driver.

    'SLSQP' (default) is SciPy's SLSQP through ``BackOffSLSQPDriver``; 'SNOPT', 'IPOPT' and
    'pyoptsparse-SLSQP' use ``om.pyOptSparseDriver`` (which moves an unevaluable start towards its
    ``fallback_design`` option first) and need pyoptsparse (not on PyPI).
    """
    from bypassopt.scenario import ScenarioError

    if name == "SLSQP":
        return BackOffSLSQPDriver(maxiter=maxiter, tol=tol, disp=False)
    if not pyoptsparse_available():
        raise ScenarioError(f"optimizer.driver = {name!r} needs pyoptsparse, which is not installed "
                            "(use 'SLSQP', or build pyoptsparse from source: see README).")
    opt = "SLSQP" if name == "pyoptsparse-SLSQP" else name
    if not pyoptsparse_available(opt):
        needs = {"IPOPT": "cyipopt (built against an IPOPT library)", "SNOPT": "SNOPT's licensed source"}
        raise ScenarioError(f"optimizer.driver = {name!r}: pyoptsparse is installed but its {opt} optimizer does "
                            f"not load; it needs {needs.get(opt, 'to be built into pyoptsparse')} (see README).")
    driver = _start_moving_pyoptsparse_driver(optimizer=opt, print_results=False)
    if opt == "SNOPT":
        driver.opt_settings.update({"Major iterations limit": maxiter, "Major optimality tolerance": tol})
    elif opt == "IPOPT":
        driver.opt_settings.update({"max_iter": maxiter, "tol": tol, "print_level": 0})
    else:
        driver.opt_settings.update({"MAXIT": maxiter, "ACC": tol})
    return driver
