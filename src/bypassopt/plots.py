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
    "takeoff:Tt41": ("take-off T41 = limit", "#e377c2", "++"),
    "takeoff:Tt3": ("take-off T3 = limit", "#2ca02c", ".."),
}

#: Names of the constraints a swept limit sets, for the trade-curve legend.
_TRADE_CONSTRAINT_LABELS = {"clearance_margin": "ground-clearance limit", "diameter_margin": "nacelle-diameter limit",
                            "Tt41": "T41 limit", "Tt3": "T3 limit", "takeoff:Tt41": "take-off T41 limit",
                            "takeoff:Tt3": "take-off T3 limit"}

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


#: Points per axis of the fine grid the carpet's fields are interpolated onto.
FINE_POINTS = 121
#: Pad around the carpet's valid designs, as a fraction of their range, before the marker allowance.
CARPET_PAD = 0.02
#: Marker sizes on the carpet [points]: grid optimum (star), continuous optimum (diamond), grid points.
_STAR_MS, _DIAMOND_MS, _POINT_MS, _CROSS_MS = 17.0, 9.0, 2.0, 5.0


def _fill_invalid(Z, valid):
    """Return ``Z`` with the invalid nodes filled by linear continuation of the valid ones.

    Each pass fills the nodes that have, in some grid direction, two known nodes in a row (v1 next to
    it, v2 beyond): the node gets the mean of 2 v1 - v2 over those directions; when no node has such a
    pair, the nodes next to a known one copy its value. Linear continuation keeps a field's slope across
    the boundary of the valid designs, so that its spline does not bend back (no spurious contours there).
    """
    Z = np.array(Z, dtype=float)
    known = np.array(valid, dtype=bool)
    if not np.any(known):
        return np.zeros_like(Z)
    ny, nx = Z.shape
    shifts = ((0, 1), (0, -1), (1, 0), (-1, 0))
    while not np.all(known):
        new = {}
        for pair in (True, False):
            for i, j in zip(*np.nonzero(~known)):
                vals = []
                for di, dj in shifts:
                    i1, j1, i2, j2 = i + di, j + dj, i + 2 * di, j + 2 * dj
                    if 0 <= i1 < ny and 0 <= j1 < nx and known[i1, j1]:
                        if not pair:
                            vals.append(Z[i1, j1])
                        elif 0 <= i2 < ny and 0 <= j2 < nx and known[i2, j2]:
                            vals.append(2.0 * Z[i1, j1] - Z[i2, j2])
                if vals:
                    new[(i, j)] = np.mean(vals)
            if new:
                break
        for (i, j), v in new.items():
            Z[i, j] = v
            known[i, j] = True
    return Z


def _fine_fields(result, fields, bbox, n=FINE_POINTS):
    """Interpolate carpet fields smoothly onto a fine grid over ``bbox`` (bicubic spline where 4+ points).

    The fields are splined through the grid values, with the designs the model could not evaluate filled
    by a smooth continuation (``_fill_invalid``); fine points where the bilinear interpolation of the
    'valid' indicator is below 0.5 (nearer invalid designs than valid ones) are masked.

    Returns
    -------
    tuple
        (fine BPR grid, fine OPR grid, {name: masked fine array}, boolean fine 'valid' array).
    """
    from scipy.interpolate import RectBivariateSpline, RegularGridInterpolator

    x, y = np.asarray(result["bpr_values"], float), np.asarray(result["OPR"][:, 0], float)
    ix, iy = np.argsort(x), np.argsort(y)
    x, y = x[ix], y[iy]
    valid = np.asarray(result["feasible"], bool)[np.ix_(iy, ix)]
    xf = np.linspace(bbox[0], bbox[1], n)
    yf = np.linspace(bbox[2], bbox[3], n)
    Bf, Pf = np.meshgrid(xf, yf)
    indicator = RegularGridInterpolator((y, x), valid.astype(float))(np.column_stack([Pf.ravel(), Bf.ravel()]))
    ok = indicator.reshape(Bf.shape) >= 0.5 - 1e-12
    out = {}
    for name, Z in fields.items():
        Z = np.asarray(Z, float)[np.ix_(iy, ix)]
        good = valid & np.isfinite(Z)
        if not np.any(good):
            out[name] = np.ma.masked_all(Bf.shape)
            continue
        spline = RectBivariateSpline(y, x, _fill_invalid(Z, good), kx=min(3, len(y) - 1), ky=min(3, len(x) - 1))
        out[name] = np.ma.masked_array(spline(yf, xf), mask=~ok)
    return Bf, Pf, out, ok


