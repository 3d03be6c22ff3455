"""Turbine that delivers its spool's power demand: exit state and expansion ratio at polytropic efficiency."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.processes import expansion_from_work
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_gas, declare_num_nodes


class TurbineComp(om.ExplicitComponent):
    r"""Uncooled-equivalent turbine delivering the shaft power its spool demands.

    The spool demand :math:`P/W_2` (``HP_power_demand`` or ``LP_power_demand``, J per kg of inlet air
    flow :math:`W_2`) is divided by the spool mechanical efficiency :math:`\eta_m` and by the turbine
    flow per unit :math:`W_2`, :math:`W_{in}` (``W{in}_frac``), to give the specific work on the gas

    .. math:: w = \frac{P/W_2}{\eta_m\,W_{in}} = h(T_{t,in}, f) - h(T_{t,out}, f).

    The expansion ratio :math:`\varepsilon = P_{t,in}/P_{t,out}` follows from the entropy-function form
    at polytropic efficiency :math:`e_t` (field-reference section 3.1; Saravanamuttoo et al., *Gas
    Turbine Theory*; Walsh and Fletcher, *Gas Turbine Performance*):

    .. math:: \phi(T_{t,out}) = \phi(T_{t,in}) - e_t\,R\,\ln\varepsilon,
              \qquad P_{t,out} = P_{t,in}/\varepsilon,

    computed by ``bypassopt.components.gas.processes.expansion_from_work``. For a calorically perfect
    gas :math:`T_{t,out}/T_{t,in} = \varepsilon^{-e_t(\gamma-1)/\gamma}` and the isentropic efficiency is
    :math:`\eta_t = (1 - \varepsilon^{-e_t(\gamma-1)/\gamma})/(1 - \varepsilon^{-(\gamma-1)/\gamma})`.
    Fuel-air ratio and flow pass unchanged (rotor coolant is mixed in by ``CoolingMixComp``).

    Valid range: :math:`T_{t,in}` inside the gas model's range (200-2400 K for ``ThermallyPerfectGas``),
    fuel-air ratio 0 to stoichiometric, :math:`W_{in} > 0`, demand :math:`\ge 0`, :math:`0 < e_t \le 1`,
    :math:`0 < \eta_m \le 1`, and a work the gas can give: :math:`w < h(T_{t,in}) - h(T_{min})` with
    :math:`T_{min}` the gas model's lowest temperature. Outside it (or NaN) ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("station_in", types=str, default="41", desc="Station number at turbine entry.")
        self.options.declare("station_out", types=str, default="44", desc="Station number at turbine exit.")
        self.options.declare("name", default="hpt", values=("hpt", "lpt"),
                             desc="Turbine name used as prefix of its variables ('hpt' or 'lpt').")
        self.options.declare("spool", default="HP", values=("HP", "LP"),
                             desc="Spool driven: reads HP_power_demand and HP_mech_eff, or the LP ones.")

    def _names(self):
        o = self.options
        si, so, t, s = o["station_in"], o["station_out"], o["name"], o["spool"]
        return {"Tt_in": f"Tt{si}", "Pt_in": f"Pt{si}", "far_in": f"FAR{si}", "W_in": f"W{si}_frac",
                "demand": f"{s}_power_demand", "eff_poly": f"{t}_eff_poly", "mech_eff": f"{s}_mech_eff",
                "Tt_out": f"Tt{so}", "Pt_out": f"Pt{so}", "far_out": f"FAR{so}", "W_out": f"W{so}_frac",
                "work": f"{t}_work", "er": f"{t}_expansion_ratio"}

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        n = self._names()
        ones = np.ones(nn)
        spool = self.options["spool"]
        self.add_input(n["Tt_in"], val=1500.0 * ones, units="K", desc="Total temperature at turbine entry.")
        self.add_input(n["Pt_in"], val=3.0e6 * ones, units="Pa", desc="Total pressure at turbine entry.")
        self.add_input(n["far_in"], val=0.025 * ones, units=None, desc="Fuel-air ratio of the turbine gas.")
        self.add_input(n["W_in"], val=0.09 * ones, units=None,
                       desc="Turbine gas flow per unit inlet air flow W2.")
        self.add_input(n["demand"], val=5.0e4 * ones, units="J/kg",
                       desc=f"Shaft power of the {spool} spool per unit inlet air flow W2 (before "
                            f"mechanical efficiency).")
        self.add_input(n["eff_poly"], val=0.90 * ones, units=None,
                       desc="Turbine polytropic efficiency (0 to 1).")
        self.add_input(n["mech_eff"], val=0.99 * ones, units=None,
                       desc=f"Mechanical efficiency of the {spool} spool (shaft power delivered / turbine "
                            f"power; above 0 up to 1).")
        self.add_output(n["Tt_out"], val=1100.0 * ones, units="K", desc="Total temperature at turbine exit.")
        self.add_output(n["Pt_out"], val=7.5e5 * ones, units="Pa", desc="Total pressure at turbine exit.")
        self.add_output(n["far_out"], val=0.025 * ones, units=None,
                        desc="Fuel-air ratio at turbine exit (unchanged).")
        self.add_output(n["W_out"], val=0.09 * ones, units=None,
                        desc="Gas flow per unit inlet air flow W2 at turbine exit (unchanged).")
        self.add_output(n["work"], val=5.0e5 * ones, units="J/kg",
                        desc="Specific work per kg of turbine gas, h(Tt_in) - h(Tt_out).")
        self.add_output(n["er"], val=4.0 * ones, units=None,
                        desc="Total-pressure expansion ratio Pt_in/Pt_out.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        nn = self.options["num_nodes"]
        ar = np.arange(nn)
        n = self._names()
        work_inputs = [n["demand"], n["mech_eff"], n["W_in"]]
        state_inputs = [n["Tt_in"], n["far_in"], n["eff_poly"]] + work_inputs
        for wrt in state_inputs:
            if wrt != n["eff_poly"]:  # the exit enthalpy is set by the work alone
                self.declare_partials(n["Tt_out"], wrt, rows=ar, cols=ar)
            self.declare_partials(n["er"], wrt, rows=ar, cols=ar)
            self.declare_partials(n["Pt_out"], wrt, rows=ar, cols=ar)
        self.declare_partials(n["Pt_out"], n["Pt_in"], rows=ar, cols=ar)
        for wrt in work_inputs:
            self.declare_partials(n["work"], wrt, rows=ar, cols=ar)
        self.declare_partials(n["far_out"], n["far_in"], rows=ar, cols=ar, val=np.ones(nn))
        self.declare_partials(n["W_out"], n["W_in"], rows=ar, cols=ar, val=np.ones(nn))

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range, and for a work the gas cannot give."""
        gas = self.options["gas"]
        n = self._names()
        where = self.pathname
        check_range(n["Tt_in"], inputs[n["Tt_in"]], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range(n["Pt_in"], inputs[n["Pt_in"]], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range(n["far_in"], inputs[n["far_in"]], 0.0, gas.far_stoich, "", where=where)
        check_range(n["W_in"], inputs[n["W_in"]], 0.0, np.inf, "", lower_inclusive=False, where=where)
        check_range(n["demand"], inputs[n["demand"]], 0.0, np.inf, "J/kg", where=where)
        check_range(n["eff_poly"], inputs[n["eff_poly"]], 0.0, 1.0, "", lower_inclusive=False, where=where)
        check_range(n["mech_eff"], inputs[n["mech_eff"]], 0.0, 1.0, "", lower_inclusive=False, where=where)
        # The work must leave the exit above the gas model's lowest temperature; checked on the real
        # parts before the enthalpy inversion so that the message names the cause.
        Tt_in = np.real(inputs[n["Tt_in"]])
        far = np.real(inputs[n["far_in"]])
        w = np.real(inputs[n["demand"]]) / (np.real(inputs[n["mech_eff"]]) * np.real(inputs[n["W_in"]]))
        available = gas.properties(Tt_in, far).h - gas.properties(np.full_like(Tt_in, gas.T_MIN), far).h
        bad = w >= available
        if np.any(bad):
            i, node = first_bad_node(bad)
            raise InputRangeError(
                f"{where}: turbine work {w[i]:.6g} J/kg is larger than the gas at "
                f"{n['Tt_in']} = {Tt_in[i]:.6g} K can give ({available[i]:.6g} J/kg down to the gas "
                f"model's lowest temperature {gas.T_MIN:g} K){node}; the spool demand "
                f"{n['demand']} = {np.real(inputs[n['demand']])[i]:.6g} J/kg is too high for "
                f"{n['W_in']} = {np.real(inputs[n['W_in']])[i]:.6g} and this entry temperature.")

    def _evaluate(self, inputs):
        """Specific work, expansion and their derivatives."""
        n = self._names()
        demand, eta_m, W_in = inputs[n["demand"]], inputs[n["mech_eff"]], inputs[n["W_in"]]
        w = demand / (eta_m * W_in)
        res = expansion_from_work(self.options["gas"], inputs[n["Tt_in"]], w, inputs[n["eff_poly"]],
                                  inputs[n["far_in"]])
        dw = {"demand": 1.0 / (eta_m * W_in), "mech_eff": -w / eta_m, "W_in": -w / W_in}
        return w, res, dw

    def compute(self, inputs, outputs):
        """Evaluate the turbine exit state at every node."""
        self._check(inputs)
        n = self._names()
        w, res, _ = self._evaluate(inputs)
        outputs[n["Tt_out"]] = res.Tt_out
        outputs[n["Pt_out"]] = inputs[n["Pt_in"]] / res.expansion_ratio
        outputs[n["far_out"]] = inputs[n["far_in"]]
        outputs[n["W_out"]] = inputs[n["W_in"]]
        outputs[n["work"]] = w
        outputs[n["er"]] = res.expansion_ratio

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        n = self._names()
        w, res, dw = self._evaluate(inputs)
        d = res.d
        Pt_in = inputs[n["Pt_in"]]
        er = res.expansion_ratio
        dPt_der = -Pt_in / er**2
        direct = {"Tt_in": "Tt_in", "far_in": "far", "eff_poly": "eff_poly"}
        for k, key in direct.items():
            if k != "eff_poly":
                partials[n["Tt_out"], n[k]] = d["Tt_out", key]
            partials[n["er"], n[k]] = d["expansion_ratio", key]
            partials[n["Pt_out"], n[k]] = dPt_der * d["expansion_ratio", key]
        for k, v in dw.items():
            partials[n["work"], n[k]] = v
            partials[n["Tt_out"], n[k]] = d["Tt_out", "work"] * v
            partials[n["er"], n[k]] = d["expansion_ratio", "work"] * v
            partials[n["Pt_out"], n[k]] = dPt_der * d["expansion_ratio", "work"] * v
        partials[n["Pt_out"], n["Pt_in"]] = 1.0 / er
