"""One designed turbofan flown at the flight nodes of a mission: per-node thrust, fuel flow, temperatures, drag."""

import numpy as np
import openmdao.api as om

from bypassopt.components.defaults import ENGINE_DEFAULTS, INSTALLATION_DEFAULTS
from bypassopt.components.installation.nacelle_drag_comp import NacelleDragComp
from bypassopt.components.options import declare_gas
from bypassopt.components.validation import check_positive_option, check_range

from .multipoint_group import SHARED_INPUTS
from .off_design_group import GEOMETRY, OffDesignGroup

#: Shape of every per-engine (design) input: one value, broadcast to the flight nodes.
ONE = np.ones(1)

#: Largest throttle accepted: the rating line extrapolated 5 % past the maximum rating, as far as an
#: aircraft-design framework's steady-flight balance may push it while it iterates (OpenConcept 1.2.6 bounds
#: its throttle balance to 0.01-1.05; read in its source, ``mission/phases.py``).
THROTTLE_MAX = 1.05

#: Default HPT rotor inlet temperature at throttle 1, K: the demo's top-of-climb T41 limit (scenario.md), used
#: as the maximum climb and cruise rating.
TT41_MAX_RATING_DEFAULT = 1750.0
#: Default HPT rotor inlet temperature at throttle 0, K: a low-power stand-in of the demo, not a flight idle. The
#: map-free match reaches it everywhere from sea level to 10 km at M 0.45-0.8 on the demo engine (measured, with the
#: match's continuation); its lowest power lies near Tt41 = 945 K (``OffDesignGroup``: the burner's 1000 K at
#: altitude, the core nozzle pressure ratio near the ground), so a mission that descends at lower thrust than this
#: rating gives sets ``Tt41_min_rating`` lower (the OpenConcept example: 1000 K).
TT41_MIN_RATING_DEFAULT = 1150.0

#: The designed engine: per-engine inputs -> (default, units, description). The defaults are the demo engine
#: (shared/scenario.md, invented: BPR 10, FPR 1.5, OPR 40, Tt4 1650 K, 24 kN at top of climb, cooling sized at the
#: hot-day take-off), rounded; a user sets them from a design run.
#: Geometry (``OffDesignGroup`` inputs ``<name>_design``: ``FlowCapacityComp`` outputs of the design run).
GEOMETRY_DESIGN = {f"{k}_design": (v, GEOMETRY[k][0], f"design {GEOMETRY[k][1]}")
                   for k, v in (("W4_corrected", 2.76), ("W45_corrected", 13.5), ("area8", 0.314),
                                ("area18", 1.62), ("booster_temperature_rise_ratio", 1.49))}
#: Newton start values of the match (``OffDesignGroup``; they do not change the solution).
DESIGN_START = {
    "FPR_design": (1.5, None, "design-point fan pressure ratio (Newton start only)"),
    "OPR_design": (40.0, None, "design-point overall pressure ratio (Newton start only)"),
    "BPR_design": (10.0, None, "design-point bypass ratio (Newton start only)"),
    "booster_PR_design": (1.8, None, "design-point booster pressure ratio (Newton start only)"),
    "Tt4_design": (1650.0, "K", "design-point burner exit temperature (Newton start only)"),
    "Fn_design": (25.2e3, "N", "design-point net thrust (Newton start only)"),
    "Tt2_design": (256.7, "K", "design-point fan-face total temperature (Newton start only)"),
    "Pt2_design": (3.55e4, "Pa", "design-point fan-face total pressure (Newton start only)"),
}
#: Turbine cooling fractions held from the design (the cooling holes are geometry).
COOLING = {
    "hpt_vane_cooling_frac": (0.116, None, "HPT vane cooling air per unit core flow, from the design run"),
    "hpt_rotor_cooling_frac": (0.110, None, "HPT rotor cooling air per unit core flow, from the design run"),
}
#: Component values held at design (map-free method): ``multipoint_group.SHARED_INPUTS``.
SHARED = {k: (ENGINE_DEFAULTS[k][0], ENGINE_DEFAULTS[k][1], f"{k} (held at its design value)")
          for k in SHARED_INPUTS}
