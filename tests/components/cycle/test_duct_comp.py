"""Tests for the duct component."""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.components.cycle.duct_comp import DuctComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.validation import InputRangeError

RTOL_EXACT = 1e-14
PARTIALS_TOL = 1e-10
SEED = 20250102
GASES = [ThermallyPerfectGas(), CaloricallyPerfectGas(cp=1004.0, gamma=1.4)]
GAS_IDS = ["thermally_perfect", "calorically_perfect"]
STATIONS = [("13", "17", "bypass_duct"), ("5", "7", "core_duct")]


def _problem(nn=1, gas=None, station_in="13", station_out="17", name="bypass_duct"):
    prob = om.Problem(reports=False)
    kwargs = {} if gas is None else {"gas": gas}
    prob.model.add_subsystem("duct", DuctComp(num_nodes=nn, station_in=station_in, station_out=station_out,
                                              name=name, **kwargs), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


@pytest.mark.parametrize("station_in, station_out, name", STATIONS)
def test_adiabatic_duct_with_pressure_loss(station_in, station_out, name):
    """Adiabatic duct: total temperature conserved, total pressure reduced by the loss.

    Source: definition of the duct total-pressure loss (Pt_in - Pt_out)/Pt_in and the steady-flow energy
    equation for an adiabatic, work-free duct (total temperature conserved).
    """
    Tt = np.array([330.0, 820.0])
    Pt = np.array([55000.0, 140000.0])
    loss = np.array([0.015, 0.008])
    prob = _problem(2, station_in=station_in, station_out=station_out, name=name)
    prob.set_val(f"Tt{station_in}", Tt, units="K")
    prob.set_val(f"Pt{station_in}", Pt, units="Pa")
    prob.set_val(f"{name}_pressure_loss", loss)
    prob.run_model()
    np.testing.assert_allclose(prob.get_val(f"Tt{station_out}", units="K"), Tt, rtol=RTOL_EXACT)
    np.testing.assert_allclose(prob.get_val(f"Pt{station_out}", units="Pa"), Pt * (1.0 - loss),
                               rtol=RTOL_EXACT)


def test_default_loss():
    """The default loss is 1.5 % (common practice 1-2 % for a bypass duct, field-reference 3.3)."""
    prob = _problem()
    prob.run_model()
    np.testing.assert_allclose(prob.get_val("Pt17"), 0.985 * 1.5e5, rtol=RTOL_EXACT)


@pytest.mark.parametrize("gas", GASES, ids=GAS_IDS)
@pytest.mark.parametrize("station_in, station_out, name", STATIONS)
@pytest.mark.parametrize("nn", [4, 1])
def test_partials(nn, station_in, station_out, name, gas):
    """Analytic partials match complex step."""
    rng = np.random.default_rng(SEED + nn)
    prob = _problem(nn, gas, station_in, station_out, name)
    prob.set_val(f"Tt{station_in}", rng.uniform(250.0, 1000.0, nn))
    prob.set_val(f"Pt{station_in}", rng.uniform(30000.0, 300000.0, nn))
    prob.set_val(f"{name}_pressure_loss", rng.uniform(0.0, 0.05, nn))
    prob.run_model()
    data = prob.check_partials(method="cs", out_stream=None)
    assert_check_partials(data, atol=PARTIALS_TOL, rtol=PARTIALS_TOL)


@pytest.mark.parametrize("value", [-0.01, 0.25, np.nan])
def test_bad_loss(value):
    """A loss outside 0-0.2 (or NaN) is refused with the variable and range named."""
    prob = _problem(2, station_in="5", station_out="7", name="core_duct")
    prob.set_val("core_duct_pressure_loss", [0.01, value])
    with pytest.raises(InputRangeError, match=r"core_duct_pressure_loss = .* at node 1 .*from 0 up to 0\.2"):
        prob.run_model()


def test_bad_entry_state():
    """A non-positive entry pressure or a temperature outside the gas range is refused."""
    prob = _problem()
    prob.set_val("Pt13", -1.0)
    with pytest.raises(om.AnalysisError, match=r"Pt13 = -1 Pa .*above 0 Pa"):
        prob.run_model()
    prob.set_val("Pt13", 1.0e5)
    prob.set_val("Tt13", 2500.0)
    with pytest.raises(ValueError, match=r"Tt13 = 2500 K .*from 200 up to 2400 K"):
        prob.run_model()
