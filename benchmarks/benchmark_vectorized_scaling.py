"""Vectorized scaling: designs per second of one vectorized run vs a Python loop over a scalar problem."""

import argparse
import json
import resource
import subprocess
import sys
import time

import numpy as np
import openmdao.api as om

from benchmarks import REPO_ROOT, module_command, set_inputs, target
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.problems.best_cycle import build_installed_model
from bypassopt.scenario import load_scenario

#: Vector lengths of the full run and of the quick (smoke-test) run.
SIZES = (10, 100, 1000, 10000, 100000)
QUICK_SIZES = (10,)
#: Designs timed in the scalar Python loop; the per-design time is extrapolated linearly to 1000.
LOOP_DESIGNS = 20
QUICK_LOOP_DESIGNS = 1
#: Targets: vectorized >= 100x faster than the loop at N = 1000; cost per design at N = 100 000 within
#: FLAT_FACTOR of the cost at N = 1000 ("flat"); peak memory (whole process) below 2 GB at N = 100 000.
SPEEDUP_TARGET = 100.0
SPEEDUP_N = 1000
FLAT_FACTOR = 1.5
MEMORY_LIMIT_MB = 2048.0
#: A size is not run when the memory of the size before it, scaled linearly, predicts more than this
#: (the machine must stay usable; linear scaling is an optimistic prediction for a sparse LU).
SKIP_ABOVE_MB = 4096.0
WORKER_TIMEOUT_S = 600
SEED = 7

MODELS = ("cycle", "installed")
#: 'shipped': the groups' default Newton + DirectSolver; 'block_gs': the groups' option
#: ``coupled_solver='gauss_seidel'`` (nonlinear block Gauss-Seidel), set up without derivatives (analysis
#: only: no Jacobian, no linear vectors), which is how a large carpet or design sweep would be run.
CONFIGS = ("shipped", "block_gs")


def designs(n):
    """n random designs in a feasible band: BPR 6-12, FPR in a band around 1 + 0.6 sqrt(10/BPR) (the
    best FPR falls as BPR rises), OPR 30-50; row by row, so the first k designs are the same for any n."""
    u = np.random.default_rng(SEED).uniform(size=(n, 3))
    bpr = 6.0 + 6.0 * u[:, 0]
    return {"BPR": bpr, "FPR": 1.0 + 0.6 * np.sqrt(10.0 / bpr) * (0.9 + 0.15 * u[:, 1]), "OPR": 30.0 + 20.0 * u[:, 2]}


def build_scaling_problem(model="cycle", num_nodes=1, config="shipped"):
    """Set-up problem evaluating ``num_nodes`` designs of the demo scenario in one vectorized run.

    Parameters
    ----------
    model : str
        'cycle': ``TurbofanCycleGroup`` (real gas, HP-offtake loop solved) sized to the scenario's
        thrust; 'installed': ``InstalledEngineGroup`` (cycle, nacelle, drag loop, mass, mission).
    num_nodes : int
        Designs evaluated at once.
    config : str
        'shipped' keeps the group's Newton solver and DirectSolver; 'block_gs' builds the group with
        ``coupled_solver='gauss_seidel'`` (``NonlinearBlockGS``) and sets the problem up with
        ``derivatives=False``: an analysis configuration in which no matrix is assembled or factorized
        and no linear vectors are allocated, so time and memory stay proportional to ``num_nodes``.
        The coupled loops (HP offtake per unit flow, nacelle drag vs thrust) are weak, so Gauss-Seidel
        converges in a handful of passes.
    """
    scenario = load_scenario()
    prob = om.Problem(reports=False)
    if config not in CONFIGS:
        raise ValueError(f"config = {config!r} is not one of {', '.join(CONFIGS)}")
    solver = "gauss_seidel" if config == "block_gs" else "newton"
    if model == "cycle":
        prob.model.add_subsystem("m", TurbofanCycleGroup(num_nodes=num_nodes, coupled_solver=solver), promotes=["*"])
    else:
        group = build_installed_model(scenario, num_nodes)
        group.options["coupled_solver"] = solver
        prob.model.add_subsystem("m", group, promotes=["*"])
        prob.model.set_input_defaults("Mach0", np.full(num_nodes, 0.78))
    prob.setup(derivatives=config != "block_gs")
    set_inputs(prob, scenario, num_nodes, rename={"thrust_required": "Fn_required"} if model == "cycle" else None)
    return prob


