"""Framework overhead: the design-point cycle in plain vectorized NumPy against the OpenMDAO group, N = 1 and 10 000.

The same designs are evaluated twice: by ``benchmarks/numpy_cycle.evaluate_cycle`` (the package's own gas,
process and flow helpers chained in the cycle's order, the W2 loop closed by secant steps on 1/W2: the
arithmetic limit) and by ``TurbofanCycleGroup`` with its default options and solver (Newton with a first
Gauss-Seidel pass, direct linear solver, validity checks on the converged state). The ratio of their times at
each size, measured in one process with the NumPy calls timed before and after the group's, is the framework
overhead; the issue's target is to report it and keep it falling. The group is timed on a fresh solve (the
first ``run_model`` after set-up, set-up timed apart) and on a warm re-solve (``run_model`` again from the
solved state, same designs); the NumPy function likewise from no offtake and from the solution's W2
(``W2_guess``), and each warm time is compared with the other's. Each size runs in its own worker process in
the full run, so the group's peak memory is its own (the NumPy function's is traced); the quick (smoke) run
measures everything in this process.
"""

import argparse
import json
import resource
import subprocess
import sys
import time
import tracemalloc

import numpy as np
import openmdao.api as om

from benchmarks import REPO_ROOT, median_time, module_command, target
from benchmarks.benchmark_vectorized_scaling import designs
from benchmarks.numpy_cycle import CYCLE_INPUTS, default_inputs, evaluate_cycle
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.gas.thermo import ThermallyPerfectGas

#: Sizes of the full and the quick (smoke-test) run.
SIZES = (1, 10000)
QUICK_SIZES = (1, 100)
#: Timed repeats (median reported) at N = 1 and at larger N; a fresh solve needs a fresh set-up each time.
#: ``numpy`` repeats run twice, before and after the group's measurements.
REPEATS_SMALL = {"numpy": 11, "fresh": 3, "warm": 7}
REPEATS_LARGE = {"numpy": 2, "fresh": 1, "warm": 2}
QUICK_REPEATS = {"numpy": 2, "fresh": 1, "warm": 1}
#: The two implementations must agree to this (relative) on every compared output; a consistency check of two
#: implementations of the same physics, not an outside reference.
AGREEMENT_RTOL = 1.0e-8
#: Outputs compared between the two implementations.
COMPARED = ("TSFC", "Fn_specific", "W2", "fuel_flow", "Tt3", "Pt3", "Tt41", "Tt45", "Pt45", "Tt5", "Pt5")
WORKER_TIMEOUT_S = 900


def design_inputs(n):
    """The NumPy function's input dict for n designs: defaults, with BPR, FPR, OPR from the scaling benchmark."""
    inputs = default_inputs(n)
    inputs.update(designs(n))
    return inputs


def build_group_problem(inputs):
    """Set-up problem of ``TurbofanCycleGroup`` (default options) with every input set from ``inputs``.

    Parameters
    ----------
    inputs : dict
        The NumPy function's input dict (``design_inputs``): every name of ``CYCLE_INPUTS``, arrays of N.
    """
    n = len(inputs["BPR"])
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("m", TurbofanCycleGroup(num_nodes=n), promotes=["*"])
    prob.setup()
    for name, (_value, units) in CYCLE_INPUTS.items():
        prob.set_val(name, inputs[name], units=units)
    return prob


def _rss_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # kB on Linux


def _traced_peak_mb(func):
    """Peak of the memory Python and NumPy allocate during ``func()`` (tracemalloc; untimed), MB."""
    tracemalloc.start()
    try:
        func()
        return tracemalloc.get_traced_memory()[1] / 2**20
    finally:
        tracemalloc.stop()


def _time_numpy(inputs, repeats, into):
    """Append ``repeats`` times of a cold and of a warm (W2 of the solution as guess) call to ``into``."""
    for _ in range(repeats):
        t0 = time.perf_counter()
        cold = evaluate_cycle(inputs)
        t1 = time.perf_counter()
        warm = evaluate_cycle(inputs, W2_guess=cold["W2"])
        into["cold"].append(t1 - t0)
        into["warm"].append(time.perf_counter() - t1)
    return cold, warm


