"""Tests for the compressor component (booster and HPC)."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.compressor_comp import CompressorComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-12
# Field-reference 3.2 and 4.4 print temperatures to 3 decimals and works to 3 decimals in kJ/kg.
RTOL_FIELD_REF = 2e-6
ATOL_FIELD_REF_WORK = 5e-4  # kJ/kg
# Field-reference 3.2 prints isentropic efficiencies to 5 decimals.
ATOL_FIELD_REF_EFF = 5e-6
# The gas module and Cantera use the same NASA 7-coefficient data; they differ only in the last digits of
# the air composition and of the molar masses.
RTOL_CANTERA = 1e-6
PARTIALS_TOL = 1e-10
SEED = 20250104
CP, GAMMA = 1004.0, 1.4
GASES = [ThermallyPerfectGas(), CaloricallyPerfectGas(cp=CP, gamma=GAMMA)]
GAS_IDS = ["thermally_perfect", "calorically_perfect"]
HPC = {"station_in": "25", "station_out": "3", "name": "hpc"}
BOOSTER = {"station_in": "21", "station_out": "25", "name": "booster"}


def _problem(nn=1, gas=None, ratio_from="PR", stations=None):
    prob = om.Problem(reports=False)
    kwargs = dict(stations or HPC)
    if gas is not None:
        kwargs["gas"] = gas
    prob.model.add_subsystem("comp", CompressorComp(num_nodes=nn, ratio_from=ratio_from, **kwargs),
                             promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def test_thermally_perfect_check_values():
    """Thermally perfect gas: field-reference 3.2 check values.

    Source: field-reference 3.2 (variable-cp dry air, Cantera nasa_gas, computed there):
    T1 = 288.15 K, pi = 40, e = 0.90 -> T2 = 891.206 K, dh = 634.970 kJ/kg;
    T1 = 250 K, pi = 50, e = 0.91 -> T2 = 825.600 K, dh = 600.273 kJ/kg.
    """
    prob = _problem(2, ThermallyPerfectGas())
    prob.set_val("Tt25", [288.15, 250.0], units="K")
    prob.set_val("Pt25", [101325.0, 50000.0], units="Pa")
    prob.set_val("hpc_PR", [40.0, 50.0])
    prob.set_val("hpc_eff_poly", [0.90, 0.91])
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Tt3", units="K"), [891.206, 825.600], rtol=RTOL_FIELD_REF)
    np.testing.assert_allclose(prob.get_val("hpc_work", units="kJ/kg"), [634.970, 600.273], rtol=0.0,
                               atol=ATOL_FIELD_REF_WORK)
    np.testing.assert_allclose(prob.get_val("Pt3"), [40.0 * 101325.0, 50.0 * 50000.0], rtol=RTOL_EXACT)


def test_work_equals_cantera_enthalpy_rise(cantera_air_enthalpy):
    """Conservation: the work is the enthalpy rise h(Tt_out) - h(Tt_in), here from Cantera (nasa_gas.yaml)."""
    prob = _problem(3, ThermallyPerfectGas(), stations=BOOSTER)
    Tt21 = np.array([260.0, 320.0, 350.0])
    prob.set_val("Tt21", Tt21)
    prob.set_val("booster_PR", [1.0, 1.8, 3.0])
    prob.set_val("booster_eff_poly", [0.89, 0.90, 0.91])
    prob.run_model()
    dh = cantera_air_enthalpy(prob.get_val("Tt25")) - cantera_air_enthalpy(Tt21)
    np.testing.assert_allclose(prob.get_val("booster_work"), dh, rtol=RTOL_CANTERA, atol=1e-9)
    # pressure ratio 1: no compression (to round-off of the inverse T(phi) solve, which differs by an ulp
    # between NumPy versions)
    np.testing.assert_allclose(prob.get_val("Tt25")[0], Tt21[0], rtol=1e-13)


@pytest.mark.parametrize("pr, e, eta_ref", [(20.0, 0.90, 0.85216), (40.0, 0.90, 0.83983),
                                            (40.0, 0.91, 0.85569)])
def test_calorically_perfect_closed_form(pr, e, eta_ref):
    """Calorically perfect gas: closed-form temperature ratio and isentropic efficiency.

    Source: constant-gamma polytropic relations (field-reference 3.1; Saravanamuttoo et al., Gas Turbine
    Theory): T2/T1 = pi**((g-1)/(g e)), w = cp (T2 - T1); the isentropic efficiency
    (pi**((g-1)/g) - 1)/(T2/T1 - 1) reproduces the field-reference 3.2 values (equal to
    fluids.compressible.isentropic_efficiency).
    """
    prob = _problem(1, CaloricallyPerfectGas(cp=CP, gamma=GAMMA))
    Tt25 = 300.0
    prob.set_val("Tt25", Tt25)
    prob.set_val("hpc_PR", pr)
    prob.set_val("hpc_eff_poly", e)
    prob.run_model()
    k = (GAMMA - 1.0) / GAMMA
    tau = prob.get_val("Tt3")[0] / Tt25
    np.testing.assert_allclose(tau, pr ** (k / e), rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val("hpc_work"), CP * (tau - 1.0) * Tt25, rtol=RTOL_EXACT)
    np.testing.assert_allclose((pr**k - 1.0) / (tau - 1.0), eta_ref, rtol=0.0, atol=ATOL_FIELD_REF_EFF)


def test_opr_mode_parametric_check_case():
    """OPR mode with a calorically perfect gas: field-reference 4.4 check case.

    Source: field-reference 4.4 (constant-cp parametric check case, computed there): T0 = 216.65 K,
    M0 = 0.8 (tau_r = 1.128), pi_c = 36, e_c = 0.90, gamma 1.4 -> tau_c = 3.11935, Tt3 = 762.311 K.
    The whole compression is given to the HPC (entry state equal to the fan-face state).
    """
    prob = _problem(1, CaloricallyPerfectGas(cp=CP, gamma=GAMMA), ratio_from="OPR")
    Tt2 = 216.65 * 1.128
    prob.set_val("Tt25", Tt2)
    prob.set_val("Pt25", 30000.0)
    prob.set_val("Pt2", 30000.0)
    prob.set_val("OPR", 36.0)
    prob.set_val("hpc_eff_poly", 0.90)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Tt3", units="K"), 762.311, rtol=RTOL_FIELD_REF)
    np.testing.assert_allclose(prob.get_val("Tt3")[0] / Tt2, 3.11935, rtol=RTOL_FIELD_REF)
    np.testing.assert_allclose(prob.get_val("hpc_PR"), 36.0, rtol=RTOL_EXACT)


def test_opr_mode_pressure_bookkeeping():
    """With ratio_from='OPR', Pt3 = OPR*Pt2 exactly and hpc_PR = OPR*Pt2/Pt25."""
    prob = _problem(2, ThermallyPerfectGas(), ratio_from="OPR")
    prob.set_val("Pt2", [30000.0, 101325.0])
    prob.set_val("Pt25", [70000.0, 250000.0])
    prob.set_val("OPR", [45.0, 30.0])
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("Pt3"), np.array([45.0 * 30000.0, 30.0 * 101325.0]))
    np.testing.assert_allclose(prob.get_val("hpc_PR"), [45.0 * 30000.0 / 70000.0, 30.0 * 101325.0 / 250000.0],
                               rtol=RTOL_EXACT)


def test_default_efficiency_option():
    """The default of the efficiency input comes from option eff_poly_default."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("hpc", CompressorComp(eff_poly_default=0.91, **HPC), promotes=["*"])
    prob.setup()
    np.testing.assert_allclose(prob.get_val("hpc_eff_poly"), 0.91, rtol=RTOL_EXACT)


