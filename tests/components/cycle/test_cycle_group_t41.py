"""The cycle with the HPT rotor inlet temperature T41 as input instead of T4."""

import numpy as np
import openmdao.api as om
from openmdao.utils.assert_utils import assert_check_totals, assert_no_approx_partials

from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup

RTOL = 1e-9
TOTALS_TOL = 1e-7


def _problem(mode, nn=1):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("cycle", TurbofanCycleGroup(num_nodes=nn, turbine_temperature_input=mode),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    prob.set_val("altitude", 10668.0, units="m")
    prob.set_val("dT_isa", 10.0, units="K")
    prob.set_val("Mach0", 0.78)
    prob.set_val("FPR", 1.5)
    prob.set_val("OPR", 40.0)
    prob.set_val("booster_PR", 1.8)
    prob.set_val("Fn_required", 24.0, units="kN")
    prob.set_val("HP_power_offtake", 150.0, units="kW")
    return prob


def test_t41_input_reproduces_t4_input():
    """Setting T41 to the value a T4-driven run produced gives back that T4 and the same cycle."""
    a = _problem("Tt4", nn=3)
    a.set_val("Tt4", np.array([1550.0, 1650.0, 1750.0]), units="K")
    a.run_model()
    b = _problem("Tt41", nn=3)
    b.set_val("Tt41_required", a.get_val("Tt41", units="K"), units="K")
    b.run_model()
    np.testing.assert_allclose(b.get_val("Tt4", units="K"), [1550.0, 1650.0, 1750.0], rtol=RTOL)
    for name in ("TSFC", "Fn_specific", "W2", "Tt3"):
        np.testing.assert_allclose(b.get_val(name), a.get_val(name), rtol=RTOL)
    # vane cooling lowers the rotor inlet temperature below the burner exit temperature
    assert np.all(a.get_val("Tt41") < a.get_val("Tt4"))


def test_t41_input_totals_match_complex_step():
    """Totals through the T4 balance (Newton, direct solver) agree with complex step."""
    prob = _problem("Tt41")
    prob.set_val("Tt41_required", 1600.0, units="K")
    prob.run_model()
    assert_no_approx_partials(prob.model)
    data = prob.check_totals(of=["TSFC", "Tt4", "W2"], wrt=["Tt41_required", "FPR", "OPR"], method="cs",
                             out_stream=None)
    assert_check_totals(data, atol=TOTALS_TOL, rtol=TOTALS_TOL)
