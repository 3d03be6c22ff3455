"""Per-engine dry mass from fan, core and LP-turbine scaling terms, plus nacelle and pylon mass."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import FAN_TIP_DIAMETER_MAX
from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes

#: Fan module mass (blades, disc, case, containment) of a 2.0 m fan, kg (common-practice calibration).
C_FAN = 1050.0
#: Core mass (booster, HPC, burner, HPT) at W25_corrected = 20 kg/s and OPR 40, kg (calibration).
C_CORE = 900.0
#: LP turbine and shafts mass at 10 MW LP shaft power, kg (common-practice calibration).
C_LPT = 500.0
#: Nacelle plus pylon structure mass per m**2 of nacelle wetted area, kg/m**2 (calibration).
C_NAC = 20.0
#: LP turbine and shafts mass of a reference turbine of LPT_STAGES_REF stages and LPT_TIP_DIAMETER_REF exit tip
#: diameter, kg (``lp_turbine_model='stages'``; common-practice calibration at the level of C_LPT: a six-stage
#: LP turbine of a 120 kN class direct-drive engine with a 1 m last stage is about 0.5 t).
C_LPT_STAGES = 500.0
LPT_STAGES_REF = 6.0
LPT_TIP_DIAMETER_REF = 1.0

#: Reference fan tip radius, m.
R_FAN_REF = 1.0
#: Reference HPC-entry corrected flow, kg/s.
W25C_REF = 20.0
#: Reference overall pressure ratio.
OPR_REF = 40.0
#: Reference LP shaft power, W.
P_LP_REF = 10.0e6

# (name, default, lower, upper, units, desc)
#: Inputs that follow the engine size, an unknown of the installed engine's coupled solve: their ranges are
#: correlation validity, judged on the converged state (``check_validity``); the powers need them positive.
_SIZED = ("fan_tip_diameter", "W25_corrected", "LP_shaft_power", "nacelle_wetted_area", "lpt_stage_count",
          "lpt_tip_diameter", "gearbox_mass")

_INPUTS = (
    ("fan_tip_diameter", 2.0, 0.3, FAN_TIP_DIAMETER_MAX, "m", "Fan tip diameter"),
    ("W25_corrected", 20.0, 1.0, 200.0, "kg/s", "Corrected mass flow at HPC entry (station 25)"),
    ("OPR", 40.0, 5.0, 80.0, None, "Overall pressure ratio Pt3/Pt2"),
    ("LP_shaft_power", 15.0e6, 1.0e5, 2.0e8, "W",
     "LP shaft power (fan plus booster) at the sizing point, e.g. top of climb"),
    ("nacelle_wetted_area", 30.0, 0.5, 500.0, "m**2", "Total nacelle wetted area"),
    ("k_fan", 1.0, 0.2, 5.0, None, "Calibration factor on the fan module mass"),
    ("k_core", 1.0, 0.2, 5.0, None, "Calibration factor on the core mass"),
    ("k_lpt", 1.0, 0.2, 5.0, None, "Calibration factor on the LP turbine and shafts mass"),
    ("k_nac", 1.0, 0.2, 5.0, None, "Calibration factor on the nacelle and pylon mass"),
)
#: LP turbine inputs of ``lp_turbine_model='stages'`` (replacing LP_shaft_power).
_STAGE_INPUTS = (
    # wide: the mass law is linear in the count; a direct-drive LP turbine behind a slow low-FPR fan needs 20 or
    # more stages, an absurd design that the optimizer must see as heavy, not as an evaluation failure
    ("lpt_stage_count", 6.0, 0.1, 50.0, None, "LP turbine stages (continuous, LPSpoolComp)"),
    ("lpt_tip_diameter", 1.0, 0.1, 4.0, "m", "LP turbine exit tip diameter (LPSpoolComp)"),
)
#: Gearbox input of ``include_gearbox=True``.
_GEARBOX_INPUTS = (("gearbox_mass", 400.0, 0.0, 5000.0, "kg", "Fan reduction gearbox mass (GearboxComp)"),)


class EngineMassComp(om.ExplicitComponent):
    r"""Physics-flavoured per-engine mass model for a two-spool separate-flow turbofan.

    Each module scales with the quantity that sizes it:

    .. math::
        m_{fan} &= k_{fan} C_{fan} (D_f / 2\,\mathrm{m})^{2.5} \\
        m_{core} &= k_{core} C_{core} \frac{W_{25,c}}{20\ \mathrm{kg/s}}
                    \left(\frac{OPR}{40}\right)^{0.4} \\
        m_{lpt} &= k_{lpt} C_{lpt} \left(\frac{P_{LP}}{10\ \mathrm{MW}}\right)^{0.8} \\
        m_{nac} &= k_{nac} C_{nac} S_{wet}

    or, with ``lp_turbine_model='stages'``, from the LP turbine's stage count :math:`n` and exit tip diameter
    :math:`D_{lpt}` (``LPSpoolComp``; each stage's disc, blades and casing scale with the square of its
    diameter at fixed technology, common practice):

    .. math::
        m_{lpt} = k_{lpt} C_{lpt,st} \frac{n}{6} \left(\frac{D_{lpt}}{1\ \mathrm{m}}\right)^2

    with :math:`C_{lpt,st} = 500` kg (common-practice calibration at the level of :math:`C_{lpt}`: a
    six-stage LP turbine of a 120 kN class direct-drive engine with a 1 m last stage). So a slow LP spool
    (a low-FPR fan driven directly) makes a heavy turbine. With ``include_gearbox`` the fan reduction
    gearbox mass (``GearboxComp``) is part of the dry mass.

    The dry mass is :math:`m_{dry} = m_{fan} + m_{core} + m_{lpt}` (+ gearbox) and the powerplant mass
    :math:`m_{dry} + m_{nac}` (nacelle plus pylon). The exponents are physics-flavoured
    (fan blade and case mass between area and volume scaling; core mass proportional to the flow it
    passes, rising gently with pressure level and casing thickness; turbine mass sub-linear in
    power) and are common practice, not fitted.

    Calibration (common practice, **not data**): :math:`C_{fan} = 1050` kg, :math:`C_{core} = 900`
    kg, :math:`C_{lpt} = 500` kg, :math:`C_{nac} = 20` kg/m**2 put a 2.0 m fan with
    :math:`W_{25,c}` = 20 kg/s, OPR 40 and 15 MW LP power at about 2.64 t dry, inside the generic
    2.3-3.0 t band of 2010s high-BPR engines of 120-130 kN take-off thrust (field reference section
    9, common practice), and the default 30 m**2 nacelle plus pylon at 0.6 t, somewhat below Kundu's
    6.2 kg per kN of take-off thrust (0.74-0.81 t at 120-130 kN; *Aircraft Design*, 2010, a figure
    confirmed only for BPR < 4, where nacelles are long-cowl and heavier). Use the factors
    :math:`k` to recalibrate. Compare with :class:`StatisticalEngineMassComp` for a statistical
    cross-check.

    Valid range: the limits checked in ``compute``; the calibration is meant for fans of about
    1.5-3 m. Quantities are per engine.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("include_lp_turbine", types=bool, default=True,
                             desc="If False, there is no LP_shaft_power input and the LP turbine "
                                  "and shafts term is zero (for use before a cycle is connected)")
        self.options.declare("lp_turbine_model", default="power", values=("power", "stages"),
                             desc="LP turbine mass from its shaft power ('power') or from its stage count and "
                                  "diameter ('stages', inputs lpt_stage_count and lpt_tip_diameter)")
        self.options.declare("include_gearbox", types=bool, default=False,
                             desc="add the input gearbox_mass (a fan reduction gearbox) to the dry mass")

    def _input_table(self):
        opts = self.options
        if not opts["include_lp_turbine"]:
            table = tuple(i for i in _INPUTS if i[0] not in ("LP_shaft_power", "k_lpt"))
        elif opts["lp_turbine_model"] == "stages":
            table = tuple(i for i in _INPUTS if i[0] != "LP_shaft_power") + _STAGE_INPUTS
        else:
            table = _INPUTS
        return table + (_GEARBOX_INPUTS if opts["include_gearbox"] else ())

    def _stages(self):
        return self.options["include_lp_turbine"] and self.options["lp_turbine_model"] == "stages"

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        for name, default, _lo, _hi, units, desc in self._input_table():
            self.add_input(name, val=default * np.ones(nn), units=units, desc=desc)
        self.add_output("fan_module_mass", val=np.ones(nn), units="kg",
                        desc="Fan module mass: blades, disc, case and containment")
        self.add_output("core_mass", val=np.ones(nn), units="kg",
                        desc="Core mass: booster, HPC, burner and HPT")
        self.add_output("lp_turbine_mass", val=np.zeros(nn), units="kg",
                        desc="LP turbine and shafts mass")
        self.add_output("engine_dry_mass", val=np.ones(nn), units="kg",
                        desc="Dry engine mass: fan module + core + LP turbine")
        self.add_output("nacelle_mass", val=np.ones(nn), units="kg",
                        desc="Nacelle and pylon structure mass")
        self.add_output("powerplant_mass", val=np.ones(nn), units="kg",
                        desc="Installed powerplant mass per engine: dry engine + nacelle and pylon")

    def setup_partials(self):
        """Declare the elementwise sparsity of every (output, input) pair."""
        ar = np.arange(self.options["num_nodes"])
        deps = {
            "fan_module_mass": ("fan_tip_diameter", "k_fan"),
            "core_mass": ("W25_corrected", "OPR", "k_core"),
            "nacelle_mass": ("nacelle_wetted_area", "k_nac"),
        }
        if self._stages():
            deps["lp_turbine_mass"] = ("lpt_stage_count", "lpt_tip_diameter", "k_lpt")
        elif self.options["include_lp_turbine"]:
            deps["lp_turbine_mass"] = ("LP_shaft_power", "k_lpt")
        dry = tuple(w for of in ("fan_module_mass", "core_mass", "lp_turbine_mass")
                    for w in deps.get(of, ()))
        if self.options["include_gearbox"]:
            dry = dry + ("gearbox_mass",)
        deps["engine_dry_mass"] = dry
        deps["powerplant_mass"] = dry + deps["nacelle_mass"]
        for of, wrts in deps.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        for name, _default, lo, hi, units, _desc in self._input_table():
            if name in _SIZED:  # follow the coupled engine size: validity judged on the converged state
                check_validity(name, inputs[name], lo, hi, units, where=self.pathname)
                check_range(name, inputs[name], 0.0, np.inf, units, lower_inclusive=False, where=self.pathname)
            else:
                check_range(name, inputs[name], lo, hi, units or "", where=self.pathname)

    def compute(self, inputs, outputs):
        """Compute the module masses and their sums."""
        self._check(inputs)
        m_fan = inputs["k_fan"] * C_FAN * (0.5 * inputs["fan_tip_diameter"] / R_FAN_REF) ** 2.5
        m_core = (inputs["k_core"] * C_CORE * inputs["W25_corrected"] / W25C_REF
                  * (inputs["OPR"] / OPR_REF) ** 0.4)
        if self._stages():
            m_lpt = (inputs["k_lpt"] * C_LPT_STAGES * inputs["lpt_stage_count"] / LPT_STAGES_REF
                     * (inputs["lpt_tip_diameter"] / LPT_TIP_DIAMETER_REF) ** 2)
        elif self.options["include_lp_turbine"]:
            m_lpt = inputs["k_lpt"] * C_LPT * (inputs["LP_shaft_power"] / P_LP_REF) ** 0.8
        else:
            m_lpt = np.zeros_like(m_fan)
        m_nac = inputs["k_nac"] * C_NAC * inputs["nacelle_wetted_area"]
        dry = m_fan + m_core + m_lpt
        if self.options["include_gearbox"]:
            dry = dry + inputs["gearbox_mass"]
        outputs["fan_module_mass"] = m_fan
        outputs["core_mass"] = m_core
        outputs["lp_turbine_mass"] = m_lpt
        outputs["engine_dry_mass"] = dry
        outputs["nacelle_mass"] = m_nac
        outputs["powerplant_mass"] = dry + m_nac

    def compute_partials(self, inputs, partials):
        """Compute the analytic partial derivatives."""
        self._check(inputs)
        d = {}
        r = 0.5 * inputs["fan_tip_diameter"] / R_FAN_REF
        d["fan_module_mass", "k_fan"] = C_FAN * r ** 2.5
        d["fan_module_mass", "fan_tip_diameter"] = inputs["k_fan"] * C_FAN * 2.5 * r ** 1.5 * 0.5 / R_FAN_REF
        w = inputs["W25_corrected"] / W25C_REF
        o = inputs["OPR"] / OPR_REF
        d["core_mass", "k_core"] = C_CORE * w * o ** 0.4
        d["core_mass", "W25_corrected"] = inputs["k_core"] * C_CORE / W25C_REF * o ** 0.4
        d["core_mass", "OPR"] = inputs["k_core"] * C_CORE * w * 0.4 * o ** -0.6 / OPR_REF
        if self._stages():
            n, dl = inputs["lpt_stage_count"] / LPT_STAGES_REF, inputs["lpt_tip_diameter"] / LPT_TIP_DIAMETER_REF
            d["lp_turbine_mass", "k_lpt"] = C_LPT_STAGES * n * dl**2
            d["lp_turbine_mass", "lpt_stage_count"] = inputs["k_lpt"] * C_LPT_STAGES * dl**2 / LPT_STAGES_REF
            d["lp_turbine_mass", "lpt_tip_diameter"] = (inputs["k_lpt"] * C_LPT_STAGES * n * 2.0 * dl
                                                        / LPT_TIP_DIAMETER_REF)
        elif self.options["include_lp_turbine"]:
            p = inputs["LP_shaft_power"] / P_LP_REF
            d["lp_turbine_mass", "k_lpt"] = C_LPT * p ** 0.8
            d["lp_turbine_mass", "LP_shaft_power"] = inputs["k_lpt"] * C_LPT * 0.8 * p ** -0.2 / P_LP_REF
        d["nacelle_mass", "k_nac"] = C_NAC * inputs["nacelle_wetted_area"]
        d["nacelle_mass", "nacelle_wetted_area"] = inputs["k_nac"] * C_NAC * np.ones_like(r)

        for (of, wrt), val in d.items():
            partials[of, wrt] = val
            if of != "nacelle_mass":
                partials["engine_dry_mass", wrt] = val
            partials["powerplant_mass", wrt] = val
        if self.options["include_gearbox"]:
            partials["engine_dry_mass", "gearbox_mass"] = np.ones_like(r)
            partials["powerplant_mass", "gearbox_mass"] = np.ones_like(r)
