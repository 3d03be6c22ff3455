"""``bypassopt check-derivatives``: analytic derivatives of the best-cycle problem against complex step."""

import math

from bypassopt import CAUTION
from bypassopt.commands._run import (EXIT_OK, NotConverged, UsageError, float_arg, precheck_design, textwrap_fill,
                                     write_csv_file, write_json_file)

NAME = "check-derivatives"
OUTPUTS = ("derivatives.json", "derivatives.csv")

#: Largest relative error of analytic derivatives against complex step that check-derivatives accepts.
DERIVATIVE_TOLERANCE = 1e-6


def add_parser(sub, common):
    """Add the ``check-derivatives`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="analytic derivatives against complex step",
                       description="Compare the analytic total derivatives of the best-cycle problem at the "
                                   "scenario's initial design, and every component's partial derivatives, "
                                   "with complex step. Writes derivatives.json and derivatives.csv; exits "
                                   f"with 3 when an error is above the tolerance ({DERIVATIVE_TOLERANCE:g}).")
    p.add_argument("--tolerance", type=float_arg, default=DERIVATIVE_TOLERANCE,
                   help=f"largest accepted relative error (default: {DERIVATIVE_TOLERANCE:g})")
    return p


def run(run, scenario):
    """Check the derivatives; return (result, exit code); NotConverged when an error is above the tolerance."""
    tol = run.args.tolerance
    if not tol > 0.0:
        raise UsageError(f"--tolerance = {tol:g} must be above 0")
    with run.quiet_stdout():
        precheck_design(scenario)
    run.prepare_out()
    progress = run.progress(NAME)
    progress(text="complex step through the model")
    with run.quiet_stdout():
        result = check_derivatives(scenario, tol)
    progress.finish()
    write_json_file(run, "derivatives.json", result)
    write_csv_file(run, "derivatives.csv", result["partials"]["components"])
    run.print_report(derivative_check_blocks(result))
    if not result["passed"]:
        raise NotConverged(f"a derivative error is above the tolerance {tol:g} (totals "
                           f"{result['totals']['max_relative_error']:.1e}, partials "
                           f"{result['partials']['max_relative_error']:.1e})", result)
    return result, EXIT_OK


def check_derivatives(scenario, tolerance=DERIVATIVE_TOLERANCE):
    """Analytic totals and partials of the best-cycle problem against complex step, at the initial design.

    Totals are compared in the optimizer's scaling; an entry's error is its absolute error divided by the
    largest derivative of the same output (so an entry that is zero up to solver noise does not count as a
    100 % error). Partials: per (output, input) pair, the absolute error over the larger of the two
    magnitudes; each component is summarised by its worst pair.
    """
    import numpy as np

    from bypassopt.problems.best_cycle import build_best_cycle_problem

    prob, _ = build_best_cycle_problem(scenario, reports=False, force_alloc_complex=True)
    prob.run_model()
    totals = prob.check_totals(method="cs", out_stream=None, driver_scaling=True)
    scale = {}
    for (of, wrt), d in totals.items():
        scale[of] = max(scale.get(of, 0.0), float(d["magnitude"].fd), float(d["magnitude"].forward))
    total_rows = []
    for (of, wrt), d in totals.items():
        err = float(d["abs error"].forward)
        rel = err / scale[of] if scale[of] > 0.0 else (0.0 if err == 0.0 else math.inf)
        total_rows.append({"of": of, "wrt": wrt, "analytic": float(np.ravel(d["J_fwd"])[0]),
                           "complex_step": float(np.ravel(d["J_fd"])[0]), "relative_error": rel})
    partials = prob.check_partials(method="cs", compact_print=True, out_stream=None)
    comp_rows = []
    for comp, pairs in partials.items():
        worst = {"component": comp, "max_relative_error": 0.0, "of": None, "wrt": None}
        for (of, wrt), d in pairs.items():
            err = d["abs error"].forward
            if err is None:
                continue
            mag = max(float(d["magnitude"].fd), float(d["magnitude"].forward))
            rel = float(err) / mag if mag > 0.0 else (0.0 if err == 0.0 else math.inf)
            if rel >= worst["max_relative_error"] or worst["of"] is None:
                worst.update(max_relative_error=rel, of=of, wrt=wrt)
        comp_rows.append(worst)
    worst_total = max(r["relative_error"] for r in total_rows)
    worst_partial = max(r["max_relative_error"] for r in comp_rows)
    return {
        "caution": CAUTION,
        "design": {k: float(prob.get_val(v)[0]) for k, v in (("BPR", "BPR"), ("FPR", "FPR"), ("OPR", "OPR"),
                                                              ("Tt4_K", "Tt4"))},
        "tolerance": tolerance,
        "passed": bool(worst_total <= tolerance and worst_partial <= tolerance),
        "totals": {"max_relative_error": worst_total, "entries": total_rows},
        "partials": {"max_relative_error": worst_partial, "components": comp_rows},
    }


def derivative_check_blocks(result):
    """Report of ``check_derivatives`` as blocks (strings and tables)."""
    from bypassopt.report import TextTable, format_number

    lines = ["bypassopt: derivative check (analytic against complex step)", "=" * 59,
             textwrap_fill("CAUTION: " + CAUTION), ""]
    d = result["design"]
    lines.append(f"At the scenario's initial design: BPR {format_number(d['BPR'])}, FPR {format_number(d['FPR'])}, "
                 f"OPR {format_number(d['OPR'])}, T4 {format_number(d['Tt4_K'])} K.")
    lines.append("")
    lines.append("Total derivatives of the optimisation problem (optimizer scaling; error relative to the "
                 "output's largest derivative)")
    rows = [(r["of"], r["wrt"], format_number(r["analytic"]), format_number(r["complex_step"]),
             f"{r['relative_error']:.1e}") for r in result["totals"]["entries"]]
    lines.append(TextTable(("output", "design variable", "analytic", "complex step", "rel. error"), rows, "llrrr"))
    lines.append("")
    lines.append("Partial derivatives, worst pair of each component")
    rows = [(r["component"], f"{r['max_relative_error']:.1e}", f"d {r['of']} / d {r['wrt']}" if r["of"] else "")
            for r in result["partials"]["components"]]
    lines.append(TextTable(("component", "rel. error", "worst pair"), rows, "lrl"))
    lines.append("")
    verdict = "PASSED" if result["passed"] else "FAILED"
    lines.append(f"{verdict}: largest relative error {result['totals']['max_relative_error']:.1e} (totals), "
                 f"{result['partials']['max_relative_error']:.1e} (partials); tolerance {result['tolerance']:g}.")
    return lines


def format_derivative_check(result):
    """Readable plain-text report of ``check_derivatives``."""
    from bypassopt.report import render_plain

    return render_plain(derivative_check_blocks(result))
