"""pyOptSparse through ``om.pyOptSparseDriver``: IPOPT and SLSQP on the demo, back-off, multipliers, recorders, CLI.

The driver machinery is tested on the demo with the design-point engine model and T4 held at 1650 K
(``DESIGN_POINT_DEMO``; a multipoint evaluation costs about 7 times a design-point one); one IPOPT run optimises the
demo's own multipoint model (``test_ipopt_on_the_multipoint_demo_meets_kkt``).

pyoptsparse is not on PyPI. Without it (or without cyipopt for IPOPT) these tests skip, with the reason; with
``BYPASSOPT_REQUIRE_PYOPTSPARSE=1`` in the environment (CI's pyOptSparse environment, see ``.ci/run``) they
fail instead, so they can never pass there by being skipped. The reference for every optimum is SciPy's SLSQP
(``make_driver('SLSQP')``) run side by side on the same problem; no stored number of the code's own output is
used.
"""

import importlib.util
import json
import subprocess
import sys
from dataclasses import dataclass

import numpy as np
import openmdao.api as om
import pytest

from bypassopt.components.validation import InputRangeError
from bypassopt.problems.best_cycle import build_best_cycle_problem
from bypassopt.problems.drivers import make_driver
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.problems.optimizer_multipliers import optimizer_multipliers
from bypassopt.report import optimum_summary
from bypassopt.scenario import design_point_scenario, load_scenario, validate

#: The pyOptSparse drivers of ``make_driver`` tested here, with the pyOptSparse optimizer each needs.
DRIVERS = {"IPOPT": "IPOPT", "pyoptsparse-SLSQP": "SLSQP"}
#: Optimum agreement with SciPy's SLSQP: mission fuel within 0.01 %, each design variable within 1e-4 (relative).
FUEL_RTOL = 1.0e-4
DESIGN_RTOL = 1.0e-4
#: IPOPT's own multipliers vs the least-squares KKT multipliers of ``kkt_analysis``.
MULTIPLIER_RTOL = 0.01
#: The demo with the design-point engine model and T4 held at 1650 K: the machinery under test here is the
#: driver's, not the engine model's.
DESIGN_POINT_DEMO = validate({"design_variables": {"Tt4_K": {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0,
                                                              "optimize": False}}},
                             base=design_point_scenario(load_scenario()))
#: A start near the edge of the region the design-point demo cannot evaluate (high BPR with high FPR leaves the
#: core nozzle no pressure ratio): from here IPOPT's first steps cross into it (the wall, found by bisection on
#: FPR at BPR 15, OPR 50, is at FPR 1.483; from FPR 1.42-1.45 IPOPT made 3 failed evaluations, measured).
EDGE_START = {"BPR": 15.0, "FPR": 1.45, "OPR": 50.0}
#: A start inside that region: the model raises at the start itself.
INSIDE_START = {"BPR": 14.0, "FPR": 1.75, "OPR": 40.0}
HAVE_MATPLOTLIB = importlib.util.find_spec("matplotlib") is not None
CLI_TIMEOUT_S = 300


@dataclass
class Run:
    """One optimisation of a best-cycle problem and what was read from it before ``prob.cleanup()``."""

    driver: str
    success: bool
    fuel: float
    design: dict
    summary: dict
    kkt: dict
    own_prices: object
    failures: int
    recorder: object
    inform: object


def _count_failures(prob):
    """Wrap the model's solve so that every ``om.AnalysisError`` the driver sees is counted; returns the list."""
    failures = []
    solve = prob.model.run_solve_nonlinear

    def counted():
        try:
            return solve()
        except om.AnalysisError as err:
            failures.append(str(err))
            raise

    prob.model.run_solve_nonlinear = counted
    return failures


def _optimize(driver, recorder=None, start=None, scenario=DESIGN_POINT_DEMO):
    prob, settings = build_best_cycle_problem(scenario, driver=driver, recorder_path=recorder, reports=False)
    failures = _count_failures(prob)
    for name, value in (start or {}).items():
        prob.set_val(name, value)
    result = prob.run_driver()
    solution = getattr(prob.driver, "pyopt_solution", None)
    run = Run(driver=driver, success=bool(result.success), fuel=float(prob.get_val("mission_fuel", units="kg")[0]),
              design={name: float(prob.get_val(name)[0]) for name in settings.design_vars},
              summary=optimum_summary(prob, settings, result) if result.success else {},
              kkt=kkt_analysis(prob, settings) if result.success else {},
              own_prices=optimizer_multipliers(prob, settings), failures=len(failures), recorder=recorder,
              inform=getattr(solution, "optInform", None))
    prob.cleanup()  # closes the recorder, so the file is complete
    return run


