"""Fan bypass polytropic efficiency lowered by the shock loss of a supersonic tip (tip speed from FPR)."""

import numpy as np
import openmdao.api as om

from bypassopt.components.options import declare_num_nodes
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, check_validity

#: Ratio of specific heats of the cold air at the fan tip (dry air near 250-300 K; field-reference 2.5).
GAMMA_AIR = 1.4
#: Validity of the tip relative Mach number: civil fans stay below about 1.8 (common practice); judged on the
#: converged state of a coupled solve.
TIP_MACH_VALID_MAX = 2.0


def normal_shock_entropy(m, gamma=GAMMA_AIR):
    r"""Entropy rise over R across a normal shock, :math:`\Delta s/R = -\ln(p_{t2}/p_{t1})`, and its derivative.

    NACA Report 1135 (Ames Research Staff, 1953), normal-shock total-pressure ratio (upstream Mach M,
    :math:`m = M^2`):

    .. math::
        \frac{p_{t2}}{p_{t1}} = \left[\frac{(\gamma+1)m}{(\gamma-1)m + 2}\right]^{\gamma/(\gamma-1)}
                                \left[\frac{\gamma+1}{2\gamma m - (\gamma-1)}\right]^{1/(\gamma-1)}

    The values agree to the 4 printed figures with the normal-shock table of J. D. Anderson, *Fundamentals of
    Aerodynamics*, Table A.2 (gamma 1.4, M 1.04-1.34 checked by the tests; e.g. 0.9928 at M = 1.2, 0.9794 at 1.3).
    Returns (value, d value / d m); zero (and zero slope) at m = 1. Valid for m >= 1.
    """
    a, b = gamma / (gamma - 1.0), 1.0 / (gamma - 1.0)
    g = (-a * (np.log((gamma + 1.0) * m) - np.log((gamma - 1.0) * m + 2.0))
         - b * (np.log(gamma + 1.0) - np.log(2.0 * gamma * m - (gamma - 1.0))))
    dg = (-a * (1.0 / m - (gamma - 1.0) / ((gamma - 1.0) * m + 2.0))
          + b * 2.0 * gamma / (2.0 * gamma * m - (gamma - 1.0)))
    return g, dg


def normal_shock_entropy_integral(m, gamma=GAMMA_AIR):
    r"""Antiderivative :math:`G(m) = \int \Delta s/R\,dm` of ``normal_shock_entropy`` (closed form: sums of logs)."""
    a, b = gamma / (gamma - 1.0), 1.0 / (gamma - 1.0)
    u = (gamma - 1.0) * m + 2.0
    v = 2.0 * gamma * m - (gamma - 1.0)
    return (-a * (m * np.log((gamma + 1.0) * m) - m - (u * np.log(u) - u) / (gamma - 1.0))
            - b * (m * np.log(gamma + 1.0) - (v * np.log(v) - v) / (2.0 * gamma)))


