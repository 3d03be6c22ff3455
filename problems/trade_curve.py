"""Trade curve: the best installed cycle re-solved along a sweep of one limit, with its shadow prices."""

from dataclasses import replace

import numpy as np

from bypassopt.problems.best_cycle import OBJECTIVES, build_best_cycle_problem, objective_output
from bypassopt.problems.drivers import run_record
from bypassopt.problems.kkt import kkt_analysis, model_units, unit_factor
from bypassopt.scenario import SCHEMA, ScenarioError, load_scenario, validate

#: Limits a trade curve can sweep: scenario key -> (scenario section, model input it sets or None for a
#: constraint bound, units, step of the sentence, name of that step, what the limit is called, the
#: model output of the constraint it bounds).
TRADE_LIMITS = {
    "max_nacelle_diameter_m": ("limits", "max_nacelle_diameter", "m", 0.01, "cm", "allowed nacelle diameter",
                               "diameter_margin"),
    "wing_height_m": ("installation", "wing_height", "m", 0.01, "cm",
                      "wing height above the ground at the engine station", "clearance_margin"),
    "min_ground_clearance_m": ("installation", "min_ground_clearance", "m", 0.01, "cm",
                               "required ground clearance", "clearance_margin"),
    "max_Tt41_K": ("limits", None, "K", 1.0, "K", "allowed T41", "Tt41"),
    "max_Tt3_K": ("limits", None, "K", 1.0, "K", "allowed T3", "Tt3"),
}

#: What one unit of each objective is called in the sentence.
_OBJECTIVE_WORDS = {"mission_fuel": "kg of fuel", "installed_TSFC": "mg/(N*s) of installed TSFC"}

#: Outputs reported at every optimum: name -> units.
REPORTED_OUTPUTS = {"nacelle_max_diameter": "m", "clearance_margin": "m", "diameter_margin": "m", "Tt41": "K",
                    "Tt3": "K", "W3_corrected": "kg/s", "jet_velocity_ratio": None, "installed_TSFC": "mg/(N*s)",
                    "mission_fuel": "kg", "powerplant_mass": "kg"}


def limit_sensitivity(prob, settings, kkt, limit):
    """d(optimum objective)/d(limit), objective units per limit unit, from the multipliers at an optimum.

    By the envelope theorem (Nocedal and Wright, *Numerical Optimization*, 2nd ed., section 12.8), the
    optimum objective f* changes with a parameter p as d f*/dp = df/dp + sum_i lambda_i dc_i/dp, with the
    limits written c_i <= 0 and lambda_i >= 0 their multipliers. A limit that is a model input (nacelle
    diameter limit, wing height, minimum clearance) enters through the margins; one that is a constraint
    bound U (T41, T3) gives d f*/dU = -lambda.
    """
    section, var, units, _, _, _, constraint = TRADE_LIMITS[limit]
    _, obj_units, _ = OBJECTIVES[settings.objective]
    obj_name = settings.objective_output
    if var is None:
        return float(kkt["constraints"][constraint]["shadow_price"])
    limits = settings.limits
    of = [obj_name] + list(limits)
    totals = prob.compute_totals(of=of, wrt=[var], return_format="flat_dict", driver_scaling=False)
    wrt_factor = 1.0 / unit_factor(model_units(prob, var), units)

    def d(name, to_units):
        return float(np.squeeze(totals[(name, var)])) * unit_factor(model_units(prob, name), to_units) * wrt_factor

    sens = d(obj_name, obj_units)
    for name, (kind, _, cunits) in limits.items():
        lam = kkt["constraints"][name]["multiplier"]
        if lam != 0.0:
            sign = 1.0 if kind == "upper" else -1.0
            sens += lam * sign * d(name, cunits)
    return sens


def active_set_degenerate(prob, settings, kkt, rtol=1e-6):
    """Return True when the gradients of the active constraints and bounds are linearly dependent.

    Then the multipliers, and so the split of a shadow price between coinciding limits, are not unique
    (e.g. the diameter limit equal to the diameter the clearance allows): the optimum objective has
    different one-sided slopes with respect to either limit.
    """
    active = [n for n, c in kkt["constraints"].items() if c["active"]]
    dvs = list(settings.design_vars)
    rows = []
    if active:
        totals = prob.compute_totals(of=active, wrt=dvs, return_format="flat_dict", driver_scaling=False)
        for name in active:
            rows.append(np.array([float(np.squeeze(totals[(name, w)])) for w in dvs]))
    for j, name in enumerate(dvs):
        if kkt["bounds"][name]["active"]:
            rows.append(np.eye(len(dvs))[j])
    if len(rows) < 2:
        return False
    A = np.array([r / max(np.linalg.norm(r), 1e-300) for r in rows])
    sv = np.linalg.svd(A, compute_uv=False)
    return bool(len(rows) > len(dvs) or sv[-1] < rtol * sv[0])