@pytest.fixture(scope="module")
def workdir(tmp_path_factory):
    """A scratch folder that module-scoped runs work in (OpenMDAO writes its output folders into the cwd)."""
    folder = tmp_path_factory.mktemp("pyoptsparse")
    with pytest.MonkeyPatch.context() as mp:
        mp.chdir(folder)
        yield folder


@pytest.fixture(scope="module")
def optimum(workdir):
    """``optimum(driver)``: the design-point demo optimised (and recorded) with that driver, once per module."""
    runs = {}

    def get(driver):
        if driver not in runs:
            runs[driver] = _optimize(driver, recorder=workdir / f"{driver}.sqlite")
        return runs[driver]

    return get


def _assert_same_optimum(run, ref):
    assert run.success, f"{run.driver}: {run.inform}"
    np.testing.assert_allclose(run.fuel, ref.fuel, rtol=FUEL_RTOL, err_msg=f"{run.driver}: mission fuel")
    for name, value in ref.design.items():
        np.testing.assert_allclose(run.design[name], value, rtol=DESIGN_RTOL, err_msg=f"{run.driver}: {name}")


@pytest.mark.parametrize("driver", list(DRIVERS))
def test_demo_optimum_equals_scipy_slsqp(driver, optimum, require_pyoptsparse):
    """IPOPT and pyOptSparse's SLSQP reach SciPy SLSQP's optimum of the design-point demo; the summaries agree
    (active limits, prices)."""
    require_pyoptsparse(DRIVERS[driver])
    ref, run = optimum("SLSQP"), optimum(driver)
    assert ref.success
    _assert_same_optimum(run, ref)
    assert run.summary["optimizer"]["driver"] == f"{DRIVERS[driver]} (pyoptsparse)"
    assert run.summary["optimizer"]["success"] and run.summary["optimizer"]["model_evaluations"] > 0
    for name, c in ref.summary["constraints"].items():
        own = run.summary["constraints"][name]
        assert own["active"] == c["active"], name
        if c["active"]:
            np.testing.assert_allclose(own["shadow_price"], c["shadow_price"], rtol=MULTIPLIER_RTOL, err_msg=name)
            assert own["statement"]
    assert any(c["active"] for c in ref.summary["constraints"].values())  # a constrained optimum: prices bite


def test_ipopt_multipliers_equal_kkt_shadow_prices(optimum, require_pyoptsparse):
    """IPOPT's own multipliers (``pyopt_solution.lambdaStar``, unscaled) equal ``kkt_analysis``'s within 1 %.

    Active limits: same shadow price and multiplier within 1 %; inactive ones: IPOPT's is zero to within
    1e-6 of the largest active price (an interior point method leaves them tiny, not exactly zero).
    """
    require_pyoptsparse("IPOPT")
    run = optimum("IPOPT")
    assert run.success and run.own_prices is not None
    assert set(run.own_prices) == set(run.kkt["constraints"])
    largest = max(abs(c["shadow_price"]) for c in run.kkt["constraints"].values())
    assert largest > 0.0
    for name, c in run.kkt["constraints"].items():
        own = run.own_prices[name]
        if c["active"]:
            np.testing.assert_allclose(own["shadow_price"], c["shadow_price"], rtol=MULTIPLIER_RTOL, err_msg=name)
            np.testing.assert_allclose(own["multiplier"], c["multiplier"], rtol=MULTIPLIER_RTOL, err_msg=name)
            assert own["multiplier"] > 0.0
        else:
            assert abs(own["shadow_price"]) < 1e-6 * largest, name
    # the summary carries the optimizer's own price beside the KKT one
    for name, c in run.summary["constraints"].items():
        assert c["optimizer_shadow_price"] == pytest.approx(run.own_prices[name]["shadow_price"], rel=1e-12)


