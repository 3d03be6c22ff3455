"""Tests for the nacelle geometry component."""

import numpy as np
import openmdao.api as om
import pytest
from bypassopt.components.installation.nacelle_geometry_comp import NacelleGeometryComp
from openmdao.utils.assert_utils import assert_check_partials
from scipy.integrate import quad

from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# Surface-of-revolution areas by adaptive quadrature (scipy.integrate.quad).
RTOL_QUAD = 1e-9
PARTIALS_TOL = 1e-10
SEED = 20240611

# Random-point ranges inside the valid range: (lower, upper).
RANDOM_RANGES = {
    "fan_tip_diameter": (1.2, 3.2),
    "core_inlet_tip_diameter": (0.3, 0.9),
    "nacelle_diameter_ratio": (1.1, 1.3),
    "containment_allowance": (0.0, 0.1),
    "fan_cowl_length_ratio": (1.1, 1.9),
    "core_cowl_diameter_ratio": (1.5, 2.5),
    "core_cowl_length_ratio": (0.7, 1.5),
    "core_exit_diameter_ratio": (0.5, 0.95),
    "plug_diameter_ratio": (0.3, 0.6),
    "plug_length_ratio": (0.8, 1.8),
}


def _problem(nn=1, **values):
    prob = om.Problem()
    prob.model.add_subsystem("geom", NacelleGeometryComp(num_nodes=nn), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val)
    return prob


def _revolution_area(radius, slope, length):
    """Lateral area 2 pi int r(x) sqrt(1 + r'(x)^2) dx of a surface of revolution, by quadrature."""
    return 2.0 * np.pi * quad(lambda x: radius(x) * np.sqrt(1.0 + slope(x) ** 2), 0.0, length,
                              epsabs=0.0, epsrel=1e-12)[0]


def test_defaults_and_lengths():
    """Definitions: D_nac = k_D D_f + t, L_fc = k_L D_nac, D_cc = k_cc D_25, L_cc = k_Lc D_cc,
    D_p = k_p D_cc, L_p = k_Lp D_p (component docstring)."""
    prob = _problem(fan_tip_diameter=2.0, core_inlet_tip_diameter=0.6)
    prob.run_model()
    assert prob.get_val("nacelle_max_diameter")[0] == pytest.approx(1.18 * 2.0 + 0.05, rel=RTOL_EXACT)
    assert prob.get_val("fan_cowl_length")[0] == pytest.approx(1.4 * 2.41, rel=RTOL_EXACT)
    assert prob.get_val("core_cowl_max_diameter")[0] == pytest.approx(1.9 * 0.6, rel=RTOL_EXACT)
    assert prob.get_val("core_cowl_length")[0] == pytest.approx(1.1 * 1.14, rel=RTOL_EXACT)
    assert prob.get_val("plug_base_diameter")[0] == pytest.approx(0.45 * 1.14, rel=RTOL_EXACT)
    assert prob.get_val("plug_length")[0] == pytest.approx(1.2 * 0.45 * 1.14, rel=RTOL_EXACT)


def test_areas_match_surface_of_revolution_quadrature():
    """Cylinder, frustum and cone lateral areas (solid geometry) checked against an independent
    numerical integration of the surface of revolution."""
    prob = _problem(fan_tip_diameter=2.1, core_inlet_tip_diameter=0.55, core_exit_diameter_ratio=0.7,
                    plug_diameter_ratio=0.5, plug_length_ratio=1.3)
    prob.run_model()
    D, L = prob.get_val("nacelle_max_diameter")[0], prob.get_val("fan_cowl_length")[0]
    S_cyl = _revolution_area(lambda x: 0.5 * D, lambda x: 0.0, L)
    assert prob.get_val("fan_cowl_wetted_area")[0] == pytest.approx(S_cyl, rel=RTOL_QUAD)

    r1 = 0.5 * prob.get_val("core_cowl_max_diameter")[0]
    r2 = 0.7 * r1
    Lc = prob.get_val("core_cowl_length")[0]
    S_frustum = _revolution_area(lambda x: r1 + (r2 - r1) * x / Lc, lambda x: (r2 - r1) / Lc, Lc)
    assert prob.get_val("core_cowl_wetted_area")[0] == pytest.approx(S_frustum, rel=RTOL_QUAD)

    r = 0.5 * prob.get_val("plug_base_diameter")[0]
    Lp = prob.get_val("plug_length")[0]
    assert Lp == pytest.approx(1.3 * 2.0 * r, rel=RTOL_EXACT)
    S_cone = _revolution_area(lambda x: r * (1.0 - x / Lp), lambda x: -r / Lp, Lp)
    assert prob.get_val("plug_wetted_area")[0] == pytest.approx(S_cone, rel=RTOL_QUAD)
    # Cone lateral area = pi r l with slant height l = sqrt(r^2 + L^2) (solid geometry).
    assert prob.get_val("plug_wetted_area")[0] == pytest.approx(np.pi * r * np.hypot(r, Lp), rel=RTOL_EXACT)

    total = S_cyl + S_frustum + S_cone
    assert prob.get_val("nacelle_wetted_area")[0] == pytest.approx(total, rel=RTOL_QUAD)


def test_frustum_reduces_to_cylinder():
    """With equal end radii the frustum area pi (r1 + r2) sqrt((r1 - r2)^2 + L^2) becomes pi D L."""
    prob = _problem(core_exit_diameter_ratio=1.0)
    prob.run_model()
    D = prob.get_val("core_cowl_max_diameter")[0]
    L = prob.get_val("core_cowl_length")[0]
    assert prob.get_val("core_cowl_wetted_area")[0] == pytest.approx(np.pi * D * L, rel=RTOL_EXACT)


def _random_values(nn, seed):
    rng = np.random.default_rng(seed)
    return {name: rng.uniform(lo, hi, nn) for name, (lo, hi) in RANDOM_RANGES.items()}


@pytest.mark.parametrize("nn", [4, 1])
def test_partials_complex_step(nn):
    """Analytic partials against complex step at seeded random points."""
    prob = _problem(nn, **_random_values(nn, SEED))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("name, bad, pattern", [
    ("nacelle_diameter_ratio", 1.7, r"nacelle_diameter_ratio = 1.7 .*from 1 up to 1.6"),
    ("fan_tip_diameter", np.nan, r"fan_tip_diameter = nan m .*from 0.2 up to 5 m"),
    ("fan_cowl_length_ratio", 0.3, r"fan_cowl_length_ratio = 0.3 .*from 0.5 up to 3"),
    ("core_exit_diameter_ratio", 1.2, r"core_exit_diameter_ratio = 1.2 .*from 0.2 up to 1"),
    ("plug_diameter_ratio", 0.0, r"plug_diameter_ratio = 0 .*from 0.05 up to 1"),
    ("containment_allowance", -0.01, r"containment_allowance = -0.01 m .*from 0 up to 0.5 m"),
])
def test_bad_input_names_variable_and_range(name, bad, pattern):
    """Out-of-range or NaN input raises InputRangeError naming the variable, value and range."""
    prob = _problem(2)
    prob.set_val(name, np.array([RANDOM_RANGES[name][0], bad]))
    with pytest.raises(InputRangeError, match=pattern):
        prob.run_model()
