"""``bypassopt multistart``: the best installed cycle from many starting designs, the best and the spread."""

import math

from bypassopt import CAUTION
from bypassopt.commands._run import (EXIT_OK, NotConverged, check_driver, require, run_study, textwrap_fill)

NAME = "multistart"
OUTPUTS = ("multistart.json", "multistart.csv")
#: Default number of starts.
DEFAULT_STARTS = 16


def add_parser(sub, common):
    """Add the ``multistart`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="best cycle from many starting designs",
                       description="Optimise the best installed cycle from seeded starting designs drawn inside the "
                                   "design-variable bounds; report the best and the spread. Under 'mpiexec -n N' the "
                                   "starts are shared by the N processes (process 0 writes the files; any N gives "
                                   "the same files). Writes multistart.json and multistart.csv.")
    p.add_argument("--starts", type=_positive_int, default=DEFAULT_STARTS, metavar="N",
                   help=f"number of starts (default: {DEFAULT_STARTS})")
    p.add_argument("--method", choices=("lhs", "random"), default="lhs",
                   help="how the starts are drawn: Latin hypercube or independent uniform (default: lhs)")
    p.add_argument("--seed", type=int, default=0, help="seed of the draw (default: 0)")
    return p


def _positive_int(text):
    from bypassopt.commands.carpet import positive_int

    return positive_int(text)


def _study(args):
    """Return the multistart function with the command's options (the same on every process of an mpiexec run)."""
    import functools

    (run_multistart,) = require("bypassopt.problems.multistart", ("run_multistart",), "the multistart command")
    return functools.partial(run_multistart, num_starts=args.starts, method=args.method, seed=args.seed)


def run(run, scenario):
    """Run the starts; return (data, exit code); NotConverged when no start converged within the limits."""
    check_driver(scenario["optimizer"]["driver"])
    data, _ = run_study(run, scenario, NAME, _study(run.args), None, multistart_rows, multistart_blocks)
    if not data["best"]:
        raise NotConverged(f"none of the {data['num_starts']} starts converged to a design that meets every limit",
                           data)
    return data, EXIT_OK


def worker(args, scenario):
    """Take part in the starts on a process other than 0 of an mpiexec run (``commands._mpi``)."""
    check_driver(scenario["optimizer"]["driver"])
    _study(args)(scenario)


def _clean(value):
    return None if isinstance(value, float) and not math.isfinite(value) else value


def multistart_rows(result):
    """One row per start: its starting and final design, objective, convergence and limits."""
    rows = []
    for s in result["starts"]:
        row = {"start": s["index"], "success": s["success"], "feasible": s["feasible"],
               "objective": _clean(s["objective"]), "violation": _clean(s["violation"]),
               "iterations": s["iterations"], "model_evaluations": s["model_evaluations"]}
        row.update({f"start_{k}": _clean(v) for k, v in s["start"].items()})
        row.update({f"final_{k}": _clean(v) for k, v in s["design"].items()})
        rows.append(row)
    return rows


def multistart_blocks(result):
    """Report of a multistart as blocks: one line per start, then the best and the spread."""
    from bypassopt.report import TextTable, format_number

    lines = ["bypassopt: multistart", "=" * 21, textwrap_fill("CAUTION: " + CAUTION), ""]
    lines.append(f"{result['num_starts']} starts ({result['method']}, seed {result['seed']}) on "
                 f"{result['processes']} process{'es' if result['processes'] > 1 else ''}; objective "
                 f"{result['objective_name']}.")
    names = list(result["starts"][0]["design"]) if result["starts"] else []
    headers = ["start"] + [f"{n} from" for n in result["starts"][0]["start"]] + names + ["objective", "status"]
    rows = []
    for s in result["starts"]:
        status = ("ok" if s["feasible"] else "misses a limit") if s["success"] else "failed"
        rows.append([str(s["index"])] + [format_number(v) for v in s["start"].values()]
                    + [format_number(s["design"][n]) if math.isfinite(s["design"][n]) else "-" for n in names]
                    + [format_number(s["objective"]) if math.isfinite(s["objective"]) else "-", status])
    lines.append(TextTable(headers, rows, "r" * (len(headers) - 1) + "l"))
    lines.append("")
    best, spread = result["best"], result["spread"]
    if best:
        lines.append(f"Best: start {best['start_index']}, objective {format_number(best['objective'])}; "
                     f"{spread['agree']} of {spread['converged']} converged starts within "
                     f"{format_number(spread['max'] - spread['min'])} of each other (objective range).")
    else:
        lines.append("No start converged to a design that meets every limit.")
    return lines
