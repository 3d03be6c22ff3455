"""Feasibility screen: whether each limit can be met anywhere inside the design-variable bounds.

Run before an optimisation, so that a limit no design can meet (a nacelle-diameter limit below any reachable
fan, a T41 limit below what the fixed T4 gives, a wing too low for any engine) is reported in one line, with
the best value reachable and the scenario key to change, instead of SLSQP stopping after a minute with
"Positive directional derivative for linesearch".

How it works: the installed engine is evaluated once, vectorized, on a grid over the free design variables
(``optimize = true``; the others stay at their initial value) that holds every corner of the bounds and the
scenario's initial design. Designs the model cannot evaluate (a fan the core cannot drive, say) are dropped:
the optimizer cannot reach them either. For each limit the best value of its quantity over the evaluated
points (smallest nacelle, largest ground clearance, lowest T41 and T3, largest core size) is compared with
the limit.

What it can and cannot say. It is a necessary-condition screen on a grid:

- a limit missed at every evaluated point is reported as an ``error``: these quantities vary smoothly and
  mostly monotonically over the bounds (the grid holds the corners, where monotone quantities reach their
  extremes), so the optimizer would not find a feasible design either, but a narrow feasible pocket between
  grid nodes is not ruled out in principle;
- a limit met at some point may still conflict with another one there: when no single evaluated point meets
  all limits together, a ``warning`` says so, since the optimizer may still find a point between the grid
  nodes;
- passing the screen does not guarantee that the optimizer converges;
- it evaluates the design-point engine model (``[optimizer] model = "design_point"``). For the multipoint model
  it therefore screens only the limits that model shares closely (nacelle diameter, ground clearance, core size):
  its T41 and T3, at top of climb and at take-off, depend on the cooling air sized at take-off and on the
  off-design match, which the screen does not run; they are left to the optimizer.
"""

import itertools
import time
from dataclasses import dataclass, field

import numpy as np
import openmdao.api as om

from bypassopt.components.validation import failing_nodes
from bypassopt.problems.best_cycle import build_evaluation_problem
from bypassopt.scenario import CONSTRAINT_LIMITS, DESIGN_VARIABLES, design_point_scenario, is_multipoint, load_scenario

#: Grid points per free design variable, by the number of free variables (about 10 to 80 designs in all).
POINTS_PER_VARIABLE = {1: 9, 2: 6, 3: 4, 4: 3}

#: A limit counts as met when its margin is above minus this many units of the limit's quantity (the
#: optimizer's own constraint tolerance is far smaller; this only absorbs round-off at the grid nodes).
MET_TOL = {"diameter_margin": 1e-6, "clearance_margin": 1e-6, "Tt41": 1e-3, "Tt3": 1e-3, "W3_corrected": 1e-6,
           "mtow_margin": 1e-3}

#: Model outputs read at every grid point: name -> units.
SCREENED_OUTPUTS = {"nacelle_max_diameter": "m", "Tt41": "K", "Tt3": "K", "W3_corrected": "kg/s",
                    "takeoff_mass": "kg"}




@dataclass(frozen=True)
class Finding:
    """One result of the feasibility screen.

    Attributes
    ----------
    severity : str
        'error' (the limit is missed at every evaluated design: no optimisation is worth running) or
        'warning' (no single evaluated design meets all limits together; the optimizer may still find one).
    constraint : str or None
        Model output of the limit ('diameter_margin', 'clearance_margin', 'Tt41', 'Tt3', 'W3_corrected',
        'mtow_margin'); None for the joint warning.
    key : str or None
        Scenario key of the limit, e.g. 'limits.max_nacelle_diameter_m'.
    limit : float or None
        The limit's value, in ``units``.
    best : float or None
        Best value of the limit's quantity reachable on the grid (smallest nacelle diameter, largest ground
        clearance, lowest T41 or T3, largest core size, lowest take-off mass), in ``units``.
    units : str or None
        Units of ``limit`` and ``best``.
    message : str
        One line: the limit, the best reachable value and what to change.
    """

    severity: str
    constraint: object
    key: object
    limit: object
    best: object
    units: object
    message: str

    def to_dict(self):
        """Return the finding as a plain dict (for JSON)."""
        return {"severity": self.severity, "constraint": self.constraint, "key": self.key, "limit": self.limit,
                "best": self.best, "units": self.units, "message": self.message}


