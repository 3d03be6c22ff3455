"""Embedding example: the installed engine inside a small aircraft-sizing loop (wing, drag polar, mission)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.thermo import ThermallyPerfectGas
from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.components.interface import ALL_PLAIN
from bypassopt.problems.best_cycle import GEOMETRY_CONSTRAINTS, OBJECTIVES, OPENMDAO_DEFAULT, limit_scaling
from bypassopt.problems.drivers import make_driver
from bypassopt.scenario import DESIGN_VARIABLES, constraint_limits, is_multipoint, load_scenario, model_inputs
from bypassopt.components.validation import check_range

#: Standard acceleration of gravity, m/s**2 (ISO 80000-3 / CGPM 1901).
G0 = 9.80665

#: Design-variable bounds of the wing loading (take-off mass per wing area), kg/m**2. Roughly the band
#: of today's narrow-body airliners (from memory); outside it the fixed-drag-area polar is not meant.
WING_LOADING_BOUNDS = (450.0, 750.0)

#: Inputs of the engine that this group promotes (the ones an aircraft model drives or shares).
ENGINE_INPUTS = ("altitude", "dT_isa", "Mach0", "BPR", "FPR", "OPR", "Tt4", "thrust_required",
                 "lift_to_drag", "empty_mass_no_engines", "payload", "design_range", "reserve_fraction",
                 "taxi_takeoff_fraction", "climb_fraction", "descent_landing_fraction")

#: Outputs of the engine that this group promotes (what an aircraft model uses, plus the constraints).
ENGINE_OUTPUTS = ("installed_TSFC", "powerplant_mass", "nacelle_drag", "mission_fuel", "takeoff_mass",
                  "q0", "V0", "clearance_margin", "diameter_margin", "nacelle_max_diameter", "Tt41",
                  "Tt3", "W3_corrected", "W2", "fan_tip_diameter")
#: Further outputs promoted with the multipoint engine (take-off limits, cruise performance).
MULTIPOINT_OUTPUTS = ("takeoff:Tt41", "takeoff:Tt3", "cruise:installed_TSFC", "cruise:thrust_required",
                      "cruise:nacelle_drag")


class WingSizingComp(om.ExplicitComponent):
    r"""Wing area from the wing loading, and the airframe empty mass that grows with the wing.

    .. math::
        S &= m_{TO} / (W/S) \\
        m_{OE,no\ eng} &= m_{fixed} + k_w S

    :math:`W/S` is the wing loading as take-off mass per wing area (kg/m**2), :math:`m_{fixed}` the
    empty mass without engines and without the wing (fuselage, tail, systems, furnishings), and
    :math:`k_w` the wing mass per unit area. The defaults (:math:`k_w` = 45 kg/m**2,
    :math:`m_{fixed}` = 32 800 kg) are an own calibration: they give the demo twin's 38.5 t empty
    mass without engines at about 127 m**2 (76 t at 600 kg/m**2); the wing mass per area is
    from memory (wing structural mass of narrow-body airliners, roughly 40-70 kg/m**2).

    Valid range: take-off mass > 0, wing loading 200-1000 kg/m**2, masses >= 0 (checked).
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, lower=1,
                             desc="Number of evaluation points (vectorisation length)")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("takeoff_mass", val=76000.0 * ones, units="kg", desc="Take-off mass of the aircraft")
        self.add_input("wing_loading", val=600.0 * ones, units="kg/m**2",
                       desc="Wing loading: take-off mass per wing reference area")
        self.add_input("airframe_fixed_mass", val=32800.0 * ones, units="kg",
                       desc="Empty mass without engines, nacelles, pylons and wing")
        self.add_input("wing_mass_per_area", val=45.0 * ones, units="kg/m**2",
                       desc="Wing structural mass per unit wing reference area")
        self.add_output("wing_area", val=127.0 * ones, units="m**2", desc="Wing reference area")
        self.add_output("empty_mass_no_engines", val=38500.0 * ones, units="kg",
                        desc="Operating empty mass without engines, nacelles and pylons")

    def setup_partials(self):
        """Declare the elementwise partials; the constant one is given once with val=."""
        ar = np.arange(self.options["num_nodes"])
        for wrt in ("takeoff_mass", "wing_loading"):
            self.declare_partials("wing_area", wrt, rows=ar, cols=ar)
            self.declare_partials("empty_mass_no_engines", wrt, rows=ar, cols=ar)
        self.declare_partials("empty_mass_no_engines", "airframe_fixed_mass", rows=ar, cols=ar, val=1.0)
        self.declare_partials("empty_mass_no_engines", "wing_mass_per_area", rows=ar, cols=ar)

    def compute(self, inputs, outputs):
        """Size the wing."""
        where = self.pathname
        check_range("takeoff_mass", inputs["takeoff_mass"], 0.0, np.inf, "kg", lower_inclusive=False, where=where)
        check_range("wing_loading", inputs["wing_loading"], 200.0, 1000.0, "kg/m**2", where=where)
        check_range("airframe_fixed_mass", inputs["airframe_fixed_mass"], 0.0, np.inf, "kg", where=where)
        check_range("wing_mass_per_area", inputs["wing_mass_per_area"], 0.0, 500.0, "kg/m**2", where=where)
        area = inputs["takeoff_mass"] / inputs["wing_loading"]
        outputs["wing_area"] = area
        outputs["empty_mass_no_engines"] = inputs["airframe_fixed_mass"] + inputs["wing_mass_per_area"] * area

    def compute_partials(self, inputs, partials):
        """Analytic partials."""
        tom, wl, kw = inputs["takeoff_mass"], inputs["wing_loading"], inputs["wing_mass_per_area"]
        ds_dtom = 1.0 / wl
        ds_dwl = -tom / wl**2
        partials["wing_area", "takeoff_mass"] = ds_dtom
        partials["wing_area", "wing_loading"] = ds_dwl
        partials["empty_mass_no_engines", "takeoff_mass"] = kw * ds_dtom
        partials["empty_mass_no_engines", "wing_loading"] = kw * ds_dwl
        partials["empty_mass_no_engines", "wing_mass_per_area"] = tom / wl


