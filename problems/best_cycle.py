"""Best installed cycle: minimise mission fuel (or installed TSFC) over BPR, OPR, FPR and T4 under limits."""

from dataclasses import dataclass, field

import openmdao.api as om

from bypassopt.components.gas.thermo import ThermallyPerfectGas
from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.components.interface import ALL_PLAIN
from bypassopt.problems.drivers import make_driver
from bypassopt.scenario import (DESIGN_VARIABLES, ScenarioError, constraint_limits, is_multipoint, load_scenario,
                                model_inputs)

#: Objective choices: name -> (model output, units, reference magnitude for scaling). The installed TSFC is the
#: design point's in the design-point model and the cruise point's in the multipoint model (``objective_output``).
OBJECTIVES = {
    "mission_fuel": ("mission_fuel", "kg", 1.0e4),
    "installed_TSFC": ("installed_TSFC", "mg/(N*s)", 10.0),
}
#: Objective outputs that the multipoint model takes at its cruise point.
_CRUISE_OBJECTIVES = ("installed_TSFC",)


def objective_output(objective, scenario):
    """Model output of an objective choice for the scenario's engine model."""
    out = OBJECTIVES[objective][0]
    return f"cruise:{out}" if is_multipoint(scenario) and objective in _CRUISE_OBJECTIVES else out


def limit_scaling(var):
    """(units, reference magnitude) of a limit's model output (a point prefix such as ``takeoff:`` ignored)."""
    return _LIMIT_SCALING[var.split(":")[-1]]

#: Constraints of the best-installed-cycle problem: name -> (model output, kind, units, scaling ref).
#: 'lower' means output >= limit. The limits of T41, T3 and core size come from the scenario.
GEOMETRY_CONSTRAINTS = {
    "clearance_margin": ("clearance_margin", "lower", "m", 0.1),
    "diameter_margin": ("diameter_margin", "lower", "m", 0.1),
}
_LIMIT_SCALING = {"Tt41": ("K", 100.0), "Tt3": ("K", 100.0), "W3_corrected": ("kg/s", 1.0)}
#: Optional constraint (``limit_takeoff_mass``): maximum take-off mass minus take-off mass >= 0, scaled by 1 t.
MTOW_CONSTRAINT, _MTOW_REF = "mtow_margin", 1000.0


def gas_for(scenario):
    """Working-gas model with the scenario's fuel hydrogen-to-carbon ratio."""
    return ThermallyPerfectGas(hc_ratio=scenario["engine"].get("fuel_hc_ratio", 1.92))


#: ``reports=`` left at this value means OpenMDAO's own default (its reports on, unless the environment
#: variable ``OPENMDAO_REPORTS`` turns them off).
OPENMDAO_DEFAULT = object()


@dataclass(frozen=True)
class BestCycleSettings:
    """What a best-cycle problem was built with (returned beside the problem by ``build_best_cycle_problem``).

    Attributes
    ----------
    scenario : dict
        The validated scenario.
    objective : str
        Name of the objective choice (a key of ``OBJECTIVES``).
    limits : dict
        {model output: (kind, limit, units)} of the constraints; kind 'lower' means output >= limit.
    design_vars : dict
        {model input: {initial, lower, upper, optimize}} of the free design variables.
    objective_output : str
        Model output minimised (``objective_output``: ``cruise:installed_TSFC`` for the multipoint model's TSFC).
    """

    scenario: dict
    objective: str
    limits: dict = field(default_factory=dict)
    design_vars: dict = field(default_factory=dict)
    objective_output: str = ""

    def __post_init__(self):
        """Fill in the objective's model output when not given."""
        if not self.objective_output:
            object.__setattr__(self, "objective_output", objective_output(self.objective, self.scenario))


def _problem(model, reports, comm=None):
    """Problem whose model holds the engine group as subsystem ``engine``, every variable promoted.

    The engine's coupled Newton solver then works on the engine's variables only: as the root model its direct
    solve would also step the design variables' automatic sources (by round-off, 12 becoming 11.999999999999998).
    """
    root = om.Group()
    root.add_subsystem("engine", model, promotes=["*"])
    kwargs = {} if comm is None else {"comm": comm}
    return om.Problem(root, **kwargs) if reports is OPENMDAO_DEFAULT else om.Problem(root, reports=reports, **kwargs)


