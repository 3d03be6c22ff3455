"""Specific thrust, TSFC, jet velocities and efficiencies of a separate-exhaust turbofan."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_num_nodes


class PerformanceComp(om.ExplicitComponent):
    """Design-point performance per unit of inlet air flow W2.

    With w8 = ``W5_frac`` (core nozzle flow per unit W2, fuel and cooling air included) and
    w18 = BPR/(1 + BPR) (bypass flow per unit W2), the effective jet velocities V8, V18 (gross thrust
    per unit nozzle flow, pressure thrust included) and the flight speed V0:

        specific thrust     Fn_sp = w8 V8 + w18 V18 - V0                      (N s/kg)
        fuel flow per W2    wf    = c * burner_air_frac * FAR4,  c = 1/(1 + BPR)
        TSFC                       = wf / Fn_sp                               (kg/(N s))
        jet kinetic power   dKE   = (w8 V8^2 + w18 V18^2 - V0^2) / 2          (W per kg/s of W2)
        thermal efficiency  eta_th = dKE / (wf LHV)
        propulsive eff.     eta_p  = Fn_sp V0 / dKE
        overall efficiency  eta_o  = Fn_sp V0 / (wf LHV) = eta_th * eta_p

    These are the usual textbook definitions (Mattingly, *Elements of Propulsion*, chapter 1;
    Cumpsty, *Jet Propulsion*); with equal jet velocities Vj, full expansion and fuel mass
    neglected they give eta_p = 2/(1 + Vj/V0) and Fn = W2 (Vj - V0). A non-positive net thrust
    (fan and core jets slower than the flight speed) raises an error so an optimizer can back off.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        add_in, add_out = self.add_input, self.add_output
        add_in("BPR", val=10.0 * np.ones(nn), units=None, desc="bypass ratio W13/W25")
        add_in("W5_frac", val=0.09 * np.ones(nn), units=None,
               desc="core nozzle gas flow per unit inlet air flow W2 (cooling air and fuel included)")
        add_in("core_flow_frac", val=0.09 * np.ones(nn), units=None, desc="core flow W25 per unit W2, 1/(1+BPR)")
        add_in("burner_air_frac", val=0.85 * np.ones(nn), units=None, desc="burner air per unit core flow W25")
        add_in("FAR4", val=0.025 * np.ones(nn), units=None, desc="burner fuel-air ratio")
        add_in("Fg8_specific", val=500.0 * np.ones(nn), units="N*s/kg",
               desc="core nozzle gross thrust per unit core nozzle flow (effective jet velocity V8)")
        add_in("Fg18_specific", val=300.0 * np.ones(nn), units="N*s/kg",
               desc="bypass nozzle gross thrust per unit bypass flow (effective jet velocity V18)")
        add_in("V0", val=230.0 * np.ones(nn), units="m/s", desc="flight speed")
        add_in("fuel_LHV", val=43.0e6 * np.ones(nn), units="J/kg", desc="fuel lower heating value")

        add_out("Fn_specific", val=100.0 * np.ones(nn), units="N*s/kg", desc="net thrust per unit inlet air flow W2")
        add_out("fuel_flow_frac", val=0.002 * np.ones(nn), units=None, desc="fuel flow per unit inlet air flow W2")
        add_out("TSFC", val=1.5e-5 * np.ones(nn), units="kg/(N*s)", desc="thrust-specific fuel consumption")
        add_out("jet_velocity_ratio", val=0.8 * np.ones(nn), units=None,
                desc="bypass to core effective jet velocity ratio V18/V8")
        add_out("thermal_efficiency", val=0.5 * np.ones(nn), units=None,
                desc="jet kinetic power gain over fuel power wf*LHV")
        add_out("propulsive_efficiency", val=0.8 * np.ones(nn), units=None,
                desc="thrust power over jet kinetic power gain")
        add_out("overall_efficiency", val=0.4 * np.ones(nn), units=None,
                desc="thrust power over fuel power, thermal x propulsive")

    def setup_partials(self):
        """Declare sparse partials."""
        ar = np.arange(self.options["num_nodes"])
        dep = {
            "Fn_specific": ["BPR", "W5_frac", "Fg8_specific", "Fg18_specific", "V0"],
            "fuel_flow_frac": ["core_flow_frac", "burner_air_frac", "FAR4"],
            "TSFC": ["BPR", "W5_frac", "Fg8_specific", "Fg18_specific", "V0", "core_flow_frac",
                     "burner_air_frac", "FAR4"],
            "jet_velocity_ratio": ["Fg8_specific", "Fg18_specific"],
            "thermal_efficiency": ["BPR", "W5_frac", "Fg8_specific", "Fg18_specific", "V0", "core_flow_frac",
                                   "burner_air_frac", "FAR4", "fuel_LHV"],
            "propulsive_efficiency": ["BPR", "W5_frac", "Fg8_specific", "Fg18_specific", "V0"],
            "overall_efficiency": ["BPR", "W5_frac", "Fg8_specific", "Fg18_specific", "V0", "core_flow_frac",
                                   "burner_air_frac", "FAR4", "fuel_LHV"],
        }
        for of, wrts in dep.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _terms(self, inputs):
        bpr = inputs["BPR"]
        check_range("BPR", bpr, 0.0, np.inf, lower_inclusive=False)
        check_range("fuel_LHV", inputs["fuel_LHV"], **range_kwargs("fuel_LHV"))
        w8, v8, v18, v0 = inputs["W5_frac"], inputs["Fg8_specific"], inputs["Fg18_specific"], inputs["V0"]
        w18 = bpr / (1.0 + bpr)
        fn = w8 * v8 + w18 * v18 - v0
        wf = inputs["core_flow_frac"] * inputs["burner_air_frac"] * inputs["FAR4"]
        dke = 0.5 * (w8 * v8**2 + w18 * v18**2 - v0**2)
        return w8, w18, v8, v18, v0, fn, wf, dke

    def compute(self, inputs, outputs):
        """Evaluate performance; raise if the net thrust is not positive."""
        w8, w18, v8, v18, v0, fn, wf, dke = self._terms(inputs)
        if np.any(np.real(fn) <= 0.0):
            i, node = first_bad_node(np.real(fn) <= 0.0)
            raise InputRangeError(
                f"net thrust per unit air flow = {np.real(fn[i]):.6g} N*s/kg{node} is not positive: the fan "
                f"and core jets (V18 = {np.real(v18[i]):.4g}, V8 = {np.real(v8[i]):.4g} m/s) are too slow for "
                f"the flight speed V0 = {np.real(v0[i]):.4g} m/s (fan too weak)."
            )
        lhv = inputs["fuel_LHV"]
        outputs["Fn_specific"] = fn
        outputs["fuel_flow_frac"] = wf
        outputs["TSFC"] = wf / fn
        outputs["jet_velocity_ratio"] = v18 / v8
        outputs["thermal_efficiency"] = dke / (wf * lhv)
        outputs["propulsive_efficiency"] = fn * v0 / dke
        outputs["overall_efficiency"] = fn * v0 / (wf * lhv)

    def compute_partials(self, inputs, J):
        """Analytic partials."""
        w8, w18, v8, v18, v0, fn, wf, dke = self._terms(inputs)
        bpr, c, b, far, lhv = (inputs[k] for k in ("BPR", "core_flow_frac", "burner_air_frac", "FAR4", "fuel_LHV"))
        dw18 = 1.0 / (1.0 + bpr) ** 2
        dfn = {"BPR": dw18 * v18, "W5_frac": v8, "Fg8_specific": w8, "Fg18_specific": w18, "V0": -np.ones_like(v0)}
        ddke = {"BPR": 0.5 * dw18 * v18**2, "W5_frac": 0.5 * v8**2, "Fg8_specific": w8 * v8,
                "Fg18_specific": w18 * v18, "V0": -v0}
        dwf = {"core_flow_frac": b * far, "burner_air_frac": c * far, "FAR4": c * b}
        for k, v in dfn.items():
            J["Fn_specific", k] = v
            J["TSFC", k] = -wf / fn**2 * v
            J["propulsive_efficiency", k] = (v * v0 + (fn if k == "V0" else 0.0)) / dke - fn * v0 / dke**2 * ddke[k]
            J["thermal_efficiency", k] = ddke[k] / (wf * lhv)
            J["overall_efficiency", k] = (v * v0 + (fn if k == "V0" else 0.0)) / (wf * lhv)
        for k, v in dwf.items():
            J["fuel_flow_frac", k] = v
            J["TSFC", k] = v / fn
            J["thermal_efficiency", k] = -dke / (wf**2 * lhv) * v
            J["overall_efficiency", k] = -fn * v0 / (wf**2 * lhv) * v
        J["thermal_efficiency", "fuel_LHV"] = -dke / (wf * lhv**2)
        J["overall_efficiency", "fuel_LHV"] = -fn * v0 / (wf * lhv**2)
        J["jet_velocity_ratio", "Fg8_specific"] = -v18 / v8**2
        J["jet_velocity_ratio", "Fg18_specific"] = 1.0 / v8
