"""Derivative cost: total derivatives of the installed engine with analytic partials vs FD and CS partials."""

import time

import openmdao.api as om

from benchmarks import (
    FD_OPTIONS,
    count_approx_components,
    median_time,
    natural_scales,
    robust_rel_error,
    target,
    use_approx_partials,
)
from bypassopt.problems.best_cycle import apply_scenario, build_installed_model
from bypassopt.scenario import design_point_scenario, load_scenario

#: Totals timed: the objective, installed TSFC and every constraint of the best-cycle problem ...
OF = ("mission_fuel", "installed_TSFC", "clearance_margin", "diameter_margin", "Tt41", "Tt3", "W3_corrected")
#: ... with respect to the four cycle choices.
WRT = ("BPR", "FPR", "OPR", "Tt4")
#: Target: analytic totals at least this many times faster than with finite-difference partials.
SPEEDUP_TARGET = 3.0
#: Timed repeats (median reported); ``quick`` uses one.
REPEATS = {"analytic": 7, "fd": 5, "cs": 5}


def build_derivative_problem(partials="analytic", scenario=None):
    """Installed-engine problem of the demo scenario, run to convergence, with the chosen partials.

    Parameters
    ----------
    partials : str
        'analytic' (as shipped), or 'fd' / 'cs': every component's partials replaced by
        ``declare_partials('*', '*', method=...)`` through ``benchmarks.use_approx_partials`` (after
        ``setup``, before ``final_setup``; FD with ``benchmarks.FD_OPTIONS``). The Newton solver of the
        engine then also linearizes with these partials.
    scenario : dict or None
        Validated scenario; None gives the demo with the design-point engine model.
    """
    # the design-point model: its partials can all be switched to FD/CS (the multipoint model's off-design
    # matches are implicit components, which use_approx_partials does not switch)
    scenario = scenario or design_point_scenario(load_scenario())
    prob = om.Problem(build_installed_model(scenario), reports=False)
    prob.setup(force_alloc_complex=True)
    switched = use_approx_partials(prob, partials, **FD_OPTIONS) if partials != "analytic" else 0
    apply_scenario(prob, scenario)
    prob.run_model()
    prob.bypassopt_switched = switched
    return prob


def run(quick=False):
    """Time ``compute_totals`` with analytic, FD and CS partials side by side; return times, ratios, verdict."""
    t0 = time.perf_counter()
    results, totals, design = {}, {}, {}
    for method in ("analytic", "fd", "cs"):
        t_build = time.perf_counter()
        prob = build_derivative_problem(method)
        run_model_s = time.perf_counter() - t_build
        if method != "analytic" and count_approx_components(prob) != prob.bypassopt_switched:
            raise RuntimeError(f"{method}: approximated partials did not take on every component")
        seconds, jac = median_time(lambda p=prob: p.compute_totals(of=list(OF), wrt=list(WRT)),
                                   1 if quick else REPEATS[method])
        totals[method] = jac
        design = {w: prob.get_val(w) for w in WRT}
        results[method] = {"compute_totals_s": seconds, "setup_and_run_model_s": run_model_s,
                           "components_approximated": int(getattr(prob, "bypassopt_switched", 0))}
    natural = natural_scales(totals["analytic"], design)
    for method in ("fd", "cs"):
        results[method]["max_rel_diff_vs_analytic"] = max(
            robust_rel_error(totals[method][key], value, natural[key]) for key, value in totals["analytic"].items())
    t_an = results["analytic"]["compute_totals_s"]
    fd_ratio = results["fd"]["compute_totals_s"] / t_an
    cs_ratio = results["cs"]["compute_totals_s"] / t_an
    rows = [
        ("compute_totals, analytic partials", f"{1e3 * t_an:.1f} ms", f"{len(OF)} outputs x {len(WRT)} inputs"),
        ("compute_totals, FD partials", f"{1e3 * results['fd']['compute_totals_s']:.1f} ms",
         f"{fd_ratio:.1f}x analytic; totals differ by {results['fd']['max_rel_diff_vs_analytic']:.1e}"),
        ("compute_totals, CS partials", f"{1e3 * results['cs']['compute_totals_s']:.1f} ms",
         f"{cs_ratio:.1f}x analytic; totals differ by {results['cs']['max_rel_diff_vs_analytic']:.1e}"),
    ]
    targets = [target("analytic totals >= 3x faster than with FD partials", f"{fd_ratio:.1f}x",
                      f">= {SPEEDUP_TARGET:g}x", fd_ratio >= SPEEDUP_TARGET,
                      f"{results['fd']['components_approximated']} components switched to FD")]
    return {"benchmark": "derivative_cost", "quick": quick, "seconds": time.perf_counter() - t0,
            "of": list(OF), "wrt": list(WRT), "fd_options": FD_OPTIONS, "results": results,
            "ratio_fd_over_analytic": fd_ratio, "ratio_cs_over_analytic": cs_ratio, "rows": rows, "targets": targets}


if __name__ == "__main__":  # pragma: no cover
    import json
    print(json.dumps(run(quick=True), indent=1, default=str))