def apply_scenario(prob, scenario, skip=(), prefix=""):
    """Set every model input the scenario defines (broadcast over the problem's nodes).

    Parameters
    ----------
    prob : om.Problem
        A set-up problem holding an ``InstalledEngineGroup`` (or the carpet/embedding groups).
    scenario : dict
        Validated scenario (``bypassopt.scenario.load_scenario``).
    skip : iterable of str
        Model input names left alone.
    prefix : str
        Path of the engine group in a larger model whose inputs are not promoted to the top, e.g.
        ``"aircraft.engine."``; the inputs are then set as ``prefix + name``.
    """
    for name, (value, units) in model_inputs(scenario).items():
        if name in skip:
            continue
        prob.set_val(prefix + name, value, units=units)


def build_installed_model(scenario, num_nodes=1):
    """Return the scenario's engine model, configured for its number of engines and fuel.

    ``InstalledMultipointGroup`` for ``[optimizer] model = "multipoint"``, ``InstalledEngineGroup`` for
    ``"design_point"``, every variable promoted under its plain name (``expose='all', name_prefix=''``).
    """
    cls = InstalledMultipointGroup if is_multipoint(scenario) else InstalledEngineGroup
    return cls(num_nodes=num_nodes, gas=gas_for(scenario), num_engines=scenario["aircraft"]["num_engines"],
               gearbox=bool(scenario["engine"].get("gearbox", False)), **ALL_PLAIN)


def build_evaluation_problem(scenario=None, num_nodes=1, design=None, reports=OPENMDAO_DEFAULT,
                             force_alloc_complex=False):
    """Return a set-up problem of the installed engine (no driver) with the scenario applied.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario (``bypassopt.scenario.load_scenario``); None gives the demo.
    num_nodes : int
        Designs evaluated at once.
    design : dict or None
        Design-variable overrides {model input: value or array}, e.g. {'BPR': 11.0}.
    reports : bool or str or None
        Passed to ``om.Problem``; left out, OpenMDAO's default applies (the CLI passes False).
    force_alloc_complex : bool
        Allocate complex vectors (only for complex-step checks; it costs memory and time).
    """
    scenario = scenario or load_scenario()
    prob = _problem(build_installed_model(scenario, num_nodes), reports)
    prob.setup(force_alloc_complex=force_alloc_complex)
    apply_scenario(prob, scenario)
    for name, value in (design or {}).items():
        prob.set_val(name, value)
    return prob


