"""Installed net thrust and installed TSFC: the nacelle drag booked as a thrust debit."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_num_nodes


class InstalledPerformanceComp(om.ExplicitComponent):
    """Thrust the cycle must deliver, installed thrust and installed TSFC, per engine.

        Fn_required       = thrust_required + nacelle_drag      (what the cycle is sized to)
        installed_thrust  = W2 * Fn_specific - nacelle_drag
        installed_TSFC    = fuel_flow / installed_thrust

    The nacelle drag (fan cowl, core cowl and plug scrubbing, pylon) is booked against the engine as
    a thrust debit, so the airframe's lift-to-drag ratio used for the mission must exclude the
    nacelles (common practice; field-reference section 11.1). When the sizing loop has converged
    installed_thrust equals thrust_required. Valid for thrust_required > 0, nacelle_drag >= 0, W2 > 0,
    fuel_flow >= 0; a non-positive installed thrust or a NaN raises an error.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("thrust_required", val=24.0e3 * ones, units="N",
                       desc="installed net thrust the airframe needs from each engine at the sizing point")
        self.add_input("nacelle_drag", val=1.0e3 * ones, units="N", desc="total nacelle and pylon drag per engine")
        self.add_input("W2", val=100.0 * ones, units="kg/s", desc="engine inlet air mass flow")
        self.add_input("Fn_specific", val=150.0 * ones, units="N*s/kg", desc="uninstalled net thrust per unit W2")
        self.add_input("fuel_flow", val=0.3 * ones, units="kg/s", desc="fuel mass flow")
        self.add_output("Fn_required", val=25.0e3 * ones, units="N",
                        desc="uninstalled net thrust the cycle must deliver (requirement + nacelle drag)")
        self.add_output("installed_thrust", val=24.0e3 * ones, units="N", desc="installed net thrust per engine")
        self.add_output("installed_TSFC", val=1.6e-5 * ones, units="kg/(N*s)",
                        desc="installed thrust-specific fuel consumption")

    def setup_partials(self):
        """Declare sparse partials."""
        ar = np.arange(self.options["num_nodes"])
        self.declare_partials("Fn_required", "thrust_required", rows=ar, cols=ar, val=1.0)
        self.declare_partials("Fn_required", "nacelle_drag", rows=ar, cols=ar, val=1.0)
        for of in ("installed_thrust", "installed_TSFC"):
            for wrt in ("W2", "Fn_specific", "nacelle_drag"):
                self.declare_partials(of, wrt, rows=ar, cols=ar)
        self.declare_partials("installed_TSFC", "fuel_flow", rows=ar, cols=ar)

    def compute(self, inputs, outputs):
        """Book the drag against the thrust."""
        check_range("thrust_required", inputs["thrust_required"], **range_kwargs("thrust_required"))
        check_range("nacelle_drag", inputs["nacelle_drag"], 0.0, np.inf, "N")
        check_range("W2", inputs["W2"], 0.0, np.inf, "kg/s", lower_inclusive=False)
        check_range("Fn_specific", inputs["Fn_specific"], units="N*s/kg")  # NaN; the sign is checked below
        check_range("fuel_flow", inputs["fuel_flow"], 0.0, np.inf, "kg/s")
        fi = inputs["W2"] * inputs["Fn_specific"] - inputs["nacelle_drag"]
        if np.any(np.real(fi) <= 0.0):
            i, node = first_bad_node(np.real(fi) <= 0.0)
            raise InputRangeError(f"installed thrust = {np.real(fi[i]):.6g} N{node} is not positive: the "
                                  "nacelle drag exceeds the engine's net thrust.")
        outputs["Fn_required"] = inputs["thrust_required"] + inputs["nacelle_drag"]
        outputs["installed_thrust"] = fi
        outputs["installed_TSFC"] = inputs["fuel_flow"] / fi

    def compute_partials(self, inputs, J):
        """Analytic partials."""
        w2, fs, wf = inputs["W2"], inputs["Fn_specific"], inputs["fuel_flow"]
        fi = w2 * fs - inputs["nacelle_drag"]
        dfi = {"W2": fs, "Fn_specific": w2, "nacelle_drag": -np.ones_like(fi)}
        for k, v in dfi.items():
            J["installed_thrust", k] = v
            J["installed_TSFC", k] = -wf / fi**2 * v
        J["installed_TSFC", "fuel_flow"] = 1.0 / fi
