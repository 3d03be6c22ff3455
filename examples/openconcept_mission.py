"""Invented 170-seat twin flying climb, cruise and descent in OpenConcept, with bypassopt's engine at every node.

The aircraft is the invented "demo twin 170" of the project's demo scenario (shared/scenario.md): no real aircraft
or engine. OpenConcept's ``BasicMission`` flies it; the aircraft model of every phase carries bypassopt's
``TurbofanPropulsionSystem`` (the engine sized once by ``TurbofanSizingGroup`` at top of climb, flown map-free at
each node), an OpenConcept drag polar, a fuel integrator and the weight. Mission fuel is minimised over BPR, FPR and
OPR (Tt4 held at the scenario's 1650 K) with SciPy's SLSQP, subject to the nacelle ground clearance and the hot-day
take-off T41 and T3 limits. The optimum's active limits are printed, and the mission fuel is compared with the
plugin's own Breguet estimate (``MissionFuelComp``, as ``bypassopt evaluate`` computes it).

**Mission.** ``BasicMission`` climbs from and descends to one altitude, ``takeoff|h``: here ``TERMINAL_ALTITUDE``,
1500 ft (457 m), the end of a take-off and the start of an approach; the take-off roll, the initial climb and the
landing below it are not flown. It climbs at 250 kn EAS (2500 ft/min at 1500 ft, 500 ft/min at the top), cruises at
Mach 0.78 and 10 668 m, and descends at 250 kn EAS, 1500 ft/min at the top and 700 ft/min at 1500 ft; OpenConcept
prescribes those vertical speeds and solves each node's throttle (bounded to 0.01-1.05 by its own balance). The
off-design engine flies every node, down to 1500 ft.

**Descent power: a documented choice.** A real descent is flown at flight idle with the descent rate following. In
``BasicMission`` the descent rate is given and the throttle follows, so the profile is chosen so that the thrust it
needs stays inside the engine's map-free operating range: throttle 0 is ``TT41_IDLE`` (1000 K Tt41, the
flight-idle stand-in, 55 K above the lowest power the map-free match has: about 945 K, where Tt4 reaches the burner's
1000 K at altitude and, near the ground, the core nozzle pressure ratio falls to 1; ``OffDesignGroup``), and the
descent rate eases from 1500 to 700 ft/min so that the throttle stays above 0 (measured: from 0.25 at the top of
descent to 0.07 at 1500 ft at the scenario's start design, Tt41 1187 K to 1052 K; 0.06 at the optimum). At every
descent node the LPT expansion ratio stays above 2.3 and the core nozzle pressure ratio above 1.03, inside the
choked-vane validity of the map-free match (the report prints both for every phase). A steeper descent would ask
for less thrust than the idle rating gives, and the framework's throttle balance has no solution there; so would
some corners of the design box (BPR 6, FPR 1.9, OPR 25 measured: its mission does not converge), which the optimizer
backs off from.

**The comparison with the plugin's estimate** (printed term by term). The Breguet estimate flies the whole 5 000 km
in cruise at the top-of-climb installed TSFC (ISA+10, the sizing thrust), the scenario's L/D 17.5 and the design
point's (ISA+10) true airspeed, and books taxi, take-off, climb, descent and landing as segment mass fractions from
the ground. The flown mission covers about 557 km of the range in its climb and descent, cruises at part power with
the TSFC the engine has there, at the polar's L/D and the ISA airspeed, and flies climb and descent node by node
above 1500 ft. Replacing Breguet's cruise inputs one by one by the flown cruise's values reproduces the flown cruise
fuel to 0.1 %. The rest of the gap is outside cruise: about 3 000 kg of segment fractions (ground to ground,
including taxi, take-off and landing) against about 2 050 kg flown in climb and descent above 1500 ft.

Run (about 45 s on a 2-core machine; needs the openconcept extra: OpenConcept 1.2.6, numpy < 2)::

    python examples/openconcept_mission.py            # analysis, optimisation, comparison
    python examples/openconcept_mission.py --analysis # the starting design only
"""

import argparse
import time

import numpy as np
import openmdao.api as om
from openconcept.aerodynamics import PolarDrag
from openconcept.mission import BasicMission
from openconcept.utilities import AddSubtractComp as PhaseAddSubtractComp
from openconcept.utilities import Integrator

