"""Report plots: cycle carpet with constraint boundaries, limit trade curve and optimizer convergence.

matplotlib is an optional dependency (``pip install bypassopt[plots]``); it is imported inside the
functions, with the non-interactive Agg backend, so importing this module costs nothing.
"""

import textwrap

import numpy as np

from bypassopt import CAUTION

#: Short form of ``bypassopt.CAUTION`` printed as a footnote on every figure.
CAUTION_SHORT = ("Preliminary-design estimate only: clearance minima, temperature limits and other certification "
                 "values must come from the applicable airworthiness rules and the engine manufacturer's data.")

#: Axis labels of the objectives.
OBJECTIVE_LABELS = {"mission_fuel": "mission fuel", "installed_TSFC": "installed TSFC"}

#: Constraint drawing styles on the carpet: output -> (label, colour, hatch).
_CONSTRAINT_STYLES = {
    "clearance_margin": ("ground clearance = minimum", "#d62728", "//"),
    "diameter_margin": ("nacelle diameter = limit", "#ff7f0e", "\\\\"),
    "Tt41": ("T41 = limit", "#9467bd", "||"),
    "Tt3": ("T3 = limit", "#8c564b", "--"),
    "W3_corrected": ("core size (HPC exit corrected flow) = minimum", "#17becf", "xx"),
}

#: Names of the constraints a swept limit sets, for the trade-curve legend.
_TRADE_CONSTRAINT_LABELS = {"clearance_margin": "ground-clearance limit", "diameter_margin": "nacelle-diameter limit",
                            "Tt41": "T41 limit", "Tt3": "T3 limit"}

assert CAUTION.startswith("Preliminary-design estimate only")  # keep CAUTION_SHORT in step with it


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def _footnote(fig):
    fig.text(0.01, 0.006, CAUTION_SHORT, fontsize=6.5, style="italic", color="0.35", ha="left", va="bottom",
             wrap=True)


def _units_text(units):
    return {"mg/(N*s)": "mg/(N s)", "kg/s": "kg/s", "m": "m", "K": "K", "kg": "kg"}.get(units, units or "-")


def _label_positions(contours, bpr, opr, fraction):
    """Return one contour-label position per level, the vertex nearest ``fraction`` of the OPR range.

    Vertices in the left and right tenths of the BPR range are avoided so that the frame does not cut
    the label.
    """
    target = opr.min() + fraction * (opr.max() - opr.min())
    lo, hi = bpr.min() + 0.1 * np.ptp(bpr), bpr.max() - 0.1 * np.ptp(bpr)
    positions = []
    for segments in contours.allsegs:
        vertices = [seg for seg in segments if len(seg)]
        if vertices:
            pts = np.concatenate(vertices)
            inner = pts[(pts[:, 0] >= lo) & (pts[:, 0] <= hi)]
            pts = inner if len(inner) else pts
            positions.append(tuple(pts[np.argmin(np.abs(pts[:, 1] - target))]))
    return positions