def _sentence(limit, objective, sens, value, success=True, degenerate=False):
    _, _, units, step, step_name, phrase, _ = TRADE_LIMITS[limit]
    if not success:
        return f"At {value:g} {units} the optimizer did not converge; no shadow price is given."
    delta = sens * step
    if abs(delta) < 1e-9 * max(1.0, abs(sens)):
        return (f"At {value:g} {units} the {phrase} does not bind: one more {step_name} saves 0 "
                f"{_OBJECTIVE_WORDS[objective]}.")
    verb = "saves" if delta < 0.0 else "costs"
    text = (f"At {value:g} {units}, one more {step_name} of {phrase} {verb} {abs(delta):.3g} "
            f"{_OBJECTIVE_WORDS[objective]}")
    if degenerate:
        text += " (several active limits coincide here, so this split of the shadow price is not unique)"
    return text + "."


def _scenario_at(scenario, limit, value):
    section = TRADE_LIMITS[limit][0]
    return validate({section: {limit: float(value)}}, base=scenario)


#: How the swept constraint's margin (signed, >= 0 where met) changes per unit of the limit while the
#: optimum does not move, i.e. where the constraint is not active: used to predict where it starts binding.
_MARGIN_PER_LIMIT = {"max_nacelle_diameter_m": 1.0, "wing_height_m": 1.0, "min_ground_clearance_m": -1.0,
                     "max_Tt41_K": 1.0, "max_Tt3_K": 1.0}

#: Extra optimisations spent, at most, on each change of the active set between neighbouring values.
REFINE_SOLVES = 4


def _met_margin(kkt, constraint):
    """Margin of a constraint at the current point, >= 0 where it is met (units of the constraint)."""
    c = kkt["constraints"][constraint]
    return c["limit"] - c["value"] if c["kind"] == "upper" else c["value"] - c["limit"]


class _TradeSolver:
    """Solves the best cycle at one value of the swept limit, warm-started from a given design."""

    def __init__(self, scenario, limit, reports):
        self.scenario, self.limit, self.reports = scenario, limit, reports
        self.prob, self.settings = None, None

    def solve(self, value, sc, start):
        """Optimum at ``value`` (``sc`` is the scenario at it) from ``start`` {design variable: value} or None."""
        limit = self.limit
        _, var, units, _, _, _, constraint = TRADE_LIMITS[limit]
        objective = self.scenario["optimizer"]["objective"]
        if self.prob is None or var is None:
            self.prob, self.settings = build_best_cycle_problem(sc, reports=self.reports)
        else:
            self.prob.set_val(var, value, units=units)
            self.settings = replace(self.settings, scenario=sc)
        prob, settings = self.prob, self.settings
        if start is not None:
            for name, val in start.items():
                prob.set_val(name, val, units="K" if name == "Tt4" else None)
        record = run_record(prob.driver, prob.run_driver())
        success = record["success"]
        kkt = kkt_analysis(prob, settings)
        sens = limit_sensitivity(prob, settings, kkt, limit) if success else float("nan")
        degenerate = active_set_degenerate(prob, settings, kkt)
        design = {name: float(np.squeeze(prob.get_val(name, units="K" if name == "Tt4" else None)))
                  for name in ("BPR", "FPR", "OPR", "Tt4")}
        active_cons = [n for n, c in kkt["constraints"].items() if c["active"]]
        active_bounds = [f"{n} ({b['active']} bound)" for n, b in kkt["bounds"].items() if b["active"]]
        return {
            "value": float(value),
            "success": success,
            "message": record["message"],
            "iterations": record["iterations"],
            "objective": kkt["objective"]["value"],
            "design": design,
            "start": {name: design[name] for name in settings.design_vars},
            "outputs": {n: float(np.squeeze(prob.get_val(n, units=u))) for n, u in REPORTED_OUTPUTS.items()},
            "active": active_cons + active_bounds,
            "multipliers": {n: kkt["constraints"][n]["multiplier"] for n in active_cons},
            "shadow_prices": {n: kkt["constraints"][n]["shadow_price"] for n in active_cons},
            "bound_multipliers": {n: b["multiplier"] for n, b in kkt["bounds"].items() if b["active"]},
            "projected_gradient": kkt["projected_gradient"],
            "degenerate": degenerate,
            "d_objective_d_limit": sens,
            "sentence": _sentence(limit, objective, sens, value, success, degenerate),
            "refined": False,
            "swept_margin": _met_margin(kkt, constraint),
        }


