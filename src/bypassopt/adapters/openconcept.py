"""The turbofan as an OpenConcept propulsion system: sized once at top of climb, flown at every mission node.

OpenConcept (an aircraft-design library on OpenMDAO; tested with 1.2.6) passes ``num_nodes`` flight nodes
to an aircraft model in each mission phase and promotes the model's variables with ``*``. Its conventions,
read in its source: flight condition ``fltcond|h`` (m), ``fltcond|M``; per-node ``throttle`` (0 to 1 or
slightly more), ``thrust`` and ``fuel_flow`` of the whole aircraft; aircraft data ``ac|...`` promoted
into every phase. This module needs nothing from OpenConcept itself (it is plain OpenMDAO named the
framework's way), so it imports without it.

Two groups, because a mission instantiates the aircraft model once per phase:

* :class:`TurbofanSizingGroup`, placed once at the aircraft level: designs the engine at top of climb
  (with its own nacelle drag), checks it at a hot-day take-off, and publishes the sized engine as
  ``ac|propulsion|...`` outputs (geometry, cooling fractions, nacelle, mass, the limits' values).
* :class:`TurbofanPropulsionSystem`, placed in the aircraft model of every phase: flies that engine at the
  phase's nodes and promotes only ``thrust`` and ``fuel_flow`` (aircraft totals) and its ``fltcond|``,
  ``throttle`` and ``ac|propulsion|...`` inputs, which the mission's ``ac|*`` promotion connects to the
  sizing group's outputs by name.
"""

import numpy as np
import openmdao.api as om

from bypassopt.components.coupled_solver import last_solve_succeeded, set_coupled_solvers
from bypassopt.components.cycle.flight_node_engine_group import (COOLING, NACELLE, TT41_MAX_RATING_DEFAULT,
                                                                 TT41_MIN_RATING_DEFAULT, FlightNodeEngineGroup)
from bypassopt.components.cycle.multipoint_group import COOLING_INPUTS, SHARED_INPUTS, MultipointEngineGroup
from bypassopt.components.cycle.off_design_group import GEOMETRY
from bypassopt.components.defaults import ENGINE_DEFAULTS, INSTALLATION_DEFAULTS
from bypassopt.components.installation.engine_mass_comp import EngineMassComp
from bypassopt.components.installation.fan_sizing_comp import FanSizingComp
from bypassopt.components.installation.ground_clearance_comp import GroundClearanceComp
from bypassopt.components.installation.installed_performance_comp import InstalledPerformanceComp
from bypassopt.components.installation.nacelle_drag_comp import NacelleDragComp
from bypassopt.components.installation.nacelle_geometry_comp import NacelleGeometryComp
from bypassopt.components.validation import check_positive_option, check_range

#: Shape of every aircraft-level value.
ONE = np.ones(1)

#: Prefix of every aircraft-level name of the propulsion system.
AC = "ac|propulsion|"
ENGINE, DESIGN, TAKEOFF, NACELLE_AC, INSTALLATION = (f"{AC}engine|", f"{AC}design|", f"{AC}takeoff|",
                                                     f"{AC}nacelle|", f"{AC}installation|")

#: Cycle choices of the design point (``MultipointEngineGroup`` inputs) -> (default, units). The demo's
#: starting point (shared/scenario.md, invented).
CYCLE_CHOICES = {"BPR": (10.0, None), "FPR": (1.5, None), "OPR": (40.0, None), "Tt4": (1650.0, "K"),
                 "booster_PR": ENGINE_DEFAULTS["booster_PR"]}

#: Flight condition and thrust of a sizing point: ``ac|propulsion|<point>|<key>`` -> (multipoint input name
#: after ``<point>:``, units). ``thrust``: at top of climb the installed thrust per engine the airframe needs
#: (before the engine's own nacelle drag); at take-off the uninstalled net thrust per engine.
POINT_KEYS = {"altitude": ("altitude", "m"), "Mach": ("Mach0", None), "dT_isa": ("dT_isa", "K")}

#: Defaults of the sizing points: the invented demo twin 170 of shared/scenario.md.
DESIGN_DEFAULTS = {"altitude": 10668.0, "Mach": 0.78, "dT_isa": 10.0, "thrust": 24.0e3}
TAKEOFF_DEFAULTS = {"altitude": 0.0, "Mach": 0.25, "dT_isa": 15.0, "thrust": 105.0e3}