def measure_size(n, repeats):
    """Both implementations on the same n designs, in one process and interleaved in time.

    NumPy: peak traced memory (untimed call), then cold and warm calls timed before and after the group's
    measurements (medians of both sets, so a change of machine load during the run biases neither side).
    Group: set-up, fresh solve (first ``run_model`` after set-up, on a new problem each repeat), warm re-solve,
    Newton iterations, this process's peak RSS increase, and the agreement of its outputs with the NumPy ones.
    """
    inputs = design_inputs(n)
    rss_start = _rss_mb()
    numpy_peak = _traced_peak_mb(lambda: evaluate_cycle(inputs))
    numpy_times = {"cold": [], "warm": []}
    _time_numpy(inputs, repeats["numpy"], numpy_times)
    setups, fresh, prob = [], [], None
    for _ in range(max(1, repeats["fresh"])):
        t0 = time.perf_counter()
        prob = build_group_problem(inputs)
        prob.final_setup()
        t1 = time.perf_counter()
        prob.run_model()
        fresh.append(time.perf_counter() - t1)
        setups.append(t1 - t0)
    newton_iterations = int(prob.model.m.nonlinear_solver._iter_count)
    warm_s, _ = median_time(prob.run_model, repeats["warm"])
    om_peak = _rss_mb() - rss_start
    cold, warm = _time_numpy(inputs, repeats["numpy"], numpy_times)
    agreement = {name: float(np.max(np.abs(cold[name] - prob.get_val(name)) / np.abs(prob.get_val(name))))
                 for name in COMPARED}
    numpy_s, numpy_warm_s, fresh_s = (float(np.median(t)) for t in (numpy_times["cold"], numpy_times["warm"], fresh))
    return {"n": n,
            "numpy": {"seconds": numpy_s, "designs_per_s": n / numpy_s, "passes": int(cold["passes"]),
                      "warm_s": numpy_warm_s, "warm_designs_per_s": n / numpy_warm_s,
                      "warm_passes": int(warm["passes"]), "peak_traced_mb": numpy_peak},
            "openmdao": {"setup_s": float(np.median(setups)), "fresh_s": fresh_s, "fresh_designs_per_s": n / fresh_s,
                         "warm_s": warm_s, "warm_designs_per_s": n / warm_s, "newton_iterations": newton_iterations,
                         "peak_rss_increase_mb": om_peak},
            "max_rel_diff": agreement}


class CountingGas(ThermallyPerfectGas):
    """The default gas model, counting its property evaluations and temperature inversions (profiling only)."""

    def __init__(self):
        super().__init__()
        self.calls = {"properties": 0, "inversions": 0}

    def properties(self, T, far, check=True):
        """Count, then evaluate as ``ThermallyPerfectGas``."""
        self.calls["properties"] += 1
        return super().properties(T, far, check=check)

    def _invert(self, target, far, which, label):
        self.calls["inversions"] += 1
        return super()._invert(target, far, which, label)


def count_gas_calls():
    """Gas-model calls of one N = 1 solve: the NumPy function's and the group's fresh solve (untimed)."""
    inputs = design_inputs(1)
    gas = CountingGas()
    evaluate_cycle(inputs, gas=gas)
    counts = {"numpy": dict(gas.calls)}
    gas = CountingGas()
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("m", TurbofanCycleGroup(num_nodes=1, gas=gas), promotes=["*"])
    prob.setup()
    for name, (_value, units) in CYCLE_INPUTS.items():
        prob.set_val(name, inputs[name], units=units)
    prob.final_setup()
    gas.calls.update(properties=0, inversions=0)
    prob.run_model()
    counts["openmdao"] = dict(gas.calls)
    return counts


def _repeats(n, quick):
    if quick:
        return QUICK_REPEATS
    return REPEATS_SMALL if n == 1 else REPEATS_LARGE


