"""Fan: polytropic compression of the bypass stream (2 -> 13) and of the core-side stream (2 -> 21)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.processes import polytropic_compression
from bypassopt.components.gas.thermo import DRY_AIR_FAR
from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import InputRangeError, check_range
from bypassopt.components.options import declare_gas, declare_num_nodes

FPR_MIN = 1.0
"""FPR must be above this value (a fan compresses), -."""
FPR_MAX = 4.0
"""Highest accepted fan pressure ratio (single-stage fans of civil turbofans stay well below), -."""
EFF_POLY_MIN = INPUT_RANGES["fan_bypass_eff_poly"][0]
"""Lowest accepted polytropic efficiency (below it the input is almost certainly a mistake), -."""
EFF_POLY_MAX = INPUT_RANGES["fan_bypass_eff_poly"][1]
"""Highest accepted polytropic efficiency (isentropic), -."""


class FanComp(om.ExplicitComponent):
    r"""Fan of a separate-exhaust turbofan: bypass (outer) stream 2 -> 13, core-side (inner) stream 2 -> 21.

    Each stream of dry air is compressed at its own polytropic efficiency :math:`e`; with the entropy
    function :math:`\phi(T) = \int c_p/T\,dT` of the gas model (``polytropic_compression`` of
    ``bypassopt.components.gas.processes``):

    .. math::

        \phi(T_{t13}) = \phi(T_{t2}) + \frac{R}{e_{fb}} \ln \pi_f, \qquad p_{t13} = \pi_f\, p_{t2},
        \qquad w_{fb} = h(T_{t13}) - h(T_{t2})

        \phi(T_{t21}) = \phi(T_{t2}) + \frac{R}{e_{fc}} \ln \pi_{fc}, \qquad p_{t21} = \pi_{fc}\, p_{t2},
        \qquad w_{fc} = h(T_{t21}) - h(T_{t2})

    where :math:`\pi_f` is ``FPR`` and :math:`\pi_{fc}` the core-side pressure ratio: equal to ``FPR``
    (option ``core_side_ratio='equal'``) or the input ``fan_core_PR`` (``'input'``). The works are per kg
    of the stream through that part of the fan. With a calorically perfect gas
    :math:`T_{t13}/T_{t2} = \pi_f^{(\gamma-1)/(\gamma e_{fb})}`. Source: the standard entropy-function /
    polytropic-efficiency formulation (Saravanamuttoo et al., *Gas Turbine Theory*; Walsh and Fletcher,
    *Gas Turbine Performance*; field-reference section 3.1). Typical polytropic efficiencies: bypass
    0.90-0.93, core side 0.88-0.91 (common practice, field-reference 3.3); defaults 0.92 and 0.90.

    Valid range: ``FPR`` above 1 and up to 4, ``fan_core_PR`` 1 to 4, efficiencies 0.5 to 1, ``Tt2`` and the
    exit temperatures inside the gas model's range, ``Pt2`` > 0. Outside it, or NaN, ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("core_side_ratio", default="equal", values=("equal", "input"),
                             desc="'equal': the core-side stream has the bypass pressure ratio FPR; "
                                  "'input': its pressure ratio is the input fan_core_PR.")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        self.add_input("Tt2", val=288.15 * np.ones(nn), units="K", desc="Fan-face total temperature.")
        self.add_input("Pt2", val=101325.0 * np.ones(nn), units="Pa", desc="Fan-face total pressure.")
        self.add_input("FPR", val=1.5 * np.ones(nn), units=None,
                       desc="Fan pressure ratio of the bypass stream Pt13/Pt2 (above 1, up to 4).")
        if self.options["core_side_ratio"] == "input":
            self.add_input("fan_core_PR", val=1.4 * np.ones(nn), units=None,
                           desc="Fan pressure ratio of the core-side stream Pt21/Pt2 (1 to 4).")
        self.add_input("fan_bypass_eff_poly", val=0.92 * np.ones(nn), units=None,
                       desc="Polytropic efficiency of the fan bypass stream (0.90-0.93 common practice).")
        self.add_input("fan_core_eff_poly", val=0.90 * np.ones(nn), units=None,
                       desc="Polytropic efficiency of the fan core-side stream (0.88-0.91 common practice).")

        self.add_output("Tt13", val=326.8 * np.ones(nn), units="K", desc="Fan bypass exit total temperature.")
        self.add_output("Pt13", val=1.5 * 101325.0 * np.ones(nn), units="Pa",
                        desc="Fan bypass exit total pressure, FPR*Pt2.")
        self.add_output("Tt21", val=320.0 * np.ones(nn), units="K",
                        desc="Fan core-side exit total temperature.")
        self.add_output("Pt21", val=1.4 * 101325.0 * np.ones(nn), units="Pa",
                        desc="Fan core-side exit total pressure.")
        self.add_output("fan_bypass_work", val=4.0e4 * np.ones(nn), units="J/kg",
                        desc="Enthalpy rise per kg of bypass air, h(Tt13) - h(Tt2).")
        self.add_output("fan_core_work", val=3.5e4 * np.ones(nn), units="J/kg",
                        desc="Enthalpy rise per kg of core-side air, h(Tt21) - h(Tt2).")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        core_pr = "FPR" if self.options["core_side_ratio"] == "equal" else "fan_core_PR"
        pairs = (("Tt13", "Tt2"), ("Tt13", "FPR"), ("Tt13", "fan_bypass_eff_poly"),
                 ("Pt13", "Pt2"), ("Pt13", "FPR"),
                 ("fan_bypass_work", "Tt2"), ("fan_bypass_work", "FPR"),
                 ("fan_bypass_work", "fan_bypass_eff_poly"),
                 ("Tt21", "Tt2"), ("Tt21", core_pr), ("Tt21", "fan_core_eff_poly"),
                 ("Pt21", "Pt2"), ("Pt21", core_pr),
                 ("fan_core_work", "Tt2"), ("fan_core_work", core_pr), ("fan_core_work", "fan_core_eff_poly"))
        for of, wrt in pairs:
            self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _core_pr_name(self):
        return "FPR" if self.options["core_side_ratio"] == "equal" else "fan_core_PR"

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        where = self.pathname
        check_range("Tt2", inputs["Tt2"], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range("Pt2", inputs["Pt2"], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range("FPR", inputs["FPR"], FPR_MIN, FPR_MAX, "", lower_inclusive=False, where=where)
        if self.options["core_side_ratio"] == "input":
            check_range("fan_core_PR", inputs["fan_core_PR"], 1.0, FPR_MAX, "", where=where)
        for name in ("fan_bypass_eff_poly", "fan_core_eff_poly"):
            check_range(name, inputs[name], **range_kwargs(name), where=where)

    def _compress(self, inputs):
        """Bypass and core-side compressions (values and derivatives)."""
        gas = self.options["gas"]
        Tt2 = inputs["Tt2"]
        far = np.full(Tt2.shape, DRY_AIR_FAR)
        out = []
        for pr_name, eff_name, station in (("FPR", "fan_bypass_eff_poly", "13"),
                                           (self._core_pr_name(), "fan_core_eff_poly", "21")):
            try:
                out.append(polytropic_compression(gas, Tt2, inputs[pr_name], inputs[eff_name], far))
            except InputRangeError as err:
                raise InputRangeError(f"{self.pathname}: fan exit temperature Tt{station} is outside the "
                                      f"gas model's range ({err})") from err
        return out

    def compute(self, inputs, outputs):
        """Evaluate both fan streams at every node."""
        self._check(inputs)
        byp, core = self._compress(inputs)
        Pt2 = inputs["Pt2"]
        outputs["Tt13"] = byp.Tt_out
        outputs["Pt13"] = inputs["FPR"] * Pt2
        outputs["fan_bypass_work"] = byp.work
        outputs["Tt21"] = core.Tt_out
        outputs["Pt21"] = inputs[self._core_pr_name()] * Pt2
        outputs["fan_core_work"] = core.work

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        byp, core = self._compress(inputs)
        core_pr = self._core_pr_name()
        Pt2 = inputs["Pt2"]
        for res, T_name, P_name, w_name, pr_name, eff_name in (
                (byp, "Tt13", "Pt13", "fan_bypass_work", "FPR", "fan_bypass_eff_poly"),
                (core, "Tt21", "Pt21", "fan_core_work", core_pr, "fan_core_eff_poly")):
            partials[T_name, "Tt2"] = res.d["Tt_out", "Tt_in"]
            partials[T_name, pr_name] = res.d["Tt_out", "pressure_ratio"]
            partials[T_name, eff_name] = res.d["Tt_out", "eff_poly"]
            partials[P_name, "Pt2"] = inputs[pr_name]
            partials[P_name, pr_name] = Pt2
            partials[w_name, "Tt2"] = res.d["work", "Tt_in"]
            partials[w_name, pr_name] = res.d["work", "pressure_ratio"]
            partials[w_name, eff_name] = res.d["work", "eff_poly"]