def _predicted_switch(limit, a, b):
    """Limit value where the swept constraint starts binding, predicted from the side where it does not.

    Between two optima, one with the swept constraint active and one without, the inactive optimum does
    not move with the limit, so its margin changes by ``_MARGIN_PER_LIMIT`` per unit of the limit: the
    constraint binds where that margin reaches zero. None when the constraint is active at both or neither.
    """
    constraint = TRADE_LIMITS[limit][6]
    on_a, on_b = constraint in a["active"], constraint in b["active"]
    if on_a == on_b:
        return None
    off = b if on_a else a
    return off["value"] - off["swept_margin"] / _MARGIN_PER_LIMIT[limit]


def _same_optimum(p, q, rtol=1e-8):
    """Return True when two optima have the same objective (relative tolerance ``rtol``).

    Used where ``q``'s optimum also meets every limit at ``p``: ``p`` can then only be worse or equal.
    """
    return abs(p["objective"] - q["objective"]) <= rtol * abs(q["objective"])


def _refine_switch(solver, scenario, limit, a, b, solves, tol):
    """Optimise between ``a`` and ``b`` (optima with different active sets) to locate the change.

    Each extra optimum is placed where ``_predicted_switch`` puts the swept constraint's switch when that
    lies inside the bracket (at least ``tol`` from its ends), else at the bracket's middle; the bracket
    then shrinks to the half whose ends still differ. Returns the new points (``refined`` True) and the
    final bracket's estimate of the switching value.
    """
    constraint = TRADE_LIMITS[limit][6]
    new = []
    for _ in range(solves):
        lo, hi = sorted((a["value"], b["value"]))
        if hi - lo <= tol:
            break
        guess = _predicted_switch(limit, a, b)
        predicted = guess is not None and lo + tol <= guess <= hi - tol
        if not predicted:
            if guess is not None and min(abs(guess - lo), abs(guess - hi)) < tol:
                break  # an end of the bracket already lies on the predicted switch
            guess = 0.5 * (lo + hi)
        guess = round(float(guess), max(0, int(-np.floor(np.log10(0.01 * tol)))))
        near = a if abs(a["value"] - guess) <= abs(b["value"] - guess) else b
        point = solver.solve(guess, _scenario_at(scenario, limit, guess), near["start"] if near["success"] else None)
        point["refined"] = True
        new.append(point)
        if not point["success"]:
            break
        off = b if constraint in a["active"] else a
        if predicted and constraint in point["active"] and _same_optimum(point, off):
            # the optimum where the constraint does not bind just meets it here: this is the switch
            a, b = (point, off) if point["value"] <= off["value"] else (off, point)
            break
        if sorted(point["active"]) != sorted(a["active"]):
            b = point
        else:
            a = point
    estimate = _predicted_switch(limit, a, b)
    lo, hi = sorted((a["value"], b["value"]))
    if estimate is None or not lo - tol <= estimate <= hi + tol:
        estimate = 0.5 * (lo + hi)
    return new, {"low": lo, "high": hi, "value": float(estimate),
                 "active_low": list((a if a["value"] == lo else b)["active"]),
                 "active_high": list((b if b["value"] == hi else a)["active"])}


