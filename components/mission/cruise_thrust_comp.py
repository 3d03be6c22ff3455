"""Thrust per engine the airframe needs at mid-cruise: weight over lift-to-drag at half the design range."""

import numpy as np
import openmdao.api as om

from bypassopt.components.options import declare_num_nodes
from bypassopt.components.validation import check_range

from .mission_fuel_comp import G0

#: Inputs: name -> (default, units, description). The masses are MissionFuelComp outputs.
_INPUTS = {
    "zero_fuel_mass": (58000.0, "kg", "zero-fuel mass"),
    "reserve_fuel": (2900.0, "kg", "reserve fuel"),
    "cruise_fuel": (12000.0, "kg", "fuel burnt in cruise"),
    "descent_landing_fraction": (0.99, None, "mass ratio end/start of descent and landing"),
    "lift_to_drag": (17.5, None, "cruise lift-to-drag ratio of the airframe without the nacelles"),
}


class CruiseThrustComp(om.ExplicitComponent):
    r"""Installed net thrust per engine that the airframe needs at mid-cruise (steady level flight).

    In steady level flight thrust equals drag, :math:`D = W/(L/D)`. The mass at the start and end of cruise
    follow the mission's backward build-up (``MissionFuelComp``):

    .. math::
        m_{ec} = \frac{ZFM + m_{res}}{f_{dl}}, \qquad m_{sc} = m_{ec} + m_{cruise\ fuel}

    With constant speed, L/D and TSFC the jet Breguet equation makes the mass fall exponentially with the
    distance flown, so the mass at half the design range is the geometric mean (Breguet range equation,
    field-reference 11.1):

    .. math::
        m_{mid} = \sqrt{m_{sc}\, m_{ec}}, \qquad
        F_{cruise} = \frac{g_0\, m_{mid}}{(L/D)\, n_{eng}}

    ``cruise_thrust_required`` is per engine and excludes the nacelle drag (the L/D is that of the airframe
    without nacelles; the nacelle drag is added by the cruise point's ``InstalledPerformanceComp``).
    The masses and L/D must be positive and finite (``InputRangeError`` otherwise).
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("num_engines", types=int, default=2, desc="engines on the aircraft")

    def setup(self):
        """Declare inputs and outputs."""
        ones = np.ones(self.options["num_nodes"])
        for name, (val, units, desc) in _INPUTS.items():
            self.add_input(name, val=val * ones, units=units, desc=desc)
        self.add_output("cruise_thrust_required", val=20.0e3 * ones, units="N",
                        desc="installed net thrust per engine the airframe needs at mid-cruise "
                             "(airframe drag without nacelles)")
        self.add_output("mid_cruise_mass", val=65000.0 * ones, units="kg",
                        desc="aircraft mass at half the design range (geometric mean of cruise start and end)")

    def setup_partials(self):
        """Declare the elementwise partials."""
        ar = np.arange(self.options["num_nodes"])
        for out in ("cruise_thrust_required", "mid_cruise_mass"):
            for name in _INPUTS:
                if out == "mid_cruise_mass" and name == "lift_to_drag":
                    continue
                self.declare_partials(out, name, rows=ar, cols=ar)

    def _state(self, inputs):
        for name in ("zero_fuel_mass", "descent_landing_fraction", "lift_to_drag"):
            check_range(name, inputs[name], lower=0.0, lower_inclusive=False, where=self.msginfo)
        for name in ("reserve_fuel", "cruise_fuel"):
            check_range(name, inputs[name], lower=0.0, where=self.msginfo)
        m_ec = (inputs["zero_fuel_mass"] + inputs["reserve_fuel"]) / inputs["descent_landing_fraction"]
        m_sc = m_ec + inputs["cruise_fuel"]
        return m_ec, m_sc, np.sqrt(m_sc * m_ec)

    def compute(self, inputs, outputs):
        """Mid-cruise mass and thrust per engine."""
        _, _, m_mid = self._state(inputs)
        outputs["mid_cruise_mass"] = m_mid
        outputs["cruise_thrust_required"] = G0 * m_mid / (inputs["lift_to_drag"] * self.options["num_engines"])

    def compute_partials(self, inputs, partials):
        """Analytic partials of the geometric mean and the drag."""
        m_ec, m_sc, m_mid = self._state(inputs)
        f_dl = inputs["descent_landing_fraction"]
        dmid_dec = 0.5 * (m_sc + m_ec) / m_mid  # m_sc = m_ec + fuel, so both depend on m_ec
        dmid_dsc_only = 0.5 * m_ec / m_mid  # through m_sc alone (cruise fuel)
        d_mid = {"zero_fuel_mass": dmid_dec / f_dl, "reserve_fuel": dmid_dec / f_dl,
                 "descent_landing_fraction": -dmid_dec * m_ec / f_dl, "cruise_fuel": dmid_dsc_only}
        scale = G0 / (inputs["lift_to_drag"] * self.options["num_engines"])
        for name, d in d_mid.items():
            partials["mid_cruise_mass", name] = d
            partials["cruise_thrust_required", name] = scale * d
        partials["cruise_thrust_required", "lift_to_drag"] = -scale * m_mid / inputs["lift_to_drag"]