from bypassopt.adapters.openconcept import TurbofanPropulsionSystem, TurbofanSizingGroup
from bypassopt.components.coupled_solver import CheckedNewtonSolver, last_solve_succeeded
from bypassopt.components.mission.mission_fuel_comp import G0, MissionFuelComp
from bypassopt.problems.drivers import BackOffSLSQPDriver
from bypassopt.problems.kkt import ACTIVE_TOL

#: Flight nodes per phase (OpenConcept's Simpson integration needs an odd number).
NUM_NODES = 5
#: Engines on the aircraft.
NUM_ENGINES = 2
#: Lowest altitude flown, m (1500 ft): where the climb starts and the descent ends (module docstring, "Mission").
TERMINAL_ALTITUDE = 457.2
#: Cruise altitude, m (10 668 m = 35 000 ft) and design range, m (scenario.md).
CRUISE_ALTITUDE = 10668.0
DESIGN_RANGE = 5.0e6

#: The demo twin 170 (scenario.md, invented): masses in kg.
EMPTY_MASS_NO_ENGINES = 38500.0
PAYLOAD = 16150.0
#: Reserve fuel as a fraction of the zero-fuel mass: the plugin's MissionFuelComp default (common practice).
RESERVE_FRACTION = 0.05
#: Airframe drag polar, nacelles excluded (their drag is the engines' thrust debit). Invented: the wing area is the
#: embedding example's calibration (76 t at 600 kg/m**2, problems/aircraft_embedding.py); aspect ratio, Oswald
#: factor and zero-lift drag are chosen so that L/D is about the scenario's 17.5 at the cruise lift coefficient
#: (0.019 + CL^2/(pi 10 0.8) at CL 0.5: L/D 17.2).
WING_AREA = 127.0
ASPECT_RATIO = 10.0
OSWALD = 0.80
CD0 = 0.019
#: Airframe lift-to-drag ratio of the scenario for the Breguet estimate.
LIFT_TO_DRAG = 17.5

#: Flight schedule: equivalent airspeeds (kn) and vertical speeds (ft/min), first and last node of each phase.
#: 250 kn EAS at 10 668 m is Mach 0.78 (scenario.md's cruise). The descent eases to 700 ft/min at 1500 ft so that the
#: thrust it needs stays above that of the idle rating (module docstring, "Descent power").
SCHEDULE = {"climb": {"Ueas": (250.0, 250.0), "vs": (2500.0, 500.0)},
            "cruise": {"Ueas": (250.0, 250.0), "vs": (0.0, 0.0)},
            "descent": {"Ueas": (250.0, 250.0), "vs": (-1500.0, -700.0)}}
#: HPT rotor inlet temperature at throttle 0, K: the flight-idle stand-in (``ac|propulsion|engine|Tt41_min_rating``;
#: the maximum rating stays the propulsion system's default, the 1750 K top-of-climb limit).
TT41_IDLE = 1000.0
#: Start values of the mission's own unknowns (a converged design's, rounded): the first Newton iteration needs
#: engine throttles inside the rating, and OpenConcept's default Mach number (1.0) is outside the match's range.
START = {"climb": {"throttle": 0.7, "duration": 1340.0}, "cruise": {"throttle": 0.55, "duration": 1.93e4},
         "descent": {"throttle": 0.1, "duration": 1750.0}}
START_MACH = 0.75

#: Design variables (scenario.md's bounds; start at its cycle starting point) and limits (scenario.md).
DESIGN_VARIABLES = {"BPR": (10.0, 6.0, 16.0, 10.0), "FPR": (1.5, 1.3, 1.9, 1.0), "OPR": (40.0, 25.0, 60.0, 10.0)}
LIMITS = {"ac|propulsion|clearance_margin": ("lower", 0.0, 0.1, "m", "nacelle ground clearance margin"),
          "ac|propulsion|takeoff|Tt41": ("upper", 1900.0, 100.0, "K", "take-off T41 (hot day)"),
          "ac|propulsion|takeoff|Tt3": ("upper", 960.0, 100.0, "K", "take-off T3 (hot day)")}
MISSION_FUEL = "mission.descent.fuel_used_final"
FUEL_REF = 1.0e4