#: Installation inputs of the sizing (``INSTALLATION_DEFAULTS`` names), promoted as ``ac|propulsion|installation|``.
INSTALLATION_INPUTS = tuple(INSTALLATION_DEFAULTS)
#: Of those, the ones each installation component reads (the nacelle drag reads its two at every node too).
FAN_SIZING_INPUTS = ("fan_face_mach", "fan_hub_tip_ratio", "core_entry_mach", "core_entry_hub_tip_ratio",
                     "fan_tip_loading")
NACELLE_INPUTS = ("nacelle_diameter_ratio", "containment_allowance", "fan_cowl_length_ratio",
                  "core_cowl_diameter_ratio", "core_cowl_length_ratio", "core_exit_diameter_ratio",
                  "plug_diameter_ratio", "plug_length_ratio")
CLEARANCE_INPUTS = ("wing_height", "nacelle_wing_gap", "min_ground_clearance", "max_nacelle_diameter")
DRAG_INSTALLATION_INPUTS = ("nacelle_interference_factor", "pylon_drag_area")

#: Design-point station values the flight nodes start their Newton from (``FlightNodeEngineGroup``
#: ``<name>_design``), published as ``ac|propulsion|design|<name>``.
START_STATIONS = ("Tt2", "Pt2")

#: Nacelle geometry published as ``ac|propulsion|nacelle|<name>`` (the sizing's NacelleGeometryComp outputs that
#: the drag at every node reads).
NACELLE_GEOMETRY = tuple(k for k in NACELLE if k not in DRAG_INSTALLATION_INPUTS)

#: Fully expanded jets the nacelle drag reads: NacelleDragComp input -> cycle output.
JETS = {f"{q}{st}_jet": f"{q}{st}_full" for st in ("18", "8") for q in ("V", "rho", "Ts", "Mach")}

#: Iterations of the sizing Newton (the drag and cooling loops; about four are needed on the demo engine).
SIZING_MAXITER = 15

#: Nacelle drag as a fraction of the top-of-climb thrust in the start value of the design net thrust (the demo
#: engine's is 4.7 %; common practice: a few per cent of cruise thrust).
NACELLE_DRAG_FRACTION_GUESS = 0.05