def plot_carpet(result, path, optimum=None):
    """Plot filled contours of the objective over BPR and OPR with the constraint boundaries; save a PNG.

    Each constraint is drawn as a labelled line where its margin is zero, hatched on the side that
    violates it; designs the model cannot evaluate are left grey. The grid optimum (least objective
    meeting every limit) is a star, and ``optimum`` (the continuous optimum, a dict with ``BPR`` and
    ``OPR`` and optionally ``objective``) a diamond. In 'optimal' FPR mode, dashed white lines show the
    FPR of each point.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.carpet.run_carpet``.
    path : str or path-like
        PNG file written.
    optimum : dict or None
        Continuous optimum to mark, e.g. design variables and objective of the best-cycle problem.
    """
    plt = _pyplot()
    from matplotlib import patheffects
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch
    from matplotlib.ticker import MaxNLocator

    B, P = result["BPR"], result["OPR"]
    Z = np.ma.masked_invalid(result["objective"])
    feasible = result["feasible"]
    obj_label = OBJECTIVE_LABELS.get(result["objective_name"], result["objective_name"])
    units = _units_text(result["objective_units"])

    fig, ax = plt.subplots(figsize=(9.0, 8.0))
    ax.set_facecolor("0.85")
    levels = MaxNLocator(nbins=16).tick_values(Z.min(), Z.max()) if Z.count() else np.linspace(0.0, 1.0, 11)
    filled = ax.contourf(B, P, Z, levels=levels, cmap="viridis_r")
    cbar = fig.colorbar(filled, ax=ax, pad=0.02)
    cbar.set_label(f"{obj_label} [{units}] (lower is better)")
    lines = ax.contour(B, P, Z, levels=levels[1::2], colors="k", linewidths=0.4, alpha=0.6)
    labels = ax.clabel(lines, fmt="%.0f" if np.nanmax(np.abs(Z)) > 100 else "%.3g", fontsize=7)
    for text in labels:
        text.set_path_effects([patheffects.withStroke(linewidth=2.0, foreground="w")])

    handles = []
    if result["fpr_mode"] == "optimal" and np.any(feasible):
        F = np.ma.masked_invalid(result["FPR"])
        fpr_levels = np.round(np.arange(1.3, 3.0, 0.1), 2)
        fpr_levels = fpr_levels[(fpr_levels > F.min()) & (fpr_levels < F.max())]
        if fpr_levels.size:
            halo = [patheffects.withStroke(linewidth=2.2, foreground="0.2")]
            fl = ax.contour(B, P, F, levels=fpr_levels, colors="w", linewidths=0.9, linestyles="--")
            fl.set_path_effects(halo)
            for text in ax.clabel(fl, fmt=lambda v: f"FPR {v:.1f}", fontsize=7,
                                  manual=_label_positions(fl, B, P, 0.72)):
                text.set_path_effects(halo)
            handles.append(Line2D([], [], color="w", ls="--", lw=0.9, path_effects=halo,
                                  label="optimum FPR of the points (dashed contours)"))

    for name, lim in result["limits"].items():
        margin = np.ma.masked_invalid(result["margins"][name])
        label, color, hatch = _CONSTRAINT_STYLES.get(name, (lim["label"], "k", ".."))
        limit_text = f"{lim['limit']:g} {_units_text(lim['units'])}"
        if name not in ("clearance_margin", "diameter_margin"):
            label = f"{label} ({limit_text})"
        if not margin.count():
            continue
        if margin.max() < 0.0:
            state = ": violated on the whole grid (hatched)"
        elif margin.min() >= 0.0:
            state = ": met on the whole grid"
        else:
            state = ": line where met exactly, hatched side violates it"
        if margin.min() < 0.0:
            hatched = ax.contourf(B, P, margin, levels=[margin.min() - 1.0, 0.0], colors="none", hatches=[hatch])
            hatched.set_edgecolor(color)
            hatched.set_linewidth(0.0)
        if margin.min() < 0.0 < margin.max():
            zero = ax.contour(B, P, margin, levels=[0.0], colors=[color], linewidths=2.0)
            short = label.split(" = ")[0]
            for text in ax.clabel(zero, fmt={0.0: short}, fontsize=7.5, inline_spacing=2,
                                  manual=_label_positions(zero, B, P, 0.12)):
                text.set_path_effects([patheffects.withStroke(linewidth=2.5, foreground="w")])
        handles.append(Patch(facecolor="none", edgecolor=color, hatch=hatch, lw=2.0, label=f"{label}{state}"))

    ax.plot(B[feasible], P[feasible], ".", color="k", ms=2, alpha=0.4, clip_on=False)
    handles.append(Line2D([], [], ls="", marker=".", color="k", ms=4, alpha=0.6, label="evaluated grid point"))
    if not np.all(feasible):
        ax.plot(B[~feasible], P[~feasible], "x", color="0.3", ms=5, clip_on=False)
        handles.append(Line2D([], [], ls="", marker="x", color="0.3", ms=5,
                              label="grid point with no valid cycle (the model cannot evaluate it); "
                                    "grey: no contour data"))
    grid_opt = result.get("optimum")
    if grid_opt is not None:
        ax.plot(grid_opt["BPR"], grid_opt["OPR"], "*", ms=17, mfc="gold", mec="k", zorder=5)
        handles.append(Line2D([], [], ls="", marker="*", ms=12, mfc="gold", mec="k",
                              label=f"best grid point meeting all limits: BPR {grid_opt['BPR']:.3g}, "
                                    f"OPR {grid_opt['OPR']:.3g}, FPR {grid_opt['FPR']:.3g}, "
                                    f"{grid_opt['objective']:.6g} {units}"))
    if optimum is not None:
        ax.plot(optimum["BPR"], optimum["OPR"], "D", ms=9, mfc="w", mec="k", mew=1.5, zorder=6)
        text = f"continuous optimum: BPR {optimum['BPR']:.3g}, OPR {optimum['OPR']:.3g}"
        if "FPR" in optimum:
            text += f", FPR {optimum['FPR']:.3g}"
        if "objective" in optimum:
            text += f", {optimum['objective']:.6g} {units}"
        handles.append(Line2D([], [], ls="", marker="D", ms=8, mfc="w", mec="k", mew=1.5, label=text))

    ax.set_xlabel("bypass ratio BPR [-]")
    ax.set_ylabel("overall pressure ratio OPR [-]")
    if result["fpr_mode"] == "optimal":
        lo, hi = result["FPR_bounds"]
        mode = f"FPR optimised at each point for least {obj_label} (bounds {lo:g}-{hi:g}; limits not imposed)"
    else:
        mode = f"FPR fixed at {result['fixed_fpr']:g}"
    ax.set_title(f"{result['scenario']}: {obj_label} carpet\n{mode}, Tt4 = {result['Tt4']:g} K",
                 fontsize=11)
    legend = fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 0.03), ncol=1, fontsize=7.5,
                        frameon=False)
    fig.canvas.draw()
    legend_top = legend.get_window_extent().transformed(fig.transFigure.inverted()).y1
    fig.subplots_adjust(left=0.09, right=0.98, top=0.91, bottom=legend_top + 0.07)
    _footnote(fig)
    fig.savefig(path, dpi=130)
    plt.close(fig)
    return path