#: Nacelle of the designed engine (``NacelleGeometryComp`` outputs of the design) and the drag inputs that do not
#: change along the mission.
NACELLE = {
    "fan_cowl_length": (3.31, "m", "fan-cowl length"),
    "nacelle_max_diameter": (2.36, "m", "maximum nacelle diameter"),
    "fan_cowl_wetted_area": (24.6, "m**2", "fan-cowl wetted area"),
    "core_cowl_length": (1.01, "m", "exposed core-cowl length"),
    "core_cowl_wetted_area": (2.57, "m**2", "exposed core-cowl wetted area"),
    "plug_length": (0.50, "m", "core-nozzle plug length"),
    "plug_wetted_area": (0.35, "m**2", "core-nozzle plug wetted area"),
    "nacelle_interference_factor": (*INSTALLATION_DEFAULTS["nacelle_interference_factor"],
                                    "fan-cowl interference factor"),
    "pylon_drag_area": (*INSTALLATION_DEFAULTS["pylon_drag_area"], "pylon drag area"),
}
#: Every per-engine input that the off-design match reads.
OFF_DESIGN_INPUTS = {**GEOMETRY_DESIGN, **DESIGN_START, **COOLING, **SHARED}

#: Fully expanded jet states the nacelle drag reads: NacelleDragComp input -> OffDesignGroup output.
JETS = {f"{q}{st}_jet": f"{q}{st}_full" for st in ("18", "8") for q in ("V", "rho", "Ts", "Mach")}

#: Per-node outputs of the off-design match, promoted as ``<prefix><name>``.
NODE_OUTPUTS = ("fuel_flow", "TSFC", "Tt41", "Tt3", "Tt4", "W2")


