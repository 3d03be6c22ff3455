"""Smoke test of the benchmarks: each runs at its quick sizes, and so does the runner, so they never rot.

No timing is asserted (machines are noisy); only that every benchmark runs and reports what it should.
"""

import importlib
import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:  # benchmarks/ is not installed: import it from the checkout
    # appended, not prepended: the checkout's bypassopt/ folder must not shadow the installed package
    sys.path.append(str(ROOT))

NAMES = ("gradient_accuracy", "derivative_cost", "optimization_cost", "vectorized_scaling", "optimizers", "off_design",
         "multipoint", "framework_overhead", "speed", "mpi")
RUNNER_TIMEOUT_S = 600


@pytest.mark.parametrize("name", NAMES)
def test_benchmark_runs_quick(name):
    """run(quick=True) returns its measurements, table rows and target verdicts."""
    module = importlib.import_module(f"benchmarks.benchmark_{name}")
    assert module.__doc__ and module.run.__doc__
    result = module.run(quick=True)
    assert result["benchmark"] == name and result["quick"] is True
    assert result["rows"] and all(len(row) == 3 for row in result["rows"])
    assert result["targets"]
    for t in result["targets"]:
        assert set(t) == {"target", "measured", "goal", "met", "note"} and isinstance(t["met"], bool)
    json.dumps(result, default=str)


def test_gradient_accuracy_covers_every_component_class():
    """The accuracy benchmark finds every component class of the shipped code (none fails to import)."""
    from benchmarks.benchmark_gradient_accuracy import component_classes

    classes = component_classes()
    assert not [k for k in classes if k.startswith("import error")], classes
    assert {"FanComp", "NozzleComp", "MissionFuelComp", "WingSizingComp"} <= set(classes)


def test_runner_quick_writes_results(tmp_path):
    """``python -m benchmarks --quick --out DIR`` exits 0 and writes latest.json and latest.md."""
    out = tmp_path / "results"
    from benchmarks import module_command

    done = subprocess.run(module_command("benchmarks", "--quick", "--out", out), cwd=ROOT, capture_output=True,
                          text=True, timeout=RUNNER_TIMEOUT_S)
    assert done.returncode == 0, done.stderr[-3000:]
    data = json.loads((out / "latest.json").read_text())
    assert set(data["benchmarks"]) == set(NAMES)
    for key in ("platform", "python", "numpy", "openmdao", "cpu_count", "date"):
        assert data["machine"][key]
    table = (out / "latest.md").read_text()
    assert "| Benchmark | Target | Measured | Goal | Verdict | Note |" in table
    assert "| Benchmark | Target |" in done.stdout