def _spawn(n):
    """Run ``measure_size(n)`` in a fresh Python process (its own peak RSS); return its JSON result."""
    cmd = module_command("benchmarks.benchmark_framework_overhead", "--worker", n)
    try:
        done = subprocess.run(cmd, cwd=REPO_ROOT, capture_output=True, text=True, timeout=WORKER_TIMEOUT_S)
    except subprocess.TimeoutExpired:
        raise RuntimeError(f"N = {n} worker timed out after {WORKER_TIMEOUT_S} s") from None
    if done.returncode != 0:
        tail = (done.stderr or done.stdout).strip().splitlines()[-3:]
        raise RuntimeError(f"N = {n} worker: exit {done.returncode}: {' | '.join(tail)}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def _rate(x):
    return f"{x:,.0f}/s" if x >= 10 else f"{x:.1f}/s"


def _time(s):
    return f"{1e3 * s:.1f} ms" if s < 1 else f"{s:.2f} s"


def run(quick=False):
    """Time both implementations at each size; return rows, the overhead ratios and the agreement verdict."""
    t0 = time.perf_counter()
    sizes = QUICK_SIZES if quick else SIZES
    if quick:  # in this process: memory figures then include what ran before
        measured = [measure_size(n, QUICK_REPEATS) for n in sizes]
    else:
        measured = [_spawn(n) for n in sizes]
    counts = count_gas_calls()
    numpy_by_n = {r["n"]: r["numpy"] for r in measured}
    om_by_n = {r["n"]: r["openmdao"] for r in measured}
    diff_by_n = {r["n"]: r["max_rel_diff"] for r in measured}
    ratio_fresh = {n: om_by_n[n]["fresh_s"] / numpy_by_n[n]["seconds"] for n in sizes}
    ratio_warm = {n: om_by_n[n]["warm_s"] / numpy_by_n[n]["warm_s"] for n in sizes}
    worst = {n: max(diff_by_n[n].values()) for n in sizes}
    memory = ("NumPy: tracemalloc peak of one call; OpenMDAO: peak RSS increase of the worker process"
              + (" (quick run: one process, earlier peaks hide later ones)" if quick else ""))

    def per_n(fmt):
        return "; ".join(f"N={n}: {fmt(n)}" for n in sizes)

    rows = [
        ("NumPy function (arithmetic limit), fresh: designs/s",
         per_n(lambda n: f"{_rate(numpy_by_n[n]['designs_per_s'])} ({_time(numpy_by_n[n]['seconds'])})"),
         f"W2 loop from no offtake: {numpy_by_n[sizes[0]]['passes']} passes of the W2-dependent part "
         "(secant on 1/W2)"),
        ("NumPy function, warm (W2 of the solution as the guess): designs/s",
         per_n(lambda n: f"{_rate(numpy_by_n[n]['warm_designs_per_s'])} ({_time(numpy_by_n[n]['warm_s'])})"),
         "passes of the W2-dependent part: " + ", ".join(f"{numpy_by_n[n]['warm_passes']} at N={n}"
                                                         for n in sizes)),
        ("OpenMDAO group, fresh solve: designs/s",
         per_n(lambda n: f"{_rate(om_by_n[n]['fresh_designs_per_s'])} ({_time(om_by_n[n]['fresh_s'])})"),
         "first run_model after set-up; Newton iterations: "
         + ", ".join(f"{om_by_n[n]['newton_iterations']} at N={n}" for n in sizes)),
        ("OpenMDAO group, warm re-solve: designs/s",
         per_n(lambda n: f"{_rate(om_by_n[n]['warm_designs_per_s'])} ({_time(om_by_n[n]['warm_s'])})"),
         "run_model again from the solved state, same designs"),
        ("OpenMDAO group: setup + final_setup", per_n(lambda n: _time(om_by_n[n]["setup_s"])), "not in the ratios"),
        ("framework overhead: OpenMDAO / NumPy time, fresh solve", per_n(lambda n: f"{ratio_fresh[n]:.1f}x"),
         "keep it falling"),
        ("framework overhead: OpenMDAO / NumPy time, warm re-solve", per_n(lambda n: f"{ratio_warm[n]:.1f}x"), ""),
        ("peak memory at the largest N",
         f"NumPy {numpy_by_n[sizes[-1]]['peak_traced_mb']:.0f} MB, "
         f"OpenMDAO {om_by_n[sizes[-1]]['peak_rss_increase_mb']:.0f} MB", memory),
        ("gas-model calls of one N = 1 solve (property evaluations + temperature inversions)",
         f"NumPy {counts['numpy']['properties']} + {counts['numpy']['inversions']}, OpenMDAO fresh solve "
         f"{counts['openmdao']['properties']} + {counts['openmdao']['inversions']}", "counted in a separate run"),
        ("agreement: max relative difference of TSFC",
         per_n(lambda n: f"{diff_by_n[n]['TSFC']:.1e}"),
         f"two implementations of the same physics (consistency, not an outside reference); all of "
         f"{', '.join(COMPARED)}: " + per_n(lambda n: f"{worst[n]:.1e}")),
    ]
    targets = [
        target("framework overhead (OpenMDAO / NumPy time, fresh solve)",
               per_n(lambda n: f"{ratio_fresh[n]:.1f}x"), "report; keep it falling", True,
               f"a reported ratio, no pass/fail; warm re-solve {per_n(lambda n: f'{ratio_warm[n]:.1f}x')}"),
        target("NumPy function and OpenMDAO group agree", f"{max(worst.values()):.1e}", f"<= {AGREEMENT_RTOL:.0e}",
               max(worst.values()) <= AGREEMENT_RTOL, f"max relative difference over {', '.join(COMPARED)}"),
    ]
    return {"benchmark": "framework_overhead", "quick": quick, "seconds": time.perf_counter() - t0,
            "sizes": list(sizes), "measured": measured, "gas_calls": counts,
            "ratio_fresh": {str(n): v for n, v in ratio_fresh.items()},
            "ratio_warm": {str(n): v for n, v in ratio_warm.items()}, "rows": rows, "targets": targets}


def _worker(argv):
    parser = argparse.ArgumentParser(prog="benchmark_framework_overhead --worker")
    parser.add_argument("n", type=int)
    args = parser.parse_args(argv)
    print(json.dumps(measure_size(args.n, _repeats(args.n, quick=False))))


if __name__ == "__main__":  # pragma: no cover
    if len(sys.argv) > 1 and sys.argv[1] == "--worker":
        _worker(sys.argv[2:])
    else:
        print(json.dumps(run(quick="--quick" in sys.argv), indent=1, default=str))
