"""Input checks that raise clear errors naming the variable, its value and the valid range.

Two kinds of check (issue "Runs you can trust"):

* ``check_range`` guards the arithmetic: a value outside its range would make the model's math fail
  (a NaN from a log or power, a negative temperature). It raises at once, on every evaluation, Newton
  iterates included, so no NaN ever reaches an output.
* ``check_validity`` guards the engineering validity of a correlation (a fan diameter up to 5 m, a
  Reynolds number the skin-friction law was fitted over). The math still works outside that range, so
  while a coupled solver iterates (inside ``deferred_validity_checks``, which the solvers of
  ``bypassopt.components.coupled_solver`` open around their solve) the check only records its result,
  keyed by component and variable, each evaluation overwriting the previous one. When the solve has
  converged, the records left are those of the converged state, and the solver raises for them. Outside
  such a solve (a component run on its own, ``compute_totals`` at the converged point) it raises at once,
  like ``check_range``. A NaN always raises at once.
"""

import contextlib

import math
import re

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


#: An inclusive bound accepts values this far past it, relative to max(1, |bound|): round-off, not input. A
#: solver's linear update can move an input that sits exactly on its bound (a containment allowance of 0 m)
#: by about 1e-35 (measured), which must not read as "outside the valid range".
ROUND_OFF_RTOL = 1e-12


#: Offending nodes listed in one message beyond the first.
MAX_NODES_LISTED = 200


def first_bad_node(bad):
    """Index of the first True element of ``bad`` and the message text that names the offending nodes.

    The text is '' for a single element, else ``' at node i'`` followed by ``' (also at nodes j, k, ...)'`` when
    more nodes fail (up to ``MAX_NODES_LISTED``), so that a vectorized caller can set all of them aside at once
    (``failing_nodes`` reads it back).
    """
    flat = np.atleast_1d(bad).ravel()
    i = int(np.argmax(flat))
    if flat.size == 1:
        return i, ""
    node = f" at node {i}"
    others = np.flatnonzero(flat)[1:]
    if others.size:
        shown = ", ".join(str(k) for k in others[:MAX_NODES_LISTED])
        more = f" and {others.size - MAX_NODES_LISTED} more" if others.size > MAX_NODES_LISTED else ""
        node += f" (also at nodes {shown}{more})"
    return i, node


def _range_message(name, value, lower, upper, units, lower_inclusive, upper_inclusive, where):
    """Return (message naming the first offending element, or None when all are valid; any NaN)."""
    v = np.real(np.asarray(value))
    lo_slack = ROUND_OFF_RTOL * max(1.0, abs(lower)) if np.isfinite(lower) else 0.0
    hi_slack = ROUND_OFF_RTOL * max(1.0, abs(upper)) if np.isfinite(upper) else 0.0
    # fast path (called tens of thousands of times per solve): the extremes decide; NaN or inf fails it
    if v.size:
        lo_v, hi_v = (v.item(), v.item()) if v.size == 1 else (float(v.min()), float(v.max()))
        if (math.isfinite(lo_v) and math.isfinite(hi_v)
                and (lo_v >= lower - lo_slack if lower_inclusive else lo_v > lower)
                and (hi_v <= upper + hi_slack if upper_inclusive else hi_v < upper)):
            return None, False
    flat = np.atleast_1d(v).ravel()
    bad_nan = ~np.isfinite(flat)
    lo_bad = flat < lower - lo_slack if lower_inclusive else flat <= lower
    hi_bad = flat > upper + hi_slack if upper_inclusive else flat >= upper
    bad = bad_nan | lo_bad | hi_bad
    if not np.any(bad):
        return None, False
    i, node = first_bad_node(bad)
    u = f" {units}" if units else ""
    lo_s = "" if lower == -np.inf else ("from " if lower_inclusive else "above ") + _fmt(lower)
    hi_s = "" if upper == np.inf else ("up to " if upper_inclusive else "below ") + _fmt(upper)
    rng = " ".join(s for s in (lo_s, hi_s) if s) + u
    prefix = f"{where}: " if where else ""
    return f"{prefix}{name} = {_fmt(flat[i])}{u}{node} is outside the valid range ({rng}).", bool(np.any(bad_nan))


_FIRST_NODE = re.compile(r"\bat node (\d+)\b")
_MORE_NODES = re.compile(r"\(also at nodes ([\d, ]+)")


def failing_nodes(message):
    """Node indices a range error's message names (``at node i (also at nodes j, k)``), in order; [] if none.

    For vectorized callers that set the failing designs aside and run the others again.
    """
    first = _FIRST_NODE.search(message)
    if not first:
        return []
    more = _MORE_NODES.search(message)
    others = [int(k) for k in more.group(1).replace(" ", "").split(",") if k] if more else []
    return [int(first.group(1))] + others


def check_range(name, value, lower=-np.inf, upper=np.inf, units="", lower_inclusive=True,
                upper_inclusive=True, where=""):
    """Raise ``InputRangeError`` if any element of ``value`` is NaN or outside [lower, upper].

    For ranges outside which the model's math fails; it raises on every evaluation (see the module
    docstring, and ``check_validity`` for engineering validity ranges). Works on real or complex arrays
    (the real part is checked, so complex-step runs are not disturbed). The message names the variable,
    the first offending value (and its node index when ``value`` is an array) and the valid range.

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
    msg, _ = _range_message(name, value, lower, upper, units, lower_inclusive, upper_inclusive, where)
    if msg is not None:
        raise InputRangeError(msg)


#: Open validity logs, innermost last (``deferred_validity_checks``).
_VALIDITY_LOGS = []


def check_validity(name, value, lower=-np.inf, upper=np.inf, units="", lower_inclusive=True,
                   upper_inclusive=True, where=""):
    """Check an engineering validity range: judged on the converged state of a coupled solve.

    Same arguments and message as ``check_range``. Inside ``deferred_validity_checks`` (a coupled
    solver's solve) the result is recorded under ``(where, name)`` and replaces the record of the previous
    evaluation; the solver raises for what is left once it has converged. Elsewhere it raises at once.
    A NaN raises at once everywhere. Use it only where the math stays finite outside the range.

    Parameters
    ----------
    name, value, lower, upper, units, lower_inclusive, upper_inclusive, where
        As for ``check_range``.
    """
    msg, nan = _range_message(name, value, lower, upper, units, lower_inclusive, upper_inclusive, where)
    if _VALIDITY_LOGS and not nan:
        _VALIDITY_LOGS[-1][(where, name)] = msg
    elif msg is not None:
        raise InputRangeError(msg)


@contextlib.contextmanager
def deferred_validity_checks():
    """Record ``check_validity`` results instead of raising; yield the log {(where, name): message or None}.

    Logs nest: a solve inside another solve's iteration hands its records to the enclosing log (its
    converged state is only an iterate of the outer solve). The caller raises with
    ``raise_validity_violations`` once the solve has converged.
    """
    log = {}
    _VALIDITY_LOGS.append(log)
    try:
        yield log
    finally:
        _VALIDITY_LOGS.pop()


def validity_violations(log):
    """Messages of the violations recorded in a validity log (its entries that are not None)."""
    return [msg for msg in log.values() if msg is not None]


def raise_validity_violations(log):
    """After a converged solve: pass the log up to an enclosing one, or raise ``InputRangeError`` for it.

    The error names every violated range of the converged state (variable, value and valid range).
    """
    if _VALIDITY_LOGS:
        _VALIDITY_LOGS[-1].update(log)
        return
    bad = validity_violations(log)
    if bad:
        raise InputRangeError(" ".join(bad) + " (judged on the converged solution)")


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