class AircraftTotalsComp(om.ExplicitComponent):
    r"""Aircraft totals of per-engine quantities: :math:`y = n_{eng}\,x` for each quantity.

    ``quantities`` maps each output name to (input name, units, description); every input and output has
    length ``num_nodes``. Linear, so the partials are the constant :math:`n_{eng}` on the diagonal (given once).
    Valid for any finite input (checked: a NaN raises ``InputRangeError``).
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, check_valid=check_positive_option,
                             desc="length of every variable (flight nodes, or 1 for an aircraft-level value)")
        self.options.declare("num_engines", types=int, default=2, check_valid=check_positive_option,
                             desc="engines on the aircraft")
        self.options.declare("quantities", types=dict, default={},
                             desc="output name -> (per-engine input name, units, description)")

    def setup(self):
        """Declare one input and one output per quantity."""
        nn = self.options["num_nodes"]
        for out, (inp, units, desc) in self.options["quantities"].items():
            self.add_input(inp, val=np.ones(nn), units=units, desc=f"per engine: {desc}")
            self.add_output(out, val=np.ones(nn), units=units, desc=f"all engines: {desc}")

    def setup_partials(self):
        """Declare the constant diagonal partials."""
        ar = np.arange(self.options["num_nodes"])
        n = float(self.options["num_engines"])
        for out, (inp, _, _) in self.options["quantities"].items():
            self.declare_partials(out, inp, rows=ar, cols=ar, val=n)

    def compute(self, inputs, outputs):
        """Multiply by the number of engines."""
        n = float(self.options["num_engines"])
        for out, (inp, units, _) in self.options["quantities"].items():
            check_range(inp, inputs[inp], units=units or "", where=self.pathname)
            outputs[out] = n * inputs[inp]


class TurbofanSizingGroup(om.Group):
    r"""Engine of an OpenConcept aircraft sized at top of climb, checked at take-off: once per aircraft.

    Subsystems (each reachable by path): ``multipoint`` (``MultipointEngineGroup`` with one off-design point,
    ``takeoff``, where the turbine cooling is sized: the hottest point), ``fan_sizing``, ``nacelle``,
    ``drag``, ``installed``, ``mass`` and ``clearance`` (the installation components of
    ``InstalledEngineGroup``, at the top-of-climb design point). The design net thrust is the airframe's
    installed requirement plus the nacelle's own drag, which grows with the engine it sizes; this group's
    Newton solver (``set_coupled_solvers``; ``om.DirectSolver``) closes that loop around the multipoint
    engine's own solvers, so total derivatives come through the converged system.

    **Inputs** (all aircraft level, promoted under ``ac|propulsion|``):

    * ``ac|propulsion|engine|<name>``: the cycle choices ``BPR``, ``FPR``, ``OPR``, ``Tt4`` (burner exit at
      top of climb, K), ``booster_PR``; the component values ``multipoint_group.SHARED_INPUTS``
      (efficiencies, losses, extractions, fuel heating value) and the cooling correlation's
      ``COOLING_INPUTS``;
    * ``ac|propulsion|design|altitude`` (m), ``|Mach``, ``|dT_isa`` (K), ``|thrust`` (installed thrust per
      engine the airframe needs at top of climb, before the nacelle drag, N);
    * ``ac|propulsion|takeoff|altitude``, ``|Mach``, ``|dT_isa``, ``|thrust`` (net thrust per engine, N);
    * ``ac|propulsion|installation|<name>`` for the names of ``defaults.INSTALLATION_DEFAULTS`` (wing height,
      nacelle-wing gap, minimum clearance, nacelle diameter limit, nacelle proportions, fan sizing).

    **Outputs**: the sized engine for :class:`TurbofanPropulsionSystem` (``ac|propulsion|engine|<name>`` for
    the geometry names of ``off_design_group.GEOMETRY``, ``ac|propulsion|engine|hpt_vane_cooling_frac``
    and ``|hpt_rotor_cooling_frac``, ``ac|propulsion|nacelle|<name>`` for the nacelle geometry,
    ``ac|propulsion|design|Fn``, ``|Tt2``, ``|Pt2``), the values limits are written against
    (``ac|propulsion|takeoff|Tt41``, ``|Tt3``, ``ac|propulsion|design|Tt41``, ``|Tt3``,
    ``ac|propulsion|clearance_margin``, ``ac|propulsion|diameter_margin`` in m, >= 0 feasible) and
    ``ac|propulsion|engine|fan_tip_diameter``, ``ac|propulsion|design|installed_TSFC``,
    ``ac|propulsion|engine|powerplant_mass`` (per engine) and ``ac|propulsion|mass`` (all ``num_engines``:
    the aircraft total, kg).

    Cost (measured on the demo engine, 2-core machine shared with other work): a new design about 0.5 s (the
    Newton closes both loops in about four iterations, each re-matching the take-off point), totals of three
    outputs w.r.t. two inputs through it and a 5-node phase 0.1-0.2 s. Raises ``om.AnalysisError`` where the
    design or the take-off point cannot be evaluated.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_engines", types=int, default=2, check_valid=check_positive_option,
                             desc="engines on the aircraft (for the aircraft's total powerplant mass)")

    def setup(self):
        """Assemble the multipoint engine and the top-of-climb installation."""
        multi_in = [(k, f"{ENGINE}{k}") for k in list(CYCLE_CHOICES) + list(SHARED_INPUTS) + list(COOLING_INPUTS)]
        for point, pre in (("design", DESIGN), ("takeoff", TAKEOFF)):
            multi_in += [(f"{point}:{name}", f"{pre}{key}") for key, (name, _) in POINT_KEYS.items()]
        multi_in.append(("takeoff:Fn_required", f"{TAKEOFF}thrust"))
        multi_out = [("takeoff:Tt41", f"{TAKEOFF}Tt41"), ("takeoff:Tt3", f"{TAKEOFF}Tt3"),
                     ("design:Tt41", f"{DESIGN}Tt41"), ("design:Tt3", f"{DESIGN}Tt3"),
                     ("cooling_frac_vane", f"{ENGINE}hpt_vane_cooling_frac"),
                     ("cooling_frac_rotor", f"{ENGINE}hpt_rotor_cooling_frac")]
        multi_out += [(f"design.{k}", f"{ENGINE}{k}") for k in GEOMETRY]
        multi_out += [(f"design.{k}", f"{DESIGN}{k}") for k in START_STATIONS]
        self.add_subsystem("multipoint", MultipointEngineGroup(num_nodes=1, off_design_points=("takeoff",),
                                                               cooling_point="takeoff"),
                           promotes_inputs=multi_in, promotes_outputs=multi_out)

        def installation(names):
            return [(k, f"{INSTALLATION}{k}") for k in names]

        self.add_subsystem("fan_sizing", FanSizingComp(),
                           promotes_inputs=[("BPR", f"{ENGINE}BPR")] + installation(FAN_SIZING_INPUTS),
                           promotes_outputs=[("fan_tip_diameter", f"{ENGINE}fan_tip_diameter")])
        # by the names the multipoint engine and this group promote its design outputs under
        self.connect("multipoint.design:W2", "fan_sizing.W2")
        for k in START_STATIONS:
            self.connect(f"{DESIGN}{k}", f"fan_sizing.{k}")
        for k in ("Tt25", "Pt25", "fan_bypass_work"):
            self.connect(f"multipoint.design.{k}", f"fan_sizing.{k}")

        self.add_subsystem("nacelle", NacelleGeometryComp(),
                           promotes_inputs=[("fan_tip_diameter", f"{ENGINE}fan_tip_diameter")]
                           + installation(NACELLE_INPUTS),
                           promotes_outputs=[(k, f"{NACELLE_AC}{k}")
                                             for k in NACELLE_GEOMETRY + ("nacelle_wetted_area",)])
        self.connect("fan_sizing.core_inlet_tip_diameter", "nacelle.core_inlet_tip_diameter")

        self.add_subsystem("drag", NacelleDragComp(),
                           promotes_inputs=[("Mach0", f"{DESIGN}Mach")]
                           + [(k, f"{NACELLE_AC}{k}") for k in NACELLE_GEOMETRY]
                           + installation(DRAG_INSTALLATION_INPUTS))
        for k in ("q0", "Re_per_m0"):
            self.connect(f"multipoint.design.{k}", f"drag.{k}")
        for k, src in JETS.items():
            self.connect(f"multipoint.design.{src}", f"drag.{k}")

        self.add_subsystem("installed", InstalledPerformanceComp(),
                           promotes_inputs=[("thrust_required", f"{DESIGN}thrust")],
                           promotes_outputs=[("Fn_required", f"{DESIGN}Fn"),
                                             ("installed_TSFC", f"{DESIGN}installed_TSFC")])
        self.connect("drag.nacelle_drag", "installed.nacelle_drag")
        for k in ("W2", "Fn_specific", "fuel_flow"):
            self.connect(f"multipoint.design:{k}", f"installed.{k}")
        self.connect(f"{DESIGN}Fn", "multipoint.design:Fn_required")

        self.add_subsystem("mass", EngineMassComp(),
                           promotes_inputs=[("fan_tip_diameter", f"{ENGINE}fan_tip_diameter"), ("OPR", f"{ENGINE}OPR")],
                           promotes_outputs=[("powerplant_mass", f"{ENGINE}powerplant_mass")])
        for k in ("W25_corrected", "LP_shaft_power"):
            self.connect(f"multipoint.design.{k}", f"mass.{k}")
        self.connect(f"{NACELLE_AC}nacelle_wetted_area", "mass.nacelle_wetted_area")
        total = AircraftTotalsComp(num_engines=self.options["num_engines"], quantities={
            "mass": ("powerplant_mass", "kg", "powerplant mass (dry engine, nacelle, pylon)")})
        self.add_subsystem("total_mass", total, promotes_inputs=[("powerplant_mass", f"{ENGINE}powerplant_mass")],
                           promotes_outputs=[("mass", f"{AC}mass")])

        self.add_subsystem("clearance", GroundClearanceComp(),
                           promotes_inputs=[("nacelle_max_diameter", f"{NACELLE_AC}nacelle_max_diameter")]
                           + installation(CLEARANCE_INPUTS),
                           promotes_outputs=[("clearance_margin", f"{AC}clearance_margin"),
                                             ("diameter_margin", f"{AC}diameter_margin")])

        for name, (val, units) in CYCLE_CHOICES.items():
            self.set_input_defaults(f"{ENGINE}{name}", val * ONE, units=units)
        for name in SHARED_INPUTS + COOLING_INPUTS:
            val, units = ENGINE_DEFAULTS[name]
            self.set_input_defaults(f"{ENGINE}{name}", val * ONE, units=units)
        for pre, defaults in ((DESIGN, DESIGN_DEFAULTS), (TAKEOFF, TAKEOFF_DEFAULTS)):
            for key, val in defaults.items():
                units = "N" if key == "thrust" else POINT_KEYS[key][1]
                self.set_input_defaults(f"{pre}{key}", val * ONE, units=units)
        for name in INSTALLATION_INPUTS:
            val, units = INSTALLATION_DEFAULTS[name]
            self.set_input_defaults(f"{INSTALLATION}{name}", val * ONE, units=units)

        set_coupled_solvers(self, "newton", 1, maxiter=SIZING_MAXITER)
        self.nonlinear_solver.options["max_sub_solves"] = SIZING_MAXITER

    def configure(self):
        """Let this group's Newton close the multipoint engine's cooling loop together with the drag loop.

        ``MultipointEngineGroup`` closes its cooling loop with its own Newton; nested inside this group's
        (the drag loop) it would re-converge at every outer iteration, and each of its iterations re-solves the
        take-off match from the design point. One Newton over both loops needs about a third of the take-off
        solves (measured on the demo engine). The points' own solvers (the design cycle's, the take-off
        match's) stay as they are.
        """
        self.multipoint.nonlinear_solver = om.NonlinearRunOnce()
        self.multipoint.linear_solver = om.LinearRunOnce()

    def guess_nonlinear(self, inputs, outputs, residuals):
        """Start the design net thrust at the requirement plus a typical nacelle drag unless the last solve converged.

        The loop's feedback unknown is the design net thrust ``ac|propulsion|design|Fn`` (read by the multipoint
        engine before the nacelle drag is known). Before the first solve and after a failed one it is reset to
        ``thrust (1 + NACELLE_DRAG_FRACTION_GUESS)`` from the input alone, so a failed run leaves nothing behind;
        after a converged solve the solution is kept as the start. Nothing is done under complex step.
        """
        if self.under_complex_step or last_solve_succeeded(self):
            return
        outputs[f"{DESIGN}Fn"] = np.real(inputs[f"{DESIGN}thrust"]) * (1.0 + NACELLE_DRAG_FRACTION_GUESS)