def test_pyoptsparse_slsqp_and_scipy_keep_no_multipliers(optimum, require_pyoptsparse):
    """Where the optimizer returns no multipliers, ``optimizer_multipliers`` says so (None) rather than guessing."""
    require_pyoptsparse("SLSQP")
    assert optimum("SLSQP").own_prices is None
    assert optimum("pyoptsparse-SLSQP").own_prices is None


@pytest.mark.parametrize("driver", list(DRIVERS))
def test_case_reader_reads_the_pyoptsparse_recorder(driver, optimum, require_pyoptsparse, tmp_path):
    """``om.CaseReader`` reads the run's history.sqlite; its last driver case is the optimum; the plot reads it."""
    require_pyoptsparse(DRIVERS[driver])
    run = optimum(driver)
    cases = om.CaseReader(str(run.recorder)).get_cases("driver", recurse=False)
    assert len(cases) >= 3
    assert len({c.name for c in cases}) == len(cases)
    last = cases[-1]
    for name, value in run.design.items():
        np.testing.assert_allclose(float(np.real(last.get_design_vars()[name][0])), value, rtol=1e-10)
    np.testing.assert_allclose(float(last.get_val("mission_fuel", units="kg")[0]), run.fuel, rtol=1e-10)
    if HAVE_MATPLOTLIB:
        from bypassopt.plots import plot_convergence

        out = plot_convergence(run.recorder, tmp_path / "convergence.png")
        assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


class _WallComp(om.ExplicitComponent):
    """f = (x - x_min)^2, but the 'model' cannot be evaluated for x > 2.5 (raises like an impossible cycle)."""

    def initialize(self):
        self.options.declare("x_min", types=float)
        self.failures = 0
        self.good = []

    def setup(self):
        self.add_input("x", val=0.0)
        self.add_output("f", val=0.0)
        self.declare_partials("f", "x")

    def compute(self, inputs, outputs):
        if inputs["x"][0] > 2.5:
            self.failures += 1
            raise InputRangeError(f"x = {inputs['x'][0]:.4g} is outside the valid range (up to 2.5)")
        self.good.append(float(inputs["x"][0]))
        outputs["f"] = (inputs["x"] - self.options["x_min"]) ** 2

    def compute_partials(self, inputs, J):
        J["f", "x"] = 2.0 * (inputs["x"] - self.options["x_min"])


def _wall_run(driver, x_min):
    prob = om.Problem(reports=False)
    wall = prob.model.add_subsystem("wall", _WallComp(x_min=x_min), promotes=["*"])
    prob.model.add_design_var("x", lower=0.0, upper=10.0)
    prob.model.add_objective("f")
    prob.driver = make_driver(driver, maxiter=100, tol=1e-8)
    prob.setup()
    prob.set_val("x", 0.0)
    result = prob.run_driver()
    return result, float(prob.get_val("x")[0]), wall


@pytest.mark.parametrize("driver", list(DRIVERS))
def test_failed_evaluations_are_reported_so_the_optimizer_backs_off(driver, require_pyoptsparse):
    """``om.pyOptSparseDriver`` turns ``om.AnalysisError`` into pyOptSparse's failure flag by itself.

    min (x-2)^2 with the model raising beyond x = 2.5: the first step from x = 0 lands beyond the wall; it is
    reported as a failed evaluation (no exception reaches the caller), the optimizer shortens its step and
    converges to x = 2.
    """
    require_pyoptsparse(DRIVERS[driver])
    result, x, wall = _wall_run(driver, x_min=2.0)
    assert wall.failures >= 1
    assert result.success
    np.testing.assert_allclose(x, 2.0, atol=1e-6)


@pytest.mark.parametrize("driver", list(DRIVERS))
def test_an_optimum_beyond_the_wall_is_approached_and_never_a_false_success(driver, require_pyoptsparse):
    """min (x-3)^2 with the model raising beyond x = 2.5: the optimizer backs off repeatedly towards the wall.

    The evaluable designs it tries reach the wall (within 1e-6). The wall is no constraint the optimizer
    knows, so it may stop there with success (pyOptSparse's SLSQP) or give up (IPOPT: 'Invalid Number
    Detected' once its last step crosses); a success is only ever reported at an evaluable design.
    """
    require_pyoptsparse(DRIVERS[driver])
    result, x, wall = _wall_run(driver, x_min=3.0)
    assert wall.failures >= 1
    assert max(wall.good) > 2.5 - 1e-6
    if result.success:
        assert x <= 2.5