@dataclass
class DesignSpaceScreen:
    """The model evaluated on a grid over the free design variables (``evaluate_design_space``).

    Attributes
    ----------
    design_vars : list of str
        Model inputs varied on the grid (the free design variables).
    points : ndarray
        (n, len(design_vars)) designs; row 0 is the scenario's initial design.
    evaluated : ndarray of bool
        (n,) True where the model evaluated the design.
    outputs : dict
        {name: (n,) array} of ``SCREENED_OUTPUTS`` (NaN where not evaluated).
    runs : int
        Model runs it took (one plus one per design the model could not evaluate).
    seconds : float
        Wall time of the screen, set-up included.
    error : str or None
        Why the initial design could not be evaluated (then nothing else was).
    """

    design_vars: list
    points: np.ndarray
    evaluated: np.ndarray
    outputs: dict = field(default_factory=dict)
    runs: int = 0
    seconds: float = 0.0
    error: object = None


def grid_points(scenario, points_per_variable=None):
    """Designs of the screen: the initial design, then a full grid over the free design variables' bounds.

    Parameters
    ----------
    scenario : dict
        Validated scenario.
    points_per_variable : int or None
        Grid points per free variable (evenly spaced, the bounds included); None takes
        ``POINTS_PER_VARIABLE`` for the number of free variables.

    Returns
    -------
    names : list of str
        Model inputs of the free design variables.
    points : ndarray
        (n, len(names)) designs, row 0 the initial design.
    """
    dvs = scenario["design_variables"]
    free = [(var, dvs[key]) for key, (var, _, _, _) in DESIGN_VARIABLES.items() if dvs[key]["optimize"]]
    names = [var for var, _ in free]
    if not free:
        return names, np.zeros((1, 0))
    n = points_per_variable or POINTS_PER_VARIABLE.get(len(free), 3)
    axes = [np.linspace(dv["lower"], dv["upper"], n) for _, dv in free]
    grid = np.array(list(itertools.product(*axes)))
    initial = np.array([[dv["initial"] for _, dv in free]])
    return names, np.vstack([initial, grid])


def evaluate_design_space(scenario=None, points_per_variable=None):
    """Evaluate the installed engine on the screen's grid in one vectorized problem.

    An ``AnalysisError`` of the model names the first design it failed at ("at node i", the model's own
    messages); that design is replaced by the initial design, marked as not evaluated, and the model run
    again from the same starting values, so each failure costs one short run and no new set-up. An error that
    names no design (a solver that did not converge, say) makes every design be run on its own instead.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the demo.
    points_per_variable : int or None
        See ``grid_points``.

    Returns
    -------
    DesignSpaceScreen
    """
    start = time.perf_counter()
    scenario = scenario or load_scenario()
    names, points = grid_points(scenario, points_per_variable)
    n = len(points)
    ok = np.ones(n, dtype=bool)
    screen = DesignSpaceScreen(design_vars=names, points=points, evaluated=ok)
    prob = build_evaluation_problem(design_point_scenario(scenario), num_nodes=n, reports=False)
    prob.final_setup()
    initial_outputs = prob.model._outputs.asarray().copy()
    while True:
        design = np.where(ok[:, None], points, points[0])
        prob.model._outputs.set_val(initial_outputs)  # the same start for every run (design inputs are set next)
        for j, name in enumerate(names):
            prob.set_val(name, design[:, j])
        screen.runs += 1
        try:
            prob.run_model()
            break
        except om.AnalysisError as err:
            named = failing_nodes(str(err))
            node = named[0] if named and n > 1 else (0 if n == 1 else None)
            if node is None or node >= n or not ok[node]:
                _evaluate_one_by_one(scenario, screen)
                screen.seconds = time.perf_counter() - start
                return screen
            if node == 0:
                screen.evaluated[:] = False
                screen.error = str(err).strip().splitlines()[-1] if str(err).strip() else repr(err)
                screen.outputs = {name: np.full(n, np.nan) for name in SCREENED_OUTPUTS}
                screen.seconds = time.perf_counter() - start
                return screen
            ok[node] = False
            ok[[k for k in named[1:] if 0 < k < n]] = False  # every node the failing check named, together
    screen.outputs = {name: np.where(ok, np.asarray(prob.get_val(name, units=units)).ravel(), np.nan)
                      for name, units in SCREENED_OUTPUTS.items()}
    screen.seconds = time.perf_counter() - start
    return screen


