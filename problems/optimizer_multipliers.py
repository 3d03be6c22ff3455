"""Shadow prices from the optimizer's own Lagrange multipliers, where pyOptSparse returns them (IPOPT does)."""

import numpy as np


def optimizer_multipliers(prob, settings):
    """Shadow prices of the best-cycle limits from the multipliers the optimizer itself returned, or None.

    After ``run_driver`` with ``om.pyOptSparseDriver``, ``prob.driver.pyopt_solution.lambdaStar`` holds one
    multiplier array per nonlinear constraint when the optimizer reports them (IPOPT does; pyOptSparse's
    SLSQP leaves it ``None``; SciPy's SLSQP through ``BackOffSLSQPDriver`` keeps none). They are in
    IPOPT's convention, the Lagrangian ``f + lambda^T g`` of the *driver-scaled* problem (objective and
    constraints scaled by OpenMDAO's ``ref``/``ref0``), for any kind of limit. Unscaled,
    ``lambda * scaler_g / scaler_f`` is ``-d f* / d limit`` whether the limit is a lower or an upper one, so

        shadow_price = d(objective) / d(limit) = -lambda * scaler_g / scaler_f

    in objective units per limit unit, the quantity ``kkt_analysis`` reports as ``shadow_price`` (which
    finds its multipliers by least squares from the analytic totals instead). ``multiplier`` is the same
    number in ``kkt_analysis``'s sign convention (every limit written as c <= 0, multiplier >= 0 at a
    minimum). Design-variable bound multipliers are not returned by pyOptSparse and are left out.

    Parameters
    ----------
    prob : om.Problem
        A best-cycle problem (``build_best_cycle_problem``) after ``run_driver``.
    settings : bypassopt.problems.best_cycle.BestCycleSettings
        What ``build_best_cycle_problem`` returned beside the problem.

    Returns
    -------
    dict or None
        ``{limit name: {"multiplier": float, "shadow_price": float, "units": str}}`` for every limit in
        ``settings.limits`` that the optimizer returned a multiplier for, or None when the driver keeps
        no multipliers (a driver other than ``om.pyOptSparseDriver``, an optimizer that returns none, or
        a run that has not happened).
    """
    solution = getattr(prob.driver, "pyopt_solution", None)
    lam = getattr(solution, "lambdaStar", None) if solution is not None else None
    if not lam:
        return None
    obj_name = settings.objective_output
    objectives = prob.model.get_objectives(recurse=True, use_prom_ivc=True)
    obj_meta = next((m for key, m in objectives.items() if key == obj_name or m.get("name") == obj_name), None)
    constraints = prob.model.get_constraints(recurse=True, use_prom_ivc=True)
    f_scaler = _scaler(obj_meta)
    out = {}
    for name, (kind, _limit, units) in settings.limits.items():
        if name not in lam:
            continue
        meta = next((m for key, m in constraints.items() if key == name or m.get("name") == name), None)
        value = float(np.squeeze(np.asarray(lam[name], dtype=float)))
        shadow = -value * _scaler(meta) / f_scaler
        sign = 1.0 if kind == "upper" else -1.0
        out[name] = {"multiplier": float(-sign * shadow), "shadow_price": float(shadow), "units": units}
    return out or None


def _scaler(meta):
    """Driver scaler of a response (scaled = (value + adder) * scaler), from its metadata; 1 without scaling."""
    if meta is None:
        return 1.0
    if meta.get("scaler") is not None:
        return float(np.squeeze(meta["scaler"]))
    ref = 1.0 if meta.get("ref") is None else float(np.squeeze(meta["ref"]))
    ref0 = 0.0 if meta.get("ref0") is None else float(np.squeeze(meta["ref0"]))
    return 1.0 / (ref - ref0)
