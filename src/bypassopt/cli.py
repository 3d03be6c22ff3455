"""Command line: ``bypassopt <command>`` evaluates, optimises, sweeps and checks installed turbofan cycles.

Exit codes: 0 success; 2 bad input (one line on stderr, nothing computed or written); 3 the computation ran but
did not reach its goal (the optimizer did not converge, or a derivative check is above its tolerance), with the
files written so far left in place; 1 an unexpected error (one line; ``--debug`` shows the traceback).
"""

import argparse
import contextlib
import importlib
import importlib.util
import io
import json
import math
import os
import sys
import tempfile
import time
import traceback
import warnings

from bypassopt import CAUTION, __version__

DEFAULT_OUT = "bypassopt_results"

#: Files each command writes into ``--out`` (stale ones from an earlier run are removed first).
OUTPUTS = {
    "evaluate": ("design.json", "design.csv", "stations.csv", "summary.txt"),
    "optimize": ("history.sqlite", "optimum.json", "optimum.csv", "stations.csv", "summary.txt",
                 "convergence.png", "carpet.png"),
    "carpet": ("carpet.json", "carpet.csv", "carpet.png"),
    "trade": ("trade.json", "trade.csv", "trade.png"),
    "reengine": ("reengine.json", "reengine.csv"),
    "check-derivatives": ("derivatives.json", "derivatives.csv"),
    "scenario": (),
}

#: Largest relative error of analytic derivatives against complex step that check-derivatives accepts.
DERIVATIVE_TOLERANCE = 1e-6

EXIT_OK, EXIT_UNEXPECTED, EXIT_BAD_INPUT, EXIT_NOT_CONVERGED = 0, 1, 2, 3


class UsageError(Exception):
    """Bad command-line input or scenario: reported in one line, exit code 2."""


class NotConverged(Exception):
    """The computation finished without reaching its goal: exit code 3, files kept."""

    def __init__(self, message, result=None):
        super().__init__(message)
        self.result = result


class _Parser(argparse.ArgumentParser):
    """ArgumentParser whose errors become one-line ``UsageError``s instead of usage text and exit."""

    def error(self, message):
        """Raise instead of printing usage."""
        raise UsageError(f"{message} (see '{self.prog} --help')")


# ---------------------------------------------------------------------------------------------------------
# Progress on stderr


class Progress:
    """A one-line progress display on stderr: overwritten in place on a terminal, else a line every few seconds.

    Call it as ``progress(done, total=None, text="")``; ``finish()`` ends the line.
    """

    def __init__(self, label, enabled=True, stream=None, interval_s=3.0):
        self.label = label
        self.enabled = enabled
        self.stream = stream or sys.stderr
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self.interval_s = interval_s
        self._last = 0.0
        self._width = 0
        self._line = ""
        self._start = time.monotonic()

    def __call__(self, done=None, total=None, text="", **kwargs):
        """Show ``done`` of ``total`` (either may be None) and a short text."""
        if not self.enabled:
            return
        if isinstance(done, dict):  # a callback that passes one mapping
            kwargs, done = {**done, **kwargs}, None
        done = kwargs.get("done", done)
        total = kwargs.get("total", total)
        text = kwargs.get("text", kwargs.get("message", text)) or ""
        count = "" if done is None else (f"{done}/{total}" if total else f"{done}")
        elapsed = time.monotonic() - self._start
        self._line = " ".join(p for p in (f"{self.label}:", count, str(text), f"({elapsed:.0f} s)") if p)
        now = time.monotonic()
        if self.tty:
            pad = max(self._width - len(self._line), 0)
            self.stream.write("\r" + self._line + " " * pad)
            self.stream.flush()
            self._width = len(self._line)
        elif now - self._last >= self.interval_s:
            self.stream.write(self._line + "\n")
            self.stream.flush()
            self._last = now

    def finish(self, text="finished"):
        """End the progress line."""
        if not self.enabled or not self._line:
            return
        elapsed = time.monotonic() - self._start
        line = f"{self.label}: {text} in {elapsed:.1f} s"
        if self.tty:
            self.stream.write("\r" + line + " " * max(self._width - len(line), 0) + "\n")
        else:
            self.stream.write(line + "\n")
        self.stream.flush()
        self._line = ""


# ---------------------------------------------------------------------------------------------------------
# Arguments


def _float_arg(text):
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    return value


