"""Installed engine: cycle sized to the airframe's thrust plus its own nacelle drag, mass, clearance, mission fuel."""

import numpy as np

from bypassopt.components.coupled_solver import COUPLED_SOLVERS, last_solve_succeeded, set_coupled_solvers
from bypassopt.components.cycle.core_size_efficiency_comp import CoreSizeEfficiencyComp
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.cycle.fan_shock_loss_comp import FanShockLossComp
from bypassopt.components.cycle.multipoint_group import COOLING_INPUTS
from bypassopt.components.defaults import GEARBOX_DEFAULTS, INPUT_DEFAULTS
from bypassopt.components.interface import InterfaceGroup
from bypassopt.components.mission.mission_fuel_comp import MissionFuelComp
from bypassopt.components.options import declare_gas, declare_num_nodes

from .engine_mass_comp import EngineMassComp
from .fan_sizing_comp import FanSizingComp
from .gearbox_comp import GearboxComp
from .ground_clearance_comp import GroundClearanceComp
from .installed_performance_comp import InstalledPerformanceComp
from .lp_spool_comp import LPSpoolComp
from .nacelle_drag_comp import NacelleDragComp
from .nacelle_geometry_comp import NacelleGeometryComp

#: Nacelle drag as a fraction of the thrust requirement in the physics guess of ``Fn_required`` (the demo
#: engine's is 4.7 %; common practice: a few per cent of cruise thrust).
NACELLE_DRAG_FRACTION_GUESS = 0.05
#: Specific thrust (N*s/kg) of the physics guess of W2: the low end of bypass engines in cruise, so W2 errs
#: high (a high W2 only lowers the HP offtake per unit flow and keeps the first pass computable).
FN_SPECIFIC_GUESS = 100.0

#: Outputs a user reads, promoted with the interface (``InterfaceGroup``): the design point's performance,
#: installation, mass and limits.
INTERFACE_OUTPUTS = ("Fn_required", "TSFC", "fuel_flow", "W2", "Tt3", "Tt41", "W3_corrected", "V0", "q0",
                     "installed_TSFC", "installed_thrust", "nacelle_drag", "fan_tip_diameter",
                     "nacelle_max_diameter", "clearance_margin", "diameter_margin", "engine_dry_mass",
                     "powerplant_mass")
#: Outputs of the Breguet mission (``include_mission=True``).
MISSION_OUTPUTS = ("mission_fuel", "cruise_fuel", "reserve_fuel", "zero_fuel_mass", "takeoff_mass", "mtow_margin")


