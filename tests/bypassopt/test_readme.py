"""README's code examples run as written, and its two quick-start commands are what CI runs."""

import pathlib
import re
import subprocess
import sys

import pytest

README = pathlib.Path(__file__).resolve().parents[2] / "README.md"
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


@pytest.mark.parametrize("index", range(len(BLOCKS)))
def test_readme_example_runs(index, tmp_path):
    """Each python block runs in a fresh interpreter without error."""
    script = tmp_path / f"example_{index}.py"
    script.write_text(BLOCKS[index], encoding="utf-8")
    run = subprocess.run([sys.executable, "-W", "ignore", str(script)], cwd=tmp_path, capture_output=True,
                         text=True, timeout=600)
    assert run.returncode == 0, run.stderr[-3000:]
    assert run.stdout.strip()


def test_readme_schema_table_is_current():
    """README's scenario schema table is exactly what the code validates (regenerate with schema_markdown())."""
    from bypassopt.scenario import schema_markdown

    assert schema_markdown() in TEXT
