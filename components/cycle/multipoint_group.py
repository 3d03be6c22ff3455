"""One turbofan sized at its design point and matched, map-free, at further flight points (multipoint cycle)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.coupled_solver import set_coupled_solvers
from bypassopt.components.defaults import ENGINE_DEFAULTS
from bypassopt.components.options import declare_gas, declare_num_nodes

from .cooling_comp import CoolingBleedComp
from .cycle_group import TurbofanCycleGroup
from .flow_capacity_comp import FlowCapacityComp
from .off_design_group import GEOMETRY, OffDesignGroup

#: Name of the design point: its flight condition and outputs carry the prefix ``design:``.
DESIGN_POINT = "design"

#: Engine inputs every point shares (the design's component efficiencies, losses, extractions and fuel).
SHARED_INPUTS = ("fan_bypass_eff_poly", "fan_core_eff_poly", "booster_eff_poly", "hpc_eff_poly", "hpt_eff_poly",
                 "lpt_eff_poly", "HP_mech_eff", "LP_mech_eff", "inlet_recovery", "burner_pressure_loss",
                 "combustion_eff", "core_duct_pressure_loss", "bypass_duct_pressure_loss",
                 "core_nozzle_velocity_coeff", "bypass_nozzle_velocity_coeff", "core_nozzle_discharge_coeff",
                 "bypass_nozzle_discharge_coeff", "customer_bleed_frac", "HP_power_offtake", "fuel_LHV")

#: Inputs of the cooling correlation (CoolingBleedComp, cooling_model='correlation').
COOLING_INPUTS = ("vane_metal_temperature", "rotor_metal_temperature", "vane_cooling_constant",
                  "rotor_cooling_constant", "rotor_relative_temperature_ratio")

#: Cycle choices of the design point; the off-design points read them as their Newton start (``<name>_design``).
CYCLE_CHOICES = {"BPR": (10.0, None), "FPR": (1.5, None), "OPR": (40.0, None), "Tt4": (1650.0, "K"),
                 "booster_PR": ENGINE_DEFAULTS["booster_PR"]}

#: Default design-point net thrust, N (the demo's top of climb, scenario.md; a user sets it).
FN_DESIGN_DEFAULT = 24.0e3

#: Per-point inputs, promoted as ``<point>:<name>``.
POINT_INPUTS = ("altitude", "Mach0", "dT_isa", "Fn_required")

#: Per-point outputs, promoted as ``<point>:<name>`` (the design point: those that are not its inputs).
POINT_OUTPUTS = ("Tt41", "Tt3", "Tt4", "TSFC", "FPR", "OPR", "BPR", "W2", "fuel_flow", "Fn_specific")
DESIGN_OUTPUTS = ("Tt41", "Tt3", "TSFC", "W2", "fuel_flow", "Fn_specific", "cooling_frac_vane",
                  "cooling_frac_rotor")

#: Outer (cooling-coupling) Newton: every point re-converged inside each iteration; the residual norm is that of
#: the points' normalised balances.
OUTER_ATOL = 1e-8
OUTER_RTOL = 1e-12
OUTER_MAXITER = 10


def _check_points(name, value):
    """Check the ``off_design_points`` option: distinct identifiers, none equal to the design point's name."""
    ok = (len(value) > 0 and len(set(value)) == len(value)
          and all(isinstance(n, str) and n.isidentifier() and n != DESIGN_POINT for n in value))
    if not ok:
        raise ValueError(f"{name} must be a non-empty tuple of distinct identifiers other than {DESIGN_POINT!r}, "
                         f"got {value!r}")