def plot_trade_curve(result, path):
    """Plot the optimum objective and BPR along a swept limit, and its sensitivity to the limit; save a PNG.

    Upper panel: objective at each optimum (left axis) and the optimum BPR (right axis). Lower panel:
    change of the optimum objective per step of the limit (per cm for lengths, per K for temperatures),
    from the KKT multipliers; filled markers where the constraint the limit sets is active, hollow where
    it is not. Limit values where the optimizer failed are marked by red dotted vertical lines.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.trade_curve.run_trade_curve``.
    path : str or path-like
        PNG file written.
    """
    plt = _pyplot()
    from matplotlib.lines import Line2D

    from bypassopt.problems.trade_curve import TRADE_LIMITS

    _, _, lunits, step, step_name, phrase, constraint = TRADE_LIMITS[result["limit"]]
    x = np.asarray(result["values"], dtype=float)
    ok = np.asarray(result["success"], dtype=bool)
    f = np.asarray(result["objective"], dtype=float)
    bpr = np.asarray(result["BPR"], dtype=float)
    sens = np.asarray(result["d_objective_d_limit"], dtype=float) * step
    active = np.array([constraint in p["active"] for p in result["points"]])
    degenerate = np.array([p.get("degenerate", False) for p in result["points"]])
    obj_label = OBJECTIVE_LABELS.get(result["objective_name"], result["objective_name"])
    units = _units_text(result["objective_units"])
    con_label = _TRADE_CONSTRAINT_LABELS.get(constraint, constraint)

    fig, (ax1, ax3) = plt.subplots(2, 1, sharex=True, figsize=(8.0, 8.0), gridspec_kw={"height_ratios": [3, 2]})
    for ax in (ax1, ax3):
        for xf in x[~ok]:
            ax.axvline(xf, color="red", ls=":", lw=1.5)
    l1, = ax1.plot(x[ok], f[ok], "o-", color="C0", label=f"{obj_label} at the optimum (left axis)")
    ax1.set_ylabel(f"{obj_label} at the optimum [{units}]", color="C0")
    ax1.tick_params(axis="y", labelcolor="C0")
    ax1.ticklabel_format(axis="y", useOffset=False)
    ax2 = ax1.twinx()
    l2, = ax2.plot(x[ok], bpr[ok], "s--", color="C2", label="optimum bypass ratio (right axis)")
    ax2.set_ylabel("optimum bypass ratio BPR [-]", color="C2")
    ax2.tick_params(axis="y", labelcolor="C2")
    handles = [l1, l2]
    if np.any(~ok):
        handles.append(Line2D([], [], color="red", ls=":", lw=1.5, label="optimizer did not converge"))
    ax1.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=len(handles), fontsize=8,
               frameon=False)
    ax1.grid(alpha=0.3)
    title = textwrap.wrap(f"{result['scenario']}: best installed cycle against the {phrase}", 80)
    fig.suptitle("\n".join(title), fontsize=11)

    ax3.axhline(0.0, color="0.5", lw=0.8)
    good = ok & np.isfinite(sens)
    ax3.plot(x[good], sens[good], "-", color="C3", lw=1.0)
    on, off = good & active, good & ~active
    if np.any(on):
        ax3.plot(x[on], sens[on], "o", color="C3", ms=7, label=f"{con_label} active")
    if np.any(off):
        ax3.plot(x[off], sens[off], "o", mfc="w", mec="C3", ms=7, label=f"{con_label} not active")
    sel = good & degenerate & active
    if np.any(sel):
        ax3.plot(x[sel], sens[sel], "o", mfc="none", mec="k", ms=13,
                 label="another active limit coincides: split not unique")
    ax3.set_ylabel(f"change of optimum {obj_label}\nper +1 {step_name} of limit [{units}/{step_name}]")
    ax3.set_xlabel(f"{result['limit_description']} [{lunits}]")
    ax3.grid(alpha=0.3)
    ax3.legend(loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=3, fontsize=8, frameon=False,
               title="negative: raising the limit lowers the optimum " + obj_label, title_fontsize=8)
    fig.subplots_adjust(left=0.14, right=0.87, top=0.89 - 0.025 * (len(title) - 1), bottom=0.11, hspace=0.22)
    _footnote(fig)
    fig.savefig(path, dpi=130)
    plt.close(fig)
    return path


