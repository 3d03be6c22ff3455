"""A catalogue of bad inputs: each gives exit 2 (or ScenarioError/ValueError at the API) with a message naming
the key or variable, its value and the allowed range, and leaves a complete earlier result folder unchanged.

The cases are run in-process through ``bypassopt.cli.main`` (the same code path as the ``bypassopt`` script,
without the interpreter start-up), so the catalogue stays fast.
"""

import hashlib
import pathlib

import pytest

from bypassopt.cli import main
from bypassopt.scenario import SCHEMA, ScenarioError, demo_scenario, validate

#: Numeric scenario keys whose out-of-range values are generated below (every one of the schema's).
NUMERIC_KEYS = [(section, key, spec) for section, keys in SCHEMA.items() for key, spec in keys.items()
                if spec["type"] == "number"]


def _fmt(x):
    return f"{x:g}"


def _above(spec):
    """A value above the allowed range (finite, clearly outside)."""
    hi = spec["hi"]
    return hi + max(abs(hi), 1.0)


def _folder_digest(folder):
    """SHA-256 over every file's relative path and bytes: any change to the folder changes it."""
    h = hashlib.sha256()
    for path in sorted(pathlib.Path(folder).rglob("*")):
        if path.is_file():
            h.update(str(path.relative_to(folder)).encode())
            h.update(path.read_bytes())
    return h.hexdigest()


@pytest.fixture(scope="module")
def earlier_results(tmp_path_factory):
    """A complete result folder of an earlier successful run (``bypassopt evaluate``)."""
    folder = tmp_path_factory.mktemp("earlier") / "results"
    assert main(["evaluate", "--out", str(folder), "--quiet"]) == 0
    assert (folder / "summary.txt").exists()
    return folder


def _run_bad(argv, earlier_results, capsys):
    """Run the CLI into the earlier result folder; return stderr after asserting exit 2 and the folder intact."""
    before = _folder_digest(earlier_results)
    code = main(argv + ["--out", str(earlier_results)])
    err = capsys.readouterr().err
    assert code == 2, err
    assert err.startswith("bypassopt: error:") and err.count("\n") == 1, err  # one line
    assert _folder_digest(earlier_results) == before, "a failed run changed the earlier results"
    return err


# -- scenario files: every numeric key out of range (68 cases) -------------------------------------------


@pytest.mark.parametrize("section, key, spec", NUMERIC_KEYS, ids=[f"{s}.{k}" for s, k, _ in NUMERIC_KEYS])
def test_out_of_range_scenario_value(section, key, spec, earlier_results, capsys, tmp_path):
    """Each numeric key above its range: the message names section.key, the value and both range ends."""
    value = _above(spec)
    path = tmp_path / "bad.toml"
    path.write_text(f"[{section}]\n{key} = {value!r}\n", encoding="utf-8")
    err = _run_bad(["evaluate", "--scenario", str(path)], earlier_results, capsys)
    assert f"{section}.{key}" in err
    assert _fmt(value) in err
    assert _fmt(spec["lo"]) in err and _fmt(spec["hi"]) in err


# -- scenario files: other kinds of bad content ------------------------------------------------------------

OTHER_FILES = {
    "unknown section": ("[engines]\nBPR = 3\n", ("engines", "allowed")),
    "unknown key": ("[engine]\nhpc_efficiency = 0.9\n", ("engine.hpc_efficiency", "allowed")),
    "renamed key": ("[engine]\nburner_dPqP = 0.04\n", ("engine.burner_dPqP", "burner_pressure_loss")),
    "bool for number": ("[engine]\nhpc_eff_poly_ref = true\n", ("engine.hpc_eff_poly_ref", "True")),
    "text for number": ('[aircraft]\npayload_kg = "heavy"\n', ("aircraft.payload_kg", "heavy")),
    "float for integer": ("[aircraft]\nnum_engines = 2.5\n", ("aircraft.num_engines", "2.5")),
    "nan": ("[engine]\nhpc_eff_poly_ref = nan\n", ("engine.hpc_eff_poly_ref", "nan")),
    "infinite": ("[design_point]\nthrust_required_N = inf\n", ("design_point.thrust_required_N", "inf")),
    "bad choice": ('[optimizer]\nobjective = "range"\n', ("optimizer.objective", "range", "mission_fuel")),
    "dv bounds crossed": ("[design_variables]\nBPR = { initial = 8.0, lower = 12.0, upper = 6.0 }\n",
                          ("design_variables.BPR", "12", "6")),
    "dv start outside bounds": ("[design_variables]\nBPR = { initial = 30.0, lower = 6.0, upper = 16.0 }\n",
                                ("design_variables.BPR", "30")),
    "carpet list too short": ("[carpet]\nBPR_values = [8.0]\n", ("carpet.BPR_values", "2")),
    "not TOML": ("this is = = not toml\n", ("TOML",)),
    "control characters in name": ('[aircraft]\nname = "demo\\u001b[31m"\n', ("aircraft.name",)),
    "no room for a nacelle": ("[installation]\nwing_height_m = 0.8\nnacelle_wing_gap_m = 0.2\n"
                              "min_ground_clearance_m = 0.5\n", ("wing_height_m", "0.1")),
}


