"""The ``bypassopt`` command line end to end: every command in a subprocess on a small demo scenario."""

import csv
import io
import importlib.util
import json
import os
import subprocess
import sys
import tomllib
from importlib import resources

import openmdao.api as om
import pytest

from bypassopt import CAUTION
from bypassopt.cli import main
from bypassopt.problems.drivers import pyoptsparse_available
from bypassopt.scenario import demo_scenario, load_scenario

#: The optimum written to optimum.json is the recorder's last driver case.
RECORD_RTOL = 1e-8
#: Longest a single command may take (a hung optimizer fails the test instead of the whole run).
TIMEOUT_S = 300
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"
HAVE_MATPLOTLIB = importlib.util.find_spec("matplotlib") is not None

#: The demo with a coarse carpet and a two-point trade, so that the commands run in seconds.
FAST_SCENARIO = """\
[carpet]
BPR_values = [8.0, 10.0, 12.0]
OPR_values = [35.0, 45.0, 55.0]
FPR_mode = "fixed"

[trade]
limit = "max_nacelle_diameter_m"
values = [2.2, 2.4]
"""


def bypassopt(*args, cwd):
    """Run ``python -m bypassopt.cli ARGS`` in ``cwd``; returns the CompletedProcess (text)."""
    return subprocess.run([sys.executable, "-m", "bypassopt.cli", *map(str, args)], cwd=cwd, capture_output=True,
                          text=True, timeout=TIMEOUT_S)


def _read_csv(path):
    """Rows of a CSV file as dicts; leading '#' comment lines (the caution) are skipped."""
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(line for line in fh if not line.startswith("#")))


def _comments(path):
    with open(path, encoding="utf-8") as fh:
        return [line[2:].rstrip("\n") for line in fh if line.startswith("# ")]


def _assert_numeric_values(path):
    """Every row's value column is a number (the caution is a comment line, flags are 1/0)."""
    rows = _read_csv(path)
    assert rows and list(rows[0]) == ["name", "value", "units"]
    for r in rows:
        float(r["value"])  # raises on text
    assert _comments(path) == [f"CAUTION: {CAUTION}"]


def _assert_png(path):
    assert path.read_bytes()[:8] == PNG_MAGIC, path


def _no_leftovers(folder):
    """No temporary files of the atomic writers remain."""
    assert not [p for p in os.listdir(folder) if p.startswith(".")], os.listdir(folder)


