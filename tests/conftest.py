"""Shared test set-up."""

import importlib
import os

import pytest

# The problem builders leave OpenMDAO's reports at OpenMDAO's default (on) for API users; the suite
# turns them off to save time (tests/problems/test_builders.py checks that reports=True still writes them).
os.environ.setdefault("OPENMDAO_REPORTS", "0")


@pytest.fixture(autouse=True)
def _in_tmp_path(tmp_path, monkeypatch):
    """Run every test in its own temporary folder, so OpenMDAO's output folders never land in the checkout."""
    monkeypatch.chdir(tmp_path)


CS_STEP = 1e-30


def _check_derivatives_vs_complex_step(fun, args, outputs, rtol, check_values=False):
    """Every ``out.d[(output, input)]`` of a gas/flow function vs complex step (elementwise over nodes).

    A derivative that is zero in exact arithmetic (dPs/dTt of a calorically perfect gas) shows rounding
    noise in both results, so the tolerance is floored at rtol * |out| / |in|. With ``check_values`` the
    complex-step run must also return the real run's values.
    """
    import numpy as np

    ref = fun(*args.values())
    names = list(args)
    for k, name in enumerate(names):
        cargs = [np.asarray(v, dtype=complex) for v in args.values()]
        cargs[k] = cargs[k] + 1j * CS_STEP
        res = fun(*cargs)
        for out in outputs:
            cs = np.imag(getattr(res, out)) / CS_STEP
            analytic = np.broadcast_to(ref.d[out, name], cs.shape)
            natural = np.max(np.abs(getattr(ref, out))) / np.max(np.abs(args[name]))
            np.testing.assert_allclose(analytic, cs, rtol=rtol, atol=rtol * max(np.max(np.abs(cs)), natural),
                                       err_msg=f"d{out}/d{name}")
            if check_values:
                np.testing.assert_allclose(np.real(getattr(res, out)), getattr(ref, out), rtol=1e-14)
    assert set(ref.d) == {(o, i) for o in outputs for i in names}


@pytest.fixture
def check_derivatives_vs_complex_step():
    """The complex-step checker of the gas and flow functions' derivative dicts."""
    return _check_derivatives_vs_complex_step


def _cantera_air_enthalpy(T):
    """Sensible enthalpy of 4-species dry air (J/kg) from Cantera's nasa_gas.yaml (NASA TM-4513 data)."""
    import numpy as np

    ct = importlib.import_module("cantera")
    spc = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    air = ct.Solution(thermo="ideal-gas", species=[spc[n] for n in ("N2", "O2", "Ar", "CO2")])
    # Dry air, 1976 US / ISO 2533 composition reduced to four species (field-reference 2.3).
    X = {"N2": 0.780863, "O2": 0.209482, "Ar": 0.009340, "CO2": 0.000314}
    h = []
    for Ti in np.atleast_1d(T):
        air.TPX = float(Ti), 101325.0, X
        h.append(air.enthalpy_mass)
    return np.array(h)


@pytest.fixture
def cantera_air_enthalpy():
    """Cantera dry-air sensible enthalpy, an outside reference (skips when Cantera is absent)."""
    return _cantera_air_enthalpy


#: Set to 1 (CI's pyOptSparse environment does) to make the tests that need pyoptsparse fail, not skip, without it.
REQUIRE_PYOPTSPARSE_ENV = "BYPASSOPT_REQUIRE_PYOPTSPARSE"


def _pyoptsparse_missing(optimizers):
    """Why pyoptsparse or one of the named optimizers cannot be used here, or '' when all load."""
    try:
        pyoptsparse = importlib.import_module("pyoptsparse")
    except ImportError as err:
        return (f"pyoptsparse is not installed ({err}); it is not on PyPI: conda-forge or a source build, "
                "see README 'Optimizers'")
    missing = []
    for name in optimizers:
        try:
            pyoptsparse.OPT(name)
        except Exception as err:  # noqa: BLE001 - pyoptsparse's Error or the optimizer's ImportError
            missing.append(f"{name} ({str(err).strip().splitlines()[-1] if str(err).strip() else type(err).__name__})")
    return f"pyoptsparse cannot load {', '.join(missing)}" if missing else ""


@pytest.fixture(scope="session")
def require_pyoptsparse():
    """``require_pyoptsparse(*optimizers)``: skip the test without pyoptsparse (or an optimizer), with the reason.

    With ``BYPASSOPT_REQUIRE_PYOPTSPARSE=1`` in the environment (CI's pyOptSparse run) it fails instead, so the
    optimizer tests can never pass there by being skipped.
    """

    def check(*optimizers):
        reason = _pyoptsparse_missing(optimizers)
        if not reason:
            return
        if os.environ.get(REQUIRE_PYOPTSPARSE_ENV) == "1":
            pytest.fail(f"{REQUIRE_PYOPTSPARSE_ENV}=1 but {reason}", pytrace=False)
        pytest.skip(reason)

    return check