class AirframeDragComp(om.ExplicitComponent):
    r"""Airframe drag from a parabolic polar at the engine design point, and the thrust each engine must give.

    At the design point (top of climb: the flight condition of the engine design point, dynamic
    pressure :math:`q`) the aircraft has burnt the taxi, take-off and climb fuel:

    .. math::
        m &= m_{TO}\, f_{to}\, f_{cl}, \qquad W = m g_0 \\
        C_L &= W / (q S) \\
        C_D &= C_{D0,wing} + f_{A}/S + C_L^2 / (\pi A e) \\
        D &= q S C_D, \qquad L/D = C_L / C_D \\
        T_{req} &= (D + W \sin\gamma) / n_{eng}

    The parabolic polar :math:`C_D = C_{D0} + C_L^2/(\pi A e)` is the classical drag polar
    (e.g. Anderson, *Aircraft Performance and Design*, 1999, ch. 2); here :math:`C_{D0}` is split into
    the wing's profile drag :math:`C_{D0,wing}` (scales with the wing area) and the fixed parasite
    drag area :math:`f_A` of fuselage, tail and the rest (does not). The nacelles are excluded: their
    drag is booked against the engines in the installed TSFC. :math:`\sin\gamma` is the climb
    gradient the engines must still provide at top of climb (0.0065 is a residual climb rate of
    300 ft/min at Mach 0.78 and 35 000 ft, common practice). :math:`L/D` (without climb) is handed
    to the Breguet mission. The defaults (:math:`C_{D0,wing}` = 0.0065, :math:`f_A` = 1.6 m**2,
    :math:`A` = 9.5, :math:`e` = 0.80) are an own calibration that gives the demo twin's L/D of about
    17.5 at 600 kg/m**2; :math:`e` = 0.75-0.85 is common practice for a clean swept wing.

    Valid range: subsonic cruise below drag rise (the polar has no compressibility term);
    :math:`C_L` up to about 0.8; masses, areas and q > 0 (checked); option ``num_engines`` >= 1.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, lower=1,
                             desc="Number of evaluation points (vectorisation length)")
        self.options.declare("num_engines", types=int, default=2, lower=1,
                             desc="Number of engines sharing the thrust requirement")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("takeoff_mass", val=76000.0 * ones, units="kg", desc="Take-off mass of the aircraft")
        self.add_input("wing_area", val=127.0 * ones, units="m**2", desc="Wing reference area")
        self.add_input("q0", val=1.0e4 * ones, units="Pa", desc="Dynamic pressure at the design point")
        self.add_input("taxi_takeoff_fraction", val=0.985 * ones, units=None,
                       desc="Mass ratio end/start of taxi and take-off")
        self.add_input("climb_fraction", val=0.985 * ones, units=None, desc="Mass ratio end/start of climb")
        self.add_input("cd0_wing", val=0.0065 * ones, units=None,
                       desc="Wing profile drag coefficient, on the wing reference area")
        self.add_input("fixed_drag_area", val=1.6 * ones, units="m**2",
                       desc="Parasite drag area of fuselage, tail and the rest, nacelles excluded")
        self.add_input("aspect_ratio", val=9.5 * ones, units=None, desc="Wing aspect ratio b**2/S")
        self.add_input("oswald_efficiency", val=0.80 * ones, units=None, desc="Oswald span efficiency factor")
        self.add_input("climb_gradient", val=0.0065 * ones, units=None,
                       desc="Climb gradient (sine of the flight-path angle) required at the design point")
        self.add_output("design_mass", val=74000.0 * ones, units="kg", desc="Aircraft mass at the design point")
        self.add_output("lift_coeff", val=0.55 * ones, units=None, desc="Lift coefficient at the design point")
        self.add_output("drag_coeff", val=0.032 * ones, units=None,
                        desc="Airframe drag coefficient at the design point (nacelles excluded)")
        self.add_output("airframe_drag", val=4.0e4 * ones, units="N",
                        desc="Airframe drag at the design point (nacelles excluded)")
        self.add_output("lift_to_drag", val=17.5 * ones, units=None,
                        desc="Airframe lift-to-drag ratio at the design point (nacelles excluded)")
        self.add_output("thrust_required", val=24000.0 * ones, units="N",
                        desc="Installed net thrust each engine must give at the design point")

    _WRT = ("takeoff_mass", "wing_area", "q0", "taxi_takeoff_fraction", "climb_fraction", "cd0_wing",
            "fixed_drag_area", "aspect_ratio", "oswald_efficiency", "climb_gradient")
    _MASS_WRT = ("takeoff_mass", "taxi_takeoff_fraction", "climb_fraction")

    def setup_partials(self):
        """Declare the elementwise partials."""
        ar = np.arange(self.options["num_nodes"])
        for wrt in self._MASS_WRT:
            self.declare_partials("design_mass", wrt, rows=ar, cols=ar)
        cl_wrt = self._MASS_WRT + ("wing_area", "q0")
        for wrt in cl_wrt:
            self.declare_partials("lift_coeff", wrt, rows=ar, cols=ar)
        polar_wrt = tuple(w for w in self._WRT if w != "climb_gradient")
        for of in ("drag_coeff", "airframe_drag", "lift_to_drag"):
            for wrt in polar_wrt:
                self.declare_partials(of, wrt, rows=ar, cols=ar)
        for wrt in self._WRT:
            self.declare_partials("thrust_required", wrt, rows=ar, cols=ar)

    def _polar(self, inputs):
        """Values and derivatives {quantity: (value, {input: derivative})} of the polar (complex-step safe)."""
        tom, f_to, f_cl = inputs["takeoff_mass"], inputs["taxi_takeoff_fraction"], inputs["climb_fraction"]
        S, q = inputs["wing_area"], inputs["q0"]
        cd0w, fA = inputs["cd0_wing"], inputs["fixed_drag_area"]
        AR, e, grad = inputs["aspect_ratio"], inputs["oswald_efficiency"], inputs["climb_gradient"]
        zero = np.zeros_like(tom)

        m = tom * f_to * f_cl
        dm = {"takeoff_mass": f_to * f_cl, "taxi_takeoff_fraction": tom * f_cl, "climb_fraction": tom * f_to}
        W = G0 * m
        dW = {k: G0 * v for k, v in dm.items()}

        cl = W / (q * S)
        dcl = {k: v / (q * S) for k, v in dW.items()}
        dcl["wing_area"] = -cl / S
        dcl["q0"] = -cl / q

        k_ind = 1.0 / (np.pi * AR * e)
        cd = cd0w + fA / S + k_ind * cl**2
        dcd = {k: 2.0 * k_ind * cl * v for k, v in dcl.items()}
        dcd["wing_area"] = dcd["wing_area"] - fA / S**2
        dcd["cd0_wing"] = np.ones_like(cd)
        dcd["fixed_drag_area"] = 1.0 / S
        dcd["aspect_ratio"] = -k_ind / AR * cl**2
        dcd["oswald_efficiency"] = -k_ind / e * cl**2

        drag = q * S * cd
        ddrag = {k: q * S * v for k, v in dcd.items()}
        ddrag["wing_area"] = ddrag["wing_area"] + q * cd
        ddrag["q0"] = ddrag["q0"] + S * cd

        ld = cl / cd
        dld = {k: (dcl.get(k, zero) - ld * v) / cd for k, v in dcd.items()}

        n = self.options["num_engines"]
        thrust = (drag + W * grad) / n
        dthrust = {k: (v + dW.get(k, zero) * grad) / n for k, v in ddrag.items()}
        dthrust["climb_gradient"] = W / n
        return {"design_mass": (m, dm), "lift_coeff": (cl, dcl), "drag_coeff": (cd, dcd),
                "airframe_drag": (drag, ddrag), "lift_to_drag": (ld, dld), "thrust_required": (thrust, dthrust)}

    def compute(self, inputs, outputs):
        """Evaluate the polar at the design point."""
        where = self.pathname
        for name, units in (("takeoff_mass", "kg"), ("wing_area", "m**2"), ("q0", "Pa"),
                            ("aspect_ratio", ""), ("oswald_efficiency", "")):
            check_range(name, inputs[name], 0.0, np.inf, units, lower_inclusive=False, where=where)
        for name in ("taxi_takeoff_fraction", "climb_fraction"):
            check_range(name, inputs[name], 0.9, 1.0, "", lower_inclusive=False, where=where)
        check_range("cd0_wing", inputs["cd0_wing"], 0.0, 0.1, "", where=where)
        check_range("fixed_drag_area", inputs["fixed_drag_area"], 0.0, 100.0, "m**2", where=where)
        check_range("climb_gradient", inputs["climb_gradient"], 0.0, 0.2, "", where=where)
        for name, (value, _) in self._polar(inputs).items():
            outputs[name] = value

    def compute_partials(self, inputs, partials):
        """Analytic partials."""
        for of, (_, derivs) in self._polar(inputs).items():
            for wrt, value in derivs.items():
                partials[of, wrt] = value


class AircraftSizingGroup(om.Group):
    """Aircraft-engine sizing loop: wing, airframe drag polar and the installed engine with its mission.

    The take-off mass (Breguet mission of the engine group) sets the wing area and the airframe
    empty mass (``WingSizingComp``); mass and wing set the airframe drag at the engine design point
    and so the thrust each engine must deliver and the airframe L/D (``AirframeDragComp``); the
    thrust requirement sizes the engine, whose mass, installed TSFC and the L/D set the mission fuel
    and the take-off mass again. The loop is solved by a Newton solver with a direct linear solver
    (the engine group converges its own thrust-drag loop inside, ``solve_subsystems=True``), so total
    derivatives are taken through the converged aircraft.

    Promoted inputs: ``wing_loading`` and the wing/polar inputs (``airframe_fixed_mass``,
    ``wing_mass_per_area``, ``cd0_wing``, ``fixed_drag_area``, ``aspect_ratio``,
    ``oswald_efficiency``, ``climb_gradient``), the engine inputs in ``ENGINE_INPUTS`` (flight
    condition, cycle choices, mission data); every other engine input stays ``engine.<name>``.
    Promoted outputs: ``wing_area``, ``thrust_required``, ``lift_to_drag``, ``airframe_drag`` and
    the engine outputs in ``ENGINE_OUTPUTS`` (``mission_fuel``, ``installed_TSFC``,
    ``powerplant_mass``, ``nacelle_drag``, ``takeoff_mass``, constraint outputs).
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=1, lower=1, desc="number of aircraft evaluated at once")
        self.options.declare("num_engines", types=int, default=2, lower=1, desc="engines on the aircraft")
        self.options.declare("gas", default=ThermallyPerfectGas(), types=object, recordable=False,
                             desc="working-gas model of the engine")
        self.options.declare("engine_model", default="multipoint", values=("multipoint", "design_point"),
                             desc="'multipoint': InstalledMultipointGroup (take-off limits, mission at the cruise "
                                  "point); 'design_point': InstalledEngineGroup")

    def setup(self):
        """Assemble the loop and its solver."""
        nn = self.options["num_nodes"]
        n_eng = self.options["num_engines"]
        multipoint = self.options["engine_model"] == "multipoint"
        cls = InstalledMultipointGroup if multipoint else InstalledEngineGroup
        outputs = list(ENGINE_OUTPUTS) + (list(MULTIPOINT_OUTPUTS) if multipoint else [])
        # Engine first: with the outputs' starting values (24 kN, L/D 17.5, 38.5 t) it starts from a
        # sensible aircraft; the Newton solver then closes the loop.
        self.add_subsystem("engine", cls(num_nodes=nn, gas=self.options["gas"], num_engines=n_eng, **ALL_PLAIN),
                           promotes_inputs=list(ENGINE_INPUTS), promotes_outputs=outputs)
        self.add_subsystem("wing", WingSizingComp(num_nodes=nn), promotes=["*"])
        self.add_subsystem("polar", AirframeDragComp(num_nodes=nn, num_engines=n_eng), promotes=["*"])
        ones = np.ones(nn)
        self.set_input_defaults("Mach0", 0.78 * ones)
        self.set_input_defaults("taxi_takeoff_fraction", 0.985 * ones)
        self.set_input_defaults("climb_fraction", 0.985 * ones)

        newton = self.nonlinear_solver = om.NewtonSolver(solve_subsystems=True, max_sub_solves=100, maxiter=30,
                                                         iprint=-1, atol=1e-8, rtol=1e-12, err_on_non_converge=True)
        newton.linesearch = om.BoundsEnforceLS(bound_enforcement="scalar", iprint=-1)
        self.linear_solver = om.DirectSolver()


