"""Reports: station flows conserve mass, summaries carry the caution, shadow prices read right, files are atomic."""

import csv
import io
import json
import os

import numpy as np
import pytest

from bypassopt import CAUTION
from bypassopt.problems.best_cycle import build_best_cycle_problem, build_evaluation_problem
from bypassopt.report import (QUANTITIES, TextTable, clean_text, design_summary, format_number, format_summary,
                              optimum_summary, render_plain, render_rich, station_table, summary_blocks,
                              summary_rows, text_table, write_csv, write_json, write_text)

#: Flows are products of converged model outputs: they add up to round-off.
MASS_RTOL = 1e-12
#: The summary's values are the model's, converted to the units shown.
VALUE_RTOL = 1e-14


@pytest.fixture(scope="module")
def evaluated():
    """The demo engine at its initial design (BPR 10, FPR 1.5, OPR 40) with one non-default customer bleed."""
    prob = build_evaluation_problem(design={"BPR": 11.0})
    prob.set_val("customer_bleed_frac", 0.02)
    prob.run_model()
    return prob


@pytest.fixture(scope="module")
def optimised():
    """The demo's best installed cycle and the driver's result."""
    prob, settings = build_best_cycle_problem()
    result = prob.run_driver()
    assert result.success
    return prob, settings, result


def _stations(prob):
    return {r["station"]: r for r in station_table(prob)}


def test_station_flows_conserve_mass(evaluated):
    """Bypass + core = W2; the core loses the customer bleed and gains the fuel; coolant returns downstream."""
    prob = evaluated
    st = _stations(prob)
    w2 = prob.get_val("W2", units="kg/s")[0]
    fuel = prob.get_val("fuel_flow", units="kg/s")[0]
    bleed = prob.get_val("customer_bleed_frac")[0]
    vane, rotor = prob.get_val("cooling_frac_vane")[0], prob.get_val("cooling_frac_rotor")[0]
    core = st["25"]["W_kg_s"]
    assert st["13"]["W_kg_s"] + st["21"]["W_kg_s"] == pytest.approx(w2, rel=MASS_RTOL)
    assert st["13"]["W_kg_s"] / core == pytest.approx(11.0, rel=MASS_RTOL)
    assert st["0"]["W_kg_s"] == st["2"]["W_kg_s"] == pytest.approx(w2, rel=MASS_RTOL)
    assert st["17"]["W_kg_s"] == st["18"]["W_kg_s"] == st["13"]["W_kg_s"]
    assert st["3"]["W_kg_s"] == st["25"]["W_kg_s"] == st["21"]["W_kg_s"]
    # burner: air left after the extractions at the HPC exit, plus fuel
    assert st["4"]["W_kg_s"] == pytest.approx(core * (1.0 - vane - rotor - bleed) + fuel, rel=MASS_RTOL)
    assert st["41"]["W_kg_s"] - st["4"]["W_kg_s"] == pytest.approx(core * vane, rel=1e-10)
    assert st["45"]["W_kg_s"] - st["44"]["W_kg_s"] == pytest.approx(core * rotor, rel=1e-10)
    # the core nozzle passes everything that entered the core except the customer bleed, plus the fuel
    assert st["8"]["W_kg_s"] == pytest.approx(core * (1.0 - bleed) + fuel, rel=MASS_RTOL)
    assert st["8"]["W_kg_s"] > core * (1.0 - bleed)
    assert st["7"]["W_kg_s"] == st["5"]["W_kg_s"] == st["8"]["W_kg_s"]


def test_station_states(evaluated):
    """Totals are the model's in K and kPa; fuel-air ratio only in burnt gas, diluted by each coolant."""
    prob = evaluated
    st = _stations(prob)
    assert [r["station"] for r in station_table(prob)] == ["0", "2", "13", "21", "25", "3", "4", "41", "44",
                                                            "45", "5", "7", "8", "17", "18"]
    assert st["3"]["Tt_K"] == pytest.approx(prob.get_val("Tt3", units="K")[0], rel=VALUE_RTOL)
    assert st["3"]["Pt_kPa"] == pytest.approx(prob.get_val("Pt3", units="Pa")[0] / 1e3, rel=VALUE_RTOL)
    assert st["3"]["Pt_kPa"] / st["2"]["Pt_kPa"] == pytest.approx(40.0, rel=1e-12)  # OPR = Pt3/Pt2
    for s in ("0", "2", "13", "21", "25", "3", "17", "18"):
        assert st[s]["FAR"] is None
    assert st["4"]["FAR"] > st["41"]["FAR"] == st["44"]["FAR"] > st["45"]["FAR"] == st["5"]["FAR"] == st["8"]["FAR"]
    assert st["8"]["Tt_K"] == st["7"]["Tt_K"] and st["8"]["Pt_kPa"] == st["7"]["Pt_kPa"]
    assert st["0"]["Mach"] == pytest.approx(0.78) and st["8"]["Mach"] <= 1.0 + 1e-12
    assert st["2"]["Ps_kPa"] is None