def plot_convergence(recorder_path, path):
    """Plot the optimizer history from an OpenMDAO SQLite case recorder (driver cases); save a PNG.

    Three panels against the recorded driver evaluation: objective; largest constraint violation,
    each constraint measured in its scaled units (value over its ``ref``), on a log scale (a met
    constraint counts as 1e-12 so it can be drawn); design variables normalised to [0, 1] over their
    bounds. OpenMDAO records every model evaluation the optimizer asks for, line-search points included.
    Evaluations the model could not complete (``BackOffSLSQPDriver`` back-offs, recorded with
    ``success = 0``) carry stale outputs and are left out; the title counts them.

    Parameters
    ----------
    recorder_path : str or path-like
        File written by ``om.SqliteRecorder`` attached to the driver
        (``build_best_cycle_problem(recorder_path=...)``).
    path : str or path-like
        PNG file written.
    """
    plt = _pyplot()
    import openmdao.api as om
    from matplotlib.ticker import MaxNLocator

    reader = om.CaseReader(str(recorder_path))
    cases = reader.get_cases("driver", recurse=False)
    # evaluations the model could not complete (recorded with success = 0 by BackOffSLSQPDriver)
    # carry stale outputs: leave them out of the history
    n_failed = sum(1 for c in cases if not c.success)
    cases = [c for c in cases if c.success]
    if not cases:
        raise ValueError(f"{recorder_path} holds no driver cases")
    meta = {k: v for k, v in reader.problem_metadata["variables"].items() if isinstance(v, dict)}
    first = cases[0]
    obj_name = next(iter(first.get_objectives(scaled=False)))
    dv_names = list(first.get_design_vars(scaled=False))
    con_names = list(first.get_constraints(scaled=False))
    it = np.arange(len(cases))
    obj = np.array([float(np.squeeze(c.get_objectives(scaled=False)[obj_name])) for c in cases])
    floor = 1e-12
    viol = np.full(len(cases), floor)
    worst = [""] * len(cases)
    for k, c in enumerate(cases):
        cons = c.get_constraints(scaled=False)
        for name in con_names:
            m = meta.get(name, {})
            ref = m.get("ref") or 1.0
            g = np.atleast_1d(cons[name]).astype(float)
            v = 0.0
            if m.get("lower") is not None and m["lower"] > -1e29:
                v = max(v, float(np.max(m["lower"] - g)) / abs(ref))
            if m.get("upper") is not None and m["upper"] < 1e29:
                v = max(v, float(np.max(g - m["upper"])) / abs(ref))
            if v > viol[k]:
                viol[k], worst[k] = v, name
    dvs = {}
    for name in dv_names:
        m = meta.get(name, {})
        lo, hi = m.get("lower"), m.get("upper")
        vals = np.array([np.atleast_1d(c.get_design_vars(scaled=False)[name]).astype(float) for c in cases])
        if lo is not None and hi is not None and np.all(np.asarray(hi) > np.asarray(lo)) and hi < 1e29:
            vals = (vals - lo) / (hi - lo)
        dvs[name] = (vals, lo, hi)

    obj_units = _units_text(meta.get(obj_name, {}).get("units"))
    obj_label = OBJECTIVE_LABELS.get(obj_name, obj_name)
    fig, (a1, a2, a3) = plt.subplots(3, 1, sharex=True, figsize=(8.0, 8.6))
    a1.plot(it, obj, "o-", ms=3, color="C0")
    a1.set_ylabel(f"{obj_label} [{obj_units}]")
    a1.ticklabel_format(axis="y", useOffset=False)
    a1.grid(alpha=0.3)
    failed = f" ({n_failed} failed, left out)" if n_failed else ""
    a1.set_title(f"Optimizer convergence: {len(cases)} recorded evaluations{failed}\n"
                 f"final {obj_label} {obj[-1]:.6g} {obj_units}", fontsize=11)
    a2.semilogy(it, viol, "o-", ms=3, color="C3")
    a2.set_ylabel("largest constraint\nviolation [scaled]")
    a2.set_ylim(floor / 3, max(1.0, viol.max() * 3))
    a2.grid(alpha=0.3, which="both")
    a2.text(0.99, 0.95, f"scaled = violation / constraint ref; all met plotted at {floor:g}",
            transform=a2.transAxes, ha="right", va="top", fontsize=7, color="0.3")
    for name, (vals, lo, hi) in dvs.items():
        for j in range(vals.shape[1]):
            label = name if vals.shape[1] == 1 else f"{name}[{j}]"
            if lo is not None and hi is not None:
                label += f" ({lo:g} to {hi:g})"
            a3.plot(it, vals[:, j], "o-", ms=3, label=label)
    a3.set_ylabel("design variable,\nnormalised to its bounds [-]")
    a3.set_ylim(-0.05, 1.05)
    a3.set_xlabel("recorded driver evaluation (model run)")
    a3.xaxis.set_major_locator(MaxNLocator(integer=True))
    a3.grid(alpha=0.3)
    a3.legend(loc="best", fontsize=8)
    fig.subplots_adjust(left=0.14, right=0.97, top=0.95, bottom=0.1, hspace=0.08)
    _footnote(fig)
    fig.savefig(path, dpi=130)
    plt.close(fig)
    return path
