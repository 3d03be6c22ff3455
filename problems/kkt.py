"""Karush-Kuhn-Tucker check and shadow prices of an optimum, from the analytic total derivatives."""

import numpy as np


#: A constraint (or design-variable bound) counts as active when within this fraction of its scaling
#: reference of its limit.
ACTIVE_TOL = 1e-4


def kkt_analysis(prob, settings, active_tol=ACTIVE_TOL, method="auto"):
    """Lagrange multipliers, shadow prices and KKT residuals at the current point of a best-cycle problem.

    ``prob`` and ``settings`` are what ``build_best_cycle_problem`` returned.

    Every limit is written as c_i(x) <= 0 (an upper limit U on g: c = g - U; a lower limit L: c = L - g;
    design-variable bounds likewise). At a local optimum of f the KKT conditions are

        grad f + sum_i lambda_i grad c_i = 0,   lambda_i >= 0,   lambda_i c_i = 0

    (Nocedal and Wright, *Numerical Optimization*, 2nd ed., theorem 12.1). The multipliers of the
    active limits come from OpenMDAO's own estimate (``Driver.compute_lagrange_multipliers``, OpenMDAO >= 3.39,
    a least-squares solve of the same system) where the installed OpenMDAO has it and finds the same active
    set; otherwise
    (``method='least_squares'``, older OpenMDAO, or a different active set) they are found here by least
    squares from the analytic total derivatives. Inactive ones are 0. ``multiplier_source`` says which.
    A multiplier is the shadow price of its limit: relaxing the limit by one unit lowers the optimum
    objective by lambda (to first order), i.e. d f*/d U = -lambda for an upper limit U and
    d f*/d L = +lambda for a lower limit L.

    Returns
    -------
    dict
        ``objective`` (name, units), ``constraints`` {name: {value, limit, kind, units, active, violated,
        multiplier, shadow_price}} with shadow_price = d(objective)/d(limit) in objective units per limit unit
        (``violated``: beyond the limit by more than ``active_tol`` times the constraint's scaling reference;
        such a point is no optimum, and its multipliers and shadow prices mean nothing),
        ``bounds`` {design var: {value, lower, upper, active, multiplier}}, ``projected_gradient`` (norm of
        the Lagrangian gradient, each component times its design variable's bound range, relative
        to |f|), ``complementarity`` (largest |lambda_i c_i| relative to |f|) and ``multiplier_source``
        ('openmdao' or 'least_squares').
    """
    if method not in ("auto", "least_squares"):
        raise ValueError(f"method = {method!r} is not one of 'auto', 'least_squares'")
    from .best_cycle import OBJECTIVES

    objective = settings.objective
    _, obj_units, _ = OBJECTIVES[objective]
    obj_name = settings.objective_output
    limits = settings.limits
    dvs = settings.design_vars
    dv_names = list(dvs)
    dv_units = {n: ("K" if n == "Tt4" else None) for n in dv_names}
    of = [obj_name] + list(limits)
    totals = prob.compute_totals(of=of, wrt=dv_names, return_format="flat_dict", driver_scaling=False)
    # compute_totals works in model units; convert objective/constraint rows to the requested units
    grad_f = np.array([_total(prob, totals, obj_name, w, obj_units) for w in dv_names])
    f_val = float(np.squeeze(prob.get_val(obj_name, units=obj_units)))

    rows, names, info = [], [], {}
    for name, (kind, limit, units) in limits.items():
        value = float(np.squeeze(prob.get_val(name, units=units)))
        grad = np.array([_total(prob, totals, name, w, units) for w in dv_names])
        sign = 1.0 if kind == "upper" else -1.0
        c = sign * (value - limit)
        ref = _constraint_ref(prob, name)
        active = c > -active_tol * ref
        info[name] = {"value": value, "limit": limit, "kind": kind, "units": units, "active": bool(active),
                      "violated": bool(c > active_tol * ref), "c": c, "multiplier": 0.0, "shadow_price": 0.0}
        if active:
            rows.append(sign * grad)
            names.append(("con", name))
    bounds = {}
    for j, name in enumerate(dv_names):
        value = float(np.squeeze(prob.get_val(name, units=dv_units[name])))
        lo, hi = dvs[name]["lower"], dvs[name]["upper"]
        span = hi - lo
        at_lo, at_hi = value - lo <= active_tol * span, hi - value <= active_tol * span
        bounds[name] = {"value": value, "lower": lo, "upper": hi, "active": "lower" if at_lo else
                        ("upper" if at_hi else None), "multiplier": 0.0}
        if at_lo or at_hi:
            e = np.zeros(len(dv_names))
            e[j] = 1.0 if at_hi else -1.0
            rows.append(e)
            names.append(("bound", name))

    if rows:
        A = np.array(rows)  # active constraint gradients, one per row
        lam, *_ = np.linalg.lstsq(A.T, -grad_f, rcond=None)
    else:
        A, lam = np.zeros((0, len(dv_names))), np.zeros(0)
    source = "least_squares"
    if method == "auto" and rows:
        own = _openmdao_multipliers(prob, names, info, bounds, obj_name, obj_units, active_tol)
        if own is not None:
            lam, source = own, "openmdao"
    for (kind, name), mult in zip(names, lam):
        if kind == "con":
            info[name]["multiplier"] = float(mult)
            sign = 1.0 if info[name]["kind"] == "upper" else -1.0
            info[name]["shadow_price"] = float(-sign * mult)
        else:
            bounds[name]["multiplier"] = float(mult)
    lagr = grad_f + A.T @ lam
    # measured in the optimizer's view: each design variable over its bound range, relative to |f|, so
    # the number stays meaningful at an unconstrained optimum (where grad f itself vanishes)
    span = np.array([dvs[n]["upper"] - dvs[n]["lower"] for n in dv_names])
    scale = max(abs(f_val), 1e-300)
    compl = max([abs(v["multiplier"] * v["c"]) for v in info.values()] + [0.0]) / max(abs(f_val), 1e-300)
    for v in info.values():
        v.pop("c")
    return {
        "objective": {"name": objective, "value": f_val, "units": obj_units},
        "constraints": info,
        "bounds": bounds,
        "projected_gradient": float(np.linalg.norm(lagr * span) / scale),
        "gradient_norm": float(np.linalg.norm(grad_f)),
        "complementarity": float(compl),
        "dual_feasible": bool(np.all(lam >= -1e-6 * max(1.0, np.max(np.abs(lam), initial=0.0)))),
        "multiplier_source": source,
    }