#: Model inputs of the scenario that the aircraft model computes itself (not set from the scenario).
COMPUTED_HERE = ("thrust_required", "lift_to_drag", "empty_mass_no_engines")


def apply_scenario_to_aircraft(prob, scenario):
    """Set the scenario's engine, installation and mission inputs on an ``AircraftSizingGroup`` problem.

    Inputs the aircraft model computes (``COMPUTED_HERE``) are skipped; inputs the group promotes
    are set by name, the others as ``engine.<name>``. Values are broadcast over the nodes.
    """
    promoted = {meta["prom_name"] for meta in prob.model.get_io_metadata(iotypes="input").values()}
    nn = prob.model.options["num_nodes"]
    for name, (value, units) in model_inputs(scenario).items():
        if name in COMPUTED_HERE:
            continue
        target = name if name in promoted else f"engine.{name}"
        prob.set_val(target, np.full(nn, float(value)), units=units)


def build_embedding_problem(optimize=True, scenario=None, reports=OPENMDAO_DEFAULT, force_alloc_complex=False,
                            driver=None):
    """Ready aircraft-sizing problem with the installed engine embedded (set up, scenario applied, not run).

    With ``optimize=True`` it minimises the design-mission fuel over BPR, FPR, OPR (the scenario's
    bounds) and the wing loading (``WING_LOADING_BOUNDS``), subject to the constraints of the
    best-installed-cycle problem (nacelle ground clearance and diameter margins >= 0, T41 and T3
    limits, minimum core size; ``bypassopt.scenario.constraint_limits``: with the scenario's multipoint
    engine model the T41 and T3 limits at take-off too) with SciPy SLSQP (``BackOffSLSQPDriver``). T4 stays
    at the scenario's value. The engine is the scenario's model (``[optimizer] model``):
    ``InstalledMultipointGroup`` (the Breguet mission at its cruise point, whose thrust is the airframe
    drag at mid-cruise from the L/D this group computes) or ``InstalledEngineGroup``. With
    ``optimize=False`` the problem has no driver and no design variables: run_model sizes the aircraft at
    the scenario's starting design.

    Parameters
    ----------
    optimize : bool
        Add the driver, design variables, objective and constraints.
    scenario : dict or None
        Validated scenario (``bypassopt.scenario.load_scenario``); None gives the demo.
    reports : bool or str or None
        Passed to ``om.Problem``; left out, OpenMDAO's default applies.
    force_alloc_complex : bool
        Allocate complex vectors (only for complex-step checks).
    driver : str or None
        Optimizer ('SLSQP', 'IPOPT', 'pyoptsparse-SLSQP', 'SNOPT'; see ``make_driver``); None takes the
        scenario's ``[optimizer] driver``.
    """
    scenario = scenario or load_scenario()
    model = AircraftSizingGroup(num_engines=scenario["aircraft"]["num_engines"],
                                engine_model="multipoint" if is_multipoint(scenario) else "design_point")
    prob = om.Problem(model) if reports is OPENMDAO_DEFAULT else om.Problem(model, reports=reports)
    model = prob.model
    if optimize:
        opt = scenario["optimizer"]
        prob.driver = make_driver(driver or opt["driver"], opt["maxiter"], opt["tol"])
        for key in ("BPR", "FPR", "OPR"):
            var = DESIGN_VARIABLES[key][0]
            dv = scenario["design_variables"][key]
            model.add_design_var(var, lower=dv["lower"], upper=dv["upper"], ref0=dv["lower"], ref=dv["upper"])
        lo, hi = WING_LOADING_BOUNDS
        model.add_design_var("wing_loading", lower=lo, upper=hi, ref0=lo, ref=hi, units="kg/m**2")
        out, units, ref = OBJECTIVES["mission_fuel"]
        model.add_objective(out, units=units, ref=ref)
        for var, _kind, cunits, cref in GEOMETRY_CONSTRAINTS.values():
            model.add_constraint(var, lower=0.0, units=cunits, ref=cref)
        for var, kind, limit, _ in constraint_limits(scenario).values():
            cunits, cref = limit_scaling(var)
            bound = {"upper": limit} if kind == "upper" else {"lower": limit}
            model.add_constraint(var, units=cunits, ref=cref, **bound)
    prob.setup(force_alloc_complex=force_alloc_complex)
    apply_scenario_to_aircraft(prob, scenario)
    prob.set_val("wing_loading", 600.0, units="kg/m**2")
    return prob