class FanShockLossComp(om.ExplicitComponent):
    r"""Fan bypass-stream polytropic efficiency with the shock loss of its supersonic tip region.

    The fan tip speed follows from the FPR at the design tip loading (``FanSizingComp``:
    :math:`U_{tip} = \sqrt{\Delta h/\psi}`), so a higher FPR means a higher tip relative Mach number
    :math:`M_{tip}` (``fan_tip_relative_mach``). With uniform axial Mach number :math:`M_x`
    (``fan_face_mach``) the inlet relative Mach number at radius fraction :math:`r = R/R_{tip}` is
    :math:`M^2(r) = M_x^2 + (M_{tip}^2 - M_x^2)\,r^2`. Where it exceeds 1 a passage shock stands in the
    blade row; its loss is taken as a normal shock at the local inlet relative Mach number (the simplest
    form of the shock-loss model of Miller, Lewis and Hartmann, "Shock losses in transonic compressor
    blade rows", ASME J. Eng. Power 83, 1961, which uses a somewhat higher Mach number; from memory),
    with the NACA Report 1135 normal-shock total-pressure ratio, :math:`\Delta s/R = -\ln(p_{t2}/p_{t1})`.
    Mass-averaged over the annulus (uniform axial mass flux, hub-to-tip ratio :math:`\nu`):

    .. math::
        \overline{\Delta s/R} = \frac{2}{1-\nu^2}\int_{r_1}^{1} \frac{\Delta s}{R}\bigl(M(r)\bigr)\,r\,dr
        = \frac{G(M_{tip}^2) - G(m_1)}{(1-\nu^2)(M_{tip}^2 - M_x^2)}

    with :math:`G` the closed-form antiderivative of :math:`\Delta s/R` in :math:`m = M^2` and
    :math:`m_1 = \max(1, M^2(\nu))` (sonic radius or hub). The loss is an entropy rise on top of the
    shock-free fan; in the entropy-function form of the polytropic efficiency (field-reference 3.1,
    :math:`s_{13} - s_2 = R\ln\pi_f\,(1/e - 1)`) it adds exactly

    .. math:: \frac{1}{e} = \frac{1}{e_{ref}} + k_{sh}\,\frac{\overline{\Delta s/R}}{\ln \pi_f}

    where :math:`e_{ref}` (``fan_bypass_eff_poly_ref``) is the technology level: the polytropic efficiency
    of the same fan without shock loss (a subsonic tip), and :math:`k_{sh}` (``fan_shock_loss_factor``,
    default 1) scales the loss model (a real passage shock is oblique over part of the span, which
    lowers it, and sits at a Mach number above the inlet value, which raises it). Only the bypass stream
    is affected: the core-side stream passes the subsonic hub region. ``shock_effect=False`` passes the
    reference efficiency through (the inputs stay, without effect).

    Valid range: FPR above 1; tip relative Mach number 0-2 (judged on a coupled solve's converged state);
    fan-face Mach number (0, 1); hub-to-tip ratio [0, 0.6); reference efficiency 0.5-1; factor 0-5; the
    resulting efficiency above 0.5. Outside it (or NaN) ``compute`` raises ``InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("shock_effect", types=bool, default=True,
                             desc="apply the tip shock loss (False: the efficiency equals its reference value)")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("FPR", val=1.5 * ones, units=None, desc="fan pressure ratio of the bypass stream")
        self.add_input("fan_tip_relative_mach", val=1.3 * ones, units=None,
                       desc="fan tip relative Mach number at the fan face")
        self.add_input("fan_face_mach", val=0.65 * ones, units=None, desc="axial Mach number at the fan face")
        self.add_input("fan_hub_tip_ratio", val=0.30 * ones, units=None, desc="fan hub-to-tip diameter ratio")
        self.add_input("fan_bypass_eff_poly_ref", val=0.93 * ones, units=None,
                       desc="fan bypass polytropic efficiency without shock loss (technology level)")
        self.add_input("fan_shock_loss_factor", val=ones, units=None,
                       desc="factor on the normal-shock loss model (1: as modelled; 0: no shock loss)")
        self.add_output("fan_bypass_eff_poly", val=0.92 * ones, units=None,
                        desc="fan bypass polytropic efficiency with the tip shock loss (read by the cycle)")
        self.add_output("fan_shock_entropy", val=0.005 * ones, units=None,
                        desc="mass-averaged entropy rise over R of the tip shocks")

    def setup_partials(self):
        """Declare the elementwise partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        geometry = ("fan_tip_relative_mach", "fan_face_mach", "fan_hub_tip_ratio")
        for wrt in geometry:
            self.declare_partials("fan_shock_entropy", wrt, rows=ar, cols=ar)
        self.declare_partials("fan_bypass_eff_poly", "fan_bypass_eff_poly_ref", rows=ar, cols=ar)
        if self.options["shock_effect"]:
            for wrt in geometry + ("FPR", "fan_shock_loss_factor"):
                self.declare_partials("fan_bypass_eff_poly", wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        where = self.pathname
        check_range("FPR", inputs["FPR"], 1.0, np.inf, "", lower_inclusive=False, where=where)
        mtip = inputs["fan_tip_relative_mach"]
        check_range("fan_tip_relative_mach", mtip, 0.0, np.inf, "", where=where)
        check_validity("fan_tip_relative_mach", mtip, 0.0, TIP_MACH_VALID_MAX, "", where=where)
        check_range("fan_face_mach", inputs["fan_face_mach"], 0.0, 1.0, "", lower_inclusive=False,
                    upper_inclusive=False, where=where)
        for name in ("fan_hub_tip_ratio", "fan_bypass_eff_poly_ref", "fan_shock_loss_factor"):
            check_range(name, inputs[name], **range_kwargs(name), where=where)
        if np.any(np.real(mtip) < np.real(inputs["fan_face_mach"])):
            raise InputRangeError(f"{where}: fan_tip_relative_mach is below fan_face_mach (the relative Mach "
                                  f"number includes the axial one).")

    def _entropy(self, inputs):
        """Mass-averaged shock entropy over R and its derivatives {input: array}."""
        mtip, mx, nu = inputs["fan_tip_relative_mach"], inputs["fan_face_mach"], inputs["fan_hub_tip_ratio"]
        m_tip = mtip**2
        mt2 = m_tip - mx**2
        shocked = np.real(mtip) > 1.0
        # keep the arithmetic finite where there is no shock (the result is replaced by zero there)
        m_tip_s = np.where(shocked, m_tip, 2.0)
        mt2_s = np.where(shocked, mt2, 1.0)
        m_hub = mx**2 + mt2_s * nu**2
        hub_shocked = np.real(m_hub) > 1.0
        m_lo = np.where(hub_shocked, m_hub, 1.0 + 0.0 * m_hub)
        den = (1.0 - nu**2) * mt2_s
        span = normal_shock_entropy_integral(m_tip_s) - normal_shock_entropy_integral(m_lo)
        q = span / den
        g_tip, _ = normal_shock_entropy(m_tip_s)
        g_lo, _ = normal_shock_entropy(m_lo)
        g_lo = np.where(hub_shocked, g_lo, 0.0)
        d_mlo = {"fan_tip_relative_mach": 2.0 * mtip * nu**2, "fan_face_mach": 2.0 * mx * (1.0 - nu**2),
                 "fan_hub_tip_ratio": 2.0 * nu * mt2_s}
        d_mtip = {"fan_tip_relative_mach": 2.0 * mtip, "fan_face_mach": 0.0 * mx, "fan_hub_tip_ratio": 0.0 * nu}
        d_den = {"fan_tip_relative_mach": 2.0 * mtip * (1.0 - nu**2), "fan_face_mach": -2.0 * mx * (1.0 - nu**2),
                 "fan_hub_tip_ratio": -2.0 * nu * mt2_s}
        dq = {}
        for k in d_den:
            d_span = g_tip * d_mtip[k] - g_lo * d_mlo[k]
            dq[k] = np.where(shocked, (d_span - q * d_den[k]) / den, 0.0)
        return np.where(shocked, q, 0.0), dq

    def compute(self, inputs, outputs):
        """Shock entropy and the bypass-stream efficiency."""
        self._check(inputs)
        q, _ = self._entropy(inputs)
        outputs["fan_shock_entropy"] = q
        eff = inputs["fan_bypass_eff_poly_ref"]
        if self.options["shock_effect"]:
            # 1/e = 1/e_ref + k q/ln(FPR), written so that no shock (q = 0) returns e_ref exactly
            eff = eff / (1.0 + eff * inputs["fan_shock_loss_factor"] * q / np.log(inputs["FPR"]))
            flat = np.real(eff)
            if np.any(flat <= 0.5):
                i = int(np.argmax(flat <= 0.5))
                raise InputRangeError(
                    f"{self.pathname}: fan_bypass_eff_poly = {flat[i]:.6g} from the tip shock loss (FPR "
                    f"{np.real(inputs['FPR'])[i]:.6g}, fan_tip_relative_mach "
                    f"{np.real(inputs['fan_tip_relative_mach'])[i]:.6g}) is outside the valid range (above 0.5 "
                    f"up to 1).")
        outputs["fan_bypass_eff_poly"] = eff

    def compute_partials(self, inputs, partials):
        """Analytic partial derivatives."""
        q, dq = self._entropy(inputs)
        for k, v in dq.items():
            partials["fan_shock_entropy", k] = v
        e_ref = inputs["fan_bypass_eff_poly_ref"]
        if not self.options["shock_effect"]:
            partials["fan_bypass_eff_poly", "fan_bypass_eff_poly_ref"] = np.ones_like(e_ref)
            return
        k_sh, fpr = inputs["fan_shock_loss_factor"], inputs["FPR"]
        lnp = np.log(fpr)
        onex = 1.0 + e_ref * k_sh * q / lnp
        de_dx = -e_ref / onex**2  # e = e_ref/(1 + x), x = e_ref k q/ln(FPR)
        partials["fan_bypass_eff_poly", "fan_bypass_eff_poly_ref"] = 1.0 / onex**2
        partials["fan_bypass_eff_poly", "fan_shock_loss_factor"] = de_dx * e_ref * q / lnp
        partials["fan_bypass_eff_poly", "FPR"] = -de_dx * e_ref * k_sh * q / (lnp**2 * fpr)
        for k, v in dq.items():
            partials["fan_bypass_eff_poly", k] = de_dx * e_ref * k_sh * v / lnp