def test_design_summary_values_and_units(evaluated, tmp_path):
    """Every key quantity is there, in the units shown; the summary serialises to JSON and CSV."""
    s = design_summary(evaluated)
    assert s["caution"] == CAUTION
    assert [name for name, *_ in QUANTITIES] == list(s["quantities"])
    q = s["quantities"]
    assert q["installed_TSFC"]["units"] == "mg/(N*s)"
    assert q["installed_TSFC"]["value"] == pytest.approx(
        evaluated.get_val("installed_TSFC", units="kg/(N*s)")[0] * 1e6, rel=VALUE_RTOL)
    assert q["installed_TSFC"]["value"] > q["TSFC"]["value"]  # nacelle drag costs fuel
    drag_parts = sum(q[k]["value"] for k in ("fan_cowl_drag", "core_cowl_drag", "plug_drag", "pylon_drag"))
    assert drag_parts == pytest.approx(q["nacelle_drag"]["value"], rel=1e-12)
    assert q["powerplant_mass"]["value"] == pytest.approx(q["engine_dry_mass"]["value"] + q["nacelle_mass"]["value"],
                                                          rel=1e-12)
    assert q["BPR"]["value"] == 11.0 and q["Tt4"]["units"] == "K"
    write_json(tmp_path / "s.json", s)
    assert json.loads((tmp_path / "s.json").read_text())["quantities"]["W2"]["value"] == q["W2"]["value"]
    write_csv(tmp_path / "s.csv", summary_rows(s))
    with open(tmp_path / "s.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert {r["name"]: float(r["value"]) for r in rows}["mission_fuel"] == q["mission_fuel"]["value"]


def test_summary_text_has_caution_and_tables(evaluated):
    """The text report carries the caution and aligned tables of the design and the stations."""
    text = format_summary(design_summary(evaluated))
    assert CAUTION in " ".join(text.split())
    assert "Stations" in text and "installed TSFC" in text
    lines = text.splitlines()
    header = next(ln for ln in lines if ln.strip().startswith("station"))
    rest = lines[lines.index(header) + 2:]
    station_lines = rest[:rest.index("")] if "" in rest else rest
    assert len(station_lines) == 15
    # the multipoint demo: a table at each off-design point too, with the point's own state
    assert "Stations at take-off" in text and "Stations at mid-cruise" in text
    takeoff = design_summary(evaluated)["point_stations"]["takeoff"]
    assert takeoff[5]["station"] == "3" and takeoff[5]["Tt_K"] == evaluated.get_val("takeoff:Tt3", units="K")[0]
    assert takeoff[0]["W_kg_s"] == evaluated.get_val("takeoff:W2", units="kg/s")[0]
    # right-aligned numeric columns end at the same place
    end = header.index("Tt K") + len("Tt K")
    assert all(ln[end - 1] != " " for ln in station_lines)
    assert max(len(ln) for ln in lines) <= 120


def test_flight_points_side_by_side(evaluated):
    """The multipoint demo's summary has every point's values; the design column repeats the design quantities."""
    s = design_summary(evaluated)
    points = s["points"]
    assert list(points) == ["design", "takeoff", "cruise"]
    for name in ("TSFC", "Tt41", "Tt3", "FPR", "W2"):
        assert points["design"][name]["value"] == s["quantities"][name]["value"]
        assert points["takeoff"][name]["value"] == evaluated.get_val(f"takeoff:{name}",
                                                                     units=points["takeoff"][name]["units"])[0]
    text = format_summary(s)
    assert "Flight points" in text and "take-off" in text and "mid-cruise" in text
    names = {r["name"] for r in summary_rows(s)}
    assert {"takeoff:Tt41", "cruise:installed_TSFC", "design:Tt41"} <= names


def test_optimum_summary(optimised, tmp_path):
    """Optimizer record, constraints with margins and shadow prices, and a plain sentence per active limit."""
    prob, settings, result = optimised
    s = optimum_summary(prob, settings, result)
    assert s["caution"] == CAUTION
    opt = s["optimizer"]
    assert opt["success"] and opt["iterations"] == prob.driver.optimizer_result.nit
    assert opt["model_evaluations"] == prob.driver.model_evaluations and opt["failed_evaluations"] >= 0
    assert "success" in opt["message"].lower()
    assert s["objective"]["name"] == "mission_fuel"
    assert s["objective"]["value"] == s["quantities"]["mission_fuel"]["value"]
    cons = s["constraints"]
    # the demo's multipoint model: the T41 and T3 limits at top of climb ([limits]) and at take-off ([takeoff])
    assert set(cons) == {"clearance_margin", "diameter_margin", "Tt41", "Tt3", "W3_corrected", "takeoff:Tt41",
                         "takeoff:Tt3"}
    for c in cons.values():
        sign = 1.0 if c["kind"] == "lower" else -1.0
        assert c["margin"] == pytest.approx(sign * (c["value"] - c["limit"]), abs=1e-12)
        assert c["margin"] > -1e-6
        assert (c["statement"] is not None) == c["active"]
    active = [n for n, c in cons.items() if c["active"]]
    assert active, "the demo optimum is limited by at least one constraint"
    c = cons["clearance_margin"]
    assert c["active"] and c["multiplier"] > 0.0
    assert c["shadow_price_units"] == "kg per m"
    per_cm = format_number(c["multiplier"] * 0.01, 3)
    assert c["statement"] == f"relaxing the nacelle ground-clearance margin by 1 cm would save {per_cm} kg of " \
                             "mission fuel."
    assert s["shadow_price_statements"][0] == c["statement"]
    assert s["kkt"]["projected_gradient"] < 1e-2 and s["kkt"]["multipliers_nonnegative"]
    assert set(s["bounds"]) == {"BPR", "FPR", "OPR", "Tt4"} and s["fixed_design_variables"] == {}
    text = format_summary(s)
    assert CAUTION in " ".join(text.split())
    assert "Relaxing the nacelle ground-clearance margin by 1 cm" in text and "converged" in text
    write_json(tmp_path / "o.json", s)
    assert json.loads((tmp_path / "o.json").read_text())["constraints"]["clearance_margin"]["active"] is True


def _design_point_demo():
    """The demo with the design-point engine model and T4 held at its initial 1650 K (the 0.2 demo)."""
    from bypassopt.scenario import design_point_scenario, load_scenario, validate

    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


def test_shadow_price_units_installed_tsfc():
    """With installed TSFC as objective the clearance shadow price is d TSFC* / d(minimum clearance), mg/(N*s) per m.

    Checked against the optimum itself re-solved with the minimum clearance 2 cm larger (envelope theorem,
    Nocedal and Wright, section 12.8): the change of the optimum TSFC per metre of the limit equals the shadow price
    to first order (design-point model, T4 held; measured 3 % apart over the 2 cm step, the curvature).
    """
    from bypassopt.scenario import validate

    scenario = _design_point_demo()
    prob, settings = build_best_cycle_problem(scenario, objective="installed_TSFC")
    result = prob.run_driver()
    s = optimum_summary(prob, settings, result)
    c = s["constraints"]["clearance_margin"]
    assert c["active"] and c["shadow_price_units"] == "mg/(N*s) per m"
    step = 0.02
    tighter = validate({"installation": {"min_ground_clearance_m": scenario["installation"]["min_ground_clearance_m"]
                                         + step}}, base=scenario)
    prob2, _ = build_best_cycle_problem(tighter, objective="installed_TSFC")
    assert prob2.run_driver().success
    slope = (prob2.get_val("installed_TSFC", units="mg/(N*s)")[0]
             - prob.get_val("installed_TSFC", units="mg/(N*s)")[0]) / step
    assert c["shadow_price"] == pytest.approx(slope, rel=0.05)


def test_format_number():
    assert format_number(15858.66) == "15858.7"
    assert format_number(24000.0) == "24000"
    assert format_number(1.58197) == "1.582"
    assert format_number(1650.0) == "1650"
    assert format_number(-2.3e-11) == "0"
    assert format_number(None) == ""
    assert format_number(np.float64(0.00036992)) == "3.70e-04"


# --------------------------------------------------------------------------------------------------------
# Atomic writers


def _leftovers(folder, keep):
    return sorted(p for p in os.listdir(folder) if p not in keep)


def test_write_json_failure_leaves_old_file(tmp_path):
    """A value JSON cannot hold: TypeError, the previous file is untouched and no temporary file remains."""
    path = tmp_path / "out.json"
    write_json(path, {"a": 1})
    with pytest.raises(TypeError):
        write_json(path, {"a": 2, "b": object()})
    assert json.loads(path.read_text()) == {"a": 1}
    assert _leftovers(tmp_path, {"out.json"}) == []
    with pytest.raises(TypeError):
        write_json(tmp_path / "new.json", {"b": object()})
    assert not (tmp_path / "new.json").exists()
    assert _leftovers(tmp_path, {"out.json"}) == []


def test_write_csv_failure_leaves_no_partial_file(tmp_path):
    """A bad cell in the last row: nothing of the new table reaches the file."""
    path = tmp_path / "t.csv"
    write_csv(path, [{"x": 1.0, "y": "a"}])
    rows = [{"x": float(i), "y": "b"} for i in range(1000)] + [{"x": object(), "y": "c"}]
    with pytest.raises(TypeError):
        write_csv(path, rows)
    assert path.read_text() == "x,y\n1.0,a\n"
    assert _leftovers(tmp_path, {"t.csv"}) == []


def test_write_interrupted_at_replace(tmp_path, monkeypatch):
    """A failure while the file is moved into place removes the temporary file and keeps the old one."""
    path = tmp_path / "s.txt"
    write_text(path, "old\n")

    def broken_replace(src, dst):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", broken_replace)
    with pytest.raises(OSError, match="disk full"):
        write_text(path, "new\n")
    monkeypatch.undo()
    assert path.read_text() == "old\n"
    assert _leftovers(tmp_path, {"s.txt"}) == []


def test_writers_round_trip(tmp_path):
    """NaN becomes null (standard JSON); None an empty CSV cell; floats keep full precision."""
    write_json(tmp_path / "a.json", {"v": np.array([1.0, np.nan]), "flag": np.bool_(True), "n": np.int64(3)})
    assert json.loads((tmp_path / "a.json").read_text()) == {"v": [1.0, None], "flag": True, "n": 3}
    write_csv(tmp_path / "b.csv", [["name", "value"], ["pi", np.pi], ["none", None]])
    with open(tmp_path / "b.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows == [["name", "value"], ["pi", repr(np.pi)], ["none", ""]]


def test_summary_rows_are_numbers(optimised, tmp_path):
    """The value column of a summary CSV holds numbers only; the caution is a leading comment line."""
    prob, settings, result = optimised
    s = optimum_summary(prob, settings, result)
    rows = summary_rows(s)
    assert all(isinstance(r["value"], (int, float)) and not isinstance(r["value"], bool) for r in rows)
    values = {r["name"]: r["value"] for r in rows}
    assert values["optimizer_success"] == 1 and values["optimizer_iterations"] == prob.driver.optimizer_result.nit
    assert values["optimizer_runtime"] == s["optimizer"]["runtime_s"]
    write_csv(tmp_path / "o.csv", rows, comments=[f"CAUTION: {CAUTION}"])
    lines = (tmp_path / "o.csv").read_text().splitlines()
    assert lines[0] == f"# CAUTION: {CAUTION}" and lines[1] == "name,value,units"
    with open(tmp_path / "o.csv", newline="") as fh:
        read = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    assert [float(r["value"]) for r in read] == [float(r["value"]) for r in rows]


def test_plain_and_rich_reports(evaluated):
    """Plain text is text_table's; rich draws the same cells; a scenario name cannot inject markup or escapes."""
    s = design_summary(evaluated)
    s["scenario"] = "[link=http://x]X170[/link]\x1b[31m red\r\nline\u202e"
    blocks = summary_blocks(s)
    text = render_plain(blocks)
    assert text == format_summary(s) and "\x1b" not in text and "\r" not in text and "\u202e" not in text
    assert "Scenario: [link=http://x]X170[/link][31m red line" in text
    table = next(b for b in blocks if isinstance(b, TextTable) and b.headers[0] == "station")
    assert table.lines() == text_table(table.headers, table.rows, table.align)
    from rich.console import Console

    buf = io.StringIO()
    render_rich(blocks, Console(file=buf, force_terminal=True, width=140, color_system="standard"))
    shown = buf.getvalue()
    assert "[link=http://x]X170[/link]" in shown and "\x1b]8;" not in shown and "\x1b[31m" not in shown
    assert "free stream" in shown and "HPT rotor entry" in shown
    assert clean_text("a\tb\nc", keep_newlines=True) == "a b\nc"


# --------------------------------------------------------------------------------------------------------
# Honest reports of failed optimisations and implausible results


def _short_run(overrides):
    """The demo (design-point model, T4 held) with ``overrides`` and an iteration limit of 2: the optimizer stops."""
    from bypassopt.scenario import validate

    scenario = validate({"optimizer": {"maxiter": 2}, **overrides}, base=_design_point_demo())
    prob, settings = build_best_cycle_problem(scenario, reports=False)
    result = prob.run_driver()
    return prob, settings, result


def test_unconverged_violated_summary_claims_no_shadow_price():
    """A run stopped at a design beyond the T41 limit: 'violated', not 'active', and no shadow price at all."""
    prob, settings, result = _short_run({"limits": {"max_Tt41_K": 1500.0}})
    s = optimum_summary(prob, settings, result)
    assert not s["optimizer"]["success"]
    t41 = s["constraints"]["Tt41"]
    assert t41["margin"] < 0.0 and t41["violated"] and t41["status"] == "violated" and not t41["active"]
    assert "Tt41" in s["violated_limits"]
    assert s["shadow_price_statements"] == []
    for c in s["constraints"].values():
        assert c["shadow_price"] is None and c["multiplier"] is None and c["statement"] is None
    for b in s["bounds"].values():
        assert b["statement"] is None and b["multiplier"] is None
    text = format_summary(s)
    assert "DID NOT CONVERGE" in text and "VIOLATED" in text
    assert "Violated limits: " in text and "T41 limit missed by" in text
    assert "would save" not in text and "would cost" not in text and "kg per K" not in text
    assert "not given" in text
    rows = {r["name"] for r in summary_rows(s)}
    assert "Tt41_margin" in rows and not any(n.endswith("_shadow_price") for n in rows)


def test_converged_summary_prices_inactive_limits_at_zero(optimised):
    prob, settings, result = optimised
    s = optimum_summary(prob, settings, result)
    assert s["violated_limits"] == []
    for c in s["constraints"].values():
        assert not c["violated"] and c["status"] in ("active", "inactive") and c["shadow_price"] is not None
        assert (c["status"] == "active") == c["active"]


def test_implausible_results_are_flagged():
    """L/D = 5 (the lowest the schema accepts): three warnings (L/D; take-off mass above maximum, fuel above
    MTOM - ZFM; fuel fraction). Design-point model: with the multipoint model the engine cannot even fly the
    cruise of such an aircraft (test_absurd_cruise_is_an_analysis_error)."""
    from bypassopt.report import MAX_FUEL_FRACTION, result_warnings
    from bypassopt.scenario import design_point_scenario, load_scenario, validate

    scenario = validate({"aircraft": {"lift_to_drag": 5.0}}, base=design_point_scenario(load_scenario()))
    prob = build_evaluation_problem(scenario, reports=False)
    prob.run_model()
    warnings = result_warnings(prob, scenario)
    assert len(warnings) == 3
    assert warnings[0].startswith("aircraft.lift_to_drag = 5 is below 8")
    assert "above the maximum take-off mass" in warnings[1]
    assert "more than the maximum take-off mass minus the zero-fuel mass" in warnings[1]
    fuel, tom = prob.get_val("mission_fuel")[0], prob.get_val("takeoff_mass")[0]
    assert fuel / tom > MAX_FUEL_FRACTION and f"{100 * fuel / tom:.0f} % of the take-off mass" in warnings[2]
    s = design_summary(prob, scenario=scenario)
    assert s["warnings"] == warnings
    text = format_summary(s)
    assert "Warnings" in text and "no jet airliner cruises" in text
    assert json.loads(json.dumps(s["warnings"])) == warnings


def test_absurd_cruise_is_an_analysis_error():
    """Multipoint model, L/D = 5: the cruise thrust is beyond the engine; an AnalysisError names the cruise point."""
    import openmdao.api as om

    from bypassopt.scenario import load_scenario, validate

    scenario = validate({"aircraft": {"lift_to_drag": 5.0}}, base=load_scenario())
    prob = build_evaluation_problem(scenario, reports=False)
    with pytest.raises(om.AnalysisError, match="cruise"):
        prob.run_model()


def test_plausible_design_has_no_warnings_but_the_demos_mass(evaluated):
    """The demo's design is plausible but for its take-off mass, which is above the demo's maximum."""
    from bypassopt.report import result_warnings
    from bypassopt.scenario import load_scenario

    warnings = result_warnings(evaluated, load_scenario())
    assert len(warnings) == 1 and "above the maximum take-off mass" in warnings[0]
