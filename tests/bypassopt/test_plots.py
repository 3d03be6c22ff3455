"""Tests of the report plots: nothing drawn outside the axes, every limit line labelled, FPR in 3 digits."""

import numpy as np
import pytest

pytest.importorskip("matplotlib")
pytest.importorskip("scipy")

from bypassopt.plots import carpet_figure, trade_curve_figure  # noqa: E402
from bypassopt.problems.carpet import run_carpet  # noqa: E402
from bypassopt.problems.trade_curve import run_trade_curve  # noqa: E402
from bypassopt.scenario import load_scenario  # noqa: E402

# Coarse fixed-FPR grid: designs at high BPR and OPR have no valid cycle at this FPR, and the clearance
# and diameter limits cross the valid region. FPR with more digits than the plot may print.
BPR_VALUES = [6.0, 9.0, 12.0, 15.0, 18.0]
OPR_VALUES = [25.0, 45.0, 65.0]
FIXED_FPR = 1.6067038
# Two nacelle-diameter limits, binding and not: the active set changes between them.
DIAMETERS = [2.2, 2.34]
KINK_TOL = 2e-3  # m; the refinement's tolerance is 1 mm


@pytest.fixture(scope="module")
def scenario():
    """The built-in demo scenario."""
    return load_scenario()


@pytest.fixture(scope="module")
def carpet(scenario):
    """Small fixed-FPR carpet with designs the model cannot evaluate."""
    return run_carpet(scenario, BPR_VALUES, OPR_VALUES, fpr_mode="fixed", fixed_fpr=FIXED_FPR)


@pytest.fixture(scope="module")
def carpet_fig(carpet):
    """The carpet figure with a continuous optimum on the lowest BPR and highest OPR evaluated."""
    from matplotlib import pyplot as plt

    ok = carpet["feasible"]
    optimum = {"BPR": float(carpet["BPR"][ok].min()), "OPR": float(carpet["OPR"][ok].max()), "FPR": FIXED_FPR}
    fig = carpet_figure(carpet, optimum=optimum)
    fig.canvas.draw()
    yield fig
    plt.close(fig)


@pytest.fixture(scope="module")
def trade(scenario):
    """Trade curve over two diameter limits, refined where the limit stops binding."""
    return run_trade_curve(scenario, "max_nacelle_diameter_m", DIAMETERS)


def assert_markers_inside(ax):
    """Every marker's whole extent (size and edge) lies inside the axes' window."""
    box = ax.get_window_extent()
    dpi = ax.figure.dpi
    n = 0
    for line in ax.lines:
        if line.get_marker() in (None, "None", "", " "):
            continue
        xy = np.column_stack([line.get_xdata(), line.get_ydata()]).astype(float)
        px = ax.transData.transform(xy)
        half = 0.5 * (line.get_markersize() + line.get_markeredgewidth()) * dpi / 72.0
        for (x, y), data in zip(px, xy):
            n += 1
            assert box.x0 <= x - half and x + half <= box.x1, (line.get_marker(), data)
            assert box.y0 <= y - half and y + half <= box.y1, (line.get_marker(), data)
    assert n > 0


def assert_texts_inside(ax):
    """Every text drawn in the axes lies inside the axes' window."""
    renderer = ax.figure.canvas.get_renderer()
    box = ax.get_window_extent()
    for text in ax.texts:
        e = text.get_window_extent(renderer)
        assert box.x0 <= e.x0 and e.x1 <= box.x1 and box.y0 <= e.y0 and e.y1 <= box.y1, text.get_text()


def test_carpet_subtitle_fpr_three_digits(carpet_fig):
    """The subtitle shows the fixed FPR to 3 significant digits."""
    title = carpet_fig.axes[0].get_title()
    assert "FPR fixed at 1.61," in title
    assert "1.607" not in title and "1.6067" not in title


def test_carpet_markers_inside_axes(carpet_fig):
    """Grid points, the grid optimum's star and the continuous optimum's diamond are not cut by the frame."""
    ax = carpet_fig.axes[0]
    assert {line.get_marker() for line in ax.lines} >= {"*", "D", "x", "."}
    assert_markers_inside(ax)


def test_carpet_limit_lines_visible_and_labelled(carpet_fig, carpet):
    """Each limit crossing the valid region has a line in the axes' limits and a label inside the axes."""
    ax = carpet_fig.axes[0]
    lines = {c.get_gid().split(":", 1)[1]: c for c in ax.collections if (c.get_gid() or "").startswith("limit:")}
    ok = carpet["feasible"]
    crossing = {n for n, m in carpet["margins"].items() if m[ok].min() < 0.0 < m[ok].max()}
    assert "clearance_margin" in crossing  # the grid tests at least the ground-clearance line
    assert set(lines) >= crossing
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    for name, cs in lines.items():
        vertices = np.concatenate([p.vertices for p in cs.get_paths() if len(p.vertices)])
        assert len(vertices) > 1, name
        assert np.all((vertices[:, 0] >= x0) & (vertices[:, 0] <= x1)), name
        assert np.all((vertices[:, 1] >= y0) & (vertices[:, 1] <= y1)), name
        assert cs.get_zorder() > max(c.get_zorder() for c in ax.collections if c.get_gid() is None)
    labels = {t.get_gid().split(":", 1)[1] for t in ax.texts if (t.get_gid() or "").startswith("limit-label:")}
    assert labels == set(lines)
    assert_texts_inside(ax)


def test_carpet_cropped_to_valid_designs(carpet_fig, carpet):
    """The axes span the valid designs plus a small pad, not the grid points with no valid cycle."""
    ax = carpet_fig.axes[0]
    ok = carpet["feasible"]
    assert not np.all(ok)  # the grid has designs with no valid cycle
    for lim, values in ((ax.get_xlim(), carpet["BPR"][ok]), (ax.get_ylim(), carpet["OPR"][ok])):
        span = values.max() - values.min()
        assert lim[0] < values.min() and lim[1] > values.max()
        assert lim[0] > values.min() - 0.1 * span and lim[1] < values.max() + 0.1 * span


def test_trade_refinement_finds_the_kink(trade):
    """An optimum is added within 2 mm of the limit at which the diameter limit stops binding."""
    points = trade["points"]
    off = [p for p in points if "diameter_margin" not in p["active"]]
    assert off and len(points) > len(DIAMETERS)
    kink = off[0]["outputs"]["nacelle_max_diameter"]  # the unconstrained optimum's diameter
    assert DIAMETERS[0] + 0.05 < kink < DIAMETERS[1] - 0.01  # between the given values, away from both
    added = trade["values"][trade["refined"]]
    assert np.min(np.abs(added - kink)) < KINK_TOL
    assert trade["active_set_changes"][0]["value"] == pytest.approx(kink, abs=KINK_TOL)
    assert np.all(np.diff(trade["values"]) > 0.0)


def test_trade_figure_inside_axes(trade):
    """The trade curve's markers and the kink annotation lie inside their axes."""
    from matplotlib import pyplot as plt

    fig = trade_curve_figure(trade)
    fig.canvas.draw()
    try:
        for ax in fig.axes:
            assert_markers_inside(ax)
            assert_texts_inside(ax)
        assert any("active set changes" in t.get_text() for t in fig.axes[0].texts)
    finally:
        plt.close(fig)
