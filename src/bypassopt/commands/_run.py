"""What every command shares: exit codes, errors, the run and its output folder, progress and printing.

Exit codes: 0 success; 2 bad input (one line on stderr, nothing computed or written); 3 the computation ran but
did not reach its goal, with the files written so far left in place; 1 an unexpected error.
"""

import argparse
import contextlib
import importlib
import importlib.util
import io
import math
import os
import sys
import tempfile
import textwrap
import time

from bypassopt import CAUTION

DEFAULT_OUT = "bypassopt_results"

EXIT_OK, EXIT_UNEXPECTED, EXIT_BAD_INPUT, EXIT_NOT_CONVERGED = 0, 1, 2, 3


class UsageError(Exception):
    """Bad command-line input or scenario: reported in one line, exit code 2."""


class NotConverged(Exception):
    """The computation finished without reaching its goal: exit code 3, files kept."""

    def __init__(self, message, result=None):
        super().__init__(message)
        self.result = result


class Parser(argparse.ArgumentParser):
    """ArgumentParser whose errors become one-line ``UsageError``s instead of usage text and exit."""

    def error(self, message):
        """Raise instead of printing usage."""
        raise UsageError(f"{message} (see '{self.prog} --help')")


def float_arg(text):
    """Argument type: a finite number."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    return value


def one_line(text):
    """Return ``text`` on one line (whitespace runs, newlines included, become one space)."""
    return " ".join(str(text).split())


def textwrap_fill(text):
    """Wrap a paragraph at 100 characters."""
    return textwrap.fill(text, width=100)


def is_terminal(stream):
    """Return True when ``stream`` is an interactive terminal (not a pipe, file or captured stream)."""
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError, OSError):
        return False


# ---------------------------------------------------------------------------------------------------------
# Progress on stderr


class ProgressDisplay:
    """Progress of a long computation on stderr.

    On a terminal a rich progress display (spinner, bar when the total is known, elapsed time) that disappears
    when it ends; elsewhere (pipes, CI logs) a plain line at most every ``interval_s`` seconds, without
    carriage returns or escape codes. Call it as ``progress(done, total=None, text="")``; ``finish(text)``
    ends it with one line ``label: text in N s``; ``close()`` ends it silently (after an error).
    """

    def __init__(self, label, enabled=True, stream=None, interval_s=3.0):
        self.label = label
        self.enabled = enabled
        self.stream = stream if stream is not None else sys.stderr
        self.tty = is_terminal(self.stream)
        self.interval_s = interval_s
        self._last = None
        self._shown = False
        self._rich = None
        self._task = None
        self._start = time.monotonic()

    def _clean(self, text):
        from bypassopt.report import clean_text

        return clean_text(text)

    def __call__(self, done=None, total=None, text="", **kwargs):
        """Show ``done`` of ``total`` (either may be None) and a short text."""
        if not self.enabled:
            return
        if isinstance(done, dict):  # a callback that passes one mapping
            kwargs, done = {**done, **kwargs}, None
        done = kwargs.get("done", done)
        total = kwargs.get("total", total)
        text = self._clean(kwargs.get("text", kwargs.get("message", text)) or "")
        count = "" if done is None else (f"{done}/{total}" if total else f"{done}")
        self._shown = True
        if self.tty:
            self._show_rich(done, total, count, text)
            return
        now = time.monotonic()
        if self._last is None or now - self._last >= self.interval_s:
            elapsed = now - self._start
            line = " ".join(p for p in (f"{self.label}:", count, text, f"({elapsed:.0f} s)") if p)
            self.stream.write(line + "\n")
            self.stream.flush()
            self._last = now

    def _show_rich(self, done, total, count, text):
        from rich.console import Console
        from rich.markup import escape
        from rich.progress import BarColumn, Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

        if self._rich is None:
            console = Console(file=self.stream, highlight=False)
            self._rich = Progress(SpinnerColumn(), TextColumn("{task.description}"), BarColumn(bar_width=20),
                                  TextColumn("{task.fields[count]}"), TextColumn("{task.fields[text]}"),
                                  TimeElapsedColumn(), console=console, transient=True, redirect_stdout=False,
                                  redirect_stderr=False)
            self._rich.start()
            self._task = self._rich.add_task(escape(self.label), total=None, count="", text="")
        self._rich.update(self._task, completed=done or 0, total=total or None, count=count, text=escape(text))

    def close(self):
        """Stop the display without a final line."""
        if self._rich is not None:
            self._rich.stop()
            self._rich = None

    def finish(self, text="finished", seconds=None):
        """End the display with one line; ``seconds`` replaces the display's own elapsed time."""
        self.close()
        if not self.enabled or not self._shown:
            return
        seconds = time.monotonic() - self._start if seconds is None else seconds
        self.stream.write(f"{self.label}: {self._clean(text)} in {seconds:.1f} s\n")
        self.stream.flush()
        self._shown = False


