"""Tests for the nacelle ground-clearance component."""

import numpy as np
import openmdao.api as om
import pytest
from bypassopt.components.installation.ground_clearance_comp import GroundClearanceComp
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
PARTIALS_TOL = 1e-10
SEED = 1729

RANDOM_RANGES = {
    "wing_height": (2.5, 4.0),
    "nacelle_wing_gap": (-0.3, 0.5),
    "nacelle_max_diameter": (1.8, 3.2),
    "min_ground_clearance": (0.4, 0.7),
    "max_nacelle_diameter": (2.5, 3.5),
}


def _problem(nn=1, **values):
    prob = om.Problem()
    prob.model.add_subsystem("gc", GroundClearanceComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def test_clearance_arithmetic():
    """Static stack-up h_gc = h_wing - gap - D_nac (field-reference 10, common practice), including a
    negative gap (nacelle top above the wing lower surface) and an infeasible case."""
    prob = _problem(3, wing_height=[3.0, 3.0, 2.6], nacelle_wing_gap=[0.3, -0.2, 0.3],
                    nacelle_max_diameter=[2.0, 2.0, 2.4], min_ground_clearance=[0.5, 0.5, 0.5],
                    max_nacelle_diameter=[2.5, 2.5, 2.2])
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("ground_clearance"), [0.7, 1.2, -0.1], rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("clearance_margin"), [0.2, 0.7, -0.6], rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("diameter_margin"), [0.5, 0.5, -0.2], rtol=RTOL_EXACT)


@pytest.mark.parametrize("nn", [4, 1])
def test_partials_complex_step(nn):
    """Analytic (constant) partials against complex step at seeded random points."""
    rng = np.random.default_rng(SEED)
    prob = _problem(nn, **{n: rng.uniform(lo, hi, nn) for n, (lo, hi) in RANDOM_RANGES.items()})
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, bad, pattern", [
    ("wing_height", -0.1, r"wing_height = -0.1 m .*from 0 up to 50 m"),
    ("min_ground_clearance", -0.5, r"min_ground_clearance = -0.5 m .*from 0 up to 10 m"),
    ("max_nacelle_diameter", 0.0, r"max_nacelle_diameter = 0 m .*above 0 up to 20 m"),
    ("nacelle_max_diameter", np.nan, r"nacelle_max_diameter = nan m .*above 0 up to 20 m"),
    ("nacelle_wing_gap", np.nan, r"nacelle_wing_gap = nan m .*from -10 up to 10 m"),
])
def test_bad_input_names_variable_and_range(name, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    prob = _problem(2)
    prob.set_val(name, np.array([RANDOM_RANGES[name][0], bad]))
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
