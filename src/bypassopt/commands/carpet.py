"""``bypassopt carpet``: the scenario's BPR x OPR carpet, as a table, files and a plot."""

import argparse
import functools
import math

from bypassopt import CAUTION
from bypassopt.commands._run import EXIT_OK, require, require_matplotlib, run_study, textwrap_fill

NAME = "carpet"
OUTPUTS = ("carpet.json", "carpet.csv", "carpet.png")


def add_parser(sub, common):
    """Add the ``carpet`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="BPR x OPR carpet plot",
                       description="Evaluate the scenario's BPR x OPR carpet ([carpet] section) and plot it. "
                                   "Writes carpet.json, carpet.csv and carpet.png.")
    p.add_argument("--no-plots", action="store_true", help="skip carpet.png")
    p.add_argument("--designs-per-case", type=positive_int, metavar="M",
                   help="split the grid into cases of at most M designs, each evaluated from scratch; under "
                        "'mpiexec -n N' the cases are shared by the N processes (process 0 writes the files), and "
                        "any N gives the same files (default: the whole grid in one vectorized case)")
    return p


def positive_int(text):
    """Argument type: an integer of at least 1."""
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r} is not at least 1")
    return value


def _study(args):
    """Return the carpet function with the command's options (the same on every process of an mpiexec run)."""
    (run_carpet,) = require("bypassopt.problems.carpet", ("run_carpet",), "the carpet command")
    return functools.partial(run_carpet, designs_per_case=getattr(args, "designs_per_case", None))


def run(run, scenario):
    """Evaluate and plot the carpet; return (data, exit code)."""
    study = _study(run.args)
    plot_carpet = None
    if not run.args.no_plots:
        require_matplotlib("carpet.png")
        (plot_carpet,) = require("bypassopt.plots", ("plot_carpet",), "carpet.png (or add --no-plots)")
    data, _ = run_study(run, scenario, NAME, study, plot_carpet, carpet_rows, carpet_blocks)
    return data, EXIT_OK


def worker(args, scenario):
    """Take part in the carpet's cases on a process other than 0 of an mpiexec run (``commands._mpi``)."""
    _study(args)(scenario)


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


def carpet_blocks(result):
    """Report of a carpet as blocks: the objective at every BPR (columns) and OPR (rows); '*' breaks a limit."""
    import numpy as np

    from bypassopt.report import QUANTITIES, TextTable, format_number

    name, units = result["objective_name"], result["objective_units"]
    lines = ["bypassopt: cycle carpet", "=" * 23, textwrap_fill("CAUTION: " + CAUTION), ""]
    mode = (f"FPR fixed at {format_number(result['fixed_fpr'])}" if result["fpr_mode"] == "fixed"
            else "FPR at each point's own optimum")
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
    lines.append(TextTable(headers, rows, "l" + "r" * len(result["bpr_values"])))
    opt = result.get("optimum")
    lines.append("")
    if opt:
        lines.append(f"Best grid point meeting every limit: BPR {format_number(opt['BPR'])}, OPR "
                     f"{format_number(opt['OPR'])}, FPR {format_number(opt['FPR'])}, {words} "
                     f"{format_number(opt['objective'])} {units}.")
    else:
        lines.append("No grid point meets every limit.")
    return lines


def format_carpet(result):
    """Readable plain-text table of a carpet (``carpet_blocks`` as text)."""
    from bypassopt.report import render_plain

    return render_plain(carpet_blocks(result))
