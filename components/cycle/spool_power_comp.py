"""Shaft power per unit inlet air flow that the HP or LP turbine must deliver to its spool."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_num_nodes

BPR_MAX = 30.0
"""Highest accepted bypass ratio, -."""
POWER_OFFTAKE_MAX = INPUT_RANGES["HP_power_offtake"][1]
"""Highest accepted aircraft-systems shaft power offtake from the HP spool, W (``INPUT_RANGES``)."""
WORK_ROUNDOFF = 1.0e-6
"""Accepted round-off below zero in an element work, J/kg: a compressor of pressure ratio 1 (no booster)
gives +-2e-10 J/kg with the thermally perfect gas, from the temperature inversion of its entropy function."""


class SpoolPowerComp(om.ExplicitComponent):
    r"""Shaft power per unit inlet air flow :math:`W_2` absorbed on the HP or the LP spool.

    The cycle elements work per unit of engine inlet air flow :math:`W_2`; element works :math:`w`
    are enthalpy rises per kg of the stream through the element. With bypass ratio :math:`\alpha`
    (``BPR``) the core stream is :math:`c = 1/(1+\alpha)` and the bypass stream :math:`\alpha c` per
    unit :math:`W_2`. Shaft power balance (first law for each compressor; e.g. Saravanamuttoo et al.,
    *Gas Turbine Theory*, and field-reference section 4.2/4.4, where the same balance appears as
    :math:`\tau_c - 1` and :math:`\alpha(\tau_f - 1)` terms):

    * ``spool='HP'``: :math:`P_{HP}/W_2 = w_{hpc}/(1+\alpha) + P_{offtake}/W_2`
      (HP compressor plus aircraft-systems shaft power offtake, J per kg of :math:`W_2`);
    * ``spool='LP'``: :math:`P_{LP}/W_2 = (\alpha\,w_{fan,bypass} + w_{fan,core} + w_{booster})/(1+\alpha)`;
      the LP element also outputs the core flow fraction :math:`c = 1/(1+\alpha)` (so that it is
      produced once in the cycle group).

    The demands are power *absorbed*; the turbine divides by its spool mechanical efficiency.
    The offtake term needs the engine inlet flow ``W2`` (kg/s) because the offtake is a fixed power,
    not a power per unit flow.

    Valid range: :math:`0 < \alpha \le 30`; works :math:`\ge 0` J/kg (less the round-off allowance
    ``WORK_ROUNDOFF``); offtake 0 to 2 MW; :math:`W_2 > 0`. Outside it (or NaN) ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("spool", default="HP", values=("HP", "LP"),
                             desc="Spool whose power demand is computed: 'HP' (HP compressor and "
                                  "offtake) or 'LP' (fan and booster; also outputs core_flow_frac).")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("BPR", val=10.0 * ones, units=None,
                       desc="Bypass ratio, bypass flow / core flow (above 0, up to 30).")
        if self.options["spool"] == "HP":
            self.add_input("hpc_work", val=6.0e5 * ones, units="J/kg",
                           desc="Enthalpy rise per kg of core flow through the HP compressor.")
            self.add_input("HP_power_offtake", val=np.zeros(nn), units="W",
                           desc="Aircraft-systems shaft power taken from the HP spool (0 to 2 MW).")
            self.add_input("W2", val=100.0 * ones, units="kg/s",
                           desc="Engine inlet air flow (scales the fixed offtake to a power per unit W2).")
            self.add_output("HP_power_demand", val=5.0e4 * ones, units="J/kg",
                            desc="Shaft power per unit inlet air flow W2 the HP turbine must deliver "
                                 "(before mechanical efficiency).")
        else:
            self.add_input("fan_bypass_work", val=5.0e4 * ones, units="J/kg",
                           desc="Enthalpy rise per kg of bypass flow through the fan.")
            self.add_input("fan_core_work", val=4.0e4 * ones, units="J/kg",
                           desc="Enthalpy rise per kg of core flow through the fan (core side).")
            self.add_input("booster_work", val=3.0e4 * ones, units="J/kg",
                           desc="Enthalpy rise per kg of core flow through the booster.")
            self.add_output("LP_power_demand", val=5.0e4 * ones, units="J/kg",
                            desc="Shaft power per unit inlet air flow W2 the LP turbine must deliver "
                                 "(before mechanical efficiency).")
            self.add_output("core_flow_frac", val=ones / 11.0, units=None,
                            desc="Core flow per unit inlet air flow, 1/(1 + BPR).")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        if self.options["spool"] == "HP":
            pairs = [("HP_power_demand", wrt) for wrt in ("BPR", "hpc_work", "HP_power_offtake", "W2")]
        else:
            pairs = [("LP_power_demand", wrt)
                     for wrt in ("BPR", "fan_bypass_work", "fan_core_work", "booster_work")]
            pairs.append(("core_flow_frac", "BPR"))
        for of, wrt in pairs:
            self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        where = self.pathname
        bpr = inputs["BPR"]
        check_range("BPR", bpr, where=where)  # NaN
        flat = np.real(bpr)
        if np.any(flat <= 0.0):
            i, node = first_bad_node(flat <= 0.0)
            raise InputRangeError(f"{where}: BPR = {flat[i]:.6g} must be above 0{node} (a turbofan "
                                  f"has a bypass stream; valid range above 0 up to {BPR_MAX:g}).")
        check_range("BPR", bpr, 0.0, BPR_MAX, "", lower_inclusive=False, where=where)
        if self.options["spool"] == "HP":
            check_range("hpc_work", inputs["hpc_work"], -WORK_ROUNDOFF, np.inf, "J/kg", where=where)
            check_range("HP_power_offtake", inputs["HP_power_offtake"], **range_kwargs("HP_power_offtake"),
                        where=where)
            check_range("W2", inputs["W2"], 0.0, np.inf, "kg/s", lower_inclusive=False, where=where)
        else:
            for name in ("fan_bypass_work", "fan_core_work", "booster_work"):
                check_range(name, inputs[name], -WORK_ROUNDOFF, np.inf, "J/kg", where=where)

    def compute(self, inputs, outputs):
        """Evaluate the spool power demand at every node."""
        self._check(inputs)
        c = 1.0 / (1.0 + inputs["BPR"])
        if self.options["spool"] == "HP":
            outputs["HP_power_demand"] = inputs["hpc_work"] * c + inputs["HP_power_offtake"] / inputs["W2"]
        else:
            work = (inputs["BPR"] * inputs["fan_bypass_work"] + inputs["fan_core_work"]
                    + inputs["booster_work"])
            outputs["LP_power_demand"] = work * c
            outputs["core_flow_frac"] = c

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        bpr = inputs["BPR"]
        c = 1.0 / (1.0 + bpr)
        dc = -c**2
        if self.options["spool"] == "HP":
            W2 = inputs["W2"]
            partials["HP_power_demand", "BPR"] = inputs["hpc_work"] * dc
            partials["HP_power_demand", "hpc_work"] = c
            partials["HP_power_demand", "HP_power_offtake"] = 1.0 / W2
            partials["HP_power_demand", "W2"] = -inputs["HP_power_offtake"] / W2**2
        else:
            fb = inputs["fan_bypass_work"]
            work = bpr * fb + inputs["fan_core_work"] + inputs["booster_work"]
            partials["LP_power_demand", "BPR"] = fb * c + work * dc
            partials["LP_power_demand", "fan_bypass_work"] = bpr * c
            partials["LP_power_demand", "fan_core_work"] = c
            partials["LP_power_demand", "booster_work"] = c
            partials["core_flow_frac", "BPR"] = dc
