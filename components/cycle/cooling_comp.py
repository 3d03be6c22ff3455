"""High-pressure-turbine cooling air and customer bleed extracted at the HPC exit (station 3)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_gas, declare_num_nodes

SMOOTHING = 1e-4
r"""Square of the width of the smooth non-negative part, :math:`x_+ = (x + \sqrt{x^2 + 10^{-4}})/2`, -."""
BURNER_AIR_FRAC_MIN = 0.5
"""Smallest share of the core flow that must remain for the burner, -."""
CUSTOMER_BLEED_MAX = INPUT_RANGES["customer_bleed_frac"][1]
"""Largest accepted customer bleed per unit core flow, -."""
GIVEN_FRAC_MAX = 0.3
"""Largest accepted given cooling fraction per row, -."""
METAL_TEMPERATURE_RANGE = INPUT_RANGES["vane_metal_temperature"][:2]
"""Accepted allowable metal temperatures, K (1250-1350 K is common practice, field-reference 6.2)."""
COOLING_CONSTANT_MAX = INPUT_RANGES["vane_cooling_constant"][1]
"""Largest accepted cooling constant K per row, -."""
ROTOR_TEMPERATURE_RATIO_RANGE = INPUT_RANGES["rotor_relative_temperature_ratio"][:2]
"""Accepted ratio of rotor-relative to absolute total temperature, -."""


class CoolingBleedComp(om.ExplicitComponent):
    r"""HPT vane and rotor cooling air and customer bleed taken at the HPC exit, per unit core flow W25.

    The extractions :math:`\psi_v` (``cooling_frac_vane``), :math:`\psi_r` (``cooling_frac_rotor``) and
    :math:`b` (``customer_bleed_frac``) are fractions of the core flow W25; what remains goes to the burner:

    .. math::

        \text{burner\_air\_frac} = 1 - \psi_v - \psi_r - b

    Option ``cooling_model='given'``: :math:`\psi_v` and :math:`\psi_r` are the inputs
    ``hpt_vane_cooling_frac`` and ``hpt_rotor_cooling_frac`` (first-stage vane 6-10 %, rotor 4-7 % of core
    flow, common practice, field-reference 6.2); ``Tt3`` and ``Tt4`` are then not used.

    Option ``cooling_model='correlation'``: per cooled row, the convective-cooling correlation

    .. math::

        \psi = K \frac{\varepsilon}{1 - \varepsilon} = K \frac{T_g - T_m}{T_m - T_c}, \qquad
        \varepsilon = \frac{T_g - T_m}{T_g - T_c}

    with the cooling effectiveness :math:`\varepsilon`, gas temperature :math:`T_g`, allowable metal
    temperature :math:`T_m` and coolant temperature :math:`T_c = T_{t3}`. Source: Horlock, *Advanced Gas
    Turbine Cycles*, Pergamon 2003, sec. 5.2, eq. 5.8 (form attributed there to El-Masri; confirmed in
    field-reference 6.1). The two forms are algebraically identical; the component evaluates the second
    one, :math:`x = (T_g - T_m)/(T_m - T_c)`, which stays finite for every :math:`T_g` once
    :math:`T_m > T_c`. So that no cooling is asked for when the gas is cooler than the allowable metal
    temperature, while value and slope stay continuous, the positive part of :math:`x` is smoothed:
    :math:`\psi = K\,x_+`, :math:`x_+ = (x + \sqrt{x^2 + 10^{-4}})/2` (:math:`x_+ \to 0` for
    :math:`x \ll 0`; relative change below 3e-5 for :math:`x \ge 1`, i.e. :math:`\varepsilon \ge 0.5`).
    Vane: :math:`T_g = T_{t4}`; rotor:
    :math:`T_g = r\,T_{t4}` with the rotor-relative temperature ratio :math:`r`
    (``rotor_relative_temperature_ratio``, default 0.92, common practice). The correlation gives coolant
    per unit row gas flow; it is applied per unit core flow W25 here, the difference being absorbed by the
    calibration constants :math:`K_v`, :math:`K_r` (default 0.08 each, common practice: calibrated so that
    total HPT cooling is 15-20 % of core flow at T4 = 1750-1850 K: 15.2 % and 18.8 % with Tt3 = 850 K and the
    default metal temperatures; the value of K is not published, field-reference 6.1). Default allowable
    metal temperatures 1300 K (vane) and 1250 K (rotor), common practice 1250-1350 K (field-reference 6.2);
    defer to engine data where known.

    Valid range: ``customer_bleed_frac`` 0 to 0.1, given fractions 0 to 0.3, metal temperatures 900-1700 K and
    above ``Tt3``, cooling constants 0 to 0.5, ``rotor_relative_temperature_ratio`` 0.7 to 1, ``Tt3`` and
    ``Tt4`` inside the gas model's range, and ``burner_air_frac`` at least 0.5. Outside it, or NaN,
    ``compute`` raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("cooling_model", default="given", values=("given", "correlation"),
                             desc="'given': cooling fractions are inputs; 'correlation': from the "
                                  "Horlock/El-Masri convective-cooling correlation.")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("Tt3", val=800.0 * ones, units="K",
                       desc="HPC exit total temperature = coolant temperature (used by 'correlation').")
        self.add_input("Tt4", val=1700.0 * ones, units="K",
                       desc="Burner exit total temperature = vane gas temperature (used by 'correlation').")
        self.add_input("customer_bleed_frac", val=0.0 * ones, units=None,
                       desc="Customer (airframe) bleed per unit core flow W25 (0 to 0.1).")
        if self.options["cooling_model"] == "given":
            self.add_input("hpt_vane_cooling_frac", val=0.07 * ones, units=None,
                           desc="HPT vane cooling air per unit core flow W25 (0 to 0.3).")
            self.add_input("hpt_rotor_cooling_frac", val=0.05 * ones, units=None,
                           desc="HPT rotor cooling air per unit core flow W25 (0 to 0.3).")
        else:
            self.add_input("vane_metal_temperature", val=1300.0 * ones, units="K",
                           desc="Allowable bulk metal temperature of the HPT vanes "
                                "(common practice 1250-1350 K).")
            self.add_input("rotor_metal_temperature", val=1250.0 * ones, units="K",
                           desc="Allowable bulk metal temperature of the HPT rotor blades "
                                "(common practice 1250-1350 K).")
            self.add_input("vane_cooling_constant", val=0.08 * ones, units=None,
                           desc="Calibration constant K of the vane-row cooling correlation (0 to 0.5).")
            self.add_input("rotor_cooling_constant", val=0.08 * ones, units=None,
                           desc="Calibration constant K of the rotor-row cooling correlation (0 to 0.5).")
            self.add_input("rotor_relative_temperature_ratio", val=0.92 * ones, units=None,
                           desc="Rotor-relative gas total temperature divided by Tt4 (0.7 to 1).")

        self.add_output("cooling_frac_vane", val=0.07 * ones, units=None,
                        desc="HPT vane cooling air per unit core flow W25 (mixes in before the rotor, "
                             "4 -> 41).")
        self.add_output("cooling_frac_rotor", val=0.05 * ones, units=None,
                        desc="HPT rotor cooling air per unit core flow W25 (mixes in after the rotor, "
                             "44 -> 45).")
        self.add_output("burner_air_frac", val=0.88 * ones, units=None,
                        desc="Burner air per unit core flow W25, 1 - cooling_frac_vane - cooling_frac_rotor "
                             "- customer_bleed_frac.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        self.declare_partials("burner_air_frac", "customer_bleed_frac", rows=ar, cols=ar, val=-1.0)
        if self.options["cooling_model"] == "given":
            for out, inp in (("cooling_frac_vane", "hpt_vane_cooling_frac"),
                             ("cooling_frac_rotor", "hpt_rotor_cooling_frac")):
                self.declare_partials(out, inp, rows=ar, cols=ar, val=1.0)
                self.declare_partials("burner_air_frac", inp, rows=ar, cols=ar, val=-1.0)
            return
        vane = ("Tt3", "Tt4", "vane_metal_temperature", "vane_cooling_constant")
        rotor = ("Tt3", "Tt4", "rotor_metal_temperature", "rotor_cooling_constant",
                 "rotor_relative_temperature_ratio")
        for wrt in vane:
            self.declare_partials("cooling_frac_vane", wrt, rows=ar, cols=ar)
        for wrt in rotor:
            self.declare_partials("cooling_frac_rotor", wrt, rows=ar, cols=ar)
        for wrt in sorted(set(vane + rotor)):
            self.declare_partials("burner_air_frac", wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        where = self.pathname
        check_range("customer_bleed_frac", inputs["customer_bleed_frac"], **range_kwargs("customer_bleed_frac"),
                    where=where)
        if self.options["cooling_model"] == "given":
            for name in ("hpt_vane_cooling_frac", "hpt_rotor_cooling_frac"):
                check_range(name, inputs[name], 0.0, GIVEN_FRAC_MAX, "", where=where)
            return
        check_range("Tt3", inputs["Tt3"], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range("Tt4", inputs["Tt4"], gas.T_MIN, gas.T_MAX, "K", where=where)
        for name in ("vane_metal_temperature", "rotor_metal_temperature", "vane_cooling_constant",
                     "rotor_cooling_constant", "rotor_relative_temperature_ratio"):
            check_range(name, inputs[name], **range_kwargs(name), where=where)
        Tc = np.atleast_1d(np.real(inputs["Tt3"]))
        for name in ("vane_metal_temperature", "rotor_metal_temperature"):
            Tm = np.atleast_1d(np.real(inputs[name]))
            bad = Tc >= Tm
            if np.any(bad):
                i, node = first_bad_node(bad)
                raise InputRangeError(
                    f"{where}: coolant temperature Tt3 = {Tc[i]:.6g} K{node} is not below the allowable "
                    f"metal temperature {name} = {Tm[i]:.6g} K: the cooling correlation needs Tt3 < {name}.")

    @staticmethod
    def _row(Tg, Tm, Tc, K):
        """Coolant fraction K*x_+ of one row and its derivatives with respect to Tg, Tm, Tc and K."""
        span = Tm - Tc
        x = (Tg - Tm) / span
        root = np.sqrt(x**2 + SMOOTHING)
        x_plus = 0.5 * (x + root)
        slope = 0.5 * (1.0 + x / root)  # dx_+/dx
        psi = K * x_plus
        d = {"Tg": K * slope / span,
             "Tm": -K * slope * (Tg - Tc) / span**2,
             "Tc": K * slope * x / span,
             "K": x_plus}
        return psi, d

    def _cooling(self, inputs):
        """Vane and rotor coolant fractions of the correlation, with derivatives."""
        Tt3, Tt4 = inputs["Tt3"], inputs["Tt4"]
        ratio = inputs["rotor_relative_temperature_ratio"]
        psi_v, dv = self._row(Tt4, inputs["vane_metal_temperature"], Tt3, inputs["vane_cooling_constant"])
        psi_r, dr = self._row(ratio * Tt4, inputs["rotor_metal_temperature"], Tt3,
                              inputs["rotor_cooling_constant"])
        return psi_v, dv, psi_r, dr

    def compute(self, inputs, outputs):
        """Evaluate the extractions at every node."""
        self._check(inputs)
        if self.options["cooling_model"] == "given":
            psi_v = inputs["hpt_vane_cooling_frac"]
            psi_r = inputs["hpt_rotor_cooling_frac"]
        else:
            psi_v, _, psi_r, _ = self._cooling(inputs)
        bleed = inputs["customer_bleed_frac"]
        burner = 1.0 - psi_v - psi_r - bleed
        low = np.atleast_1d(np.real(burner) < BURNER_AIR_FRAC_MIN)
        if np.any(low):
            i, node = first_bad_node(low)
            vals = (np.atleast_1d(np.real(v))[i] for v in (burner, psi_v, psi_r, bleed))
            b, v, r, c = vals
            raise InputRangeError(
                f"{self.pathname}: extractions leave burner_air_frac = {b:.6g}{node} of the core flow for "
                f"the burner (at least {BURNER_AIR_FRAC_MIN} needed): cooling_frac_vane = {v:.6g}, "
                f"cooling_frac_rotor = {r:.6g}, customer_bleed_frac = {c:.6g}.")
        outputs["cooling_frac_vane"] = psi_v
        outputs["cooling_frac_rotor"] = psi_r
        outputs["burner_air_frac"] = burner

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives (constant in the 'given' model, set in setup)."""
        if self.options["cooling_model"] == "given":
            return
        _, dv, _, dr = self._cooling(inputs)
        ratio, Tt4 = inputs["rotor_relative_temperature_ratio"], inputs["Tt4"]
        vane = {"Tt3": dv["Tc"], "Tt4": dv["Tg"], "vane_metal_temperature": dv["Tm"],
                "vane_cooling_constant": dv["K"]}
        rotor = {"Tt3": dr["Tc"], "Tt4": dr["Tg"] * ratio, "rotor_metal_temperature": dr["Tm"],
                 "rotor_cooling_constant": dr["K"], "rotor_relative_temperature_ratio": dr["Tg"] * Tt4}
        for wrt, val in vane.items():
            partials["cooling_frac_vane", wrt] = val
        for wrt, val in rotor.items():
            partials["cooling_frac_rotor", wrt] = val
        for wrt in set(vane) | set(rotor):
            partials["burner_air_frac", wrt] = -(vane.get(wrt, 0.0) + rotor.get(wrt, 0.0))