class ThrottleRatingComp(om.ExplicitComponent):
    r"""HPT rotor inlet temperature asked for by a throttle setting: a linear temperature rating.

    .. math:: T_{t41,req} = T_{t41,min} + \delta\,(T_{t41,max} - T_{t41,min})

    with the throttle :math:`\delta` per flight node and the two rating temperatures of the engine
    (scalars, broadcast to every node): :math:`\delta = 1` is the maximum rating (``Tt41_max_rating``, the
    demo's top-of-climb T41 limit by default) and :math:`\delta = 0` the minimum (``Tt41_min_rating``, a
    flight-idle stand-in). A rating held at constant turbine temperature is common practice for
    temperature-limited conceptual engine decks; real ratings also schedule spool speeds and pressure ratios,
    which the map-free match cannot. Throttle above 1 extrapolates the line up to ``THROTTLE_MAX`` (1.05),
    the margin an aircraft framework's steady-flight balance may use while it iterates.

    Valid range: :math:`0 \le \delta \le 1.05`, :math:`T_{t41,max} > T_{t41,min} > 0` (checked: outside it
    ``InputRangeError``, an ``om.AnalysisError``). Linear: the partials are exact.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_flight_nodes", types=int, default=1, check_valid=check_positive_option,
                             desc="flight nodes of one engine (mission points), the length of every per-node "
                                  "variable")

    def setup(self):
        """Declare inputs and outputs."""
        nfn = self.options["num_flight_nodes"]
        self.add_input("throttle", val=np.ones(nfn), units=None,
                       desc="throttle per flight node: 0 minimum rating, 1 maximum rating")
        self.add_input("Tt41_min_rating", val=TT41_MIN_RATING_DEFAULT * ONE, units="K",
                       desc="HPT rotor inlet temperature at throttle 0 (one per engine)")
        self.add_input("Tt41_max_rating", val=TT41_MAX_RATING_DEFAULT * ONE, units="K",
                       desc="HPT rotor inlet temperature at throttle 1 (one per engine)")
        self.add_output("Tt41_required", val=TT41_MAX_RATING_DEFAULT * np.ones(nfn), units="K",
                        desc="HPT rotor inlet temperature the throttle asks for, per flight node")

    def setup_partials(self):
        """Declare the sparse partials: diagonal in the throttle, one column for each rating."""
        nfn = self.options["num_flight_nodes"]
        ar, zero = np.arange(nfn), np.zeros(nfn, dtype=int)
        self.declare_partials("Tt41_required", "throttle", rows=ar, cols=ar)
        self.declare_partials("Tt41_required", "Tt41_min_rating", rows=ar, cols=zero)
        self.declare_partials("Tt41_required", "Tt41_max_rating", rows=ar, cols=zero)

    def _check(self, inputs):
        where = self.pathname
        check_range("throttle", inputs["throttle"], 0.0, THROTTLE_MAX, where=where)
        check_range("Tt41_min_rating", inputs["Tt41_min_rating"], 0.0, np.inf, "K", lower_inclusive=False,
                    where=where)
        span = inputs["Tt41_max_rating"] - inputs["Tt41_min_rating"]
        check_range("Tt41_max_rating - Tt41_min_rating", span, 0.0, np.inf, "K", lower_inclusive=False, where=where)
        return span

    def compute(self, inputs, outputs):
        """Map the throttle onto the rating line."""
        span = self._check(inputs)
        outputs["Tt41_required"] = inputs["Tt41_min_rating"] + inputs["throttle"] * span

    def compute_partials(self, inputs, partials):
        """Exact partials of the linear rating."""
        span = self._check(inputs)
        throttle = inputs["throttle"]
        partials["Tt41_required", "throttle"] = span * np.ones_like(throttle)
        partials["Tt41_required", "Tt41_min_rating"] = 1.0 - throttle
        partials["Tt41_required", "Tt41_max_rating"] = throttle


class FlightNodeBroadcastComp(om.ExplicitComponent):
    r"""Per-engine values copied to every flight node: :math:`y_{i} = x` for :math:`i = 1 \ldots n_{fn}`.

    ``quantities`` maps each per-engine input name to (default, units, description); the output
    ``<name>_nodes`` has length ``num_flight_nodes``. The partials are the constant column of ones (exact).
    An explicit copy, not OpenMDAO's promotion with ``src_indices``: inside an aircraft framework that
    re-runs OpenMDAO's variable setup from its own ``configure`` (OpenConcept 1.2.6 with OpenMDAO 3.41), such a
    promotion clashed with the shape of a default the cycle group sets (measured), and a copy cannot.
    Valid for any finite input (a NaN raises ``InputRangeError``).
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_flight_nodes", types=int, default=1, check_valid=check_positive_option,
                             desc="flight nodes of one engine (mission points), the length of every output")
        self.options.declare("quantities", types=dict, default={},
                             desc="per-engine input name -> (default, units, description)")

    def setup(self):
        """Declare one scalar input and one per-node output per quantity."""
        nfn = self.options["num_flight_nodes"]
        for name, (val, units, desc) in self.options["quantities"].items():
            self.add_input(name, val=val * ONE, units=units, desc=desc)
            self.add_output(f"{name}_nodes", val=val * np.ones(nfn), units=units, desc=f"{desc}, at every node")

    def setup_partials(self):
        """Declare the sparse partials: one column per quantity (values set in compute_partials)."""
        nfn = self.options["num_flight_nodes"]
        ar, zero = np.arange(nfn), np.zeros(nfn, dtype=int)
        for name in self.options["quantities"]:
            self.declare_partials(f"{name}_nodes", name, rows=ar, cols=zero)

    def compute(self, inputs, outputs):
        """Copy each value to every node."""
        nfn = self.options["num_flight_nodes"]
        for name, (_, units, _) in self.options["quantities"].items():
            check_range(name, inputs[name], units=units or "", where=self.pathname)
            outputs[f"{name}_nodes"] = inputs[name] * np.ones(nfn)

    def compute_partials(self, inputs, partials):
        """d(value at node i)/d(value) = 1 (assigned here, not declared constant, so check_partials sees them)."""
        ones = np.ones(self.options["num_flight_nodes"])
        for name in self.options["quantities"]:
            partials[f"{name}_nodes", name] = ones


