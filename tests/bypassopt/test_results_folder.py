"""Results are never lost: ``--out`` is replaced only by a run that finished, under a lock, with a manifest.

Every test runs the real command line in a subprocess (``python -m bypassopt.cli``) in its own ``tmp_path``.
"""

import hashlib
import json
import os
import shutil
import signal
import subprocess
import sys
import time

import openmdao.api as om
import pytest

from bypassopt import __version__

#: Longest a single command may take (a hung optimizer fails the test instead of the whole run).
TIMEOUT_S = 300
#: Longest to wait for a started optimisation to reach its driver.
START_TIMEOUT_S = 120
#: Every design variable fixed: ``optimize`` fails with exit 2 only when it builds the optimisation problem,
#: after the scenario has been read and the initial design evaluated (a real late failure).
NO_DESIGN_VARIABLES = """\
[design_variables]
BPR = { initial = 10.0, lower = 6.0, upper = 16.0, optimize = false }
FPR = { initial = 1.50, lower = 1.30, upper = 1.90, optimize = false }
OPR = { initial = 40.0, lower = 25.0, upper = 60.0, optimize = false }
Tt4_K = { initial = 1650.0, lower = 1400.0, upper = 1850.0, optimize = false }
"""
OPTIMIZE_FILES = ["history.sqlite", "manifest.json", "optimum.csv", "optimum.json", "stations.csv", "summary.txt"]
EVALUATE_FILES = ["design.csv", "design.json", "manifest.json", "stations.csv", "summary.txt"]


def bypassopt(*args, cwd):
    """Run ``python -m bypassopt.cli ARGS`` in ``cwd``; returns the CompletedProcess (text)."""
    return subprocess.run([sys.executable, "-m", "bypassopt.cli", *map(str, args)], cwd=cwd, capture_output=True,
                          text=True, timeout=TIMEOUT_S)


def start(*args, cwd):
    """Start ``python -m bypassopt.cli ARGS`` in ``cwd``; stderr goes to a file (read it with ``err``)."""
    err = open(cwd / f"stderr-{time.monotonic_ns()}.txt", "w+", encoding="utf-8")  # noqa: SIM115 - closed by finish
    proc = subprocess.Popen([sys.executable, "-m", "bypassopt.cli", *map(str, args)], cwd=cwd,
                            stdout=subprocess.DEVNULL, stderr=err, text=True)
    proc.err_file = err
    return proc


def finish(proc):
    """Wait for a started run; return (exit code, stderr)."""
    try:
        code = proc.wait(timeout=TIMEOUT_S)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    proc.err_file.seek(0)
    text = proc.err_file.read()
    proc.err_file.close()
    return code, text


def wait_for_driver(proc, partial):
    """Wait until the run's partial folder holds its optimisation history (the driver has started)."""
    deadline = time.monotonic() + START_TIMEOUT_S
    while not (partial / "history.sqlite").exists():
        assert proc.poll() is None, f"the run ended with {proc.returncode} before its driver started"
        assert time.monotonic() < deadline, "the run did not reach its driver"
        time.sleep(0.02)


def snapshot(folder):
    """Every file under ``folder``: relative path -> (SHA-256 of its bytes, modification time)."""
    files = {}
    for root, _, names in os.walk(folder):
        for name in names:
            path = os.path.join(root, name)
            with open(path, "rb") as fh:
                files[os.path.relpath(path, folder)] = (hashlib.sha256(fh.read()).hexdigest(),
                                                        os.stat(path).st_mtime_ns)
    return files


def leftovers(cwd):
    """Names beside the results that a finished run must not leave: partial folders and the lock."""
    return sorted(n for n in os.listdir(cwd) if ".partial-" in n or n.endswith(".lock"))