class MultipointEngineGroup(om.Group):
    r"""One turbofan per node, sized at its design point and matched map-free at each off-design point.

    **Design point** (subsystem ``design``): ``TurbofanCycleGroup`` (its own Newton for the W2 <-> offtake
    loop) and ``FlowCapacityComp``; at top of climb in the demo use (common practice: the cycle is designed
    where the corrected flow is highest). Its flight condition and thrust requirement are the inputs
    ``design:altitude``, ``design:Mach0``, ``design:dT_isa``, ``design:Fn_required``; the cycle choices
    ``BPR``, ``FPR``, ``OPR``, ``Tt4`` (burner exit, design point) and ``booster_PR`` and the component
    values (``SHARED_INPUTS``: polytropic efficiencies, losses, nozzle coefficients, mechanical efficiencies,
    customer bleed, HP offtake, fuel heating value) keep their plain names.

    **Off-design points** (one ``OffDesignGroup`` with ``power_setting='thrust'`` per name in
    ``off_design_points``, subsystem of that name): the design's geometry (``FlowCapacityComp`` outputs:
    NGV flow capacities, nozzle throat areas, booster temperature-rise ratio), its fan-face ``Tt2``/``Pt2``
    and cycle choices (Newton start only) are connected in; the component values are the same promoted
    inputs as the design's (map-free method, field-reference 12.2: efficiencies and losses held at design;
    the customer bleed and HP offtake are held too, a simplification). Per point ``p`` the inputs
    ``p:altitude``, ``p:Mach0``, ``p:dT_isa``, ``p:Fn_required`` and the outputs ``p:Tt41``, ``p:Tt3``,
    ``p:Tt4``, ``p:TSFC``, ``p:FPR``, ``p:OPR``, ``p:BPR``, ``p:W2``, ``p:fuel_flow``, ``p:Fn_specific``
    are promoted; the colon keeps them apart from an aircraft model's plain ``altitude`` or ``thrust``.
    Every other station variable is reachable by its path (``takeoff.Pt3``).

    **Turbine cooling** (option ``cooling_point``): the cooling holes are geometry, so one pair of
    fractions :math:`\psi_v`, :math:`\psi_r` (per unit core flow) holds at every point. With
    ``cooling_point`` the name of an off-design point (default ``'takeoff'``), they are sized where the gas
    is hottest: ``CoolingBleedComp(cooling_model='correlation')`` (subsystem ``cooling_sizing``;
    Horlock/El-Masri correlation, see that component) is evaluated at that point's ``Tt3`` and ``Tt4``,
    and its fractions feed the design point and every off-design point (``hpt_*_cooling_frac`` inputs).
    This closes a loop (the fractions change the design, hence the geometry, hence the take-off
    temperatures), solved by a group-level Newton (``set_coupled_solvers``: Newton, ``om.DirectSolver``)
    that re-converges every point's own solver inside each iteration (``max_sub_solves``); measured on the
    demo engine it converges in about three iterations, where block Gauss-Seidel on the same loop stalled
    on the absolute tolerance of the stations' pressures. Derivatives come from the direct solver over the
    whole group. With ``cooling_point='design'`` the design point's own correlation sizes them
    (at top-of-climb temperatures) and there is no loop; off-design points hotter than the design then run
    with too little cooling air (a known limitation of that choice). The correlation's inputs
    (``COOLING_INPUTS``) keep their plain names.

    Cost (measured on the demo engine, one design, take-off and cruise points, 2-core machine): one evaluation
    about 1.7 s with the take-off cooling loop (0.9 s with ``cooling_point='design'``) against 15 ms for
    ``TurbofanCycleGroup`` alone; totals of two outputs w.r.t. four cycle choices 52 ms (36 ms) against 10 ms.
    Each off-design Newton restarts from the design point at every solve (``OffDesignGroup``), which
    dominates the evaluation time.

    With every off-design point at the design flight condition and thrust, each reproduces the design point
    (tests). Nodes are independent engine designs (``num_nodes``); points are the flight conditions of one
    engine. Raises ``om.AnalysisError`` where a point cannot be matched (``OffDesignGroup``).
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("off_design_points", types=tuple, default=("takeoff", "cruise"),
                             check_valid=_check_points,
                             desc="names of the off-design points (each matched at its own flight condition "
                                  "and thrust)")
        self.options.declare("cooling_point", types=str, default="takeoff",
                             desc="point whose Tt3/Tt4 size the turbine cooling fractions: an off-design "
                                  "point's name, or 'design'")
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="include the fuel mass in the flows (every point)")

    def setup(self):
        """Assemble the design point, the off-design points and the cooling sizing."""
        nn = self.options["num_nodes"]
        gas = self.options["gas"]
        points = self.options["off_design_points"]
        cooling_point = self.options["cooling_point"]
        if cooling_point != DESIGN_POINT and cooling_point not in points:
            raise ValueError(f"{self.msginfo}: cooling_point {cooling_point!r} is neither {DESIGN_POINT!r} nor one "
                             f"of off_design_points {points!r}")
        coupled = cooling_point != DESIGN_POINT
        fuel = self.options["include_fuel_mass"]
        ones = np.ones(nn)

        design = om.Group()
        design.add_subsystem("cycle", TurbofanCycleGroup(num_nodes=nn, gas=gas, include_fuel_mass=fuel,
                                                         cooling_model="given" if coupled else "correlation"),
                             promotes=["*"])
        design.add_subsystem("capacity", FlowCapacityComp(num_nodes=nn), promotes=["*"])
        d_in = list(SHARED_INPUTS) + list(CYCLE_CHOICES) + [(k, f"{DESIGN_POINT}:{k}") for k in POINT_INPUTS]
        if not coupled:
            d_in += list(COOLING_INPUTS)
        self.add_subsystem(DESIGN_POINT, design, promotes_inputs=d_in,
                           promotes_outputs=[(k, f"{DESIGN_POINT}:{k}") for k in DESIGN_OUTPUTS])

        for p in points:
            p_in = list(SHARED_INPUTS) + [(k, f"{p}:{k}") for k in POINT_INPUTS]
            p_in += [(f"{k}_design", k) for k in CYCLE_CHOICES] + [("Fn_design", f"{DESIGN_POINT}:Fn_required")]
            self.add_subsystem(p, OffDesignGroup(num_nodes=nn, gas=gas, include_fuel_mass=fuel,
                                                 power_setting="thrust"),
                               promotes_inputs=p_in, promotes_outputs=[(k, f"{p}:{k}") for k in POINT_OUTPUTS])
            for k in GEOMETRY:
                self.connect(f"{DESIGN_POINT}.{k}", f"{p}.{k}_design")
            for k in ("Tt2", "Pt2"):
                self.connect(f"{DESIGN_POINT}.{k}", f"{p}.{k}_design")

        targets = list(points) + ([DESIGN_POINT] if coupled else [])
        if coupled:
            self.add_subsystem("cooling_sizing", CoolingBleedComp(num_nodes=nn, gas=gas, cooling_model="correlation"),
                               promotes_inputs=list(COOLING_INPUTS) + ["customer_bleed_frac"],
                               promotes_outputs=["cooling_frac_vane", "cooling_frac_rotor"])
            self.connect(f"{cooling_point}:Tt3", "cooling_sizing.Tt3")
            self.connect(f"{cooling_point}:Tt4", "cooling_sizing.Tt4")
            source = ""
        else:
            source = f"{DESIGN_POINT}:"
        for t in targets:
            self.connect(f"{source}cooling_frac_vane", f"{t}.hpt_vane_cooling_frac")
            self.connect(f"{source}cooling_frac_rotor", f"{t}.hpt_rotor_cooling_frac")

        for name, (val, units) in CYCLE_CHOICES.items():
            self.set_input_defaults(name, val * ones, units=units)
        self.set_input_defaults(f"{DESIGN_POINT}:Fn_required", FN_DESIGN_DEFAULT * ones, units="N")
        for name in SHARED_INPUTS + (COOLING_INPUTS if coupled else ()):
            val, units = ENGINE_DEFAULTS[name]
            self.set_input_defaults(name, val * ones, units=units)
        if coupled:
            set_coupled_solvers(self, "newton", nn, maxiter=OUTER_MAXITER)
            newton = self.nonlinear_solver
            newton.options["atol"] = OUTER_ATOL * np.sqrt(nn)
            newton.options["rtol"] = OUTER_RTOL
            newton.options["max_sub_solves"] = OUTER_MAXITER

