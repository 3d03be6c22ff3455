"""Nacelle drag by component build-up: fan cowl, core-cowl and plug scrubbing, pylon."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes

from .skin_friction import compressibility_factor, nacelle_form_factor, schlichting_cf, sutherland_viscosity

# (name, default, lower, upper, lower_inclusive, units, desc) for every input.
#: Inputs that follow the engine size, an unknown of the installed engine's coupled solve: their ranges are
#: judged on the converged state (``check_validity``); on every evaluation they need only be positive.
_SIZED = ("fan_cowl_length", "nacelle_max_diameter", "fan_cowl_wetted_area", "core_cowl_length",
          "core_cowl_wetted_area", "plug_length", "plug_wetted_area")

_INPUTS = (
    ("q0", 10154.0, 0.0, 1.0e5, False, "Pa", "Free-stream dynamic pressure"),
    ("Mach0", 0.78, 0.0, 0.95, True, None, "Free-stream Mach number"),
    ("Re_per_m0", 6.125e6, 0.0, 1.0e9, False, "1/m", "Free-stream unit Reynolds number"),
    ("fan_cowl_length", 3.4, 0.1, 20.0, True, "m", "Fan-cowl length, wetted length of the fan cowl"),
    ("nacelle_max_diameter", 2.4, 0.1, 10.0, True, "m", "Maximum nacelle (fan cowl) diameter"),
    ("fan_cowl_wetted_area", 25.0, 0.0, 1000.0, True, "m**2", "External wetted area of the fan cowl"),
    ("nacelle_interference_factor", 1.0, 1.0, 2.0, True, None,
     ("Interference factor Q of the fan cowl (Raymer, from memory: 1.0 pod about one diameter or "
      "more from the wing, 1.3 closer, 1.5 mounted directly)")),
    ("V18_jet", 300.0, 0.0, 800.0, False, "m/s", "Fully expanded bypass-jet velocity"),
    ("rho18_jet", 0.4, 0.0, 5.0, False, "kg/m**3", "Static density of the fully expanded bypass jet"),
    ("Ts18_jet", 240.0, 100.0, 1000.0, True, "K", "Static temperature of the fully expanded bypass jet"),
    ("Mach18_jet", 1.0, 0.0, 2.0, True, None, "Mach number of the fully expanded bypass jet"),
    ("V8_jet", 550.0, 0.0, 1200.0, False, "m/s", "Fully expanded core-jet velocity"),
    ("rho8_jet", 0.13, 0.0, 5.0, False, "kg/m**3", "Static density of the fully expanded core jet"),
    ("Ts8_jet", 650.0, 100.0, 1200.0, True, "K", "Static temperature of the fully expanded core jet"),
    ("Mach8_jet", 1.1, 0.0, 2.0, True, None, "Mach number of the fully expanded core jet"),
    ("core_cowl_length", 1.25, 0.01, 10.0, True, "m", "Length of the core cowl exposed to the bypass jet"),
    ("core_cowl_wetted_area", 4.0, 0.0, 100.0, True, "m**2", "Wetted area of the exposed core cowl"),
    ("plug_length", 0.6, 0.01, 10.0, True, "m", "Length of the core-nozzle plug"),
    ("plug_wetted_area", 0.5, 0.0, 100.0, True, "m**2", "Wetted area of the core-nozzle plug"),
    ("pylon_drag_area", 0.025, 0.0, 5.0, True, "m**2",
     "Pylon drag area C_D*S referred to the free-stream dynamic pressure (demo value)"),
)

_OUTPUTS = (
    ("fan_cowl_drag", "External friction and form drag of the fan cowl in the free stream"),
    ("core_cowl_drag", "Scrubbing drag of the exposed core cowl in the bypass jet"),
    ("plug_drag", "Scrubbing drag of the core-nozzle plug in the core jet"),
    ("pylon_drag", "Pylon drag"),
    ("nacelle_drag", "Total nacelle drag: fan cowl + core cowl + plug + pylon"),
)

_FAN_IN = ("q0", "Mach0", "Re_per_m0", "fan_cowl_length", "nacelle_max_diameter",
           "fan_cowl_wetted_area", "nacelle_interference_factor")
#: Scrubbed part -> ARP755 station of the fully expanded jet that washes it: the core cowl sits in the bypass
#: jet (18), the plug in the core jet (8).
_SCRUBBED = {"core_cowl": "18", "plug": "8"}


def _jet_inputs(st):
    """Names of the fully expanded jet state of station ``st``: velocity, density, temperature, Mach."""
    return (f"V{st}_jet", f"rho{st}_jet", f"Ts{st}_jet", f"Mach{st}_jet")


_DEPENDS = {
    "fan_cowl_drag": _FAN_IN,
    "core_cowl_drag": _jet_inputs("18") + ("core_cowl_length", "core_cowl_wetted_area"),
    "plug_drag": _jet_inputs("8") + ("plug_length", "plug_wetted_area"),
    "pylon_drag": ("q0", "pylon_drag_area"),
}
_DEPENDS["nacelle_drag"] = tuple(dict.fromkeys(sum(_DEPENDS.values(), ())))


class NacelleDragComp(om.ExplicitComponent):
    r"""Per-engine nacelle drag by the component build-up method.

    Fan cowl, in the free stream (Raymer, *Aircraft Design: A Conceptual Approach*, component
    build-up; from memory, field reference section 8.1):

    .. math::
        D_{fc} = q_0\, C_f(Re_0)\, K_M(M_0)\, FF\, Q\, S_{fc}, \qquad
        Re_0 = Re'_0 L_{fc}, \qquad FF = 1 + \frac{0.35}{L_{fc}/D_{nac}}

    with the Prandtl-Schlichting turbulent flat-plate line
    :math:`C_f = 0.455/(\log_{10}Re)^{2.58}` (Schlichting, *Boundary-Layer Theory*) and the
    compressibility factor :math:`K_M = (1 + 0.144 M^2)^{-0.65}` (Raymer, from memory).

    Core cowl and plug, each scrubbed by the jet it sits in (common practice; field reference section
    8.1): the core cowl by the bypass jet (:math:`j = 18`), the plug by the core jet (:math:`j = 8`):

    .. math::
        D_{s} = q_{j}\, C_f(Re_{s})\, K_M(M_{j})\, S_{s}, \qquad
        q_{j} = \tfrac12 \rho_{j} V_{j}^2, \qquad
        Re_{s} = \frac{\rho_{j} V_{j} L_s}{\mu(T_{sj})}

    evaluated with that jet's fully expanded static conditions, the viscosity from Sutherland's
    law with the ISO 2533 constants of air (for the lean combustion products of the core jet an
    approximation; the friction coefficient depends on it only through :math:`\log_{10} Re`).
    These surfaces take form factor 1 and no interference factor:
    they are slender surfaces washed by a nearly parallel jet, and the build-up's form factors and
    interference factors describe bodies in a free stream (a modelling choice, common practice).
    The scrubbing drag is an internal-flow loss; book it against gross thrust.

    Pylon: :math:`D_{py} = q_0 (C_D S)_{py}` with a given drag area (demo value 0.025 m**2).

    Total: :math:`D_{nac} = D_{fc} + D_{cc} + D_{p} + D_{py}`. Base, gap and excrescence
    increments are not modelled.

    Valid range: every wetted-length Reynolds number within 1e5-1e9 (checked), free-stream Mach
    0-0.95, jet Mach 0-2, jet static temperature 100-1000 K (Sutherland's law as implemented in
    ``skin_friction``), fan-cowl length/diameter 0.5-10.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        for name, default, _lo, _hi, _inc, units, desc in _INPUTS:
            self.add_input(name, val=default * np.ones(nn), units=units, desc=desc)
        for name, desc in _OUTPUTS:
            self.add_output(name, val=np.zeros(nn), units="N", desc=desc)

    def setup_partials(self):
        """Declare the elementwise sparsity of every (output, input) pair."""
        ar = np.arange(self.options["num_nodes"])
        for of, wrts in _DEPENDS.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _terms(self, inputs):
        """Check the inputs and return the drag terms and their factors (complex-step safe)."""
        where = self.pathname
        for name, _default, lo, hi, inc, units, _desc in _INPUTS:
            if name in _SIZED:  # follow the coupled engine size: validity judged on the converged state
                check_validity(name, inputs[name], lo, hi, units or "", lower_inclusive=inc, where=where)
                check_range(name, inputs[name], 0.0, np.inf, units or "", lower_inclusive=inc, where=where)
            elif name in INPUT_RANGES:  # the range the scenario keys share (``components.ranges``)
                check_range(name, inputs[name], **range_kwargs(name), where=where)
            else:
                check_range(name, inputs[name], lo, hi, units or "", lower_inclusive=inc, where=where)

        t = {}
        L_fc = inputs["fan_cowl_length"]
        t["Re0"] = inputs["Re_per_m0"] * L_fc
        check_validity("fan-cowl Reynolds number Re_per_m0*fan_cowl_length", t["Re0"], 1e5, 1e9,
                       where=where)
        t["cf0"], t["dcf0"] = schlichting_cf(t["Re0"])
        t["K0"], t["dK0"] = compressibility_factor(inputs["Mach0"], "Mach0")
        t["ld"] = L_fc / inputs["nacelle_max_diameter"]
        t["FF"], t["dFF"] = nacelle_form_factor(t["ld"], "fan_cowl_length/nacelle_max_diameter")

        for part, st in _SCRUBBED.items():
            V_in, rho_in, T_in, M_in = _jet_inputs(st)
            rho = inputs[rho_in]
            V = inputs[V_in]
            t[f"mu_{part}"], t[f"dmu_{part}"] = sutherland_viscosity(inputs[T_in], T_in)
            t[f"q_{part}"] = 0.5 * rho * V ** 2
            t[f"Re_unit_{part}"] = rho * V / t[f"mu_{part}"]
            t[f"K_{part}"], t[f"dK_{part}"] = compressibility_factor(inputs[M_in], M_in)
            Re = t[f"Re_unit_{part}"] * inputs[f"{part}_length"]
            check_validity(f"{part} Reynolds number {rho_in}*{V_in}*{part}_length/mu", Re, 1e5, 1e9,
                           where=where)
            t[f"Re_{part}"] = Re
            t[f"cf_{part}"], t[f"dcf_{part}"] = schlichting_cf(Re)
        return t

    def compute(self, inputs, outputs):
        """Compute the drag of each part and the total."""
        t = self._terms(inputs)
        outputs["fan_cowl_drag"] = (inputs["q0"] * t["cf0"] * t["K0"] * t["FF"]
                                    * inputs["nacelle_interference_factor"]
                                    * inputs["fan_cowl_wetted_area"])
        for part in _SCRUBBED:
            outputs[f"{part}_drag"] = (t[f"q_{part}"] * t[f"cf_{part}"] * t[f"K_{part}"]
                                       * inputs[f"{part}_wetted_area"])
        outputs["pylon_drag"] = inputs["q0"] * inputs["pylon_drag_area"]
        outputs["nacelle_drag"] = (outputs["fan_cowl_drag"] + outputs["core_cowl_drag"]
                                   + outputs["plug_drag"] + outputs["pylon_drag"])

    def compute_partials(self, inputs, partials):
        """Compute the analytic partial derivatives by the chain rule."""
        t = self._terms(inputs)
        q0 = inputs["q0"]
        Q = inputs["nacelle_interference_factor"]
        S_fc = inputs["fan_cowl_wetted_area"]
        L_fc = inputs["fan_cowl_length"]
        D_nac = inputs["nacelle_max_diameter"]
        cf0, K0, FF = t["cf0"], t["K0"], t["FF"]

        d = {}
        # Fan cowl.
        d["fan_cowl_drag", "q0"] = cf0 * K0 * FF * Q * S_fc
        d["fan_cowl_drag", "Mach0"] = q0 * cf0 * t["dK0"] * FF * Q * S_fc
        d["fan_cowl_drag", "Re_per_m0"] = q0 * t["dcf0"] * L_fc * K0 * FF * Q * S_fc
        d["fan_cowl_drag", "fan_cowl_length"] = q0 * K0 * Q * S_fc * (
            t["dcf0"] * inputs["Re_per_m0"] * FF + cf0 * t["dFF"] / D_nac)
        d["fan_cowl_drag", "nacelle_max_diameter"] = -q0 * cf0 * K0 * Q * S_fc * t["dFF"] * L_fc / D_nac ** 2
        d["fan_cowl_drag", "fan_cowl_wetted_area"] = q0 * cf0 * K0 * FF * Q
        d["fan_cowl_drag", "nacelle_interference_factor"] = q0 * cf0 * K0 * FF * S_fc

        # Core cowl in the bypass jet, plug in the core jet.
        for part, st in _SCRUBBED.items():
            V_in, rho_in, T_in, M_in = _jet_inputs(st)
            of = f"{part}_drag"
            rho = inputs[rho_in]
            V = inputs[V_in]
            S = inputs[f"{part}_wetted_area"]
            L = inputs[f"{part}_length"]
            mu, q, K = t[f"mu_{part}"], t[f"q_{part}"], t[f"K_{part}"]
            cf, dcf, Re = t[f"cf_{part}"], t[f"dcf_{part}"], t[f"Re_{part}"]
            d[of, rho_in] = K * S * (0.5 * V ** 2 * cf + q * dcf * V * L / mu)
            d[of, V_in] = K * S * (rho * V * cf + q * dcf * rho * L / mu)
            d[of, T_in] = -K * S * q * dcf * Re * t[f"dmu_{part}"] / mu
            d[of, M_in] = q * cf * t[f"dK_{part}"] * S
            d[of, f"{part}_length"] = q * dcf * t[f"Re_unit_{part}"] * K * S
            d[of, f"{part}_wetted_area"] = q * cf * K

        # Pylon.
        d["pylon_drag", "q0"] = inputs["pylon_drag_area"]
        d["pylon_drag", "pylon_drag_area"] = q0

        for (of, wrt), val in d.items():
            partials[of, wrt] = val
        for wrt in _DEPENDS["nacelle_drag"]:
            partials["nacelle_drag", wrt] = sum(
                d[of, wrt] for of in ("fan_cowl_drag", "core_cowl_drag", "plug_drag", "pylon_drag")
                if (of, wrt) in d)