def _valid_bbox(result, optimum):
    """(xmin, xmax, ymin, ymax) of the evaluated designs, and of the optima marked."""
    B, P, ok = result["BPR"], result["OPR"], np.asarray(result["feasible"], bool)
    xs, ys = list(B[ok]) or list(B.ravel()), list(P[ok]) or list(P.ravel())
    for opt in (result.get("optimum"), optimum):
        if opt is not None:
            xs.append(opt["BPR"])
            ys.append(opt["OPR"])
    return min(xs), max(xs), min(ys), max(ys)


def _pad_limits(ax, bbox, marker_px):
    """Set the axes limits to ``bbox`` padded so that a marker of half-size ``marker_px`` pixels fits inside."""
    x0, x1, y0, y1 = bbox
    win = ax.get_window_extent()
    for lo, hi, size, setter in ((x0, x1, win.width, ax.set_xlim), (y0, y1, win.height, ax.set_ylim)):
        span = (hi - lo) or max(abs(lo), 1.0)
        frac = max(CARPET_PAD, (marker_px + 4.0) / max(size - 2.0 * (marker_px + 4.0), 1.0))
        setter(lo - frac * span, hi + frac * span)


def _inside(extent, box, gap=1.0):
    return (extent.x0 >= box.x0 + gap and extent.x1 <= box.x1 - gap and extent.y0 >= box.y0 + gap
            and extent.y1 <= box.y1 - gap)


def _overlaps(extent, others, gap=3.0):
    return any(extent.x0 < o.x1 + gap and extent.x1 > o.x0 - gap and extent.y0 < o.y1 + gap
               and extent.y1 > o.y0 - gap for o in others)