def _evaluate_one_by_one(scenario, screen):
    """Fallback of ``evaluate_design_space``: one single-design problem, run for each design in turn."""
    n = len(screen.points)
    screen.outputs = {name: np.full(n, np.nan) for name in SCREENED_OUTPUTS}
    prob = build_evaluation_problem(design_point_scenario(scenario), num_nodes=1, reports=False)
    prob.final_setup()
    initial_outputs = prob.model._outputs.asarray().copy()
    for i, point in enumerate(screen.points):
        prob.model._outputs.set_val(initial_outputs)
        for j, name in enumerate(screen.design_vars):
            prob.set_val(name, point[j])
        screen.runs += 1
        try:
            prob.run_model()
        except om.AnalysisError as err:
            screen.evaluated[i] = False
            if i == 0:
                screen.error = str(err).strip().splitlines()[-1] if str(err).strip() else repr(err)
            continue
        for name, units in SCREENED_OUTPUTS.items():
            screen.outputs[name][i] = float(np.asarray(prob.get_val(name, units=units)).ravel()[0])


def _fmt(x):
    """Short number for a one-line message (4 significant figures, no exponent for everyday values)."""
    from bypassopt.report import format_number

    return format_number(x, 4)


def _wants_takeoff_mass_limit(scenario, limit_takeoff_mass):
    if limit_takeoff_mass is None:
        return bool(scenario.get("limits", {}).get("enforce_max_takeoff_mass", False))
    return bool(limit_takeoff_mass)


def limit_margins(screen, scenario, limit_takeoff_mass=None):
    """Margin of every limit at every screened design (>= 0 where met; NaN where not evaluated).

    The margins are computed from the screened outputs and the scenario's limits, so one screen serves a
    sweep of any limit that is not a cycle input (the nacelle-diameter limit, wing height, minimum ground
    clearance, the T41 and T3 limits, as ``trade`` sweeps them): ground clearance = wing height - nacelle-wing
    gap - nacelle diameter, as ``GroundClearanceComp`` computes it.

    Parameters
    ----------
    screen : DesignSpaceScreen
        What ``evaluate_design_space`` returned.
    scenario : dict
        Validated scenario whose limits are checked.
    limit_takeoff_mass : bool or None
        Also check take-off mass <= maximum take-off mass; None takes the scenario's
        ``limits.enforce_max_takeoff_mass`` (False when the scenario has no such key).

    Returns
    -------
    dict
        {constraint: (n,) margins} in the units of ``MET_TOL``.
    """
    out, inst, lim = screen.outputs, scenario["installation"], scenario["limits"]
    diameter = out["nacelle_max_diameter"]
    margins = {
        "diameter_margin": lim["max_nacelle_diameter_m"] - diameter,
        "clearance_margin": (inst["wing_height_m"] - inst["nacelle_wing_gap_m"] - diameter
                             - inst["min_ground_clearance_m"]),
    }
    # the multipoint model's temperatures depend on its take-off cooling sizing, which the screen does not model
    temperatures = ("Tt41", "Tt3") if is_multipoint(scenario) else ()
    for key, (var, kind, _) in CONSTRAINT_LIMITS.items():
        if var in temperatures:
            continue
        margins[var] = lim[key] - out[var] if kind == "upper" else out[var] - lim[key]
    if _wants_takeoff_mass_limit(scenario, limit_takeoff_mass):
        margins["mtow_margin"] = scenario["aircraft"]["max_takeoff_mass_kg"] - out["takeoff_mass"]
    return margins


def _fixed_tt4_hint(scenario):
    dv = scenario["design_variables"]["Tt4_K"]
    if dv["optimize"]:
        return "lower design_variables.Tt4_K.lower"
    return "lower design_variables.Tt4_K.initial (T4 is held fixed) or set design_variables.Tt4_K.optimize = true"


