"""Run every benchmark, print a markdown table and write ``latest.json`` and ``latest.md``."""

import argparse
import datetime
import importlib
import json
import math
import os
import platform
import subprocess
import sys
import tempfile
import time
import traceback
from pathlib import Path

from benchmarks import REPO_ROOT

#: Benchmark modules (``benchmarks/benchmark_<name>.py``), run in this order.
BENCHMARKS = ("gradient_accuracy", "derivative_cost", "optimization_cost", "vectorized_scaling", "optimizers",
              "off_design", "multipoint", "framework_overhead", "speed", "mpi")
#: Default result folders of the full and the quick run.
RESULTS_DIR = REPO_ROOT / "benchmarks" / "results"
QUICK_RESULTS_DIR = RESULTS_DIR / "quick"


def machine_description():
    """Platform, Python and library versions, CPU count, load and date of this run."""
    import numpy
    import openmdao
    import scipy

    import bypassopt

    try:
        commit = subprocess.run(["git", "-C", str(REPO_ROOT), "rev-parse", "--short", "HEAD"], capture_output=True,
                                text=True, timeout=10).stdout.strip()
        dirty = bool(subprocess.run(["git", "-C", str(REPO_ROOT), "status", "--porcelain", "--untracked-files=no"],
                                    capture_output=True, text=True, timeout=10).stdout.strip())
    except (OSError, subprocess.SubprocessError):
        commit, dirty = "", False
    try:
        usable = len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not on Linux
        usable = os.cpu_count()
    return {"platform": platform.platform(), "processor": platform.processor() or platform.machine(),
            "python": platform.python_version(), "numpy": numpy.__version__, "scipy": scipy.__version__,
            "openmdao": openmdao.__version__, "bypassopt": bypassopt.__version__,
            "cpu_count": os.cpu_count(), "cpus_usable": usable,
            "load_average_1min_at_start": os.getloadavg()[0] if hasattr(os, "getloadavg") else None,
            "date": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
            "git_commit": commit + ("+uncommitted changes" if dirty else "")}


def _clean(value):
    """JSON-safe copy: tuples to lists, numpy scalars to Python, NaN/inf to None."""
    if isinstance(value, dict):
        return {str(k) if not isinstance(k, str) else k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):
        try:
            value = value.item()
        except (ValueError, AttributeError):
            return str(value)
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if value is None or isinstance(value, (bool, int, float, str)):
        return value
    return str(value)


def _cell(text):
    return str(text).replace("|", "\\|").replace("\n", " ")


def markdown(results, machine):
    """Markdown report: the measured quantities, then every target with its verdict."""
    mode = "quick (smoke-test sizes, not representative)" if any(r.get("quick") for r in results.values()) else "full"
    lines = [f"# bypassopt benchmarks ({mode})", "",
             f"{machine['date']}, bypassopt {machine['bypassopt']} ({machine['git_commit'] or 'no git'}), "
             f"Python {machine['python']}, NumPy {machine['numpy']}, SciPy {machine['scipy']}, "
             f"OpenMDAO {machine['openmdao']}, {machine['platform']}, {machine['cpus_usable']} usable CPUs "
             f"(load {machine['load_average_1min_at_start']}). Ratios are measured side by side in the same run; "
             "absolute times are secondary.", "",
             "| Benchmark | Quantity | Measured | Note |", "|---|---|---|---|"]
    for name, res in results.items():
        if "error" in res:
            lines.append(f"| {name} | ERROR | {_cell(res['error'].strip().splitlines()[-1])} | |")
            continue
        for quantity, measured, note in res["rows"]:
            lines.append(f"| {name} | {_cell(quantity)} | {_cell(measured)} | {_cell(note)} |")
        lines.append(f"| {name} | wall time of the benchmark | {res['seconds']:.0f} s | |")
    lines += ["", "| Benchmark | Target | Measured | Goal | Verdict | Note |", "|---|---|---|---|---|---|"]
    for name, res in results.items():
        for t in res.get("targets", []):
            verdict = "met" if t["met"] else "**missed**"
            lines.append(f"| {name} | {_cell(t['target'])} | {_cell(t['measured'])} | {_cell(t['goal'])} | "
                         f"{verdict} | {_cell(t['note'])} |")
    return "\n".join(lines) + "\n"


def run_all(quick=False, only=None):
    """Run the benchmarks (all, or those named in ``only``) in a scratch folder; {name: result or error}."""
    results = {}
    cwd = os.getcwd()
    with tempfile.TemporaryDirectory(prefix="bypassopt-bench-") as scratch:
        os.chdir(scratch)  # OpenMDAO may write output folders; keep them out of the working copy
        try:
            for name in BENCHMARKS:
                if only and name not in only:
                    continue
                print(f"[benchmarks] {name} ...", file=sys.stderr, flush=True)
                t0 = time.perf_counter()
                try:
                    module = importlib.import_module(f"benchmarks.benchmark_{name}")
                    results[name] = module.run(quick=quick)
                except Exception:  # noqa: BLE001 - one failing benchmark must not hide the others
                    results[name] = {"benchmark": name, "quick": quick, "error": traceback.format_exc(),
                                     "seconds": time.perf_counter() - t0}
                print(f"[benchmarks] {name} done in {time.perf_counter() - t0:.0f} s", file=sys.stderr, flush=True)
        finally:
            os.chdir(cwd)
    return results


def main(argv=None):
    """Command line: ``python -m benchmarks [--quick] [--out DIR] [--only NAME ...]``; exit 1 if one errored."""
    parser = argparse.ArgumentParser(prog="python -m benchmarks", description=__doc__)
    parser.add_argument("--quick", action="store_true", help="tiny sizes (seconds; used by the smoke test)")
    parser.add_argument("--out", default=None,
                        help=f"folder for latest.json and latest.md (default {RESULTS_DIR.relative_to(REPO_ROOT)}, "
                             f"or {QUICK_RESULTS_DIR.relative_to(REPO_ROOT)} with --quick)")
    parser.add_argument("--only", action="append", choices=BENCHMARKS, help="run only this benchmark (repeatable)")
    args = parser.parse_args(argv)
    out = Path(args.out).resolve() if args.out else (QUICK_RESULTS_DIR if args.quick else RESULTS_DIR)
    out.mkdir(parents=True, exist_ok=True)
    machine = machine_description()
    results = run_all(quick=args.quick, only=args.only)
    report = markdown(results, machine)
    (out / "latest.json").write_text(json.dumps(_clean({"machine": machine, "quick": args.quick,
                                                        "benchmarks": results}), indent=1) + "\n")
    (out / "latest.md").write_text(report)
    print(report)
    errors = [name for name, res in results.items() if "error" in res]
    for name in errors:
        print(f"[benchmarks] {name} failed:\n{results[name]['error']}", file=sys.stderr)
    return 1 if errors else 0
