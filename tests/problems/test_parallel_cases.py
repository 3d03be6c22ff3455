"""Independent study cases driven by om.DOEDriver and read back with om.CaseReader (one process here)."""

import os

import numpy as np
import pytest

from bypassopt.problems.parallel_cases import run_cases


def _square(k, comm):
    return np.array([k, k * k, -1.0 if comm is None else comm.size])


def test_cases_come_back_in_order_and_the_case_folder_goes():
    table = run_cases(_square, 5, 3)
    np.testing.assert_array_equal(table[:, :2], [[k, k * k] for k in range(5)])
    assert not [name for name in os.listdir(".") if name.startswith(".bypassopt-cases-")]


def test_a_case_that_raises_is_an_error_of_the_study_naming_it():
    """A failing case is reported with its message, never left with the previous case's outputs."""
    def run_case(k, comm):
        if k == 1:
            raise ValueError("no such design")
        return _square(k, comm)

    with pytest.raises(RuntimeError, match=r"1 of 3 cases failed: case 1: ValueError: no such design"):
        run_cases(run_case, 3, 3)


def test_a_result_of_the_wrong_length_is_an_error():
    with pytest.raises(RuntimeError, match="returned 2 values, expected 3"):
        run_cases(lambda k, comm: np.zeros(2), 2, 3)


def test_an_explicit_case_folder_keeps_the_case_file(tmp_path):
    run_cases(_square, 2, 3, workdir=str(tmp_path))
    assert (tmp_path / "cases.sql").exists()
