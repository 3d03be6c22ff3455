"""Off-design performance of a designed separate-exhaust turbofan, matched without component maps."""

import numpy as np
import openmdao.api as om

from bypassopt.components.coupled_solver import CheckedNewtonSolver, last_solve_succeeded
from bypassopt.components.options import declare_gas, declare_num_nodes

from .cycle_group import TurbofanCycleGroup
from .flow_capacity_comp import FlowCapacityComp

#: Engine geometry an off-design point holds: FlowCapacityComp output -> (units, description).
GEOMETRY = {
    "W4_corrected": ("kg/s", "HPT nozzle-guide-vane flow capacity (corrected flow at station 4)"),
    "W45_corrected": ("kg/s", "LPT nozzle-guide-vane flow capacity (corrected flow at station 45)"),
    "area8": ("m**2", "core nozzle geometric throat area"),
    "area18": ("m**2", "bypass nozzle geometric throat area"),
    "booster_temperature_rise_ratio": (None, "booster to fan core-side temperature-rise ratio"),
}

#: Newton states and their design-point start values: state -> (units, lower bound, upper bound, default).
STATES = {
    "FPR": (None, 1.0 + 1e-6, 4.0, 1.5),
    "OPR": (None, 2.0, 100.0, 40.0),
    "BPR": (None, 0.5, 30.0, 10.0),
    "booster_PR": (None, 1.0, 6.0, 1.8),
    "Fn": ("N", 1.0, 1.0e7, 24.0e3),
    "Tt4": ("K", 500.0, 2400.0, 1650.0),
}

#: Newton tolerances: the match residuals are normalised (BalanceComp), so these are near-relative.
NEWTON_ATOL = 1e-8
NEWTON_RTOL = 1e-12
NEWTON_MAXITER = 25
LINESEARCH_MAXITER = 10
#: A solve whose match balances fall by less than STALL_DECREASE (relative) in STALL_ITERATIONS successive Newton
#: iterations has stalled (no operating point near, or a state held at its bound) and stops with AnalysisError.
STALL_DECREASE = 0.01
STALL_ITERATIONS = 3

#: Constant-gamma start-value relations (guess_nonlinear only): gamma, polytropic efficiency, Tt4/Tt41.
GUESS_GAMMA = 1.4
GUESS_EFF_POLY = 0.9
GUESS_T4_OVER_T41 = 1.03
GUESS_SWEEPS = 4

#: Continuation in the power setting (``MatchNewtonSolver``, used where the direct solve fails): first step as a
#: fraction of the way from the corrected reference point to the requested power, the smallest step tried, the
#: growth of a step after a converged one, and the most Newton solves one continuation may take.
CONTINUATION_FIRST_STEP = 0.25
CONTINUATION_MIN_STEP = 1.0 / 64.0
CONTINUATION_GROWTH = 1.5
CONTINUATION_MAX_SOLVES = 12


class MatchLineSearch(om.ArmijoGoldsteinLS):
    """Backtracking line search judged on the match balances of a consistent cycle (``OffDesignGroup``).

    Every trial point (the full Newton step first, then halved) moves all outputs by the step, runs one
    Gauss-Seidel pass in flow order (every element recomputed from the moved states) and evaluates the
    residuals; the sufficient-decrease test (Armijo) reads the norm of the match balances only. The
    balances are normalised by their design values (``om.BalanceComp``), whereas the group's residual
    vector also holds the explicit residual of the HP spool power demand (J/kg), which reads ``W2`` from
    the previous pass (the HP offtake per unit flow closes a loop through ``W2``): judged on that norm, a
    Newton step that cuts the balances tenfold was rejected for the half-closed loop's residual and the
    solve crept to its iteration limit (measured). The loop closes as the states converge; the solver's
    own convergence test still reads every residual. An element's ``AnalysisError`` at a trial point (a
    nozzle pressure ratio below 1 on the way) backs the step off like an insufficient decrease.
    ``MatchNewtonSolver`` reuses the last trial's residuals instead of evaluating them again.
    """

    #: Objective at the last trial and its relative decrease from the start (NaN after an AnalysisError there).
    last_objective = np.nan
    last_decrease = np.nan
    #: Message of the last AnalysisError a trial raised (reset by ``MatchNewtonSolver`` at each solve).
    last_error = None

    def _line_search_objective(self):
        """Norm of the match balances (the ``match`` subsystem's residuals)."""
        return self._system().match._residuals.get_norm()

    def _trial(self):
        """Recompute the cycle from the moved states (one Gauss-Seidel pass) and evaluate the residuals."""
        self._gs_iter()
        self._run_apply()

    def _iter_initialize(self):
        """Take the full step and judge it; the objective at the start is the current residuals' (no evaluation).

        Returns
        -------
        float
            Objective at the full step (NaN when an element raised ``AnalysisError`` there).
        """
        system = self._system()
        self.alpha = alpha = self.options["alpha"]
        phi0 = self._line_search_objective()
        self._phi0 = phi0 if phi0 != 0.0 else 1.0
        self._dir_derivative = -self._phi0
        system._outputs.add_scal_vec(alpha, system._doutputs)
        self._enforce_bounds(step=system._doutputs, alpha=alpha)
        self._analysis_error_raised = False
        return self._judged_trial()

    def _single_iteration(self):
        """Judge the backtracked point."""
        self._analysis_error_raised = False
        self._judged_trial()

    def _judged_trial(self):
        newton = self._system().nonlinear_solver
        newton._residuals_current = False
        self.last_objective = self.last_decrease = np.nan
        cache = self._solver_info.save_cache()
        try:
            self._trial()
        except om.AnalysisError as err:
            self._solver_info.restore_cache(cache)
            if not self.options["retry_on_analysis_error"]:
                raise
            self._analysis_error_raised = True
            self.last_error = str(err)
            return np.nan
        newton._residuals_current = True
        phi = self.last_objective = self._line_search_objective()
        self.last_decrease = 1.0 - phi / self._phi0
        return phi


