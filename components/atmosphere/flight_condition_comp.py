"""Free-stream flight condition: real-gas speed of sound, airspeed, total state, q, unit Reynolds number."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.flow import total_from_static
from bypassopt.components.gas.thermo import DRY_AIR_FAR
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_gas, declare_num_nodes

MACH_MIN = 0.0
"""Lowest accepted flight Mach number, -."""
MACH_MAX = 0.95
"""Highest accepted flight Mach number (subsonic free stream), -."""


class FlightConditionComp(om.ExplicitComponent):
    r"""Free-stream flight condition of dry air with thermally perfect (temperature-dependent) properties.

    From the static state :math:`(T_s, p_s)`, the dynamic viscosity :math:`\mu` and the flight Mach number
    :math:`M` the component computes, with the gas model's :math:`h(T)`, entropy function
    :math:`\phi(T) = \int c_p/T\,dT`, :math:`\gamma(T)` and :math:`R` (dry air, fuel-air ratio 0):

    * speed of sound of the real (thermally perfect) gas :math:`a = \sqrt{\gamma(T_s) R T_s}`;
    * true airspeed :math:`V = M a`;
    * total temperature from the steady-flow energy equation :math:`h(T_t) = h(T_s) + V^2/2`;
    * total pressure by isentropic compression, :math:`p_t = p_s \exp((\phi(T_t) - \phi(T_s))/R)`;
    * dynamic pressure :math:`q = \tfrac12 \rho V^2` with :math:`\rho = p_s/(R T_s)`;
    * unit Reynolds number :math:`Re' = \rho V/\mu`.

    The total state comes from ``bypassopt.components.gas.flow.total_from_static`` (values and
    derivatives). With a calorically perfect gas the relations reduce to the isentropic-flow relations of
    NACA Report 1135 (1953), :math:`T_t/T_s = 1 + \tfrac{\gamma-1}{2}M^2`,
    :math:`p_t/p_s = (T_t/T_s)^{\gamma/(\gamma-1)}`. The thermally perfect form is the standard
    entropy-function formulation (Saravanamuttoo et al., *Gas Turbine Theory*; Walsh & Fletcher, *Gas Turbine
    Performance*; as summarised in field-reference section 3.1).

    Note that ``a0`` differs slightly from the standard atmosphere's constant-gamma speed of sound
    ``a0_std`` (gamma of dry air is 1.3999-1.4006 between 300 K and 200 K, and the gas model's R follows
    from CODATA constants rather than the standard's 287.05287 J/(kg K)).

    Valid range: Mach 0 to 0.95 (subsonic free stream) and static temperature inside the gas model's
    range (200-2400 K for ``ThermallyPerfectGas``). Outside it, or NaN, ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        self.add_input("Ts0", val=288.15 * np.ones(nn), units="K", desc="Free-stream static temperature.")
        self.add_input("Ps0", val=101325.0 * np.ones(nn), units="Pa", desc="Free-stream static pressure.")
        self.add_input("mu0", val=1.7894e-5 * np.ones(nn), units="Pa*s",
                       desc="Free-stream dynamic viscosity.")
        self.add_input("Mach0", val=np.zeros(nn), units=None, desc="Flight Mach number (0 to 0.95).")

        self.add_output("a0", val=340.0 * np.ones(nn), units="m/s",
                        desc="Free-stream speed of sound of the gas model, sqrt(gamma(Ts0)*R*Ts0).")
        self.add_output("V0", val=np.zeros(nn), units="m/s", desc="True airspeed, Mach0*a0.")
        self.add_output("Tt0", val=288.15 * np.ones(nn), units="K",
                        desc="Free-stream total temperature, h(Tt0) = h(Ts0) + V0**2/2.")
        self.add_output("Pt0", val=101325.0 * np.ones(nn), units="Pa",
                        desc="Free-stream total pressure, isentropic from the static state.")
        self.add_output("q0", val=np.zeros(nn), units="Pa",
                        desc="Free-stream dynamic pressure 0.5*rho*V0**2 with rho = Ps0/(R*Ts0).")
        self.add_output("Re_per_m0", val=np.zeros(nn), units="1/m",
                        desc="Free-stream unit Reynolds number rho*V0/mu0.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        pairs = (("a0", "Ts0"),
                 ("V0", "Ts0"), ("V0", "Mach0"),
                 ("Tt0", "Ts0"), ("Tt0", "Mach0"),
                 ("Pt0", "Ts0"), ("Pt0", "Ps0"), ("Pt0", "Mach0"),
                 ("q0", "Ts0"), ("q0", "Ps0"), ("q0", "Mach0"),
                 ("Re_per_m0", "Ts0"), ("Re_per_m0", "Ps0"), ("Re_per_m0", "Mach0"), ("Re_per_m0", "mu0"))
        for of, wrt in pairs:
            self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        check_range("Mach0", inputs["Mach0"], MACH_MIN, MACH_MAX, "", where=self.pathname)
        check_range("Ts0", inputs["Ts0"], gas.T_MIN, gas.T_MAX, "K", where=self.pathname)
        check_range("Ps0", inputs["Ps0"], 0.0, np.inf, "Pa", lower_inclusive=False, where=self.pathname)
        check_range("mu0", inputs["mu0"], 0.0, np.inf, "Pa*s", lower_inclusive=False, where=self.pathname)

    def _flow(self, inputs):
        """Total state of the free stream and the static density (values and derivatives)."""
        gas = self.options["gas"]
        Ts = inputs["Ts0"]
        far = np.full(Ts.shape, DRY_AIR_FAR)
        flow = total_from_static(gas, Ts, inputs["Ps0"], inputs["Mach0"], far)
        R = gas.properties(Ts, far).R
        return flow, R

    def compute(self, inputs, outputs):
        """Evaluate the flight condition at every node."""
        self._check(inputs)
        flow, R = self._flow(inputs)
        rho = inputs["Ps0"] / (R * inputs["Ts0"])
        outputs["a0"] = flow.a
        outputs["V0"] = flow.V
        outputs["Tt0"] = flow.Tt
        outputs["Pt0"] = flow.Pt
        outputs["q0"] = 0.5 * rho * flow.V ** 2
        outputs["Re_per_m0"] = rho * flow.V / inputs["mu0"]

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        flow, R = self._flow(inputs)
        d = flow.d
        Ts, Ps, mu = inputs["Ts0"], inputs["Ps0"], inputs["mu0"]
        V = flow.V
        rho = Ps / (R * Ts)
        drho_dTs = -rho / Ts
        drho_dPs = 1.0 / (R * Ts)

        partials["a0", "Ts0"] = d["a", "Ts"]
        partials["V0", "Ts0"] = d["V", "Ts"]
        partials["V0", "Mach0"] = d["V", "Mach"]
        partials["Tt0", "Ts0"] = d["Tt", "Ts"]
        partials["Tt0", "Mach0"] = d["Tt", "Mach"]
        partials["Pt0", "Ts0"] = d["Pt", "Ts"]
        partials["Pt0", "Ps0"] = d["Pt", "Ps"]
        partials["Pt0", "Mach0"] = d["Pt", "Mach"]

        # q = rho V^2 / 2, V depends on Ts and Mach only
        partials["q0", "Ts0"] = 0.5 * drho_dTs * V ** 2 + rho * V * d["V", "Ts"]
        partials["q0", "Ps0"] = 0.5 * drho_dPs * V ** 2
        partials["q0", "Mach0"] = rho * V * d["V", "Mach"]

        # Re' = rho V / mu
        partials["Re_per_m0", "Ts0"] = (drho_dTs * V + rho * d["V", "Ts"]) / mu
        partials["Re_per_m0", "Ps0"] = drho_dPs * V / mu
        partials["Re_per_m0", "Mach0"] = rho * d["V", "Mach"] / mu
        partials["Re_per_m0", "mu0"] = -rho * V / mu ** 2