def _limit_message(name, scenario, screen, margins):
    """One line for a limit missed at every evaluated design."""
    inst, lim, ac = scenario["installation"], scenario["limits"], scenario["aircraft"]
    ok = screen.evaluated
    within = "within the design-variable bounds"
    widen = "or widen design_variables"
    out = screen.outputs
    if name == "diameter_margin":
        best = float(np.nanmin(out["nacelle_max_diameter"][ok]))
        return ("limits.max_nacelle_diameter_m", lim["max_nacelle_diameter_m"], best, "m",
                f"limits.max_nacelle_diameter_m = {_fmt(lim['max_nacelle_diameter_m'])} m cannot be met: the "
                f"smallest nacelle reachable {within} is {_fmt(best)} m; raise limits.max_nacelle_diameter_m "
                f"{widen}")
    if name == "clearance_margin":
        dmin = float(np.nanmin(out["nacelle_max_diameter"][ok]))
        best = inst["wing_height_m"] - inst["nacelle_wing_gap_m"] - dmin
        return ("installation.min_ground_clearance_m", inst["min_ground_clearance_m"], best, "m",
                f"installation.min_ground_clearance_m = {_fmt(inst['min_ground_clearance_m'])} m cannot be met: "
                f"the largest ground clearance reachable {within} is {_fmt(best)} m (wing height "
                f"{_fmt(inst['wing_height_m'])} m - nacelle-wing gap {_fmt(inst['nacelle_wing_gap_m'])} m - "
                f"smallest nacelle {_fmt(dmin)} m); raise installation.wing_height_m, lower "
                f"installation.nacelle_wing_gap_m or installation.min_ground_clearance_m, {widen}")
    if name == "Tt41":
        best = float(np.nanmin(out["Tt41"][ok]))
        return ("limits.max_Tt41_K", lim["max_Tt41_K"], best, "K",
                f"limits.max_Tt41_K = {_fmt(lim['max_Tt41_K'])} K cannot be met: the lowest T41 reachable "
                f"{within} is {_fmt(best)} K; raise limits.max_Tt41_K or {_fixed_tt4_hint(scenario)}")
    if name == "Tt3":
        best = float(np.nanmin(out["Tt3"][ok]))
        return ("limits.max_Tt3_K", lim["max_Tt3_K"], best, "K",
                f"limits.max_Tt3_K = {_fmt(lim['max_Tt3_K'])} K cannot be met: the lowest T3 reachable {within} "
                f"is {_fmt(best)} K; raise limits.max_Tt3_K, lower design_variables.OPR.lower {widen}")
    if name == "W3_corrected":
        best = float(np.nanmax(out["W3_corrected"][ok]))
        return ("limits.min_core_size_kg_s", lim["min_core_size_kg_s"], best, "kg/s",
                f"limits.min_core_size_kg_s = {_fmt(lim['min_core_size_kg_s'])} kg/s cannot be met: the largest "
                f"core size (HPC exit corrected flow) reachable {within} is {_fmt(best)} kg/s; lower "
                f"limits.min_core_size_kg_s {widen}")
    if name == "mtow_margin":
        best = float(np.nanmin(out["takeoff_mass"][ok]))
        return ("aircraft.max_takeoff_mass_kg", ac["max_takeoff_mass_kg"], best, "kg",
                f"aircraft.max_takeoff_mass_kg = {_fmt(ac['max_takeoff_mass_kg'])} kg cannot be met: the lowest "
                f"take-off mass reachable {within} is {_fmt(best)} kg; raise aircraft.max_takeoff_mass_kg, "
                f"lower aircraft.payload_kg or aircraft.design_range_m, or stop enforcing the maximum take-off "
                f"mass")
    raise KeyError(name)  # pragma: no cover - every constraint of limit_margins has a message


def assess(screen, scenario, limit_takeoff_mass=None):
    """Return the findings of a screen for the scenario's limits (see ``check_feasibility``).

    Parameters
    ----------
    screen : DesignSpaceScreen
        What ``evaluate_design_space`` returned (for this scenario, or for one that differs only in the
        limits ``limit_margins`` computes from the outputs).
    scenario : dict
        Validated scenario whose limits are checked.
    limit_takeoff_mass : bool or None
        See ``limit_margins``.

    Returns
    -------
    list of Finding
        Errors first (one per limit missed at every evaluated design), then at most one warning.
    """
    if screen.error is not None:
        return [Finding("error", None, "design_variables", None, None, None,
                        f"the initial design cannot be evaluated: {screen.error}")]
    ok = screen.evaluated
    margins = limit_margins(screen, scenario, limit_takeoff_mass)
    met = {name: (m >= -MET_TOL[name]) & ok for name, m in margins.items()}
    findings = []
    for name in margins:
        if not np.any(met[name]):
            key, limit, best, units, message = _limit_message(name, scenario, screen, margins)
            findings.append(Finding("error", name, key, float(limit), best, units, message))
    if not findings:
        all_met = np.logical_and.reduce(list(met.values()))
        if not np.any(all_met):
            names = ", ".join(sorted(margins))
            findings.append(Finding(
                "warning", None, None, None, None, None,
                f"each limit is met somewhere within the design-variable bounds, but none of the {int(ok.sum())} "
                f"designs screened meets all of them together ({names}); the optimizer may still find a design "
                f"between the screened ones, or stop without converging"))
    return findings