# ---------------------------------------------------------------------------------------------------------
# The run


class Run:
    """State of one command: arguments, output folder, written files, what to print."""

    def __init__(self, args, outputs=()):
        self.args = args
        self.outputs = tuple(outputs)
        self.files = []
        self.human = not (args.json or args.quiet)
        self._progress = []
        self._unlisted = set()

    def out_path(self, name):
        """Path of a file in the output folder."""
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
        for name in self.outputs:
            path = self.out_path(name)
            if os.path.isfile(path):
                os.unlink(path)

    def wrote(self, path, listed=True):
        """Note a written file: in the JSON output, and in the closing list unless ``listed`` is False."""
        self.files.append(os.fspath(path))
        if not listed:
            self._unlisted.add(os.fspath(path))

    def progress(self, label):
        """Return a ``ProgressDisplay`` on stderr (silent with --quiet), closed by ``close_progress`` on errors."""
        display = ProgressDisplay(label, enabled=not self.args.quiet)
        self._progress.append(display)
        return display

    def close_progress(self):
        """Stop every progress display still running."""
        for display in self._progress:
            display.close()

    def quiet_stdout(self):
        """Send what libraries print (optimizer messages) to stderr with --debug, else discard it."""
        return contextlib.redirect_stdout(sys.stderr if self.args.debug else io.StringIO())

    def print_report(self, blocks):
        """Print a report (strings and ``report.TextTable`` blocks) unless --json or --quiet.

        On a terminal through rich (tables drawn by rich); elsewhere as the plain text written to files.
        """
        if not self.human:
            return
        from bypassopt.report import render_plain, render_rich

        if is_terminal(sys.stdout):
            from rich.console import Console

            console = Console(file=sys.stdout, highlight=False)
            render_rich(blocks, console)
            console.print()
        else:
            sys.stdout.write(render_plain(blocks) + "\n")

    def print_files(self):
        """List the written files (human output only): those in ``--out`` by name, any other by its path."""
        if not self.human:
            return
        out = os.path.abspath(self.args.out)
        files = [f for f in self.files if f not in self._unlisted]
        inside = [f for f in files if os.path.dirname(os.path.abspath(f)) == out]
        elsewhere = [f for f in files if f not in inside]
        if inside:
            print(f"Files written to {self.args.out}/: " + ", ".join(os.path.basename(f) for f in inside))
        if elsewhere:
            print("Files written: " + ", ".join(elsewhere))


# ---------------------------------------------------------------------------------------------------------
# Output helpers


def write_png(run, name, plot, *args, **kwargs):
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


def write_json_file(run, name, data):
    """Write NAME (JSON) into the output folder and note it."""
    from bypassopt.report import write_json

    write_json(run.out_path(name), data)
    run.wrote(run.out_path(name))


def write_csv_file(run, name, rows, comments=()):
    """Write NAME (CSV) into the output folder and note it."""
    from bypassopt.report import write_csv

    write_csv(run.out_path(name), rows, comments=comments)
    run.wrote(run.out_path(name))


def write_summary_files(run, summary, stem):
    """Write STEM.json, STEM.csv, stations.csv and summary.txt of a design summary; print the report.

    STEM.csv holds ``name, value, units`` with numbers only in ``value``; the caution is its first line,
    a '#' comment.
    """
    from bypassopt.report import render_plain, summary_blocks, summary_rows, write_text

    write_json_file(run, f"{stem}.json", summary)
    write_csv_file(run, f"{stem}.csv", summary_rows(summary), comments=[f"CAUTION: {CAUTION}"])
    write_csv_file(run, "stations.csv", summary["stations"])
    blocks = summary_blocks(summary)
    write_text(run.out_path("summary.txt"), render_plain(blocks))
    run.wrote(run.out_path("summary.txt"))
    run.print_report(blocks)