#: Tolerances of the mission's Newton solver. The residual norm cannot fall much below 1e-8 (measured): every
#: engine node re-converges its own match at each iteration, to its own tolerance; 1e-9 stalled (measured with the
#: matches started from the design point; they now start from their last solution). 1e-7 keeps a margin.
NEWTON_ATOL = 1e-7
NEWTON_RTOL = 1e-14
NEWTON_MAXITER = 20


class DemoTwinAircraft(om.Group):
    """Aircraft model of one mission phase: bypassopt's propulsion, a drag polar, fuel burnt and weight."""

    def initialize(self):
        """Declare OpenConcept's options."""
        self.options.declare("num_nodes", default=1, desc="flight nodes of the phase")
        self.options.declare("flight_phase", default=None, desc="phase name (unused)")

    def setup(self):
        """Add the propulsion system, the drag polar, the fuel integrator and the weight."""
        nn = self.options["num_nodes"]
        self.add_subsystem("propulsion", TurbofanPropulsionSystem(num_nodes=nn, num_engines=NUM_ENGINES),
                           promotes=["*"])
        self.add_subsystem("drag", PolarDrag(num_nodes=nn),
                           promotes_inputs=["fltcond|CL", "fltcond|q", "ac|geom|wing|S_ref", "ac|geom|wing|AR",
                                            ("CD0", "ac|aero|polar|CD0"), ("e", "ac|aero|polar|e")],
                           promotes_outputs=["drag"])
        fuel = self.add_subsystem("fuel", Integrator(num_nodes=nn, diff_units="s", time_setup="duration",
                                                     method="simpson"),
                                  promotes_inputs=["fuel_flow"], promotes_outputs=["fuel_used", "fuel_used_final"])
        fuel.add_integrand("fuel_used", rate_name="fuel_flow", units="kg")
        self.add_subsystem("weight", PhaseAddSubtractComp(output_name="weight", input_names=["ac|weights|TOW",
                                                                                             "fuel_used"],
                                                          units="kg", vec_size=[1, nn], scaling_factors=[1, -1]),
                           promotes=["*"])


class MissionAnalysis(om.Group):
    """The mission and the take-off mass closure, solved by one Newton solver; restarts from its last solution.

    After a failed solve (an optimizer's trial design whose descent the engine cannot fly) the next solve starts
    from the last converged state, not from what the failure left.
    """

    def guess_nonlinear(self, inputs, outputs, residuals):
        """Keep the last converged state; go back to it after a failed solve (nothing under complex step)."""
        if self.under_complex_step:
            return
        if last_solve_succeeded(self):
            self._converged = outputs.asarray().copy()
        elif getattr(self, "_converged", None) is not None:
            outputs.set_val(self._converged)


class DemoTwinMission(om.Group):
    """Aircraft data, the engine sizing (once) and the mission whose take-off mass closes on its fuel."""

    def initialize(self):
        """Declare options."""
        self.options.declare("num_nodes", types=int, default=NUM_NODES, desc="flight nodes per phase")

    def setup(self):
        """Assemble the aircraft data, the sizing and the mission."""
        data = self.add_subsystem("aircraft_data", om.IndepVarComp(), promotes=["*"])
        data.add_output("ac|geom|wing|S_ref", WING_AREA, units="m**2")
        data.add_output("ac|geom|wing|AR", ASPECT_RATIO)
        data.add_output("ac|aero|polar|CD0", CD0)
        data.add_output("ac|aero|polar|e", OSWALD)
        data.add_output("ac|weights|empty_no_engines", EMPTY_MASS_NO_ENGINES, units="kg")
        data.add_output("ac|weights|payload", PAYLOAD, units="kg")
        data.add_output("ac|propulsion|engine|Tt41_min_rating", TT41_IDLE, units="K")
        for name, (start, *_) in DESIGN_VARIABLES.items():
            data.add_output(f"ac|propulsion|engine|{name}", start)

        self.add_subsystem("sizing", TurbofanSizingGroup(num_engines=NUM_ENGINES), promotes=["*"])

        analysis = self.add_subsystem("analysis", MissionAnalysis(), promotes=["*"])
        analysis.add_subsystem("mission", BasicMission(aircraft_model=DemoTwinAircraft,
                                                       num_nodes=self.options["num_nodes"]),
                               promotes_inputs=["ac|*"])
        zfm = om.AddSubtractComp()
        zfm.add_equation("zero_fuel_mass", ["ac|weights|empty_no_engines", "ac|propulsion|mass",
                                            "ac|weights|payload"], units="kg")
        analysis.add_subsystem("zero_fuel_mass", zfm, promotes=["*"])
        room = om.AddSubtractComp()
        room.add_equation("fuel_room", ["ac|weights|TOW", "zero_fuel_mass"],
                          scaling_factors=[1.0, -(1.0 + RESERVE_FRACTION)], units="kg",
                          desc="take-off mass less the zero-fuel mass and the reserve: the fuel there is to burn")
        analysis.add_subsystem("fuel_room", room, promotes=["*"])
        closure = om.BalanceComp("ac|weights|TOW", val=72000.0, units="kg", eq_units="kg", lhs_name="mission_fuel",
                                 rhs_name="fuel_room", ref=1.0e4,
                                 desc="take-off mass that carries exactly the mission fuel plus the reserve")
        analysis.add_subsystem("takeoff_mass", closure, promotes=["*"])
        analysis.connect(MISSION_FUEL, "mission_fuel")

        newton = analysis.nonlinear_solver = CheckedNewtonSolver(solve_subsystems=True, maxiter=NEWTON_MAXITER,
                                                                 atol=NEWTON_ATOL, rtol=NEWTON_RTOL, iprint=-1,
                                                                 err_on_non_converge=True)
        # No residual-judging line search: its first trial would see the engines' stale inner states.
        newton.linesearch = om.BoundsEnforceLS(bound_enforcement="scalar", print_bound_enforce=False)
        analysis.linear_solver = om.DirectSolver(assemble_jac=True)