class FlightNodeEngineGroup(om.Group):
    r"""One designed turbofan evaluated at ``num_flight_nodes`` flight nodes, with its nacelle drag.

    The flight-node engine of a mission model: **one engine design**, whose geometry and component values are
    scalar inputs broadcast to every node, flown at each node's altitude, Mach number, ISA offset and power
    setting. Compare ``num_nodes`` in the rest of the package, which counts independent engine designs:
    here every per-node variable has length ``num_flight_nodes`` and every design input has length 1, so the
    two axes never mix. (One ``FlightNodeEngineGroup`` per design; a study of several designs adds several.)

    Subsystems:

    * ``broadcast`` (:class:`FlightNodeBroadcastComp`): the per-engine inputs copied to every node.
    * ``rating`` (``power_setting='throttle'``, :class:`ThrottleRatingComp`): throttle in [0, 1] -> HPT rotor
      inlet temperature on a linear rating between ``Tt41_min_rating`` and ``Tt41_max_rating``.
    * ``off_design`` (:class:`OffDesignGroup`, ``num_nodes=num_flight_nodes``): the map-free match (NGV flow
      capacities and nozzle areas held, component efficiencies held; field-reference 12.2), at the rated Tt41
      (``power_setting='Tt41'``) or at a net-thrust demand per node (``power_setting='thrust'``: input
      ``<prefix>Fn_required``, uninstalled net thrust).
    * ``drag`` (:class:`NacelleDragComp`): the design's nacelle (fan cowl, core cowl, plug, pylon) in each
      node's free stream and jets: fan cowl and pylon in the free stream, core cowl scrubbed by the bypass jet
      (station 18), plug by the core jet (station 8), fully expanded states from the nozzles.
    * ``installed`` (``om.AddSubtractComp``): installed net thrust = net thrust - nacelle drag (the drag
      booked as a thrust debit, as ``InstalledPerformanceComp`` does).

    **Promoted interface.** Per flight node, with the prefix of option ``prefix`` (default ``'engine:'``) so
    that a model that promotes ``*`` from this group keeps its own ``altitude``, ``thrust`` and
    ``fuel_flow``: inputs ``<prefix>altitude`` (m), ``<prefix>Mach0``, ``<prefix>dT_isa`` (K) and
    ``<prefix>throttle`` (or ``<prefix>Fn_required``, N); outputs ``<prefix>Fn`` (net thrust, throttle
    setting only), ``<prefix>installed_thrust``, ``<prefix>nacelle_drag``, ``<prefix>fuel_flow``,
    ``<prefix>TSFC``, ``<prefix>Tt41``, ``<prefix>Tt3``, ``<prefix>Tt4``, ``<prefix>W2``. Per engine
    (scalars): the geometry ``<name>_design`` for each name of ``off_design_group.GEOMETRY``
    (``FlowCapacityComp`` outputs of the design run), the cooling fractions ``hpt_vane_cooling_frac`` and
    ``hpt_rotor_cooling_frac`` (the design's ``cooling_frac_vane``/``cooling_frac_rotor``), the Newton start
    values ``DESIGN_START`` (design-point ``FPR``, ``OPR``, ``BPR``, ``booster_PR``, ``Tt4``, ``Fn``, ``Tt2``,
    ``Pt2``; they do not change the solution), the component values ``multipoint_group.SHARED_INPUTS`` by
    their plain names (as ``MultipointEngineGroup`` and ``InstalledEngineGroup`` name them), the nacelle
    geometry ``NACELLE`` (``NacelleGeometryComp`` outputs of the design) and the ratings
    ``Tt41_min_rating``/``Tt41_max_rating``. Every station variable stays reachable by its path
    (``off_design.Pt3``).

    **Derivatives**: analytic throughout (the elements' partials, the broadcast's constant column, the
    off-design Newton's direct solver): block-diagonal across nodes, one column per design input; complex-step
    safe.

    Valid where ``OffDesignGroup`` is (NGVs choked, the elements' ranges; a node that cannot be matched
    raises ``om.AnalysisError``, never NaN); throttle 0-1.05 (``ThrottleRatingComp``). The throttle rating
    is a constant-temperature rating (common practice for conceptual decks, not an engine control law).
    Low power near the ground, where the design-point start fails, is reached by the match's continuation
    (``OffDesignGroup``): on the demo engine every node of 0-10 km at Tt41 1150-1450 K converges (before the
    continuation, Tt41 below about 1450 K at sea level, 1300 K at 6 km and 1150-1300 K above 9 km raised,
    measured), down to about Tt41 = 945 K (the burner's 1000 K at altitude; near the ground the core nozzle
    pressure ratio falls to 1 there, 5.3 kN net thrust at 457 m, M 0.39). Option ``warm_start`` starts each
    match from the last converged one, as a mission model's solver re-solves the engine at nearby inputs.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_flight_nodes", types=int, default=1, check_valid=check_positive_option,
                             desc="flight nodes of one engine (mission points), the length of every per-node "
                                  "variable; not engine designs")
        declare_gas(self.options)
        self.options.declare("power_setting", default="throttle", values=("throttle", "thrust"),
                             desc="throttle per node on a Tt41 rating, or a net-thrust demand per node")
        self.options.declare("prefix", types=str, default="engine:",
                             desc="prefix of the promoted per-node names (keeps them apart from an aircraft "
                                  "model's altitude, thrust and fuel_flow)")
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="include the fuel mass in the flows (as the design point)")
        self.options.declare("warm_start", types=bool, default=False,
                             desc="start each match from the last converged one (OffDesignGroup option warm_start): "
                                  "for a mission model whose solver re-solves the engine at nearby inputs")

    def setup(self):
        """Assemble the rating, the off-design match, the nacelle drag and the installed thrust."""
        nfn = self.options["num_flight_nodes"]
        pre = self.options["prefix"]
        throttle = self.options["power_setting"] == "throttle"
        self.add_subsystem("broadcast", FlightNodeBroadcastComp(num_flight_nodes=nfn,
                                                                quantities={**OFF_DESIGN_INPUTS, **NACELLE}),
                           promotes_inputs=list(OFF_DESIGN_INPUTS) + list(NACELLE))
        if throttle:
            self.add_subsystem("rating", ThrottleRatingComp(num_flight_nodes=nfn),
                               promotes_inputs=[("throttle", f"{pre}throttle"), "Tt41_min_rating",
                                                "Tt41_max_rating"])
        off_design = OffDesignGroup(num_nodes=nfn, gas=self.options["gas"], power_setting="Tt41" if throttle
                                    else "thrust", include_fuel_mass=self.options["include_fuel_mass"],
                                    warm_start=self.options["warm_start"])
        flight = [(k, f"{pre}{k}") for k in ("altitude", "Mach0", "dT_isa")]
        power = [] if throttle else [("Fn_required", f"{pre}Fn_required")]
        outputs = [(k, f"{pre}{k}") for k in NODE_OUTPUTS + (("Fn",) if throttle else ())]
        self.add_subsystem("off_design", off_design, promotes_inputs=flight + power, promotes_outputs=outputs)
        for name in OFF_DESIGN_INPUTS:
            self.connect(f"broadcast.{name}_nodes", f"off_design.{name}")
        if throttle:
            self.connect("rating.Tt41_required", "off_design.Tt41_required")

        self.add_subsystem("drag", NacelleDragComp(num_nodes=nfn),
                           promotes_inputs=[("Mach0", f"{pre}Mach0")],
                           promotes_outputs=[("nacelle_drag", f"{pre}nacelle_drag")])
        for name in NACELLE:
            self.connect(f"broadcast.{name}_nodes", f"drag.{name}")
        for k in ("q0", "Re_per_m0"):
            self.connect(f"off_design.{k}", f"drag.{k}")
        for k, src in JETS.items():
            self.connect(f"off_design.{src}", f"drag.{k}")

        installed = om.AddSubtractComp()
        installed.add_equation("installed_thrust", ["Fn", "nacelle_drag"], vec_size=nfn, units="N",
                               scaling_factors=[1.0, -1.0],
                               desc="installed net thrust per engine: net thrust minus nacelle drag")
        # the net thrust: the match's output (throttle), or the demand itself (thrust)
        net = [] if throttle else [("Fn", f"{pre}Fn_required")]
        self.add_subsystem("installed", installed, promotes_inputs=[("nacelle_drag", f"{pre}nacelle_drag")] + net,
                           promotes_outputs=[("installed_thrust", f"{pre}installed_thrust")])
        if throttle:
            self.connect(f"{pre}Fn", "installed.Fn")

        for k, val, units in (("altitude", 10668.0, "m"), ("Mach0", 0.78, None), ("dT_isa", 0.0, "K")):
            self.set_input_defaults(f"{pre}{k}", val * np.ones(nfn), units=units)
        if not throttle:
            self.set_input_defaults(f"{pre}Fn_required", DESIGN_START["Fn_design"][0] * np.ones(nfn), units="N")
