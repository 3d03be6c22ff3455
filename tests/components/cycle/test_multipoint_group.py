"""Multipoint engine: design point + map-free off-design points, cooling sized at take-off; derivatives."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.multipoint_group import MultipointEngineGroup

DESIGN_RTOL = 1e-8
TOTALS_TOL = 1e-7

# Invented demo values (shared/scenario.md, demo twin 170): top of climb (design) M0.78, 10 668 m, ISA+10, 24 kN;
# take-off hot day SL, M0.25, ISA+15, 105 kN; cruise M0.78, 10 668 m, ISA, at 0.85 x the top-of-climb thrust.
TOP_OF_CLIMB = {"altitude": 10668.0, "Mach0": 0.78, "dT_isa": 10.0, "Fn_required": 24.0e3}
TAKEOFF = {"altitude": 0.0, "Mach0": 0.25, "dT_isa": 15.0, "Fn_required": 105.0e3}
CRUISE = {"altitude": 10668.0, "Mach0": 0.78, "dT_isa": 0.0, "Fn_required": 0.85 * 24.0e3}
# Cycle starting point of the demo (scenario.md).
CYCLE = {"BPR": 10.0, "FPR": 1.5, "OPR": 40.0, "Tt4": 1650.0}


def build(points, cooling_point="takeoff", nn=1):
    """Problem with the multipoint engine; ``points`` maps point name -> flight condition and thrust."""
    prob = om.Problem(reports=False)
    names = tuple(p for p in points if p != "design")
    prob.model.add_subsystem("engine", MultipointEngineGroup(num_nodes=nn, off_design_points=names,
                                                             cooling_point=cooling_point), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for point, cond in points.items():
        for k, v in cond.items():
            prob.set_val(f"{point}:{k}", v)
    for k, v in CYCLE.items():
        prob.set_val(k, v)
    return prob


@pytest.mark.parametrize("cooling_point", ["design", "takeoff"])
def test_design_point_reproduced(cooling_point):
    """Off-design points at the design flight condition and thrust reproduce the design point.

    With the cooling sized at a point that is the design point, the correlation sees the design's Tt3/Tt4, so
    the loop's solution is the design point's own correlation.
    """
    prob = build({"design": TOP_OF_CLIMB, "takeoff": TOP_OF_CLIMB, "cruise": TOP_OF_CLIMB}, cooling_point)
    prob.run_model()
    assert_no_approx_partials(prob.model)
    for point in ("takeoff", "cruise"):
        for k in ("Tt41", "TSFC", "Tt3", "W2"):
            np.testing.assert_allclose(prob.get_val(f"{point}:{k}"), prob.get_val(f"design:{k}"), rtol=DESIGN_RTOL,
                                       err_msg=f"{point}:{k}")
        for k in ("FPR", "OPR", "BPR", "Tt4"):
            np.testing.assert_allclose(prob.get_val(f"{point}:{k}"), prob.get_val(k), rtol=DESIGN_RTOL,
                                       err_msg=f"{point}:{k}")


@pytest.fixture(scope="module")
def demo():
    """Invented demo engine (scenario.md), cooling sized at the hot-day take-off."""
    prob = build({"design": TOP_OF_CLIMB, "takeoff": TAKEOFF, "cruise": CRUISE})
    prob.run_model()
    return prob


def test_takeoff_is_hottest(demo):
    """Hot-day take-off: higher T41 and T3 than top of climb (common practice: where temperature limits bind)."""
    g = demo.get_val
    assert g("takeoff:Tt41")[0] > g("design:Tt41")[0] + 100.0
    assert g("takeoff:Tt3")[0] > g("design:Tt3")[0] + 50.0
    np.testing.assert_allclose(g("takeoff:W2") * g("takeoff:Fn_specific"), TAKEOFF["Fn_required"], rtol=1e-12)


def test_cruise_tsfc_differs(demo):
    """Cruise at 0.85 x top-of-climb thrust: another TSFC and a lower T41 than the design point."""
    g = demo.get_val
    assert abs(g("cruise:TSFC")[0] / g("design:TSFC")[0] - 1.0) > 1e-3
    assert g("cruise:Tt41")[0] < g("design:Tt41")[0]


def test_cooling_sized_at_takeoff(demo):
    """Cooling fractions: the correlation at the take-off Tt3/Tt4, and the same at every point."""
    ref = build({"design": TOP_OF_CLIMB, "takeoff": TAKEOFF, "cruise": CRUISE}, cooling_point="design")
    ref.run_model()
    g = demo.get_val
    for k in ("vane", "rotor"):
        frac = g(f"cooling_frac_{k}")
        assert frac[0] > ref.get_val(f"design:cooling_frac_{k}")[0]  # sized where the gas is hottest
        for point in ("design", "takeoff", "cruise"):
            np.testing.assert_allclose(demo.get_val(f"{point}.hpt_{k}_cooling_frac"), frac, rtol=0.0)
    tt4_to, tt4_ref = demo.get_val("takeoff:Tt4")[0], ref.get_val("takeoff:Tt4")[0]
    assert tt4_to > tt4_ref  # more cooling air: more Tt4 for the same take-off thrust


@pytest.mark.parametrize("cooling_point", ["design", "takeoff"])
def test_totals_match_complex_step(cooling_point):
    """Take-off Tt41 and cruise TSFC w.r.t. the design cycle choices: analytic (Newton, direct) vs complex step."""
    prob = build({"design": TOP_OF_CLIMB, "takeoff": TAKEOFF, "cruise": CRUISE}, cooling_point)
    prob.run_model()
    assert_no_approx_partials(prob.model)
    data = prob.check_totals(of=["takeoff:Tt41", "cruise:TSFC"], wrt=list(CYCLE), method="cs", out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)


def test_bad_options():
    """An unknown cooling point and a point named like the design point are rejected."""
    with pytest.raises(ValueError, match="cooling_point"):
        build({"design": TOP_OF_CLIMB, "cruise": CRUISE}, cooling_point="takeoff")
    with pytest.raises(ValueError, match="off_design_points"):
        MultipointEngineGroup(off_design_points=("design",))


def test_nodes_are_independent_designs(demo):
    """Two engine designs at once (num_nodes=2): each node equals its own single-design run."""
    prob = build({"design": TOP_OF_CLIMB, "takeoff": TAKEOFF, "cruise": CRUISE}, nn=2)
    prob.set_val("Tt4", np.array([CYCLE["Tt4"], 1600.0]))
    prob.run_model()
    for k in ("takeoff:Tt41", "takeoff:Tt3", "cruise:TSFC", "design:TSFC", "cooling_frac_vane"):
        np.testing.assert_allclose(prob.get_val(k)[0], demo.get_val(k)[0], rtol=DESIGN_RTOL, err_msg=k)
    assert prob.get_val("takeoff:Tt41")[1] < prob.get_val("takeoff:Tt41")[0] - 1.0  # larger engine: cooler take-off