def build_problem(num_nodes=NUM_NODES, optimize=False, **setup_kwargs):
    """Set up the demo-twin mission problem (with SLSQP, design variables and limits when ``optimize``)."""
    prob = om.Problem(DemoTwinMission(num_nodes=num_nodes), reports=False)
    if optimize:
        # SciPy's SLSQP through the plugin's driver that backs off from designs the model cannot evaluate
        prob.driver = BackOffSLSQPDriver(maxiter=50, tol=1e-8)
        for name, (_, lower, upper, ref) in DESIGN_VARIABLES.items():
            prob.model.add_design_var(f"ac|propulsion|engine|{name}", lower=lower, upper=upper, ref=ref)
        prob.model.add_objective(MISSION_FUEL, ref=FUEL_REF)
        for name, (kind, limit, ref, _, _) in LIMITS.items():
            bound = {"lower": limit} if kind == "lower" else {"upper": limit}
            prob.model.add_constraint(name, ref=ref, **bound)
    prob.setup(**setup_kwargs)
    set_mission(prob, num_nodes)
    return prob


def set_mission(prob, num_nodes=NUM_NODES):
    """Set the mission (altitudes, range, speeds, vertical speeds) and the start values of its unknowns."""
    prob.set_val("mission.takeoff|h", TERMINAL_ALTITUDE, units="m")
    prob.set_val("mission.cruise|h0", CRUISE_ALTITUDE, units="m")
    prob.set_val("mission.mission_range", DESIGN_RANGE, units="m")
    for phase, schedule in SCHEDULE.items():
        prob.set_val(f"mission.{phase}.fltcond|Ueas", np.linspace(*schedule["Ueas"], num_nodes), units="kn")
        prob.set_val(f"mission.{phase}.fltcond|vs", np.linspace(*schedule["vs"], num_nodes), units="ft/min")
        prob.set_val(f"mission.{phase}.throttle", START[phase]["throttle"] * np.ones(num_nodes))
        prob.set_val(f"mission.{phase}.duration", START[phase]["duration"], units="s")
        prob.set_val(f"mission.{phase}.fltcond|M", START_MACH * np.ones(num_nodes))


def limit_margins(prob):
    """Each limit's margin (>= 0 feasible) in its scaling reference: {name: (value, limit, margin / ref)}."""
    out = {}
    for name, (kind, limit, ref, units, _) in LIMITS.items():
        value = float(prob.get_val(name, units=units)[0])
        out[name] = (value, limit, (value - limit if kind == "lower" else limit - value) / ref)
    return out


