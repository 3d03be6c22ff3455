"""Tests of the core-size effect on HPC and HPT polytropic efficiency (tip clearance over blade height)."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.core_size_efficiency_comp import CoreSizeEfficiencyComp
from bypassopt.components.defaults import TURBOMACHINERY_DEFAULTS
from bypassopt.components.validation import InputRangeError

EXACT_RTOL = 1e-12
PARTIALS_TOL = 1e-10
SEED = 314

#: Polytropic efficiency lost per unit clearance / span in the rear stages of a small-core HP compressor: "a 1.6 %
#: decrease in polytropic efficiency ... for a 1 % increase in gap-to-span ratio" (MIT S.M. thesis "Small core axial
#: compressors for high efficiency jet aircraft", 2012, abstract). Printed to 2 figures: +-0.05.
K_COMPRESSOR_PUBLISHED, K_COMPRESSOR_READING = 1.6, 0.05
#: Turbine total efficiency lost per 1 % clearance / blade height, measured on a cold-air single-stage turbine over
#: 2-5 % clearance: "approximate 1.5 percent" (recessed casing) and "approximate 2.0 percent" (reduced rotor blade
#: height) (Haas and Kofskey, NASA TP-1032, abstract). A smaller core is the reduced-blade-height case.
K_TURBINE_PUBLISHED_RANGE = (1.5, 2.0)
K_TURBINE_SHORT_BLADE = 2.0
#: Reading scatter of "approximate 2.0 percent": +-0.1.
K_TURBINE_READING = 0.1


def _problem(nn=1, size_effect=True, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("c", CoreSizeEfficiencyComp(num_nodes=nn, size_effect=size_effect), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def _clearance_law(e_ref, k, ratio_ref, w, w_ref):
    """Efficiency from the clearance law written from its two physical statements, not from the formula.

    The blade height of geometrically similar annuli scales with the square root of the annulus area, the area
    with the corrected flow (mass-flow function at fixed Mach number, field-reference 7.1); the clearance is
    the same; efficiency falls linearly with clearance / height.
    """
    height_ratio = np.sqrt(w / w_ref)          # h / h_ref
    ratio = ratio_ref / height_ratio           # c / h
    return e_ref - k * (ratio - ratio_ref)


def test_reference_size_gives_the_reference_efficiency():
    """At the reference core size the technology levels come out unchanged."""
    prob = _problem(W3_corrected=2.7, core_size_ref=2.7, hpc_eff_poly_ref=0.905, hpt_eff_poly_ref=0.885)
    prob.run_model()
    assert prob.get_val("hpc_eff_poly")[0] == pytest.approx(0.905, rel=EXACT_RTOL)
    assert prob.get_val("hpt_eff_poly")[0] == pytest.approx(0.885, rel=EXACT_RTOL)


def test_quarter_size_doubles_the_clearance_ratio():
    """A core with a quarter of the corrected flow has half the blade height, twice the clearance ratio, and
    loses K (c/h)_ref of efficiency: the loss per unit of added clearance / height is the published sensitivity
    (HPC: 1.6, MIT S.M. thesis 2012; HPT: 2.0 with shortened blades, inside 1.5-2.0, NASA TP-1032)."""
    prob = _problem(W3_corrected=0.75, core_size_ref=3.0, hpc_clearance_ratio_ref=0.015,
                    hpt_clearance_ratio_ref=0.01)
    prob.run_model()
    k_hpc = (0.91 - prob.get_val("hpc_eff_poly")[0]) / 0.015  # added clearance ratio = (c/h)_ref
    k_hpt = (0.90 - prob.get_val("hpt_eff_poly")[0]) / 0.01
    assert k_hpc == pytest.approx(K_COMPRESSOR_PUBLISHED, abs=K_COMPRESSOR_READING)
    assert k_hpt == pytest.approx(K_TURBINE_SHORT_BLADE, abs=K_TURBINE_READING)
    assert K_TURBINE_PUBLISHED_RANGE[0] - K_TURBINE_READING <= k_hpt <= K_TURBINE_PUBLISHED_RANGE[1] + K_TURBINE_READING


def test_one_percent_more_clearance_costs_the_published_points():
    """Published form of the sensitivity: +1 % of clearance / span (1.5 % -> 2.5 %, the core shrunk by the factor
    (1.5/2.5)^2) costs 1.6 points of HPC polytropic efficiency (MIT S.M. thesis 2012) and, at 1 % -> 2 %, 2.0 points
    of HPT efficiency (NASA TP-1032, shortened rotor blades)."""
    w_ref = 3.0
    prob = _problem(2, W3_corrected=[w_ref * (1.5 / 2.5) ** 2, w_ref * (1.0 / 2.0) ** 2], core_size_ref=w_ref,
                    hpc_clearance_ratio_ref=0.015, hpt_clearance_ratio_ref=0.010)
    prob.run_model()
    assert 100.0 * (0.91 - prob.get_val("hpc_eff_poly")[0]) == pytest.approx(1.6, abs=K_COMPRESSOR_READING)
    assert 100.0 * (0.90 - prob.get_val("hpt_eff_poly")[1]) == pytest.approx(2.0, abs=K_TURBINE_READING)


def test_small_core_clearance_against_the_published_last_stage_value():
    """Plausibility of the size law with the default reference (1.5 % stage-averaged clearance / height at 3 kg/s,
    components/defaults.py): at the thesis's smallest core, 1.5 lbm/s = 0.680 kg/s HPC exit corrected flow, the
    clearance ratio the model implies, (c/h)_ref + (e_ref - e)/K = 3.15 %, is stage-averaged and so must lie below
    the "up to 4.5 % clearance-to-span ratio at the last stage" stated for that size (MIT S.M. thesis 2012,
    abstract), and above the reference level."""
    w_ref = TURBOMACHINERY_DEFAULTS["core_size_ref"][0]
    ratio_ref = TURBOMACHINERY_DEFAULTS["hpc_clearance_ratio_ref"][0]
    prob = _problem(W3_corrected=1.5 * 0.45359237, core_size_ref=w_ref, hpc_clearance_ratio_ref=ratio_ref)
    prob.run_model()
    ratio = ratio_ref + (0.91 - prob.get_val("hpc_eff_poly")[0]) / K_COMPRESSOR_PUBLISHED
    assert ratio == pytest.approx(0.0315, abs=5e-5)
    assert ratio_ref < ratio < 0.045


@pytest.mark.parametrize("w3", [0.4, 1.5, 2.24, 6.0])
def test_clearance_law(w3):
    """Efficiencies equal the clearance law written from its physical statements (K 1.6 and 2.0, the published
    sensitivities)."""
    prob = _problem(W3_corrected=w3, core_size_ref=3.0, hpc_clearance_ratio_ref=0.015, hpt_clearance_ratio_ref=0.01,
                    hpc_eff_poly_ref=0.91, hpt_eff_poly_ref=0.90)
    prob.run_model()
    assert prob.get_val("hpc_eff_poly")[0] == pytest.approx(_clearance_law(0.91, 1.6, 0.015, w3, 3.0),
                                                            rel=EXACT_RTOL)
    assert prob.get_val("hpt_eff_poly")[0] == pytest.approx(_clearance_law(0.90, 2.0, 0.01, w3, 3.0),
                                                            rel=EXACT_RTOL)


def test_trends():
    """Efficiency rises with core size, losses grow faster as the core shrinks, and the gain above the reference is
    bounded by the clearance loss of the reference (zero clearance ratio at infinite size)."""
    w3 = np.append(np.linspace(0.5, 6.0, 12), 50.0)
    prob = _problem(len(w3), W3_corrected=w3, core_size_ref=3.0)
    prob.run_model()
    eff = prob.get_val("hpc_eff_poly")
    assert np.all(np.diff(eff) > 0.0)
    assert np.all(np.diff(eff[:-1], 2) < 0.0)  # concave on the uniform grid: each step down in size costs more
    assert eff[-1] < 0.91 + 1.6 * 0.015


def test_switched_off_passes_the_references_through():
    """size_effect=False: the efficiencies are the reference values whatever the core size."""
    prob = _problem(2, size_effect=False, W3_corrected=[0.5, 10.0], hpc_eff_poly_ref=0.9, hpt_eff_poly_ref=0.88)
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("hpc_eff_poly"), [0.9, 0.9])
    np.testing.assert_array_equal(prob.get_val("hpt_eff_poly"), [0.88, 0.88])


@pytest.mark.parametrize("size_effect", [True, False])
def test_partials_complex_step(size_effect):
    """Analytic partials against complex step."""
    nn = 4
    rng = np.random.default_rng(SEED)
    prob = _problem(nn, size_effect=size_effect, W3_corrected=rng.uniform(0.8, 6.0, nn),
                    core_size_ref=rng.uniform(2.0, 4.0, nn), hpc_eff_poly_ref=rng.uniform(0.88, 0.93, nn),
                    hpt_eff_poly_ref=rng.uniform(0.87, 0.92, nn), hpc_clearance_ratio_ref=rng.uniform(0.005, 0.03, nn),
                    hpt_clearance_ratio_ref=rng.uniform(0.005, 0.03, nn))
    prob.run_model()
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("values, pattern", [
    ({"W3_corrected": 0.0}, r"W3_corrected = 0 kg/s is outside the valid range \(above 0"),
    ({"W3_corrected": np.nan}, r"W3_corrected = nan kg/s is outside the valid range"),
    ({"W3_corrected": 0.1}, r"W3_corrected = 0\.1 kg/s is outside the valid range \(from 0\.2 up to 50"),
    ({"hpc_clearance_ratio_ref": 0.2},
     r"hpc_clearance_ratio_ref = 0\.2 is outside the valid range \(from 0 up to 0\.1"),
    ({"hpt_eff_poly_ref": 1.1}, r"hpt_eff_poly_ref = 1\.1 is outside the valid range \(from 0\.5 up to 1\)"),
    ({"W3_corrected": 0.2, "hpc_clearance_ratio_ref": 0.1, "core_size_ref": 50.0},
     r"hpc_eff_poly = .* from the size effect at W3_corrected = 0\.2 kg/s .* outside the valid range"),
])
def test_bad_inputs_raise(values, pattern):
    """NaN or out-of-range inputs, and a core too small for the correlation, raise InputRangeError."""
    prob = _problem(**values)
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
