"""``bypassopt evaluate``: one engine design on the scenario's aircraft."""

from bypassopt.commands._run import EXIT_OK, UsageError, float_arg, precheck_design, write_summary_files

NAME = "evaluate"
OUTPUTS = ("design.json", "design.csv", "stations.csv", "summary.txt")


def add_parser(sub, common):
    """Add the ``evaluate`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="evaluate one design",
                       description="Evaluate one engine design on the scenario's aircraft: installed "
                                   "performance, size, mass, mission fuel and the station table. Writes "
                                   "design.json, design.csv, stations.csv and summary.txt.")
    p.add_argument("--BPR", type=float_arg, help="bypass ratio (default: the scenario's initial value)")
    p.add_argument("--FPR", type=float_arg, help="fan pressure ratio (default: the scenario's initial value)")
    p.add_argument("--OPR", type=float_arg, help="overall pressure ratio (default: the scenario's initial value)")
    p.add_argument("--Tt4", type=float_arg, metavar="KELVIN",
                   help="burner exit total temperature in K (default: the scenario's initial value)")
    return p


def run(run, scenario):
    """Evaluate one design; return (summary, exit code)."""
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
        prob = precheck_design(scenario, design, "this design")
        summary = design_summary(prob, scenario=scenario)
    run.prepare_out()
    write_summary_files(run, summary, "design")
    return summary, EXIT_OK

