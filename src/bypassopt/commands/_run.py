"""What every command shares: exit codes, errors, the run and its output folder, progress and printing.

Exit codes: 0 success; 2 bad input (one line on stderr, nothing computed or written); 3 the computation ran but
did not reach its goal, with the files written so far left in place; 1 an unexpected error; 130 interrupted
(SIGINT, Ctrl-C) and 143 terminated (SIGTERM), 128 + the signal's number as a shell reports it.

The output folder ``--out`` is replaced as a whole, and only by a run that finished (see ``Run``): each run
writes into a new folder beside it, ``.<name>.partial-<pid>``, under a lock ``<name>.lock``, and swaps it in
at the end (exit 0 or 3); the folder it replaces is kept as ``<name>.previous``.
"""

import argparse
import contextlib
import datetime
import glob
import hashlib
import importlib
import importlib.util
import io
import math
import os
import shutil
import signal
import sys
import tempfile
import textwrap
import threading
import time

try:
    import fcntl
except ImportError:  # not POSIX: runs are not locked
    fcntl = None

from bypassopt import CAUTION, __version__

DEFAULT_OUT = "bypassopt_results"

EXIT_OK, EXIT_UNEXPECTED, EXIT_BAD_INPUT, EXIT_NOT_CONVERGED = 0, 1, 2, 3

#: Written into every finished results folder: what ran, on what, when, with what outcome, and the files.
MANIFEST = "manifest.json"


class UsageError(Exception):
    """Bad command-line input or scenario: reported in one line, exit code 2."""


class NotConverged(Exception):
    """The computation finished without reaching its goal: exit code 3, files kept."""

    def __init__(self, message, result=None):
        super().__init__(message)
        self.result = result


class Terminated(KeyboardInterrupt):
    """A termination signal (SIGTERM), raised where it arrives like Ctrl-C's ``KeyboardInterrupt``.

    It takes the same way out: the run's partial folder is set aside and ``--out`` is left as it was.
    """

    def __init__(self, signum):
        super().__init__(signal.Signals(signum).name)
        self.signum = signum


def interrupt_signal(err):
    """Return the signal behind a ``KeyboardInterrupt``: SIGTERM for ``Terminated``, else SIGINT."""
    return signal.Signals(getattr(err, "signum", signal.SIGINT))


