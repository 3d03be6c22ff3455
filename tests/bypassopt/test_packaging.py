"""Packaging: every package folder is listed in pyproject.toml, so an install ships it."""

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
#: Source folders and the package names they install as ([tool.setuptools.package-dir]).
SOURCE_ROOTS = {"src/bypassopt": "bypassopt", "components": "bypassopt.components", "problems": "bypassopt.problems"}


def _pyproject():
    return tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def _package_folders():
    """{package name: folder} of every folder with an __init__.py under the source roots."""
    found = {}
    for folder, package in SOURCE_ROOTS.items():
        for init in sorted((ROOT / folder).rglob("__init__.py")):
            rel = init.parent.relative_to(ROOT / folder)
            if "__pycache__" in rel.parts:
                continue
            found[".".join((package, *rel.parts))] = init.parent
    # data folders shipped as package data are listed too (else setuptools warns and may drop them)
    for data in sorted((ROOT / "src" / "bypassopt").glob("*/")):
        if data.is_dir() and not (data / "__init__.py").exists() and data.name != "__pycache__":
            found[f"bypassopt.{data.name}"] = data
    return found


def test_every_package_folder_is_listed():
    """Each folder with an __init__.py (components/x -> bypassopt.components.x) is in [tool.setuptools] packages."""
    listed = set(_pyproject()["tool"]["setuptools"]["packages"])
    missing = sorted(set(_package_folders()) - listed)
    assert not missing, f"add to [tool.setuptools] packages in pyproject.toml: {missing}"


def test_every_listed_package_exists():
    """No stale entries: each listed package has its folder with an __init__.py."""
    listed = _pyproject()["tool"]["setuptools"]["packages"]
    stale = sorted(set(listed) - set(_package_folders()))
    assert not stale, f"listed in pyproject.toml but no such package folder: {stale}"


def test_package_dir_maps_the_source_roots():
    """components/ and problems/ are mapped into the bypassopt namespace as this test assumes."""
    package_dir = _pyproject()["tool"]["setuptools"]["package-dir"]
    for folder, package in SOURCE_ROOTS.items():
        assert package_dir.get(package) == folder


def test_entry_point_targets_are_in_listed_packages():
    """Every plugin entry point's module lies in a listed package (else an install would not ship it)."""
    data = _pyproject()
    listed = set(data["tool"]["setuptools"]["packages"])
    for group in ("openmdao_component", "openmdao_group"):
        for name, value in data["project"]["entry-points"][group].items():
            module = value.split(":", 1)[0]
            assert module.rsplit(".", 1)[0] in listed, f"{name} = {value}: package not listed"