@pytest.fixture(scope="module")
def fast_scenario(tmp_path_factory):
    folder = tmp_path_factory.mktemp("scenario")
    path = folder / "fast.toml"
    path.write_text(FAST_SCENARIO, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def optimized(tmp_path_factory, fast_scenario):
    """One ``optimize`` run shared by the tests that read its outputs."""
    cwd = tmp_path_factory.mktemp("optimize")
    args = ["optimize", "--scenario", fast_scenario, "--out", "res", "--json"]
    if not HAVE_MATPLOTLIB:
        args.append("--no-plots")
    run = bypassopt(*args, cwd=cwd)
    return run, cwd / "res"


# --------------------------------------------------------------------------------------------------------
# optimize


def test_optimize_outputs(optimized):
    """Exit 0; every file exists and parses; stdout is one JSON document; the caution travels with it."""
    run, out = optimized
    assert run.returncode == 0, run.stderr
    result = json.loads(run.stdout)
    assert result["caution"] == CAUTION and result["optimizer"]["success"]
    names = ["history.sqlite", "optimum.json", "optimum.csv", "stations.csv", "summary.txt", "manifest.json"]
    if HAVE_MATPLOTLIB:
        names += ["convergence.png", "carpet.png"]
        _assert_png(out / "convergence.png")
        _assert_png(out / "carpet.png")
    assert sorted(os.path.basename(f) for f in result["files"]) == sorted(names)
    assert sorted(os.listdir(out)) == sorted(names)
    optimum = json.loads((out / "optimum.json").read_text())
    assert optimum["quantities"] == result["quantities"]
    _assert_numeric_values(out / "optimum.csv")
    values = {r["name"]: r for r in _read_csv(out / "optimum.csv")}
    assert "caution" not in values and float(values["optimizer_success"]["value"]) == 1.0
    opt = optimum["optimizer"]
    assert float(values["optimizer_iterations"]["value"]) == opt["iterations"]
    assert float(values["optimizer_model_evaluations"]["value"]) == opt["model_evaluations"]
    assert float(values["mission_fuel"]["value"]) == optimum["quantities"]["mission_fuel"]["value"]
    assert values["installed_TSFC"]["units"] == "mg/(N*s)"
    stations = _read_csv(out / "stations.csv")
    assert [r["station"] for r in stations][:3] == ["0", "2", "13"] and len(stations) == 15
    summary = (out / "summary.txt").read_text()
    assert CAUTION in " ".join(summary.split()) and "would save" in summary
    assert "\x1b" not in summary
    # progress on a pipe: plain lines, no carriage returns or escape codes; its closing line gives the
    # driver's counts and time, as the summary does
    assert "\r" not in run.stderr and "\x1b" not in run.stderr
    counts = (f"optimize: converged after {opt['iterations']} iterations, {opt['model_evaluations']} model "
              f"evaluations in {opt['runtime_s']:.1f} s")
    assert counts in run.stderr.splitlines()
    assert (f"{opt['iterations']} iterations, {opt['model_evaluations']} model evaluations" in summary)
    _no_leftovers(out)


def test_optimize_json_matches_recorder(optimized):
    """The reported optimum is the recorder's last driver case: design variables and objective."""
    run, out = optimized
    assert run.returncode == 0, run.stderr
    optimum = json.loads((out / "optimum.json").read_text())
    reader = om.CaseReader(str(out / "history.sqlite"))
    cases = reader.list_cases("driver", recurse=False, out_stream=None)
    # every model evaluation that did not fail (failed ones are listed by the driver, not recorded), the
    # re-evaluation at the returned point included
    opt = optimum["optimizer"]
    assert len(cases) - (opt["model_evaluations"] - opt["failed_evaluations"]) in (0, 1)
    last = reader.get_case(cases[-1])
    for name in ("BPR", "FPR", "OPR"):
        assert optimum["quantities"][name]["value"] == pytest.approx(float(last[name][0]), rel=RECORD_RTOL)
    assert optimum["objective"]["value"] == pytest.approx(float(last.get_objectives(scaled=False)["mission_fuel"][0]),
                                                          rel=RECORD_RTOL)


def test_optimize_failed_keeps_files(tmp_path):
    """An optimizer stopped by its iteration limit: exit 3, the results so far written and readable."""
    (tmp_path / "short.toml").write_text("[optimizer]\nmaxiter = 1\n", encoding="utf-8")
    run = bypassopt("optimize", "--scenario", "short.toml", "--out", "res", "--no-plots", cwd=tmp_path)
    assert run.returncode == 3, run.stderr
    last = run.stderr.strip().splitlines()[-1]
    assert last.startswith("bypassopt: error:") and "did not converge" in last and "kept" in last
    out = tmp_path / "res"
    optimum = json.loads((out / "optimum.json").read_text())
    assert optimum["optimizer"]["success"] is False and optimum["optimizer"]["message"]
    assert om.CaseReader(str(out / "history.sqlite")).list_cases("driver", out_stream=None)
    assert (out / "summary.txt").read_text().count("DID NOT CONVERGE") == 1
    assert "bypassopt: best installed cycle" in run.stdout  # the report is still printed


# --------------------------------------------------------------------------------------------------------
# the other commands


def test_evaluate(tmp_path):
    run = bypassopt("evaluate", "--BPR", 12, "--Tt4", 1600, "--out", "res", "--json", cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    result = json.loads(run.stdout)
    q = result["quantities"]
    assert q["BPR"]["value"] == 12.0 and q["Tt4"]["value"] == 1600.0
    assert q["FPR"]["value"] == demo_scenario()["design_variables"]["FPR"]["initial"]
    out = tmp_path / "res"
    assert sorted(os.listdir(out)) == ["design.csv", "design.json", "manifest.json", "stations.csv", "summary.txt"]
    assert json.loads((out / "design.json").read_text())["quantities"] == q
    assert len(_read_csv(out / "stations.csv")) == 15
    _assert_numeric_values(out / "design.csv")
    design = {r["name"]: float(r["value"]) for r in _read_csv(out / "design.csv")}
    assert design["BPR"] == 12.0 and design["mission_fuel"] == q["mission_fuel"]["value"]


def test_evaluate_human_and_quiet(tmp_path, capsys, monkeypatch):
    """The default prints the report; --quiet prints nothing at all (in-process, after the subprocess runs)."""
    monkeypatch.chdir(tmp_path)
    assert main(["evaluate", "--out", "a"]) == 0
    captured = capsys.readouterr()
    assert "CAUTION" in captured.out and "Stations" in captured.out and "Files written to a/" in captured.out
    assert captured.err == ""
    assert main(["evaluate", "--out", "b", "--quiet"]) == 0
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err == ""
    assert (tmp_path / "b" / "summary.txt").read_text() == (tmp_path / "a" / "summary.txt").read_text()


def test_carpet(tmp_path, fast_scenario):
    args = ["carpet", "--scenario", fast_scenario, "--out", "res", "--json"]
    run = bypassopt(*args, *([] if HAVE_MATPLOTLIB else ["--no-plots"]), cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    result = json.loads(run.stdout)
    assert result["caution"] == CAUTION
    out = tmp_path / "res"
    data = json.loads((out / "carpet.json").read_text())
    assert len(data["objective"]) == 3 and len(data["objective"][0]) == 3
    rows = _read_csv(out / "carpet.csv")
    assert len(rows) == 9 and {"BPR", "OPR", "FPR", "objective", "feasible"} <= set(rows[0])
    assert sorted({float(r["BPR"]) for r in rows}) == [8.0, 10.0, 12.0]
    if HAVE_MATPLOTLIB:
        _assert_png(out / "carpet.png")
    _no_leftovers(out)


def test_trade(tmp_path, fast_scenario):
    args = ["trade", "--scenario", fast_scenario, "--out", "res", "--json"]
    run = bypassopt(*args, *([] if HAVE_MATPLOTLIB else ["--no-plots"]), cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    result = json.loads(run.stdout)
    assert result["caution"] == CAUTION
    out = tmp_path / "res"
    json.loads((out / "trade.json").read_text())
    rows = _read_csv(out / "trade.csv")
    # the two values asked for, plus any point the trade curve adds where the active limits change
    assert {2.2, 2.4} <= {float(r["max_nacelle_diameter_m"]) for r in rows} and len(rows) >= 2
    if HAVE_MATPLOTLIB:
        _assert_png(out / "trade.png")


def test_reengine(tmp_path):
    run = bypassopt("reengine", "--out", "res", cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    assert "re-engining" in run.stdout and "installed TSFC" in run.stdout and "CAUTION" in run.stdout
    out = tmp_path / "res"
    result = json.loads((out / "reengine.json").read_text())
    assert result["caution"] == CAUTION
    rows = {r["name"]: r for r in _read_csv(out / "reengine.csv")}
    assert float(rows["mission_fuel"]["new"]) < float(rows["mission_fuel"]["previous"])
    assert float(rows["mission_fuel"]["difference"]) == pytest.approx(
        float(rows["mission_fuel"]["new"]) - float(rows["mission_fuel"]["previous"]), rel=1e-12)


def test_check_derivatives(tmp_path):
    run = bypassopt("check-derivatives", "--out", "res", "--json", cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    result = json.loads(run.stdout)
    assert result["passed"] and result["tolerance"] == 1e-6
    assert result["totals"]["max_relative_error"] < 1e-6 and result["partials"]["max_relative_error"] < 1e-6
    rows = _read_csv(tmp_path / "res" / "derivatives.csv")
    names = {r["component"] for r in rows}
    # every point of the demo's multipoint engine: design (its cycle, installation), take-off, cruise, mission
    for part in ("design.engine.cycle.hpc", "design.engine.fan_sizing", "design.engine.drag", "takeoff.cycle.hpc",
                 "cruise.cycle.core_nozzle", "cruise_drag", "cruise_thrust", "cooling_sizing", "mission"):
        assert any(n.endswith(part) for n in names), part
    assert "PASSED" not in run.stdout  # --json: nothing but the JSON document


def test_check_derivatives_failure_exit_code(tmp_path, capsys, monkeypatch):
    """A derivative error above the tolerance: exit 3, one line, the files still written; --json stays JSON."""
    import bypassopt.commands.check_derivatives as command

    def failing(scenario, tolerance):
        comp = {"component": "cycle.hpc", "max_relative_error": 1e-3, "of": "Tt3", "wrt": "OPR"}
        return {"caution": CAUTION, "design": {"BPR": 10.0, "FPR": 1.5, "OPR": 40.0, "Tt4_K": 1650.0},
                "tolerance": tolerance, "passed": False,
                "totals": {"max_relative_error": 1e-9, "entries": []},
                "partials": {"max_relative_error": 1e-3, "components": [comp]}}

    monkeypatch.chdir(tmp_path)
    monkeypatch.setattr(command, "check_derivatives", failing)
    assert main(["check-derivatives", "--out", "res", "--quiet"]) == 3
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "above the tolerance" in err and "kept in res" in err
    assert json.loads((tmp_path / "res" / "derivatives.json").read_text())["passed"] is False
    assert main(["check-derivatives", "--out", "res", "--json"]) == 3
    captured = capsys.readouterr()
    result = json.loads(captured.out)  # the whole of stdout is one JSON document
    assert result["passed"] is False and "above the tolerance" in result["error"]
    assert sorted(os.path.basename(f) for f in result["files"]) == ["derivatives.csv", "derivatives.json",
                                                                    "manifest.json"]


def test_scenario_template(tmp_path):
    """Printed and written template is the demo file; a partial file prints as the full merged scenario."""
    demo_text = resources.files("bypassopt").joinpath("data", "demo_twin_170.toml").read_text("utf-8")
    run = bypassopt("scenario", cwd=tmp_path)
    assert run.returncode == 0 and run.stdout == demo_text
    run = bypassopt("scenario", "--write", "my.toml", cwd=tmp_path)
    assert run.returncode == 0 and (tmp_path / "my.toml").read_text() == demo_text
    # the message names the file written, and no output folder
    assert run.stdout.splitlines()[0].startswith("Scenario written to my.toml.")
    assert "bypassopt_results" not in run.stdout and "Files written to" not in run.stdout
    assert load_scenario(tmp_path / "my.toml") == demo_scenario()
    run = bypassopt("scenario", "--write", "my.toml", cwd=tmp_path)
    assert run.returncode == 2 and "--force" in run.stderr and len(run.stderr.splitlines()) == 1
    (tmp_path / "part.toml").write_text("[design_point]\nthrust_required_N = 21000.0\n", encoding="utf-8")
    run = bypassopt("scenario", "--scenario", "part.toml", cwd=tmp_path)
    assert run.returncode == 0
    merged = load_scenario(tmp_path / "part.toml")
    (tmp_path / "full.toml").write_text(run.stdout, encoding="utf-8")
    assert tomllib.loads(run.stdout)["design_point"]["thrust_required_N"] == 21000.0
    assert load_scenario(tmp_path / "full.toml") == merged
    run = bypassopt("scenario", "--scenario", "part.toml", "--json", cwd=tmp_path)
    assert json.loads(run.stdout)["design_point"]["thrust_required_N"] == 21000.0
    assert not (tmp_path / "bypassopt_results").exists()


# --------------------------------------------------------------------------------------------------------
# bad input: exit 2, one line naming the key, nothing written


@pytest.mark.parametrize("text, key", [
    ("[aircraft]\nwingspan_m = 35.0\n", "aircraft.wingspan_m"),
    ('[design_point]\nthrust_required_N = "24 kN"\n', "design_point.thrust_required_N"),
    ("[design_point]\nmach = 1.2\n", "design_point.mach"),
    ("[installation]\nwing_height_m = 1.0\n", "wing_height_m"),
])
def test_bad_scenario_file(tmp_path, text, key):
    (tmp_path / "bad.toml").write_text(text, encoding="utf-8")
    run = bypassopt("optimize", "--scenario", "bad.toml", "--out", "res", cwd=tmp_path)
    assert run.returncode == 2
    lines = run.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("bypassopt: error: ") and key in lines[0], run.stderr
    assert run.stdout == ""
    assert not (tmp_path / "res").exists()


@pytest.mark.parametrize("argv, words", [
    (["evaluate", "--BPR", "40"], ("--BPR", "40", "25")),
    (["evaluate", "--FPR", "fast"], ("--FPR", "fast")),
    (["optimize", "--objective", "range"], ("--objective", "range")),
    (["optimize", "--frobnicate"], ("--frobnicate",)),
    (["launch"], ("launch",)),
    ([], ("choose a command",)),
])
def test_bad_options(tmp_path, capsys, monkeypatch, argv, words):
    """Bad options: exit 2 and one stderr line, in-process (nothing is computed)."""
    monkeypatch.chdir(tmp_path)
    assert main(argv + ["--out", "res"] if argv and argv[0] != "launch" else argv) == 2
    captured = capsys.readouterr()
    lines = captured.err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("bypassopt: error: "), captured.err
    for w in words:
        assert w in lines[0]
    assert captured.out == "" and os.listdir(tmp_path) == []


@pytest.mark.skipif(pyoptsparse_available(), reason="pyoptsparse is installed")
def test_driver_without_pyoptsparse(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["optimize", "--driver", "SNOPT", "--out", "res"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "pyoptsparse" in err and "SNOPT" in err
    assert os.listdir(tmp_path) == []


@pytest.mark.parametrize("command", ["evaluate", "optimize", "carpet", "trade", "reengine", "check-derivatives",
                                     "scenario"])
def test_help(command, capsys):
    """Every command explains itself and takes the common options."""
    assert main([command, "--help"]) == 0
    text = capsys.readouterr().out
    for option in ("--scenario", "--out", "--json", "--quiet"):
        assert option in text
    assert main(["--help"]) == 0
    assert command in capsys.readouterr().out


def test_unexpected_error(tmp_path, capsys, monkeypatch):
    """An unexpected failure: exit 1 and one line; --debug adds the traceback."""
    import bypassopt.cli as cli

    def broken(run, scenario):
        raise RuntimeError("something\nbroke")

    monkeypatch.chdir(tmp_path)
    monkeypatch.setitem(cli.COMMANDS, "evaluate", broken)
    assert main(["evaluate"]) == 1
    err = capsys.readouterr().err
    assert err == "bypassopt: error: unexpected RuntimeError: something broke (run again with --debug for the " \
                  "traceback)\n"
    assert main(["evaluate", "--debug"]) == 1
    err = capsys.readouterr().err
    assert "Traceback" in err and err.splitlines()[-1] == "bypassopt: error: unexpected RuntimeError: something broke"


# --------------------------------------------------------------------------------------------------------
# progress and terminal output


class _Terminal(io.StringIO):
    """A captured stream that says it is a terminal."""

    def isatty(self):
        return True


def test_progress_on_a_pipe_is_plain():
    """Not a terminal: whole lines, no carriage return, no escape code (not even from the text shown)."""
    from bypassopt.commands._run import ProgressDisplay

    stream = io.StringIO()
    progress = ProgressDisplay("carpet", stream=stream, interval_s=0.0)
    progress(1, 4, "point \x1b[31mone\x1b[0m\r")
    progress(2, 4, "[bold]two[/bold]")
    progress.finish()
    text = stream.getvalue()
    assert "\r" not in text and "\x1b" not in text
    lines = text.splitlines()
    assert lines[0].startswith("carpet: 1/4 point [31mone[0m") and "[bold]two[/bold]" in lines[1]
    assert lines[-1].startswith("carpet: finished in ") and len(lines) == 3


def test_progress_on_a_pipe_is_throttled():
    from bypassopt.commands._run import ProgressDisplay

    stream = io.StringIO()
    progress = ProgressDisplay("trade", stream=stream, interval_s=3600.0)
    for k in range(50):
        progress(k + 1, 50, "point")
    progress.finish("done", seconds=1.25)
    assert stream.getvalue().splitlines() == ["trade: 1/50 point (0 s)", "trade: done in 1.2 s"]


def test_progress_on_a_terminal_is_transient():
    """A terminal gets rich's live display, cleared at the end; one closing line stays."""
    from bypassopt.commands._run import ProgressDisplay

    stream = _Terminal()
    progress = ProgressDisplay("optimize", stream=stream)
    progress(None, None, "iteration 1, evaluation 2: [red]x")
    progress.finish("converged after 3 iterations, 5 model evaluations", seconds=2.0)
    assert stream.getvalue().endswith("optimize: converged after 3 iterations, 5 model evaluations in 2.0 s\n")
    quiet = _Terminal()
    progress = ProgressDisplay("optimize", enabled=False, stream=quiet)
    progress(1, 2, "x")
    progress.finish()
    assert quiet.getvalue() == ""


def test_report_blocks_render_the_same_plain_text():
    """The reengine report written from blocks reads as problems.reengine's own text; a hostile name is cleaned."""
    from bypassopt.problems.reengine import reengining_blocks as reengine_blocks
    from bypassopt.problems.reengine import format_reengining
    from bypassopt.report import render_plain, render_rich

    result = {"caution": CAUTION, "scenario": "Demo twin", "thrust_required_N": 24000.0, "notes": ["a note"],
              "previous_engine": {"BPR": 5.0, "FPR": 1.7, "OPR": 30.0, "Tt4_K": 1550.0, "efficiency_drop": 0.02},
              "optimizer": {"driver": "SciPy SLSQP", "success": True, "iterations": 9},
              "comparison": [{"name": "mission_fuel", "description": "mission fuel", "previous": 18000.0,
                              "new": 16000.0, "difference": -2000.0, "difference_pct": -11.1, "units": "kg"}]}
    assert render_plain(reengine_blocks(result)) == format_reengining(result)
    result["scenario"] = "[bold red]Jet[/bold red]\x1b[2J\rname"
    plain = render_plain(reengine_blocks(result))
    assert "Scenario: [bold red]Jet[/bold red][2Jname" in plain
    from rich.console import Console

    buf = io.StringIO()
    render_rich(reengine_blocks(result), Console(file=buf, force_terminal=True, width=120))
    shown = buf.getvalue()
    assert "[bold red]Jet[/bold red]" in shown and "\x1b[2J" not in shown and "\r" not in shown


# --------------------------------------------------------------------------------------------------------
# feasibility screen and honest reports

#: A screened infeasible case ends before any optimisation (it took SLSQP 30-130 s to fail before); the
#: bound leaves room for the interpreter, the imports and a loaded machine.
SCREEN_EXIT_S = 25.0


@pytest.mark.parametrize("command", ["optimize", "reengine"])
@pytest.mark.parametrize("text, key, reachable", [
    ("[limits]\nmax_nacelle_diameter_m = 0.5\n", "limits.max_nacelle_diameter_m", "smallest nacelle reachable"),
    # the design-point model: the multipoint model's temperatures are left to the optimizer (feasibility.py)
    ("[optimizer]\nmodel = \"design_point\"\n[limits]\nmax_Tt41_K = 1100.0\n", "limits.max_Tt41_K",
     "lowest T41 reachable"),
    ("[installation]\nwing_height_m = 2.0\n", "installation.min_ground_clearance_m",
     "largest ground clearance reachable"),
])
def test_infeasible_limit_exits_2_before_optimising(tmp_path, command, text, key, reachable):
    """Exit 2 in one line naming the limit, its best reachable value and the key; nothing written."""
    import re
    import time

    (tmp_path / "bad.toml").write_text(text, encoding="utf-8")
    args = [command, "--scenario", "bad.toml", "--out", "res"] + (["--no-plots"] if command == "optimize" else [])
    start = time.monotonic()
    run = bypassopt(*args, cwd=tmp_path)
    assert time.monotonic() - start < SCREEN_EXIT_S
    assert run.returncode == 2, run.stderr
    lines = run.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("bypassopt: error: " + key)
    assert "cannot be met" in lines[0] and re.search(reachable + r" within the design-variable bounds is -?[0-9.]+ ",
                                                     lines[0])
    assert not (tmp_path / "res").exists() and run.stdout == ""


def test_absurd_cruise_is_refused(tmp_path):
    """Multipoint model, L/D = 5: the initial design cannot fly the cruise; exit 2 naming the cruise point."""
    (tmp_path / "ld.toml").write_text("[aircraft]\nlift_to_drag = 5.0\n", encoding="utf-8")
    run = bypassopt("optimize", "--scenario", "ld.toml", "--out", "res", "--no-plots", cwd=tmp_path)
    assert run.returncode == 2, run.stderr
    line = run.stderr.strip().splitlines()[-1]
    assert "initial design cannot be evaluated" in line and "cruise." in line and not (tmp_path / "res").exists()


def test_trade_with_a_limit_missed_at_every_value_exits_2(tmp_path):
    (tmp_path / "bad.toml").write_text('[trade]\nlimit = "max_nacelle_diameter_m"\nvalues = [0.5, 1.0]\n',
                                       encoding="utf-8")
    run = bypassopt("trade", "--scenario", "bad.toml", "--out", "res", "--no-plots", cwd=tmp_path)
    assert run.returncode == 2, run.stderr
    assert "every value of trade.values" in run.stderr and not (tmp_path / "res").exists()


def test_unconverged_implausible_run_claims_no_shadow_price(tmp_path):
    """L/D = 5 stopped after 2 iterations: exit 3, implausibility warnings, no shadow price in any file.

    Design-point model: the multipoint engine cannot fly such an aircraft's cruise at all (exit 2, see
    test_absurd_cruise_is_refused)."""
    (tmp_path / "ld.toml").write_text("[aircraft]\nlift_to_drag = 5.0\n[optimizer]\nmaxiter = 2\nmodel = "
                                      "\"design_point\"\n", encoding="utf-8")
    run = bypassopt("optimize", "--scenario", "ld.toml", "--out", "res", "--no-plots", cwd=tmp_path)
    assert run.returncode == 3, run.stderr
    out = tmp_path / "res"
    summary = (out / "summary.txt").read_text()
    assert "DID NOT CONVERGE" in summary and "would save" not in summary and "not given" in summary
    assert "no jet airliner cruises" in summary and "above the maximum take-off mass" in summary
    optimum = json.loads((out / "optimum.json").read_text())
    assert len(optimum["warnings"]) >= 2 and optimum["shadow_price_statements"] == []
    assert all(c["shadow_price"] is None for c in optimum["constraints"].values())
    assert not [r for r in _read_csv(out / "optimum.csv") if r["name"].endswith("_shadow_price")]
