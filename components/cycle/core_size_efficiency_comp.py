"""Size effect on HPC and HPT polytropic efficiency: the tip-clearance loss of a core smaller than a reference."""

import numpy as np
import openmdao.api as om

from bypassopt.components.options import declare_num_nodes
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, check_validity

#: Polytropic efficiency lost per unit tip clearance / blade height in an axial HP compressor, -: "a 1.6 %
#: decrease in polytropic efficiency is found for a 1 % increase in gap-to-span ratio" (computed for the rear
#: stages of a small-core HPC: *Small core axial compressors for high efficiency jet aircraft*, S.M. thesis,
#: MIT, 2012; the abstract was read, the author's name, A. DiOrio, is from memory). The same abstract puts the
#: last-stage clearance of a 1.5 lbm/s (0.68 kg/s) core at up to 4.5 % of span.
CLEARANCE_SENSITIVITY_HPC = 1.6
#: The same for an HP turbine, -: about 1.5 (recessed casing) and 2.0 (reduced rotor blade height) points of total
#: efficiency per 1 % of clearance over blade height, measured on a cold-air single-stage cooled turbine over
#: clearances of 2-5 % (J. E. Haas and M. G. Kofskey, NASA TP-1032; the abstract was read, its year, 1977, is from
#: memory). The reduced blade height is the case of a smaller core (same clearance, shorter blade). A relative loss
#: of "order 1-2" times the gap over the blade height is the empirical rule quoted by M. Martinez-Sanchez and
#: R. P. Gauthier, "Blade-scale effects of tip leakage", MIT GTL Report 202, 1990 (read).
CLEARANCE_SENSITIVITY_HPT = 2.0
#: Validity range of the HPC exit corrected flow, kg/s: from small business-jet cores to the largest civil
#: cores with margin (common practice). Judged on the converged state of a coupled solve.
W3C_VALID = (0.2, 50.0)

#: Efficiency input -> (output, clearance-ratio input, sensitivity).
_MACHINES = {
    "hpc_eff_poly_ref": ("hpc_eff_poly", "hpc_clearance_ratio_ref", CLEARANCE_SENSITIVITY_HPC),
    "hpt_eff_poly_ref": ("hpt_eff_poly", "hpt_clearance_ratio_ref", CLEARANCE_SENSITIVITY_HPT),
}