def _rss_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # kB on Linux


def measure_vectorized(model, config, n):
    """Time setup and one ``run_model`` of n designs; peak resident memory of this process (MB)."""
    baseline = _rss_mb()
    t0 = time.perf_counter()
    prob = build_scaling_problem(model, n, config)
    for name, value in designs(n).items():
        prob.set_val(name, value)
    prob.final_setup()
    t1 = time.perf_counter()
    prob.run_model()
    t2 = time.perf_counter()
    tsfc = np.array(prob.get_val("TSFC"))
    return {"model": model, "config": config, "n": n, "setup_s": t1 - t0, "run_s": t2 - t1,
            "us_per_design": 1e6 * (t2 - t1) / n, "designs_per_s": n / (t2 - t1),
            "baseline_rss_mb": baseline, "peak_rss_mb": _rss_mb(), "tsfc_first": tsfc[:5].tolist()}


def measure_loop(model, n):
    """Time a Python loop of n ``run_model`` calls of the scalar (num_nodes=1) problem, after one warm-up run."""
    prob = build_scaling_problem(model, 1, "shipped")
    prob.run_model()
    des = designs(n)
    tsfc = []
    t0 = time.perf_counter()
    for i in range(n):
        for name, value in des.items():
            prob.set_val(name, value[i])
        prob.run_model()
        tsfc.append(float(prob.get_val("TSFC")[0]))
    seconds = time.perf_counter() - t0
    return {"model": model, "config": "loop", "n": n, "run_s": seconds, "us_per_design": 1e6 * seconds / n,
            "designs_per_s": n / seconds, "peak_rss_mb": _rss_mb(), "tsfc_first": tsfc[:5]}


