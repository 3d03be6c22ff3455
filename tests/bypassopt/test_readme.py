"""README's code examples run as written, and its two quick-start commands are what CI runs."""

import os
import pathlib
import re
import subprocess
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
README = ROOT / "README.md"
TEXT = README.read_text(encoding="utf-8")
BLOCKS = re.findall(r"```python\n(.*?)```", TEXT, re.S)


def test_readme_has_examples_and_no_placeholders():
    """Three runnable examples; the generated sections were filled in."""
    assert len(BLOCKS) >= 3
    for placeholder in ("SCHEMA_TABLE", "BENCHMARK_TABLE", "EMBEDDING_NOTES"):
        assert placeholder not in TEXT


def test_readme_states_caution_and_two_commands():
    """The caution paragraph and exactly one install+run and one install+test command."""
    assert "preliminary-design estimate" in TEXT
    shell = re.findall(r"```\n(python3 -m venv .*?)\n```", TEXT)
    assert len(shell) == 2
    assert "bypassopt optimize" in shell[0] and "pytest" in shell[1]
    ci = (README.parent / ".ci" / "run").read_text(encoding="utf-8")
    assert "test-command" in ci and "<!-- test-command -->" in TEXT


def _from_root(args, tmp_path, **kwargs):
    """Run a command from the repository root, as a user of the clone does; OpenMDAO's outputs go to tmp_path."""
    env = {**os.environ, "OPENMDAO_WORKDIR": str(tmp_path)}
    return subprocess.run(args, cwd=ROOT, env=env, capture_output=True, text=True, timeout=600, **kwargs)


@pytest.mark.parametrize("index", range(len(BLOCKS)))
def test_readme_example_runs(index, tmp_path):
    """Each python block runs in a fresh interpreter started in the clone's root folder, without error."""
    script = tmp_path / f"example_{index}.py"
    script.write_text(BLOCKS[index], encoding="utf-8")
    run = _from_root([sys.executable, "-W", "ignore", str(script)], tmp_path)
    assert run.returncode == 0, run.stderr[-3000:]
    assert run.stdout.strip()


def test_imports_from_the_clone_root_use_the_installed_package(tmp_path):
    """No folder of the checkout's root shadows the installed package (``python -c`` puts the root first).

    With a normal install (as CI does) ``bypassopt`` resolves to site-packages; with an editable one to
    ``src/bypassopt``; never to a bare folder of the root that lacks the mapped-in subpackages.
    """
    code = ("import bypassopt, bypassopt.components, bypassopt.problems; "
            "from bypassopt.api import InstalledEngineGroup, build_best_cycle_problem; "
            "print(bypassopt.__file__)")
    run = _from_root([sys.executable, "-c", code], tmp_path)
    assert run.returncode == 0, run.stderr[-3000:]
    where = pathlib.Path(run.stdout.strip()).resolve()
    assert where.parent != ROOT / "bypassopt"
    assert not (ROOT / "bypassopt").exists(), "a bypassopt/ folder in the clone's root would shadow the package"


def test_readme_schema_table_is_current():
    """README's scenario schema table is exactly what the code validates (regenerate with schema_markdown())."""
    from bypassopt.scenario import schema_markdown

    assert schema_markdown() in TEXT
