"""Optimizer drivers: SciPy SLSQP that backs off from failed evaluations, and pyoptsparse when it imports."""

import numpy as np
import openmdao.api as om

#: Added to the (scaled) objective at a design the model cannot evaluate, so the line search backs off.
FAILED_EVALUATION_PENALTY = 1.0e3


class BackOffSLSQPDriver(om.ScipyOptimizeDriver):
    """SciPy SLSQP that treats an ``om.AnalysisError`` as a failed evaluation instead of aborting.

    The model raises ``om.AnalysisError`` (``bypassopt.components.validation.InputRangeError``) for cycles that
    cannot exist (a core jet with no pressure left, a turbine asked for more work than the gas holds).
    pyoptsparse optimizers back off from such points natively. SciPy's SLSQP has no failure flag, so
    this driver returns the last good objective plus ``FAILED_EVALUATION_PENALTY`` (in scaled units)
    with the last good constraint values: the merit function rises and SLSQP's line search shortens
    its step. Failed evaluations are counted in ``failed_evaluations``; any other exception aborts the
    run as usual. A failed evaluation is recorded with ``success = 0`` and the error as its message, so
    a ``om.CaseReader`` (and the convergence plot) can leave it out.
    """

    def __init__(self, **kwargs):
        """Create the driver with SLSQP selected."""
        kwargs.setdefault("optimizer", "SLSQP")
        super().__init__(**kwargs)
        self.failed_evaluations = 0
        self._last_good = None
        self._failure = None

    def _setup_driver(self, problem):
        super()._setup_driver(problem)
        self.failed_evaluations = 0
        self._last_good = None

    def _run_solve_nonlinear(self):
        try:
            return super()._run_solve_nonlinear()
        except om.AnalysisError as err:
            self._failure = str(err).splitlines()[-1][:500]
            raise

    def _get_recorder_metadata(self, case_name):
        meta = super()._get_recorder_metadata(case_name)
        if self._failure is not None:
            meta["success"] = 0
            meta["msg"] = self._failure
        return meta

    def _objfunc(self, x_new):
        self._failure = None
        f_new = super()._objfunc(x_new)
        if self._exc_info is not None and issubclass(self._exc_info[0], om.AnalysisError):
            if self._last_good is None:  # the starting point itself fails: nothing to back off to
                return f_new
            self._exc_info = None
            self.failed_evaluations += 1
            f_good, cons_good = self._last_good
            self._con_cache = {k: np.copy(v) for k, v in cons_good.items()}
            return f_good + FAILED_EVALUATION_PENALTY
        if self._exc_info is None:
            self._last_good = (f_new, {k: np.copy(v) for k, v in self._con_cache.items()})
        return f_new


def pyoptsparse_available():
    """Return True when pyoptsparse imports (it is not on PyPI; see README for how to get it)."""
    try:
        import pyoptsparse  # noqa: F401
    except ImportError:
        return False
    return True


def make_driver(name="SLSQP", maxiter=100, tol=1e-8):
    """Return an optimizer driver.

    'SLSQP' (default) is SciPy's SLSQP through ``BackOffSLSQPDriver``; 'SNOPT', 'IPOPT' and
    'pyoptsparse-SLSQP' use ``om.pyOptSparseDriver`` and need pyoptsparse (not on PyPI).
    """
    from bypassopt.scenario import ScenarioError

    if name == "SLSQP":
        return BackOffSLSQPDriver(maxiter=maxiter, tol=tol, disp=False)
    if not pyoptsparse_available():
        raise ScenarioError(f"optimizer.driver = {name!r} needs pyoptsparse, which is not installed "
                            "(use 'SLSQP', or build pyoptsparse from source: see README).")
    opt = "SLSQP" if name == "pyoptsparse-SLSQP" else name
    driver = om.pyOptSparseDriver(optimizer=opt, print_results=False)
    if opt == "SNOPT":
        driver.opt_settings.update({"Major iterations limit": maxiter, "Major optimality tolerance": tol})
    elif opt == "IPOPT":
        driver.opt_settings.update({"max_iter": maxiter, "tol": tol, "print_level": 0})
    else:
        driver.opt_settings.update({"MAXIT": maxiter, "ACC": tol})
    return driver
