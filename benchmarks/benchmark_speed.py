"""Speed as a user meets it: wall time of each command, the main job's phases, one model solve and its totals.

Each command runs as a user runs it, ``bypassopt <command> --out <folder> --quiet`` in a fresh process (the
installed console script, from a scratch folder), so the times include Python start-up, imports and set-up.
The main job's phases come from its ``manifest.json`` (``phase_seconds``, written by every run); the import
phase is the time of ``import bypassopt.cli`` in a fresh interpreter less that of an empty one. The model's solve
and totals are timed as an optimizer meets them (``benchmark_multipoint``'s protocol: a small step from the last
converged design). Targets are those of the speed issue, on this 2-core machine.
"""

import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

from benchmarks import target
from benchmarks.benchmark_multipoint import _time_model
from bypassopt.scenario import design_point_scenario, load_scenario

#: Commands timed, with their wall-time targets (s); ``quick`` times only ``evaluate``.
COMMANDS = {"optimize": 5.0, "evaluate": 1.5, "carpet": 3.0, "trade": 5.0, "reengine": 5.0}
#: Model-solve targets per evaluation (s) and the totals/solve ratio target.
SOLVE_TARGETS = {"design point": 0.050, "multipoint": 0.100}
TOTALS_RATIO_TARGET = 2.0
#: Timed repeats of the model solve (median).
REPEATS = 5


def _console_script():
    """The installed ``bypassopt`` command beside this interpreter (the one a user's shell finds)."""
    here = os.path.join(os.path.dirname(sys.executable), "bypassopt")
    return here if os.path.exists(here) else shutil.which("bypassopt")


def _time_command(command, scratch):
    """(wall seconds, exit code, manifest or None) of ``bypassopt COMMAND --out DIR --quiet``."""
    out = os.path.join(scratch, command)
    t0 = time.perf_counter()
    done = subprocess.run([_console_script(), command, "--out", out, "--quiet"], cwd=scratch, capture_output=True,
                          text=True)
    seconds = time.perf_counter() - t0
    manifest = os.path.join(out, "manifest.json")
    data = json.load(open(manifest, encoding="utf-8")) if os.path.exists(manifest) else None
    return seconds, done.returncode, data


def _import_seconds(scratch):
    """Wall time of ``import bypassopt.cli`` in a fresh interpreter, less an empty interpreter's (median of 3)."""
    def once(code):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", code], cwd=scratch, check=True)
        return time.perf_counter() - t0
    empty = sorted(once("pass") for _ in range(3))[1]
    full = sorted(once("import bypassopt.cli") for _ in range(3))[1]
    return full - empty


def run(quick=False):
    """Time the commands, the main job's phases and the model solve; return rows, results and verdicts."""
    t0 = time.perf_counter()
    rows, targets, result = [], [], {"benchmark": "speed", "quick": quick, "commands": {}}
    with tempfile.TemporaryDirectory(prefix="bypassopt-speed-") as scratch:
        imp = _import_seconds(scratch)
        rows.append(("import bypassopt.cli (fresh interpreter)", f"{imp:.2f} s", "less an empty interpreter's start"))
        result["import_s"] = imp
        for command, goal in COMMANDS.items():
            if quick and command != "evaluate":
                continue
            seconds, code, manifest = _time_command(command, scratch)
            result["commands"][command] = {"seconds": seconds, "exit_code": code}
            rows.append((f"bypassopt {command} --out D", f"{seconds:.1f} s", f"exit code {code}"))
            targets.append(target(f"{command} <= {goal:g} s wall", f"{seconds:.1f} s", f"<= {goal:g} s",
                                  code == 0 and seconds <= goal, "" if code == 0 else f"exit code {code}"))
            if command == "optimize" and manifest:
                phases = manifest.get("phase_seconds", {})
                result["optimize_phases"] = phases
                for phase, value in phases.items():
                    if phase != "total":
                        rows.append((f"optimize phase: {phase}", f"{value:.1f} s", "from manifest.json"))
    scenario = load_scenario()
    repeats = 2 if quick else REPEATS
    for label, sc in (("design point", design_point_scenario(scenario)), ("multipoint", scenario)):
        if quick and label == "multipoint":
            continue
        model_s, totals_s, n_of, n_wrt = _time_model(sc, repeats)
        ratio = totals_s / model_s
        result[f"solve_s_{label}"], result[f"totals_s_{label}"] = model_s, totals_s
        rows.append((f"model solve after a small design step, {label}", f"{1e3 * model_s:.0f} ms",
                     "the optimizer's next design (warm solvers)"))
        rows.append((f"total derivatives, {label}", f"{1e3 * totals_s:.0f} ms",
                     f"{n_of} outputs x {n_wrt} inputs; {ratio:.2f}x one solve"))
        goal = SOLVE_TARGETS[label]
        targets.append(target(f"model solve <= {1e3 * goal:.0f} ms, {label}", f"{1e3 * model_s:.0f} ms",
                              f"<= {1e3 * goal:.0f} ms", model_s <= goal, ""))
        targets.append(target(f"totals <= {TOTALS_RATIO_TARGET:g}x one solve, {label}", f"{ratio:.2f}x",
                              f"<= {TOTALS_RATIO_TARGET:g}x", ratio <= TOTALS_RATIO_TARGET, ""))
    result["rows"], result["targets"] = rows, targets
    result["seconds"] = time.perf_counter() - t0
    return result


if __name__ == "__main__":  # pragma: no cover
    print(json.dumps(run(quick=True), indent=1, default=str))