def run_study(run, scenario, name, run_fn, plot_fn, rows_fn, blocks_fn):
    """Run a study, write NAME.json, NAME.csv (and NAME.png), print its report; return (data, rows)."""
    run.prepare_out()
    progress = run.progress(name)
    with run.quiet_stdout():
        result = run_fn(scenario, progress=progress)
    progress.finish()
    data = json_ready(result)
    write_json_file(run, f"{name}.json", data)
    rows = rows_fn(result)
    write_csv_file(run, f"{name}.csv", rows)
    if plot_fn is not None:
        with run.quiet_stdout():
            write_png(run, f"{name}.png", plot_fn, result)
    run.print_report(blocks_fn(result))
    return data, rows

def json_ready(result):
    """Return a plain dict for JSON (results with ``to_dict`` converted), with the caution added."""
    if hasattr(result, "to_dict"):
        result = result.to_dict()
    if isinstance(result, dict) and "caution" not in result:
        result = {"caution": CAUTION, **result}
    return result


def emit_json(obj, files=None):
    """Print ``obj`` as the one JSON document on stdout (with the written files when given)."""
    from bypassopt.report import to_json

    if isinstance(obj, dict) and files is not None:
        obj = {**obj, "files": files}
    sys.stdout.write(to_json(obj))
    sys.stdout.flush()


# ---------------------------------------------------------------------------------------------------------
# Checks before anything is computed


def require(module, attrs, why):
    """Import ``module`` and return its attributes, or raise a UsageError that says what is missing."""
    try:
        mod = importlib.import_module(module)
    except ImportError as err:
        raise UsageError(f"{why} needs {module}, which cannot be imported ({err})") from err
    missing = [a for a in attrs if not hasattr(mod, a)]
    if missing:
        raise UsageError(f"{why} needs {module}.{', '.join(missing)}, which this installation lacks")
    return [getattr(mod, a) for a in attrs]


def require_matplotlib(why):
    """Raise a UsageError when matplotlib is missing."""
    if importlib.util.find_spec("matplotlib") is None:
        raise UsageError(f"{why} needs matplotlib: pip install 'bypassopt[plots]', or add --no-plots")


def check_driver(name):
    """Raise a UsageError when the named optimizer needs pyoptsparse and it is missing."""
    from bypassopt.problems.drivers import pyoptsparse_available

    if name and name != "SLSQP" and not pyoptsparse_available():
        raise UsageError(f"the {name} optimizer needs pyoptsparse, which is not installed (use --driver SLSQP)")


def precheck_design(scenario, design=None, what="the scenario's initial design"):
    """Run the model once so that a design that cannot exist is bad input, reported before anything is written."""
    import openmdao.api as om

    from bypassopt.problems.best_cycle import build_evaluation_problem

    prob = build_evaluation_problem(scenario, design=design, reports=False)
    try:
        prob.run_model()
    except om.AnalysisError as err:
        raise UsageError(f"{what} cannot be evaluated: {model_message(err)}") from err
    return prob


def model_message(err):
    """Return the model's own message, without OpenMDAO's "'path' <class X>: Error calling compute()" wrapper."""
    import re

    text = str(err).strip().splitlines()[-1] if str(err).strip() else repr(err)
    return re.sub(r"^'[^']*' <class \w+>: Error calling \w+\(\), ", "", text)


def progress_callback(progress, objective_name, objective_units):
    """Return a driver ``callback(evaluation, objective, ok, iteration)`` that shows the driver's counts."""
    def step(evaluation, value, ok, iteration):
        text = f"{objective_name} {value:.6g} {objective_units}" if ok else "evaluation failed, backing off"
        progress(None, None, f"iteration {iteration}, evaluation {evaluation}: {text}")
    return step


def optimizer_counts(optimizer):
    """Words for the optimizer record of a summary: '12 iterations, 40 model evaluations'."""
    its, evals = optimizer["iterations"], optimizer["model_evaluations"]
    return f"{its} iteration{'' if its == 1 else 's'}, {evals} model evaluation{'' if evals == 1 else 's'}"