class MatchNewtonSolver(CheckedNewtonSolver):
    """Newton solver of ``OffDesignGroup``: ``CheckedNewtonSolver`` that reuses the line search's residuals.

    After each iteration the residuals at the accepted point are those the line search's last trial
    evaluated (``MatchLineSearch``), so the evaluation Newton makes there is skipped; everything else is
    ``om.NewtonSolver``'s (with ``CheckedNewtonSolver``'s validity checks on the converged state). A solve
    whose match balances fall by less than ``STALL_DECREASE`` in ``STALL_ITERATIONS`` successive iterations
    stops (an unreachable thrust pins Tt4 at its bound; measured, it would otherwise run its 25 iterations of
    up to 11 evaluations, 9 s). A solve that started warm (``OffDesignGroup`` option ``warm_start``) and
    failed is repeated once from the design-point start, and one that still fails below the corrected design
    power is solved by continuation from there (``_solve_by_continuation``; ``OffDesignGroup`` option
    ``continuation``); a solve that did not converge raises ``om.AnalysisError`` naming the node, its flight
    condition and power, and the balance left unmatched at the last iterate.
    """

    _residuals_current = False
    _stalled_iterations = 0

    def _single_iteration(self):
        """Newton iteration; stop when the balances have stopped falling (``STALL_ITERATIONS``)."""
        super()._single_iteration()
        system = self._system()
        if system.under_complex_step or self.linesearch is None:
            return
        ls = self.linesearch
        # balances already within the tolerance (the rest of the residual, the offtake loop, still closing) or
        # still falling: not stalled
        progress = ls.last_decrease >= STALL_DECREASE or ls.last_objective <= self.options["atol"]
        self._stalled_iterations = 0 if progress else self._stalled_iterations + 1
        if self._stalled_iterations >= STALL_ITERATIONS:
            error = (self.linesearch.last_error or "").replace("Error calling compute(), ", "").rstrip(".")
            cut = f" (steps cut back where {error})" if error else ""
            raise om.AnalysisError(f"Solver '{self.SOLVER}' on system '{system.pathname}' failed to converge: the "
                                   f"match balances fell by less than {STALL_DECREASE:.0%} in {STALL_ITERATIONS} "
                                   f"successive iterations{cut}.")

    def _run_apply(self):
        """Evaluate the residuals unless the line search's last trial already did at this point."""
        if self._residuals_current and not self._system().under_complex_step:
            self._residuals_current = False
            return
        self._residuals_current = False
        super()._run_apply()

    def solve(self):
        """Solve; repeat a failed warm start from the design point, then by continuation; name a failure's cause."""
        group = self._system()
        # the outputs before any try: a later start begins from them, not from a failed try's last iterate (the
        # offtake loop reads W2 from the previous pass; measured, a failed try's negative W2 spoiled the next start)
        self._outputs_before = group._outputs.asarray().copy()
        try:
            try:
                self._solve_from_start()
            except om.AnalysisError as err:
                if group.under_complex_step or not group.options["continuation"]:
                    raise
                self._solve_by_continuation(err)
        except om.AnalysisError as err:
            if "failed to converge" in str(err) and not group.under_complex_step:
                raise om.AnalysisError(f"{err} {group._failure_description()}") from err
            raise
        group._remember_solution()

    def _solve_once(self):
        """One Newton solve from the start ``guess_nonlinear`` sets (stall count, last error and residual flag reset).

        The residuals a failed solve's last line-search trial left are not those of the next start: without the
        reset, the next solve would skip its first evaluation and could take them as converged.
        """
        self._stalled_iterations = 0
        self._residuals_current = False
        if self.linesearch is not None:
            self.linesearch.last_error = None
        super().solve()

    def _solve_from_start(self):
        """Solve from the warm or the design-point start; repeat a failed warm start from the design point."""
        group = self._system()
        try:
            self._solve_once()
        except om.AnalysisError:
            if not getattr(group, "_started_warm", False):
                raise
            group._force_design_start = True
            group._outputs.set_val(self._outputs_before)
            try:
                self._solve_once()
            finally:
                group._force_design_start = False

    def _solve_by_continuation(self, first_error):
        r"""Reach the requested power from the corrected design point in steps, each solve started from the last.

        Only where some node's requested power lies below the corrected design point's: above it, a failure is a
        power the engine does not have. The power input (``Tt4``, ``Tt41_required`` or ``Fn_required``) is set,
        node by node, to the value at which the design-point start is the design point itself in corrected
        terms (``OffDesignGroup.guess_nonlinear`` with :math:`\theta = 1`), solved there, and moved towards the
        requested value by a fraction of the way that grows by ``CONTINUATION_GROWTH`` after a converged solve
        and is halved after a failed one (down to ``CONTINUATION_MIN_STEP``, at most ``CONTINUATION_MAX_SOLVES``
        solves). Each later solve starts from the last solution, its states extrapolated through the last two
        (a secant predictor, clipped to the states' bounds; the first step holds them). The requested inputs are
        restored whatever happens; the last solve is at exactly those. Raises ``om.AnalysisError`` with the
        direct solve's message and where the continuation stopped.
        """
        group = self._system()
        names = group._power_input_names()
        target = {name: group._inputs[name].copy() for name in names}
        goal = np.real(target[names[0]]).copy()
        start = group._corrected_reference_power()
        if np.all(goal >= start):
            # above the corrected design point the design-point start is as good as a path (measured: the envelope
            # sample converges from it); a failure there is a power the engine does not have (Tt4 at its bound)
            raise first_error
        fraction, step, solves, reason = 0.0, CONTINUATION_FIRST_STEP, 0, ""
        try:
            group._hold_start = False
            group._outputs.set_val(self._outputs_before)
            for name in names:
                group._inputs[name] = start
            solves += 1
            try:
                self._solve_once()
            except om.AnalysisError as err:
                reason = f"no match at the corrected design point itself ({err})"
                raise
            group._hold_start = True
            states = group._state_names()

            def converged():
                return group._outputs.asarray().copy(), {k: np.real(group._outputs[k]).copy() for k in states}

            (solution, now), before = converged(), None
            while fraction < 1.0:
                trial = min(1.0, fraction + step)
                for name in names:
                    group._inputs[name] = target[name] if trial == 1.0 else start + trial * (goal - start)
                group._outputs.set_val(solution)
                if before is not None:  # secant predictor through the last two solutions
                    ratio = (trial - fraction) / (fraction - before[0])
                    for k in states:
                        _, lower, upper, _ = STATES[k]
                        group._outputs[k] = np.clip(now[k] + ratio * (now[k] - before[1][k]), lower, upper)
                solves += 1
                try:
                    self._solve_once()
                except om.AnalysisError as err:
                    group._outputs.set_val(solution)
                    step *= 0.5
                    if step < CONTINUATION_MIN_STEP or solves >= CONTINUATION_MAX_SOLVES:
                        reason = f"stopped {fraction:.3g} of the way ({err})"
                        raise
                    continue
                before = (fraction, now)
                (solution, now), fraction = converged(), trial
                step *= CONTINUATION_GROWTH
        except om.AnalysisError:
            raise om.AnalysisError(f"{first_error} Continuation in {names[0].rsplit('.', 1)[-1]} from the corrected "
                                   f"design point: {reason}".rstrip(".") + ".") from first_error
        finally:
            group._hold_start = False
            for name in names:
                group._inputs[name] = target[name]


