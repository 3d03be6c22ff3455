"""Gradient accuracy: analytic partials and totals, and forward finite differences, against complex step."""

import importlib
import inspect
import pkgutil
import time
import warnings

import numpy as np
import openmdao.api as om
from openmdao.utils.units import convert_units

import bypassopt.components
import bypassopt.problems
from benchmarks import FD_OPTIONS, natural_scales, robust_rel_error, set_inputs, target
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.gas.thermo import CaloricallyPerfectGas
from bypassopt.problems.aircraft_embedding import build_embedding_problem
from bypassopt.problems.best_cycle import build_evaluation_problem, build_installed_model
from bypassopt.scenario import load_scenario

#: Target: analytic derivatives agree with complex step to this robust relative error everywhere.
ANALYTIC_TARGET = 1.0e-8
#: Random points per component variant and per assembled problem (full run; ``quick`` uses 3).
NUM_POINTS = 20
QUICK_POINTS = 3
#: Nodes per component evaluation: the points are drawn NUM_NODES at a time.
NUM_NODES = 3
#: Half-width of the random band around each input's base value (+-20 %; see ``_perturb``); halved for a component
#: that rejects 40 draws in a row (its valid region is narrower than the band).
SPREAD = 0.2
REJECTIONS_BEFORE_NARROWING = 40
MAX_DRAWS = 400
SEED = 20250611
#: Complex-step size of the colored complex step of the assembled problems.
CS_STEP = 1.0e-40

#: Option variants that change a component's equations (the default options are always checked too).
#: Options in place of the defaults for components whose default options give them no variable to check.
def _two_value_case(k, comm):
    """A study case for ``CaseComp``'s check: two numbers that depend on the case number only."""
    return np.array([1.0, 2.0]) * (k + 1)


DEFAULT_OPTIONS = {
    "CaseComp": ("a two-value case", {"run_case": _two_value_case, "size": 2}),
    "FlightNodeBroadcastComp": ("two quantities", {"quantities": {"area8_design": (0.2, "m**2", "core nozzle area"),
                                                                  "W2_design": (200.0, "kg/s", "inlet flow")}}),
}