def kkt_check(prob, active_tol=ACTIVE_TOL):
    """Active set, multipliers and Lagrangian gradient at the current point (Nocedal & Wright, theorem 12.1).

    Every limit and bound is written c(x) <= 0, each limit divided by its scaling reference and each design variable
    measured in its bound range; the multipliers of the active ones solve grad f + sum lambda_i grad c_i = 0 by least
    squares (f divided by its reference), and what is left (the projected gradient) measures optimality. Returns
    (active: {name: multiplier}, norm of the projected gradient / norm of grad f).
    """
    dv_names = [f"ac|propulsion|engine|{k}" for k in DESIGN_VARIABLES]
    spans = np.array([upper - lower for _, lower, upper, _ in DESIGN_VARIABLES.values()])
    totals = prob.compute_totals(of=[MISSION_FUEL] + list(LIMITS), wrt=dv_names, return_format="dict")
    grad = lambda of, ref: np.array([float(np.squeeze(totals[of][w])) for w in dv_names]) * spans / ref  # noqa
    grad_f = grad(MISSION_FUEL, FUEL_REF)
    columns, names = [], []
    for name, (_, _, margin) in limit_margins(prob).items():
        if abs(margin) <= active_tol:
            kind, _, ref, _, _ = LIMITS[name]
            columns.append((-1.0 if kind == "lower" else 1.0) * grad(name, ref))  # lower limit: c = limit - g
            names.append(name)
    for i, (dv, (_, lower, upper, _)) in enumerate(DESIGN_VARIABLES.items()):
        x = float(prob.get_val(dv_names[i])[0])
        for bound, value, sign in (("lower", lower, -1.0), ("upper", upper, 1.0)):
            if abs(x - value) <= active_tol * (upper - lower):
                column = np.zeros(len(dv_names))
                column[i] = sign
                columns.append(column)
                names.append(f"{dv} {bound} bound")
    if columns:
        a = np.array(columns).T
        lam = np.linalg.lstsq(a, -grad_f, rcond=None)[0]
        residual = grad_f + a @ lam
    else:
        lam, residual = np.zeros(0), grad_f
    return dict(zip(names, lam)), float(np.linalg.norm(residual) / np.linalg.norm(grad_f))


def breguet_estimate(prob):
    """Return the plugin's own Breguet mission estimate for the same engine and aircraft (MissionFuelComp).

    As ``InstalledEngineGroup`` computes it: cruise at the top-of-climb installed TSFC and true airspeed, the
    scenario's L/D 17.5, the whole design range in cruise, Raymer-style segment fractions for taxi, take-off,
    climb, descent and landing, the same reserve. Returns MissionFuelComp's outputs (kg).
    """
    check = om.Problem(reports=False)
    check.model.add_subsystem("breguet", MissionFuelComp(num_engines=NUM_ENGINES), promotes=["*"])
    check.setup()
    check.set_val("installed_TSFC", prob.get_val("ac|propulsion|design|installed_TSFC", units="kg/(N*s)"),
                  units="kg/(N*s)")
    check.set_val("cruise_speed", prob.get_val("multipoint.design.V0", units="m/s"), units="m/s")
    check.set_val("lift_to_drag", LIFT_TO_DRAG)
    check.set_val("design_range", DESIGN_RANGE, units="m")
    check.set_val("empty_mass_no_engines", EMPTY_MASS_NO_ENGINES, units="kg")
    check.set_val("payload", PAYLOAD, units="kg")
    check.set_val("powerplant_mass", prob.get_val("ac|propulsion|engine|powerplant_mass", units="kg"), units="kg")
    check.set_val("reserve_fraction", RESERVE_FRACTION)
    check.run_model()
    out = {k: float(check.get_val(k, units="kg")[0]) for k in ("mission_fuel", "cruise_fuel", "takeoff_mass",
                                                                "zero_fuel_mass", "reserve_fuel")}
    # the cruise it assumes: ends where descent and landing start (MissionFuelComp's backward build-up)
    out["cruise_end_mass"] = (out["zero_fuel_mass"] + out["reserve_fuel"]) / float(
        check.get_val("descent_landing_fraction")[0])
    out["TSFC"] = float(check.get_val("installed_TSFC", units="kg/(N*s)")[0])
    out["speed"] = float(check.get_val("cruise_speed", units="m/s")[0])
    return out