def build_best_cycle_problem(scenario=None, objective=None, driver=None, recorder_path=None,
                             reports=OPENMDAO_DEFAULT, force_alloc_complex=False, limit_takeoff_mass=None,
                             comm=None):
    """Ready best-installed-cycle optimisation problem (set up, scenario applied, not run), and its settings.

    Minimises ``mission_fuel`` (or the installed TSFC) over the design variables the scenario marks
    ``optimize = true`` (BPR, OPR, optionally FPR and T4), subject to nacelle ground-clearance margin
    >= 0, nacelle diameter <= limit, T41 <= limit, T3 <= limit and HPC exit corrected flow >= limit
    (``bypassopt.scenario.constraint_limits``: at the design point, and with the multipoint model
    T41 and T3 at take-off too).
    Design variables are scaled to [0, 1] over their bounds and constraints by typical magnitudes,
    so SLSQP converges in tens of iterations.

    Parameters
    ----------
    scenario : dict or None
        Validated scenario; None gives the built-in demo.
    objective : str or None
        'mission_fuel' or 'installed_TSFC'; None takes the scenario's choice.
    driver : str or None
        'SLSQP' (SciPy), or 'SNOPT', 'IPOPT', 'pyoptsparse-SLSQP' when pyoptsparse is installed.
    recorder_path : str or None
        SQLite file for OpenMDAO's case recorder (driver iterations, readable with ``om.CaseReader``).
    reports : bool or str or None
        Passed to ``om.Problem``; left out, OpenMDAO's default applies (the CLI passes False).
    force_alloc_complex : bool
        Allocate complex vectors (only for complex-step checks).
    limit_takeoff_mass : bool or None
        Add the constraint take-off mass <= maximum take-off mass (``mtow_margin`` >= 0). None takes the
        scenario's ``limits.enforce_max_takeoff_mass``, False when the scenario has no such key; without it
        the take-off mass is only reported (and flagged in the summary when above the maximum).
    comm : MPI communicator or None
        Communicator of the problem (OpenMDAO's default when None: every process of an ``mpiexec`` run); a study
        that runs one optimisation per process passes a one-process communicator (``problems.multistart``).

    Returns
    -------
    prob : om.Problem
        The problem, with its driver, design variables, objective and constraints.
    settings : BestCycleSettings
        Scenario, objective, limits and free design variables, as ``kkt_analysis`` and the reports need them.
    """
    scenario = scenario or load_scenario()
    opt = scenario["optimizer"]
    objective = objective or opt["objective"]
    if objective not in OBJECTIVES:
        raise ScenarioError(f"objective {objective!r} is not one of {', '.join(OBJECTIVES)}")
    prob = _problem(build_installed_model(scenario), reports, comm)
    prob.driver = make_driver(driver or opt["driver"], opt["maxiter"], opt["tol"])
    model = prob.model
    free = []
    for key, (var, _, _, _) in DESIGN_VARIABLES.items():
        dv = scenario["design_variables"][key]
        if dv["optimize"]:
            units = "K" if key.endswith("_K") else None
            model.add_design_var(var, lower=dv["lower"], upper=dv["upper"], ref0=dv["lower"], ref=dv["upper"],
                                 units=units)
            free.append(var)
    if not free:
        raise ScenarioError("design_variables: no variable has optimize = true")
    _, units, ref = OBJECTIVES[objective]
    model.add_objective(objective_output(objective, scenario), units=units, ref=ref)
    limits = {}
    for name, (var, kind, cunits, cref) in GEOMETRY_CONSTRAINTS.items():
        model.add_constraint(var, lower=0.0, units=cunits, ref=cref)
        limits[var] = (kind, 0.0, cunits)
    for var, kind, limit, _ in constraint_limits(scenario).values():
        cunits, cref = limit_scaling(var)
        bound = {"upper": limit} if kind == "upper" else {"lower": limit}
        model.add_constraint(var, units=cunits, ref=cref, **bound)
        limits[var] = (kind, limit, cunits)
    if limit_takeoff_mass is None:
        limit_takeoff_mass = bool(scenario["limits"].get("enforce_max_takeoff_mass", False))
    if limit_takeoff_mass:
        model.add_constraint(MTOW_CONSTRAINT, lower=0.0, units="kg", ref=_MTOW_REF)
        limits[MTOW_CONSTRAINT] = ("lower", 0.0, "kg")
    if recorder_path:
        recorder = om.SqliteRecorder(str(recorder_path))
        prob.driver.add_recorder(recorder)
        prob.driver.recording_options["includes"] = ["*"]
        prob.driver.recording_options["record_desvars"] = True
        prob.driver.recording_options["record_objectives"] = True
        prob.driver.recording_options["record_constraints"] = True
    prob.setup(force_alloc_complex=force_alloc_complex)
    apply_scenario(prob, scenario)
    design_vars = {var: scenario["design_variables"][key] for key, (var, _, _, _)
                   in DESIGN_VARIABLES.items() if scenario["design_variables"][key]["optimize"]}
    if "fallback_design" in prob.driver.options:
        # a start the model cannot evaluate is moved towards the scenario's initial design (evaluable: the CLI
        # checks it before optimising) instead of ending the run
        prob.driver.options["fallback_design"] = {var: dv["initial"] for var, dv in design_vars.items()}
    return prob, BestCycleSettings(scenario=scenario, objective=objective, limits=limits, design_vars=design_vars)