class CoreSizeEfficiencyComp(om.ExplicitComponent):
    r"""HPC and HPT polytropic efficiencies that fall as the core gets smaller (tip-clearance size effect).

    A blade row loses efficiency in proportion to its tip clearance :math:`c` over its blade height
    :math:`h`, :math:`\Delta e = -K\,\Delta(c/h)`, with :math:`K` = 1.6 for an HP compressor (polytropic
    efficiency, computed for the rear stages of a small core: MIT S.M. thesis, 2012,
    ``CLEARANCE_SENSITIVITY_HPC``) and 2.0 for an HP turbine (total efficiency measured with shortened rotor
    blades, 1.5 with a recessed casing: Haas and Kofskey, NASA TP-1032, ``CLEARANCE_SENSITIVITY_HPT``). The
    clearance does not shrink with the engine (it is set by manufacturing tolerances, thermal growth and
    rotor deflection; common practice), while geometrically similar annuli at the same Mach number and
    hub-to-tip ratio have an area proportional to the corrected flow (mass-flow function,
    field-reference 7.1), so :math:`h \propto \sqrt{W_{3,corr}}` and
    :math:`c/h = (c/h)_{ref}\sqrt{W_{ref}/W_{3,corr}}`. Hence, for the HPC and (with the same core-size
    measure, since the HPT passes the same core flow) the HPT:

    .. math::

        e = e_{ref} - K\,(c/h)_{ref}\left(\sqrt{W_{ref}/W_{3,corr}} - 1\right)

    with :math:`e_{ref}` the technology level (``hpc_eff_poly_ref``, ``hpt_eff_poly_ref``): the efficiency
    at the reference size :math:`W_{ref}` (``core_size_ref``, HPC exit corrected flow), and
    :math:`(c/h)_{ref}` the stage-averaged clearance-to-height ratio there (``hpc_clearance_ratio_ref``,
    ``hpt_clearance_ratio_ref``; common practice 1-2 % in the rear stages of current HP compressors, less
    in the front stages and the HPT). Smaller cores lose efficiency as :math:`W^{-1/2}`; larger ones gain
    at most :math:`K (c/h)_{ref}` (the clearance loss of the reference). A clearance ratio of 0 removes the
    effect; so does ``size_effect=False``, which passes the reference efficiencies through (the inputs
    stay, without effect) for a model without the size effect.

    Valid range: ``W3_corrected`` 0.2-50 kg/s (judged on a coupled solve's converged state), above 0 always;
    ``core_size_ref`` 0.2-50 kg/s; reference efficiencies 0.5-1; clearance ratios 0-0.1; the resulting
    efficiencies above 0.5 and at most 1. Outside it (or NaN) ``compute`` raises ``InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        self.options.declare("size_effect", types=bool, default=True,
                             desc="apply the size effect (False: the efficiencies equal their reference values)")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("W3_corrected", val=3.0 * ones, units="kg/s",
                       desc="HPC exit corrected flow (core size) at the design point")
        self.add_input("core_size_ref", val=3.0 * ones, units="kg/s",
                       desc="HPC exit corrected flow at which the reference efficiencies apply")
        self.add_input("hpc_eff_poly_ref", val=0.91 * ones, units=None,
                       desc="HPC polytropic efficiency at the reference core size (technology level)")
        self.add_input("hpt_eff_poly_ref", val=0.90 * ones, units=None,
                       desc="HPT polytropic efficiency at the reference core size (technology level)")
        self.add_input("hpc_clearance_ratio_ref", val=0.015 * ones, units=None,
                       desc="stage-averaged HPC tip clearance / blade height at the reference core size")
        self.add_input("hpt_clearance_ratio_ref", val=0.010 * ones, units=None,
                       desc="HPT rotor tip clearance / blade height at the reference core size")
        self.add_output("hpc_eff_poly", val=0.91 * ones, units=None,
                        desc="HPC polytropic efficiency of this core size (read by the cycle)")
        self.add_output("hpt_eff_poly", val=0.90 * ones, units=None,
                        desc="HPT polytropic efficiency of this core size (read by the cycle)")

    def setup_partials(self):
        """Declare the elementwise partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        for ref, (out, clearance, _k) in _MACHINES.items():
            self.declare_partials(out, ref, rows=ar, cols=ar)
            if self.options["size_effect"]:
                for wrt in ("W3_corrected", "core_size_ref", clearance):
                    self.declare_partials(out, wrt, rows=ar, cols=ar)

    def _check(self, inputs):
        where = self.pathname
        w3 = inputs["W3_corrected"]
        check_range("W3_corrected", w3, 0.0, np.inf, "kg/s", lower_inclusive=False, where=where)
        check_validity("W3_corrected", w3, *W3C_VALID, "kg/s", where=where)
        check_range("core_size_ref", inputs["core_size_ref"], **range_kwargs("core_size_ref"), where=where)
        for ref, (_out, clearance, _k) in _MACHINES.items():
            check_range(ref, inputs[ref], **range_kwargs(ref), where=where)
            check_range(clearance, inputs[clearance], **range_kwargs(clearance), where=where)

    def compute(self, inputs, outputs):
        """Efficiencies of this core size."""
        self._check(inputs)
        size = np.sqrt(inputs["core_size_ref"] / inputs["W3_corrected"]) - 1.0
        for ref, (out, clearance, k) in _MACHINES.items():
            eff = inputs[ref]
            if self.options["size_effect"]:
                eff = eff - k * inputs[clearance] * size
            flat = np.real(eff)
            if np.any((flat <= 0.5) | (flat > 1.0)):
                i = int(np.argmax((flat <= 0.5) | (flat > 1.0)))
                raise InputRangeError(
                    f"{self.pathname}: {out} = {flat[i]:.6g} from the size effect at W3_corrected = "
                    f"{np.real(inputs['W3_corrected'])[i]:.6g} kg/s (core_size_ref "
                    f"{np.real(inputs['core_size_ref'])[i]:.6g} kg/s) is outside the valid range (above 0.5 "
                    f"up to 1); the core is too small for this correlation.")
            outputs[out] = eff

    def compute_partials(self, inputs, partials):
        """Analytic partial derivatives."""
        for ref, (out, _clearance, _k) in _MACHINES.items():
            partials[out, ref] = np.ones_like(inputs[ref])
        if not self.options["size_effect"]:
            return
        w3, wref = inputs["W3_corrected"], inputs["core_size_ref"]
        root = np.sqrt(wref / w3)
        for _ref, (out, clearance, k) in _MACHINES.items():
            kc = k * inputs[clearance]
            partials[out, clearance] = -k * (root - 1.0)
            partials[out, "W3_corrected"] = 0.5 * kc * root / w3
            partials[out, "core_size_ref"] = -0.5 * kc * root / wref