def _spawn(args, timeout=WORKER_TIMEOUT_S):
    """Run one measurement in a fresh Python process (clean peak RSS); return its JSON result."""
    cmd = module_command("benchmarks.benchmark_vectorized_scaling", "--worker", *args)
    try:
        done = subprocess.run(cmd, cwd=REPO_ROOT, capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return {"error": f"timed out after {timeout} s"}
    if done.returncode != 0:
        tail = (done.stderr or done.stdout).strip().splitlines()[-3:]
        return {"error": f"exit {done.returncode}: {' | '.join(tail)}"}
    return json.loads(done.stdout.strip().splitlines()[-1])


def _measure(args, spawn):
    """One measurement, in a fresh process (``spawn``) or, for the quick smoke run, in this one."""
    if spawn:
        return _spawn(args)
    kind, model, config, n = args
    try:
        return measure_loop(model, n) if kind == "loop" else measure_vectorized(model, config, n)
    except Exception as err:  # noqa: BLE001 - reported like a failed worker
        return {"error": repr(err)}


def run(quick=False):
    """Measure every model x solver configuration x size, and the scalar loops; return numbers and verdicts.

    Every measurement runs in a fresh Python process, so its peak resident memory is its own. The quick
    run (smoke test) spawns one worker and measures the rest in this process (memory then not clean).
    """
    t0 = time.perf_counter()
    sizes = QUICK_SIZES if quick else SIZES
    loop_n = QUICK_LOOP_DESIGNS if quick else LOOP_DESIGNS
    measured = {}
    spawned = [False]

    def spawn():
        first = not spawned[0]
        spawned[0] = True
        return first or not quick

    for model in MODELS:
        measured[model] = {"loop": _measure(["loop", model, "shipped", loop_n], spawn())}
        for config in CONFIGS:
            series, previous = [], None
            for n in sizes:
                if previous and "peak_rss_mb" in previous:
                    growth = previous["peak_rss_mb"] - previous["baseline_rss_mb"]
                    predicted = previous["baseline_rss_mb"] + growth * n / previous["n"]
                    if predicted > SKIP_ABOVE_MB:
                        series.append({"n": n, "skipped": f"not run: N = {previous['n']} used "
                                       f"{previous['peak_rss_mb']:.0f} MB, so about {predicted / 1024:.1f} GB "
                                       "or more is predicted"})
                        previous = None
                        continue
                if previous is None and series and "skipped" in series[-1]:
                    series.append({"n": n, "skipped": "not run: a smaller size was already skipped"})
                    continue
                result = _measure(["vec", model, config, n], spawn())
                result.setdefault("n", n)
                series.append(result)
                previous = result if "error" not in result else None
            measured[model][config] = series
    rows, targets, summary = [], [], {}
    for model in MODELS:
        loop = measured[model]["loop"]
        loop_us = loop.get("us_per_design", float("nan"))
        rows.append((f"{model}: Python loop over the scalar problem",
                     f"{loop_us / 1e3:.0f} ms/design" if "error" not in loop else loop["error"],
                     f"{loop_n} designs timed; 1000 extrapolated linearly"))
        for config in CONFIGS:
            series = measured[model][config]
            by_n = {r["n"]: r for r in series if "us_per_design" in r}
            cells = []
            for r in series:
                if "us_per_design" in r:
                    cells.append(f"N={r['n']}: {r['designs_per_s']:.0f}/s, {r['peak_rss_mb']:.0f} MB")
                else:
                    cells.append(f"N={r['n']}: {r.get('skipped') or r.get('error')}")
            rows.append((f"{model}, {config}: designs per second, peak RSS", "; ".join(cells), ""))
            n_speed = SPEEDUP_N if not quick else max(by_n) if by_n else None
            n_big = max(sizes)
            speedup = loop_us / by_n[n_speed]["us_per_design"] if n_speed in by_n else float("nan")
            flat = (by_n[n_big]["us_per_design"] / by_n[n_speed]["us_per_design"]
                    if n_big in by_n and n_speed in by_n else float("nan"))
            mem = by_n[n_big]["peak_rss_mb"] if n_big in by_n else float("nan")
            consistent = (max(abs(a / b - 1.0) for r in by_n.values()
                              for a, b in zip(r["tsfc_first"], loop["tsfc_first"]))
                          if by_n and "tsfc_first" in loop else float("nan"))
            summary[f"{model}/{config}"] = {"speedup_vs_loop": speedup, "speedup_n": n_speed,
                                            "cost_ratio_largest_vs_speedup_n": flat, "peak_rss_mb_largest": mem,
                                            "max_rel_diff_tsfc_vs_loop": consistent}
            missing = "" if n_big in by_n else next((r.get("skipped") or r.get("error") for r in series
                                                     if r["n"] == n_big), "")
            targets.append(target(f"{model}, {config}: >= 100x faster than the loop at N = {n_speed}",
                                  f"{speedup:.0f}x", f">= {SPEEDUP_TARGET:.0f}x", speedup >= SPEEDUP_TARGET,
                                  "loop per-design time extrapolated from "
                                  f"{loop_n} designs; same TSFC as the loop within {consistent:.0e}"))
            targets.append(target(f"{model}, {config}: cost per design flat up to N = {n_big}",
                                  f"{flat:.2f}x the cost at N = {n_speed}" if flat == flat else "not measured",
                                  f"<= {FLAT_FACTOR}x", flat <= FLAT_FACTOR, missing))
            targets.append(target(f"{model}, {config}: peak memory < 2 GB at N = {n_big}",
                                  f"{mem:.0f} MB" if mem == mem else "not measured", "< 2048 MB",
                                  mem < MEMORY_LIMIT_MB, missing))
    return {"benchmark": "vectorized_scaling", "quick": quick, "seconds": time.perf_counter() - t0,
            "sizes": list(sizes), "loop_designs": loop_n, "measured": measured, "summary": summary,
            "rows": rows, "targets": targets}


def _worker(argv):
    parser = argparse.ArgumentParser(prog="benchmark_vectorized_scaling --worker")
    parser.add_argument("kind", choices=("vec", "loop"))
    parser.add_argument("model", choices=MODELS)
    parser.add_argument("config", choices=CONFIGS)
    parser.add_argument("n", type=int)
    args = parser.parse_args(argv)
    if args.kind == "loop":
        result = measure_loop(args.model, args.n)
    else:
        result = measure_vectorized(args.model, args.config, args.n)
    print(json.dumps(result))


if __name__ == "__main__":  # pragma: no cover
    if len(sys.argv) > 1 and sys.argv[1] == "--worker":
        _worker(sys.argv[2:])
    else:
        print(json.dumps(run(quick="--quick" in sys.argv), indent=1, default=str))