def flown_summary(prob):
    """Fuel, distance, mean installed TSFC and mean L/D of each flown phase (from the mission's nodes).

    Also the engine's range at the phase's nodes: altitudes, throttles and Tt41 (first and last node), and the
    smallest LPT expansion ratio and core nozzle pressure ratio (the map-free match needs the first above about
    1.85 and the second above 1; ``OffDesignGroup``).
    """
    out = {}
    start = 0.0
    for phase in ("climb", "cruise", "descent"):
        p = f"mission.{phase}"
        fuel_end = float(prob.get_val(f"{p}.fuel_used_final", units="kg")[0])
        thrust = prob.get_val(f"{p}.thrust", units="N")
        flow = prob.get_val(f"{p}.fuel_flow", units="kg/s")
        weight = prob.get_val(f"{p}.weight", units="kg") * G0
        drag = prob.get_val(f"{p}.drag", units="N")
        rng = prob.get_val(f"{p}.range", units="m")
        out[phase] = {"fuel": fuel_end - start, "distance": float(rng[-1] - rng[0]),
                      "TSFC": float(np.mean(flow / thrust)), "L/D": float(np.mean(weight / drag)),
                      "mass_start": float(weight[0] / G0), "mass_end": float(weight[-1] / G0),
                      "speed": float(np.mean(prob.get_val(f"{p}.fltcond|Utrue", units="m/s")))}
        node = f"{p}.engine.off_design."
        h, throttle = prob.get_val(f"{p}.fltcond|h", units="m"), prob.get_val(f"{p}.throttle")
        tt41 = prob.get_val(f"{p}.engine.engine:Tt41", units="K")
        out[phase].update(altitude=(float(h[0]), float(h[-1])), throttle=(float(throttle[0]), float(throttle[-1])),
                          Tt41=(float(tt41[0]), float(tt41[-1])),
                          lpt_expansion=float(np.min(prob.get_val(node + "Pt45") / prob.get_val(node + "Pt5"))),
                          core_nozzle_pr=float(np.min(prob.get_val(node + "Pt7") / prob.get_val(node + "Ps0"))))
        start = fuel_end
    return out


def breguet_cruise_fuel(mass_end, distance, tsfc, speed, lift_to_drag):
    """Jet Breguet cruise fuel ending at ``mass_end`` (kg): m_end (exp(R g c / (V L/D)) - 1)."""
    return mass_end * (np.exp(distance * G0 * tsfc / (speed * lift_to_drag)) - 1.0)


