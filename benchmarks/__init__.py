"""Benchmarks of bypassopt (not installed): derivative accuracy and cost, optimisation cost, vectorized scaling.

Run them all with ``python -m benchmarks`` from the repository root (``--quick`` for tiny sizes). Each
``benchmark_<topic>.py`` has a documented builder and a ``run(quick=False) -> dict``; this module holds
the few helpers they share. Timings are reported as ratios measured side by side in the same run,
because absolute times on shared machines are noisy.
"""

import statistics
import sys
import time
import warnings
from pathlib import Path
from types import MethodType

import numpy as np
import openmdao.api as om

from bypassopt.scenario import model_inputs

# OpenMDAO notes that groups with a Newton solver are atomic for relevance: true, known, and noise here.
warnings.filterwarnings("ignore", message=".*nonlinear solver that computes gradients.*")

#: Repository root (the folder holding ``benchmarks/``).
REPO_ROOT = Path(__file__).resolve().parents[1]


def module_command(module, *args):
    """Command line that runs ``python -m MODULE ARGS``; run it with ``cwd=REPO_ROOT`` so ``benchmarks`` imports.

    The package's own modules live under ``src/``, so the checkout's root on ``sys.path`` shadows nothing:
    ``import bypassopt`` finds the installed package.
    """
    return [sys.executable, "-m", module, *map(str, args)]

#: Finite-difference settings used wherever a benchmark finite-differences: forward differences with
#: a step of 1e-6 relative to each element (OpenMDAO's default absolute step of 1e-6 would be a
#: relative step of 1e-11 on a pressure in Pa, all round-off).
FD_OPTIONS = {"form": "forward", "step": 1.0e-6, "step_calc": "rel_element"}

#: Relative floor of the robust relative error (see ``robust_rel_error``).
REL_ERROR_FLOOR = 1.0e-6


def robust_rel_error(approx, reference, natural_scale=0.0):
    """Largest ``|approx - reference| / max(|reference|, floor)`` over one (output, input) derivative block.

    ``floor = REL_ERROR_FLOOR * max(max|reference|, natural_scale)``: an entry is compared with itself,
    but never with less than one millionth of the block's largest entry or of ``natural_scale``, the
    derivative this input would need to move the output as much as the output's most influential
    input does (``max_k |dy/dx_k * x_k| / |x|``). So derivatives that are zero in exact arithmetic
    (and come out as round-off, 1e-15, on either side) do not show up as huge relative errors.
    """
    a = np.asarray(approx, dtype=float)
    b = np.asarray(reference, dtype=float)
    if a.size == 0:
        return 0.0
    scale = max(float(np.max(np.abs(b))), float(natural_scale))
    floor = max(REL_ERROR_FLOOR * scale, 1e-300)
    return float(np.max(np.abs(a - b) / np.maximum(np.abs(b), floor)))


def natural_scales(blocks, input_values):
    """``natural_scale`` of every (output, input) block of a Jacobian, for ``robust_rel_error``.

    ``blocks`` maps (output, input) to a reference derivative block (rows: output entries, columns:
    input entries); ``input_values`` maps each input to its value(s). An input whose values are all
    zero counts with magnitude 1.
    """
    mags = {}
    for (_, wrt), _block in blocks.items():
        x = np.abs(np.atleast_1d(np.asarray(input_values[wrt], dtype=float))).ravel()
        mags[wrt] = x
    effect = {}
    for (of, wrt), block in blocks.items():
        b = np.abs(np.atleast_2d(np.asarray(block, dtype=float)))
        x = mags[wrt]
        if b.shape[1] == x.size:
            eff = float(np.max(b * x[None, :])) if b.size else 0.0
        else:
            eff = float(np.max(b)) * float(np.max(x)) if b.size else 0.0
        effect[of] = max(effect.get(of, 0.0), eff)
    out = {}
    for (of, wrt) in blocks:
        xmax = float(np.max(mags[wrt])) if mags[wrt].size else 0.0
        out[of, wrt] = effect[of] / (xmax if xmax > 0.0 else 1.0)
    return out


def set_inputs(prob, scenario, num_nodes=1, rename=None, skip=()):
    """Set every scenario input the problem's model has, broadcast to ``num_nodes`` values.

    ``rename`` maps scenario model-input names to the problem's names (e.g. ``thrust_required`` ->
    ``Fn_required`` for a bare cycle); inputs the model lacks are ignored.
    """
    rename = rename or {}
    promoted = {meta["prom_name"] for meta in prob.model.get_io_metadata(iotypes="input").values()}
    for name, (value, units) in model_inputs(scenario).items():
        name = rename.get(name, name)
        if name in promoted and name not in skip:
            prob.set_val(name, np.full(num_nodes, float(value)), units=units)


def use_approx_partials(prob, method, **fd_options):
    """Replace every component's partials by ``declare_partials('*', '*', method=method)`` (benchmark only).

    Call after ``prob.setup()`` and before ``final_setup``/``run_model``: in OpenMDAO 3.45
    ``setup_partials`` runs in ``final_setup``, so replacing the bound ``setup_partials`` of each
    component instance there makes it declare dense approximated partials instead of its analytic
    ones, and ``_has_compute_partials = False`` stops OpenMDAO from calling the analytic
    ``compute_partials`` afterwards (it would overwrite the approximations). Independent-variable
    components (no inputs) are left alone. Returns the number of components switched.
    """
    options = dict(fd_options) if method == "fd" else {}
    count = 0
    for comp in prob.model.system_iter(recurse=True, typ=om.ExplicitComponent):
        if isinstance(comp, om.IndepVarComp):
            continue

        def setup_partials(self, _method=method, _options=options):
            self.declare_partials("*", "*", method=_method, **_options)

        comp.setup_partials = MethodType(setup_partials, comp)
        comp._has_compute_partials = False
        count += 1
    for comp in prob.model.system_iter(recurse=True, typ=om.ImplicitComponent):
        raise NotImplementedError(f"{comp.pathname}: implicit components are not switched to {method}")
    return count


def count_approx_components(prob):
    """Number of components whose partials are approximated (checks that ``use_approx_partials`` took)."""
    return sum(1 for comp in prob.model.system_iter(recurse=True, typ=om.ExplicitComponent)
               if getattr(comp, "_approx_schemes", None))


def median_time(func, repeat):
    """Median wall time of ``repeat`` calls of ``func()`` (seconds) and the last return value."""
    times, value = [], None
    for _ in range(max(1, repeat)):
        t0 = time.perf_counter()
        value = func()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), value


def target(name, measured, goal, met, note=""):
    """One target verdict for the results table."""
    return {"target": name, "measured": measured, "goal": goal, "met": bool(met), "note": note}
