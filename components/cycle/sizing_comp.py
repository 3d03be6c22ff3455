"""Engine air flow from a net-thrust requirement, and the flows, powers and core size that follow."""

import numpy as np
import openmdao.api as om

from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_num_nodes

#: Reference state of corrected flows: ISO 2533 sea-level temperature and pressure.
T_STD = 288.15
P_STD = 101325.0


class SizingComp(om.ExplicitComponent):
    """Scale the per-unit-flow cycle to the required net thrust.

        W2 = Fn_required / Fn_specific
        fuel_flow = W2 * fuel_flow_frac
        W_corrected(station) = W * sqrt(Tt/T_std) / (Pt/p_std)       (T_std, p_std: ISO 2533 sea level)
        W25 = W3 = W2 / (1 + BPR)                                     (core flow before the extractions)
        HP_shaft_power = W2 * HP_power_demand,  LP_shaft_power = W2 * LP_power_demand

    The HPC exit corrected flow W3_corrected measures core size: a small value means short HPC
    blades and poor efficiency (a constraint for the optimizer). Valid for Fn_required > 0.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("Fn_required", val=25.0e3 * ones, units="N", desc="net thrust the cycle must deliver")
        self.add_input("Fn_specific", val=150.0 * ones, units="N*s/kg", desc="net thrust per unit inlet air flow")
        self.add_input("fuel_flow_frac", val=0.002 * ones, units=None, desc="fuel flow per unit inlet air flow")
        self.add_input("core_flow_frac", val=0.09 * ones, units=None, desc="core flow per unit inlet air flow")
        self.add_input("HP_power_demand", val=2.0e4 * ones, units="J/kg", desc="HP shaft power per unit W2")
        self.add_input("LP_power_demand", val=5.0e4 * ones, units="J/kg", desc="LP shaft power per unit W2")
        for st, t, p in (("2", 250.0, 3.5e4), ("25", 300.0, 6.0e4), ("3", 800.0, 1.4e6)):
            self.add_input(f"Tt{st}", val=t * ones, units="K", desc=f"total temperature at station {st}")
            self.add_input(f"Pt{st}", val=p * ones, units="Pa", desc=f"total pressure at station {st}")

        self.add_output("W2", val=100.0 * ones, units="kg/s", lower=1e-3, desc="engine inlet air mass flow")
        self.add_output("fuel_flow", val=0.3 * ones, units="kg/s", desc="fuel mass flow")
        self.add_output("W2_corrected", val=300.0 * ones, units="kg/s", desc="fan-face corrected flow")
        self.add_output("W25_corrected", val=30.0 * ones, units="kg/s",
                        desc="core (booster exit / HPC entry) corrected flow")
        self.add_output("W3_corrected", val=3.0 * ones, units="kg/s",
                        desc="HPC exit corrected flow, a measure of core size")
        self.add_output("HP_shaft_power", val=2.0e6 * ones, units="W", desc="HP spool shaft power demand")
        self.add_output("LP_shaft_power", val=5.0e6 * ones, units="W", desc="LP spool shaft power demand")

    def setup_partials(self):
        """Declare sparse partials."""
        ar = np.arange(self.options["num_nodes"])
        for of in ("W2", "fuel_flow", "W2_corrected", "W25_corrected", "W3_corrected", "HP_shaft_power",
                   "LP_shaft_power"):
            for wrt in ("Fn_required", "Fn_specific"):
                self.declare_partials(of, wrt, rows=ar, cols=ar)
        self.declare_partials("fuel_flow", "fuel_flow_frac", rows=ar, cols=ar)
        self.declare_partials("HP_shaft_power", "HP_power_demand", rows=ar, cols=ar)
        self.declare_partials("LP_shaft_power", "LP_power_demand", rows=ar, cols=ar)
        for st in ("2", "25", "3"):
            for v in ("Tt", "Pt"):
                self.declare_partials(f"W{st}_corrected", f"{v}{st}", rows=ar, cols=ar)
        for st in ("25", "3"):
            self.declare_partials(f"W{st}_corrected", "core_flow_frac", rows=ar, cols=ar)

    def compute(self, inputs, outputs):
        """Scale the cycle."""
        check_range("Fn_required", inputs["Fn_required"], 0.0, np.inf, "N", lower_inclusive=False)
        check_range("Fn_specific", inputs["Fn_specific"], 0.0, np.inf, "N*s/kg", lower_inclusive=False)
        w2 = inputs["Fn_required"] / inputs["Fn_specific"]
        c = inputs["core_flow_frac"]
        outputs["W2"] = w2
        outputs["fuel_flow"] = w2 * inputs["fuel_flow_frac"]
        outputs["W2_corrected"] = w2 * self._corr(inputs, "2")
        outputs["W25_corrected"] = c * w2 * self._corr(inputs, "25")
        outputs["W3_corrected"] = c * w2 * self._corr(inputs, "3")
        outputs["HP_shaft_power"] = w2 * inputs["HP_power_demand"]
        outputs["LP_shaft_power"] = w2 * inputs["LP_power_demand"]

    @staticmethod
    def _corr(inputs, st):
        return np.sqrt(inputs[f"Tt{st}"] / T_STD) / (inputs[f"Pt{st}"] / P_STD)

    def compute_partials(self, inputs, J):
        """Analytic partials."""
        fr, fs = inputs["Fn_required"], inputs["Fn_specific"]
        c = inputs["core_flow_frac"]
        w2 = fr / fs
        dw2 = {"Fn_required": 1.0 / fs, "Fn_specific": -fr / fs**2}
        mult = {
            "fuel_flow": inputs["fuel_flow_frac"],
            "W2_corrected": self._corr(inputs, "2"),
            "W25_corrected": c * self._corr(inputs, "25"),
            "W3_corrected": c * self._corr(inputs, "3"),
            "HP_shaft_power": inputs["HP_power_demand"],
            "LP_shaft_power": inputs["LP_power_demand"],
        }
        for k, v in dw2.items():
            J["W2", k] = v
            for of, m in mult.items():
                J[of, k] = m * v
        J["fuel_flow", "fuel_flow_frac"] = w2
        J["HP_shaft_power", "HP_power_demand"] = w2
        J["LP_shaft_power", "LP_power_demand"] = w2
        for st in ("2", "25", "3"):
            cf = 1.0 if st == "2" else c
            corr = self._corr(inputs, st)
            J[f"W{st}_corrected", f"Tt{st}"] = cf * w2 * corr / (2.0 * inputs[f"Tt{st}"])
            J[f"W{st}_corrected", f"Pt{st}"] = -cf * w2 * corr / inputs[f"Pt{st}"]
            if st != "2":
                J[f"W{st}_corrected", "core_flow_frac"] = w2 * corr