class TurbofanPropulsionSystem(om.Group):
    r"""OpenConcept propulsion system: the sized turbofan flown at the phase's nodes, aircraft totals out.

    For the aircraft model OpenConcept builds in every mission phase (option ``num_nodes``: the phase's
    flight nodes, OpenConcept's own option name; not independent engine designs). One
    :class:`~bypassopt.components.cycle.flight_node_engine_group.FlightNodeEngineGroup` (subsystem ``engine``,
    ``power_setting='throttle'``) flies the engine that :class:`TurbofanSizingGroup` sized, and
    ``om.AddSubtractComp`` (``totals``) multiplies per-engine values by ``num_engines``.

    **Promoted interface** (nothing else, so ``promotes=['*']`` into an aircraft model keeps its own names):

    * per node, from the framework: ``fltcond|h`` (m), ``fltcond|M`` and ``throttle`` (0-1.05; 1 is the
      maximum rating ``ac|propulsion|engine|Tt41_max_rating``), and ``fltcond|dT_isa`` (K, default 0: the
      engine's own ISO 2533 atmosphere offset; keep it equal to OpenConcept's ``fltcond|TempIncrement``,
      which is in degC and so cannot be connected through a unit conversion);
    * per node, out: ``thrust`` (installed net thrust of all engines, nacelle drag booked as a thrust debit,
      so the airframe drag must exclude the nacelles) and ``fuel_flow`` (all engines, kg/s);
    * per aircraft, in: the sized engine (the outputs of :class:`TurbofanSizingGroup` of the same names),
      the cycle choices and component values ``ac|propulsion|engine|<name>`` shared with the sizing, and
      the rating ``ac|propulsion|engine|Tt41_min_rating``/``Tt41_max_rating`` (K).

    Per-engine values stay reachable by path: ``engine.engine:Tt41``, ``engine.engine:installed_thrust``,
    ``engine.engine:nacelle_drag``, ``engine.off_design.Pt3``. The engine computes its own atmosphere from
    ``fltcond|h``; OpenConcept's atmosphere smooths the tropopause between 10.5 and 11.5 km, so the two differ
    slightly there (the engine's is ISO 2533). The engine starts each match from its last converged one
    (``FlightNodeEngineGroup`` option ``warm_start``), and low power near the ground is reached by the
    match's continuation (``OffDesignGroup``); a node below the match's lowest power (about Tt41 = 945 K on the
    demo engine: the burner's range at altitude, the core nozzle pressure ratio near the ground) raises
    ``om.AnalysisError``. A descent whose thrust is below that of ``Tt41_min_rating`` needs a lower rating
    (the example's 1000 K) or a shallower descent: the framework's throttle cannot go below 0.

    Inside a framework's Newton solver: the solver's first ``guess_nonlinear`` reaches the engine before any
    upstream output exists, so give the phase's ``fltcond|M`` and ``throttle`` start values inside the match's
    range (OpenConcept's defaults are Mach 1 and throttle 0.5), and use a line search that does not judge the
    residual on its first trial (``om.BoundsEnforceLS``): with ``solve_subsystems`` that trial sees every engine
    node's stale inner states and cuts good steps. A 5-node phase solves in about 0.2-0.4 s from its last
    solution; a first solve at low power near the ground, where the match needs its continuation, a few seconds.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, check_valid=check_positive_option,
                             desc="flight nodes of the mission phase (OpenConcept's option)")
        self.options.declare("num_engines", types=int, default=2, check_valid=check_positive_option,
                             desc="engines on the aircraft: thrust and fuel flow are totals over them")

    def setup(self):
        """Add the flight-node engine and the aircraft totals."""
        nn = self.options["num_nodes"]
        inputs = [("engine:altitude", "fltcond|h"), ("engine:Mach0", "fltcond|M"),
                  ("engine:dT_isa", "fltcond|dT_isa"), ("engine:throttle", "throttle")]
        inputs += [(f"{k}_design", f"{ENGINE}{k}") for k in GEOMETRY]
        inputs += [(f"{k}_design", f"{ENGINE}{k}") for k in ("FPR", "OPR", "BPR", "booster_PR", "Tt4")]
        inputs += [("Fn_design", f"{DESIGN}Fn")] + [(f"{k}_design", f"{DESIGN}{k}") for k in START_STATIONS]
        inputs += [(k, f"{ENGINE}{k}") for k in list(COOLING) + list(SHARED_INPUTS)]
        inputs += [(k, f"{ENGINE}{k}") for k in ("Tt41_min_rating", "Tt41_max_rating")]
        inputs += [(k, f"{NACELLE_AC}{k}") for k in NACELLE_GEOMETRY]
        inputs += [(k, f"{INSTALLATION}{k}") for k in DRAG_INSTALLATION_INPUTS]
        self.add_subsystem("engine", FlightNodeEngineGroup(num_flight_nodes=nn, power_setting="throttle",
                                                           prefix="engine:", warm_start=True),
                           promotes_inputs=inputs)

        totals = AircraftTotalsComp(num_nodes=nn, num_engines=self.options["num_engines"], quantities={
            "thrust": ("installed_thrust", "N", "installed net thrust (nacelle drag booked as a thrust debit)"),
            "fuel_flow": ("engine_fuel_flow", "kg/s", "fuel flow")})
        self.add_subsystem("totals", totals, promotes_outputs=["thrust", "fuel_flow"])
        self.connect("engine.engine:installed_thrust", "totals.installed_thrust")
        self.connect("engine.engine:fuel_flow", "totals.engine_fuel_flow")

        self.set_input_defaults("fltcond|dT_isa", np.zeros(nn), units="K")
        self.set_input_defaults(f"{ENGINE}Tt41_min_rating", TT41_MIN_RATING_DEFAULT * ONE, units="K")
        self.set_input_defaults(f"{ENGINE}Tt41_max_rating", TT41_MAX_RATING_DEFAULT * ONE, units="K")
        for name, (val, units) in CYCLE_CHOICES.items():
            self.set_input_defaults(f"{ENGINE}{name}", val * ONE, units=units)
        for name in SHARED_INPUTS:
            val, units = ENGINE_DEFAULTS[name]
            self.set_input_defaults(f"{ENGINE}{name}", val * ONE, units=units)
        for name in DRAG_INSTALLATION_INPUTS:
            val, units = INSTALLATION_DEFAULTS[name]
            self.set_input_defaults(f"{INSTALLATION}{name}", val * ONE, units=units)