@contextlib.contextmanager
def terminate_as_interrupt():
    """While active, SIGTERM raises ``Terminated`` (a ``KeyboardInterrupt``); the old handler comes back after.

    Does nothing outside the main thread, where Python cannot set signal handlers.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame):
        raise Terminated(signum)

    old = signal.signal(signal.SIGTERM, handler)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, old)


@contextlib.contextmanager
def signals_ignored():
    """Ignore SIGINT and SIGTERM for a moment (swapping the results folder in or setting a partial one aside)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = {sig: signal.signal(sig, signal.SIG_IGN) for sig in (signal.SIGINT, signal.SIGTERM)}
    try:
        yield
    finally:
        for sig, handler in old.items():
            signal.signal(sig, handler if handler is not None else signal.SIG_DFL)


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
    """State of one command: arguments, output folder, written files, what to print.

    The output folder protocol, for the commands that write into ``--out``:

    1. ``check_out`` (before anything is computed) rejects an ``--out`` that cannot be replaced safely and
       takes the lock ``<out>.lock`` beside it (``fcntl.flock``, non-blocking): a second run into the same
       folder is refused with a ``UsageError`` that names the pid holding it.
    2. ``prepare_out`` (once the inputs are known to be good) creates a new, empty folder beside ``--out``,
       ``.<name>.partial-<pid>``; ``out_path`` names the files in it, ``wrote`` notes them under their final
       names in ``--out``.
    3. ``commit`` (exit 0, or 3 with complete but unconverged results) writes ``manifest.json`` and swaps the
       folder in: the earlier ``--out`` becomes ``<out>.previous`` (only the last one is kept).
    4. ``discard`` (a run that failed or was interrupted) leaves ``--out`` as it was: a failed run's partial
       folder is removed; an interrupted one's is kept as ``<out>.interrupted``, with a manifest saying so.
    5. ``close`` (on every way out) discards what was not committed and releases the lock.
    """

    def __init__(self, args, outputs=(), argv=None):
        self.args = args
        self.outputs = tuple(outputs)
        self.argv = list(sys.argv[1:] if argv is None else argv)
        self.files = []
        self.human = not (args.json or args.quiet)
        self.started = utc_now()
        self.target = None  # the real path of --out, once checked
        self.folder = None  # the partial folder being written, once prepared
        self.committed = False
        self.scenario_source = None
        self._lock_fd = None
        self._lock_path = None
        self._progress = []
        self._unlisted = set()
        self.phase_seconds = {}
        self._clock0 = time.perf_counter()

    @contextlib.contextmanager
    def phase(self, name):
        """Add the wall time of the block to ``phase_seconds[name]`` (written to manifest.json; issue: speed)."""
        t0 = time.perf_counter()
        try:
            yield
        finally:
            self.phase_seconds[name] = self.phase_seconds.get(name, 0.0) + time.perf_counter() - t0

    @property
    def shown_out(self):
        """``--out`` as the user gave it, without a trailing separator (the name messages use)."""
        return self.args.out.rstrip("/" + os.sep) or self.args.out

    def out_path(self, name):
        """Path of a file in the output folder: in the partial folder while the run writes it."""
        return os.path.join(self.folder or self.args.out, name)

    def check_out(self):
        """Reject an output folder that cannot be one, and lock it, before anything is computed."""
        out = self.args.out
        if os.path.exists(out) and not os.path.isdir(out):
            raise UsageError(f"--out {out} exists and is not a folder")
        target = os.path.realpath(out)
        cwd = os.path.realpath(os.getcwd())
        if target == os.path.dirname(target) or cwd == target or cwd.startswith(target + os.sep):
            raise UsageError(f"--out {out} is the current folder or one above it: a run replaces its results folder "
                             "as a whole, so give a folder of its own (such as --out results)")
        self.target = target
        self.scenario_source = scenario_source(self.args.scenario)
        if os.path.isdir(os.path.dirname(target)):
            self._lock()  # else prepare_out creates the parent folder and locks then
        for path, what in ((target, "--out"), (target + ".previous", "the backup"),
                           (target + ".interrupted", "the interrupted run's folder")):
            foreign = foreign_files(path)
            if foreign:
                self.close()
                raise UsageError(f"{what} {path if what != '--out' else out} holds files that bypassopt did not "
                                 f"write ({', '.join(foreign[:3])}{', ...' if len(foreign) > 3 else ''}); a run "
                                 "replaces its results folder as a whole, so give a new or empty folder, or one "
                                 "of an earlier run")

    def prepare_out(self):
        """Create the new, empty folder this run writes into, beside ``--out`` (which stays as it is)."""
        if self.folder is not None:
            return
        if self.target is None:
            self.check_out()
        parent, name = os.path.split(self.target)
        try:
            os.makedirs(parent, exist_ok=True)
        except OSError as err:
            raise UsageError(f"cannot create the output folder {self.args.out}: {err.strerror}") from err
        self._lock()
        for stale in glob.glob(os.path.join(glob.escape(parent), f".{glob.escape(name)}.partial-*")):
            shutil.rmtree(stale, ignore_errors=True)  # left by a killed run: this run holds the lock
        folder = os.path.join(parent, f".{name}.partial-{os.getpid()}")
        try:
            os.mkdir(folder)
        except OSError as err:
            raise UsageError(f"cannot create the output folder {self.args.out}: {err.strerror}") from err
        self.folder = folder

    def wrote(self, path, listed=True):
        """Note a written file: in the JSON output, and in the closing list unless ``listed`` is False.

        A file of the partial folder is noted under its final name in ``--out``.
        """
        path = os.fspath(path)
        if self.folder is not None and os.path.dirname(os.path.abspath(path)) == os.path.abspath(self.folder):
            path = os.path.join(self.args.out, os.path.basename(path))
        self.files.append(path)
        if not listed:
            self._unlisted.add(path)

    def commit(self, code):
        """Swap the finished run's folder in as ``--out``; the earlier one becomes ``<out>.previous``.

        ``code`` is the run's exit code: 0 gives the manifest status "complete", 3 "not converged". Does
        nothing for a command that wrote no folder.
        """
        if self.folder is None or self.committed:
            return
        with signals_ignored():
            self._write_manifest("complete" if code == EXIT_OK else "not converged", code)
            self.wrote(os.path.join(self.folder, MANIFEST))
            replace_folder(self.folder, self.target, self.target + ".previous")
            self.folder = None
            self.committed = True

    def discard(self, interrupted=None):
        """Set aside the folder of a run that did not finish; ``--out`` stays as it was.

        ``interrupted`` (a signal) keeps the partial folder as ``<out>.interrupted`` (replacing an older one)
        with a manifest of status "interrupted", and returns its name as messages show it; otherwise (or if
        that fails) the partial folder is removed and None returned.
        """
        if self.folder is None or self.committed:
            return None
        folder, self.folder = self.folder, None
        with signals_ignored():
            if interrupted is not None:
                try:
                    self._write_manifest("interrupted", 128 + int(interrupted), folder=folder,
                                         signal=signal.Signals(interrupted).name)
                    kept = self.target + ".interrupted"
                    remove_path(kept)
                    os.replace(folder, kept)
                    return self.shown_out + ".interrupted"
                except OSError:
                    pass
            shutil.rmtree(folder, ignore_errors=True)
        return None

    def close(self):
        """End the run on any way out: discard a folder not committed, release the lock."""
        self.discard()
        if self._lock_fd is not None:
            with signals_ignored():
                with contextlib.suppress(OSError):
                    os.unlink(self._lock_path)  # while still holding it: see _lock
                os.close(self._lock_fd)
                self._lock_fd = None

    def _lock(self):
        """Take the lock ``<out>.lock``, or raise a UsageError naming the run that holds it."""
        if self._lock_fd is not None or fcntl is None:
            return
        path = self.target + ".lock"
        while True:
            try:
                fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o666)
            except OSError as err:
                raise UsageError(f"cannot create the lock file {path}: {err.strerror}") from err
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                pid = os.pread(fd, 32, 0).decode("ascii", "replace").strip() or "unknown"
                os.close(fd)
                raise UsageError(f"another bypassopt run is writing to {self.args.out} (pid {pid}); it holds the "
                                 f"lock file {path}") from None
            except OSError:  # a file system without locks: run unlocked
                os.close(fd)
                return
            try:
                if os.path.samestat(os.fstat(fd), os.stat(path)):
                    break
            except OSError:
                pass
            os.close(fd)  # its holder removed the file as it released it: lock the new one
        os.ftruncate(fd, 0)
        os.write(fd, f"{os.getpid()}\n".encode("ascii"))
        self._lock_fd, self._lock_path = fd, path

    def _write_manifest(self, status, code, folder=None, **extra):
        """Write ``manifest.json`` into the (partial) folder: command, version, scenario, times, files."""
        from bypassopt.report import write_json

        folder = folder or self.folder
        files = []
        for name in sorted(os.listdir(folder)):
            path = os.path.join(folder, name)
            if name != MANIFEST and os.path.isfile(path) and not name.startswith("."):
                files.append({"name": name, "bytes": os.path.getsize(path), "sha256": file_sha256(path)})
        manifest = {"status": status, "exit_code": code, **extra, "command": self.args.command,
                    "command_line": ["bypassopt", *self.argv], "bypassopt_version": __version__,
                    "python": sys.version.split()[0], "scenario": self.scenario_source or
                    scenario_source(self.args.scenario), "started": self.started, "finished": utc_now(),
                    "files": files, "phase_seconds": {**{k: round(v, 3) for k, v in self.phase_seconds.items()},
                                                      "total": round(time.perf_counter() - self._clock0, 3)},
                    "caution": CAUTION}
        write_json(os.path.join(folder, MANIFEST), manifest)

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
# The results folder


