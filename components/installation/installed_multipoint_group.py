"""Installed engine designed at top of climb, checked at a hot-day take-off and flown at mid-cruise."""

from contextlib import contextmanager

import numpy as np
import openmdao.api as om

from bypassopt.components.coupled_solver import CheckedNewtonSolver, last_solve_succeeded, set_coupled_solvers
from bypassopt.components.cycle.cooling_comp import CoolingBleedComp
from bypassopt.components.cycle.flow_capacity_comp import FlowCapacityComp
from bypassopt.components.cycle.multipoint_group import COOLING_INPUTS, SHARED_INPUTS
from bypassopt.components.cycle.off_design_group import GEOMETRY, OffDesignGroup
from bypassopt.components.defaults import INPUT_DEFAULTS
from bypassopt.components.interface import ALL_PLAIN, InterfaceGroup
from bypassopt.components.mission.cruise_thrust_comp import CruiseThrustComp
from bypassopt.components.mission.mission_fuel_comp import MissionFuelComp
from bypassopt.components.options import declare_gas, declare_num_nodes

from .installed_engine_group import INTERFACE_OUTPUTS, MISSION_OUTPUTS, InstalledEngineGroup
from .installed_performance_comp import InstalledPerformanceComp
from .nacelle_drag_comp import _INPUTS as DRAG_INPUTS
from .nacelle_drag_comp import NacelleDragComp

#: The off-design points and their default flight condition (the demo's, shared/scenario.md; invented):
#: name -> {input: (value, units)}.
POINT_DEFAULTS = {
    "takeoff": {"altitude": (0.0, "m"), "Mach0": (0.25, None), "dT_isa": (15.0, "K"), "Fn_required": (105.0e3, "N")},
    "cruise": {"altitude": (10668.0, "m"), "Mach0": (0.78, None), "dT_isa": (0.0, "K")},
}
TAKEOFF, CRUISE = "takeoff", "cruise"

#: Outputs of each off-design point promoted as ``<point>:<name>``.
POINT_OUTPUTS = ("Tt41", "Tt3", "Tt4", "TSFC", "FPR", "OPR", "BPR", "W2", "fuel_flow", "Fn_specific",
                 "W3_corrected", "V0", "q0", "Re_per_m0")

#: Cruise installation outputs promoted as ``cruise:<name>``.
CRUISE_INSTALLED_OUTPUTS = ("nacelle_drag", "installed_thrust", "installed_TSFC")

#: Jet states the nacelle drag reads: drag-component input -> cruise cycle output (fully expanded bypass jet for
#: the core cowl, core jet for the plug).
JET_INPUTS = {"V18_jet": "V18_full", "rho18_jet": "rho18_full", "Ts18_jet": "Ts18_full", "Mach18_jet": "Mach18_full",
              "V8_jet": "V8_full", "rho8_jet": "rho8_full", "Ts8_jet": "Ts8_full", "Mach8_jet": "Mach8_full"}

#: Cooling fractions sized at take-off: ``CoolingBleedComp`` output suffix -> cycle input they set at every point.
COOLING_FRACS = (("vane", "hpt_vane_cooling_frac"), ("rotor", "hpt_rotor_cooling_frac"))

#: Start value of the cruise thrust (first solve, or after a failed one) as a fraction of the top-of-climb thrust
#: requirement: cruise needs less thrust than the end of climb (common practice; about 0.8 on the demo).
CRUISE_THRUST_GUESS = 0.85

#: Outer Newton (couplings between the points: cooling sized at take-off, cruise thrust from the mission).
OUTER_ATOL = 1e-8
OUTER_RTOL = 1e-12
OUTER_MAXITER = 15
OUTER_SUB_SOLVES = 0
#: Block Gauss-Seidel linear solver of the outer Newton with ``parallel_points`` (OpenMDAO allows no DirectSolver above
#: a ParallelGroup). It gains about a decade an iteration (measured on the demo: 13-17 iterations to rtol) and stalls
#: at round-off, about 2e-12 in the residual norm (measured, 2 nodes): the absolute tolerance (times sqrt(num_nodes))
#: lies above that floor, and both lie far below what changes results or totals at 1e-10 (tests/mpi).
PARALLEL_LINEAR_ATOL = 1e-11
PARALLEL_LINEAR_RTOL = 1e-12
PARALLEL_LINEAR_MAXITER = 60