def model_units(prob, name):
    """Units of a promoted variable (output or input) as the model computes it."""
    meta = prob.model.get_io_metadata(metadata_keys=["units"], includes=[name], return_rel_names=False)
    for path, m in meta.items():
        # a plain promoted name ends the path; a renamed one (``cruise:installed_TSFC``) is its prom_name
        if m.get("prom_name") == name or path.split(".")[-1] == name.split(".")[-1]:
            return m["units"]
    return None


def unit_factor(from_units, to_units):
    """Multiplier converting a quantity (or a derivative's numerator) from ``from_units`` to ``to_units``."""
    from openmdao.utils.units import unit_conversion

    if not from_units or not to_units or from_units == to_units:
        return 1.0
    return unit_conversion(from_units, to_units)[0]


def _openmdao_multipliers(prob, names, info, bounds, obj_name, obj_units, active_tol):
    """Multipliers of the active limits, in this module's convention, from ``Driver.compute_lagrange_multipliers``.

    Returns None when the installed OpenMDAO lacks the method, it fails, or it finds another active set.
    OpenMDAO's unscaled multipliers are d(objective)/d(bound) in the model's units, negative for a lower
    bound; here every limit is c <= 0 with a multiplier >= 0 at a minimum, in objective units per limit unit.
    """
    driver = prob.driver
    if not hasattr(driver, "compute_lagrange_multipliers"):
        return None
    try:
        om_dvs, om_cons = driver.compute_lagrange_multipliers(driver_scaling=False, feas_tol=active_tol)
    except Exception:  # noqa: BLE001 - any failure of the optional estimate falls back to least squares
        return None
    active_cons = {n for kind, n in names if kind == "con"}
    active_bounds = {n for kind, n in names if kind == "bound"}
    if set(om_cons) != active_cons or set(om_dvs) != active_bounds:
        return None
    to_obj = unit_factor(model_units(prob, obj_name), obj_units)
    lam = []
    for kind, name in names:
        if kind == "con":
            theirs = float(np.ravel(om_cons[name]["multipliers"])[0]) * to_obj
            theirs /= unit_factor(model_units(prob, name), info[name]["units"])
            lam.append(theirs if info[name]["kind"] == "upper" else -theirs)
        else:
            theirs = float(np.ravel(om_dvs[name]["multipliers"])[0]) * to_obj
            lam.append(theirs if bounds[name]["active"] == "upper" else -theirs)
    return np.array(lam)


def _total(prob, totals, of, wrt, units):
    """d(of)/d(wrt) from the flat totals.

    ``compute_totals`` on a driver's responses returns derivatives in the units given to
    ``add_objective``/``add_constraint``/``add_design_var`` (also with ``driver_scaling=False``), which are
    the units this module reads values in, so no conversion is needed.
    """
    return float(np.squeeze(totals[(of, wrt)]))


def _constraint_ref(prob, name):
    meta = prob.model.get_constraints(recurse=True, use_prom_ivc=True)
    for key, m in meta.items():
        if key == name or m.get("name") == name:
            return float(m["ref"]) if m.get("ref") is not None else 1.0
    return 1.0