def build_parser():
    """Build the argument parser of the ``bypassopt`` command."""
    common = _Parser(add_help=False)
    group = common.add_argument_group("common options")
    group.add_argument("--scenario", metavar="FILE",
                       help="scenario file (TOML); keys it leaves out take the built-in demo's values "
                            "(default: the built-in demo scenario)")
    group.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                       help=f"folder for the result files, created if needed (default: ./{DEFAULT_OUT})")
    group.add_argument("--json", action="store_true",
                       help="print the result as JSON on stdout and nothing else")
    group.add_argument("--quiet", action="store_true", help="print no report and no progress")
    group.add_argument("--debug", action="store_true",
                       help="show warnings, solver output and full tracebacks")

    parser = _Parser(
        prog="bypassopt",
        description="Pick the best installed turbofan cycle (BPR, FPR, OPR, T4) for an aircraft. "
                    "CAUTION: " + CAUTION,
        epilog="Exit codes: 0 success; 2 bad input (nothing computed or written); 3 optimizer did not "
               "converge or derivative check failed (files written so far are kept); 1 unexpected error. "
               "Run 'bypassopt <command> --help' for a command's options.")
    parser.add_argument("--version", action="version", version=f"bypassopt {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="command", parser_class=_Parser)

    p = sub.add_parser("evaluate", parents=[common], help="evaluate one design",
                       description="Evaluate one engine design on the scenario's aircraft: installed "
                                   "performance, size, mass, mission fuel and the station table. Writes "
                                   "design.json, design.csv, stations.csv and summary.txt.")
    p.add_argument("--BPR", type=_float_arg, help="bypass ratio (default: the scenario's initial value)")
    p.add_argument("--FPR", type=_float_arg, help="fan pressure ratio (default: the scenario's initial value)")
    p.add_argument("--OPR", type=_float_arg, help="overall pressure ratio (default: the scenario's initial value)")
    p.add_argument("--Tt4", type=_float_arg, metavar="KELVIN",
                   help="burner exit total temperature in K (default: the scenario's initial value)")

    p = sub.add_parser("optimize", parents=[common], help="find the best installed cycle",
                       description="Find the best installed cycle within the scenario's limits and report the "
                                   "active limits with their shadow prices. Writes history.sqlite, "
                                   "optimum.json, optimum.csv, stations.csv, summary.txt, convergence.png and "
                                   "carpet.png.")
    p.add_argument("--objective", choices=("mission_fuel", "installed_TSFC"),
                   help="quantity to minimise (default: the scenario's optimizer.objective)")
    p.add_argument("--driver", choices=("SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP"),
                   help="optimizer; all but SLSQP need pyoptsparse (default: the scenario's optimizer.driver)")
    p.add_argument("--no-plots", action="store_true", help="skip convergence.png and carpet.png")

    p = sub.add_parser("carpet", parents=[common], help="BPR x OPR carpet plot",
                       description="Evaluate the scenario's BPR x OPR carpet ([carpet] section) and plot it. "
                                   "Writes carpet.json, carpet.csv and carpet.png.")
    p.add_argument("--no-plots", action="store_true", help="skip carpet.png")

    p = sub.add_parser("trade", parents=[common], help="optimum along a sweep of one limit",
                       description="Re-solve the best installed cycle along the scenario's sweep of one limit "
                                   "([trade] section). Writes trade.json, trade.csv and trade.png.")
    p.add_argument("--no-plots", action="store_true", help="skip trade.png")

    p = sub.add_parser("reengine", parents=[common], help="previous engine against the optimised one",
                       description="Compare the scenario's previous-generation engine ([previous_engine]) with "
                                   "the best installed cycle on the same aircraft and thrust need. Writes "
                                   "reengine.json and reengine.csv.")
    p.add_argument("--objective", choices=("mission_fuel", "installed_TSFC"),
                   help="quantity the new engine minimises (default: the scenario's optimizer.objective)")
    p.add_argument("--driver", choices=("SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP"),
                   help="optimizer for the new engine (default: the scenario's optimizer.driver)")

    p = sub.add_parser("check-derivatives", parents=[common], help="analytic derivatives against complex step",
                       description="Compare the analytic total derivatives of the best-cycle problem at the "
                                   "scenario's initial design, and every component's partial derivatives, "
                                   "with complex step. Writes derivatives.json and derivatives.csv; exits "
                                   f"with 3 when an error is above the tolerance ({DERIVATIVE_TOLERANCE:g}).")
    p.add_argument("--tolerance", type=_float_arg, default=DERIVATIVE_TOLERANCE,
                   help=f"largest accepted relative error (default: {DERIVATIVE_TOLERANCE:g})")

    p = sub.add_parser("scenario", parents=[common], help="print or write a scenario template",
                       description="Print the built-in demo scenario (with its comments) as a template, or "
                                   "with --scenario FILE the complete scenario that FILE gives after merging "
                                   "over the demo. --write saves it to a file instead.")
    p.add_argument("--write", metavar="FILE", help="write the scenario to FILE instead of printing it")
    p.add_argument("--force", action="store_true", help="overwrite FILE if it exists")
    return parser


# ---------------------------------------------------------------------------------------------------------
# Helpers


class _Run:
    """State of one command: arguments, output folder, written files, what to print."""

    def __init__(self, args):
        self.args = args
        self.files = []
        self.human = not (args.json or args.quiet)

    def out_path(self, name):
        return os.path.join(self.args.out, name)

    def check_out(self):
        """Reject an output folder that cannot be one, before anything is computed."""
        out = self.args.out
        if os.path.exists(out) and not os.path.isdir(out):
            raise UsageError(f"--out {out} exists and is not a folder")

    def prepare_out(self):
        """Create the output folder and remove this command's stale files from an earlier run."""
        out = self.args.out
        self.check_out()
        try:
            os.makedirs(out, exist_ok=True)
        except OSError as err:
            raise UsageError(f"cannot create the output folder {out}: {err.strerror}") from err
        for name in OUTPUTS[self.args.command]:
            path = self.out_path(name)
            if os.path.isfile(path):
                os.unlink(path)

    def wrote(self, path):
        self.files.append(os.fspath(path))

    def progress(self, label):
        return Progress(label, enabled=not self.args.quiet)

    def quiet_stdout(self):
        """Send what libraries print (optimizer messages) to stderr with --debug, else discard it."""
        return contextlib.redirect_stdout(sys.stderr if self.args.debug else io.StringIO())


def _write_png(run, name, plot, *args, **kwargs):
    """Call ``plot(*args, tmp_png, **kwargs)`` with a temporary file, then move it into place."""
    from bypassopt.report import _file_mode

    path = run.out_path(name)
    fd, tmp = tempfile.mkstemp(prefix=f".{name}.", suffix=".png", dir=run.args.out)
    os.close(fd)
    try:
        plot(*args, tmp, **kwargs)
        os.chmod(tmp, _file_mode(path))
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    run.wrote(path)


def _require(module, attrs, why):
    """Import ``module`` and return its attributes, or raise a UsageError that says what is missing."""
    try:
        mod = importlib.import_module(module)
    except ImportError as err:
        raise UsageError(f"{why} needs {module}, which cannot be imported ({err})") from err
    missing = [a for a in attrs if not hasattr(mod, a)]
    if missing:
        raise UsageError(f"{why} needs {module}.{', '.join(missing)}, which this installation lacks")
    return [getattr(mod, a) for a in attrs]


def _require_matplotlib(why):
    if importlib.util.find_spec("matplotlib") is None:
        raise UsageError(f"{why} needs matplotlib: pip install 'bypassopt[plots]', or add --no-plots")


def _check_driver(name):
    from bypassopt.problems.drivers import pyoptsparse_available

    if name and name != "SLSQP" and not pyoptsparse_available():
        raise UsageError(f"the {name} optimizer needs pyoptsparse, which is not installed (use --driver SLSQP)")


def _precheck_design(scenario, design=None, what="the scenario's initial design"):
    """Run the model once so that a design that cannot exist is bad input, reported before anything is written."""
    import openmdao.api as om

    from bypassopt.problems.best_cycle import build_evaluation_problem

    prob = build_evaluation_problem(scenario, design=design, reports=False)
    try:
        prob.run_model()
    except om.AnalysisError as err:
        raise UsageError(f"{what} cannot be evaluated: {_model_message(err)}") from err
    return prob


def _model_message(err):
    """Return the model's own message, without OpenMDAO's "'path' <class X>: Error calling compute()" wrapper."""
    import re

    text = str(err).strip().splitlines()[-1] if str(err).strip() else repr(err)
    return re.sub(r"^'[^']*' <class \w+>: Error calling \w+\(\), ", "", text)


def carpet_rows(result):
    """One row per carpet point: every grid-shaped array of the result, the margins and the feasibility."""
    import numpy as np

    shape = np.shape(result["BPR"])
    columns = {}
    for key, value in result.items():
        if isinstance(value, np.ndarray) and value.shape == shape:
            columns[key] = value.ravel()
    for key, value in (result.get("margins") or {}).items():
        columns[f"margin_{key}"] = np.asarray(value).ravel()
    rows = []
    for k in range(int(np.prod(shape))):
        row = {}
        for key, col in columns.items():
            v = col[k].item() if hasattr(col[k], "item") else col[k]
            row[key] = None if isinstance(v, float) and not math.isfinite(v) else v
        rows.append(row)
    return rows


def trade_rows(result):
    """One row per trade point: the limit's value, the optimum, its design, outputs and shadow prices."""
    rows = []
    for p in result["points"]:
        row = {result["limit"]: p["value"], "success": p["success"], result["objective_name"]: p["objective"]}
        row.update(p.get("design", {}))
        row.update({k: v for k, v in p.get("outputs", {}).items() if k not in row})
        row["d_objective_d_limit"] = p.get("d_objective_d_limit")
        row["active"] = "; ".join(p.get("active", []))
        for name, value in p.get("shadow_prices", {}).items():
            row[f"shadow_price_{name}"] = value
        row["iterations"] = p.get("iterations")
        row["message"] = p.get("message")
        row["sentence"] = p.get("sentence")
        rows.append(row)
    return rows


def format_trade(result):
    """Readable table of a trade curve: the optimum at each value of the swept limit."""
    from bypassopt.report import format_number, text_table

    units = result["limit_units"]
    obj, obj_units = result["objective_name"], result["objective_units"]
    lines = ["bypassopt: trade curve", "=" * 22, textwrap_fill("CAUTION: " + CAUTION), ""]
    lines.append(f"Best installed cycle for each value of {result['limit']} ({result['limit_description']}).")
    headers = (f"{result['limit']}", obj, "BPR", "FPR", "OPR", f"d {obj} / d limit", "active limits", "")
    rows = []
    for p in result["points"]:
        d = p["design"]
        rows.append((f"{format_number(p['value'])} {units}", f"{format_number(p['objective'])} {obj_units}",
                     format_number(d["BPR"]), format_number(d["FPR"]), format_number(d["OPR"]),
                     f"{format_number(p['d_objective_d_limit'], 4)} {obj_units}/{units}",
                     ", ".join(p["active"]) or "none", "" if p["success"] else "NOT CONVERGED"))
    lines += text_table(headers, rows, "rrrrrrll")
    lines.append("")
    lines += ["  - " + p["sentence"] for p in result["points"] if p.get("sentence")]
    return "\n".join(lines) + "\n"


def _json_ready(result):
    """Return a plain dict for JSON (results with ``to_dict`` converted), with the caution added."""
    if hasattr(result, "to_dict"):
        result = result.to_dict()
    if isinstance(result, dict) and "caution" not in result:
        result = {"caution": CAUTION, **result}
    return result


def _emit_json(obj, files=None):
    from bypassopt.report import to_json

    if isinstance(obj, dict) and files is not None:
        obj = {**obj, "files": files}
    sys.stdout.write(to_json(obj))
    sys.stdout.flush()


def _print_files(run):
    if run.human and run.files:
        print(f"Files written to {run.args.out}/: " + ", ".join(os.path.basename(f) for f in run.files))


# ---------------------------------------------------------------------------------------------------------
# Commands


def cmd_evaluate(run, scenario):
    """Evaluate one design."""
    from bypassopt.report import design_summary
    from bypassopt.scenario import DESIGN_VARIABLES

    args = run.args
    design = {}
    for opt, key in (("BPR", "BPR"), ("FPR", "FPR"), ("OPR", "OPR"), ("Tt4", "Tt4_K")):
        value = getattr(args, opt)
        if value is None:
            continue
        var, lo, hi, desc = DESIGN_VARIABLES[key]
        if not lo <= value <= hi:
            raise UsageError(f"--{opt} = {value:g} is outside the allowed range ({lo:g} to {hi:g}) for {desc}")
        design[var] = value
    with run.quiet_stdout():
        prob = _precheck_design(scenario, design, "this design")
        summary = design_summary(prob)
    run.prepare_out()
    _write_summary_files(run, summary, "design")
    return summary, EXIT_OK


def _write_summary_files(run, summary, stem):
    """Write STEM.json, STEM.csv, stations.csv and summary.txt of a design summary; print the report."""
    from bypassopt.report import format_summary, summary_rows, write_csv, write_json, write_text

    write_json(run.out_path(f"{stem}.json"), summary)
    run.wrote(run.out_path(f"{stem}.json"))
    write_csv(run.out_path(f"{stem}.csv"), [{"name": "caution", "value": CAUTION, "units": ""}]
              + summary_rows(summary))
    run.wrote(run.out_path(f"{stem}.csv"))
    write_csv(run.out_path("stations.csv"), summary["stations"])
    run.wrote(run.out_path("stations.csv"))
    text = format_summary(summary)
    write_text(run.out_path("summary.txt"), text)
    run.wrote(run.out_path("summary.txt"))
    if run.human:
        sys.stdout.write(text + "\n")


def cmd_optimize(run, scenario):
    """Best installed cycle with reports and plots."""
    from bypassopt.problems.best_cycle import OBJECTIVES, build_best_cycle_problem
    from bypassopt.report import driver_succeeded, optimum_summary

    args = run.args
    _check_driver(args.driver or scenario["optimizer"]["driver"])
    plots = not args.no_plots
    if plots:
        _require_matplotlib("plotting (convergence.png, carpet.png)")
        plot_convergence, plot_carpet = _require("bypassopt.plots", ("plot_convergence", "plot_carpet"),
                                                 "plotting (convergence.png, carpet.png; or add --no-plots)")
        (run_carpet,) = _require("bypassopt.problems.carpet", ("run_carpet",),
                                 "the carpet around the optimum (carpet.png; or add --no-plots)")
    objective = args.objective or scenario["optimizer"]["objective"]
    with run.quiet_stdout():
        _precheck_design(scenario)
    run.prepare_out()
    history = run.out_path("history.sqlite")
    progress = run.progress("optimize")
    with run.quiet_stdout():
        prob, settings = build_best_cycle_problem(scenario, objective=objective, driver=args.driver,
                                                  recorder_path=history, reports=False)
        obj_name, obj_units, _ = OBJECTIVES[objective]
        if "callback" in prob.driver.options:
            def step(evaluation, value, ok, iteration):
                text = f"{obj_name} {value:.6g} {obj_units}" if ok else "evaluation failed, backing off"
                progress(None, None, f"iteration {iteration}, evaluation {evaluation}: {text}")
            prob.driver.options["callback"] = step
        result = prob.run_driver()
        success = driver_succeeded(result)
        summary = optimum_summary(prob, settings, result)
        prob.cleanup()
    progress.finish("converged" if success else "stopped without converging")
    run.wrote(history)
    _write_summary_files(run, summary, "optimum")
    if plots:
        with run.quiet_stdout():
            _write_png(run, "convergence.png", plot_convergence, history)
    if not success:
        raise NotConverged(f"the optimizer did not converge ({summary['optimizer']['message'] or 'no message'})",
                           summary)
    if plots:
        q = summary["quantities"]
        optimum = {"BPR": q["BPR"]["value"], "OPR": q["OPR"]["value"], "FPR": q["FPR"]["value"],
                   "objective": summary["objective"]["value"]}
        cprog = run.progress("carpet around the optimum")
        with run.quiet_stdout():
            carpet = run_carpet(scenario, fpr_mode="fixed", fixed_fpr=q["FPR"]["value"], progress=cprog)
        cprog.finish()
        with run.quiet_stdout():
            _write_png(run, "carpet.png", plot_carpet, carpet, optimum=optimum)
    return summary, EXIT_OK


def _run_study(run, scenario, name, run_fn, plot_fn, rows_fn, format_fn):
    """Run a study, write NAME.json, NAME.csv (and NAME.png), print its table; return (data, rows)."""
    from bypassopt.report import write_csv, write_json

    run.prepare_out()
    progress = run.progress(name)
    with run.quiet_stdout():
        result = run_fn(scenario, progress=progress)
    progress.finish()
    data = _json_ready(result)
    write_json(run.out_path(f"{name}.json"), data)
    run.wrote(run.out_path(f"{name}.json"))
    rows = rows_fn(result)
    write_csv(run.out_path(f"{name}.csv"), rows)
    run.wrote(run.out_path(f"{name}.csv"))
    if plot_fn is not None:
        with run.quiet_stdout():
            _write_png(run, f"{name}.png", plot_fn, result)
    if run.human:
        sys.stdout.write(format_fn(result) + "\n")
    return data, rows


def cmd_carpet(run, scenario):
    """BPR x OPR carpet."""
    (run_carpet,) = _require("bypassopt.problems.carpet", ("run_carpet",), "the carpet command")
    plot_carpet = None
    if not run.args.no_plots:
        _require_matplotlib("carpet.png")
        (plot_carpet,) = _require("bypassopt.plots", ("plot_carpet",), "carpet.png (or add --no-plots)")
    data, _ = _run_study(run, scenario, "carpet", run_carpet, plot_carpet, carpet_rows, format_carpet)
    return data, EXIT_OK


def format_carpet(result):
    """Readable table of a carpet: the objective at every BPR (columns) and OPR (rows); '*' breaks a limit."""
    import numpy as np

    from bypassopt.report import format_number, text_table

    name, units = result["objective_name"], result["objective_units"]
    lines = ["bypassopt: cycle carpet", "=" * 23, textwrap_fill("CAUTION: " + CAUTION), ""]
    mode = (f"FPR fixed at {format_number(result['fixed_fpr'])}" if result["fpr_mode"] == "fixed"
            else "FPR at each point's own optimum")
    from bypassopt.report import QUANTITIES

    words = next((d for n, _, d, _ in QUANTITIES if n == name), name)
    lines.append(f"{words[0].upper() + words[1:]} in {units}: BPR across, OPR down.")
    lines.append(f"{mode[0].upper() + mode[1:]}; Tt4 {format_number(result['Tt4'])} K.")
    lines.append("A '*' marks a design that breaks a limit; 'failed' one the model cannot evaluate.")
    headers = ["OPR \\ BPR"] + [format_number(b) for b in result["bpr_values"]]
    rows = []
    obj, feasible, meets = (np.asarray(result[k]) for k in ("objective", "feasible", "meets_limits"))
    for i, opr in enumerate(result["opr_values"]):
        cells = [format_number(opr)]
        for j in range(len(result["bpr_values"])):
            if not feasible[i, j]:
                cells.append("failed")
            else:
                cells.append(format_number(obj[i, j]) + ("" if meets[i, j] else "*"))
        rows.append(cells)
    lines += text_table(headers, rows, "l" + "r" * len(result["bpr_values"]))
    opt = result.get("optimum")
    lines.append("")
    if opt:
        lines.append(f"Best grid point meeting every limit: BPR {format_number(opt['BPR'])}, OPR "
                     f"{format_number(opt['OPR'])}, FPR {format_number(opt['FPR'])}, {words} "
                     f"{format_number(opt['objective'])} {units}.")
    else:
        lines.append("No grid point meets every limit.")
    return "\n".join(lines) + "\n"


def textwrap_fill(text):
    """Wrap a paragraph at 100 characters."""
    import textwrap

    return textwrap.fill(text, width=100)


def cmd_trade(run, scenario):
    """Optimum along a sweep of one limit."""
    _check_driver(scenario["optimizer"]["driver"])
    (run_trade_curve,) = _require("bypassopt.problems.trade_curve", ("run_trade_curve",), "the trade command")
    plot_trade_curve = None
    if not run.args.no_plots:
        _require_matplotlib("trade.png")
        (plot_trade_curve,) = _require("bypassopt.plots", ("plot_trade_curve",), "trade.png (or add --no-plots)")
    data, rows = _run_study(run, scenario, "trade", run_trade_curve, plot_trade_curve, trade_rows, format_trade)
    failed = [r for r in rows if r.get("success") is False]
    if failed:
        raise NotConverged(f"the optimizer did not converge at {len(failed)} of {len(rows)} trade points", data)
    return data, EXIT_OK


def cmd_reengine(run, scenario):
    """Previous engine against the optimised one."""
    from bypassopt.problems.best_cycle import OBJECTIVES
    from bypassopt.problems.reengine import compare_reengining, evaluate_previous_engine, format_reengining
    from bypassopt.report import write_csv, write_json
    from bypassopt.scenario import ScenarioError

    args = run.args
    _check_driver(args.driver or scenario["optimizer"]["driver"])
    objective = args.objective or scenario["optimizer"]["objective"]
    with run.quiet_stdout():
        _precheck_design(scenario)
        try:
            evaluate_previous_engine(scenario)
        except ScenarioError as err:
            raise UsageError(str(err)) from err
    run.prepare_out()
    progress = run.progress("reengine: optimising the new engine")

    def attach(prob):
        prob.driver.add_recorder(_iteration_recorder(progress, OBJECTIVES[objective][0]))

    with run.quiet_stdout():
        result = compare_reengining(scenario, objective=objective, driver=args.driver, before_run=attach)
    progress.finish()
    write_json(run.out_path("reengine.json"), result)
    run.wrote(run.out_path("reengine.json"))
    write_csv(run.out_path("reengine.csv"), result["comparison"])
    run.wrote(run.out_path("reengine.csv"))
    if run.human:
        sys.stdout.write(format_reengining(result) + "\n")
    if not result["optimizer"]["success"]:
        raise NotConverged("the optimizer did not converge for the new engine "
                           f"({result['optimizer']['message'] or 'no message'})", result)
    return result, EXIT_OK


def check_derivatives(scenario, tolerance=DERIVATIVE_TOLERANCE):
    """Analytic totals and partials of the best-cycle problem against complex step, at the initial design.

    Totals are compared in the optimizer's scaling; an entry's error is its absolute error divided by the
    largest derivative of the same output (so an entry that is zero up to solver noise does not count as a
    100 % error). Partials: per (output, input) pair, the absolute error over the larger of the two
    magnitudes; each component is summarised by its worst pair.
    """
    import numpy as np

    from bypassopt.problems.best_cycle import build_best_cycle_problem

    prob, _ = build_best_cycle_problem(scenario, reports=False, force_alloc_complex=True)
    prob.run_model()
    totals = prob.check_totals(method="cs", out_stream=None, driver_scaling=True)
    scale = {}
    for (of, wrt), d in totals.items():
        scale[of] = max(scale.get(of, 0.0), float(d["magnitude"].fd), float(d["magnitude"].forward))
    total_rows = []
    for (of, wrt), d in totals.items():
        err = float(d["abs error"].forward)
        rel = err / scale[of] if scale[of] > 0.0 else (0.0 if err == 0.0 else math.inf)
        total_rows.append({"of": of, "wrt": wrt, "analytic": float(np.ravel(d["J_fwd"])[0]),
                           "complex_step": float(np.ravel(d["J_fd"])[0]), "relative_error": rel})
    partials = prob.check_partials(method="cs", compact_print=True, out_stream=None)
    comp_rows = []
    for comp, pairs in partials.items():
        worst = {"component": comp, "max_relative_error": 0.0, "of": None, "wrt": None}
        for (of, wrt), d in pairs.items():
            err = d["abs error"].forward
            if err is None:
                continue
            mag = max(float(d["magnitude"].fd), float(d["magnitude"].forward))
            rel = float(err) / mag if mag > 0.0 else (0.0 if err == 0.0 else math.inf)
            if rel >= worst["max_relative_error"] or worst["of"] is None:
                worst.update(max_relative_error=rel, of=of, wrt=wrt)
        comp_rows.append(worst)
    worst_total = max(r["relative_error"] for r in total_rows)
    worst_partial = max(r["max_relative_error"] for r in comp_rows)
    return {
        "caution": CAUTION,
        "design": {k: float(prob.get_val(v)[0]) for k, v in (("BPR", "BPR"), ("FPR", "FPR"), ("OPR", "OPR"),
                                                              ("Tt4_K", "Tt4"))},
        "tolerance": tolerance,
        "passed": bool(worst_total <= tolerance and worst_partial <= tolerance),
        "totals": {"max_relative_error": worst_total, "entries": total_rows},
        "partials": {"max_relative_error": worst_partial, "components": comp_rows},
    }


def format_derivative_check(result):
    """Readable report of ``check_derivatives``."""
    from bypassopt.report import format_number, text_table

    lines = ["bypassopt: derivative check (analytic against complex step)", "=" * 59,
             textwrap_fill("CAUTION: " + CAUTION), ""]
    d = result["design"]
    lines.append(f"At the scenario's initial design: BPR {format_number(d['BPR'])}, FPR {format_number(d['FPR'])}, "
                 f"OPR {format_number(d['OPR'])}, T4 {format_number(d['Tt4_K'])} K.")
    lines.append("")
    lines.append("Total derivatives of the optimisation problem (optimizer scaling; error relative to the "
                 "output's largest derivative)")
    rows = [(r["of"], r["wrt"], format_number(r["analytic"]), format_number(r["complex_step"]),
             f"{r['relative_error']:.1e}") for r in result["totals"]["entries"]]
    lines += text_table(("output", "design variable", "analytic", "complex step", "rel. error"), rows, "llrrr")
    lines.append("")
    lines.append("Partial derivatives, worst pair of each component")
    rows = [(r["component"], f"{r['max_relative_error']:.1e}", f"d {r['of']} / d {r['wrt']}" if r["of"] else "")
            for r in result["partials"]["components"]]
    lines += text_table(("component", "rel. error", "worst pair"), rows, "lrl")
    lines.append("")
    verdict = "PASSED" if result["passed"] else "FAILED"
    lines.append(f"{verdict}: largest relative error {result['totals']['max_relative_error']:.1e} (totals), "
                 f"{result['partials']['max_relative_error']:.1e} (partials); tolerance {result['tolerance']:g}.")
    return "\n".join(lines) + "\n"


def cmd_check_derivatives(run, scenario):
    """Analytic derivatives against complex step."""
    from bypassopt.report import write_csv, write_json

    tol = run.args.tolerance
    if not tol > 0.0:
        raise UsageError(f"--tolerance = {tol:g} must be above 0")
    with run.quiet_stdout():
        _precheck_design(scenario)
    run.prepare_out()
    progress = run.progress("check-derivatives")
    progress(text="complex step through the model")
    with run.quiet_stdout():
        result = check_derivatives(scenario, tol)
    progress.finish()
    write_json(run.out_path("derivatives.json"), result)
    run.wrote(run.out_path("derivatives.json"))
    write_csv(run.out_path("derivatives.csv"), result["partials"]["components"])
    run.wrote(run.out_path("derivatives.csv"))
    if run.human:
        sys.stdout.write(format_derivative_check(result) + "\n")
    if not result["passed"]:
        raise NotConverged(f"a derivative error is above the tolerance {tol:g} (totals "
                           f"{result['totals']['max_relative_error']:.1e}, partials "
                           f"{result['partials']['max_relative_error']:.1e})", result)
    return result, EXIT_OK


def scenario_to_toml(scenario, header=""):
    """TOML text of a validated scenario (sections and keys in schema order)."""
    from bypassopt.scenario import SCHEMA

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, int):
            return str(v)
        if isinstance(v, float):
            return repr(v)
        if isinstance(v, str):
            return json.dumps(v)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{ " + ", ".join(f"{k} = {value(x)}" for k, x in v.items()) + " }"
        raise TypeError(f"cannot write {type(v).__name__} to TOML")

    lines = [f"# {ln}" if ln else "#" for ln in header.splitlines()]
    for section, keys in SCHEMA.items():
        table = scenario.get(section)
        if not table:
            continue
        lines.append("")
        lines.append(f"[{section}]")
        for key in keys:
            if key in table:
                lines.append(f"{key} = {value(table[key])}")
    return "\n".join(lines).lstrip("\n") + "\n"


