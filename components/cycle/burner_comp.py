"""Burner: fuel-air ratio from the energy balance for a requested exit temperature, and pressure loss."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.thermo import DRY_AIR_FAR, CaloricallyPerfectGas
from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_gas, declare_num_nodes

TT4_RANGE = (1000.0, 2400.0)
"""Accepted burner exit temperatures with a thermally perfect gas, K (upper end: dissociation)."""
PRESSURE_LOSS_MAX = INPUT_RANGES["burner_pressure_loss"][1]
"""Largest accepted burner total-pressure loss fraction, -."""
LHV_RANGE = INPUT_RANGES["fuel_LHV"][:2]
"""Accepted fuel lower heating values, J/kg (kerosene 43 MJ/kg; hydrogen about 120 MJ/kg)."""


class BurnerComp(om.ExplicitComponent):
    r"""Burner (3 -> 4): fuel-air ratio for a requested exit temperature Tt4, and total-pressure loss.

    Steady-flow energy balance per kg of burner air, fuel supplied at :math:`T_{REF} = 298.15` K where its
    lower heating value LHV is defined, sensible enthalpies referred to :math:`T_{REF}`, frozen complete
    lean combustion (field-reference 2.7):

    .. math::

        h_{air}(T_{t3}) + f\,\eta_b\,\mathrm{LHV} = (1 + f)\,h(T_{t4}, f)
        = h_{air}(T_{t4}) + f\,h_{fuel}(T_{t4})

    where :math:`h_{fuel}(T)` is the sensible-enthalpy change of the products per kg of fuel burnt
    (``gas.fuel_enthalpy_change``). Because the mixture properties are linear in the mass fractions, the
    balance is linear in :math:`f` and has the closed form (option ``include_fuel_mass=True``)

    .. math::

        f = \frac{h_{air}(T_{t4}) - h_{air}(T_{t3})}{\eta_b\,\mathrm{LHV} - h_{fuel}(T_{t4})}

    With ``include_fuel_mass=False`` (textbook ideal cycle, fuel mass and the enthalpy it carries
    neglected; Mattingly & von Ohain, *Elements of Propulsion*, ideal-cycle chapter, field-reference 4.2):
    :math:`f = (h_{air}(T_{t4}) - h_{air}(T_{t3}))/(\eta_b\,\mathrm{LHV})`. With a calorically perfect gas
    the first form becomes :math:`f = c_p (T_{t4} - T_{t3})/(\eta_b \mathrm{LHV} - c_p (T_{t4} - T_{REF}))`.

    Exit total pressure :math:`p_{t4} = p_{t3}(1 - \Delta p/p)`. Typical values (common practice,
    field-reference 3.3): burner loss 3-5 % (default 4 %), combustion efficiency 0.995-0.9995 (default
    0.999). Default LHV 43.0 MJ/kg (common practice for kerosene, field-reference 2.8).

    Valid range: ``Tt4`` 1000-2400 K with a thermally perfect gas (inside the gas model's range with a
    calorically perfect one) and above ``Tt3``; ``Tt3`` inside the gas model's range; ``burner_pressure_loss`` 0 to
    0.2; ``combustion_eff`` above 0 and up to 1; ``fuel_LHV`` 10-150 MJ/kg; the resulting ``FAR4`` at most the
    gas model's stoichiometric fuel-air ratio. Outside it, or NaN, ``compute`` raises
    ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="True: the fuel's mass and the enthalpy its products carry enter the "
                                  "energy balance; False: textbook ideal-cycle form f = dh_air/(eta*LHV).")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("Tt3", val=800.0 * ones, units="K", desc="Burner entry (HPC exit) total temperature.")
        self.add_input("Pt3", val=3.0e6 * ones, units="Pa", desc="Burner entry (HPC exit) total pressure.")
        self.add_input("Tt4", val=1700.0 * ones, units="K",
                       desc="Requested burner exit total temperature (1000-2400 K, above Tt3).")
        self.add_input("burner_pressure_loss", val=0.04 * ones, units=None,
                       desc="Burner total-pressure loss (Pt3 - Pt4)/Pt3 (0 to 0.2; 0.03-0.05 common "
                            "practice).")
        self.add_input("combustion_eff", val=0.999 * ones, units=None,
                       desc="Combustion efficiency, share of the LHV released (above 0, up to 1).")
        self.add_input("fuel_LHV", val=43.0e6 * ones, units="J/kg",
                       desc="Fuel lower heating value at 298.15 K (kerosene about 43 MJ/kg, common "
                            "practice).")

        self.add_input("core_flow_frac", val=0.09 * ones, units=None,
                       desc="Core flow W25 per unit inlet air flow W2, 1/(1+BPR).")
        self.add_input("burner_air_frac", val=0.85 * ones, units=None,
                       desc="Burner air per unit core flow (core flow less cooling air and bleed).")

        self.add_output("W4_frac", val=0.08 * ones, units=None,
                        desc="Burner exit gas flow per unit inlet air flow W2: air (plus fuel when "
                             "include_fuel_mass).")
        self.add_output("FAR4", val=0.025 * ones, units=None,
                        desc="Fuel-air ratio: fuel per kg of burner air.")
        self.add_output("Pt4", val=2.9e6 * ones, units="Pa",
                        desc="Burner exit total pressure, Pt3*(1 - burner_pressure_loss).")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        for wrt in ("Tt3", "Tt4", "combustion_eff", "fuel_LHV"):
            self.declare_partials("FAR4", wrt, rows=ar, cols=ar)
        self.declare_partials("Pt4", "Pt3", rows=ar, cols=ar)
        self.declare_partials("Pt4", "burner_pressure_loss", rows=ar, cols=ar)
        self.declare_partials("W4_frac", "core_flow_frac", rows=ar, cols=ar)
        self.declare_partials("W4_frac", "burner_air_frac", rows=ar, cols=ar)
        if self.options["include_fuel_mass"]:
            for wrt in ("Tt3", "Tt4", "combustion_eff", "fuel_LHV"):
                self.declare_partials("W4_frac", wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range."""
        gas = self.options["gas"]
        where = self.pathname
        lo, hi = (gas.T_MIN, gas.T_MAX) if isinstance(gas, CaloricallyPerfectGas) else TT4_RANGE
        check_range("Tt3", inputs["Tt3"], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range("Tt4", inputs["Tt4"], max(lo, gas.T_MIN), min(hi, gas.T_MAX), "K", where=where)
        check_range("Pt3", inputs["Pt3"], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range("burner_pressure_loss", inputs["burner_pressure_loss"], **range_kwargs("burner_pressure_loss"),
                    where=where)
        check_range("combustion_eff", inputs["combustion_eff"], 0.0, 1.0, "", lower_inclusive=False,
                    where=where)
        check_range("fuel_LHV", inputs["fuel_LHV"], **range_kwargs("fuel_LHV"), where=where)
        T3, T4 = np.real(inputs["Tt3"]), np.real(inputs["Tt4"])
        bad = T4 <= T3
        if np.any(bad):
            i, node = first_bad_node(bad)
            raise InputRangeError(
                f"{where}: Tt4 = {np.atleast_1d(T4)[i]:.6g} K{node} is not above the compressor exit "
                f"temperature Tt3 = {np.atleast_1d(T3)[i]:.6g} K.")

    def _far(self, inputs):
        """Fuel-air ratio and its derivatives with respect to Tt3, Tt4, combustion_eff and fuel_LHV."""
        gas = self.options["gas"]
        T3, T4 = inputs["Tt3"], inputs["Tt4"]
        eta, lhv = inputs["combustion_eff"], inputs["fuel_LHV"]
        p3 = gas.properties(T3, DRY_AIR_FAR)
        p4 = gas.properties(T4, DRY_AIR_FAR)
        num = p4.h - p3.h
        if self.options["include_fuel_mass"]:
            h_fuel, dh_fuel_dT = gas.fuel_enthalpy_change(T4)
        else:
            h_fuel, dh_fuel_dT = 0.0 * T4, 0.0 * T4
        den = eta * lhv - h_fuel
        far = num / den
        d = {"Tt3": -p3.cp / den,
             "Tt4": (p4.cp + far * dh_fuel_dT) / den,
             "combustion_eff": -far * lhv / den,
             "fuel_LHV": -far * eta / den}
        return far, den, h_fuel, d

    def compute(self, inputs, outputs):
        """Evaluate the fuel-air ratio and exit pressure at every node."""
        self._check(inputs)
        gas = self.options["gas"]
        far, den, h_fuel, _ = self._far(inputs)
        bad = np.real(den) <= 0.0
        if np.any(bad):
            i, node = first_bad_node(bad)
            heat = np.atleast_1d(np.real(inputs["combustion_eff"] * inputs["fuel_LHV"]))[i]
            h_fuel_i = np.atleast_1d(np.real(h_fuel))[i]
            raise InputRangeError(
                f"{self.pathname}: combustion_eff*fuel_LHV = {heat:.6g} J/kg{node} is not above the sensible "
                f"enthalpy of the products per kg of fuel at Tt4, {h_fuel_i:.6g} J/kg.")
        bad = np.real(far) > gas.far_stoich
        if np.any(bad):
            i, node = first_bad_node(bad)
            T3, T4 = (np.atleast_1d(np.real(inputs[k]))[i] for k in ("Tt3", "Tt4"))
            raise InputRangeError(
                f"{self.pathname}: fuel-air ratio FAR4 = {np.atleast_1d(np.real(far))[i]:.6g}{node} is above "
                f"stoichiometric ({gas.far_stoich:.6g}) for Tt4 = {T4:.6g} K and "
                f"Tt3 = {T3:.6g} K.")
        outputs["FAR4"] = far
        outputs["Pt4"] = inputs["Pt3"] * (1.0 - inputs["burner_pressure_loss"])
        air = inputs["core_flow_frac"] * inputs["burner_air_frac"]
        outputs["W4_frac"] = air * (1.0 + far) if self.options["include_fuel_mass"] else air

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        far, _, _, d = self._far(inputs)
        for wrt, val in d.items():
            partials["FAR4", wrt] = val
        c, b = inputs["core_flow_frac"], inputs["burner_air_frac"]
        fuel = self.options["include_fuel_mass"]
        partials["W4_frac", "core_flow_frac"] = b * (1.0 + far) if fuel else b
        partials["W4_frac", "burner_air_frac"] = c * (1.0 + far) if fuel else c
        if fuel:
            for wrt, val in d.items():
                partials["W4_frac", wrt] = c * b * val
        partials["Pt4", "Pt3"] = 1.0 - inputs["burner_pressure_loss"]
        partials["Pt4", "burner_pressure_loss"] = -inputs["Pt3"]