def _place_line_label(ax, renderer, segments, text, placed, fraction, **kwargs):
    """Write ``text`` along one of the polylines ``segments`` (data coordinates) inside the axes.

    Candidate positions are the polyline vertices, nearest the ``fraction`` of the axes height first; the
    first one whose rotated text lies wholly inside the axes and clear of the extents in ``placed`` is
    taken (else the first inside the axes). Returns the Text, or None when no vertex allows one.
    """
    box = ax.get_window_extent()
    to_px = ax.transData.transform
    candidates = []
    for seg in segments:
        seg = np.asarray(seg, float)
        if len(seg) < 2:
            continue
        px = to_px(seg)
        for k in range(len(seg)):
            k0, k1 = max(k - 2, 0), min(k + 2, len(seg) - 1)
            d = px[k1] - px[k0]
            angle = np.degrees(np.arctan2(d[1], d[0]))
            angle = angle - 180.0 if angle > 90.0 else angle + 180.0 if angle < -90.0 else angle
            yfrac = (px[k, 1] - box.y0) / box.height
            candidates.append((abs(yfrac - fraction), seg[k], angle))
    candidates.sort(key=lambda c: c[0])
    fallback = None
    for _, xy, angle in candidates[:: max(1, len(candidates) // 150)]:
        t = ax.text(xy[0], xy[1], text, rotation=angle, rotation_mode="anchor", ha="center", va="center",
                    **kwargs)
        extent = t.get_window_extent(renderer)
        if _inside(extent, box, gap=2.0):
            if not _overlaps(extent, placed):
                placed.append(extent)
                return t
            if fallback is None:
                fallback = (xy, angle)
        t.remove()
    if fallback is not None:
        t = ax.text(fallback[0][0], fallback[0][1], text, rotation=fallback[1], rotation_mode="anchor",
                    ha="center", va="center", **kwargs)
        placed.append(t.get_window_extent(renderer))
        return t
    return None


def _contour_segments(cs, level_index=0):
    """Polylines of one level of a contour set (data coordinates)."""
    return [seg for seg in cs.allsegs[level_index] if len(seg)]


def carpet_figure(result, optimum=None):
    """Return the matplotlib figure of ``plot_carpet`` (not saved; close it with ``plt.close(fig)``).

    The axes are cropped to the designs the model could evaluate (and the optima marked), padded so that
    no marker is cut. Objective, FPR and constraint margins are splined onto a fine grid
    (``_fine_fields``) so that contours are smooth on coarse grids. Every limit line is labelled inside
    the axes; the limit lines carry the gid ``limit:<name>`` and their labels ``limit-label:<name>``.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.carpet.run_carpet``.
    optimum : dict or None
        Continuous optimum to mark (``BPR``, ``OPR`` and optionally ``FPR``, ``objective``).

    Returns
    -------
    matplotlib.figure.Figure
    """
    plt = _pyplot()
    from matplotlib import patheffects
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch
    from matplotlib.ticker import MaxNLocator

    B, P = result["BPR"], result["OPR"]
    feasible = np.asarray(result["feasible"], bool)
    obj_label = OBJECTIVE_LABELS.get(result["objective_name"], result["objective_name"])
    units = _units_text(result["objective_units"])
    bbox = _valid_bbox(result, optimum)
    data_box = (max(bbox[0], B.min()), min(bbox[1], B.max()), max(bbox[2], P.min()), min(bbox[3], P.max()))
    fields = {"objective": result["objective"], "FPR": result["FPR"]}
    fields.update({f"margin:{name}": m for name, m in result["margins"].items()})
    Bf, Pf, fine, fine_ok = _fine_fields(result, fields, data_box)
    Z = fine["objective"]

    fig, ax = plt.subplots(figsize=(9.0, 8.0))
    ax.set_facecolor("w")
    if not np.all(fine_ok):
        ax.contourf(Bf, Pf, fine_ok.astype(float), levels=[-0.5, 0.5], colors=["0.85"], zorder=0.5)
    levels = MaxNLocator(nbins=14).tick_values(Z.min(), Z.max()) if Z.count() else np.linspace(0.0, 1.0, 11)
    filled = ax.contourf(Bf, Pf, Z, levels=levels, cmap="viridis_r", zorder=1)
    cbar = fig.colorbar(filled, ax=ax, pad=0.02)
    cbar.set_label(f"{obj_label} [{units}] (lower is better)")
    obj_lines = ax.contour(Bf, Pf, Z, levels=levels[1::2], colors="k", linewidths=0.4, alpha=0.6, zorder=2)

    handles, later = [], []
    halo_w = [patheffects.withStroke(linewidth=2.5, foreground="w")]
    if result["fpr_mode"] == "optimal" and np.any(feasible):
        F = fine["FPR"]
        fpr_levels = np.round(np.arange(1.3, 3.0, 0.1), 2)
        lo, hi = result["FPR_bounds"]  # a level on a bound would trace the noisy edge of a plateau
        inner = (fpr_levels > max(F.min(), lo + 0.02)) & (fpr_levels < min(F.max(), hi - 0.02))
        fpr_levels = fpr_levels[inner] if F.count() else []
        if len(fpr_levels):
            halo = [patheffects.withStroke(linewidth=2.2, foreground="0.2")]
            fl = ax.contour(Bf, Pf, F, levels=fpr_levels, colors="w", linewidths=0.9, linestyles="--", zorder=3)
            fl.set_path_effects(halo)
            for k, v in enumerate(fpr_levels):
                later.append((_contour_segments(fl, k), f"FPR {v:.1f}", 0.72,
                              dict(fontsize=7, color="w", path_effects=halo, zorder=6)))
            handles.append(Line2D([], [], color="w", ls="--", lw=0.9, path_effects=halo,
                                  label="optimum FPR of the points (dashed contours)"))

    limit_labels = []
    for name, lim in result["limits"].items():
        margin = fine[f"margin:{name}"]
        label, color, hatch = _CONSTRAINT_STYLES.get(name, (lim["label"], "k", ".."))
        limit_text = f"{lim['limit']:g} {_units_text(lim['units'])}"
        if name not in ("clearance_margin", "diameter_margin"):
            label = f"{label} ({limit_text})"
        if not margin.count():
            continue
        if margin.max() < 0.0:
            state = ": violated everywhere shown (hatched)"
        elif margin.min() >= 0.0:
            state = ": met everywhere shown"
        else:
            state = ": line where met exactly, hatched side violates it"
        if margin.min() < 0.0:
            hatched = ax.contourf(Bf, Pf, margin, levels=[margin.min() - 1.0, 0.0], colors="none", hatches=[hatch],
                                  zorder=4)
            hatched.set_edgecolor(color)
            hatched.set_linewidth(0.0)
        if margin.min() < 0.0 < margin.max():
            zero = ax.contour(Bf, Pf, margin, levels=[0.0], colors=[color], linewidths=2.2, zorder=5)
            zero.set_path_effects([patheffects.withStroke(linewidth=3.6, foreground="w")])
            zero.set_gid(f"limit:{name}")
            limit_labels.append((name, _contour_segments(zero), label.split(" = ")[0],
                                 dict(fontsize=7.5, color=color, path_effects=halo_w, zorder=7)))
        handles.append(Patch(facecolor="none", edgecolor=color, hatch=hatch, lw=2.0, label=f"{label}{state}"))

    ax.plot(B[feasible], P[feasible], ".", color="k", ms=_POINT_MS, alpha=0.4, zorder=8)
    handles.append(Line2D([], [], ls="", marker=".", color="k", ms=4, alpha=0.6, label="evaluated grid point"))
    inside = (~feasible & (B >= bbox[0]) & (B <= bbox[1]) & (P >= bbox[2]) & (P <= bbox[3]))
    if np.any(inside):
        ax.plot(B[inside], P[inside], "x", color="0.3", ms=_CROSS_MS, zorder=8)
    if not np.all(feasible):
        handles.append(Line2D([], [], ls="", marker="x", color="0.3", ms=5,
                              label="grid point with no valid cycle (the model cannot evaluate it); "
                                    "grey: no contour data"))
    marker_pt = _CROSS_MS if np.any(inside) else _POINT_MS
    grid_opt = result.get("optimum")
    if grid_opt is not None:
        ax.plot(grid_opt["BPR"], grid_opt["OPR"], "*", ms=_STAR_MS, mfc="gold", mec="k", zorder=9)
        marker_pt = _STAR_MS
        handles.append(Line2D([], [], ls="", marker="*", ms=12, mfc="gold", mec="k",
                              label=f"best grid point meeting all limits: BPR {grid_opt['BPR']:.3g}, "
                                    f"OPR {grid_opt['OPR']:.3g}, FPR {grid_opt['FPR']:.3g}, "
                                    f"{grid_opt['objective']:.6g} {units}"))
    if optimum is not None:
        ax.plot(optimum["BPR"], optimum["OPR"], "D", ms=_DIAMOND_MS, mfc="w", mec="k", mew=1.5, zorder=10)
        marker_pt = max(marker_pt, _DIAMOND_MS + 3.0)
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
        mode = f"FPR optimised at each point for least {obj_label} (bounds {lo:.3g}-{hi:.3g}; limits not imposed)"
    else:
        mode = f"FPR fixed at {result['fixed_fpr']:.3g}"
    ax.set_title(f"{result['scenario']}: {obj_label} carpet\n{mode}, Tt4 = {result['Tt4']:.0f} K",
                 fontsize=11)
    legend = fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 0.03), ncol=1, fontsize=7.5,
                        frameon=False)
    fig.canvas.draw()
    legend_top = legend.get_window_extent().transformed(fig.transFigure.inverted()).y1
    fig.subplots_adjust(left=0.09, right=0.98, top=0.91, bottom=legend_top + 0.07)
    _pad_limits(ax, bbox, 0.5 * marker_pt * fig.dpi / 72.0 + 2.0)
    renderer = fig.canvas.get_renderer()

    placed = []
    for name, segments, text, style in limit_labels:  # limit labels first: they must not be crowded out
        t = _place_line_label(ax, renderer, segments, text, placed, 0.15, **style)
        if t is not None:
            t.set_gid(f"limit-label:{name}")
    for segments, text, fraction, style in later:
        _place_line_label(ax, renderer, segments, text, placed, fraction, **style)
    fmt = "%.0f" if Z.count() and np.nanmax(np.abs(Z)) > 100 else "%.3g"
    box = ax.get_window_extent()
    for t in ax.clabel(obj_lines, fmt=fmt, fontsize=7, inline=False):
        t.set_path_effects(halo_w)
        extent = t.get_window_extent(renderer)
        if not _inside(extent, box, gap=2.0) or _overlaps(extent, placed, gap=1.0):
            t.remove()
        else:
            placed.append(extent)
    _footnote(fig)
    return fig