def cmd_scenario(run, scenario):
    """Print or write a scenario template."""
    from importlib import resources

    from bypassopt.report import write_text
    from bypassopt.scenario import DEMO_SCENARIO

    args = run.args
    if args.scenario is None:
        text = resources.files("bypassopt").joinpath("data", DEMO_SCENARIO).read_text(encoding="utf-8")
    else:
        text = scenario_to_toml(scenario, header=f"Scenario {args.scenario} merged over the built-in demo scenario "
                                                 f"(bypassopt {__version__}).\nCAUTION: {CAUTION}")
    if args.write:
        if os.path.exists(args.write) and not args.force:
            raise UsageError(f"{args.write} exists; add --force to overwrite it")
        folder = os.path.dirname(os.path.abspath(args.write))
        if not os.path.isdir(folder):
            raise UsageError(f"cannot write {args.write}: the folder {folder} does not exist")
        write_text(args.write, text)
        run.wrote(args.write)
        if run.human:
            print(f"Scenario written to {args.write}. Edit it, then run: bypassopt optimize --scenario "
                  f"{args.write}")
    elif not args.json:
        sys.stdout.write(text)
    return scenario, EXIT_OK


COMMANDS = {
    "evaluate": cmd_evaluate,
    "optimize": cmd_optimize,
    "carpet": cmd_carpet,
    "trade": cmd_trade,
    "reengine": cmd_reengine,
    "check-derivatives": cmd_check_derivatives,
    "scenario": cmd_scenario,
}


