"""``bypassopt reengine``: the scenario's previous-generation engine against the optimised one."""

from bypassopt.commands._run import (EXIT_OK, NotConverged, UsageError, check_driver, optimizer_counts,
                                     precheck_design, progress_callback, write_csv_file,
                                     write_json_file)
from bypassopt.commands.optimize import DRIVERS, OBJECTIVES, screen_limits

NAME = "reengine"
OUTPUTS = ("reengine.json", "reengine.csv")


def add_parser(sub, common):
    """Add the ``reengine`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="previous engine against the optimised one",
                       description="Compare the scenario's previous-generation engine ([previous_engine]) with "
                                   "the best installed cycle on the same aircraft and thrust need. Writes "
                                   "reengine.json and reengine.csv.")
    p.add_argument("--objective", choices=OBJECTIVES,
                   help="quantity the new engine minimises (default: the scenario's optimizer.objective)")
    p.add_argument("--driver", choices=DRIVERS,
                   help="optimizer for the new engine (default: the scenario's optimizer.driver)")
    return p


def run(run, scenario):
    """Compare the engines; return (result, exit code); NotConverged when the new engine's optimum failed."""
    from bypassopt.problems.best_cycle import OBJECTIVES as OBJECTIVE_UNITS
    from bypassopt.problems.reengine import compare_reengining, evaluate_previous_engine, reengining_blocks
    from bypassopt.scenario import ScenarioError

    args = run.args
    check_driver(args.driver or scenario["optimizer"]["driver"])
    objective = args.objective or scenario["optimizer"]["objective"]
    with run.quiet_stdout():
        precheck_design(scenario)
        try:
            evaluate_previous_engine(scenario)
        except ScenarioError as err:
            raise UsageError(str(err)) from err
    screen_limits(run, scenario)
    run.prepare_out()
    progress = run.progress("reengine: optimising the new engine")
    obj_name, obj_units, _ = OBJECTIVE_UNITS[objective]

    def attach(prob):
        if "callback" in prob.driver.options:
            prob.driver.options["callback"] = progress_callback(progress, obj_name, obj_units)

    with run.quiet_stdout():
        result = compare_reengining(scenario, objective=objective, driver=args.driver, before_run=attach)
    opt = result["optimizer"]
    state = "converged" if opt["success"] else "stopped without converging"
    progress.finish(f"{state} after {optimizer_counts(opt)}", seconds=opt.get("runtime_s"))
    write_json_file(run, "reengine.json", result)
    write_csv_file(run, "reengine.csv", result["comparison"])
    run.print_report(reengining_blocks(result))
    if not opt["success"]:
        raise NotConverged("the optimizer did not converge for the new engine "
                           f"({opt['message'] or 'no message'})", result)
    return result, EXIT_OK