@pytest.mark.parametrize("name", list(OTHER_FILES))
def test_other_bad_scenario_content(name, earlier_results, capsys, tmp_path):
    """Unknown names, wrong types, non-finite numbers, bad tables: one line naming the key and the value."""
    text, words = OTHER_FILES[name]
    path = tmp_path / "bad.toml"
    path.write_text(text, encoding="utf-8")
    err = _run_bad(["evaluate", "--scenario", str(path)], earlier_results, capsys)
    for word in words:
        assert word in err, (word, err)


def test_non_utf8_and_binary_files(earlier_results, capsys, tmp_path):
    """Undecodable or binary scenario files are bad input (exit 2), not a crash."""
    latin = tmp_path / "latin.toml"
    latin.write_bytes('[aircraft]\nname = "caf\xe9"\n'.encode("latin-1"))
    assert "UTF-8" in _run_bad(["evaluate", "--scenario", str(latin)], earlier_results, capsys)
    binary = tmp_path / "binary.toml"
    binary.write_bytes(bytes(range(256)))
    assert "binary" in _run_bad(["evaluate", "--scenario", str(binary)], earlier_results, capsys)


def test_missing_scenario_file(earlier_results, capsys, tmp_path):
    err = _run_bad(["evaluate", "--scenario", str(tmp_path / "nowhere.toml")], earlier_results, capsys)
    assert "nowhere.toml" in err


# -- command-line arguments -------------------------------------------------------------------------------

ARGUMENTS = {
    "BPR above range": (["evaluate", "--BPR", "40"], ("--BPR", "40", "25")),
    "FPR below range": (["evaluate", "--FPR", "0.5"], ("--FPR", "0.5", "1.1")),
    "OPR above range": (["evaluate", "--OPR", "500"], ("--OPR", "500", "80")),
    "Tt4 below range": (["evaluate", "--Tt4", "300"], ("--Tt4", "300", "1100")),
    "FPR not a number": (["evaluate", "--FPR", "fast"], ("--FPR", "fast")),
    "Tt4 not finite": (["evaluate", "--Tt4", "nan"], ("--Tt4", "nan")),
    "unknown objective": (["optimize", "--objective", "range"], ("--objective", "range", "mission_fuel")),
    "unknown option": (["evaluate", "--bypass-ratio", "9"], ("--bypass-ratio",)),
}


@pytest.mark.parametrize("name", list(ARGUMENTS))
def test_bad_arguments(name, earlier_results, capsys):
    argv, words = ARGUMENTS[name]
    err = _run_bad(argv, earlier_results, capsys)
    for word in words:
        assert word in err, (word, err)


# -- API values -------------------------------------------------------------------------------------------


@pytest.mark.parametrize("section, key, value", [
    ("engine", "hpc_eff_poly_ref", 1.2),
    ("design_point", "mach", -0.1),
    ("aircraft", "reserve_fraction", 0.9),
    ("installation", "fan_hub_tip_ratio", 0.6),
])
def test_api_validate_names_key_value_and_range(section, key, value):
    """At the API, ``validate`` raises ScenarioError (a ValueError) naming the key, the value and the range."""
    spec = SCHEMA[section][key]
    with pytest.raises(ValueError) as info:
        validate({section: {key: value}}, base=demo_scenario())
    assert isinstance(info.value, ScenarioError)
    text = str(info.value)
    assert f"{section}.{key}" in text and _fmt(value) in text
    assert _fmt(spec["lo"]) in text and _fmt(spec["hi"]) in text


def test_the_catalogue_is_large_enough():
    """The issue asks for at least 60 bad inputs; count what this module runs."""
    count = len(NUMERIC_KEYS) + len(OTHER_FILES) + 3 + len(ARGUMENTS) + 4
    assert count >= 60
