"""Input checks that raise clear errors naming the variable, its value and the valid range."""

import numpy as np
import openmdao.api as om


class InputRangeError(om.AnalysisError, ValueError):
    """A value is NaN or outside the range a model is valid for.

    Subclasses ``om.AnalysisError`` so that drivers which can back off (SLSQP line searches,
    pyoptsparse) treat it as a failed evaluation, and ``ValueError`` so that scripts can catch it
    as ordinary bad input.
    """


def _fmt(x):
    return f"{x:.6g}"


def check_range(name, value, lower=-np.inf, upper=np.inf, units="", lower_inclusive=True,
                upper_inclusive=True, where=""):
    """Raise ``InputRangeError`` if any element of ``value`` is NaN or outside [lower, upper].

    Works on real or complex arrays (the real part is checked, so complex-step runs are not
    disturbed). The message names the variable, the first offending value (and its node index
    when ``value`` is an array) and the valid range.

    Parameters
    ----------
    name : str
        Variable name shown to the user.
    value : float or ndarray
        Value(s) to check.
    lower, upper : float
        Valid range.
    units : str
        Units shown in the message.
    lower_inclusive, upper_inclusive : bool
        Whether the bounds themselves are valid.
    where : str
        Optional context (component path or element name) prepended to the message.
    """
    v = np.real(np.asarray(value))
    flat = np.atleast_1d(v).ravel()
    bad_nan = ~np.isfinite(flat)
    lo_bad = flat < lower if lower_inclusive else flat <= lower
    hi_bad = flat > upper if upper_inclusive else flat >= upper
    bad = bad_nan | lo_bad | hi_bad
    if not np.any(bad):
        return
    i = int(np.argmax(bad))
    u = f" {units}" if units else ""
    node = f" at node {i}" if flat.size > 1 else ""
    lo_s = "" if lower == -np.inf else ("from " if lower_inclusive else "above ") + _fmt(lower)
    hi_s = "" if upper == np.inf else ("up to " if upper_inclusive else "below ") + _fmt(upper)
    rng = " ".join(s for s in (lo_s, hi_s) if s) + u
    prefix = f"{where}: " if where else ""
    raise InputRangeError(f"{prefix}{name} = {_fmt(flat[i])}{u}{node} is outside the valid range ({rng}).")


def check_positive_option(name, value):
    """Option validator (``check_valid=``): reject a ``num_nodes``-like integer below 1."""
    if value < 1:
        raise ValueError(f"Option '{name}' must be a positive integer, got {value}.")


def check_gas_option(name, value):
    """Option validator (``check_valid=``): require the gas-model interface of ``components/gas/thermo``."""
    for method in ("properties", "T_from_h", "T_from_phi", "check_temperature"):
        if not callable(getattr(value, method, None)):
            raise TypeError(f"Option '{name}' must be a gas model from bypassopt.components.gas.thermo "
                            f"(it lacks '{method}'); got {value!r}.")
