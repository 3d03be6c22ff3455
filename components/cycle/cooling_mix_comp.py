"""Mixing of turbine coolant air, taken at the HP compressor exit, into the hot gas stream."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.thermo import DRY_AIR_FAR
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_gas, declare_num_nodes

COOLANT_FRAC_MAX = 0.5
"""Highest accepted coolant fraction (per unit of its basis flow), -."""


class CoolingMixComp(om.ExplicitComponent):
    r"""Adiabatic mixing of coolant air (at the HP compressor exit state) into a gas stream.

    Flows are per unit engine inlet air flow :math:`W_2`. The coolant flow is
    :math:`W_c = b\,\psi` with :math:`\psi` the input named by option ``coolant_name`` (for example
    ``cooling_frac_vane``) and :math:`b` the basis flow named by option ``coolant_basis_name``
    (default ``core_flow_frac``; ``None`` means :math:`\psi` is already per unit :math:`W_2`). The
    coolant is dry air (fuel-air ratio 0) at total temperature :math:`T_{t3}`.

    Conservation of mass, fuel and energy (steady, adiabatic, no work):

    * air of the incoming stream :math:`A_{in} = W_{in}/(1+f_{in})` (``include_fuel_mass=True``) or
      :math:`A_{in} = W_{in}` (``False``, the textbook ideal that neglects the fuel mass in the flows);
    * :math:`f_{out} = f_{in} A_{in}/(A_{in} + W_c)` (fuel / air of the mixed stream);
    * :math:`W_{out} = W_{in} + W_c`;
    * :math:`W_{out}\,h(T_{t,out}, f_{out}) = W_{in}\,h(T_{t,in}, f_{in}) + W_c\,h(T_{t3}, 0)`,
      inverted for :math:`T_{t,out}` with the gas model.

    With ``include_fuel_mass=True`` the energy balance is exact for the frozen mixture: every
    mass-specific property of the gas model is linear in composition,
    :math:`(1+f)\,h(T, f) = h_{air}(T) + f\,h_{fuel}(T)` (see ``ThermallyPerfectGas``), so the enthalpy of
    the mixed stream equals the sum of the parts. Mixing is assumed to occur at constant total
    pressure, :math:`P_{t,out} = P_{t,in}` (the coolant is injected at a pressure at least equal to the
    gas pressure; the mixing loss is not modelled). The relations are the steady-flow energy equation
    and the mass balance of an adiabatic mixer (any engineering-thermodynamics text); treating the mixed
    coolant as doing no turbine work before the mixing plane is the usual "uncooled-equivalent"
    bookkeeping (common practice).

    Valid range: stream and coolant temperatures inside the gas model's range (200-2400 K for
    ``ThermallyPerfectGas``), fuel-air ratio 0 to stoichiometric, :math:`W_{in} > 0`, coolant fraction
    0 to 0.5, basis flow above 0 up to 1, :math:`P_{t,in} > 0`. Outside it (or NaN) ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("station_in", types=str, default="4", desc="Station number of the gas stream.")
        self.options.declare("station_out", types=str, default="41", desc="Station number after mixing.")
        self.options.declare("coolant_name", types=str, default="cooling_frac_vane",
                             desc="Name of the input holding the coolant flow per unit basis flow.")
        self.options.declare("coolant_basis_name", types=(str, type(None)), default="core_flow_frac",
                             desc="Name of the input holding the basis flow per unit W2 (the coolant "
                                  "flow per unit W2 is basis*coolant); None: the coolant input is "
                                  "already per unit W2.")
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="Count the fuel mass in the stream flows (False: textbook ideal, flows "
                                  "are air only).")

    def _names(self):
        o = self.options
        si, so = o["station_in"], o["station_out"]
        return {"Tt_in": f"Tt{si}", "Pt_in": f"Pt{si}", "far_in": f"FAR{si}", "W_in": f"W{si}_frac",
                "Tt_c": "Tt3", "psi": o["coolant_name"], "basis": o["coolant_basis_name"],
                "Tt_out": f"Tt{so}", "Pt_out": f"Pt{so}", "far_out": f"FAR{so}", "W_out": f"W{so}_frac"}

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        n = self._names()
        ones = np.ones(nn)
        self.add_input(n["Tt_in"], val=1600.0 * ones, units="K", desc="Total temperature of the gas stream.")
        self.add_input(n["Pt_in"], val=3.0e6 * ones, units="Pa", desc="Total pressure of the gas stream.")
        self.add_input(n["far_in"], val=0.025 * ones, units=None, desc="Fuel-air ratio of the gas stream.")
        self.add_input(n["W_in"], val=0.08 * ones, units=None,
                       desc="Flow of the gas stream per unit inlet air flow W2.")
        self.add_input("Tt3", val=800.0 * ones, units="K",
                       desc="Coolant (HP compressor exit) total temperature.")
        self.add_input(n["psi"], val=0.05 * ones, units=None,
                       desc="Coolant flow per unit basis flow" if n["basis"] else
                            "Coolant flow per unit inlet air flow W2.")
        if n["basis"]:
            self.add_input(n["basis"], val=ones / 11.0, units=None,
                           desc="Basis flow of the coolant fraction per unit inlet air flow W2.")
        self.add_output(n["Tt_out"], val=1550.0 * ones, units="K",
                        desc="Total temperature after mixing (enthalpy balance).")
        self.add_output(n["Pt_out"], val=3.0e6 * ones, units="Pa",
                        desc="Total pressure after mixing (mixing at constant total pressure).")
        self.add_output(n["far_out"], val=0.024 * ones, units=None,
                        desc="Fuel-air ratio after mixing (fuel / total air).")
        self.add_output(n["W_out"], val=0.085 * ones, units=None,
                        desc="Flow after mixing per unit inlet air flow W2.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        nn = self.options["num_nodes"]
        ar = np.arange(nn)
        n = self._names()
        flow_inputs = [n["psi"]] + ([n["basis"]] if n["basis"] else [])
        for wrt in [n["Tt_in"], n["far_in"], n["W_in"], "Tt3"] + flow_inputs:
            self.declare_partials(n["Tt_out"], wrt, rows=ar, cols=ar)
        for wrt in [n["far_in"], n["W_in"]] + flow_inputs:
            self.declare_partials(n["far_out"], wrt, rows=ar, cols=ar)
        for wrt in flow_inputs:
            self.declare_partials(n["W_out"], wrt, rows=ar, cols=ar)
        self.declare_partials(n["W_out"], n["W_in"], rows=ar, cols=ar, val=np.ones(nn))
        self.declare_partials(n["Pt_out"], n["Pt_in"], rows=ar, cols=ar, val=np.ones(nn))

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        n = self._names()
        where = self.pathname
        check_range(n["Tt_in"], inputs[n["Tt_in"]], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range("Tt3", inputs["Tt3"], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range(n["Pt_in"], inputs[n["Pt_in"]], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range(n["far_in"], inputs[n["far_in"]], 0.0, gas.far_stoich, "", where=where)
        check_range(n["W_in"], inputs[n["W_in"]], 0.0, np.inf, "", lower_inclusive=False, where=where)
        # 1e-12 of slack: a Newton update can leave a zero fraction at -1e-17
        check_range(n["psi"], inputs[n["psi"]] + 1e-12, 0.0, COOLANT_FRAC_MAX, "", where=where)
        if n["basis"]:
            check_range(n["basis"], inputs[n["basis"]], 0.0, 1.0, "", lower_inclusive=False, where=where)

    def _evaluate(self, inputs):
        """Mixed state and its derivatives with respect to the local symbols."""
        gas = self.options["gas"]
        n = self._names()
        Tt_in, f_in, W_in, Tt_c = (inputs[n[k]] for k in ("Tt_in", "far_in", "W_in", "Tt_c"))
        psi = inputs[n["psi"]]
        basis = inputs[n["basis"]] if n["basis"] else 1.0
        W_c = basis * psi

        if self.options["include_fuel_mass"]:
            A_in = W_in / (1.0 + f_in)
            dA_dW = 1.0 / (1.0 + f_in)
            dA_df = -A_in / (1.0 + f_in)
        else:
            A_in = W_in
            dA_dW = 1.0 + 0.0 * W_in
            dA_df = 0.0 * W_in
        A_out = A_in + W_c
        f_out = f_in * A_in / A_out
        W_out = W_in + W_c
        # d f_out / d(f_in, A_in, W_c)
        dfo_dfi = A_in / A_out
        dfo_dA = f_in * W_c / A_out**2
        dfo_dWc = -f_out / A_out

        p_in = gas.properties(Tt_in, f_in)
        p_c = gas.properties(Tt_c, np.full(Tt_c.shape, DRY_AIR_FAR, dtype=Tt_c.dtype))
        H = W_in * p_in.h + W_c * p_c.h
        h_out = H / W_out
        Tt_out, dT_dh, dT_df = gas.T_from_h(h_out, f_out, label="mixed-stream enthalpy")

        d = {}
        # chain through (W_in, f_in, Tt_in, Tt_c, W_c)
        dfo = {"W_in": dfo_dA * dA_dW, "far_in": dfo_dfi + dfo_dA * dA_df, "W_c": dfo_dWc}
        dho = {"Tt_in": W_in * p_in.cp / W_out,
               "far_in": W_in * p_in.dh_dfar / W_out,
               "W_in": (p_in.h - h_out) / W_out,
               "Tt_c": W_c * p_c.cp / W_out,
               "W_c": (p_c.h - h_out) / W_out}
        for k, v in dho.items():
            d["Tt_out", k] = dT_dh * v + dT_df * dfo.get(k, 0.0)
        for k, v in dfo.items():
            d["far_out", k] = v
        values = {"Tt_out": Tt_out, "far_out": f_out, "W_out": W_out}
        return values, d, psi, basis

    def compute(self, inputs, outputs):
        """Evaluate the mixed stream at every node."""
        self._check(inputs)
        n = self._names()
        values, _, _, _ = self._evaluate(inputs)
        for k, v in values.items():
            outputs[n[k]] = v
        outputs[n["Pt_out"]] = inputs[n["Pt_in"]]

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        n = self._names()
        _, d, psi, basis = self._evaluate(inputs)
        for of in ("Tt_out", "far_out"):
            for k in ("far_in", "W_in", "Tt_in", "Tt_c"):
                if (of, k) in d:
                    partials[n[of], n[k]] = d[of, k]
            partials[n[of], n["psi"]] = d[of, "W_c"] * basis
            if n["basis"]:
                partials[n[of], n["basis"]] = d[of, "W_c"] * psi
        partials[n["W_out"], n["psi"]] = basis + 0.0 * psi
        if n["basis"]:
            partials[n["W_out"], n["basis"]] = psi