@pytest.mark.parametrize("gas", GASES, ids=GAS_IDS)
@pytest.mark.parametrize("ratio_from", ["PR", "OPR"])
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, ratio_from, gas):
    """Analytic partials match complex step for both gas models and both pressure-ratio options."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas, ratio_from)
    prob.set_val("Tt25", rng.uniform(300.0, 420.0, nn))
    Pt2 = rng.uniform(20000.0, 100000.0, nn)
    prob.set_val("Pt25", Pt2 * rng.uniform(1.5, 4.0, nn))
    prob.set_val("hpc_eff_poly", rng.uniform(0.88, 0.93, nn))
    if ratio_from == "PR":
        prob.set_val("hpc_PR", rng.uniform(1.0, 25.0, nn))
    else:
        prob.set_val("Pt2", Pt2)
        prob.set_val("OPR", rng.uniform(20.0, 60.0, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


def test_opr_too_low():
    """An OPR not above the pressure ratio reached upstream (fan core side x booster) is refused."""
    prob = _problem(2, ratio_from="OPR")
    prob.set_val("Pt2", [30000.0, 30000.0])
    prob.set_val("Pt25", [70000.0, 70000.0])
    prob.set_val("OPR", [40.0, 2.0])
    with pytest.raises(InputRangeError, match=r"OPR = 2 at node 1 is not above the fan core-side and booster "
                                              r"pressure ratio product Pt25/Pt2 = 2\.33333"):
        prob.run_model()


@pytest.mark.parametrize("value", [1.0, 0.5, 150.0, np.nan])
def test_bad_opr(value):
    """OPR outside (1, 100] or NaN is refused with the variable and range named."""
    prob = _problem(2, ratio_from="OPR")
    prob.set_val("OPR", [40.0, value])
    with pytest.raises(InputRangeError, match=r"OPR = .* at node 1 .*above 1 up to 100"):
        prob.run_model()


@pytest.mark.parametrize("value", [0.99, 120.0, np.nan])
def test_bad_pressure_ratio(value):
    """A pressure ratio outside 1-100 (or NaN) is refused with the variable and range named."""
    prob = _problem(2, stations=BOOSTER)
    prob.set_val("booster_PR", [1.5, value])
    with pytest.raises(ValueError, match=r"booster_PR = .* at node 1 .*from 1 up to 100"):
        prob.run_model()


def test_bad_efficiency():
    """A polytropic efficiency outside 0.5-1 is refused with the variable named."""
    prob = _problem(1)
    prob.set_val("hpc_eff_poly", 0.3)
    with pytest.raises(om.AnalysisError, match=r"hpc_eff_poly = 0\.3 .*from 0\.5 up to 1"):
        prob.run_model()


def test_exit_temperature_outside_gas_range():
    """An exit temperature beyond the gas model's range names the exit station."""
    prob = _problem(1)
    prob.set_val("Tt25", 900.0)
    prob.set_val("hpc_PR", 60.0)
    with pytest.raises(InputRangeError, match=r"hpc exit temperature Tt3 is outside the gas model's range"):
        prob.run_model()


def test_opr_mode_needs_an_entry_station_other_than_2():
    """ratio_from='OPR' with the entry at station 2 would declare Pt2 twice: refused at setup."""
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("comp", CompressorComp(station_in="2", station_out="3", ratio_from="OPR"))
    with pytest.raises(ValueError, match=r"entry station must differ from 2"):
        prob.setup()
