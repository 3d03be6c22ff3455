"""Turbine nozzle-guide-vane flow capacities, nozzle throat areas and the booster work split of a cycle point."""

import numpy as np
import openmdao.api as om

from bypassopt.components.cycle.sizing_comp import P_STD, T_STD
from bypassopt.components.options import declare_num_nodes
from bypassopt.components.validation import check_range


class FlowCapacityComp(om.ExplicitComponent):
    r"""Quantities of a cycle point that the engine's geometry fixes: NGV capacities, nozzle throat areas.

    Evaluated at the design point they are the engine geometry that an off-design calculation holds
    (``OffDesignGroup``); evaluated at an off-design point they are what the match compares with it.
    With the engine inlet air flow :math:`W_2`, the per-unit-flow stream fractions of the cycle
    (``W4_frac``, ``W45_frac``, ``W5_frac``, ``core_flow_frac`` :math:`c`), the bypass ratio
    :math:`\alpha` and the ISO 2533 sea-level reference :math:`T_{std}` = 288.15 K,
    :math:`p_{std}` = 101 325 Pa:

    .. math::

        W_{4,corr} = W_2\,w_4\,\frac{\sqrt{T_{t4}/T_{std}}}{p_{t4}/p_{std}}, \qquad
        W_{45,corr} = W_2\,w_{45}\,\frac{\sqrt{T_{t45}/T_{std}}}{p_{t45}/p_{std}}, \qquad
        W_{21,corr} = W_2\,c\,\frac{\sqrt{T_{t21}/T_{std}}}{p_{t21}/p_{std}}

        A_8 = \frac{A_8}{W_8}\,W_2\,w_5, \qquad A_{18} = \frac{A_{18}}{W_{18}}\,W_2\,\frac{\alpha}{1+\alpha},
        \qquad r_b = \frac{\tau_b - 1}{\tau_{fc} - 1},\ \tau_b = T_{t25}/T_{t21},\ \tau_{fc} = T_{t21}/T_{t2}

    :math:`W_{4,corr}` and :math:`W_{45,corr}` are the HPT and LPT nozzle-guide-vane flow capacities
    :math:`W\sqrt{T_t}/p_t` written as corrected flows (the same quantity times the constant
    :math:`p_{std}/\sqrt{T_{std}}`, so kg/s): with choked vanes they are fixed by the vane throat areas
    (field-reference 12.2 item 1; Mattingly & von Ohain, *Elements of Propulsion*, engine performance
    analysis, from memory). The flow through station 4 is the cycle's ``W4_frac`` :math:`= c\,b\,(1+f)`
    (burner air and fuel, before the vane coolant), through station 45 the LPT entry flow. :math:`A_8`,
    :math:`A_{18}` are the geometric throat (exit) areas of the convergent core and bypass nozzles, the
    nozzle elements' area per unit flow times the stream flow (the core exhaust duct neither adds nor
    removes flow, so :math:`W_8 = W_5`). :math:`W_{21,corr}` is the booster entry corrected flow; the fan
    and HPC entry corrected flows are ``SizingComp``'s ``W2_corrected`` and ``W25_corrected``. The booster
    temperature-rise ratio :math:`r_b` is what ``OffDesignGroup`` holds to schedule the booster on the LP
    spool (common practice).

    Valid range: :math:`W_2 > 0`, stream fractions :math:`\ge 0`, :math:`\alpha > 0`, temperatures and
    pressures :math:`> 0`, :math:`T_{t21} > T_{t2}` (the fan compresses). Outside it (or NaN) ``compute``
    raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        add_in, add_out = self.add_input, self.add_output
        add_in("W2", val=100.0 * ones, units="kg/s", desc="engine inlet air mass flow")
        add_in("BPR", val=10.0 * ones, units=None, desc="bypass ratio W13/W25")
        add_in("core_flow_frac", val=ones / 11.0, units=None, desc="core flow W25 per unit W2, 1/(1+BPR)")
        add_in("W4_frac", val=0.08 * ones, units=None, desc="burner exit gas flow per unit W2")
        add_in("W45_frac", val=0.09 * ones, units=None, desc="LPT entry gas flow per unit W2")
        add_in("W5_frac", val=0.09 * ones, units=None, desc="LPT exit (core nozzle) gas flow per unit W2")
        for st, t, p, what in (("2", 250.0, 3.5e4, "fan face"), ("21", 280.0, 5.0e4, "fan core-side exit"),
                               ("4", 1650.0, 1.3e6, "burner exit"), ("45", 1100.0, 3.0e5, "LPT entry")):
            add_in(f"Tt{st}", val=t * ones, units="K", desc=f"{what} total temperature")
            if st != "2":
                add_in(f"Pt{st}", val=p * ones, units="Pa", desc=f"{what} total pressure")
        add_in("Tt25", val=330.0 * ones, units="K", desc="booster exit total temperature")
        add_in("area8_per_flow", val=3.0e-3 * ones, units="m**2*s/kg",
               desc="core nozzle throat (exit) area per unit nozzle flow")
        add_in("area18_per_flow", val=3.0e-3 * ones, units="m**2*s/kg",
               desc="bypass nozzle throat (exit) area per unit nozzle flow")

        add_out("W4_corrected", val=7.0 * ones, units="kg/s",
                desc="HPT nozzle-guide-vane flow capacity as corrected flow W4*sqrt(Tt4/T_std)/(Pt4/p_std)")
        add_out("W45_corrected", val=25.0 * ones, units="kg/s",
                desc="LPT nozzle-guide-vane flow capacity as corrected flow W45*sqrt(Tt45/T_std)/(Pt45/p_std)")
        add_out("W21_corrected", val=30.0 * ones, units="kg/s",
                desc="booster entry corrected flow W25*sqrt(Tt21/T_std)/(Pt21/p_std)")
        add_out("area8", val=0.3 * ones, units="m**2", desc="core nozzle geometric throat (exit) area")
        add_out("area18", val=1.5 * ones, units="m**2", desc="bypass nozzle geometric throat (exit) area")
        add_out("booster_temperature_rise_ratio", val=ones, units=None,
                desc="booster to fan core-side temperature-rise ratio (Tt25/Tt21 - 1)/(Tt21/Tt2 - 1)")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        dep = {
            "W4_corrected": ("W2", "W4_frac", "Tt4", "Pt4"),
            "W45_corrected": ("W2", "W45_frac", "Tt45", "Pt45"),
            "W21_corrected": ("W2", "core_flow_frac", "Tt21", "Pt21"),
            "area8": ("W2", "W5_frac", "area8_per_flow"),
            "area18": ("W2", "BPR", "area18_per_flow"),
            "booster_temperature_rise_ratio": ("Tt2", "Tt21", "Tt25"),
        }
        for of, wrts in dep.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    _CORRECTED = {"W4_corrected": ("W4_frac", "4"), "W45_corrected": ("W45_frac", "45"),
                  "W21_corrected": ("core_flow_frac", "21")}

    def _check(self, inputs):
        where = self.pathname
        check_range("W2", inputs["W2"], 0.0, np.inf, "kg/s", lower_inclusive=False, where=where)
        check_range("BPR", inputs["BPR"], 0.0, np.inf, "", lower_inclusive=False, where=where)
        for name in ("core_flow_frac", "W4_frac", "W45_frac", "W5_frac", "area8_per_flow", "area18_per_flow"):
            check_range(name, inputs[name], 0.0, np.inf, "", where=where)
        for st in ("2", "21", "25", "4", "45"):
            check_range(f"Tt{st}", inputs[f"Tt{st}"], 0.0, np.inf, "K", lower_inclusive=False, where=where)
        for st in ("21", "4", "45"):
            check_range(f"Pt{st}", inputs[f"Pt{st}"], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range("Tt21 - Tt2", inputs["Tt21"] - inputs["Tt2"], 0.0, np.inf, "K", lower_inclusive=False,
                    where=where)

    def compute(self, inputs, outputs):
        """Evaluate capacities, areas and the booster temperature-rise ratio."""
        self._check(inputs)
        w2 = inputs["W2"]
        for out, (frac, st) in self._CORRECTED.items():
            outputs[out] = w2 * inputs[frac] * np.sqrt(inputs[f"Tt{st}"] / T_STD) * P_STD / inputs[f"Pt{st}"]
        bpr = inputs["BPR"]
        outputs["area8"] = inputs["area8_per_flow"] * w2 * inputs["W5_frac"]
        outputs["area18"] = inputs["area18_per_flow"] * w2 * bpr / (1.0 + bpr)
        t2, t21, t25 = inputs["Tt2"], inputs["Tt21"], inputs["Tt25"]
        outputs["booster_temperature_rise_ratio"] = (t25 / t21 - 1.0) / (t21 / t2 - 1.0)

    def compute_partials(self, inputs, J):
        """Evaluate the analytic partial derivatives."""
        w2 = inputs["W2"]
        for out, (frac, st) in self._CORRECTED.items():
            tt, pt = inputs[f"Tt{st}"], inputs[f"Pt{st}"]
            corr = np.sqrt(tt / T_STD) * P_STD / pt
            val = w2 * inputs[frac] * corr
            J[out, "W2"] = inputs[frac] * corr
            J[out, frac] = w2 * corr
            J[out, f"Tt{st}"] = 0.5 * val / tt
            J[out, f"Pt{st}"] = -val / pt
        bpr, a8, a18, w5 = inputs["BPR"], inputs["area8_per_flow"], inputs["area18_per_flow"], inputs["W5_frac"]
        J["area8", "W2"] = a8 * w5
        J["area8", "W5_frac"] = a8 * w2
        J["area8", "area8_per_flow"] = w2 * w5
        J["area18", "W2"] = a18 * bpr / (1.0 + bpr)
        J["area18", "BPR"] = a18 * w2 / (1.0 + bpr) ** 2
        J["area18", "area18_per_flow"] = w2 * bpr / (1.0 + bpr)
        t2, t21, t25 = inputs["Tt2"], inputs["Tt21"], inputs["Tt25"]
        num, den = t25 / t21 - 1.0, t21 / t2 - 1.0
        J["booster_temperature_rise_ratio", "Tt25"] = 1.0 / (t21 * den)
        J["booster_temperature_rise_ratio", "Tt21"] = -t25 / t21**2 / den - num / den**2 / t2
        J["booster_temperature_rise_ratio", "Tt2"] = num / den**2 * t21 / t2**2
