"""Command line: ``bypassopt <command>`` evaluates, optimises, sweeps and checks installed turbofan cycles.

The commands live in ``bypassopt.commands`` (one module each); this module parses the arguments, loads the
scenario, dispatches and turns every outcome into an exit code and at most one error line.

Exit codes: 0 success; 2 bad input (one line on stderr, nothing computed or written); 3 the computation ran but
did not reach its goal (the optimizer did not converge, or a derivative check is above its tolerance), with its
results written; 1 an unexpected error (one line; ``--debug`` shows the traceback); 130 interrupted (SIGINT,
Ctrl-C) and 143 terminated (SIGTERM): 128 + the signal number, as a shell reports a process the signal killed.

Results are never lost: a run writes into a new folder beside ``--out`` and replaces ``--out`` with it only when
it finishes with 0 or 3 (the replaced folder is kept as ``<out>.previous``); a run that fails or is interrupted
leaves ``--out`` as it was (an interrupted run's partial files are kept in ``<out>.interrupted``). A lock
``<out>.lock`` refuses a second run into the same folder while one is writing (exit 2).
"""

import sys
import traceback
import warnings

from bypassopt import CAUTION
from bypassopt.commands import COMMANDS, OUTPUTS, build_parser
from bypassopt.commands._mpi import is_worker_process, run_worker
from bypassopt.commands._run import (DEFAULT_OUT, EXIT_BAD_INPUT, EXIT_NOT_CONVERGED, EXIT_OK, EXIT_UNEXPECTED,
                                     NotConverged, ProgressDisplay, Run, UsageError, emit_json, interrupt_signal,
                                     one_line, terminate_as_interrupt)
from bypassopt.commands.carpet import carpet_rows, format_carpet
from bypassopt.commands.check_derivatives import DERIVATIVE_TOLERANCE, check_derivatives, format_derivative_check
from bypassopt.commands.scenario import scenario_to_toml
from bypassopt.commands.trade import format_trade, trade_rows

__all__ = ["COMMANDS", "DEFAULT_OUT", "DERIVATIVE_TOLERANCE", "EXIT_BAD_INPUT", "EXIT_NOT_CONVERGED", "EXIT_OK",
           "EXIT_UNEXPECTED", "OUTPUTS", "NotConverged", "ProgressDisplay", "UsageError", "build_parser",
           "carpet_rows", "check_derivatives", "format_carpet", "format_derivative_check", "format_trade", "main",
           "scenario_to_toml", "trade_rows"]


def main(argv=None):
    """Run the ``bypassopt`` command line; returns the exit code."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except UsageError as err:
        print(f"bypassopt: error: {one_line(err)}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except SystemExit as exc:  # --help, --version
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    if args.command is None:
        print("bypassopt: error: choose a command: " + ", ".join(COMMANDS) + " (see 'bypassopt --help')",
              file=sys.stderr)
        return EXIT_BAD_INPUT

    if is_worker_process():  # under mpiexec, a process other than 0 only computes its share (commands/_mpi.py)
        return run_worker(args)
    run = Run(args, OUTPUTS[args.command], argv=sys.argv[1:] if argv is None else argv)
    try:
        with terminate_as_interrupt():
            return _run_command(run, args)
    except KeyboardInterrupt as err:  # while printing, once the results were swapped in (or none were written)
        sig = interrupt_signal(err)
        done = f"; the results are complete in {args.out}" if run.committed else ""
        print(f"bypassopt: error: interrupted ({sig.name}){done}", file=sys.stderr)
        return 128 + int(sig)
    finally:
        run.close()  # on every way out: a folder not swapped in is set aside, the lock released


def _run_command(run, args):
    """Run the command: load the scenario, check and lock ``--out``, dispatch, swap the results in; exit code."""
    not_converged = None
    with warnings.catch_warnings():
        if not args.debug:
            warnings.simplefilter("ignore")
        try:
            from bypassopt.scenario import ScenarioError, load_scenario

            try:  # validated first: a bad file costs no import of the numerical libraries
                scenario = load_scenario(args.scenario)
            except ScenarioError as err:
                raise UsageError(str(err)) from err
            if getattr(args, "model", None):
                scenario["optimizer"]["model"] = args.model
            if args.command != "scenario":
                run.check_out()
                import openmdao.api  # noqa: F401

                if not args.debug:  # OpenMDAO sets its own warning filters when imported
                    warnings.simplefilter("ignore")
            try:
                result, code = COMMANDS[args.command](run, scenario)
            except ScenarioError as err:  # options checked inside the commands (objective, driver)
                raise UsageError(str(err)) from err
            except NotConverged as err:  # complete results of a computation that missed its goal: kept
                not_converged, result, code = err, err.result, EXIT_NOT_CONVERGED
            run.commit(code)
        except UsageError as err:
            run.close_progress()
            print(f"bypassopt: error: {one_line(err)}", file=sys.stderr)
            return EXIT_BAD_INPUT
        except KeyboardInterrupt as err:
            run.close_progress()
            sig = interrupt_signal(err)
            kept = run.discard(interrupted=sig)
            if run.committed:
                where = f"the results are complete in {args.out}"
            elif kept:
                where = f"{args.out} is left as it was; the partial results are in {kept}"
            elif run.target is not None:
                where = f"{args.out} is left as it was"
            else:
                where = "nothing was written"
            print(f"bypassopt: error: interrupted ({sig.name}); {where}", file=sys.stderr)
            return 128 + int(sig)
        except Exception as err:  # noqa: BLE001 - the command line reports every failure in one line
            run.close_progress()
            if args.debug:
                traceback.print_exc()
            hint = "" if args.debug else " (run again with --debug for the traceback)"
            print(f"bypassopt: error: unexpected {type(err).__name__}: {one_line(err)}{hint}", file=sys.stderr)
            return EXIT_UNEXPECTED
    if not_converged is not None:
        run.close_progress()
        if args.json:
            payload = result if isinstance(result, dict) else {"caution": CAUTION}
            emit_json({**payload, "error": one_line(not_converged)}, run.files)
        print(f"bypassopt: error: {one_line(not_converged)}; the files written so far are kept in {args.out}",
              file=sys.stderr)
        return EXIT_NOT_CONVERGED
    if args.json:
        emit_json(result, run.files or None)
    else:
        run.print_files()
    return code


if __name__ == "__main__":
    sys.exit(main())
