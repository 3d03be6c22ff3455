"""Solver set-up shared by the groups that close a loop (W2 <-> HP offtake, engine size <-> nacelle drag)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.validation import (deferred_validity_checks, raise_validity_violations,
                                             validity_violations)

#: Choices of the groups' ``coupled_solver`` option.
COUPLED_SOLVERS = ("newton", "gauss_seidel")


class _ConvergedStateChecks:
    """Solver mixin: judge the engineering validity ranges on the converged state, and remember failures.

    ``solve`` runs the solver with ``check_validity`` deferred (``components.validation``): the iterates
    may wander outside a correlation's validity range (a 5.3 m fan on the way to a 3.8 m one) without
    stopping the solve. Once the solver has converged, the records left are those of the converged
    state, and any violation raises ``InputRangeError`` naming the variable, its value and its range.
    The math-failure checks (``check_range``) still raise on every iterate, so no NaN is ever computed.

    ``last_solve_failed`` is None before the first solve, then True or False; the groups'
    ``guess_nonlinear`` restart the coupled unknowns from a physics guess unless the last solve
    succeeded, so a failed run never poisons the next one. After a converged solve whose validity checks
    pass, the group's ``after_converged_solve()`` runs where it has one (the multipoint group keeps its
    points' converged states as their next warm start).
    """

    last_solve_failed = None

    def solve(self):
        """Run the solver with validity checks deferred to the converged state."""
        with deferred_validity_checks() as log:
            try:
                super().solve()
            except Exception as err:
                self.last_solve_failed = True
                bad = validity_violations(log)
                if isinstance(err, om.AnalysisError) and bad and "failed to converge" in str(err):
                    raise om.AnalysisError(f"{err} At the last iterate: {' '.join(bad)}") from err
                raise
        self.last_solve_failed = False
        raise_validity_violations(log)
        hook = getattr(self._system(), "after_converged_solve", None)
        if hook is not None:
            hook()


class CheckedNewtonSolver(_ConvergedStateChecks, om.NewtonSolver):
    """``om.NewtonSolver`` whose validity-range checks judge the converged state (``_ConvergedStateChecks``)."""


class CheckedNonlinearBlockGS(_ConvergedStateChecks, om.NonlinearBlockGS):
    """``om.NonlinearBlockGS`` whose validity-range checks judge the converged state (``_ConvergedStateChecks``)."""


def last_solve_succeeded(group):
    """Return True when the group's own coupled solver converged on its last solve (False before the first)."""
    return getattr(group.nonlinear_solver, "last_solve_failed", None) is False


def set_coupled_solvers(group, method, num_nodes, maxiter=40, newton_class=None):
    """Attach the nonlinear and linear solvers of a coupled group.

    'newton' (default): ``om.NewtonSolver`` with a first Gauss-Seidel pass (``solve_subsystems``) and
    ``om.DirectSolver``. Derivatives come through the converged system. This is robust from poor starting
    guesses, and it is the right choice for optimisation. The direct factorisation grows with the number
    of nodes, to about 100 kB per design.

    'gauss_seidel': ``om.NonlinearBlockGS`` with Aitken acceleration and ``om.LinearBlockGS``. The loops
    are weak (the offtake and the nacelle drag are a few per cent of the engine's work and thrust), so a
    few sweeps converge them. No matrix is assembled, so memory and time per design stay flat for very
    large vectorized sweeps (carpets, benchmarks).

    Absolute tolerances grow with sqrt(num_nodes) because the residual norm sums over the nodes.

    ``newton_class`` replaces ``CheckedNewtonSolver`` (a subclass of it) for 'newton'.

    Both solvers judge the engineering validity ranges (``check_validity``) on the converged state only,
    and record whether their last solve failed (``_ConvergedStateChecks``).
    """
    atol = 1e-7 * np.sqrt(num_nodes)
    if method == "newton":
        newton = group.nonlinear_solver = (newton_class or CheckedNewtonSolver)(
            solve_subsystems=True, max_sub_solves=1, maxiter=maxiter, iprint=-1, atol=atol, rtol=1e-10,
            err_on_non_converge=True)
        newton.linesearch = om.BoundsEnforceLS(bound_enforcement="scalar", iprint=-1)
        group.linear_solver = om.DirectSolver()
    elif method == "gauss_seidel":
        group.nonlinear_solver = CheckedNonlinearBlockGS(maxiter=4 * maxiter, atol=atol, rtol=1e-12, iprint=-1,
                                                     use_aitken=True, err_on_non_converge=True)
        group.linear_solver = om.LinearBlockGS(maxiter=4 * maxiter, atol=1e-9 * np.sqrt(num_nodes), rtol=1e-12,
                                               iprint=-1, err_on_non_converge=True)
    else:  # pragma: no cover - guarded by the option's values
        raise ValueError(f"coupled solver {method!r} is not one of {COUPLED_SOLVERS}")
