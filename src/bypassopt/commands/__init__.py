"""The commands of ``bypassopt``: one module each, with ``add_parser(sub, common)`` and ``run(run, scenario)``.

``_run`` holds what they share (exit codes, errors, the output folder, progress, printing and files);
``build_parser`` assembles the argument parser from the command modules.
"""

from bypassopt import CAUTION, __version__
from bypassopt.commands import (carpet, check_derivatives, evaluate, multistart, optimize, reengine, scenario,
                                trade)
from bypassopt.commands._run import DEFAULT_OUT, Parser

#: Command name -> module, in the order of ``bypassopt --help``.
MODULES = {m.NAME: m for m in (evaluate, optimize, carpet, trade, reengine, multistart, check_derivatives,
                               scenario)}

#: Command name -> ``run(run, scenario)`` returning (result, exit code).
COMMANDS = {name: m.run for name, m in MODULES.items()}

#: Files each command writes into ``--out`` (stale ones from an earlier run are removed first).
OUTPUTS = {name: m.OUTPUTS for name, m in MODULES.items()}


def add_common_options(common):
    """Add the options every command takes to the parent parser ``common``."""
    group = common.add_argument_group("common options")
    group.add_argument("--scenario", metavar="FILE",
                       help="scenario file (TOML); keys it leaves out take the built-in demo's values "
                            "(default: the built-in demo scenario)")
    group.add_argument("--model", choices=("multipoint", "design_point"),
                       help="engine model: 'multipoint' (designed at the design point, temperature limits at "
                            "take-off, mission at mid-cruise) or 'design_point' (everything at the design point) "
                            "(default: the scenario's optimizer.model)")
    group.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                       help=f"folder for the result files, created if needed (default: ./{DEFAULT_OUT})")
    group.add_argument("--json", action="store_true",
                       help="print the result as JSON on stdout and nothing else")
    group.add_argument("--quiet", action="store_true", help="print no report and no progress")
    group.add_argument("--debug", action="store_true",
                       help="show warnings, solver output and full tracebacks")


def build_parser():
    """Build the argument parser of the ``bypassopt`` command."""
    common = Parser(add_help=False)
    add_common_options(common)
    parser = Parser(
        prog="bypassopt",
        description="Pick the best installed turbofan cycle (BPR, FPR, OPR, Tt4) for an aircraft. "
                    "CAUTION: " + CAUTION,
        epilog="Exit codes: 0 success; 2 bad input (nothing computed or written); 3 optimizer did not "
               "converge or derivative check failed (its results are written, marked so); 1 unexpected error; "
               "130/143 interrupted by SIGINT/SIGTERM. A run replaces --out only when it finishes (the old "
               "folder is kept as <out>.previous); a failed or interrupted run leaves --out as it was. "
               "Run 'bypassopt <command> --help' for a command's options.")
    parser.add_argument("--version", action="version", version=f"bypassopt {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="command", parser_class=Parser)
    for module in MODULES.values():
        module.add_parser(sub, common)
    return parser