def test_ipopt_backs_off_from_the_region_the_model_cannot_evaluate(optimum, workdir, require_pyoptsparse):
    """From a start at the edge of the unevaluable region IPOPT steps into it, backs off, and converges.

    The steps that cross are reported failed (counted on the model's solve); the optimum is SciPy SLSQP's.
    """
    require_pyoptsparse("IPOPT")
    ref = optimum("SLSQP")
    run = _optimize("IPOPT", start=EDGE_START)
    assert run.failures >= 1
    _assert_same_optimum(run, ref)


def test_ipopt_start_inside_the_unevaluable_region_converges(optimum, workdir, require_pyoptsparse):
    """A start the model cannot evaluate is first moved towards the scenario's initial design (the driver's
    ``fallback_design``), then IPOPT converges to SciPy SLSQP's optimum."""
    require_pyoptsparse("IPOPT")
    run = _optimize("IPOPT", start=INSIDE_START)
    assert run.failures >= 1  # the start itself failed
    _assert_same_optimum(run, optimum("SLSQP"))


def test_plain_ipopt_cannot_start_inside_the_unevaluable_region(workdir, require_pyoptsparse):
    """Without a fallback design, a start the model cannot evaluate gives IPOPT no number to begin from: the run
    fails (IPOPT's 'Invalid Number Detected', -13), never a false optimum."""
    require_pyoptsparse("IPOPT")
    prob, _ = build_best_cycle_problem(DESIGN_POINT_DEMO, driver="IPOPT", reports=False)
    prob.driver.options["fallback_design"] = None
    for name, value in INSIDE_START.items():
        prob.set_val(name, value)
    result = prob.run_driver()
    assert not result.success
    assert prob.driver.pyopt_solution.optInform.value == -13


def _bypassopt(*args, cwd):
    return subprocess.run([sys.executable, "-m", "bypassopt.cli", *map(str, args)], cwd=cwd, capture_output=True,
                          text=True, timeout=CLI_TIMEOUT_S)


#: The design-point demo with T4 held (as ``DESIGN_POINT_DEMO``), a coarse carpet (the carpet around the optimum is
#: drawn for carpet.png) and a chosen driver.
CLI_SCENARIO = """\
[optimizer]
driver = "{driver}"
model = "design_point"

[design_variables]
Tt4_K = {{ initial = 1650.0, lower = 1400.0, upper = 1850.0, optimize = false }}

[carpet]
BPR_values = [8.0, 10.0, 12.0]
OPR_values = [35.0, 45.0, 55.0]
FPR_mode = "fixed"
"""


@pytest.mark.parametrize("how", ["scenario", "option"])
def test_cli_optimize_with_ipopt_and_pyoptsparse_slsqp(how, optimum, require_pyoptsparse, tmp_path):
    """``bypassopt optimize`` with ``[optimizer] driver = "IPOPT"`` and with ``--driver pyoptsparse-SLSQP``.

    Exit 0; optimum.json holds SciPy SLSQP's optimum, its shadow prices and the driver's name; history.sqlite
    reads with ``om.CaseReader``; with matplotlib, convergence.png and carpet.png are written (IPOPT run only: the
    carpet around the optimum, about half of the command's time, does not depend on the driver, and the convergence
    plot of both drivers' recorders is ``test_case_reader_reads_the_pyoptsparse_recorder``).
    """
    driver = "IPOPT" if how == "scenario" else "pyoptsparse-SLSQP"
    require_pyoptsparse(DRIVERS[driver])
    ref = optimum("SLSQP")
    (tmp_path / "s.toml").write_text(CLI_SCENARIO.format(driver=driver if how == "scenario" else "SLSQP"))
    args = ["optimize", "--scenario", "s.toml", "--out", "res", "--json"]
    if how == "option":
        args += ["--driver", driver]
    plots = HAVE_MATPLOTLIB and how == "scenario"
    if not plots:
        args.append("--no-plots")
    done = _bypassopt(*args, cwd=tmp_path)
    assert done.returncode == 0, done.stderr[-3000:]
    res = tmp_path / "res"
    summary = json.loads((res / "optimum.json").read_text())
    assert summary["optimizer"]["driver"] == f"{DRIVERS[driver]} (pyoptsparse)"
    np.testing.assert_allclose(summary["objective"]["value"], ref.fuel, rtol=FUEL_RTOL)
    for name, value in ref.design.items():
        np.testing.assert_allclose(summary["quantities"][name]["value"], value, rtol=DESIGN_RTOL, err_msg=name)
    for name, c in ref.summary["constraints"].items():
        if c["active"]:
            np.testing.assert_allclose(summary["constraints"][name]["shadow_price"], c["shadow_price"],
                                       rtol=MULTIPLIER_RTOL, err_msg=name)
    cases = om.CaseReader(str(res / "history.sqlite")).get_cases("driver", recurse=False)
    assert cases
    if plots:
        for png in ("convergence.png", "carpet.png"):
            assert (res / png).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", png


