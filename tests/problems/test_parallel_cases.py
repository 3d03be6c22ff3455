"""Independent study cases driven by om.DOEDriver and read back with om.CaseReader (one process here)."""

import os

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_check_partials

from bypassopt.problems.parallel_cases import CaseComp, run_cases


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


def _case_comp_problem(run_case, size):
    prob = om.Problem(reports=False)
    prob.model.add_subsystem("comp", CaseComp(run_case=run_case, size=size), promotes=["*"])
    prob.setup(force_alloc_complex=True)
    return prob


def test_case_comp_outputs_the_case_result_and_zero_partials():
    """CaseComp outputs case k's result; its outputs are constant in the case index, so complex step sees zero
    partials, as the component declares none."""
    prob = _case_comp_problem(_square, 3)
    prob.set_val("case", 3.0)
    prob.run_model()
    np.testing.assert_array_equal(prob.get_val("result")[:2], [3.0, 9.0])  # the third: its communicator size
    assert prob.get_val("failed")[0] == 0.0
    assert_check_partials(prob.check_partials(method="cs", out_stream=None), atol=1e-12, rtol=1e-12)


def test_case_comp_marks_a_raising_case_failed_with_nan():
    """A case that raises gives failed = 1, NaN results and its message kept under its number."""
    def broken(k, comm):
        raise ValueError(f"case {k} has no solution")

    prob = _case_comp_problem(broken, 2)
    prob.set_val("case", 1.0)
    prob.run_model()
    assert prob.get_val("failed")[0] == 1.0 and np.all(np.isnan(prob.get_val("result")))
    assert prob.model.comp.errors == {1: "ValueError: case 1 has no solution"}
