"""Axial compressor (booster or HPC): polytropic compression of the core stream between two stations."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.processes import polytropic_compression
from bypassopt.components.gas.thermo import DRY_AIR_FAR
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_gas, declare_num_nodes

PR_MAX = 100.0
"""Highest accepted compressor pressure ratio and OPR, -."""
EFF_POLY_MIN = 0.5
"""Lowest accepted polytropic efficiency (below it the input is almost certainly a mistake), -."""
EFF_POLY_MAX = 1.0
"""Highest accepted polytropic efficiency (isentropic), -."""


def _check_eff(name, value):
    """Require a polytropic efficiency inside the accepted range."""
    if not EFF_POLY_MIN <= value <= EFF_POLY_MAX:
        raise ValueError(f"Option '{name}' must lie between {EFF_POLY_MIN} and {EFF_POLY_MAX}, got {value}.")


class CompressorComp(om.ExplicitComponent):
    r"""Axial compressor of the core stream (booster 21 -> 25, HPC 25 -> 3) at constant polytropic efficiency.

    With the entropy function :math:`\phi(T) = \int c_p/T\,dT` of the gas model (``polytropic_compression``
    of ``bypassopt.components.gas.processes``), for dry air:

    .. math::

        \phi(T_{t,out}) = \phi(T_{t,in}) + \frac{R}{e} \ln \pi, \qquad p_{t,out} = \pi\, p_{t,in},
        \qquad w = h(T_{t,out}) - h(T_{t,in})

    where :math:`w` (``{name}_work``) is the enthalpy rise per kg of air through the compressor. With a
    calorically perfect gas :math:`T_{t,out}/T_{t,in} = \pi^{(\gamma-1)/(\gamma e)}`. Source: the standard
    entropy-function / polytropic-efficiency formulation (Saravanamuttoo et al., *Gas Turbine Theory*;
    Walsh and Fletcher, *Gas Turbine Performance*; field-reference section 3.1).

    The pressure ratio :math:`\pi` is either an input ``{name}_PR`` (option ``ratio_from='PR'``) or follows
    from the overall pressure ratio (``ratio_from='OPR'``): :math:`\pi = \mathrm{OPR}\,p_{t2}/p_{t,in}`, so
    that :math:`p_{t,out} = \mathrm{OPR}\,p_{t2}` exactly; :math:`\pi` is then an output.

    Variable names come from the options: ``station_in='25'``, ``station_out='3'``, ``name='hpc'`` give
    inputs ``Tt25``, ``Pt25``, ``hpc_PR`` (or ``OPR`` and ``Pt2``), ``hpc_eff_poly`` and outputs ``Tt3``,
    ``Pt3``, ``hpc_work`` (and ``hpc_PR``). Typical polytropic efficiencies: booster 0.88-0.91, HPC
    0.90-0.92 (common practice, field-reference 3.3); the default comes from option ``eff_poly_default``.

    Valid range: ``{name}_PR`` 1 to 100, ``OPR`` above 1 and up to 100 and above the pressure ratio
    ``Pt_in/Pt2`` reached upstream, efficiency 0.5 to 1, inlet and exit temperatures inside the gas model's
    range, pressures > 0. Outside it, or NaN, ``compute`` raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("station_in", types=str, default="25",
                             desc="Station number of the compressor entry (variables Tt<n>, Pt<n>).")
        self.options.declare("station_out", types=str, default="3",
                             desc="Station number of the compressor exit (variables Tt<n>, Pt<n>).")
        self.options.declare("name", types=str, default="hpc",
                             desc="Prefix of the compressor's own variables, e.g. 'booster' or 'hpc'.")
        self.options.declare("ratio_from", default="PR", values=("PR", "OPR"),
                             desc="'PR': pressure ratio is the input <name>_PR; 'OPR': it follows from the "
                                  "inputs OPR and Pt2 as OPR*Pt2/Pt_in and is an output.")
        self.options.declare("eff_poly_default", types=float, default=0.90, check_valid=_check_eff,
                             desc="Default value of the input <name>_eff_poly (booster 0.88-0.91, HPC "
                                  "0.90-0.92, common practice).")

    def _names(self):
        """Station- and name-derived variable names."""
        si, so, name = (self.options[k] for k in ("station_in", "station_out", "name"))
        return {"Tt_in": f"Tt{si}", "Pt_in": f"Pt{si}", "Tt_out": f"Tt{so}", "Pt_out": f"Pt{so}",
                "PR": f"{name}_PR", "eff": f"{name}_eff_poly", "work": f"{name}_work"}

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        n = self._names()
        name = self.options["name"]
        opr_mode = self.options["ratio_from"] == "OPR"
        if opr_mode and n["Pt_in"] == "Pt2":
            raise ValueError(f"{self.msginfo}: with ratio_from='OPR' the entry station must differ from 2 "
                             "(use ratio_from='PR' with the input OPR connected instead).")
        self.add_input(n["Tt_in"], val=300.0 * np.ones(nn), units="K",
                       desc=f"{name} entry total temperature.")
        self.add_input(n["Pt_in"], val=1.5e5 * np.ones(nn), units="Pa", desc=f"{name} entry total pressure.")
        if opr_mode:
            self.add_input("OPR", val=40.0 * np.ones(nn), units=None,
                           desc="Overall pressure ratio Pt3/Pt2 (fan core side x booster x HPC).")
            self.add_input("Pt2", val=101325.0 * np.ones(nn), units="Pa", desc="Fan-face total pressure.")
        else:
            self.add_input(n["PR"], val=2.0 * np.ones(nn), units=None,
                           desc=f"{name} total-pressure ratio {n['Pt_out']}/{n['Pt_in']} (1 to 100).")
        self.add_input(n["eff"], val=self.options["eff_poly_default"] * np.ones(nn), units=None,
                       desc=f"{name} polytropic efficiency (0.5 to 1).")

        self.add_output(n["Tt_out"], val=400.0 * np.ones(nn), units="K",
                        desc=f"{name} exit total temperature.")
        self.add_output(n["Pt_out"], val=3.0e5 * np.ones(nn), units="Pa", desc=f"{name} exit total pressure.")
        self.add_output(n["work"], val=1.0e5 * np.ones(nn), units="J/kg",
                        desc=f"Enthalpy rise per kg of air through the {name}, "
                             f"h({n['Tt_out']}) - h({n['Tt_in']}).")
        if opr_mode:
            self.add_output(n["PR"], val=2.0 * np.ones(nn), units=None,
                            desc=f"{name} total-pressure ratio OPR*Pt2/{n['Pt_in']}.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        n = self._names()
        if self.options["ratio_from"] == "OPR":
            ratio_inputs = ("OPR", "Pt2", n["Pt_in"])
            pairs = [(n["Pt_out"], "OPR"), (n["Pt_out"], "Pt2")]
            pairs += [(n["PR"], wrt) for wrt in ratio_inputs]
        else:
            ratio_inputs = (n["PR"],)
            pairs = [(n["Pt_out"], n["Pt_in"]), (n["Pt_out"], n["PR"])]
        for of in (n["Tt_out"], n["work"]):
            pairs += [(of, n["Tt_in"]), (of, n["eff"])] + [(of, wrt) for wrt in ratio_inputs]
        for of, wrt in pairs:
            self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _pressure_ratio(self, inputs):
        """Pressure ratio and, in 'OPR' mode, its derivatives with respect to OPR, Pt2 and Pt_in."""
        n = self._names()
        if self.options["ratio_from"] == "PR":
            return inputs[n["PR"]], {}
        opr, pt2, pt_in = inputs["OPR"], inputs["Pt2"], inputs[n["Pt_in"]]
        pr = opr * pt2 / pt_in
        return pr, {"OPR": pt2 / pt_in, "Pt2": opr / pt_in, n["Pt_in"]: -pr / pt_in}

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        n = self._names()
        where = self.pathname
        check_range(n["Tt_in"], inputs[n["Tt_in"]], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range(n["Pt_in"], inputs[n["Pt_in"]], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range(n["eff"], inputs[n["eff"]], **range_kwargs(n["eff"], EFF_POLY_MIN, EFF_POLY_MAX), where=where)
        if self.options["ratio_from"] == "PR":
            check_range(n["PR"], inputs[n["PR"]], 1.0, PR_MAX, "", where=where)
            return
        check_range("OPR", inputs["OPR"], 1.0, PR_MAX, "", lower_inclusive=False, where=where)
        check_range("Pt2", inputs["Pt2"], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        pr, _ = self._pressure_ratio(inputs)
        bad = np.atleast_1d(np.real(pr) <= 1.0)
        if np.any(bad):
            i, node = first_bad_node(bad)
            opr = np.atleast_1d(np.real(inputs["OPR"]))[i]
            upstream = np.atleast_1d(np.real(inputs[n["Pt_in"]] / inputs["Pt2"]))[i]
            raise InputRangeError(
                f"{where}: OPR = {opr:.6g}{node} is not above the fan core-side and booster pressure ratio "
                f"product {n['Pt_in']}/Pt2 = {upstream:.6g} (the {self.options['name']} pressure ratio "
                f"OPR*Pt2/{n['Pt_in']} must be above 1).")

    def _compress(self, inputs):
        """Polytropic compression (values and derivatives) and the pressure ratio with its derivatives."""
        gas = self.options["gas"]
        n = self._names()
        Tt_in = inputs[n["Tt_in"]]
        pr, dpr = self._pressure_ratio(inputs)
        far = np.full(Tt_in.shape, DRY_AIR_FAR)
        try:
            res = polytropic_compression(gas, Tt_in, pr, inputs[n["eff"]], far)
        except InputRangeError as err:
            raise InputRangeError(f"{self.pathname}: {self.options['name']} exit temperature {n['Tt_out']} "
                                  f"is outside the gas model's range ({err})") from err
        return res, pr, dpr

    def compute(self, inputs, outputs):
        """Evaluate the compressor exit state at every node."""
        self._check(inputs)
        n = self._names()
        res, pr, _ = self._compress(inputs)
        outputs[n["Tt_out"]] = res.Tt_out
        outputs[n["work"]] = res.work
        if self.options["ratio_from"] == "OPR":
            outputs[n["Pt_out"]] = inputs["OPR"] * inputs["Pt2"]  # exactly OPR*Pt2
            outputs[n["PR"]] = pr
        else:
            outputs[n["Pt_out"]] = pr * inputs[n["Pt_in"]]

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        n = self._names()
        res, pr, dpr = self._compress(inputs)
        for of, key in ((n["Tt_out"], "Tt_out"), (n["work"], "work")):
            partials[of, n["Tt_in"]] = res.d[key, "Tt_in"]
            partials[of, n["eff"]] = res.d[key, "eff_poly"]
            if self.options["ratio_from"] == "PR":
                partials[of, n["PR"]] = res.d[key, "pressure_ratio"]
            else:
                for wrt, dpr_dwrt in dpr.items():
                    partials[of, wrt] = res.d[key, "pressure_ratio"] * dpr_dwrt
        if self.options["ratio_from"] == "PR":
            partials[n["Pt_out"], n["Pt_in"]] = pr
            partials[n["Pt_out"], n["PR"]] = inputs[n["Pt_in"]]
        else:
            partials[n["Pt_out"], "OPR"] = inputs["Pt2"]
            partials[n["Pt_out"], "Pt2"] = inputs["OPR"]
            for wrt, dpr_dwrt in dpr.items():
                partials[n["PR"], wrt] = dpr_dwrt