def test_trade_curve_runs_with_ipopt(optimum, require_pyoptsparse, workdir):
    """The trade study re-optimises with the scenario's driver: with IPOPT it reaches SciPy SLSQP's optimum where
    the swept nacelle-diameter limit does not bind, and reports the run the same way (message, evaluations)."""
    require_pyoptsparse("IPOPT")
    from bypassopt.problems.trade_curve import run_trade_curve

    scenario = validate({"optimizer": {"driver": "IPOPT"}}, base=DESIGN_POINT_DEMO)
    result = run_trade_curve(scenario, "max_nacelle_diameter_m", [2.2, 2.4], refine=0)
    assert all(p["success"] for p in result["points"])
    slack = result["points"][-1]
    np.testing.assert_allclose(slack["objective"], optimum("SLSQP").fuel, rtol=FUEL_RTOL)
    assert slack["iterations"] is None and slack["message"]


def test_embedding_problem_runs_with_ipopt(require_pyoptsparse, workdir):
    """The aircraft-level embedding problem (engine inside an aircraft sizing loop) optimises with IPOPT to the
    same mission fuel as with SciPy SLSQP, within the optimizers' tolerances (design-point demo)."""
    require_pyoptsparse("IPOPT")
    from bypassopt.problems.aircraft_embedding import build_embedding_problem

    fuels = {}
    for driver in ("SLSQP", "IPOPT"):
        prob = build_embedding_problem(optimize=True, scenario=DESIGN_POINT_DEMO, driver=driver, reports=False)
        assert prob.run_driver().success, driver
        fuels[driver] = float(prob.get_val("mission_fuel", units="kg")[0])
    np.testing.assert_allclose(fuels["IPOPT"], fuels["SLSQP"], rtol=FUEL_RTOL)


def test_ipopt_on_the_multipoint_demo_meets_kkt(workdir, require_pyoptsparse):
    """The one multipoint run: IPOPT on the demo's own model (top of climb, hot-day take-off, mid-cruise; T4 free)
    converges to a KKT point (``kkt_analysis``: projected gradient, non-negative multipliers; Nocedal and Wright,
    thm 12.1) with the take-off T41 and T3 limits among its constraints and every limit met; IPOPT's own
    multipliers equal the KKT ones as in ``test_ipopt_multipliers_equal_kkt_shadow_prices``."""
    require_pyoptsparse("IPOPT")
    scenario = load_scenario()
    run = _optimize("IPOPT", scenario=scenario)
    assert run.success, run.inform
    assert {"takeoff:Tt41", "takeoff:Tt3"} <= set(run.kkt["constraints"])
    assert set(run.design) == {"BPR", "FPR", "OPR", "Tt4"}
    assert run.kkt["projected_gradient"] < 1e-3 and run.kkt["dual_feasible"]
    assert not any(c["violated"] for c in run.kkt["constraints"].values())
    active = [name for name, c in run.kkt["constraints"].items() if c["active"]]
    assert active  # a constrained optimum, so the multipliers are tested
    largest = max(abs(c["shadow_price"]) for c in run.kkt["constraints"].values())
    for name, c in run.kkt["constraints"].items():
        own = run.own_prices[name]
        if c["active"]:
            assert c["multiplier"] > 0.0
            np.testing.assert_allclose(own["multiplier"], c["multiplier"], rtol=MULTIPLIER_RTOL, err_msg=name)
        else:
            assert abs(own["shadow_price"]) < 1e-6 * largest, name