def utc_now():
    """Return the time now, ISO 8601 in UTC to the second: '2025-01-31T12:00:00Z'."""
    return datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def file_sha256(path):
    """SHA-256 of a file's bytes, in hex."""
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def scenario_source(path):
    """Where the scenario came from, for the manifest: the file and its SHA-256, or the built-in demo."""
    if path is None:
        from bypassopt.scenario import DEMO_SCENARIO

        return {"source": "built-in demo", "file": DEMO_SCENARIO, "sha256": None}
    try:
        digest = file_sha256(path)
    except OSError:
        digest = None
    return {"source": "file", "file": os.path.abspath(path), "sha256": digest}


def result_names():
    """Names a results folder may hold: every command's files and the manifest."""
    from bypassopt.commands import OUTPUTS

    return {name for names in OUTPUTS.values() for name in names} | {MANIFEST}


def foreign_files(folder):
    """Sorted names in ``folder`` that no bypassopt run writes (empty when it is missing or a results folder).

    Accepted besides the result files: their SQLite journals and the writers' temporary files (``.NAME.*``).
    """
    if not os.path.isdir(folder):
        return []
    known = result_names()
    foreign = []
    for entry in os.scandir(folder):
        name = entry.name
        ours = (name in known or any(name == k + s for k in known for s in ("-journal", "-wal", "-shm"))
                or any(name.startswith(f".{k}.") for k in known))
        if not ours or entry.is_dir(follow_symlinks=False):
            foreign.append(name)
    return sorted(foreign)


