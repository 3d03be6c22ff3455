"""Design-mission fuel from the jet Breguet range equation, solved in closed form."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes

#: Standard acceleration of gravity, m/s**2 (ISO 80000-3 / CGPM 1901).
G0 = 9.80665

# (name, default, lower, upper, lower_inclusive, units, desc); an input in
# ``components.ranges.INPUT_RANGES`` (the aircraft keys of a scenario) is checked against that table (equal to the
# range listed here; a test keeps them equal).
_INPUTS = (
    ("installed_TSFC", 15.5e-6, 0.0, 1.0e-4, False, "kg/N/s",
     "Installed cruise thrust-specific fuel consumption (nacelle drag booked as a thrust debit)"),
    ("cruise_speed", 231.3, 0.0, 350.0, False, "m/s", "True airspeed in cruise"),
    ("lift_to_drag", 17.5, 0.0, 40.0, False, None,
     "Cruise lift-to-drag ratio of the airframe without the nacelles"),
    ("design_range", 5.0e6, 0.0, 2.0e7, False, "m", "Design range flown in cruise"),
    ("empty_mass_no_engines", 38500.0, 1.0e3, 1.0e6, True, "kg",
     "Operating empty mass without engines, nacelles and pylons"),
    ("payload", 16150.0, 0.0, 5.0e5, True, "kg", "Design payload"),
    ("powerplant_mass", 3200.0, 0.0, 1.0e5, True, "kg",
     "Installed powerplant mass per engine (dry engine, nacelle and pylon)"),
    ("max_takeoff_mass", 76000.0, 1.0e3, 1.0e6, True, "kg", "Maximum take-off mass"),
    ("reserve_fraction", 0.05, 0.0, 0.3, True, None,
     "Reserve fuel as a fraction of the zero-fuel mass (alternate, hold and contingency)"),
    ("descent_landing_fraction", 0.99, 0.9, 1.0, False, None,
     "Mass ratio end/start of descent and landing"),
    ("taxi_takeoff_fraction", 0.985, 0.9, 1.0, False, None, "Mass ratio end/start of taxi and take-off"),
    ("climb_fraction", 0.985, 0.9, 1.0, False, None, "Mass ratio end/start of climb"),
)

#: Inputs that follow the installed engine's coupled solve.
_COUPLED = ("installed_TSFC", "powerplant_mass")
_MASS_IN = ("empty_mass_no_engines", "payload", "powerplant_mass")
_ALL_BUT_MTOM = tuple(name for name, *_ in _INPUTS if name != "max_takeoff_mass")
_DEPENDS = {
    "zero_fuel_mass": _MASS_IN,
    "reserve_fuel": _MASS_IN + ("reserve_fraction",),
    "cruise_fuel": _MASS_IN + ("reserve_fraction", "descent_landing_fraction", "installed_TSFC",
                               "cruise_speed", "lift_to_drag", "design_range"),
    "takeoff_mass": _ALL_BUT_MTOM,
    "mission_fuel": _ALL_BUT_MTOM,
    "mtow_margin": _ALL_BUT_MTOM + ("max_takeoff_mass",),
}


class MissionFuelComp(om.ExplicitComponent):
    r"""Design-mission fuel and take-off mass from the jet Breguet range equation.

    Cruise at constant speed, lift-to-drag ratio and TSFC gives the jet Breguet range
    (field reference section 11.1):

    .. math:: R = \frac{V}{g_0 c} \frac{L}{D} \ln\frac{W_{sc}}{W_{ec}}

    solved here in closed form, working backwards from the landing:

    .. math::
        ZFM &= m_{OE,no\ eng} + n_{eng}\, m_{pp} + m_{payload} \\
        m_{res} &= f_{res}\, ZFM \\
        W_{ec} &= (ZFM + m_{res}) / f_{dl} \\
        W_{sc} &= W_{ec}\, e^{x}, \qquad x = \frac{R g_0 c}{V (L/D)} \\
        TOM &= W_{sc} / (f_{to} f_{cl})

    Outputs: the block fuel excluding reserves ``mission_fuel`` :math:`= TOM - ZFM - m_{res}`,
    ``cruise_fuel`` :math:`= W_{sc} - W_{ec}`, and ``mtow_margin`` :math:`= MTOM - TOM`
    (>= 0 feasible). :math:`c` is the installed TSFC in kg/(N*s).

    The segment mass fractions (taxi and take-off 0.985, climb 0.985, descent and landing 0.99)
    are Raymer-style historical segment fractions (*Aircraft Design: A Conceptual Approach*,
    mission segment weight fractions; from memory). The reserve as 5 % of the zero-fuel mass is a
    common-practice stand-in for alternate, hold and contingency fuel.

    The lift-to-drag ratio is that of the airframe **without** the nacelles: the nacelle drag is
    booked as a thrust debit in the installed TSFC, so counting it in L/D as well would count it
    twice.

    Valid range: L/D, range and TSFC > 0; segment fractions in (0.9, 1]; reserve fraction
    0-0.5 (checked). Option ``num_engines`` multiplies the per-engine powerplant mass.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("num_engines", types=int, default=2, lower=1,
                             desc="Number of engines on the aircraft")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        for name, default, _lo, _hi, _inc, units, desc in _INPUTS:
            self.add_input(name, val=default * np.ones(nn), units=units, desc=desc)
        for name, desc in (
                ("mission_fuel", "Block fuel for the design mission, excluding reserves"),
                ("reserve_fuel", "Reserve fuel carried and not burned"),
                ("takeoff_mass", "Take-off mass for the design mission"),
                ("zero_fuel_mass", "Zero-fuel mass: empty without engines + powerplants + payload"),
                ("cruise_fuel", "Fuel burned in cruise"),
                ("mtow_margin", "Maximum take-off mass minus take-off mass (>= 0 feasible)")):
            self.add_output(name, val=np.ones(nn), units="kg", desc=desc)

    def setup_partials(self):
        """Declare the elementwise sparsity; constant partials are given once with val=."""
        ar = np.arange(self.options["num_nodes"])
        n = float(self.options["num_engines"])
        const = {
            ("zero_fuel_mass", "empty_mass_no_engines"): 1.0,
            ("zero_fuel_mass", "payload"): 1.0,
            ("zero_fuel_mass", "powerplant_mass"): n,
            ("mtow_margin", "max_takeoff_mass"): 1.0,
        }
        for of, wrts in _DEPENDS.items():
            for wrt in wrts:
                if (of, wrt) in const:
                    self.declare_partials(of, wrt, rows=ar, cols=ar, val=const[of, wrt])
                else:
                    self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _solve(self, inputs):
        """Check the inputs and return the intermediate quantities (complex-step safe)."""
        for name, _default, lo, hi, inc, units, _desc in _INPUTS:
            if name in _COUPLED:  # upper bound: validity, judged on the converged state of a coupled solve
                check_validity(name, inputs[name], lo, hi, units or "", lower_inclusive=inc, where=self.pathname)
                check_range(name, inputs[name], lo, np.inf, units or "", lower_inclusive=inc, where=self.pathname)
            elif name in INPUT_RANGES:  # the range the scenario keys share (``components.ranges``)
                check_range(name, inputs[name], **range_kwargs(name), where=self.pathname)
            else:
                check_range(name, inputs[name], lo, hi, units or "", lower_inclusive=inc,
                            where=self.pathname)
        n = self.options["num_engines"]
        s = {}
        s["zfm"] = inputs["empty_mass_no_engines"] + n * inputs["powerplant_mass"] + inputs["payload"]
        s["a"] = 1.0 + inputs["reserve_fraction"]
        s["x"] = (inputs["design_range"] * G0 * inputs["installed_TSFC"]
                  / (inputs["cruise_speed"] * inputs["lift_to_drag"]))
        s["ex"] = np.exp(s["x"])
        s["w_ec"] = s["zfm"] * s["a"] / inputs["descent_landing_fraction"]
        s["w_sc"] = s["w_ec"] * s["ex"]
        s["tom"] = s["w_sc"] / (inputs["taxi_takeoff_fraction"] * inputs["climb_fraction"])
        return s

    def compute(self, inputs, outputs):
        """Compute the take-off mass and the fuel quantities."""
        s = self._solve(inputs)
        reserve = inputs["reserve_fraction"] * s["zfm"]
        outputs["zero_fuel_mass"] = s["zfm"]
        outputs["reserve_fuel"] = reserve
        outputs["cruise_fuel"] = s["w_sc"] - s["w_ec"]
        outputs["takeoff_mass"] = s["tom"]
        outputs["mission_fuel"] = s["tom"] - s["zfm"] - reserve
        outputs["mtow_margin"] = inputs["max_takeoff_mass"] - s["tom"]

    def compute_partials(self, inputs, partials):
        """Compute the analytic partial derivatives by the chain rule."""
        s = self._solve(inputs)
        n = self.options["num_engines"]
        zfm, a, x, ex, w_ec, tom = s["zfm"], s["a"], s["x"], s["ex"], s["w_ec"], s["tom"]
        f_dl = inputs["descent_landing_fraction"]
        f_to = inputs["taxi_takeoff_fraction"]
        f_cl = inputs["climb_fraction"]
        rf = inputs["reserve_fraction"]
        cruise = w_ec * (ex - 1.0)
        dzfm = {"empty_mass_no_engines": 1.0, "payload": 1.0, "powerplant_mass": float(n)}
        dx = {"design_range": x / inputs["design_range"],
              "installed_TSFC": x / inputs["installed_TSFC"],
              "cruise_speed": -x / inputs["cruise_speed"],
              "lift_to_drag": -x / inputs["lift_to_drag"]}

        g = a * ex / (f_dl * f_to * f_cl)          # dTOM/dZFM
        dtom = {}
        for wrt, dz in dzfm.items():
            dtom[wrt] = g * dz
            partials["reserve_fuel", wrt] = rf * dz
            partials["cruise_fuel", wrt] = a / f_dl * (ex - 1.0) * dz
            partials["mission_fuel", wrt] = (g - a) * dz
        dtom["reserve_fraction"] = zfm * ex / (f_dl * f_to * f_cl)
        dtom["descent_landing_fraction"] = -tom / f_dl
        dtom["taxi_takeoff_fraction"] = -tom / f_to
        dtom["climb_fraction"] = -tom / f_cl
        for wrt, dxi in dx.items():
            dtom[wrt] = tom * dxi
            partials["cruise_fuel", wrt] = w_ec * ex * dxi
            partials["mission_fuel", wrt] = tom * dxi

        partials["reserve_fuel", "reserve_fraction"] = zfm
        partials["cruise_fuel", "reserve_fraction"] = zfm / f_dl * (ex - 1.0)
        partials["cruise_fuel", "descent_landing_fraction"] = -cruise / f_dl
        partials["mission_fuel", "reserve_fraction"] = dtom["reserve_fraction"] - zfm
        for wrt in ("descent_landing_fraction", "taxi_takeoff_fraction", "climb_fraction"):
            partials["mission_fuel", wrt] = dtom[wrt]
        for wrt, val in dtom.items():
            partials["takeoff_mass", wrt] = val
            partials["mtow_margin", wrt] = -val