def _one_line(text):
    return " ".join(str(text).split())


def main(argv=None):
    """Run the ``bypassopt`` command line; returns the exit code."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except UsageError as err:
        print(f"bypassopt: error: {_one_line(err)}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except SystemExit as exc:  # --help, --version
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    if args.command is None:
        print("bypassopt: error: choose a command: " + ", ".join(COMMANDS) + " (see 'bypassopt --help')",
              file=sys.stderr)
        return EXIT_BAD_INPUT

    run = _Run(args)
    with warnings.catch_warnings():
        if not args.debug:
            warnings.simplefilter("ignore")
        try:
            from bypassopt.scenario import ScenarioError, load_scenario

            try:  # validated first: a bad file costs no import of the numerical libraries
                scenario = load_scenario(args.scenario)
            except ScenarioError as err:
                raise UsageError(str(err)) from err
            if args.command != "scenario":
                run.check_out()
                import openmdao.api  # noqa: F401

                if not args.debug:  # OpenMDAO sets its own warning filters when imported
                    warnings.simplefilter("ignore")
            try:
                result, code = COMMANDS[args.command](run, scenario)
            except ScenarioError as err:  # options checked inside the commands (objective, driver)
                raise UsageError(str(err)) from err
        except UsageError as err:
            print(f"bypassopt: error: {_one_line(err)}", file=sys.stderr)
            return EXIT_BAD_INPUT
        except NotConverged as err:
            if args.json:
                payload = err.result if isinstance(err.result, dict) else {"caution": CAUTION}
                _emit_json({**payload, "error": _one_line(err)}, run.files)
            print(f"bypassopt: error: {_one_line(err)}; the files written so far are kept in {args.out}",
                  file=sys.stderr)
            return EXIT_NOT_CONVERGED
        except KeyboardInterrupt:
            print(f"bypassopt: error: interrupted; the files written so far are kept in {args.out}", file=sys.stderr)
            return 130
        except Exception as err:  # noqa: BLE001 - the command line reports every failure in one line
            if args.debug:
                traceback.print_exc()
            hint = "" if args.debug else " (run again with --debug for the traceback)"
            print(f"bypassopt: error: unexpected {type(err).__name__}: {_one_line(err)}{hint}", file=sys.stderr)
            return EXIT_UNEXPECTED
    if args.json:
        _emit_json(result, run.files or None)
    else:
        _print_files(run)
    return code


if __name__ == "__main__":
    sys.exit(main())
