"""Fan and core-entry annulus size from the mass-flow function, and fan tip speed."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.flow import static_from_total
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_gas, declare_num_nodes


class FanSizingComp(om.ExplicitComponent):
    """Fan tip diameter, core-entry tip diameter and fan tip speed at the sizing point.

    The fan-face annulus passes the inlet flow W2 at the design axial Mach number M2 (real-gas
    mass-flow function of the flow functions module, ``W_per_A = rho V`` at M2 and (Tt2, Pt2)):

        A2 = W2 / W_per_A(Tt2, Pt2, M2),     D_tip = sqrt(4 A2 / (pi (1 - nu^2)))

    with the hub-to-tip ratio nu (field-reference section 7.1; standard annulus geometry). The core
    entry (station 25) is sized the same way from W25 = W2/(1+BPR) at its own Mach number and
    hub-to-tip ratio. The fan tip speed follows from a tip loading coefficient psi = dh/U^2, with dh
    the bypass-stream enthalpy rise (Dixon and Hall, *Fluid Mechanics and Thermodynamics of
    Turbomachinery*, stage loading), so U_tip = sqrt(dh/psi); the corrected tip speed is
    U_tip/sqrt(Tt2/288.15) and the tip relative Mach number sqrt(V2^2 + U_tip^2)/a2 with the axial
    velocity V2 and static sound speed a2 at the fan face.

    Typical design values (common practice, field-reference 7.2): fan-face Mach 0.60-0.70,
    hub-to-tip ratio 0.25-0.32 (modern) to 0.40, corrected tip speed 400-460 m/s for direct-drive
    fans of FPR 1.5-1.7. Valid: fan-face Mach (0, 1), hub-to-tip ratio [0, 0.6).
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("W2", val=100.0 * ones, units="kg/s", desc="engine inlet air mass flow")
        self.add_input("BPR", val=10.0 * ones, units=None, desc="bypass ratio")
        self.add_input("Tt2", val=250.0 * ones, units="K", desc="fan-face total temperature")
        self.add_input("Pt2", val=3.5e4 * ones, units="Pa", desc="fan-face total pressure")
        self.add_input("Tt25", val=300.0 * ones, units="K", desc="core-entry total temperature")
        self.add_input("Pt25", val=6.0e4 * ones, units="Pa", desc="core-entry total pressure")
        self.add_input("fan_bypass_work", val=4.0e4 * ones, units="J/kg",
                       desc="enthalpy rise of the bypass stream through the fan")
        self.add_input("fan_face_mach", val=0.65 * ones, units=None,
                       desc="design axial Mach number at the fan face (common practice 0.60-0.70)")
        self.add_input("fan_hub_tip_ratio", val=0.30 * ones, units=None,
                       desc="fan hub-to-tip diameter ratio (common practice 0.25-0.32)")
        self.add_input("core_entry_mach", val=0.50 * ones, units=None,
                       desc="design axial Mach number at the core entry, station 25 (common practice)")
        self.add_input("core_entry_hub_tip_ratio", val=0.55 * ones, units=None,
                       desc="hub-to-tip ratio of the core entry annulus (common practice)")
        self.add_input("fan_tip_loading", val=0.30 * ones, units=None,
                       desc="fan tip loading coefficient dh/U_tip^2 (common practice 0.2-0.4)")

        self.add_output("fan_face_area", val=2.5 * ones, units="m**2", desc="fan-face annulus area")
        self.add_output("fan_tip_diameter", val=2.0 * ones, units="m", desc="fan tip diameter")
        self.add_output("core_inlet_tip_diameter", val=0.6 * ones, units="m",
                        desc="tip diameter of the core entry annulus (station 25)")
        self.add_output("fan_tip_speed", val=400.0 * ones, units="m/s", desc="fan tip blade speed")
        self.add_output("fan_tip_speed_corrected", val=420.0 * ones, units="m/s",
                        desc="fan tip speed corrected to ISO sea-level temperature, U/sqrt(Tt2/288.15)")
        self.add_output("fan_tip_relative_mach", val=1.4 * ones, units=None,
                        desc="fan tip relative Mach number at the fan face")

    def setup_partials(self):
        """Declare sparse partials."""
        ar = np.arange(self.options["num_nodes"])
        dp = lambda of, wrt: self.declare_partials(of, wrt, rows=ar, cols=ar)  # noqa: E731
        for of in ("fan_face_area", "fan_tip_diameter"):
            for wrt in ("W2", "Tt2", "Pt2", "fan_face_mach"):
                dp(of, wrt)
        dp("fan_tip_diameter", "fan_hub_tip_ratio")
        for wrt in ("W2", "BPR", "Tt25", "Pt25", "core_entry_mach", "core_entry_hub_tip_ratio"):
            dp("core_inlet_tip_diameter", wrt)
        for wrt in ("fan_bypass_work", "fan_tip_loading"):
            dp("fan_tip_speed", wrt)
            dp("fan_tip_speed_corrected", wrt)
            dp("fan_tip_relative_mach", wrt)
        dp("fan_tip_speed_corrected", "Tt2")
        for wrt in ("Tt2", "fan_face_mach"):  # velocity and sound speed do not depend on Pt2
            dp("fan_tip_relative_mach", wrt)

    def _evaluate(self, inputs):
        check_range("W2", inputs["W2"], 0.0, np.inf, "kg/s", lower_inclusive=False)
        check_range("BPR", inputs["BPR"], 0.0, np.inf, lower_inclusive=False)
        check_range("fan_face_mach", inputs["fan_face_mach"], 0.0, 1.0, lower_inclusive=False,
                    upper_inclusive=False)
        for name in ("core_entry_mach", "fan_hub_tip_ratio", "core_entry_hub_tip_ratio", "fan_tip_loading"):
            check_range(name, inputs[name], **range_kwargs(name))
        check_range("fan_bypass_work", inputs["fan_bypass_work"], 0.0, np.inf, "J/kg", lower_inclusive=False)
        gas = self.options["gas"]
        zero = 0.0 * inputs["Tt2"]
        fan = static_from_total(gas, inputs["Tt2"], inputs["Pt2"], inputs["fan_face_mach"], zero)
        core = static_from_total(gas, inputs["Tt25"], inputs["Pt25"], inputs["core_entry_mach"], zero)
        return fan, core

    def compute(self, inputs, outputs):
        """Size the annuli and the fan tip speed."""
        fan, core = self._evaluate(inputs)
        w2, bpr = inputs["W2"], inputs["BPR"]
        nu, nuc = inputs["fan_hub_tip_ratio"], inputs["core_entry_hub_tip_ratio"]
        area = w2 / fan.W_per_A
        outputs["fan_face_area"] = area
        outputs["fan_tip_diameter"] = np.sqrt(4.0 * area / (np.pi * (1.0 - nu**2)))
        area25 = w2 / (1.0 + bpr) / core.W_per_A
        outputs["core_inlet_tip_diameter"] = np.sqrt(4.0 * area25 / (np.pi * (1.0 - nuc**2)))
        u = np.sqrt(inputs["fan_bypass_work"] / inputs["fan_tip_loading"])
        outputs["fan_tip_speed"] = u
        outputs["fan_tip_speed_corrected"] = u / np.sqrt(inputs["Tt2"] / 288.15)
        outputs["fan_tip_relative_mach"] = np.sqrt(fan.V**2 + u**2) / fan.a

    def compute_partials(self, inputs, J):
        """Analytic partials through the flow-function derivatives."""
        fan, core = self._evaluate(inputs)
        w2, bpr = inputs["W2"], inputs["BPR"]
        nu, nuc = inputs["fan_hub_tip_ratio"], inputs["core_entry_hub_tip_ratio"]
        dh, psi, tt2 = inputs["fan_bypass_work"], inputs["fan_tip_loading"], inputs["Tt2"]

        area = w2 / fan.W_per_A
        dia = np.sqrt(4.0 * area / (np.pi * (1.0 - nu**2)))
        ddia_darea = dia / (2.0 * area)
        dA = {"W2": 1.0 / fan.W_per_A}
        for k, src in (("Tt2", "Tt"), ("Pt2", "Pt"), ("fan_face_mach", "Mach")):
            dA[k] = -area / fan.W_per_A * fan.d["W_per_A", src]
        for k, v in dA.items():
            J["fan_face_area", k] = v
            J["fan_tip_diameter", k] = ddia_darea * v
        J["fan_tip_diameter", "fan_hub_tip_ratio"] = dia * nu / (1.0 - nu**2)

        area25 = w2 / (1.0 + bpr) / core.W_per_A
        d25 = np.sqrt(4.0 * area25 / (np.pi * (1.0 - nuc**2)))
        dd25 = d25 / (2.0 * area25)
        J["core_inlet_tip_diameter", "W2"] = dd25 * area25 / w2
        J["core_inlet_tip_diameter", "BPR"] = -dd25 * area25 / (1.0 + bpr)
        for k, src in (("Tt25", "Tt"), ("Pt25", "Pt"), ("core_entry_mach", "Mach")):
            J["core_inlet_tip_diameter", k] = -dd25 * area25 / core.W_per_A * core.d["W_per_A", src]
        J["core_inlet_tip_diameter", "core_entry_hub_tip_ratio"] = d25 * nuc / (1.0 - nuc**2)

        u = np.sqrt(dh / psi)
        du = {"fan_bypass_work": 0.5 / (u * psi), "fan_tip_loading": -0.5 * u / psi}
        theta_root = np.sqrt(tt2 / 288.15)
        w_rel = np.sqrt(fan.V**2 + u**2)
        for k, v in du.items():
            J["fan_tip_speed", k] = v
            J["fan_tip_speed_corrected", k] = v / theta_root
            J["fan_tip_relative_mach", k] = u * v / (w_rel * fan.a)
        J["fan_tip_speed_corrected", "Tt2"] = -0.5 * u / theta_root / tt2
        for k, src in (("Tt2", "Tt"), ("fan_face_mach", "Mach")):
            J["fan_tip_relative_mach", k] = (fan.V * fan.d["V", src] / w_rel - w_rel * fan.d["a", src] / fan.a) / fan.a
