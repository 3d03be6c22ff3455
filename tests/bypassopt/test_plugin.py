"""OpenMDAO plugin registration: every entry point loads, and every public component and group is registered."""

import importlib
import inspect
import pkgutil
import re
import subprocess
import sys
from importlib.metadata import entry_points
from pathlib import Path

import openmdao.api as om
import pytest
from openmdao.core.component import Component

import bypassopt
import bypassopt.components
import bypassopt.problems

GROUPS = {"openmdao_component": Component, "openmdao_group": om.Group}
PREFIX = "bypassopt."
OPENMDAO = Path(sys.executable).with_name("openmdao")


def _registered(group):
    return [ep for ep in entry_points(group=group) if ep.value.startswith(PREFIX)]


def _shipped_classes(base):
    """Public, concrete classes derived from ``base`` defined in the shipped packages, {name: class} (an abstract
    base such as ``InterfaceGroup`` cannot be instantiated, so it has no entry point)."""
    found = {}
    for package in (bypassopt, bypassopt.components, bypassopt.problems):
        for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
            module = importlib.import_module(info.name)
            for name, obj in inspect.getmembers(module, inspect.isclass):
                if (obj.__module__ == module.__name__ and not name.startswith("_") and issubclass(obj, base)
                        and not inspect.isabstract(obj)):
                    found[name] = obj
    return found


@pytest.mark.parametrize("group, base", GROUPS.items())
def test_every_entry_point_loads_to_the_right_kind(group, base):
    """Each entry point is package-prefixed, points at a submodule target, loads, and is a Component/Group
    whose docstring's first line stands alone."""
    eps = _registered(group)
    assert eps, f"no bypassopt entry points in {group}"
    for ep in eps:
        assert ep.name.startswith(PREFIX), ep.name
        module, _, attr = ep.value.partition(":")
        assert module.count(".") >= 1 and attr, ep.value
        cls = ep.load()
        assert inspect.isclass(cls) and issubclass(cls, base), f"{ep.name} -> {cls!r} is not a {base.__name__}"
        lines = inspect.getdoc(cls).splitlines()
        assert lines[0].strip() and (len(lines) == 1 or not lines[1].strip()), f"{ep.value}: first docstring line"


def test_names_follow_the_class_names():
    """Entry-point names are 'bypassopt.' + the class name in snake_case, and unique."""
    for group in GROUPS:
        eps = _registered(group)
        assert len({ep.name for ep in eps}) == len(eps)
        for ep in eps:
            snake = re.sub(r"(?<!^)(?=[A-Z])", "_", ep.value.rsplit(":", 1)[1]).lower()
            assert ep.name == PREFIX + snake, ep.name


@pytest.mark.parametrize("group, base", [("openmdao_component", om.ExplicitComponent), ("openmdao_group", om.Group)])
def test_every_shipped_class_is_registered(group, base):
    """Every public ExplicitComponent (and Group) class of the shipped code has an entry point."""
    registered = {ep.load() for ep in _registered(group)}
    missing = sorted(name for name, cls in _shipped_classes(base).items() if cls not in registered)
    assert not missing, f"not registered in [project.entry-points.{group}] of pyproject.toml: {missing}"


def test_openmdao_list_installed_shows_the_plugin(tmp_path):
    """``openmdao list_installed component group -i bypassopt`` lists every registered class."""
    cmd = [str(OPENMDAO) if OPENMDAO.exists() else "openmdao", "list_installed", "component", "group",
           "-i", "bypassopt"]
    done = subprocess.run(cmd, capture_output=True, text=True, cwd=tmp_path, timeout=300)
    assert done.returncode == 0, done.stderr
    out = done.stdout
    assert "Installed components:" in out and "Installed groups:" in out
    assert f"Package: bypassopt  Version: {bypassopt.__version__}" in out
    for group in GROUPS:
        for ep in _registered(group):
            module, _, attr = ep.value.partition(":")
            assert re.search(rf"^\s+{attr}\s+{re.escape(module)}\s*$", out, re.MULTILINE), f"{attr} not listed"
