"""``bypassopt optimize``: the best installed cycle, with reports and plots."""

import copy
import sys

from bypassopt.commands._run import (EXIT_OK, NotConverged, UsageError, check_driver, optimizer_counts,
                                     precheck_design, progress_callback, require, require_matplotlib, write_png,
                                     write_summary_files)

NAME = "optimize"
OUTPUTS = ("history.sqlite", "optimum.json", "optimum.csv", "stations.csv", "summary.txt", "convergence.png",
           "carpet.png")
DRIVERS = ("SLSQP", "SNOPT", "IPOPT", "pyoptsparse-SLSQP")
OBJECTIVES = ("mission_fuel", "installed_TSFC")


def add_parser(sub, common):
    """Add the ``optimize`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="find the best installed cycle",
                       description="Find the best installed cycle within the scenario's limits and report the "
                                   "active limits with their shadow prices. Writes history.sqlite, "
                                   "optimum.json, optimum.csv, stations.csv, summary.txt, convergence.png and "
                                   "carpet.png.")
    p.add_argument("--objective", choices=OBJECTIVES,
                   help="quantity to minimise (default: the scenario's optimizer.objective)")
    p.add_argument("--driver", choices=DRIVERS,
                   help="optimizer; all but SLSQP need pyoptsparse (default: the scenario's optimizer.driver)")
    p.add_argument("--no-plots", action="store_true", help="skip convergence.png and carpet.png")
    return p


def report_findings(run, findings):
    """Turn feasibility findings into an exit-2 ``UsageError`` (errors) or warning lines; return the warnings.

    Errors (a limit no screened design meets) become one line, before anything is written; warnings go to
    stderr as ``bypassopt: warning: ...`` (not with --quiet) and are returned for the summary.
    """
    errors = [f.message for f in findings if f.severity == "error"]
    if errors:
        head = "" if len(errors) == 1 else f"{len(errors)} limits cannot be met: "
        raise UsageError(head + ". ".join(errors))
    warnings = [f.message for f in findings if f.severity == "warning"]
    if not run.args.quiet:
        for text in warnings:
            print(f"bypassopt: warning: {text}", file=sys.stderr)
    return warnings


def screen_limits(run, scenario):
    """Run the feasibility screen (``bypassopt.problems.feasibility``) before optimising; see ``report_findings``."""
    from bypassopt.problems.feasibility import check_feasibility

    with run.quiet_stdout():
        findings = check_feasibility(scenario)
    return report_findings(run, findings)


#: The carpet around the optimum: points per axis and half-widths in BPR and OPR (clipped to the bounds).
AROUND_POINTS, AROUND_BPR, AROUND_OPR = 7, 3.0, 15.0


def carpet_around(scenario, bpr, opr):
    """BPR and OPR values of the carpet drawn around an optimum: ``AROUND_POINTS`` each, inside the bounds."""
    import numpy as np

    out = []
    for key, centre, half in (("BPR", bpr, AROUND_BPR), ("OPR", opr, AROUND_OPR)):
        dv = scenario["design_variables"][key]
        lo, hi = max(dv["lower"], centre - half), min(dv["upper"], centre + half)
        out.append([float(x) for x in np.linspace(lo, hi, AROUND_POINTS)])
    return out


def run(run, scenario):
    """Find the best installed cycle; return (summary, exit code)."""
    from bypassopt.problems.best_cycle import OBJECTIVES as OBJECTIVE_UNITS
    from bypassopt.problems.best_cycle import build_best_cycle_problem
    from bypassopt.problems.drivers import driver_succeeded
    from bypassopt.report import optimum_summary

    args = run.args
    check_driver(args.driver or scenario["optimizer"]["driver"])
    plots = not args.no_plots
    if plots:
        require_matplotlib("plotting (convergence.png, carpet.png)")
        plot_convergence, plot_carpet = require("bypassopt.plots", ("plot_convergence", "plot_carpet"),
                                                "plotting (convergence.png, carpet.png; or add --no-plots)")
        (run_carpet,) = require("bypassopt.problems.carpet", ("run_carpet",),
                                "the carpet around the optimum (carpet.png; or add --no-plots)")
    objective = args.objective or scenario["optimizer"]["objective"]
    with run.phase("screen"):
        with run.quiet_stdout():
            precheck_design(scenario)
        screen_warnings = screen_limits(run, scenario)
    run.prepare_out()
    history = run.out_path("history.sqlite")
    progress = run.progress("optimize")
    with run.quiet_stdout():
        with run.phase("setup"):
            prob, settings = build_best_cycle_problem(scenario, objective=objective, driver=args.driver,
                                                      recorder_path=history, reports=False)
        obj_name, obj_units, _ = OBJECTIVE_UNITS[objective]
        if "callback" in prob.driver.options:
            prob.driver.options["callback"] = progress_callback(progress, obj_name, obj_units)
        with run.phase("optimisation"):
            result = prob.run_driver()
        success = driver_succeeded(result)
        with run.phase("reports"):
            summary = optimum_summary(prob, settings, result)
            summary["warnings"] = screen_warnings + summary.get("warnings", [])
            prob.cleanup()
    # the closing line and the summary give the same counts and time: the driver's
    opt = summary["optimizer"]
    state = "converged" if success else "stopped without converging"
    progress.finish(f"{state} after {optimizer_counts(opt)}", seconds=opt["runtime_s"])
    run.wrote(history)
    with run.phase("reports"):
        write_summary_files(run, summary, "optimum")
    if plots:
        with run.quiet_stdout(), run.phase("plots"):
            write_png(run, "convergence.png", plot_convergence, history)
    if not success:
        raise NotConverged(f"the optimizer did not converge ({opt['message'] or 'no message'})", summary)
    if plots:
        q = summary["quantities"]
        optimum = {"BPR": q["BPR"]["value"], "OPR": q["OPR"]["value"], "FPR": q["FPR"]["value"],
                   "objective": summary["objective"]["value"]}
        cprog = run.progress("carpet around the optimum")
        around = copy.deepcopy(scenario)  # the carpet holds T4 at the optimum's (FPR: fixed_fpr)
        around["design_variables"]["Tt4_K"]["initial"] = q["Tt4"]["value"]
        bpr_values, opr_values = carpet_around(scenario, q["BPR"]["value"], q["OPR"]["value"])
        with run.quiet_stdout(), run.phase("carpet around the optimum"):
            carpet = run_carpet(around, bpr_values, opr_values, fpr_mode="fixed", fixed_fpr=q["FPR"]["value"],
                                progress=cprog)
        cprog.finish()
        with run.quiet_stdout(), run.phase("plots"):
            write_png(run, "carpet.png", plot_carpet, carpet, optimum=optimum)
    return summary, EXIT_OK
