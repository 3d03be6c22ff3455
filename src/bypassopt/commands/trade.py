"""``bypassopt trade``: the best installed cycle along a sweep of one limit."""

from bypassopt import CAUTION
from bypassopt.commands._run import (EXIT_OK, NotConverged, check_driver, require, require_matplotlib, run_study,
                                     textwrap_fill)

NAME = "trade"
OUTPUTS = ("trade.json", "trade.csv", "trade.png")


def add_parser(sub, common):
    """Add the ``trade`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="optimum along a sweep of one limit",
                       description="Re-solve the best installed cycle along the scenario's sweep of one limit "
                                   "([trade] section). Writes trade.json, trade.csv and trade.png.")
    p.add_argument("--no-plots", action="store_true", help="skip trade.png")
    return p


def run(run, scenario):
    """Solve the trade curve; return (data, exit code); NotConverged when a point did not converge."""
    check_driver(scenario["optimizer"]["driver"])
    (run_trade_curve,) = require("bypassopt.problems.trade_curve", ("run_trade_curve",), "the trade command")
    plot_trade_curve = None
    if not run.args.no_plots:
        require_matplotlib("trade.png")
        (plot_trade_curve,) = require("bypassopt.plots", ("plot_trade_curve",), "trade.png (or add --no-plots)")
    screen_sweep(run, scenario)
    data, rows = run_study(run, scenario, NAME, run_trade_curve, plot_trade_curve, trade_rows, trade_blocks)
    failed = [r for r in rows if r.get("success") is False]
    if failed:
        raise NotConverged(f"the optimizer did not converge at {len(failed)} of {len(rows)} trade points", data)
    return data, EXIT_OK


def screen_sweep(run, scenario):
    """Feasibility screen of the swept limit and the others (exit 2 when one is missed at every value)."""
    from bypassopt.commands.optimize import report_findings
    from bypassopt.problems.feasibility import check_sweep

    trade = scenario["trade"]
    with run.quiet_stdout():
        findings = check_sweep(scenario, trade["limit"], trade["values"])
    return report_findings(run, findings)


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


def trade_blocks(result):
    """Report of a trade curve as blocks: the optimum at each value of the swept limit."""
    from bypassopt.report import TextTable, format_number

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
    lines.append(TextTable(headers, rows, "rrrrrrll"))
    lines.append("")
    lines += ["  - " + p["sentence"] for p in result["points"] if p.get("sentence")]
    return lines


def format_trade(result):
    """Readable plain-text table of a trade curve (``trade_blocks`` as text)."""
    from bypassopt.report import render_plain

    return render_plain(trade_blocks(result))