class OffDesignGroup(om.Group):
    r"""Off-design (part-power, other flight condition) match of a designed turbofan, map-free.

    The cycle elements are those of the design point (``TurbofanCycleGroup`` with ``solve_sizing=False``,
    same gas model, fuel bookkeeping and convergent nozzles); the engine geometry enters as inputs
    ``<name>_design`` from a design run's ``FlowCapacityComp`` (``FlowCapacityComp`` outputs at the design
    point): HPT and LPT nozzle-guide-vane flow capacities ``W4_corrected_design``,
    ``W45_corrected_design``, nozzle throat areas ``area8_design``, ``area18_design`` and the booster
    temperature-rise ratio ``booster_temperature_rise_ratio_design``.

    **Map-free method** (field-reference 12.2; Mattingly & von Ohain, *Elements of Propulsion*, engine
    performance analysis, from memory): every component polytropic efficiency, pressure loss, nozzle
    coefficient, mechanical efficiency and extraction is held at its design value (they stay inputs; the
    user sets the design values); the turbine cooling fractions are held at the design point's
    (``cooling_model='given'``: set ``hpt_vane_cooling_frac``/``hpt_rotor_cooling_frac`` to the design run's
    ``cooling_frac_vane``/``cooling_frac_rotor``; the cooling holes are geometry too). The match is then
    fixed by continuity through the fixed throats, solved by Newton (``MatchNewtonSolver``,
    ``om.DirectSolver``, backtracking judged on the balances, ``MatchLineSearch``) with ``om.BalanceComp``
    residuals (normalised by the design value where that is 2 or more):

    ========================================  ===========================================================
    residual                                  physics
    ========================================  ===========================================================
    ``W4_corrected = W4_corrected_design``    HPT NGVs choked: W4 sqrt(Tt4)/Pt4 fixed (12.2 item 1)
    ``W45_corrected = W45_corrected_design``  LPT NGVs choked: W45 sqrt(Tt45)/Pt45 fixed (12.2 item 1)
    ``area8 = area8_design``                  core nozzle throat: continuity 5 -> 8, choked or not
                                              (12.2 item 2; NozzleComp's area is C1 across choking)
    ``area18 = area18_design``                bypass nozzle throat, choked or not (12.2 item 5)
    booster rule (below)                      LP spool schedules the booster
    ``Tt41 = Tt41_required``                  only with ``power_setting='Tt41'``
    ========================================  ===========================================================

    States: ``FPR``, ``OPR``, ``BPR``, ``booster_PR``, and the engine flow. The elements work per unit
    inlet flow and ``W2`` follows from the sizing element as ``Fn/Fn_specific``, so the state that carries
    ``W2`` is the net thrust ``Fn`` (``power_setting`` 'Tt4' and 'Tt41'; output ``W2``). With
    ``power_setting='thrust'`` the net thrust is the input ``Fn_required`` and ``Tt4`` is the state;
    with 'Tt41', ``Tt4`` is a state balanced to the input ``Tt41_required``; with 'Tt4', ``Tt4`` is an input.
    The spool balances (fan + booster on the LPT, HPC + offtake on the HPT) are the design elements'
    (turbine work from the spool power demand), so the capacities close the loop: for a calorically perfect
    gas the HPT temperature ratio is fixed by the two choked NGVs, the LPT's too when the core nozzle is
    choked, and the HPC temperature ratio follows
    :math:`\tau_{cH} - 1 = (\tau_{cH,R} - 1)(T_{t4}/T_{t25})/(T_{t4}/T_{t25})_R` (12.2 items 1-3).

    **Booster rule** (common practice; fan and booster on one LP spool, their temperature rises scale
    together with the spool speed squared, no booster map): the booster temperature-rise ratio is held at
    design,

    .. math:: \frac{\tau_b - 1}{\tau_{fc} - 1} = \frac{\tau_{b,R} - 1}{\tau_{fc,R} - 1}, \qquad
              \tau_b = T_{t25}/T_{t21},\ \tau_{fc} = T_{t21}/T_{t2},

    i.e. :math:`(\tau_b - 1) = (\tau_{b,R} - 1)(\tau_{fc} - 1)/(\tau_{fc,R} - 1)` with the fan core-side
    temperature ratio. The fan core-side pressure ratio equals ``FPR`` (``fan_core_side_ratio='equal'``).

    Start values: with ``start_from_design=True`` (default) every Newton solve starts from the design
    point, the inputs ``FPR_design``, ``OPR_design``, ``BPR_design``, ``booster_PR_design``, ``Tt4_design``,
    ``Fn_design``, moved to the new flight condition and power (``guess_nonlinear``; not under complex
    step). They do not change the solution. With ``warm_start=True`` (default False) a solve that follows
    a converged one starts from that solution instead (moved the same way), and a failed warm start is
    repeated from the design point: for inputs that change little between solves (an optimizer's steps,
    an outer loop; thrust or Tt4 moved 0.1 %) it takes 2 Newton iterations instead of 4-5 and about half
    the time, with results equal within 1e-10 (measured, ``benchmarks/benchmark_off_design.py``); for
    scattered points the design start is as good.

    **Continuation at low power** (option ``continuation``, default True; ``MatchNewtonSolver``). Far below
    the corrected design power the moved design point is often no start at all: its first evaluation has
    the core stream's total pressure below ambient and raises before Newton takes a step (measured on the
    demo engine at 457 m, M 0.39: from the design start every rating up to Tt41 = 1450 K failed so, the
    start's bypass ratio 13.4 against the solution's 11.8 at Tt41 = 1510 K, because the start relations
    take both nozzles' flow functions as at the choked design point while near the ground both are
    unchoked). Where the solve from the start fails and the requested power lies below the corrected
    design point's, the power is brought down to it in steps from that point (the design point at this
    flight condition in corrected terms), each Newton solve starting from the previous solution extended
    along the path (a secant predictor), as an engine is throttled back along its operating line. It
    changes no converged solution, only which ones are found: on the grid of 0-10 km (every 1 km; M 0.45
    below 3 km, 0.6 above) by Tt41 1150-1450 K (9 values) of the OpenConcept example's engine all 99 points
    converge (84 failed before: every rating at 0-3 km, the lowest five to eight above), in about 0.5-3 s
    each where the continuation is needed (5-12 Newton solves).

    Convergence (measured, ``benchmarks/benchmark_off_design.py`` and the envelope test): from the design
    start, 500 of 500 seeded random points of 0-13 km, M 0-0.9, ISA-20..+25, at 40-100 % of the maximum
    thrust (maximum rating Tt4 = min(1800 K, (Tt4/Tt2)_design Tt2)) for the demo engine, and 500/500 for
    five further seeds. Below about 229 K fan-face total temperature (cold days high and slow) the bypass
    nozzle's sonic static temperature, which ``NozzleComp`` evaluates choked or not, falls below the gas
    model's 200 K at part power and the point fails on that range check (raised at once, or named by the
    stalled Newton's message; 42 of the 500 points as drawn, before the sample's ISA offsets are raised).
    Cost (same benchmark, shared 2-core machine): one scalar solve 3-5 Newton iterations, 100-250 ms;
    vectorized, about 2 ms per point at 1000 nodes (one failing node fails the whole vector solve).

    **Lowest power** (measured, the OpenConcept example's demo engine, ISA): the match reaches down to the
    burner's valid range, Tt4 = 1000 K (Tt41 about 945 K), at altitude (10 668 m, M 0.78: 2.3 kN net
    thrust, LPT expansion ratio 3.1, core nozzle pressure ratio 1.07); near the ground, before that, the core
    nozzle pressure ratio falls towards 1 (457 m, M 0.39: no match below Tt41 = 948 K, 5.3 kN, where it is
    1.026 and the LPT expansion ratio 1.90, at the edge of the choked-vane assumption below).

    Flight condition per node: ``altitude``, ``Mach0``, ``dT_isa``. Outputs as ``TurbofanCycleGroup``
    (stations, ``TSFC``, ``W2``, ``fuel_flow``, ``Tt41``, ``Tt3``) plus ``Fn`` and the current capacities.
    Valid where the NGVs stay choked (turbine expansion ratios above about 1.85; not checked, a
    limitation of the map-free method) and the design elements' ranges hold; a point that cannot be
    matched raises ``om.AnalysisError``, never NaN: an element's ``InputRangeError`` naming the cause (a
    core nozzle pressure ratio below 1, a burner-exit temperature below the burner's range), with where the
    continuation stopped, or, when Newton does not converge or stalls, a message naming the node, its flight
    condition and power, the balance left unmatched and the states held at a bound (an unreachable thrust
    pins Tt4 at 2400 K).
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("power_setting", default="Tt4", values=("Tt4", "Tt41", "thrust"),
                             desc="what sets the power: burner exit temperature Tt4 (input), HPT rotor inlet "
                                  "temperature (input Tt41_required) or net thrust (input Fn_required)")
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="include the fuel mass in the flows (as the design point)")
        self.options.declare("start_from_design", types=bool, default=True,
                             desc="start every Newton solve from the design-point values (inputs *_design)")
        self.options.declare("warm_start", types=bool, default=False,
                             desc="with start_from_design: after a converged solve, start the next one from its "
                                  "solution (moved to the new inputs like the design point) instead of the "
                                  "design point; a failed warm start is repeated from the design point")
        self.options.declare("continuation", types=bool, default=True,
                             desc="where the solve from the start fails, reach the requested power by continuation "
                                  "from the corrected design point (MatchNewtonSolver)")

    def setup(self):
        """Assemble the cycle, the capacities and the match balances."""
        nn = self.options["num_nodes"]
        setting = self.options["power_setting"]
        ones = np.ones(nn)
        cycle = TurbofanCycleGroup(num_nodes=nn, gas=self.options["gas"],
                                   include_fuel_mass=self.options["include_fuel_mass"],
                                   cooling_model="given", solve_sizing=False, turbine_temperature_input="Tt4")
        promotes = ["*"] if setting == "thrust" else ["*", ("Fn_required", "Fn")]
        self.add_subsystem("cycle", cycle, promotes=promotes)
        self.add_subsystem("capacity", FlowCapacityComp(num_nodes=nn), promotes=["*"])

        match = om.BalanceComp()
        pairs = [("FPR", "W45_corrected"), ("OPR", "W4_corrected"), ("BPR", "area18"),
                 ("booster_PR", "booster_temperature_rise_ratio")]
        pairs.append(("Tt4", "area8") if setting == "thrust" else ("Fn", "area8"))
        for state, lhs in pairs:
            units, lower, upper, default = STATES[state]
            eq_units, desc = GEOMETRY[lhs]
            match.add_balance(state, units=units, eq_units=eq_units, lhs_name=lhs, rhs_name=f"{lhs}_design",
                              rhs_val=ones, val=default * ones, lower=lower, upper=upper, normalize=True,
                              desc=f"off-design {state} that holds the {desc} at its design value")
        if setting == "Tt41":
            units, lower, upper, default = STATES["Tt4"]
            match.add_balance("Tt4", units=units, eq_units="K", lhs_name="Tt41", rhs_name="Tt41_required",
                              rhs_val=1600.0 * ones, val=default * ones, lower=lower, upper=upper,
                              desc="burner exit temperature that gives the requested rotor inlet temperature")
        for state, (units, _, _, default) in STATES.items():
            match.add_input(f"{state}_design", val=default * ones, units=units,
                            desc=f"design-point {state}: the Newton start value (no effect on the solution)")
        match.add_input("Tt2_design", val=260.0 * ones, units="K",
                        desc="design-point fan-face total temperature: for the start value only")
        match.add_input("Pt2_design", val=3.5e4 * ones, units="Pa",
                        desc="design-point fan-face total pressure: for the start value only")
        self.add_subsystem("match", match, promotes=["*"])

        if setting == "Tt4":
            self.set_input_defaults("Tt4", 1650.0 * ones, units="K")

        # Newton on every output (om.DirectSolver: the explicit elements are eliminated exactly, so the states'
        # step is that of the balances alone); one Gauss-Seidel pass from the start values (max_sub_solves=0: no
        # further pass by Newton itself, the line search's trials make the elements consistent with the states).
        self.nonlinear_solver = MatchNewtonSolver(solve_subsystems=True, max_sub_solves=0, maxiter=NEWTON_MAXITER,
                                                  atol=NEWTON_ATOL * np.sqrt(nn), rtol=NEWTON_RTOL, iprint=-1,
                                                  err_on_non_converge=True)
        self.nonlinear_solver.linesearch = MatchLineSearch(bound_enforcement="scalar", retry_on_analysis_error=True,
                                                           alpha=1.0, rho=0.5, c=0.1, maxiter=LINESEARCH_MAXITER,
                                                           iprint=-1)
        self.linear_solver = om.DirectSolver()

    def guess_nonlinear(self, inputs, outputs, residuals):
        r"""Start the Newton solve from a reference point moved along the map-free trends (skipped under cs).

        With ``start_from_design`` the states restart at every solve from a reference point, moved to the
        flight condition and power with the constant-gamma relations of field-reference 12.2 (gamma 1.4, a
        typical polytropic efficiency 0.9; a start value only, the solution does not depend on it): with the
        core temperature ratio :math:`\theta = (T_{t4}/T_{t2})/(T_{t4}/T_{t2})_R`, the fan and HPC
        temperature rises scale with it (items 3-4), the booster's follows the booster rule, the bypass ratio
        follows core continuity (item 5, nozzle flow functions taken as at the reference) and the net thrust
        the fan-face pressure. In the 'thrust' setting the start is the reference's corrected point
        (:math:`\theta = 1`, Tt4 scaled with Tt2); in 'Tt41' Tt4 starts at the requested Tt41 times the
        reference's Tt4/Tt41 (``GUESS_T4_OVER_T41`` for the design point, whose Tt41 is not an input).
        The reference is the design point (inputs ``*_design``) or, with ``warm_start`` after a converged
        solve, that solve's solution (the relations return it unchanged when the inputs are unchanged).
        A design-point start at a much lower Tt4 is often not an operating point at all (the turbines cannot
        drive the design compressors), which is why the states are moved.
        """
        self._started_warm = False
        if self.under_complex_step or not self.options["start_from_design"]:
            return
        setting = self.options["power_setting"]
        warm = (self.options["warm_start"] and not getattr(self, "_force_design_start", False)
                and last_solve_succeeded(self) and getattr(self, "_solution", None) is not None)
        if getattr(self, "_hold_start", False):
            return  # continuation: start from the previous step's solution as it is
        if warm:
            ref = self._solution
            self._started_warm = True
        else:
            ref = {name: np.real(inputs[f"{name}_design"]).copy()
                   for name in ("FPR", "OPR", "BPR", "booster_PR", "Tt4", "Fn", "Tt2", "Pt2")}
        # the flight condition is explicit and upstream of every state: evaluate it for the fan-face state
        # (InletComp: Tt2 = Tt0, Pt2 = inlet_recovery*Pt0; the inlet's own inputs are not transferred yet)
        self.cycle.flight.run_solve_nonlinear()
        tt2 = np.real(outputs["Tt0"])
        pt2 = np.real(outputs["Pt0"] * inputs["inlet_recovery"])
        ratio_t2 = tt2 / ref["Tt2"]
        tt4_r = ref["Tt4"]
        if setting == "thrust":
            tt4 = tt4_r * ratio_t2
        elif setting == "Tt41":
            t4_over_t41 = ref["Tt4"] / ref["Tt41"] if "Tt41" in ref else GUESS_T4_OVER_T41
            tt4 = t4_over_t41 * np.real(inputs["Tt41_required"])
        else:
            tt4 = np.real(inputs["cycle.burner.Tt4"])
        theta = tt4 / tt4_r / ratio_t2
        k = (GUESS_GAMMA - 1.0) / (GUESS_GAMMA * GUESS_EFF_POLY)
        fpr_r, opr_r, pib_r, bpr_r = ref["FPR"], ref["OPR"], ref["booster_PR"], ref["BPR"]
        tau_f_r, tau_b_r = fpr_r**k, pib_r**k
        tau_c_r = (opr_r / (fpr_r * pib_r)) ** k
        bpr = bpr_r
        for _ in range(GUESS_SWEEPS):  # items 3-5 depend on each other: a few fixed-point sweeps
            tau_f = 1.0 + (tau_f_r - 1.0) * theta * (1.0 + bpr_r) / (1.0 + bpr)
            tau_b = 1.0 + (tau_b_r - 1.0) * (tau_f - 1.0) / (tau_f_r - 1.0)
            tau_c = 1.0 + (tau_c_r - 1.0) * theta * (tau_f_r * tau_b_r) / (tau_f * tau_b)
            fpr, pib, pic = tau_f ** (1.0 / k), tau_b ** (1.0 / k), tau_c ** (1.0 / k)
            bpr = bpr_r * (opr_r / fpr_r) / (pib * pic) * np.sqrt(theta * tau_f_r / tau_f)
        guess = {"FPR": fpr, "booster_PR": pib, "OPR": fpr * pib * pic, "BPR": bpr}
        if setting != "thrust":
            guess["Fn"] = ref["Fn"] * pt2 / ref["Pt2"]
        if setting != "Tt4":
            guess["Tt4"] = tt4
        for state, value in guess.items():
            _, lower, upper, _ = STATES[state]
            outputs[state] = np.clip(value, lower, upper)

    def _current_solution(self):
        """Return the states and fan-face conditions of the current point, as a start-value reference (real parts)."""
        outputs = self._outputs
        tt4 = self._inputs["cycle.burner.Tt4"] if self.options["power_setting"] == "Tt4" else outputs["Tt4"]
        fn = outputs["Fn"] if self.options["power_setting"] != "thrust" else self._inputs["cycle.sizing.Fn_required"]
        return {name: np.real(value).copy() for name, value in (
            ("FPR", outputs["FPR"]), ("OPR", outputs["OPR"]), ("BPR", outputs["BPR"]),
            ("booster_PR", outputs["booster_PR"]), ("Tt4", tt4), ("Tt41", outputs["Tt41"]), ("Fn", fn),
            ("Tt2", outputs["Tt2"]), ("Pt2", outputs["Pt2"]))}

    def _remember_solution(self):
        """Keep a converged solution as the reference of the next warm start (``warm_start``; not under cs)."""
        if self.under_complex_step or not self.options["warm_start"]:
            return
        self._solution = self._current_solution()

    def _state_names(self):
        """Return the Newton states of this power setting (the match balances' outputs)."""
        setting = self.options["power_setting"]
        return ["FPR", "OPR", "BPR", "booster_PR"] + (["Fn"] if setting != "thrust" else []) + (
            ["Tt4"] if setting != "Tt4" else [])

    def _power_input_names(self):
        """Names (relative to this group) of every input the power setting's promoted input feeds."""
        if getattr(self, "_power_inputs", None) is None:
            prom = {"Tt4": "Tt4", "Tt41": "Tt41_required", "thrust": "Fn_required"}[self.options["power_setting"]]
            meta = self.get_io_metadata(iotypes="input", metadata_keys=["units"])  # prom_name always comes
            self._power_inputs = sorted(name for name, m in meta.items() if m["prom_name"] == prom)
        return self._power_inputs

    def _corrected_reference_power(self):
        r"""Power input, per node, at which the design-point start is the design point in corrected terms.

        :math:`\theta = 1` in ``guess_nonlinear``: ``Tt4 = Tt4_design Tt2/Tt2_design`` (``Tt41_required`` that
        divided by ``GUESS_T4_OVER_T41``); for a thrust, ``Fn_design Pt2/Pt2_design``.
        """
        inputs, outputs = self._inputs, self._outputs
        self.cycle.flight.run_solve_nonlinear()
        ratio_t2 = np.real(outputs["Tt0"]) / np.real(inputs["Tt2_design"])
        setting = self.options["power_setting"]
        if setting == "thrust":
            pt2 = np.real(outputs["Pt0"] * inputs["inlet_recovery"])
            return np.real(inputs["Fn_design"]) * pt2 / np.real(inputs["Pt2_design"])
        tt4 = np.real(inputs["Tt4_design"]) * ratio_t2
        return tt4 / GUESS_T4_OVER_T41 if setting == "Tt41" else tt4

    def _failure_description(self):
        """Sentence on a failed match: the node with the largest unmatched balance, its inputs and last iterate."""
        setting = self.options["power_setting"]
        names = self._state_names()
        res = {name: np.abs(np.real(self.match._residuals[name])) for name in names}
        worst = max(names, key=lambda name: float(np.max(res[name])))
        i = int(np.argmax(res[worst]))
        where = {"FPR": "LPT NGV capacity (W45_corrected)", "OPR": "HPT NGV capacity (W4_corrected)",
                 "BPR": "bypass nozzle area (area18)", "booster_PR": "booster temperature-rise ratio",
                 "Fn": "core nozzle area (area8)", "Tt4": "core nozzle area (area8)" if setting == "thrust"
                 else "rotor inlet temperature (Tt41_required)"}[worst]
        power = {"Tt4": ("Tt4", "cycle.burner.Tt4", "K"), "Tt41": ("Tt41_required", "Tt41_required", "K"),
                 "thrust": ("Fn_required", "cycle.sizing.Fn_required", "N")}[setting]

        def val(vec, name):
            return float(np.real(np.atleast_1d(vec[name])[i]))

        node = f" at node {i}" if self.options["num_nodes"] > 1 else ""
        last = ", ".join(f"{name} = {val(self._outputs, name):.5g}" for name in names)
        pinned = [f"{name} at its {'lower' if val(self._outputs, name) <= lo * (1 + 1e-9) else 'upper'} bound"
                  for name in names for _, lo, hi, _ in (STATES[name],)
                  if val(self._outputs, name) <= lo * (1 + 1e-9) or val(self._outputs, name) >= hi * (1 - 1e-9)]
        if pinned:
            last += "; " + ", ".join(pinned)
        return (f"No off-design match{node} (altitude = {val(self._inputs, 'cycle.flight.atmosphere.altitude'):.6g} m, "
                f"Mach0 = {val(self._inputs, 'cycle.flight.flight_condition.Mach0'):.4g}, "
                f"dT_isa = {val(self._inputs, 'cycle.flight.atmosphere.dT_isa'):.4g} K, "
                f"{power[0]} = {val(self._inputs, power[1]):.6g} {power[2]}): the {where} balance is left "
                f"unmatched (balance residual {float(res[worst][i]):.3g}) at the last iterate ({last}; core and bypass "
                f"nozzle Mach numbers {val(self._outputs, 'Mach8'):.3g} and {val(self._outputs, 'Mach18'):.3g}).")
