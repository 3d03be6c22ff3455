"""LP spool mechanical efficiency, and the loss, torque and mass of an optional fan reduction gearbox."""

import numpy as np
import openmdao.api as om

from bypassopt.components.options import declare_num_nodes
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import check_range

#: Gearbox mass at the reference output torque, kg, and that torque (fan shaft, at the design point, top of
#: climb), N*m. Common-practice estimate, level NOT SOURCED: about 150 N*m of take-off torque per kg for an
#: epicyclic aero-engine reduction gear, take-off torque about 2.7 times the top-of-climb one. Scale with
#: ``k_gearbox``.
C_GEARBOX = 400.0
TORQUE_REF = 25.0e3
#: Exponent of torque in the gearbox mass: gear volume grows with the torque it carries at fixed tooth stress;
#: transmission-mass statistics give 0.75-0.9 (common practice, from memory).
TORQUE_EXPONENT = 0.8


class GearboxComp(om.ExplicitComponent):
    r"""LP spool mechanical efficiency with or without a fan reduction gearbox; gearbox torque, heat and mass.

    Direct drive (``geared=False``): ``LP_mech_eff`` equals ``LP_mech_eff_ref`` (bearings, seals: the
    user's value).

    Geared (``geared=True``): the gearbox sits between the LP turbine and the fan; the booster turns with
    the LP turbine. Per unit inlet air flow the fan absorbs :math:`P_f = (\alpha w_{fb} + w_{fc})/(1+\alpha)`
    and the booster :math:`P_b = w_b/(1+\alpha)` (``SpoolPowerComp``); the turbine delivers
    :math:`(P_f/\eta_{gb} + P_b)/\eta_m`. The cycle's LP turbine divides the spool demand :math:`P_f + P_b`
    by one mechanical efficiency, so the gearbox enters as

    .. math:: \eta_{m,LP} = \eta_m\,\frac{\alpha w_{fb} + w_{fc} + w_b}{(\alpha w_{fb} + w_{fc})/\eta_{gb} + w_b}

    with :math:`\eta_{gb}` the gearbox efficiency (``gearbox_eff``; "98 % to 99 % for the best designed high
    power applications": V. Stavytskyy et al., "Load-independent power losses of gear systems: a review", Teka
    Kom. Mot. i Energ. Roln. OL PAN 10B, 2010, pp. 205-213, read; a lubrication system sized to remove less than
    about 2 % of the gear system's input power is claimed for a fan drive gear in US patent 11,125,167, read;
    0.99-0.995 for a current epicyclic fan gear is common practice). The loss is heat taken away by the oil system
    (``gearbox_heat``, :math:`P_f(1/\eta_{gb} - 1)`, a fraction :math:`1-\eta_{gb}` of the gearbox input). Output
    torque :math:`Q = W_2 P_f/(2\pi N_{fan})` and mass

    .. math:: m_{gb} = k_{gb}\,C_{gb}\,(Q/Q_{ref})^{0.8}

    with :math:`C_{gb}` = 400 kg at :math:`Q_{ref}` = 25 kN m of top-of-climb torque (common-practice
    estimate, level NOT SOURCED: about 150 N m of take-off torque per kg; exponent 0.75-0.9 from
    transmission statistics, from memory). The mass is added to the engine by ``EngineMassComp``.

    Valid range: efficiencies above 0.5 up to 1 (gearbox 0.9-1), works at least 0, positive flow and speed,
    mass factor 0.2-5. Outside it (or NaN) ``compute`` raises ``InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("geared", types=bool, default=False,
                             desc="a reduction gearbox between LP turbine and fan")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("LP_mech_eff_ref", val=0.99 * ones, units=None,
                       desc="LP spool mechanical efficiency without a gearbox (bearings, seals)")
        self.add_output("LP_mech_eff", val=0.99 * ones, units=None,
                        desc="LP spool mechanical efficiency including the gearbox (read by the cycle)")
        if not self.options["geared"]:
            return
        self.add_input("gearbox_eff", val=0.99 * ones, units=None,
                       desc="gearbox efficiency, power to the fan / power from the LP turbine")
        self.add_input("k_gearbox", val=ones, units=None, desc="calibration factor on the gearbox mass")
        self.add_input("BPR", val=10.0 * ones, units=None, desc="bypass ratio")
        self.add_input("fan_bypass_work", val=4.0e4 * ones, units="J/kg", desc="fan work per kg of bypass air")
        self.add_input("fan_core_work", val=4.0e4 * ones, units="J/kg", desc="fan work per kg of core-side air")
        self.add_input("booster_work", val=6.0e4 * ones, units="J/kg", desc="booster work per kg of core air")
        self.add_input("W2", val=200.0 * ones, units="kg/s", desc="engine inlet air mass flow")
        self.add_input("fan_shaft_speed", val=3500.0 * ones, units="rpm", desc="fan rotational speed")
        self.add_output("fan_shaft_power", val=8.0e6 * ones, units="W", ref=1.0e7, desc="power absorbed by the fan")
        self.add_output("fan_shaft_torque", val=2.0e4 * ones, units="N*m", ref=1.0e4,
                        desc="gearbox output (fan) torque")
        self.add_output("gearbox_heat", val=8.0e4 * ones, units="W", ref=1.0e5, desc="gearbox loss (heat to the oil)")
        self.add_output("gearbox_mass", val=400.0 * ones, units="kg", ref=100.0, desc="gearbox mass")

    def setup_partials(self):
        """Declare the elementwise partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        if not self.options["geared"]:
            self.declare_partials("LP_mech_eff", "LP_mech_eff_ref", rows=ar, cols=ar)
            return
        works = ("BPR", "fan_bypass_work", "fan_core_work")
        deps = {
            "LP_mech_eff": ("LP_mech_eff_ref", "gearbox_eff", "booster_work") + works,
            "fan_shaft_power": works + ("W2",),
            "fan_shaft_torque": works + ("W2", "fan_shaft_speed"),
            "gearbox_heat": works + ("W2", "gearbox_eff"),
            "gearbox_mass": works + ("W2", "fan_shaft_speed", "k_gearbox"),
        }
        for of, wrts in deps.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        where = self.pathname
        check_range("LP_mech_eff_ref", inputs["LP_mech_eff_ref"], **range_kwargs("LP_mech_eff_ref"), where=where)
        if not self.options["geared"]:
            return
        check_range("gearbox_eff", inputs["gearbox_eff"], **range_kwargs("gearbox_eff"), where=where)
        check_range("k_gearbox", inputs["k_gearbox"], 0.2, 5.0, "", where=where)
        check_range("BPR", inputs["BPR"], 0.0, np.inf, "", lower_inclusive=False, where=where)
        for name in ("fan_bypass_work", "fan_core_work", "booster_work"):
            check_range(name, inputs[name], 0.0, np.inf, "J/kg", where=where)
        check_range("W2", inputs["W2"], 0.0, np.inf, "kg/s", lower_inclusive=False, where=where)
        check_range("fan_shaft_speed", inputs["fan_shaft_speed"], 0.0, np.inf, "rpm", lower_inclusive=False,
                    where=where)

    def compute(self, inputs, outputs):
        """Mechanical efficiency (and gearbox quantities)."""
        self._check(inputs)
        eta_m = inputs["LP_mech_eff_ref"]
        if not self.options["geared"]:
            outputs["LP_mech_eff"] = eta_m
            return
        bpr, eta = inputs["BPR"], inputs["gearbox_eff"]
        fan = bpr * inputs["fan_bypass_work"] + inputs["fan_core_work"]
        boost = inputs["booster_work"]
        outputs["LP_mech_eff"] = eta_m * (fan + boost) / (fan / eta + boost)
        power = inputs["W2"] * fan / (1.0 + bpr)
        omega = 2.0 * np.pi * inputs["fan_shaft_speed"] / 60.0
        torque = power / omega
        outputs["fan_shaft_power"] = power
        outputs["fan_shaft_torque"] = torque
        outputs["gearbox_heat"] = power * (1.0 / eta - 1.0)
        outputs["gearbox_mass"] = inputs["k_gearbox"] * C_GEARBOX * (torque / TORQUE_REF) ** TORQUE_EXPONENT

    def compute_partials(self, inputs, partials):
        """Analytic partial derivatives."""
        if not self.options["geared"]:
            partials["LP_mech_eff", "LP_mech_eff_ref"] = np.ones_like(inputs["LP_mech_eff_ref"])
            return
        eta_m, eta, bpr = inputs["LP_mech_eff_ref"], inputs["gearbox_eff"], inputs["BPR"]
        wfb, wfc, boost = inputs["fan_bypass_work"], inputs["fan_core_work"], inputs["booster_work"]
        w2, rpm, kgb = inputs["W2"], inputs["fan_shaft_speed"], inputs["k_gearbox"]
        fan = bpr * wfb + wfc
        num, den = fan + boost, fan / eta + boost
        ratio = num / den
        # d ratio / d fan, / d boost
        dr_dfan = 1.0 / den - num / den**2 / eta
        dr_dboost = 1.0 / den - num / den**2
        dfan = {"BPR": wfb, "fan_bypass_work": bpr, "fan_core_work": np.ones_like(bpr)}
        partials["LP_mech_eff", "LP_mech_eff_ref"] = ratio
        partials["LP_mech_eff", "gearbox_eff"] = eta_m * num / den**2 * fan / eta**2
        partials["LP_mech_eff", "booster_work"] = eta_m * dr_dboost
        c = 1.0 / (1.0 + bpr)
        power = w2 * fan * c
        omega = 2.0 * np.pi * rpm / 60.0
        torque = power / omega
        mass = kgb * C_GEARBOX * (torque / TORQUE_REF) ** TORQUE_EXPONENT
        dmass_dtorque = TORQUE_EXPONENT * mass / torque
        for k, v in dfan.items():
            dpower = w2 * c * v
            if k == "BPR":
                dpower = dpower - power * c
            partials["LP_mech_eff", k] = eta_m * dr_dfan * v
            partials["fan_shaft_power", k] = dpower
            partials["fan_shaft_torque", k] = dpower / omega
            partials["gearbox_heat", k] = dpower * (1.0 / eta - 1.0)
            partials["gearbox_mass", k] = dmass_dtorque * dpower / omega
        partials["fan_shaft_power", "W2"] = fan * c
        partials["fan_shaft_torque", "W2"] = fan * c / omega
        partials["fan_shaft_torque", "fan_shaft_speed"] = -torque / rpm
        partials["gearbox_heat", "W2"] = fan * c * (1.0 / eta - 1.0)
        partials["gearbox_heat", "gearbox_eff"] = -power / eta**2
        partials["gearbox_mass", "W2"] = dmass_dtorque * fan * c / omega
        partials["gearbox_mass", "fan_shaft_speed"] = -dmass_dtorque * torque / rpm
        partials["gearbox_mass", "k_gearbox"] = C_GEARBOX * (torque / TORQUE_REF) ** TORQUE_EXPONENT