class WarmOuterNewtonSolver(CheckedNewtonSolver):
    """Outer Newton of the multipoint group: after a converged solve, the next starts without the sub-solves.

    From a converged state (an optimizer's next design, a small step away) one Newton on every point's states at
    once needs no first pass of each point's own solver (measured on the demo: the first pass was half the cost of
    an evaluation). Where that warm solve fails, the states are put back and the solve is repeated with the
    first pass (``solve_subsystems``), whose point solvers restart from their own converged states; so the warm
    path changes the cost, not the answer or the robustness. Under complex step the plain solve runs.
    """

    def solve(self):
        """Solve warm (no first sub-solve pass) after a converged solve; on failure, again with the first pass."""
        system = self._system()
        if self.last_solve_failed is not False or system.under_complex_step:
            return super().solve()
        start = system._outputs.asarray(copy=True)
        self.options["solve_subsystems"] = False
        try:
            return super().solve()
        except om.AnalysisError:
            system._outputs.set_val(start)
            self.last_solve_failed = False  # the first pass restarts from the converged states, not a guess
        finally:
            self.options["solve_subsystems"] = True
        return super().solve()


@contextmanager
def _fail_together(comm):
    """Raise on every process of ``comm`` the exception that any of them raised inside (the lowest rank's).

    Under MPI a failure on one process (a point that cannot be matched, an input out of range) would otherwise
    leave the others waiting in the next collective call. Outside MPI, or on one process, nothing is added.
    The exception keeps its class and message (``InputRangeError`` stays one); one that cannot be sent is
    raised as ``om.AnalysisError`` with its message.
    """
    if comm is None or comm.size == 1:
        yield
        return
    error = None
    try:
        yield
    except Exception as err:  # every exception is shared, then raised again
        error = err
    try:
        errors = comm.allgather(error)
    except Exception:  # an exception that cannot be pickled is sent as its text
        errors = comm.allgather(None if error is None else om.AnalysisError(f"{type(error).__name__}: {error}"))
    failed = [(rank, err) for rank, err in enumerate(errors) if err is not None]
    if failed:
        rank, first = failed[0]
        if error is not None and comm.rank == rank:
            raise error
        raise first


class ParallelPointsGroup(om.ParallelGroup):
    """``om.ParallelGroup`` of the off-design points that fails on every process when one point fails.

    Under MPI each point runs on its own processes. Solving already shares an ``om.AnalysisError`` between the
    processes (OpenMDAO's run-once solver); evaluating residuals and linearising (the multipoint group's outer
    Newton calls them directly) share any exception through ``_fail_together``, so that the outer solver's
    retry (``WarmOuterNewtonSolver``) and an optimizer's back-off run in step on every process.
    """

    def _apply_nonlinear(self):
        with _fail_together(self.comm):
            super()._apply_nonlinear()

    def _solve_nonlinear(self):
        with _fail_together(self.comm):
            super()._solve_nonlinear()

    def _linearize(self, *args, **kwargs):
        with _fail_together(self.comm):
            super()._linearize(*args, **kwargs)


class _FailTogetherChecks(CheckedNewtonSolver):
    """``CheckedNewtonSolver`` whose every solve fails on all processes of the group or on none (``_fail_together``).

    A validity range judged on the converged state of a point on another process raises there only; shared, it
    raises everywhere. The group's ``after_converged_solve`` only marks the solve (``_converged_pending``); the
    points remember their converged states once every process has passed its checks, as in the serial group.
    """

    def solve(self):
        """Solve; raise on every process what any of them raised; then let the points remember their states."""
        system = self._system()
        system._converged_pending = False
        with _fail_together(system.comm):
            super().solve()
        if system._converged_pending:
            system._converged_pending = False
            system._remember_points()


class ParallelOuterNewtonSolver(WarmOuterNewtonSolver, _FailTogetherChecks):
    """``WarmOuterNewtonSolver`` for points in a ``ParallelPointsGroup``: every process fails or none.

    Each try (warm, then with the first pass) fails on every process or on none, so the retry runs in step
    (``_FailTogetherChecks``).
    """


