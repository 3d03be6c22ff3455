"""Tests for the statistical (Raymer) engine mass cross-check component."""

import numpy as np
import openmdao.api as om
import pytest
from bypassopt.components.installation.statistical_engine_mass_comp import StatisticalEngineMassComp
from openmdao.utils.assert_utils import assert_check_partials
from openmdao.utils.units import convert_units

from bypassopt.components.validation import InputRangeError

# Field-reference 9 quotes the check values to 0.1 kg.
ATOL_FIELD_REF = 0.06
# Field-reference 9: the SI (14.7) and English (0.084) coefficients agree to 0.15 %.
RTOL_SI_VS_ENGLISH = 1.5e-3
PARTIALS_TOL = 1e-10
SEED = 2718


def _problem(thrust, bpr):
    thrust = np.atleast_1d(np.asarray(thrust, dtype=float))
    prob = om.Problem()
    prob.model.add_subsystem("stat", StatisticalEngineMassComp(num_nodes=thrust.size), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("takeoff_thrust", thrust)
    prob.set_val("BPR", bpr)
    return prob


def test_matches_field_reference_check_values():
    """Field-reference 9 (computed there from Raymer's from-memory formula): 1815.4 kg at 120 kN,
    BPR 10; 2482.8 kg at 130 kN, BPR 5."""
    prob = _problem([120e3, 130e3], [10.0, 5.0])
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("statistical_engine_mass"), [1815.4, 2482.8],
                               atol=ATOL_FIELD_REF, rtol=0)


def test_si_form_matches_english_form():
    """Raymer English form W = 0.084 T^1.1 exp(-0.045 BPR), lb and lbf (from memory): the unit
    conversion (OpenMDAO units) of the SI result agrees within 0.15 % (field-reference 9)."""
    T_N = np.array([60e3, 120e3, 300e3])
    bpr = np.array([4.0, 10.0, 8.0])
    prob = _problem(T_N, bpr)
    prob.run_model()
    T_lbf = convert_units(T_N, "N", "lbf")
    m_lb = 0.084 * T_lbf ** 1.1 * np.exp(-0.045 * bpr)
    np.testing.assert_allclose(prob.get_val("statistical_engine_mass", units="lbm"), m_lb,
                               rtol=RTOL_SI_VS_ENGLISH)


@pytest.mark.parametrize("nn", [4, 1])
def test_partials_complex_step(nn):
    """Analytic partials against complex step at seeded random points."""
    rng = np.random.default_rng(SEED)
    prob = _problem(rng.uniform(50e3, 400e3, nn), rng.uniform(0.0, 14.0, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, bad, pattern", [
    ("takeoff_thrust", 500.0, r"takeoff_thrust = 500 N .*from 1000 up to 1e\+06 N"),
    ("BPR", -1.0, r"BPR = -1 .*from 0 up to 20"),
    ("BPR", np.nan, r"BPR = nan .*from 0 up to 20"),
])
def test_bad_input_names_variable_and_range(name, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    prob = _problem([120e3, 120e3], [10.0, 10.0])
    prob.set_val(name, np.array([prob.get_val(name)[0], bad]))
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
