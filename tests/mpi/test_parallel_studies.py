"""Carpet and multistart with their cases shared by two MPI processes (om.DOEDriver, run_parallel=True).

Each process also computes the serial study on ``MPI.COMM_SELF``; the parallel one must equal it exactly (every
case is computed from scratch, so it gives the same numbers on whichever process it runs). The command line under
mpiexec writes from process 0 the same carpet as the serial study. The design-point demo with T4 held keeps the
cases short (as the serial tests of this machinery do).
"""

import json
import os

import numpy as np
import pytest
from openmdao.utils.mpi import MPI

from bypassopt.cli import main
from bypassopt.commands._run import json_ready
from bypassopt.problems.carpet import run_carpet
from bypassopt.problems.multistart import run_multistart
from bypassopt.report import write_json
from bypassopt.scenario import design_point_scenario, load_scenario, validate

BPR_VALUES = [8.0, 12.0, 16.0]
OPR_VALUES = [30.0, 60.0]  # BPR 16, OPR 60 at FPR 1.5 cannot be evaluated: a failed design inside a case
FIXED_FPR = 1.5

SCENARIO_TOML = """\
[design_variables.Tt4_K]
initial = 1650.0
lower = 1400.0
upper = 1850.0
optimize = false

[optimizer]
model = "design_point"

[carpet]
BPR_values = [8.0, 12.0, 16.0]
OPR_values = [30.0, 60.0]
FPR_mode = "fixed"
"""


@pytest.fixture(scope="module")
def scenario():
    held = {"initial": 1650.0, "lower": 1400.0, "upper": 1850.0, "optimize": False}
    return validate({"design_variables": {"Tt4_K": held}}, base=design_point_scenario(load_scenario()))


def _assert_same_carpet(result, ref):
    assert (result["cases"], result["designs_per_case"], result["model_runs"]) == \
        (ref["cases"], ref["designs_per_case"], ref["model_runs"])
    for key, value in ref.items():
        if isinstance(value, np.ndarray):
            np.testing.assert_array_equal(result[key], value, err_msg=key)
    for key, value in ref["margins"].items():
        np.testing.assert_array_equal(result["margins"][key], value, err_msg=key)
    assert result["optimum"] == ref["optimum"]


@pytest.mark.parametrize("mode, per_case", [("fixed", 2), ("optimal", 3)])
def test_parallel_carpet_equals_the_serial_carpet(mpi_comm, scenario, mode, per_case):
    """Cases over 2 processes: every array of the carpet equal to the serial run's, bit for bit."""
    kwargs = dict(fpr_mode=mode, fixed_fpr=FIXED_FPR, designs_per_case=per_case)
    parallel = run_carpet(scenario, BPR_VALUES, OPR_VALUES, comm=mpi_comm, **kwargs)
    serial = run_carpet(scenario, BPR_VALUES, OPR_VALUES, comm=MPI.COMM_SELF, **kwargs)
    if mode == "fixed":
        assert not parallel["feasible"].all()  # a failed design is among the cases
    _assert_same_carpet(parallel, serial)


def test_parallel_multistart_finds_the_serial_optimum(mpi_comm, scenario):
    """Four starts over 2 processes: the same starts, results and best as the serial study."""
    parallel = run_multistart(scenario, num_starts=4, seed=5, comm=mpi_comm)
    serial = run_multistart(scenario, num_starts=4, seed=5, comm=MPI.COMM_SELF)
    assert parallel["processes"] == 2 and serial["processes"] == 1
    for p, s in zip(parallel["starts"], serial["starts"], strict=True):
        assert {k: v for k, v in p.items() if k != "seconds"} == {k: v for k, v in s.items() if k != "seconds"}
    assert parallel["best"]["objective"] == serial["best"]["objective"]
    assert parallel["best"]["design"] == serial["best"]["design"]
    assert parallel["spread"] == serial["spread"] and serial["spread"]["converged"] >= 3


def test_carpet_command_under_mpiexec_writes_the_serial_carpet(mpi_comm, scenario, shared_dir):
    """``mpiexec -n 2 bypassopt carpet --designs-per-case 2``: process 0 writes the serial study's carpet.json."""
    path = os.path.join(shared_dir, "scenario.toml")
    if mpi_comm.rank == 0:
        with open(path, "w", encoding="utf-8") as fh:
            fh.write(SCENARIO_TOML)
    mpi_comm.barrier()
    out = os.path.join(shared_dir, "res")
    code = main(["carpet", "--scenario", path, "--out", out, "--designs-per-case", "2", "--no-plots", "--quiet"])
    assert mpi_comm.allgather(code) == [0, 0]
    serial = run_carpet(load_scenario(path), designs_per_case=2, comm=MPI.COMM_SELF)
    same = None
    if mpi_comm.rank == 0:
        write_json(os.path.join(shared_dir, "serial.json"), json_ready(serial))  # as the serial command writes it
        with open(os.path.join(out, "carpet.json"), encoding="utf-8") as fh, \
                open(os.path.join(shared_dir, "serial.json"), encoding="utf-8") as fs:
            same = json.load(fh) == json.load(fs)
    assert mpi_comm.bcast(same, root=0)