def report(prob, timings=None):
    """Print the design, the flown mission, the limits and the comparison with the Breguet estimate."""
    print("\nDesign: " + ", ".join(f"{k} {float(prob.get_val(f'ac|propulsion|engine|{k}')[0]):.4g}"
                                   for k in DESIGN_VARIABLES) + ", Tt4 1650 K (held)")
    print(f"  fan {float(prob.get_val('ac|propulsion|engine|fan_tip_diameter')[0]):.3f} m, powerplant "
          f"{float(prob.get_val('ac|propulsion|mass')[0]):.0f} kg (both engines), take-off mass "
          f"{float(prob.get_val('ac|weights|TOW')[0]):.0f} kg")
    print("Limits (margin / scaling reference; active within 1e-4):")
    for name, (value, limit, margin) in limit_margins(prob).items():
        flag = "ACTIVE" if abs(margin) <= ACTIVE_TOL else ("violated" if margin < 0 else "inactive")
        print(f"  {LIMITS[name][4]:36s} {value:10.4f} vs {limit:8.2f} {LIMITS[name][3]:2s} {flag}")
    flown = flown_summary(prob)
    total = sum(p["fuel"] for p in flown.values())
    print(f"Flown mission ({TERMINAL_ALTITUDE:.0f} m -> {CRUISE_ALTITUDE:.0f} m -> "
          f"{TERMINAL_ALTITUDE:.0f} m, {DESIGN_RANGE / 1e3:.0f} km): {total:.0f} kg")
    for phase, p in flown.items():
        print(f"  {phase:8s} {p['fuel']:8.0f} kg over {p['distance'] / 1e3:7.0f} km, installed TSFC "
              f"{p['TSFC'] * 1e6:.2f} mg/(N s), L/D {p['L/D']:.2f}")
    print("Engine at the nodes (first -> last node; smallest LPT expansion ratio and core nozzle pressure ratio):")
    for phase, p in flown.items():
        print(f"  {phase:8s} {p['altitude'][0]:6.0f} -> {p['altitude'][1]:6.0f} m, throttle {p['throttle'][0]:.3f} -> "
              f"{p['throttle'][1]:.3f}, Tt41 {p['Tt41'][0]:.0f} -> {p['Tt41'][1]:.0f} K, LPT {p['lpt_expansion']:.2f}, "
              f"core nozzle {p['core_nozzle_pr']:.3f}")
    b = breguet_estimate(prob)
    c = flown["cruise"]
    print(f"Plugin's Breguet estimate (MissionFuelComp): mission fuel {b['mission_fuel']:.0f} kg = cruise "
          f"{b['cruise_fuel']:.0f} kg + {b['mission_fuel'] - b['cruise_fuel']:.0f} kg of segment fractions (taxi, "
          f"take-off, climb, descent, landing); flown {total:.0f} kg ({total / b['mission_fuel'] - 1.0:+.1%})")
    # Breguet's cruise fuel with its inputs replaced, one at a time, by the flown cruise's: what each difference
    # is worth. The last line is Breguet at the flown cruise's own mean values, which must match the flown fuel.
    steps = [("plugin's assumptions", {}),
             (f"cruise distance {DESIGN_RANGE / 1e3:.0f} -> {c['distance'] / 1e3:.0f} km (climb and descent fly "
              "the rest)", {"distance": c["distance"]}),
             (f"installed TSFC {b['TSFC'] * 1e6:.2f} (top of climb, ISA+10) -> {c['TSFC'] * 1e6:.2f} mg/(N s) "
              "(part-power cruise)", {"tsfc": c["TSFC"]}),
             (f"L/D {LIFT_TO_DRAG} -> {c['L/D']:.2f} (polar)", {"lift_to_drag": c["L/D"]}),
             (f"true airspeed {b['speed']:.1f} (ISA+10) -> {c['speed']:.1f} m/s (ISA)", {"speed": c["speed"]}),
             (f"mass at end of cruise {b['cruise_end_mass']:.0f} -> {c['mass_end']:.0f} kg",
              {"mass_end": c["mass_end"]})]
    args = {"mass_end": b["cruise_end_mass"], "distance": DESIGN_RANGE, "tsfc": b["TSFC"], "speed": b["speed"],
            "lift_to_drag": LIFT_TO_DRAG}
    print("  Breguet cruise fuel, its inputs replaced one by one by the flown cruise's:")
    for label, change in steps:
        args.update(change)
        same = breguet_cruise_fuel(**args)
        print(f"    {same:8.0f} kg  {label}")
    print(f"    {c['fuel']:8.0f} kg  flown cruise (OpenConcept's Simpson integration of the engine's fuel flow)")
    outside = flown["climb"]["fuel"] + flown["descent"]["fuel"]
    print(f"  Outside cruise: {b['mission_fuel'] - b['cruise_fuel']:.0f} kg of fractions (ground to ground) vs "
          f"{outside:.0f} kg flown (climb and descent above {TERMINAL_ALTITUDE:.0f} m only)")
    if timings:
        print("Times: " + ", ".join(f"{k} {v:.1f} s" for k, v in timings.items()))
    return {"flown": flown, "breguet": b, "breguet_flown_cruise": same, "mission_fuel": total}


def main():
    """Run the starting design, optimise, print the optimum, its active limits and the fuel comparison."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--analysis", action="store_true", help="evaluate the starting design only")
    args = parser.parse_args()
    t0 = time.perf_counter()
    prob = build_problem(optimize=not args.analysis)
    t1 = time.perf_counter()
    prob.run_model()
    t2 = time.perf_counter()
    timings = {"setup": t1 - t0, "first run": t2 - t1}
    if not args.analysis:
        prob.compute_totals()
        t3 = time.perf_counter()
        timings["totals"] = t3 - t2
        print("Starting design (scenario.md's cycle starting point):")
        report(prob)
        prob.run_driver()
        timings["optimisation"] = time.perf_counter() - t3
        result = prob.driver.optimizer_result
        print(f"\nSLSQP: success {result.success} ({result.message}), {result.nit} iterations, "
              f"{prob.driver.model_evaluations} model runs ({prob.driver.failed_evaluations} failed), "
              f"{prob.driver.derivative_evaluations} gradients")
        active, gradient = kkt_check(prob)
        print("Active limits and multipliers (scaled): " + ", ".join(f"{k} {v:.3g}" for k, v in active.items())
              + f"; projected gradient {gradient:.1e} of |grad f|")
    report(prob, timings)


if __name__ == "__main__":
    main()