class InstalledEngineGroup(InterfaceGroup):
    """Turbofan cycle, fan sizing, nacelle geometry and drag, mass, ground clearance and mission fuel.

    The engine must deliver the airframe's thrust requirement plus its own nacelle drag, and that
    drag grows with the engine size: W2 -> fan diameter -> nacelle -> drag -> Fn_required -> W2.
    This loop (and the HP-offtake loop of the cycle) is solved by a Newton solver with a direct
    linear solver, so total derivatives are taken through the converged system
    (``coupled_solver='gauss_seidel'`` swaps in block Gauss-Seidel for very large vectorized sweeps).

    **Promotion** (``InterfaceGroup``): by default only the interface is promoted, each name with the prefix
    ``name_prefix`` (``'engine:'``): every input the group does not compute itself (``engine:BPR``,
    ``engine:altitude``, ...) and the outputs in ``INTERFACE_OUTPUTS`` (and ``MISSION_OUTPUTS``), so a model that
    promotes ``*`` keeps its own ``altitude``, ``thrust`` and ``fuel_flow``; every station stays reachable by its
    path (``engine.model.Tt3``). ``expose='all', name_prefix=''`` promotes every variable under the plain names
    below (the project's own problems build it so).

    Promoted inputs a user connects: flight condition (``altitude``, ``dT_isa``, ``Mach0``), the cycle
    choices (``BPR``, ``FPR``, ``OPR``, ``Tt4``), ``thrust_required`` (N per engine, before nacelle
    drag), installation geometry (``wing_height``, ``nacelle_wing_gap``, ``min_ground_clearance``,
    ``max_nacelle_diameter``, nacelle proportions), and, with ``include_mission``, the aircraft
    (``empty_mass_no_engines``, ``payload``, ``design_range``, ``lift_to_drag``, ...).

    Promoted outputs: ``installed_TSFC``, ``installed_thrust``, ``nacelle_drag``,
    ``nacelle_max_diameter``, ``fan_tip_diameter``, ``clearance_margin``, ``diameter_margin``,
    ``powerplant_mass``, ``mission_fuel`` and every cycle output (``TSFC``, ``Tt41``, ``Tt3``,
    ``W3_corrected``, ...). The cruise speed of the mission is the design-point flight speed V0 and
    the cruise TSFC is the design-point installed TSFC (only the design point is modelled).

    **Turbomachinery technology.** The efficiencies the cycle reads are computed from technology levels
    (``<name>_ref`` inputs) and the engine's own size, speeds and loadings, so they move with the design:
    ``CoreSizeEfficiencyComp`` (subsystem ``core_size``) lowers ``hpc_eff_poly`` and ``hpt_eff_poly`` below
    a reference core size (tip clearance); ``FanShockLossComp`` (``fan_shock``) lowers
    ``fan_bypass_eff_poly`` with the shock loss of the supersonic fan tip, whose speed follows from the FPR
    at the design tip loading; ``LPSpoolComp`` (``lp_spool``) gives the LP shaft speed from the fan tip
    speed and diameter, the LP turbine's exit annulus, blade speed and stage count, and its efficiency
    ``lpt_eff_poly`` from the stage design (Soderberg); ``GearboxComp`` (``gearbox``) gives
    ``LP_mech_eff``, with a fan reduction gearbox's loss and mass when ``gearbox=True`` (inputs
    ``gear_ratio``, ``gearbox_eff``). The LP turbine's mass follows its stage count and diameter. The
    options ``core_size_effect``, ``fan_shock_effect`` and ``lp_spool_effect`` switch each effect off (the
    efficiency then equals its ``_ref`` input, and the LP turbine mass follows the LP shaft power as
    before); with all three off and no gearbox the engine is the one of the fixed-efficiency model. A
    model that embeds this group (the multipoint engine) passes the computed efficiencies on by name, so
    its off-design points hold the design's values.

    Every engine and installation input left unset takes its value from
    ``bypassopt.components.defaults.INPUT_DEFAULTS`` (and ``GEARBOX_DEFAULTS`` with a gearbox), the table
    the demo scenario's ``[engine]`` and ``[installation]`` values also come from, so the bare group and
    ``bypassopt evaluate`` agree.
    """

    def initialize(self):
        """Declare options."""
        super().initialize()
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("cooling_model", default="correlation", values=("given", "correlation"),
                             desc="turbine cooling fractions given, or from the cooling correlation")
        self.options.declare("include_mission", types=bool, default=True,
                             desc="add the Breguet mission-fuel component")
        self.options.declare("num_engines", types=int, default=2, desc="engines on the aircraft")
        self.options.declare("coupled_solver", default="newton", values=COUPLED_SOLVERS,
                             desc="'newton' (Newton + direct solver) or 'gauss_seidel' (block Gauss-Seidel, "
                                  "flat memory per design for very large vectorized sweeps)")
        self.options.declare("core_size_effect", types=bool, default=True,
                             desc="HPC and HPT efficiencies fall below the reference core size (False: equal "
                                  "to hpc_eff_poly_ref, hpt_eff_poly_ref)")
        self.options.declare("fan_shock_effect", types=bool, default=True,
                             desc="fan bypass efficiency lowered by the tip shock loss (False: equal to "
                                  "fan_bypass_eff_poly_ref)")
        self.options.declare("lp_spool_effect", types=bool, default=True,
                             desc="LP turbine efficiency from its stage design and mass from its stage count "
                                  "(False: lpt_eff_poly_ref, and mass from the LP shaft power)")
        self.options.declare("gearbox", types=bool, default=False,
                             desc="a fan reduction gearbox between the LP turbine and the fan (inputs "
                                  "gear_ratio, gearbox_eff)")

    def interface_outputs(self):
        """Return the documented outputs (``INTERFACE_OUTPUTS``, and ``MISSION_OUTPUTS`` with the mission)."""
        return INTERFACE_OUTPUTS + (MISSION_OUTPUTS if self.options["include_mission"] else ())

    def build(self):
        """Assemble and configure the coupled solve."""
        nn = self.options["num_nodes"]
        gas = self.options["gas"]
        self.add_subsystem("cycle", TurbofanCycleGroup(num_nodes=nn, gas=gas, solve_sizing=False,
                                                       cooling_model=self.options["cooling_model"]),
                           promotes=["*"])
        self.add_subsystem("fan_sizing", FanSizingComp(num_nodes=nn, gas=gas), promotes=["*"])
        opts = self.options
        geared = opts["gearbox"]
        self.add_subsystem("core_size", CoreSizeEfficiencyComp(num_nodes=nn, size_effect=opts["core_size_effect"]),
                           promotes=["*"])
        self.add_subsystem("fan_shock", FanShockLossComp(num_nodes=nn, shock_effect=opts["fan_shock_effect"]),
                           promotes=["*"])
        self.add_subsystem("lp_spool", LPSpoolComp(num_nodes=nn, gas=gas, geared=geared,
                                                   stage_effect=opts["lp_spool_effect"]), promotes=["*"])
        self.add_subsystem("gearbox", GearboxComp(num_nodes=nn, geared=geared), promotes=["*"])
        self.add_subsystem("nacelle", NacelleGeometryComp(num_nodes=nn), promotes=["*"])
        self.add_subsystem("drag", NacelleDragComp(num_nodes=nn),
                           promotes_inputs=["*", ("V18_jet", "V18_full"), ("rho18_jet", "rho18_full"),
                                            ("Ts18_jet", "Ts18_full"), ("Mach18_jet", "Mach18_full"),
                                            ("V8_jet", "V8_full"), ("rho8_jet", "rho8_full"),
                                            ("Ts8_jet", "Ts8_full"), ("Mach8_jet", "Mach8_full")],
                           promotes_outputs=["*"])
        self.add_subsystem("installed", InstalledPerformanceComp(num_nodes=nn), promotes=["*"])
        lpt_mass = "stages" if opts["lp_spool_effect"] else "power"
        self.add_subsystem("mass", EngineMassComp(num_nodes=nn, lp_turbine_model=lpt_mass, include_gearbox=geared),
                           promotes=["*"])
        self.add_subsystem("clearance", GroundClearanceComp(num_nodes=nn), promotes=["*"])
        if self.options["include_mission"]:
            self.add_subsystem("mission", MissionFuelComp(num_nodes=nn, num_engines=self.options["num_engines"]),
                               promotes_inputs=["*", ("cruise_speed", "V0")], promotes_outputs=["*"])
        self.set_input_defaults("Mach0", 0.78 * np.ones(nn))
        given = self.options["cooling_model"] == "given"
        defaults = {**INPUT_DEFAULTS, **(GEARBOX_DEFAULTS if geared else {})}
        for name, (value, units) in defaults.items():
            if not (given and name in COOLING_INPUTS):  # the correlation's inputs exist only with it
                self.set_input_defaults(name, value * np.ones(nn), units=units)

        set_coupled_solvers(self, self.options["coupled_solver"], nn)

    def guess(self, inputs, outputs, residuals):
        """Start the coupled unknowns from a physics guess unless the last solve converged.

        The loop's feedback unknowns are ``Fn_required`` (read by the cycle's sizing before the nacelle drag
        is known) and ``W2`` (read by the HP spool balance through the offtake per unit flow); every other
        output is recomputed from them by the solver's first Gauss-Seidel pass. Before the first solve and
        after a failed one (the group's solver records it, ``coupled_solver.last_solve_succeeded``) they are
        set from the last converged solution, scaled by the ratio of the thrust requirements (near the edge of
        the evaluable region, where a poor start can cross it on the way, this is the safer start), or, before
        any converged solve, from the inputs alone: ``Fn_required = thrust_required (1 +
        NACELLE_DRAG_FRACTION_GUESS)`` and ``W2 = Fn_required / FN_SPECIFIC_GUESS``. So a failed run (an
        absurd thrust) leaves nothing behind, and a problem gives the same result as a fresh one. After a
        converged solve the solution is kept as the start (a warm start is about five times faster),
        with ``Fn_required`` reset when it no longer lies between the new thrust requirement and twice it.
        Nothing is done under complex step.
        """
        if self.under_complex_step:
            return
        thrust = np.real(inputs["thrust_required"])
        fn_guess = thrust * (1.0 + NACELLE_DRAG_FRACTION_GUESS)
        solved_for = getattr(self, "_solve_thrust", None)  # the thrust requirement of the previous solve
        self._solve_thrust = thrust.copy()
        if not last_solve_succeeded(self):
            converged = getattr(self, "_last_converged", None)
            if converged is not None:  # the last converged solution, scaled to the thrust requirement
                scale = thrust / converged["thrust_required"]
                outputs["Fn_required"] = converged["Fn_required"] * scale
                outputs["W2"] = converged["W2"] * scale
            else:
                outputs["Fn_required"] = fn_guess
                outputs["W2"] = fn_guess / FN_SPECIFIC_GUESS
            return
        # the outputs are the previous (converged) solve's, so they pair with that solve's thrust requirement,
        # not with the new input
        self._last_converged = {"thrust_required": thrust.copy() if solved_for is None else solved_for,
                                "Fn_required": np.real(outputs["Fn_required"]).copy(),
                                "W2": np.real(outputs["W2"]).copy()}
        fn = np.real(outputs["Fn_required"])
        stale = ~np.isfinite(fn) | (fn < thrust) | (fn > 2.0 * thrust)
        if np.any(stale):
            outputs["Fn_required"] = np.where(stale, fn_guess, fn)