def check_feasibility(scenario=None, limit_takeoff_mass=None, points_per_variable=None):
    """Screen the scenario's limits over the design-variable bounds before optimising.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the demo.
    limit_takeoff_mass : bool or None
        Also screen take-off mass <= maximum take-off mass (as ``build_best_cycle_problem`` with
        ``limit_takeoff_mass=True`` constrains it); None takes the scenario's ``limits.enforce_max_takeoff_mass``
        (False when the scenario has no such key).
    points_per_variable : int or None
        See ``grid_points``.

    Returns
    -------
    list of Finding
        Empty when every limit is met at some screened design and one design meets them all. An 'error' is a
        limit missed at every screened design: report it and do not optimise. A 'warning' says that no
        screened design meets all limits together.
    """
    scenario = scenario or load_scenario()
    return assess(evaluate_design_space(scenario, points_per_variable), scenario, limit_takeoff_mass)


def check_sweep(scenario, key, values, limit_takeoff_mass=None, points_per_variable=None):
    """Screen a sweep of one limit (the ``trade`` command): one screen, the limits checked at every value.

    Parameters
    ----------
    scenario : dict
        Validated scenario.
    key : str
        Swept key of ``[limits]`` or ``[installation]`` (one ``limit_margins`` computes from the screened
        outputs: the nacelle-diameter limit, wing height, minimum ground clearance, T41 or T3 limit).
    values : sequence of float
        Values of the swept key.
    limit_takeoff_mass : bool or None
        See ``check_feasibility``.
    points_per_variable : int or None
        See ``grid_points``.

    Returns
    -------
    list of Finding
        An 'error' for a limit missed at every screened design at every value (its message is that of the
        value closest to feasible); a 'warning' naming the values at which some limit is missed (those
        optimisations cannot succeed) or no screened design meets all limits together.
    """
    screen = evaluate_design_space(scenario, points_per_variable)
    section = "limits" if key in scenario["limits"] else "installation"
    per_value = []
    for value in values:
        sc = {**scenario, section: {**scenario[section], key: float(value)}}
        per_value.append((float(value), sc, assess(screen, sc, limit_takeoff_mass)))
    if screen.error is not None:
        return per_value[0][2]
    failing = {}
    for value, sc, findings in per_value:
        for f in findings:
            if f.severity == "error":
                margin = float(np.nanmax(limit_margins(screen, sc, limit_takeoff_mass)[f.constraint]))
                failing.setdefault(f.constraint, []).append((margin, value, f))
    out = []
    bad_values = set()
    for name, items in failing.items():
        if len(items) == len(per_value):
            _, _, f = max(items, key=lambda item: item[0])
            out.append(Finding("error", f.constraint, f.key, f.limit, f.best, f.units,
                               f"{f.message} (the limit is missed at every value of trade.values)"))
        else:
            bad_values.update(value for _, value, _ in items)
    if out:
        return out
    units = {"max_nacelle_diameter_m": "m", "wing_height_m": "m", "min_ground_clearance_m": "m"}.get(key, "K")
    if bad_values:
        shown = ", ".join(_fmt(v) for v in sorted(bad_values))
        out.append(Finding("warning", None, f"{section}.{key}", None, None, units,
                           f"at {section}.{key} = {shown} {units} some limit is missed at every design screened "
                           "within the design-variable bounds: the optimizer cannot succeed there"))
    joint = [value for value, _, findings in per_value if value not in bad_values
             and any(f.severity == "warning" for f in findings)]
    if joint:
        shown = ", ".join(_fmt(v) for v in joint)
        out.append(Finding("warning", None, f"{section}.{key}", None, None, units,
                           f"at {section}.{key} = {shown} {units} no screened design meets all limits together; the "
                           "optimizer may still find one between the screened designs"))
    return out
