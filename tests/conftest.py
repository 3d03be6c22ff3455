"""Shared test set-up."""

import pytest


@pytest.fixture(autouse=True)
def _in_tmp_path(tmp_path, monkeypatch):
    """Run every test in its own temporary folder, so OpenMDAO's output folders never land in the checkout."""
    monkeypatch.chdir(tmp_path)