VARIANTS = {
    "FlightConditionComp": [("calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "InletComp": [("calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "FanComp": [("core-side PR input", {"core_side_ratio": "input"}),
                ("calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "CompressorComp": [
        ("booster 21->25 from PR", {"station_in": "21", "station_out": "25", "name": "booster", "ratio_from": "PR"}),
        ("HPC 25->3 from OPR", {"station_in": "25", "station_out": "3", "name": "hpc", "ratio_from": "OPR"}),
        ("HPC from OPR, calorically perfect gas", {"ratio_from": "OPR", "gas": CaloricallyPerfectGas()})],
    "SpoolPowerComp": [("LP spool", {"spool": "LP"})],
    "CoolingBleedComp": [("cooling correlation", {"cooling_model": "correlation"})],
    "BurnerComp": [("fuel mass neglected", {"include_fuel_mass": False}),
                   ("calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "CoolingMixComp": [
        ("rotor coolant 44->45", {"station_in": "44", "station_out": "45", "coolant_name": "cooling_frac_rotor"}),
        ("fuel mass neglected", {"include_fuel_mass": False}),
        ("calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "TurbineComp": [("LPT 45->5", {"station_in": "45", "station_out": "5", "name": "lpt", "spool": "LP"})],
    "DuctComp": [("core duct 5->7", {"station_in": "5", "station_out": "7", "name": "core_duct"})],
    "NozzleComp": [
        ("bypass 17->18", {"station_in": "17", "station_throat": "18", "stream": "bypass"}),
        ("core, full expansion", {"expansion": "full"}),
        ("bypass, full expansion", {"station_in": "17", "station_throat": "18", "stream": "bypass",
                                    "expansion": "full"}),
        ("core, calorically perfect gas", {"gas": CaloricallyPerfectGas()})],
    "EngineMassComp": [("no LP turbine term", {"include_lp_turbine": False})],
    "MissionFuelComp": [("four engines", {"num_engines": 4})],
    "AirframeDragComp": [("four engines", {"num_engines": 4})],
}

#: Assembled problems: outputs whose totals wrt the cycle choices are checked.
CYCLE_OF = ("TSFC", "Fn_specific", "W2", "Tt41", "Tt3", "W3_corrected", "jet_velocity_ratio")
INSTALLED_OF = ("installed_TSFC", "mission_fuel")
DESIGN_WRT = ("BPR", "FPR", "OPR", "Tt4")


def component_classes():
    """Every ``om.ExplicitComponent`` class defined in the shipped packages, {name: class}.

    Walks ``bypassopt.components`` and ``bypassopt.problems``; a module that fails to import is
    reported under the key ``'import error: <module>'`` with the message as value.
    """
    found = {}
    for package in (bypassopt.components, bypassopt.problems):
        for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
            try:
                module = importlib.import_module(info.name)
            except Exception as err:  # noqa: BLE001 - reported, not hidden
                found[f"import error: {info.name}"] = repr(err)
                continue
            for name, obj in inspect.getmembers(module, inspect.isclass):
                if (issubclass(obj, om.ExplicitComponent) and obj.__module__ == module.__name__
                        and not name.startswith("_")):
                    found[name] = obj
    return found


def base_values():
    """Input values of a converged, consistent operating point, {input name: (value, units)}.

    Taken from every component input of the demo installed engine (``build_evaluation_problem``) and
    of the demo aircraft-sizing loop (``build_embedding_problem``), keyed by the input's name inside
    its component (station-named, so a component evaluated alone finds its own inputs).
    """
    values = {}
    demo = build_evaluation_problem()
    aircraft = build_embedding_problem(optimize=False, force_alloc_complex=True)
    for prob in (demo, aircraft):
        prob.run_model()
        for abs_name, meta in prob.model.get_io_metadata(iotypes="input", metadata_keys=["units"]).items():
            values.setdefault(abs_name.rsplit(".", 1)[-1], (np.asarray(prob.get_val(abs_name)).copy(),
                                                            meta["units"]))
    return values


def build_component_problem(cls, options, num_nodes=NUM_NODES):
    """A set-up problem with one component (all inputs promoted, complex step allocated).

    Parameters
    ----------
    cls : type
        An ``om.ExplicitComponent`` subclass of bypassopt.
    options : dict
        Options passed to the component (``num_nodes`` is added).
    num_nodes : int
        Points evaluated at once.
    """
    prob = om.Problem(reports=False)
    kwargs = dict(options)
    if "num_nodes" in cls().options:
        kwargs["num_nodes"] = num_nodes
    prob.model.add_subsystem("comp", cls(**kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.final_setup()
    return prob


def _input_table(prob, base, num_nodes):
    """[(name, base value broadcast to the input's shape, units)] of every input of a component problem."""
    table = []
    for meta in prob.model.get_io_metadata(iotypes="input", metadata_keys=["units", "shape", "val"]).values():
        name, units, shape = meta["prom_name"], meta["units"], meta["shape"]
        value = np.asarray(meta["val"], dtype=float)
        if name in base:
            bval, bunits = base[name]
            bval = np.asarray(bval, dtype=float)
            if units and bunits and units != bunits:
                bval = convert_units(bval, bunits, units)
            value = np.broadcast_to(bval.ravel()[0] if bval.size != np.prod(shape) else bval, shape)
        table.append((name, np.array(value, dtype=float).reshape(shape), units))
    return table


def _perturb(rng, value, units, spread):
    """Random point within +-spread of ``value``.

    A dimensionless fraction in (0, 1) varies by +-spread of the smaller of itself and its complement
    (an efficiency of 0.92 by +-20 % of its 0.08 loss), so it stays inside (0, 1) and near its
    physical range.
    """
    u = spread * rng.uniform(-1.0, 1.0, value.shape)
    x = value * (1.0 + u)
    if units is None:
        near_one = (value >= 0.5) & (value < 1.0)
        x = np.where(near_one, 1.0 - (1.0 - value) * (1.0 + u), x)
    return x


def _outputs_finite(prob):
    return all(np.all(np.isfinite(meta["val"])) for _, meta in prob.model.list_outputs(val=True, out_stream=None))


def check_component(cls, options, base, num_points, rng):
    """Worst robust relative errors of analytic and FD partials vs complex step for one component variant.

    Draws random points (``NUM_NODES`` at a time) within +-``SPREAD`` of the base operating point until
    ``num_points`` have been accepted (a point the component rejects with ``om.AnalysisError`` is
    drawn again), and compares at each accepted draw.
    """
    prob = build_component_problem(cls, options)
    # Finite differences run on a second copy: in OpenMDAO 3.45, check_partials(method='fd') leaves its
    # approximations in the slots of constant partials (declared once with val=), so later checks of
    # the same problem would report those FD numbers as the "analytic" ones.
    prob_fd = build_component_problem(cls, options)
    table = _input_table(prob, base, NUM_NODES)
    spread, accepted, rejected, in_a_row, draws = SPREAD, 0, 0, 0, 0
    worst_an, worst_fd, worst_pair = 0.0, 0.0, None
    while accepted < num_points:
        draws += 1
        if draws > MAX_DRAWS:
            raise RuntimeError(f"{cls.__name__} {options}: no valid point in {MAX_DRAWS} draws")
        values = {name: _perturb(rng, value, units, spread) for name, value, units in table}
        for name, value in values.items():
            prob.set_val(name, value)
            prob_fd.set_val(name, value)
        try:
            prob.run_model()
            ok = _outputs_finite(prob)
        except om.AnalysisError:
            ok = False
        if not ok:
            rejected += 1
            in_a_row += 1
            if in_a_row >= REJECTIONS_BEFORE_NARROWING:
                spread, in_a_row = spread / 2.0, 0
            continue
        in_a_row = 0
        with warnings.catch_warnings():  # notes on partials declared but zero at this point
            warnings.simplefilter("ignore")
            cs = prob.check_partials(method="cs", out_stream=None)["comp"]
            prob_fd.run_model()
            fd = prob_fd.check_partials(method="fd", out_stream=None, **FD_OPTIONS)["comp"]
        ref = {key: d["J_fd"] for key, d in cs.items()}
        natural = natural_scales(ref, values)
        for key, d in cs.items():
            err_an = robust_rel_error(d["J_fwd"], d["J_fd"], natural[key])
            err_fd = robust_rel_error(fd[key]["J_fd"], d["J_fd"], natural[key])
            if err_an > worst_an:
                worst_an, worst_pair = err_an, key
            worst_fd = max(worst_fd, err_fd)
        accepted += NUM_NODES
    return {"analytic_vs_cs": worst_an, "fd_vs_cs": worst_fd, "worst_pair": worst_pair, "points": accepted,
            "rejected_draws": rejected, "spread": spread}


def design_points(rng, n):
    """Random design points in a feasible band: BPR 6-14, FPR in a band around 1 + 0.6 sqrt(10/BPR)
    (the optimum FPR falls as BPR rises), OPR 25-60, T4 1450-1800 K."""
    bpr = rng.uniform(6.0, 14.0, n)
    return {"BPR": bpr, "FPR": 1.0 + 0.6 * np.sqrt(10.0 / bpr) * rng.uniform(0.85, 1.1, n),
            "OPR": rng.uniform(25.0, 60.0, n), "Tt4": rng.uniform(1450.0, 1800.0, n)}


def build_assembled_problem(kind, num_nodes):
    """Set-up problem of the cycle ('cycle': TurbofanCycleGroup sized to 24 kN) or of the installed engine
    ('installed': InstalledEngineGroup of the demo scenario), ``num_nodes`` designs at once.

    The installed engine is wrapped in a parent group that sets a vector default for ``Mach0``: the
    group's own ``set_input_defaults('Mach0', 0.78)`` is a scalar, which OpenMDAO 3.45 refuses to
    promote onto ``num_nodes`` > 1 inputs.
    """
    scenario = load_scenario()
    prob = om.Problem(reports=False)
    if kind == "cycle":
        prob.model.add_subsystem("cycle", TurbofanCycleGroup(num_nodes=num_nodes), promotes=["*"])
    else:
        prob.model.add_subsystem("engine", build_installed_model(scenario, num_nodes), promotes=["*"])
        prob.model.set_input_defaults("Mach0", np.full(num_nodes, 0.78))
    prob.setup(force_alloc_complex=True)
    prob.set_solver_print(level=-1)
    set_inputs(prob, scenario, num_nodes, rename={"thrust_required": "Fn_required"} if kind == "cycle" else None)
    return prob


def colored_totals(prob, of, wrt, design):
    """Analytic, complex-step and forward-FD totals d(of)/d(wrt) at every node of a vectorized problem.

    Nodes are independent designs, so perturbing one design variable at every node at once gives each
    node's derivative in one evaluation (a diagonal coloring): one complex-step run
    (``Problem.set_complex_step_mode``) and one FD run per design variable. The analytic totals come
    from ``compute_totals``; their off-diagonal (cross-node) entries must be zero.
    Returns {(of, wrt): (analytic, cs, fd)} node vectors and the largest cross-node analytic entry.
    """
    for name, value in design.items():
        prob.set_val(name, value)
    prob.run_model()
    base = {name: np.array(prob.get_val(name)) for name in of}
    jac = prob.compute_totals(of=list(of), wrt=list(wrt))
    analytic, cross = {}, 0.0
    for key, block in jac.items():
        diag = np.diag(block).copy()
        analytic[key] = diag
        cross = max(cross, float(np.max(np.abs(block - np.diag(diag)))))
    cs, fd = {}, {}
    for w in wrt:
        x0 = np.array(prob.get_val(w))
        prob.set_complex_step_mode(True)
        prob.set_val(w, x0 + 1j * CS_STEP)
        prob.run_model()
        for o in of:
            cs[o, w] = np.imag(prob.get_val(o)) / CS_STEP
        prob.set_val(w, x0)
        prob.set_complex_step_mode(False)
        step = FD_OPTIONS["step"] * np.abs(x0)
        prob.set_val(w, x0 + step)
        prob.run_model()
        for o in of:
            fd[o, w] = (np.array(prob.get_val(o)) - base[o]) / step
        prob.set_val(w, x0)  # the next run starts from the perturbed solution and reconverges
    prob.run_model()
    return {key: (analytic[key], cs[key], fd[key]) for key in analytic}, cross


def check_assembled(kind, num_points, rng):
    """Worst robust relative errors of analytic and FD totals vs complex step at random design points."""
    of = CYCLE_OF if kind == "cycle" else INSTALLED_OF
    prob = build_assembled_problem(kind, num_points)
    for _ in range(20):
        design = design_points(rng, num_points)
        try:
            totals, cross = colored_totals(prob, of, DESIGN_WRT, design)
            break
        except om.AnalysisError:
            continue
    else:
        raise RuntimeError(f"{kind}: no feasible set of design points in 20 draws")
    worst_an = worst_fd = 0.0
    worst_pair = None
    for node in range(num_points):
        ref = {key: np.array([[cs[node]]]) for key, (_, cs, _) in totals.items()}
        natural = natural_scales(ref, {w: design[w][node] for w in DESIGN_WRT})
        for key, (an, cs, fd) in totals.items():
            e_an = robust_rel_error(an[node], cs[node], natural[key])
            if e_an > worst_an:
                worst_an, worst_pair = e_an, key
            worst_fd = max(worst_fd, robust_rel_error(fd[node], cs[node], natural[key]))
    return {"analytic_vs_cs": worst_an, "fd_vs_cs": worst_fd, "worst_pair": worst_pair, "points": num_points,
            "cross_node_max": cross}


def run(quick=False):
    """Check every component variant and both assembled problems; return the errors and the target verdict."""
    t0 = time.perf_counter()
    num_points = QUICK_POINTS if quick else NUM_POINTS
    rng = np.random.default_rng(SEED)
    base = base_values()
    classes = component_classes()
    import_errors = {k: v for k, v in classes.items() if k.startswith("import error")}
    components = {}
    for name, cls in sorted((k, v) for k, v in classes.items() if not k.startswith("import error")):
        for label, options in [DEFAULT_OPTIONS.get(name, ("defaults", {}))] + VARIANTS.get(name, []):
            components[f"{name} ({label})"] = check_component(cls, options, base, num_points, rng)
    assembled = {
        "TurbofanCycleGroup totals": check_assembled("cycle", max(num_points, 3), rng),
        "InstalledEngineGroup totals": check_assembled("installed", max(num_points, 3), rng),
    }
    everything = {**components, **assembled}
    worst_name = max(everything, key=lambda k: everything[k]["analytic_vs_cs"])
    worst = everything[worst_name]["analytic_vs_cs"]
    worst_fd_name = max(everything, key=lambda k: everything[k]["fd_vs_cs"])
    worst_fd = everything[worst_fd_name]["fd_vs_cs"]
    median_fd = float(np.median([v["fd_vs_cs"] for v in everything.values()]))
    covered = sorted({k.split(" (")[0] for k in components})
    rows = [
        ("component classes covered", f"{len(covered)} classes, {len(components)} variants", ""),
        ("points per variant / per assembled problem", f">= {num_points} / {max(num_points, 3)}", ""),
        ("worst analytic vs complex step", f"{worst:.1e}", worst_name),
        ("worst forward FD vs complex step", f"{worst_fd:.1e}", worst_fd_name),
        ("median over variants of the worst FD error", f"{median_fd:.1e}", ""),
        ("analytic vs complex step, cycle totals", f"{assembled['TurbofanCycleGroup totals']['analytic_vs_cs']:.1e}",
         f"FD {assembled['TurbofanCycleGroup totals']['fd_vs_cs']:.1e}"),
        ("analytic vs complex step, installed-engine totals",
         f"{assembled['InstalledEngineGroup totals']['analytic_vs_cs']:.1e}",
         f"FD {assembled['InstalledEngineGroup totals']['fd_vs_cs']:.1e}"),
    ]
    targets = [target("analytic derivatives within 1e-8 of complex step everywhere", f"{worst:.1e}",
                      f"<= {ANALYTIC_TARGET:.0e}", worst <= ANALYTIC_TARGET and not import_errors,
                      f"worst: {worst_name}" + (f"; import errors: {import_errors}" if import_errors else ""))]
    return {"benchmark": "gradient_accuracy", "quick": quick, "seconds": time.perf_counter() - t0,
            "fd_options": FD_OPTIONS, "components": _jsonable(components), "assembled": _jsonable(assembled),
            "import_errors": import_errors, "classes": covered, "rows": rows, "targets": targets}


def _jsonable(results):
    return {k: {kk: (list(vv) if isinstance(vv, tuple) else vv) for kk, vv in v.items()} for k, v in results.items()}


if __name__ == "__main__":  # pragma: no cover
    import json
    print(json.dumps(run(quick=True), indent=1, default=str))