def plot_carpet(result, path, optimum=None):
    """Plot filled contours of the objective over BPR and OPR with the constraint boundaries; save a PNG.

    Each constraint is drawn as a labelled line where its margin is zero, hatched on the side that
    violates it; designs the model cannot evaluate are left grey. The grid optimum (least objective
    meeting every limit) is a star, and ``optimum`` (the continuous optimum, a dict with ``BPR`` and
    ``OPR`` and optionally ``objective``) a diamond. In 'optimal' FPR mode, dashed white lines show the
    FPR of each point. The figure is ``carpet_figure``'s.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.carpet.run_carpet``.
    path : str or path-like
        PNG file written.
    optimum : dict or None
        Continuous optimum to mark, e.g. design variables and objective of the best-cycle problem.

    Returns
    -------
    str or path-like
        ``path``.
    """
    plt = _pyplot()
    fig = carpet_figure(result, optimum)
    fig.savefig(path, dpi=130)
    plt.close(fig)
    return path


def _hermite(x0, x1, f0, f1, d0, d1, n=24):
    """Cubic Hermite curve through (x0, f0) and (x1, f1) with slopes d0 and d1."""
    t = np.linspace(0.0, 1.0, n)
    h = x1 - x0
    f = ((2 * t**3 - 3 * t**2 + 1) * f0 + (t**3 - 2 * t**2 + t) * h * d0 + (-2 * t**3 + 3 * t**2) * f1
         + (t**3 - t**2) * h * d1)
    return x0 + t * h, f


