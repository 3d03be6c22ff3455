"""Statistical turbofan dry mass from take-off thrust and bypass ratio (Raymer's fit), a cross-check."""

import numpy as np
import openmdao.api as om

from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes

#: Coefficient of the SI form, kg/kN**1.1 (Raymer, from memory; 0.084 lb/lbf**1.1 in English units).
RAYMER_COEFF = 14.7
#: Thrust exponent (Raymer, from memory).
RAYMER_THRUST_EXP = 1.1
#: Bypass-ratio exponent coefficient (Raymer, from memory).
RAYMER_BPR_COEFF = 0.045


class StatisticalEngineMassComp(om.ExplicitComponent):
    r"""Statistical dry mass of a turbofan from its take-off thrust and bypass ratio.

    .. math:: m = 14.7\, T^{1.1} e^{-0.045\,BPR} \quad (m \text{ in kg}, T \text{ in kN})

    Source: D. P. Raymer, *Aircraft Design: A Conceptual Approach* (AIAA), propulsion chapter,
    statistical "rubber engine" equations for M_max < 1 (English form
    :math:`W = 0.084\,T^{1.1}e^{-0.045\,BPR}`, lb and lbf) -- from memory, field reference
    section 9. Fitted to turbofans and turbojets of the 1970s-1990s.

    Use it as a cross-check of :class:`EngineMassComp`, not as the design model. The two diverge
    at high bypass ratio: the fit's :math:`e^{-0.045\,BPR}` term keeps falling as BPR rises,
    while a bigger fan (diameter, blades, case and containment) adds mass. At BPR >= 8 the fit
    therefore under-predicts large modern fans (generic 2010s engines of 120-130 kN take-off
    thrust are about 2.3-3.0 t dry, common practice, against 1.8 t from this fit at BPR 10).

    Valid range: take-off thrust 1-1000 kN, BPR 0-20 (checked); the fit's data end well below
    BPR 10.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        self.add_input("takeoff_thrust", val=120.0e3 * np.ones(nn), units="N",
                       desc="Uninstalled sea-level static take-off thrust per engine")
        self.add_input("BPR", val=10.0 * np.ones(nn), units=None, desc="Bypass ratio W13/W21")
        self.add_output("statistical_engine_mass", val=np.ones(nn), units="kg",
                        desc="Dry engine mass from Raymer's statistical fit")

    def setup_partials(self):
        """Declare elementwise partials."""
        ar = np.arange(self.options["num_nodes"])
        self.declare_partials("statistical_engine_mass", "takeoff_thrust", rows=ar, cols=ar)
        self.declare_partials("statistical_engine_mass", "BPR", rows=ar, cols=ar)

    def _check(self, inputs):
        # the fit's validity (judged on a coupled solve's converged state); the power law needs T > 0
        check_validity("takeoff_thrust", inputs["takeoff_thrust"], 1.0e3, 1.0e6, "N", where=self.pathname)
        check_range("takeoff_thrust", inputs["takeoff_thrust"], 0.0, np.inf, "N", lower_inclusive=False,
                    where=self.pathname)
        check_range("BPR", inputs["BPR"], 0.0, 20.0, where=self.pathname)

    def compute(self, inputs, outputs):
        """Compute the statistical dry mass."""
        self._check(inputs)
        T_kN = inputs["takeoff_thrust"] * 1.0e-3
        outputs["statistical_engine_mass"] = (RAYMER_COEFF * T_kN ** RAYMER_THRUST_EXP
                                              * np.exp(-RAYMER_BPR_COEFF * inputs["BPR"]))

    def compute_partials(self, inputs, partials):
        """Compute the analytic partial derivatives."""
        self._check(inputs)
        T_kN = inputs["takeoff_thrust"] * 1.0e-3
        e = np.exp(-RAYMER_BPR_COEFF * inputs["BPR"])
        m = RAYMER_COEFF * T_kN ** RAYMER_THRUST_EXP * e
        partials["statistical_engine_mass", "takeoff_thrust"] = (
            RAYMER_COEFF * RAYMER_THRUST_EXP * T_kN ** (RAYMER_THRUST_EXP - 1.0) * e * 1.0e-3)
        partials["statistical_engine_mass", "BPR"] = -RAYMER_BPR_COEFF * m
