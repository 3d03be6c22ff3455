"""LP spool: shaft speed from the fan tip speed, LP turbine size, stage count and efficiency from its blade speed."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.flow import static_from_total
from bypassopt.components.options import declare_gas, declare_num_nodes
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import check_range, check_validity

#: Soderberg's nominal blade-row loss coefficient and its deflection term: zeta = 0.04 (1 + 1.5 (epsilon/100 deg)^2).
#: What was read: S. L. Dixon, *Fluid Mechanics, Thermodynamics of Turbomachinery*, 4th ed., 1998, section
#: "Soderberg's correlation", pp. 97-98 and Fig. 4.3 (adapted from Horlock 1960): for turbine blade rows at
#: Zweifel's load coefficient 0.8, Reynolds number 1e5 and aspect ratio (height / axial chord) 3, the nominal
#: loss coefficient is a function of the fluid deflection alone. The two constants are from memory (the excerpt
#: read stops before the formula; the same constants appear in public course code).
SODERBERG_ZETA0 = 0.04
SODERBERG_DEFLECTION_COEFF = 1.5
#: Stage design at which ``lpt_eff_poly_ref`` applies: loading dh/U^2 and flow coefficient Vx/U of a typical
#: direct-drive LP turbine stage (common practice: loading 1.5-3, flow coefficient 0.6-1.2).
LOADING_REF = 2.5
FLOW_COEFF_REF = 1.0
#: Validity ranges (judged on the converged state of a coupled solve): stage loading and flow coefficient
#: inside the region of Soderberg's and Smith's turbine data (common practice).
LOADING_VALID = (0.5, 4.0)
FLOW_COEFF_VALID = (0.2, 3.0)


def soderberg_stage_efficiency(loading, flow_coeff):
    r"""Total-to-total efficiency of a 50 %-reaction repeating turbine stage by Soderberg's correlation.

    Velocity triangles of a normal repeating stage of reaction 0.5 (Dixon and Hall): with loading
    :math:`\psi = \Delta h_0/U^2` and flow coefficient :math:`\phi = c_x/U`,
    :math:`\tan\alpha_2 = (1+\psi)/(2\phi)` (stator exit), :math:`\tan\alpha_3 = (1-\psi)/(2\phi)` (stage
    exit = stator inlet); the rotor has the same deflection :math:`\varepsilon = \alpha_2 - \alpha_3`
    (degrees) and exit speed :math:`w_3 = c_2`, :math:`c_2^2/U^2 = \phi^2 + ((1+\psi)/2)^2`. Soderberg's
    loss coefficient :math:`\zeta = 0.04\,(1 + 1.5(\varepsilon/100)^2)` per row gives

    .. math:: \eta_{tt} = \left[1 + \frac{\zeta_R w_3^2 + \zeta_N c_2^2}{2\Delta h_0}\right]^{-1}
              = \left[1 + \frac{\zeta\,(\phi^2 + (1+\psi)^2/4)}{\psi}\right]^{-1}

    (Soderberg's correlation as given by Dixon, *Fluid Mechanics, Thermodynamics of Turbomachinery*, 4th ed.,
    pp. 97-98: its conditions read there, the constants 0.04 and 1.5 from memory; the stage relation is the
    textbook velocity-triangle algebra). Returns (eta, d eta/d psi, d eta/d phi).
    """
    half = 0.5 * (1.0 + loading)
    t2, t3 = half / flow_coeff, 0.5 * (1.0 - loading) / flow_coeff
    deg = 180.0 / np.pi
    eps = (np.arctan(t2) - np.arctan(t3)) * deg
    x = eps / 100.0
    zeta = SODERBERG_ZETA0 * (1.0 + SODERBERG_DEFLECTION_COEFF * x**2)
    ke = flow_coeff**2 + half**2
    eta = 1.0 / (1.0 + zeta * ke / loading)
    # derivatives
    d_eps_dpsi = deg * (0.5 / flow_coeff / (1.0 + t2**2) + 0.5 / flow_coeff / (1.0 + t3**2))
    d_eps_dphi = deg * (-t2 / flow_coeff / (1.0 + t2**2) + t3 / flow_coeff / (1.0 + t3**2))
    dzeta = SODERBERG_ZETA0 * SODERBERG_DEFLECTION_COEFF * 2.0 * x / 100.0
    r = zeta * ke / loading
    dr_dpsi = dzeta * d_eps_dpsi * ke / loading + zeta * half / loading - r / loading
    dr_dphi = dzeta * d_eps_dphi * ke / loading + zeta * 2.0 * flow_coeff / loading
    return eta, -eta**2 * dr_dpsi, -eta**2 * dr_dphi


class LPSpoolComp(om.ExplicitComponent):
    r"""LP shaft speed, LP turbine exit annulus, blade speed, stage count and polytropic efficiency.

    The fan's tip speed is set by its pressure ratio at the design tip loading (``FanSizingComp``), so the
    fan shaft turns at :math:`N_{fan} = U_{tip}/(\pi D_{fan})`; the LP turbine turns at
    :math:`N_{LP} = G\,N_{fan}` (gear ratio :math:`G` with ``geared=True``, 1 for a direct drive).
    The LP turbine exit annulus (station 5) passes :math:`W_5` at an axial Mach number :math:`M_5` and
    hub-to-tip ratio :math:`\nu_5` (mass-flow function, as for the fan face; field-reference 7.1):
    :math:`A_5 = W_5/(\rho V)_5`, :math:`D_{tip} = \sqrt{4A_5/(\pi(1-\nu_5^2))}`, mean diameter
    :math:`D_m = D_{tip}(1+\nu_5)/2`, mean blade speed :math:`U = \pi D_m N_{LP}`, flow coefficient
    :math:`\phi = V_5/U`. The turbine's work :math:`w` (``lpt_work``) at a design stage loading
    :math:`\psi = \Delta h_0/U^2` (``lpt_stage_loading``; common practice 1.5-3 for LP turbines) needs

    .. math:: n = \frac{w}{\psi\,U^2}

    stages (continuous, for gradients; Dixon and Hall, stage loading). A slow fan (low FPR, high bypass
    ratio) gives a slow direct-drive LP turbine that needs many stages (mass, ``EngineMassComp``); a
    reduction gear lets it run faster. Its polytropic efficiency follows the stage design through
    Soderberg's correlation (``soderberg_stage_efficiency``, a 50 %-reaction repeating stage), taken as a
    difference from the reference stage design :math:`(\psi_{ref}, \phi_{ref}) = (2.5, 1.0)`:

    .. math:: e_{LPT} = e_{ref} + \eta_{tt}(\psi, \phi) - \eta_{tt}(\psi_{ref}, \phi_{ref})

    with :math:`e_{ref}` (``lpt_eff_poly_ref``) the technology level (the stage efficiency stands for
    the polytropic one: for stage pressure ratios of 1.3-1.6 they differ by a few tenths of a point).
    Soderberg's data are of 1949; the trend is used, not the level. ``stage_effect=False`` passes
    the reference efficiency through (the stage count and speeds are still computed). The stress measure
    :math:`A N^2` of the last stage (``lpt_AN2``, :math:`A_5 N_{LP}^2` in m^2 rpm^2; limits of about 4-5e10
    in^2 rpm^2 = 2.6-3.2e7 m^2 rpm^2, Mattingly, Heiser and Pratt, *Aircraft Engine Design*, from memory)
    is an output for an optional constraint (it bounds a geared LP turbine's speed).

    Valid range: positive fan tip speed, fan diameter, flows, work; exit Mach 0.1-0.8; exit hub-to-tip ratio
    [0, 0.9); stage loading 0.5-4 (input) and, with the flow coefficient 0.2-3, on the converged state of a
    coupled solve; gear ratio 1-6. Outside it (or NaN) ``compute`` raises ``InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("geared", types=bool, default=False,
                             desc="a reduction gear between LP turbine and fan (input gear_ratio)")
        self.options.declare("stage_effect", types=bool, default=True,
                             desc="LP turbine efficiency from its stage design (False: equal to lpt_eff_poly_ref)")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        add_in, add_out = self.add_input, self.add_output
        add_in("fan_tip_speed", val=400.0 * ones, units="m/s", desc="fan tip blade speed")
        add_in("fan_tip_diameter", val=2.0 * ones, units="m", desc="fan tip diameter")
        add_in("W2", val=200.0 * ones, units="kg/s", desc="engine inlet air mass flow")
        add_in("W5_frac", val=0.085 * ones, units=None, desc="LP turbine exit gas flow per unit W2")
        add_in("Tt5", val=750.0 * ones, units="K", desc="LP turbine exit total temperature")
        add_in("Pt5", val=4.0e4 * ones, units="Pa", desc="LP turbine exit total pressure")
        add_in("FAR5", val=0.023 * ones, units=None, desc="LP turbine exit fuel-air ratio")
        add_in("lpt_work", val=5.0e5 * ones, units="J/kg", desc="LP turbine specific work on its gas")
        add_in("lpt_exit_mach", val=0.40 * ones, units=None,
               desc="axial Mach number at the LP turbine exit (common practice 0.3-0.5)")
        add_in("lpt_exit_hub_tip_ratio", val=0.65 * ones, units=None,
               desc="hub-to-tip ratio of the LP turbine exit annulus (common practice 0.55-0.75)")
        add_in("lpt_stage_loading", val=LOADING_REF * ones, units=None,
               desc="LP turbine stage loading dh/U^2 at the exit mean diameter (design choice, 1.5-3)")
        add_in("lpt_eff_poly_ref", val=0.91 * ones, units=None,
               desc="LP turbine polytropic efficiency at the reference stage design (technology level)")
        if self.options["geared"]:
            add_in("gear_ratio", val=3.0 * ones, units=None, desc="LP turbine speed / fan speed (reduction gear)")
        add_out("fan_shaft_speed", val=3500.0 * ones, units="rpm", ref=1.0e3, desc="fan rotational speed")
        add_out("LP_shaft_speed", val=3500.0 * ones, units="rpm", ref=1.0e3, desc="LP turbine rotational speed")
        add_out("lpt_exit_area", val=0.45 * ones, units="m**2", desc="LP turbine exit annulus area")
        add_out("lpt_tip_diameter", val=1.0 * ones, units="m", desc="LP turbine exit tip diameter")
        add_out("lpt_mean_diameter", val=0.85 * ones, units="m", desc="LP turbine exit mean diameter")
        add_out("lpt_blade_speed", val=160.0 * ones, units="m/s", ref=100.0, desc="LP turbine mean blade speed")
        add_out("lpt_flow_coefficient", val=1.3 * ones, units=None, desc="LP turbine flow coefficient Vx/U")
        add_out("lpt_stage_count", val=8.0 * ones, units=None, ref=10.0, desc="LP turbine stages (continuous)")
        add_out("lpt_AN2", val=6.0e6 * ones, units="m**2*rpm**2", ref=1.0e7,
                desc="LP turbine exit area x speed squared")
        add_out("lpt_eff_poly", val=0.91 * ones, units=None,
                desc="LP turbine polytropic efficiency of this stage design (read by the cycle)")

    def _speed_inputs(self):
        return ("fan_tip_speed", "fan_tip_diameter") + (("gear_ratio",) if self.options["geared"] else ())

    def setup_partials(self):
        """Declare the elementwise partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        speed = self._speed_inputs()
        area = ("W2", "W5_frac", "Tt5", "Pt5", "FAR5", "lpt_exit_mach")
        geometry = area + ("lpt_exit_hub_tip_ratio",)
        deps = {
            "fan_shaft_speed": ("fan_tip_speed", "fan_tip_diameter"),
            "LP_shaft_speed": speed,
            "lpt_exit_area": area,
            "lpt_tip_diameter": geometry,
            "lpt_mean_diameter": geometry,
            "lpt_blade_speed": speed + geometry,
            "lpt_flow_coefficient": speed + geometry,
            "lpt_stage_count": speed + geometry + ("lpt_work", "lpt_stage_loading"),
            "lpt_AN2": speed + area,
            "lpt_eff_poly": ("lpt_eff_poly_ref",),
        }
        if self.options["stage_effect"]:
            deps["lpt_eff_poly"] = speed + geometry + ("lpt_stage_loading", "lpt_eff_poly_ref")
        for of, wrts in deps.items():
            for wrt in wrts:
                self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        where = self.pathname
        for name, units in (("fan_tip_speed", "m/s"), ("fan_tip_diameter", "m"), ("W2", "kg/s"),
                            ("W5_frac", ""), ("lpt_work", "J/kg")):
            check_range(name, inputs[name], 0.0, np.inf, units, lower_inclusive=False, where=where)
        for name in ("lpt_exit_mach", "lpt_exit_hub_tip_ratio", "lpt_stage_loading", "lpt_eff_poly_ref"):
            check_range(name, inputs[name], **range_kwargs(name), where=where)
        if self.options["geared"]:
            check_range("gear_ratio", inputs["gear_ratio"], **range_kwargs("gear_ratio"), where=where)

    def _evaluate(self, inputs):
        """Every output and its derivatives {(output, input): array}."""
        gas = self.options["gas"]
        d = {}
        u_tip, d_fan = inputs["fan_tip_speed"], inputs["fan_tip_diameter"]
        n_fan = u_tip / (np.pi * d_fan)  # rev/s
        gear = inputs["gear_ratio"] if self.options["geared"] else 1.0 + 0.0 * n_fan
        n_lp = gear * n_fan
        dn_fan = {"fan_tip_speed": n_fan / u_tip, "fan_tip_diameter": -n_fan / d_fan}
        dn_lp = {k: gear * v for k, v in dn_fan.items()}
        if self.options["geared"]:
            dn_lp["gear_ratio"] = n_fan

        st = static_from_total(gas, inputs["Tt5"], inputs["Pt5"], inputs["lpt_exit_mach"], inputs["FAR5"])
        w5 = inputs["W2"] * inputs["W5_frac"]
        area = w5 / st.W_per_A
        src = {"Tt5": "Tt", "Pt5": "Pt", "lpt_exit_mach": "Mach", "FAR5": "far"}
        d_area = {"W2": area / inputs["W2"], "W5_frac": area / inputs["W5_frac"]}
        d_vel = {"W2": 0.0 * area, "W5_frac": 0.0 * area}
        for k, s in src.items():
            d_area[k] = -area / st.W_per_A * st.d["W_per_A", s]
            d_vel[k] = st.d["V", s]
        nu = inputs["lpt_exit_hub_tip_ratio"]
        d_tip = np.sqrt(4.0 * area / (np.pi * (1.0 - nu**2)))
        d_mean = 0.5 * d_tip * (1.0 + nu)
        dd_mean = {k: 0.5 * (1.0 + nu) * d_tip / (2.0 * area) * v for k, v in d_area.items()}
        dd_tip = {k: d_tip / (2.0 * area) * v for k, v in d_area.items()}
        dd_tip["lpt_exit_hub_tip_ratio"] = d_tip * nu / (1.0 - nu**2)
        dd_mean["lpt_exit_hub_tip_ratio"] = 0.5 * d_tip + 0.5 * (1.0 + nu) * dd_tip["lpt_exit_hub_tip_ratio"]
        d_vel["lpt_exit_hub_tip_ratio"] = 0.0 * nu

        u = np.pi * d_mean * n_lp
        du = {k: np.pi * n_lp * v for k, v in dd_mean.items()}
        du.update({k: np.pi * d_mean * v for k, v in dn_lp.items()})
        phi = st.V / u
        dphi = {k: -phi / u * v for k, v in du.items()}
        for k, v in d_vel.items():
            dphi[k] = dphi[k] + v / u
        w, psi = inputs["lpt_work"], inputs["lpt_stage_loading"]
        stages = w / (psi * u**2)
        dstages = {k: -2.0 * stages / u * v for k, v in du.items()}
        dstages["lpt_work"] = stages / w
        dstages["lpt_stage_loading"] = -stages / psi
        rpm = 60.0 * n_lp
        an2 = area * rpm**2
        dan2 = {k: rpm**2 * d_area[k] for k in src}
        dan2["W2"], dan2["W5_frac"] = rpm**2 * d_area["W2"], rpm**2 * d_area["W5_frac"]
        for k, v in dn_lp.items():
            dan2[k] = area * 2.0 * rpm * 60.0 * v

        out = {"fan_shaft_speed": 60.0 * n_fan, "LP_shaft_speed": rpm, "lpt_exit_area": area,
               "lpt_tip_diameter": d_tip, "lpt_mean_diameter": d_mean, "lpt_blade_speed": u,
               "lpt_flow_coefficient": phi, "lpt_stage_count": stages, "lpt_AN2": an2}
        for k, v in dn_fan.items():
            d["fan_shaft_speed", k] = 60.0 * v
        for k, v in dn_lp.items():
            d["LP_shaft_speed", k] = 60.0 * v
        for name, dd in (("lpt_exit_area", d_area), ("lpt_tip_diameter", dd_tip), ("lpt_mean_diameter", dd_mean),
                         ("lpt_blade_speed", du), ("lpt_flow_coefficient", dphi), ("lpt_stage_count", dstages),
                         ("lpt_AN2", dan2)):
            for k, v in dd.items():
                d[name, k] = v

        e_ref = inputs["lpt_eff_poly_ref"]
        if self.options["stage_effect"]:
            eta, de_dpsi, de_dphi = soderberg_stage_efficiency(psi, phi)
            eta_ref, _, _ = soderberg_stage_efficiency(LOADING_REF, FLOW_COEFF_REF)
            out["lpt_eff_poly"] = e_ref + eta - eta_ref
            for k, v in dphi.items():
                d["lpt_eff_poly", k] = de_dphi * v
            d["lpt_eff_poly", "lpt_stage_loading"] = de_dpsi
        else:
            out["lpt_eff_poly"] = e_ref
        d["lpt_eff_poly", "lpt_eff_poly_ref"] = np.ones_like(e_ref)
        return out, d, psi, phi

    def compute(self, inputs, outputs):
        """Speeds, LP turbine size, stage count and efficiency."""
        self._check(inputs)
        out, _, psi, phi = self._evaluate(inputs)
        check_validity("lpt_stage_loading", psi, *LOADING_VALID, "", where=self.pathname)
        check_validity("lpt_flow_coefficient", phi, *FLOW_COEFF_VALID, "", where=self.pathname)
        for k, v in out.items():
            outputs[k] = v
        check_range("lpt_eff_poly", out["lpt_eff_poly"], 0.5, 1.0, "", lower_inclusive=False,
                    where=self.pathname)

    def compute_partials(self, inputs, partials):
        """Analytic partial derivatives."""
        _, d, _, _ = self._evaluate(inputs)
        for key, v in d.items():
            partials[key] = v
