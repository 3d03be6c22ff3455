"""Solver set-up shared by the groups that close a loop (W2 <-> HP offtake, engine size <-> nacelle drag)."""

import numpy as np
import openmdao.api as om

#: Choices of the groups' ``coupled_solver`` option.
COUPLED_SOLVERS = ("newton", "gauss_seidel")


def set_coupled_solvers(group, method, num_nodes, maxiter=40):
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
    """
    atol = 1e-7 * np.sqrt(num_nodes)
    if method == "newton":
        newton = group.nonlinear_solver = om.NewtonSolver(solve_subsystems=True, max_sub_solves=1,
                                                          maxiter=maxiter, iprint=-1, atol=atol, rtol=1e-10,
                                                          err_on_non_converge=True)
        newton.linesearch = om.BoundsEnforceLS(bound_enforcement="scalar", iprint=-1)
        group.linear_solver = om.DirectSolver()
    elif method == "gauss_seidel":
        group.nonlinear_solver = om.NonlinearBlockGS(maxiter=4 * maxiter, atol=atol, rtol=1e-12, iprint=-1,
                                                     use_aitken=True, err_on_non_converge=True)
        group.linear_solver = om.LinearBlockGS(maxiter=4 * maxiter, atol=1e-9 * np.sqrt(num_nodes), rtol=1e-12,
                                               iprint=-1, err_on_non_converge=True)
    else:  # pragma: no cover - guarded by the option's values
        raise ValueError(f"coupled solver {method!r} is not one of {COUPLED_SOLVERS}")