def remove_path(path):
    """Remove a folder (with its contents) or a file; nothing when missing."""
    if os.path.isdir(path) and not os.path.islink(path):
        shutil.rmtree(path)
    elif os.path.lexists(path):
        os.unlink(path)


def exchange_paths(a, b):
    """Swap two paths in one step (Linux ``renameat2`` with RENAME_EXCHANGE); False where that is unavailable."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        import ctypes

        renameat2 = ctypes.CDLL(None, use_errno=True).renameat2
    except (OSError, AttributeError):
        return False
    renameat2.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    renameat2.restype = ctypes.c_int
    at_fdcwd, rename_exchange = -100, 2
    return renameat2(at_fdcwd, os.fsencode(a), at_fdcwd, os.fsencode(b), rename_exchange) == 0


def fsync_folder(folder):
    """Make renames in ``folder`` durable where the platform allows it."""
    with contextlib.suppress(OSError, AttributeError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def replace_folder(new, target, backup):
    """Put the folder ``new`` in place of ``target``; a non-empty ``target`` becomes ``backup``.

    ``target`` always names a whole folder: where Linux can exchange two paths in one step, the old folder
    and the new one trade places atomically; elsewhere ``target`` is missing between two renames (and is
    put back if the second fails). A missing or empty ``target`` is replaced in one rename.
    """
    if not os.path.lexists(target) or (os.path.isdir(target) and not os.listdir(target)):
        os.replace(new, target)
    else:
        remove_path(backup)
        if exchange_paths(new, target):
            os.replace(new, backup)  # ``new`` names the earlier results now
        else:
            os.replace(target, backup)
            try:
                os.replace(new, target)
            except BaseException:
                os.replace(backup, target)
                raise
    fsync_folder(os.path.dirname(target))


# ---------------------------------------------------------------------------------------------------------
# Output helpers


def write_png(run, name, plot, *args, **kwargs):
    """Call ``plot(*args, tmp_png, **kwargs)`` with a temporary file, then move it into place."""
    from bypassopt.report import _file_mode

    path = run.out_path(name)
    fd, tmp = tempfile.mkstemp(prefix=f".{name}.", suffix=".png", dir=os.path.dirname(path))
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
