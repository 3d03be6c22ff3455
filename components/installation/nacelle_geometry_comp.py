"""Separate-flow nacelle geometry: fan cowl, core cowl and plug dimensions and wetted areas."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import FAN_TIP_DIAMETER_MAX, FAN_TIP_DIAMETER_MIN, range_kwargs
from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes

# (name, default, lower, upper, units, desc) for every input, in declaration order.
_INPUTS = (
    ("fan_tip_diameter", 2.0, FAN_TIP_DIAMETER_MIN, FAN_TIP_DIAMETER_MAX, "m",
     "Fan tip diameter at the fan leading edge, from fan sizing"),
    ("core_inlet_tip_diameter", 0.6, 0.05, 2.0, "m",
     "Tip diameter of the booster-exit/HPC-entry annulus (station 25), from fan sizing"),
    ("nacelle_diameter_ratio", 1.18, 1.0, 1.6, None,
     "Maximum nacelle diameter divided by fan tip diameter (common practice 1.15-1.25)"),
    ("containment_allowance", 0.05, 0.0, 0.5, "m",
     "Diameter added for fan case and containment thickness"),
    ("fan_cowl_length_ratio", 1.4, 0.5, 3.0, None,
     "Fan-cowl length divided by maximum nacelle diameter (common practice 1.2-1.8)"),
    ("core_cowl_diameter_ratio", 1.9, 1.0, 4.0, None,
     "Core-cowl maximum diameter divided by core inlet tip diameter (demo calibration)"),
    ("core_cowl_length_ratio", 1.1, 0.2, 4.0, None,
     "Exposed core-cowl length divided by core-cowl maximum diameter"),
    ("core_exit_diameter_ratio", 0.75, 0.2, 1.0, None,
     "Core-cowl aft (core nozzle) diameter divided by core-cowl maximum diameter"),
    ("plug_diameter_ratio", 0.45, 0.05, 1.0, None,
     "Plug base diameter divided by core-cowl maximum diameter"),
    ("plug_length_ratio", 1.2, 0.2, 4.0, None,
     "Plug cone length divided by plug base diameter"),
)

_OUTPUTS = (
    ("nacelle_max_diameter", "m", "Maximum nacelle (fan cowl) diameter"),
    ("fan_cowl_length", "m", "Fan-cowl length, inlet highlight to fan nozzle exit"),
    ("fan_cowl_wetted_area", "m**2", "External wetted area of the fan cowl (cylinder approximation)"),
    ("core_cowl_max_diameter", "m", "Maximum diameter of the exposed core cowl"),
    ("core_cowl_length", "m", "Length of the core cowl exposed to the bypass jet"),
    ("core_cowl_wetted_area", "m**2", "Wetted area of the exposed core cowl (frustum lateral area)"),
    ("plug_base_diameter", "m", "Diameter of the core-nozzle plug at its base"),
    ("plug_length", "m", "Length of the core-nozzle plug cone"),
    ("plug_wetted_area", "m**2", "Wetted area of the plug (cone lateral area)"),
    ("nacelle_wetted_area", "m**2", "Total wetted area: fan cowl + core cowl + plug"),
)

# Which inputs each output depends on (the sparsity pattern of the Jacobian).
#: Inputs that follow the engine size (W2), an unknown of the coupled solve.
_SIZED = ("fan_tip_diameter", "core_inlet_tip_diameter")
_CORE = ("core_inlet_tip_diameter", "core_cowl_diameter_ratio")
_FAN = ("fan_tip_diameter", "nacelle_diameter_ratio", "containment_allowance")
_DEPENDS = {
    "nacelle_max_diameter": _FAN,
    "fan_cowl_length": _FAN + ("fan_cowl_length_ratio",),
    "fan_cowl_wetted_area": _FAN + ("fan_cowl_length_ratio",),
    "core_cowl_max_diameter": _CORE,
    "core_cowl_length": _CORE + ("core_cowl_length_ratio",),
    "core_cowl_wetted_area": _CORE + ("core_cowl_length_ratio", "core_exit_diameter_ratio"),
    "plug_base_diameter": _CORE + ("plug_diameter_ratio",),
    "plug_length": _CORE + ("plug_diameter_ratio", "plug_length_ratio"),
    "plug_wetted_area": _CORE + ("plug_diameter_ratio", "plug_length_ratio"),
    "nacelle_wetted_area": tuple(name for name, *_ in _INPUTS),
}


class NacelleGeometryComp(om.ExplicitComponent):
    r"""Dimensions and wetted areas of a separate-flow, pylon-mounted turbofan nacelle.

    The nacelle is built from three simple bodies, all scaled from the fan tip diameter
    :math:`D_f` and the core (station 25) inlet tip diameter :math:`D_{25}`:

    Fan cowl (in the free stream)

    .. math::
        D_{nac} = k_D D_f + t_c, \qquad L_{fc} = k_L D_{nac}, \qquad
        S_{fc} = \pi D_{nac} L_{fc}

    The fan cowl is approximated as a cylinder at the maximum diameter; this over-states the
    wetted area of the real lip and boat-tail by a few per cent (a simplification, common
    practice for conceptual work).

    Core cowl (exposed to the bypass jet): a frustum from the maximum diameter
    :math:`D_{cc} = k_{cc} D_{25}` to the aft diameter :math:`D_{ce} = k_e D_{cc}` over the length
    :math:`L_{cc} = k_{Lc} D_{cc}`; with :math:`r_1 = D_{cc}/2`, :math:`r_2 = D_{ce}/2`

    .. math:: S_{cc} = \pi (r_1 + r_2)\sqrt{(r_1 - r_2)^2 + L_{cc}^2}

    Plug: a cone of base diameter :math:`D_p = k_p D_{cc}` and length :math:`L_p = k_{Lp} D_p`;
    with :math:`r = D_p/2`

    .. math:: S_p = \pi r \sqrt{r^2 + L_p^2}

    and :math:`S_{wet} = S_{fc} + S_{cc} + S_p`. Frustum and cone lateral areas are textbook
    solid geometry. The ratio defaults are common practice (nacelle diameter ratio 1.15-1.25,
    fan-cowl length ratio 1.2-1.8; field reference section 7.2) or demo calibrations
    (core-cowl and plug ratios); none is data for a real engine.

    Valid range: the limits checked in ``compute`` (e.g. nacelle diameter ratio 1.0-1.6, fan tip
    diameter 0.2-5 m). The diameters follow the engine size, an unknown of the installed engine's coupled
    solve, so their ranges are judged on the converged state (``check_validity``); elsewhere they must
    only be positive. All quantities are per engine.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        for name, default, _lo, _hi, units, desc in _INPUTS:
            self.add_input(name, val=default * np.ones(nn), units=units, desc=desc)
        for name, units, desc in _OUTPUTS:
            self.add_output(name, val=np.ones(nn), units=units, desc=desc)

    def setup_partials(self):
        """Declare the elementwise sparsity of every (output, input) pair."""
        ar = np.arange(self.options["num_nodes"])
        for of, wrts in _DEPENDS.items():
            for wrt in wrts:
                if of == "nacelle_max_diameter" and wrt == "containment_allowance":
                    self.declare_partials(of, wrt, rows=ar, cols=ar, val=1.0)
                else:
                    self.declare_partials(of, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        for name, _default, lo, hi, units, _desc in _INPUTS:
            if name in _SIZED:  # follow the coupled engine size: validity judged on the converged state
                check_validity(name, inputs[name], lo, hi, units, where=self.pathname)
                check_range(name, inputs[name], 0.0, np.inf, units, lower_inclusive=False, where=self.pathname)
            else:  # proportions: the range the scenario keys share (``components.ranges``)
                check_range(name, inputs[name], **range_kwargs(name), where=self.pathname)

    def compute(self, inputs, outputs):
        """Compute the nacelle dimensions and wetted areas."""
        self._check(inputs)
        g = _geometry(inputs)
        for name, _units, _desc in _OUTPUTS:
            outputs[name] = g[name]

    def compute_partials(self, inputs, partials):
        """Compute the analytic partial derivatives by the chain rule."""
        self._check(inputs)
        g = _geometry(inputs)
        D_f = inputs["fan_tip_diameter"]
        D_25 = inputs["core_inlet_tip_diameter"]
        k_D = inputs["nacelle_diameter_ratio"]
        k_L = inputs["fan_cowl_length_ratio"]
        k_cc = inputs["core_cowl_diameter_ratio"]
        k_Lc = inputs["core_cowl_length_ratio"]
        k_e = inputs["core_exit_diameter_ratio"]
        k_p = inputs["plug_diameter_ratio"]
        k_Lp = inputs["plug_length_ratio"]
        D_nac = g["nacelle_max_diameter"]
        D_cc = g["core_cowl_max_diameter"]

        # Fan cowl: D_nac(D_f, k_D, t_c), L = k_L D_nac, S = pi k_L D_nac^2.
        dS_dDnac = 2.0 * np.pi * k_L * D_nac
        for wrt, dDnac in (("fan_tip_diameter", k_D), ("nacelle_diameter_ratio", D_f),
                           ("containment_allowance", 1.0)):
            if wrt != "containment_allowance":
                partials["nacelle_max_diameter", wrt] = dDnac
            partials["fan_cowl_length", wrt] = k_L * dDnac
            partials["fan_cowl_wetted_area", wrt] = dS_dDnac * dDnac
        partials["fan_cowl_length", "fan_cowl_length_ratio"] = D_nac
        dSfc_dkL = np.pi * D_nac ** 2
        partials["fan_cowl_wetted_area", "fan_cowl_length_ratio"] = dSfc_dkL

        # Core cowl frustum: r1 = D_cc/2, r2 = k_e D_cc/2, L = k_Lc D_cc.
        r1 = 0.5 * D_cc
        r2 = 0.5 * k_e * D_cc
        L_cc = g["core_cowl_length"]
        s = np.sqrt((r1 - r2) ** 2 + L_cc ** 2)
        dS_dr1 = np.pi * s + np.pi * (r1 + r2) * (r1 - r2) / s
        dS_dr2 = np.pi * s - np.pi * (r1 + r2) * (r1 - r2) / s
        dS_dL = np.pi * (r1 + r2) * L_cc / s
        dScc_dDcc = 0.5 * dS_dr1 + 0.5 * k_e * dS_dr2 + k_Lc * dS_dL
        dScc_dkLc = dS_dL * D_cc
        dScc_dke = dS_dr2 * 0.5 * D_cc

        # Plug cone: r = k_p D_cc / 2, L = k_Lp 2 r.
        r = 0.5 * g["plug_base_diameter"]
        L_p = g["plug_length"]
        sp = np.sqrt(r ** 2 + L_p ** 2)
        dSp_dr = np.pi * sp + np.pi * r ** 2 / sp
        dSp_dL = np.pi * r * L_p / sp
        dSp_dr_tot = dSp_dr + 2.0 * k_Lp * dSp_dL     # total derivative with L_p = 2 k_Lp r
        dSp_dDcc = dSp_dr_tot * 0.5 * k_p
        dSp_dkp = dSp_dr_tot * 0.5 * D_cc
        dSp_dkLp = dSp_dL * 2.0 * r

        for wrt, dDcc in (("core_inlet_tip_diameter", k_cc), ("core_cowl_diameter_ratio", D_25)):
            partials["core_cowl_max_diameter", wrt] = dDcc
            partials["core_cowl_length", wrt] = k_Lc * dDcc
            partials["core_cowl_wetted_area", wrt] = dScc_dDcc * dDcc
            partials["plug_base_diameter", wrt] = k_p * dDcc
            partials["plug_length", wrt] = k_Lp * k_p * dDcc
            partials["plug_wetted_area", wrt] = dSp_dDcc * dDcc
            partials["nacelle_wetted_area", wrt] = (dScc_dDcc + dSp_dDcc) * dDcc
        partials["core_cowl_length", "core_cowl_length_ratio"] = D_cc
        partials["core_cowl_wetted_area", "core_cowl_length_ratio"] = dScc_dkLc
        partials["core_cowl_wetted_area", "core_exit_diameter_ratio"] = dScc_dke
        partials["plug_base_diameter", "plug_diameter_ratio"] = D_cc
        partials["plug_length", "plug_diameter_ratio"] = k_Lp * D_cc
        partials["plug_length", "plug_length_ratio"] = 2.0 * r
        partials["plug_wetted_area", "plug_diameter_ratio"] = dSp_dkp
        partials["plug_wetted_area", "plug_length_ratio"] = dSp_dkLp

        # Total wetted area.
        partials["nacelle_wetted_area", "fan_tip_diameter"] = dS_dDnac * k_D
        partials["nacelle_wetted_area", "nacelle_diameter_ratio"] = dS_dDnac * D_f
        partials["nacelle_wetted_area", "containment_allowance"] = dS_dDnac
        partials["nacelle_wetted_area", "fan_cowl_length_ratio"] = dSfc_dkL
        partials["nacelle_wetted_area", "core_cowl_length_ratio"] = dScc_dkLc
        partials["nacelle_wetted_area", "core_exit_diameter_ratio"] = dScc_dke
        partials["nacelle_wetted_area", "plug_diameter_ratio"] = dSp_dkp
        partials["nacelle_wetted_area", "plug_length_ratio"] = dSp_dkLp


def _geometry(inputs):
    """Return a dict of all outputs computed from the inputs (complex-step safe)."""
    D_nac = inputs["nacelle_diameter_ratio"] * inputs["fan_tip_diameter"] + inputs["containment_allowance"]
    L_fc = inputs["fan_cowl_length_ratio"] * D_nac
    D_cc = inputs["core_cowl_diameter_ratio"] * inputs["core_inlet_tip_diameter"]
    L_cc = inputs["core_cowl_length_ratio"] * D_cc
    r1 = 0.5 * D_cc
    r2 = 0.5 * inputs["core_exit_diameter_ratio"] * D_cc
    S_cc = np.pi * (r1 + r2) * np.sqrt((r1 - r2) ** 2 + L_cc ** 2)
    D_p = inputs["plug_diameter_ratio"] * D_cc
    L_p = inputs["plug_length_ratio"] * D_p
    r = 0.5 * D_p
    S_p = np.pi * r * np.sqrt(r ** 2 + L_p ** 2)
    S_fc = np.pi * D_nac * L_fc
    return {
        "nacelle_max_diameter": D_nac,
        "fan_cowl_length": L_fc,
        "fan_cowl_wetted_area": S_fc,
        "core_cowl_max_diameter": D_cc,
        "core_cowl_length": L_cc,
        "core_cowl_wetted_area": S_cc,
        "plug_base_diameter": D_p,
        "plug_length": L_p,
        "plug_wetted_area": S_p,
        "nacelle_wetted_area": S_fc + S_cc + S_p,
    }
