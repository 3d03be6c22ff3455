"""Tests for the HP and LP spool power-demand component."""

import itertools

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.spool_power_comp import SpoolPowerComp
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-13
# Field-reference 4.3 tabulates tau_t to 6 significant digits.
RTOL_FIELD_REF = 2e-6
PARTIALS_TOL = 1e-10
SEED = 2718


def _problem(spool, nn=1, **values):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("spool", SpoolPowerComp(num_nodes=nn, spool=spool), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    for name, val in values.items():
        prob.set_val(name, val * np.ones(nn))
    return prob


def test_hp_demand_arithmetic():
    """HP demand = hpc_work/(1+BPR) + offtake/W2 (power balance per unit inlet flow)."""
    bpr = np.array([0.5, 5.0, 10.0, 30.0])
    work = np.array([3.0e5, 5.0e5, 6.5e5, 7.0e5])
    offtake = np.array([0.0, 1.0e5, 2.0e5, 2.0e6])
    W2 = np.array([20.0, 100.0, 250.0, 600.0])
    prob = _problem("HP", nn=4)
    prob.set_val("BPR", bpr)
    prob.set_val("hpc_work", work)
    prob.set_val("HP_power_offtake", offtake)
    prob.set_val("W2", W2)
    prob.run_model()
    # power conservation in absolute terms: core flow W2/(1+BPR) through the HPC plus the offtake
    power = W2 / (1.0 + bpr) * work + offtake
    np.testing.assert_allclose(prob.get_val("HP_power_demand") * W2, power, rtol=RTOL_EXACT)


def test_lp_demand_arithmetic_and_core_fraction():
    """LP demand from the stream powers: bypass flow*fan_bypass_work + core flow*(fan_core + booster)."""
    bpr = np.array([0.5, 5.0, 12.0])
    fb = np.array([4.0e4, 5.5e4, 7.0e4])
    fc = np.array([3.0e4, 4.0e4, 5.0e4])
    bw = np.array([0.0, 2.0e4, 6.0e4])
    prob = _problem("LP", nn=3)
    for name, val in (("BPR", bpr), ("fan_bypass_work", fb), ("fan_core_work", fc), ("booster_work", bw)):
        prob.set_val(name, val)
    prob.run_model()
    W2 = 137.0
    core, bypass = W2 / (1.0 + bpr), W2 * bpr / (1.0 + bpr)
    np.testing.assert_allclose(core + bypass, W2, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("LP_power_demand") * W2, bypass * fb + core * (fc + bw),
                               rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("core_flow_frac"), 1.0 / (1.0 + bpr), rtol=RTOL_EXACT)


def test_ideal_turbofan_turbine_work_field_reference():
    """HP + LP demand of the ideal turbofan equals cp*Tt4*(1 - tau_t)/(1 + alpha).

    Source: ideal-turbofan relations, Mattingly & von Ohain, *Elements of Propulsion*, ch. 5, as given
    in field-reference 4.2; check value tau_t = 0.508010 from field-reference 4.3 (M0 0.8, T0 216.65 K,
    gamma 1.4, cp 1004, Tt4 1600 K, pi_c 36, pi_f 1.6, alpha 10).
    """
    cp, T0, M0, gamma, Tt4, pi_c, pi_f, alpha = 1004.0, 216.65, 0.8, 1.4, 1600.0, 36.0, 1.6, 10.0
    tau_r = 1.0 + 0.5 * (gamma - 1.0) * M0**2
    tau_f = pi_f ** ((gamma - 1.0) / gamma)
    tau_c = pi_c ** ((gamma - 1.0) / gamma)
    Tt2 = T0 * tau_r
    fan_work = cp * Tt2 * (tau_f - 1.0)
    booster_work = cp * Tt2 * tau_f * (1.2 - 1.0)  # arbitrary split of the core compression
    hpc_work = cp * Tt2 * (tau_c - 1.0) - fan_work - booster_work
    hp = _problem("HP", BPR=alpha, hpc_work=hpc_work)
    lp = _problem("LP", BPR=alpha, fan_bypass_work=fan_work, fan_core_work=fan_work,
                  booster_work=booster_work)
    hp.run_model()
    lp.run_model()
    total = hp.get_val("HP_power_demand") + lp.get_val("LP_power_demand")
    tau_t = 0.508010  # field-reference 4.3
    np.testing.assert_allclose(total, cp * Tt4 * (1.0 - tau_t) / (1.0 + alpha), rtol=RTOL_FIELD_REF)


@pytest.mark.parametrize("spool, nn", list(itertools.product(("HP", "LP"), (1, 4))))
def test_partials(spool, nn):
    """Analytic partials against complex step at seeded random points."""
    rng = np.random.default_rng(SEED)
    prob = _problem(spool, nn=nn)
    prob.set_val("BPR", rng.uniform(0.5, 20.0, nn))
    if spool == "HP":
        prob.set_val("hpc_work", rng.uniform(3e5, 7e5, nn))
        prob.set_val("HP_power_offtake", rng.uniform(1e4, 1e6, nn))
        prob.set_val("W2", rng.uniform(50.0, 500.0, nn))
    else:
        for name in ("fan_bypass_work", "fan_core_work", "booster_work"):
            prob.set_val(name, rng.uniform(2e4, 8e4, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("spool", ("HP", "LP"))
@pytest.mark.parametrize("bpr", (0.0, -1.0))
def test_bpr_not_positive_raises(spool, bpr):
    prob = _problem(spool, BPR=bpr)
    with pytest.raises(InputRangeError, match=r"BPR = -?[01] must be above 0"):
        prob.run_model()


def test_bad_inputs_raise():
    prob = _problem("LP", nn=3)
    prob.set_val("BPR", [5.0, 31.0, 5.0])
    with pytest.raises(InputRangeError,
                       match=r"BPR = 31 at node 1 is outside the valid range \(above 0 up to 30\)"):
        prob.run_model()
    prob = _problem("LP", BPR=np.nan)
    with pytest.raises(InputRangeError, match=r"BPR = nan"):
        prob.run_model()
    prob = _problem("HP", HP_power_offtake=3.0e6)
    with pytest.raises(InputRangeError, match=r"HP_power_offtake = 3e\+06 W is outside the valid range "
                                              r"\(from 0 up to 2e\+06 W\)"):
        prob.run_model()
    prob = _problem("HP", W2=0.0)
    with pytest.raises(InputRangeError, match=r"W2 = 0 kg/s is outside the valid range \(above 0 kg/s\)"):
        prob.run_model()
    prob = _problem("LP", booster_work=np.nan)
    with pytest.raises(InputRangeError, match=r"booster_work = nan J/kg"):
        prob.run_model()
