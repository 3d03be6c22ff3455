"""Intake: total-pressure recovery from the free stream (station 0) to the fan face (station 2)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_gas, declare_num_nodes

RECOVERY_MIN = INPUT_RANGES["inlet_recovery"][0]
"""Lowest accepted intake total-pressure recovery, -."""
RECOVERY_MAX = INPUT_RANGES["inlet_recovery"][1]
"""Highest accepted intake total-pressure recovery (no loss), -."""


class InletComp(om.ExplicitComponent):
    r"""Subsonic intake: adiabatic flow with a total-pressure loss, free stream (0) to fan face (2).

    .. math::

        T_{t2} = T_{t0}, \qquad p_{t2} = \pi_d\, p_{t0}

    with the intake total-pressure recovery :math:`\pi_d` (``inlet_recovery``). The intake does no work
    and exchanges no heat, so the total enthalpy and hence the total temperature are conserved (steady-flow
    energy equation; e.g. Saravanamuttoo et al., *Gas Turbine Theory*, intake section). A subsonic pod
    intake at cruise recovers 0.995-0.998 of the free-stream total pressure (common practice,
    field-reference 3.3); the default is 0.997.

    Valid range: ``inlet_recovery`` 0.8 to 1, ``Tt0`` inside the gas model's range, ``Pt0`` > 0. Outside it,
    or NaN, ``compute`` raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        self.add_input("Tt0", val=288.15 * np.ones(nn), units="K", desc="Free-stream total temperature.")
        self.add_input("Pt0", val=101325.0 * np.ones(nn), units="Pa", desc="Free-stream total pressure.")
        self.add_input("inlet_recovery", val=0.997 * np.ones(nn), units=None,
                       desc="Intake total-pressure recovery Pt2/Pt0 (0.8 to 1; 0.995-0.998 common practice).")

        self.add_output("Tt2", val=288.15 * np.ones(nn), units="K",
                        desc="Fan-face total temperature (equal to Tt0: adiabatic intake).")
        self.add_output("Pt2", val=101325.0 * np.ones(nn), units="Pa",
                        desc="Fan-face total pressure, inlet_recovery*Pt0.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        self.declare_partials("Tt2", "Tt0", rows=ar, cols=ar, val=1.0)
        self.declare_partials("Pt2", "Pt0", rows=ar, cols=ar)
        self.declare_partials("Pt2", "inlet_recovery", rows=ar, cols=ar)

    def compute(self, inputs, outputs):
        """Evaluate the fan-face total state at every node."""
        gas = self.options["gas"]
        check_range("Tt0", inputs["Tt0"], gas.T_MIN, gas.T_MAX, "K", where=self.pathname)
        check_range("Pt0", inputs["Pt0"], 0.0, np.inf, "Pa", lower_inclusive=False, where=self.pathname)
        check_range("inlet_recovery", inputs["inlet_recovery"], RECOVERY_MIN, RECOVERY_MAX, where=self.pathname)
        outputs["Tt2"] = inputs["Tt0"]
        outputs["Pt2"] = inputs["inlet_recovery"] * inputs["Pt0"]

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        partials["Pt2", "Pt0"] = inputs["inlet_recovery"]
        partials["Pt2", "inlet_recovery"] = inputs["Pt0"]