@pytest.fixture(scope="module")
def optimized_once(tmp_path_factory):
    """One complete ``optimize`` run, shared; returns its folder."""
    cwd = tmp_path_factory.mktemp("optimize")
    run = bypassopt("optimize", "--out", "res", "--no-plots", cwd=cwd)
    assert run.returncode == 0, run.stderr
    assert sorted(os.listdir(cwd / "res")) == OPTIMIZE_FILES
    return cwd / "res"


@pytest.fixture
def optimized(tmp_path, optimized_once):
    """The complete ``optimize`` results copied to ``tmp_path / "res"``; returns that folder."""
    return shutil.copytree(optimized_once, tmp_path / "res")


def test_late_failure_keeps_the_earlier_results(tmp_path):
    """An exit-2 error after the run's folder was prepared leaves the earlier results byte for byte."""
    run = bypassopt("evaluate", "--out", "res", "--quiet", cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    before = snapshot(tmp_path / "res")
    assert sorted(before) == EVALUATE_FILES
    (tmp_path / "fixed.toml").write_text(NO_DESIGN_VARIABLES, encoding="utf-8")
    run = bypassopt("optimize", "--scenario", "fixed.toml", "--out", "res", "--no-plots", cwd=tmp_path)
    assert run.returncode == 2, run.stderr
    last = run.stderr.splitlines()[-1]
    assert last == "bypassopt: error: design_variables: no variable has optimize = true", run.stderr
    assert snapshot(tmp_path / "res") == before
    assert leftovers(tmp_path) == [] and not (tmp_path / "res.previous").exists()


@pytest.mark.parametrize("sig, code", [(signal.SIGINT, 130), (signal.SIGTERM, 143)])
def test_interrupted_run_keeps_the_earlier_results(optimized, sig, code):
    """SIGINT or SIGTERM mid-optimisation: 128 + the signal, one line, the earlier results intact and readable."""
    cwd = optimized.parent
    before = snapshot(optimized)
    proc = start("optimize", "--out", "res", "--no-plots", cwd=cwd)
    wait_for_driver(proc, cwd / f".res.partial-{proc.pid}")
    proc.send_signal(sig)
    returncode, err = finish(proc)
    assert returncode == code, err
    errors = [line for line in err.splitlines() if line.startswith("bypassopt:")]
    assert errors == [f"bypassopt: error: interrupted ({sig.name}); res is left as it was; the partial results "
                      "are in res.interrupted"], err
    assert "Traceback" not in err
    assert snapshot(optimized) == before
    assert json.loads((optimized / "optimum.json").read_text())["optimizer"]["success"] is True
    assert json.loads((optimized / "manifest.json").read_text())["status"] == "complete"
    assert om.CaseReader(str(optimized / "history.sqlite")).list_cases("driver", out_stream=None)
    # the partial files are set aside, said to be interrupted, never in place of the results
    kept = cwd / "res.interrupted"
    manifest = json.loads((kept / "manifest.json").read_text())
    assert manifest["status"] == "interrupted" and manifest["signal"] == sig.name and manifest["exit_code"] == code
    assert "history.sqlite" in [f["name"] for f in manifest["files"]]
    assert leftovers(cwd) == [] and not (cwd / "res.previous").exists()


def test_second_run_into_the_same_folder_is_refused(tmp_path):
    """Two runs into one folder: the second is refused with exit 2 and the lock named; the first completes."""
    first = start("optimize", "--out", "res", "--no-plots", cwd=tmp_path)
    wait_for_driver(first, tmp_path / f".res.partial-{first.pid}")
    second = bypassopt("optimize", "--out", "res", "--no-plots", cwd=tmp_path)
    assert second.returncode == 2
    lock = os.path.realpath(tmp_path / "res") + ".lock"
    assert second.stderr == (f"bypassopt: error: another bypassopt run is writing to res (pid {first.pid}); it holds "
                             f"the lock file {lock}\n")
    assert second.stdout == ""
    code, err = finish(first)
    assert code == 0, err
    assert sorted(os.listdir(tmp_path / "res")) == OPTIMIZE_FILES
    assert om.CaseReader(str(tmp_path / "res" / "history.sqlite")).list_cases("driver", out_stream=None)
    assert leftovers(tmp_path) == []  # the lock file too: released on the way out


def test_evaluate_replaces_an_optimize_folder(optimized):
    """The folder holds only the new run's files; the one it replaced is the backup."""
    cwd = optimized.parent
    before = snapshot(optimized)
    run = bypassopt("evaluate", "--out", "res", "--json", cwd=cwd)
    assert run.returncode == 0, run.stderr
    assert sorted(os.listdir(optimized)) == EVALUATE_FILES and not (optimized / "optimum.json").exists()
    assert sorted(os.path.basename(f) for f in json.loads(run.stdout)["files"]) == EVALUATE_FILES
    assert snapshot(cwd / "res.previous") == before
    # only the last earlier folder is kept
    run = bypassopt("evaluate", "--out", "res", "--BPR", 12, "--quiet", cwd=cwd)
    assert run.returncode == 0, run.stderr
    assert sorted(os.listdir(cwd / "res.previous")) == EVALUATE_FILES
    assert leftovers(cwd) == []


def test_manifest(tmp_path):
    """manifest.json: command line, version, scenario and its SHA-256, times, status and every file's hash."""
    (tmp_path / "short.toml").write_text("[optimizer]\nmaxiter = 1\n", encoding="utf-8")
    argv = ["optimize", "--scenario", "short.toml", "--out", "res", "--no-plots", "--quiet"]
    run = bypassopt(*argv, cwd=tmp_path)
    assert run.returncode == 3, run.stderr  # not converged: the results are complete and swapped in
    out = tmp_path / "res"
    manifest = json.loads((out / "manifest.json").read_text())
    assert manifest["status"] == "not converged" and manifest["exit_code"] == 3
    assert manifest["command"] == "optimize" and manifest["command_line"] == ["bypassopt", *argv]
    assert manifest["bypassopt_version"] == __version__
    digest = hashlib.sha256((tmp_path / "short.toml").read_bytes()).hexdigest()
    assert manifest["scenario"] == {"source": "file", "file": str(tmp_path / "short.toml"), "sha256": digest}
    for key in ("started", "finished"):
        assert time.strptime(manifest[key], "%Y-%m-%dT%H:%M:%SZ")
    assert manifest["started"] <= manifest["finished"]
    assert [f["name"] for f in manifest["files"]] == [n for n in OPTIMIZE_FILES if n != "manifest.json"]
    for f in manifest["files"]:
        data = (out / f["name"]).read_bytes()
        assert f["bytes"] == len(data) and f["sha256"] == hashlib.sha256(data).hexdigest()
    run = bypassopt("evaluate", "--out", "res", "--quiet", cwd=tmp_path)
    manifest = json.loads((out / "manifest.json").read_text())
    assert manifest["status"] == "complete" and manifest["exit_code"] == 0
    assert manifest["scenario"] == {"source": "built-in demo", "file": "demo_twin_170.toml", "sha256": None}


def test_foreign_folder_is_refused(tmp_path):
    """A folder bypassopt did not write is never replaced (nor moved aside): exit 2 before anything runs."""
    (tmp_path / "mine").mkdir()
    (tmp_path / "mine" / "notes.txt").write_text("keep me", encoding="utf-8")
    run = bypassopt("evaluate", "--out", "mine", cwd=tmp_path)
    assert run.returncode == 2 and "notes.txt" in run.stderr and len(run.stderr.splitlines()) == 1
    assert os.listdir(tmp_path / "mine") == ["notes.txt"]
    run = bypassopt("evaluate", "--out", ".", cwd=tmp_path / "mine")
    assert run.returncode == 2 and "current folder" in run.stderr
    assert sorted(os.listdir(tmp_path)) == ["mine"]