def trade_curve_figure(result):
    """Return the matplotlib figure of ``plot_trade_curve`` (not saved; close it with ``plt.close(fig)``).

    Between two optima with the same active set the objective is drawn as the cubic Hermite curve of
    the values and of the slopes d(objective)/d(limit) from the multipliers (exact on that smooth
    branch); across a change of the active set it is a straight segment, so that the kink shows at the
    point the refinement of ``run_trade_curve`` placed there. Points added by the refinement are
    smaller diamonds; every change of the active set is a dotted vertical line with its value.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.trade_curve.run_trade_curve``.

    Returns
    -------
    matplotlib.figure.Figure
    """
    plt = _pyplot()
    from matplotlib.lines import Line2D

    from bypassopt.problems.trade_curve import TRADE_LIMITS

    _, _, lunits, step, step_name, phrase, constraint = TRADE_LIMITS[result["limit"]]
    order = np.argsort(np.asarray(result["values"], dtype=float), kind="stable")
    x = np.asarray(result["values"], dtype=float)[order]
    ok = np.asarray(result["success"], dtype=bool)[order]
    f = np.asarray(result["objective"], dtype=float)[order]
    bpr = np.asarray(result["BPR"], dtype=float)[order]
    slope = np.asarray(result["d_objective_d_limit"], dtype=float)[order]
    sens = slope * step
    points = [result["points"][k] for k in order]
    refined = np.array([p.get("refined", False) for p in points], dtype=bool)
    active_sets = [tuple(sorted(p["active"])) for p in points]
    active = np.array([constraint in p["active"] for p in points])
    degenerate = np.array([p.get("degenerate", False) for p in points])
    obj_label = OBJECTIVE_LABELS.get(result["objective_name"], result["objective_name"])
    units = _units_text(result["objective_units"])
    con_label = _TRADE_CONSTRAINT_LABELS.get(constraint, constraint)

    fig, (ax1, ax3) = plt.subplots(2, 1, sharex=True, figsize=(8.0, 8.0), gridspec_kw={"height_ratios": [3, 2]})
    for ax in (ax1, ax3):
        for xf in x[~ok]:
            ax.axvline(xf, color="red", ls=":", lw=1.5)
    good_idx = np.flatnonzero(ok)
    for a, b in zip(good_idx[:-1], good_idx[1:]):
        if active_sets[a] == active_sets[b] and np.isfinite(slope[a]) and np.isfinite(slope[b]):
            xs, fs = _hermite(x[a], x[b], f[a], f[b], slope[a], slope[b])
        else:
            xs, fs = [x[a], x[b]], [f[a], f[b]]
        ax1.plot(xs, fs, "-", color="C0", lw=1.6)
    main, extra = ok & ~refined, ok & refined
    ax1.plot(x[main], f[main], "o", color="C0", ms=6)
    if np.any(extra):
        ax1.plot(x[extra], f[extra], "D", color="C0", mec="k", mew=0.6, ms=4.5)
    l1 = Line2D([], [], color="C0", marker="o", ms=6, label=f"{obj_label} at the optimum (left axis)")
    ax1.set_ylabel(f"{obj_label} at the optimum [{units}]", color="C0")
    ax1.tick_params(axis="y", labelcolor="C0")
    ax1.ticklabel_format(axis="y", useOffset=False)
    ax2 = ax1.twinx()
    ax2.plot(x[ok], bpr[ok], "--", color="C2", lw=1.0)
    ax2.plot(x[main], bpr[main], "s", color="C2", ms=5)
    if np.any(extra):
        ax2.plot(x[extra], bpr[extra], "D", color="C2", mec="k", mew=0.6, ms=4)
    l2 = Line2D([], [], color="C2", ls="--", marker="s", ms=5, label="optimum bypass ratio (right axis)")
    ax2.set_ylabel("optimum bypass ratio BPR [-]", color="C2")
    ax2.tick_params(axis="y", labelcolor="C2")
    handles = [l1, l2]
    if np.any(extra):
        handles.append(Line2D([], [], ls="", marker="D", color="0.5", mec="k", mew=0.6, ms=4.5,
                              label="added to locate a kink"))
    if np.any(~ok):
        handles.append(Line2D([], [], color="red", ls=":", lw=1.5, label="optimizer did not converge"))
    ax1.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=len(handles), fontsize=8,
               frameon=False)
    ax1.grid(alpha=0.3)
    title = textwrap.wrap(f"{result['scenario']}: best installed cycle against the {phrase}", 80)
    fig.suptitle("\n".join(title), fontsize=11)

    ax3.axhline(0.0, color="0.5", lw=0.8)
    good = ok & np.isfinite(sens)
    start = 0
    idx = np.flatnonzero(good)
    for k in range(1, len(idx) + 1):  # join the slopes only along one active set: they jump at a kink
        if k == len(idx) or active_sets[idx[k]] != active_sets[idx[k - 1]]:
            seg = idx[start:k]
            ax3.plot(x[seg], sens[seg], "-", color="C3", lw=1.0)
            start = k
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
    for ax in (ax1, ax2, ax3):
        ax.margins(x=0.05, y=0.08)
    xlo, xhi = ax1.get_xlim()
    for change in result.get("active_set_changes", []):
        v = change["value"]
        for ax in (ax1, ax3):
            ax.axvline(v, color="0.3", ls=":", lw=1.0, zorder=0)
        right = (v - xlo) < 0.6 * (xhi - xlo)
        ax1.annotate(f"active set changes\nat {v:.4g} {lunits}", xy=(v, 0.5), xycoords=("data", "axes fraction"),
                     xytext=(5 if right else -5, 0), textcoords="offset points", ha="left" if right else "right",
                     va="center", fontsize=7.5, color="0.25",
                     bbox=dict(boxstyle="round,pad=0.2", fc="w", ec="none", alpha=0.8))
    fig.subplots_adjust(left=0.14, right=0.87, top=0.89 - 0.025 * (len(title) - 1), bottom=0.11, hspace=0.22)
    _footnote(fig)
    return fig


def plot_trade_curve(result, path):
    """Plot the optimum objective and BPR along a swept limit, and its sensitivity to the limit; save a PNG.

    Upper panel: objective at each optimum (left axis) and the optimum BPR (right axis). Lower panel:
    change of the optimum objective per step of the limit (per cm for lengths, per K for temperatures),
    from the KKT multipliers; filled markers where the constraint the limit sets is active, hollow where
    it is not. Limit values where the optimizer failed are marked by red dotted vertical lines. The
    figure is ``trade_curve_figure``'s.

    Parameters
    ----------
    result : dict
        Returned by ``bypassopt.problems.trade_curve.run_trade_curve``.
    path : str or path-like
        PNG file written.

    Returns
    -------
    str or path-like
        ``path``.
    """
    plt = _pyplot()
    fig = trade_curve_figure(result)
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