def run_trade_curve(scenario=None, limit=None, values=None, progress=None, reports=False, refine=REFINE_SOLVES,
                    refine_tol=None):
    """Best installed cycle along a sweep of one limit, warm-started, with shadow prices at every optimum.

    Each point re-solves ``build_best_cycle_problem`` starting from the previous optimum's design
    variables. A limit that is a model input (``max_nacelle_diameter_m``, ``wing_height_m``,
    ``min_ground_clearance_m``) is changed on one reused problem; a constraint bound (``max_Tt41_K``,
    ``max_Tt3_K``) needs a problem rebuilt from a scenario copy, then set to the previous optimum.
    At every optimum ``kkt_analysis`` gives the multipliers and shadow prices of the active constraints,
    and ``limit_sensitivity`` the change of the optimum objective per unit of the swept limit.

    Where two neighbouring values (in sorted order) have different active sets, the optimum objective
    has a kink between them (a limit starts or stops binding): up to ``refine`` extra optimisations
    locate it (``_refine_switch``), each marked ``refined`` in the result.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the demo.
    limit : str or None
        Scenario key of the swept limit (see ``TRADE_LIMITS``); None takes ``scenario['trade']['limit']``.
    values : sequence of float or None
        Values of the limit, in the key's units, solved in the given order; None takes
        ``scenario['trade']['values']``.
    progress : callable or None
        ``progress(done, total, message)`` called after every point (the total grows by the refinement).
    reports : bool
        OpenMDAO reports of the problems built.
    refine : int
        Extra optimisations at most per change of the active set; 0 solves the given values only.
    refine_tol : float or None
        Refinement stops when the bracket of a change is this narrow (limit units); None takes a tenth of
        the sentence's step (1 mm, 0.1 K).

    Returns
    -------
    dict
        ``limit``, ``limit_description``, ``limit_units``, ``values`` (array), ``objective_name``,
        ``objective_units``, ``scenario``, arrays over the points (``success``, ``objective``,
        ``BPR``, ``FPR``, ``OPR``, ``Tt4``, ``d_objective_d_limit``, ``refined``) and ``points``: per point
        a dict with ``value``, ``success``, ``message``, ``iterations``, ``objective``, ``design`` {design
        variable: value}, ``outputs`` (``REPORTED_OUTPUTS``), ``active`` (names of the active
        constraints and bounds), ``multipliers`` and ``shadow_prices`` {active constraint: value},
        ``bound_multipliers``, ``projected_gradient``, ``degenerate`` (``active_set_degenerate``),
        ``d_objective_d_limit`` (objective units per limit unit; NaN where the optimizer failed),
        ``sentence`` ("one more cm of allowed nacelle diameter saves X kg of fuel"), ``refined`` (added
        by the refinement) and ``swept_margin`` (margin of the swept constraint, >= 0 where met).
        Without added points the order is the given one; with them, the points are sorted along the
        sweep (descending when the given values are). ``active_set_changes``: per change found, a dict
        with the final bracket ``low``, ``high``, the active sets at its ends and ``value``, the
        estimated limit value of the change (the kink of the curve).
    """
    scenario = scenario or load_scenario()
    trade = scenario.get("trade", {})
    limit = limit or trade.get("limit")
    if limit not in TRADE_LIMITS:
        raise ScenarioError(f"trade limit {limit!r} is not one of {', '.join(TRADE_LIMITS)}.")
    values = np.asarray(values if values is not None else trade["values"], dtype=float)
    if values.ndim != 1 or values.size < 1:
        raise ScenarioError("trade: values must be a list of numbers.")
    section, var, units, step, _, _, _ = TRADE_LIMITS[limit]
    scenarios = [_scenario_at(scenario, limit, v) for v in values]  # every value is checked before solving
    objective = scenario["optimizer"]["objective"]
    _, obj_units, _ = OBJECTIVES[objective]
    obj_name = objective_output(objective, scenario)
    tol = 0.1 * step if refine_tol is None else float(refine_tol)

    solver = _TradeSolver(scenario, limit, reports)
    previous, points = None, []
    total = [values.size]

    def report(point):
        if progress is not None:
            progress(len(points), total[0], f"{limit} = {point['value']:g} {units}: {obj_name} "
                                            f"{point['objective']:.6g} {obj_units}")

    for value, sc in zip(values, scenarios):
        point = solver.solve(value, sc, previous)
        if point["success"]:
            previous = point["start"]
        points.append(point)
        report(point)

    changes = []
    if refine > 0:
        ordered = sorted(points, key=lambda p: p["value"])
        for a, b in zip(ordered[:-1], ordered[1:]):
            if a["success"] and b["success"] and sorted(a["active"]) != sorted(b["active"]):
                total[0] += refine
                new, change = _refine_switch(solver, scenario, limit, a, b, refine, tol)
                total[0] -= refine - len(new)
                for point in new:
                    points.append(point)
                    report(point)
                changes.append(change)
    if any(p["refined"] for p in points):
        descending = values.size > 1 and np.all(np.diff(values) < 0.0)
        points.sort(key=lambda p: -p["value"] if descending else p["value"])

    out = {
        "limit": limit,
        "limit_description": SCHEMA[section][limit]["desc"],
        "limit_units": units,
        "values": np.array([p["value"] for p in points]),
        "objective_name": objective,
        "objective_units": obj_units,
        "scenario": scenario["aircraft"].get("name", "scenario"),
        "points": points,
        "active_set_changes": changes,
    }
    out["success"] = np.array([p["success"] for p in points])
    out["objective"] = np.array([p["objective"] for p in points])
    for name in ("BPR", "FPR", "OPR", "Tt4"):
        out[name] = np.array([p["design"][name] for p in points])
    out["d_objective_d_limit"] = np.array([p["d_objective_d_limit"] for p in points])
    out["refined"] = np.array([p["refined"] for p in points])
    return out