class InstalledMultipointGroup(InterfaceGroup):
    r"""One installed engine per node: designed at top of climb, checked at take-off, flown at mid-cruise.

    **Design point** (subsystem ``design``, names without prefix): ``InstalledEngineGroup`` without its
    mission (top of climb: the cycle design and sizing point, common practice; inputs ``altitude``,
    ``Mach0``, ``dT_isa``, ``thrust_required``, the cycle choices ``BPR``, ``FPR``, ``OPR``, ``Tt4``, every
    engine and installation input) plus ``FlowCapacityComp``, whose outputs fix the engine's geometry: HPT
    and LPT nozzle-guide-vane flow capacities, nozzle throat areas, booster temperature-rise ratio. Its
    outputs keep their plain names (``Tt41``, ``Tt3``, ``installed_TSFC``, ``clearance_margin``,
    ``powerplant_mass``, ...): they are the top-of-climb values.

    **Take-off point** (subsystem ``takeoff``; inputs ``takeoff:altitude``, ``takeoff:Mach0``,
    ``takeoff:dT_isa`` and the uninstalled net thrust per engine ``takeoff:Fn_required``): the designed
    engine matched map-free (``OffDesignGroup``, power set by the thrust; field-reference 12.2). Outputs
    ``takeoff:Tt41``, ``takeoff:Tt3``, ``takeoff:Tt4``, ... (``POINT_OUTPUTS``). A hot-day take-off is where
    the turbine-entry and compressor-exit temperatures bind (common practice).

    **Turbine cooling** is sized at the take-off point: ``CoolingBleedComp`` (correlation) at ``takeoff:Tt3``
    and ``takeoff:Tt4`` gives one pair of fractions (the cooling holes are geometry) used at every point.

    **Cruise point** (subsystem ``cruise``; inputs ``cruise:altitude``, ``cruise:Mach0``, ``cruise:dT_isa``):
    the same engine matched at the thrust the airframe needs at mid-cruise plus its own nacelle drag at the
    cruise condition. ``CruiseThrustComp`` gives the airframe drag per engine at half the design range
    (weight over L/D; ``cruise:thrust_required``); ``NacelleDragComp`` (subsystem ``cruise_drag``) the nacelle
    drag with the design's nacelle geometry, the cruise flight condition and the cruise jets;
    ``InstalledPerformanceComp`` (``cruise_installed``) books it as a thrust debit: ``cruise:Fn_required`` =
    ``cruise:thrust_required + cruise:nacelle_drag``, ``cruise:installed_TSFC``.

    **Mission** (``MissionFuelComp``, jet Breguet in closed form): the cruise is flown at the cruise point's
    installed TSFC and true airspeed (``cruise:V0``), i.e. one Breguet segment whose TSFC is taken at the
    mid-cruise mass. Outputs ``mission_fuel``, ``takeoff_mass``, ``mtow_margin``, ``cruise_fuel``, ...
    The mission and the cruise thrust form a loop (the fuel sets the mass, the mass the thrust, the thrust
    the TSFC), as do the cooling and the design; one Newton solver (``om.DirectSolver``) closes both,
    re-converging every point's own solver inside each iteration (``max_sub_solves``), so total derivatives
    are taken through every point.

    **Promotion** (``InterfaceGroup``, as ``InstalledEngineGroup``): by default the free inputs and the documented
    outputs (``interface_outputs``) under the prefix ``'engine:'`` (``engine:takeoff:Tt41``); every station by its
    path (``engine.model.takeoff.Pt3``). ``expose='all', name_prefix=''`` gives the plain names used above.

    **Parallel points** (option ``parallel_points``, default False): the take-off and cruise points sit in an
    ``om.ParallelGroup`` ``points`` (``ParallelPointsGroup``) and the cooling sizing runs after both; under MPI
    (``mpiexec -n 2``, petsc4py installed) each point runs on its own processes, the design point and the rest on
    all. Every promoted name stays (``takeoff:Tt41``, ``cruise.V18_full``); results and total derivatives equal the
    serial model's within 1e-10 (``tests/mpi``). OpenMDAO allows no ``DirectSolver`` above a parallel group, so the
    outer Newton's linear solver is then block Gauss-Seidel over the subsystems, each solved by its own direct
    solver (``PARALLEL_LINEAR_*``). A failure on one process is raised on all (``_fail_together``), so the warm
    retry and an optimizer's back-off stay in step; the validity checks of an enclosing solver see only the
    records of their own process.

    Nodes are independent engine designs (``num_nodes``); the points are flight conditions of one engine.
    Raises ``om.AnalysisError`` where a point cannot be matched (naming the point and cause, from
    ``OffDesignGroup`` and the elements' range checks).
    """

    def initialize(self):
        """Declare options."""
        super().initialize()
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("num_engines", types=int, default=2, desc="engines on the aircraft")
        self.options.declare("gearbox", types=bool, default=False,
                             desc="fan reduction gearbox between LP turbine and fan (InstalledEngineGroup)")
        self.options.declare("parallel_points", types=bool, default=False,
                             desc="place the take-off and cruise points in an om.ParallelGroup 'points' (under "
                                  "MPI each point on its own processes; same promoted names, results and "
                                  "derivatives); the outer Newton then solves with an assembled (sparse) "
                                  "Jacobian")

    def interface_outputs(self):
        """Return the documented outputs: the design point's, each point's, the cruise installation's, the mission's."""
        points = tuple(f"{p}:{k}" for p in (TAKEOFF, CRUISE) for k in POINT_OUTPUTS)
        cruise = tuple(f"{CRUISE}:{k}" for k in CRUISE_INSTALLED_OUTPUTS + ("thrust_required", "mid_cruise_mass"))
        return INTERFACE_OUTPUTS + MISSION_OUTPUTS + points + cruise

    def build(self):
        """Assemble the points, the cooling sizing, the cruise installation and the mission."""
        nn = self.options["num_nodes"]
        gas = self.options["gas"]
        n_eng = self.options["num_engines"]
        ones = np.ones(nn)

        design = om.Group()
        design.add_subsystem("engine", InstalledEngineGroup(num_nodes=nn, gas=gas, include_mission=False, **ALL_PLAIN,
                                                            cooling_model="given", num_engines=n_eng,
                                                            gearbox=self.options["gearbox"]),
                             promotes=["*"])
        design.add_subsystem("capacity", FlowCapacityComp(num_nodes=nn), promotes=["*"])
        self.add_subsystem("design", design, promotes=["*"])

        parallel = self.options["parallel_points"]
        parent = self.add_subsystem("points", ParallelPointsGroup(), promotes=["*"]) if parallel else self
        for point in (TAKEOFF, CRUISE):
            p_in = list(SHARED_INPUTS) + [(k, f"{point}:{k}") for k in ("altitude", "Mach0", "dT_isa", "Fn_required")]
            p_in += [(f"{k}_design", k) for k in GEOMETRY]
            p_in += [(f"{k}_design", k) for k in ("FPR", "OPR", "BPR", "booster_PR", "Tt4", "Tt2", "Pt2")]
            p_in += [("Fn_design", "Fn_required")]
            # warm start: an optimizer's next design starts from this one's match (1e-10 the same, fewer steps)
            parent.add_subsystem(point, OffDesignGroup(num_nodes=nn, gas=gas, power_setting="thrust",
                                                       warm_start=True),
                                 promotes_inputs=p_in,
                                 promotes_outputs=[(k, f"{point}:{k}") for k in POINT_OUTPUTS])
            if point == TAKEOFF and not parallel:
                self._add_cooling_sizing()
        if parallel:  # the cooling is sized after both points (they run at once); the outer Newton closes the loop
            self._add_cooling_sizing()

        drag = NacelleDragComp(num_nodes=nn)
        drag_inputs = [n for n, *_ in DRAG_INPUTS if n not in ("q0", "Mach0", "Re_per_m0")]
        self.add_subsystem("cruise_drag", drag,
                           promotes_inputs=[n for n in drag_inputs if n not in JET_INPUTS]
                           + [("q0", "cruise:q0"), ("Mach0", "cruise:Mach0"), ("Re_per_m0", "cruise:Re_per_m0")],
                           promotes_outputs=[("nacelle_drag", "cruise:nacelle_drag")])
        self.add_subsystem("cruise_installed", InstalledPerformanceComp(num_nodes=nn),
                           promotes_inputs=[(k, f"cruise:{k}") for k in ("nacelle_drag", "W2", "Fn_specific",
                                                                           "fuel_flow", "thrust_required")],
                           promotes_outputs=[(k, f"cruise:{k}") for k in ("Fn_required", "installed_thrust",
                                                                            "installed_TSFC")])
        self.add_subsystem("mission", MissionFuelComp(num_nodes=nn, num_engines=n_eng),
                           promotes_inputs=["*", ("installed_TSFC", "cruise:installed_TSFC"),
                                            ("cruise_speed", "cruise:V0")],
                           promotes_outputs=["*"])
        self.add_subsystem("cruise_thrust", CruiseThrustComp(num_nodes=nn, num_engines=n_eng),
                           promotes_inputs=["*"],
                           promotes_outputs=[("cruise_thrust_required", "cruise:thrust_required"),
                                             ("mid_cruise_mass", "cruise:mid_cruise_mass")])

        # ('points' promotes everything: its points' unpromoted variables keep the names 'cruise.V18_full', ...)
        for jet_in, cycle_out in JET_INPUTS.items():
            self.connect(f"{CRUISE}.{cycle_out}", f"cruise_drag.{jet_in}")

        for _, target in COOLING_FRACS:  # the design point reads them by name
            for t in (f"{TAKEOFF}.{target}", f"{CRUISE}.{target}"):
                self.connect(target, t)

        for name, (value, units) in INPUT_DEFAULTS.items():
            self.set_input_defaults(name, value * ones, units=units)
        for point, inputs in POINT_DEFAULTS.items():
            for name, (value, units) in inputs.items():
                self.set_input_defaults(f"{point}:{name}", value * ones, units=units)
        self.set_input_defaults("Mach0", 0.78 * ones)

        set_coupled_solvers(self, "newton", nn, maxiter=OUTER_MAXITER,
                            newton_class=ParallelOuterNewtonSolver if parallel else WarmOuterNewtonSolver)
        newton = self.nonlinear_solver
        newton.options["atol"] = OUTER_ATOL * np.sqrt(nn)
        newton.options["rtol"] = OUTER_RTOL
        newton.options["max_sub_solves"] = OUTER_SUB_SOLVES
        if parallel:
            # OpenMDAO allows no DirectSolver above a ParallelGroup: block Gauss-Seidel over the subsystems, each
            # solved by its own direct solver (the couplings between them, cooling and cruise thrust, are weak)
            self.linear_solver = om.LinearBlockGS(maxiter=PARALLEL_LINEAR_MAXITER,
                                                  atol=PARALLEL_LINEAR_ATOL * np.sqrt(nn), rtol=PARALLEL_LINEAR_RTOL,
                                                  iprint=-1, err_on_non_converge=True)

    def _add_cooling_sizing(self):
        """Add the cooling sizing at the take-off point's Tt3 and Tt4."""
        nn, gas = self.options["num_nodes"], self.options["gas"]
        self.add_subsystem("cooling_sizing", CoolingBleedComp(num_nodes=nn, gas=gas, cooling_model="correlation"),
                           promotes_inputs=list(COOLING_INPUTS) + ["customer_bleed_frac"],
                           promotes_outputs=[(f"cooling_frac_{f}", target) for f, target in COOLING_FRACS])
        self.connect("takeoff:Tt3", "cooling_sizing.Tt3")
        self.connect("takeoff:Tt4", "cooling_sizing.Tt4")

    def _points(self):
        """Return the off-design point groups on this process (under MPI with ``parallel_points``, the local ones)."""
        parent = self.points if self.options["parallel_points"] else self
        return [sub for sub in (getattr(parent, p) for p in (TAKEOFF, CRUISE)) if sub._is_local]

    def _remember_points(self):
        """Keep each local point's current (converged) state as the start of its next match."""
        for point in self._points():
            point._remember_solution()

    def after_converged_solve(self):
        """Keep each point's state of the converged multipoint solve as the start of its next match.

        The points' own solvers run only in the outer Newton's first pass (``OUTER_SUB_SOLVES``); the outer
        iterations then move their states (cooling, cruise thrust). Without this the next evaluation would start
        each match from the first pass's solution (measured: five Newton steps per point for an unchanged design
        instead of none). Called by the outer solver (``coupled_solver``) after it converged; nothing under
        complex step. With ``parallel_points`` the solver (``_FailTogetherChecks``) does it once every process has
        passed its checks.
        """
        if self.options["parallel_points"]:
            self._converged_pending = True
            return
        self._remember_points()

    def guess(self, inputs, outputs, residuals):
        """Start the cruise thrust from ``CRUISE_THRUST_GUESS`` x the design thrust unless the last solve converged.

        The cruise point is matched before its thrust is known (the mission that sets it comes after it in the
        first Gauss-Seidel pass); a start near the answer keeps that first match inside the engine's operating
        range. After a converged solve the previous solution is the start. Nothing is done under complex step.
        """
        if self.under_complex_step or last_solve_succeeded(self):
            return
        outputs["cruise:Fn_required"] = CRUISE_THRUST_GUESS * np.real(inputs["thrust_required"])
