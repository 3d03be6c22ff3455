"""Set-up of the MPI tests: run by ``.ci/mpi`` as ``mpiexec -n 2 python -m pytest tests/mpi``.

Outside ``mpiexec`` (or without mpi4py/petsc4py) the tests that need more than one process are skipped with the
reason; with ``BYPASSOPT_REQUIRE_MPI=1`` in the environment (``.ci/mpi`` sets it) they fail instead, so CI can never
pass them by skipping. Every process runs every test in the same order (the tests make collective calls): a test
must never skip or return early on one process only.
"""

import os

import pytest

#: Set to 1 (``.ci/mpi`` does) to make the tests that need MPI fail, not skip, where it is missing.
REQUIRE_MPI_ENV = "BYPASSOPT_REQUIRE_MPI"
#: Processes the parallel tests are written for.
NUM_PROCS = 2


def _mpi_missing():
    """Why the parallel tests cannot run here, or '' when they can."""
    from openmdao.utils.mpi import MPI

    how = (f"run them with 'mpiexec -n {NUM_PROCS} python -m pytest tests/mpi' in an environment with mpi4py and "
           "petsc4py (README 'Running on many cores or a cluster'; .ci/mpi builds one)")
    if MPI is None:
        try:
            import mpi4py  # noqa: F401
        except ImportError as err:
            return f"mpi4py is not installed ({err}); {how}"
        return f"not started by mpiexec with {NUM_PROCS} processes; {how}"
    if MPI.COMM_WORLD.size != NUM_PROCS:
        return f"started on {MPI.COMM_WORLD.size} processes, these tests are written for {NUM_PROCS}; {how}"
    try:
        from openmdao.vectors.petsc_vector import PETScVector  # noqa: F401
    except ImportError as err:
        return f"petsc4py does not import ({err}); OpenMDAO needs it for parallel groups and DOEs; {how}"
    return ""


@pytest.fixture(scope="session")
def mpi_comm():
    """``MPI.COMM_WORLD`` of an ``mpiexec -n 2`` run; skips the test elsewhere (fails with BYPASSOPT_REQUIRE_MPI=1)."""
    reason = _mpi_missing()
    if reason:
        if os.environ.get(REQUIRE_MPI_ENV) == "1":
            pytest.fail(f"{REQUIRE_MPI_ENV}=1 but {reason}", pytrace=False)
        pytest.skip(reason)
    from openmdao.utils.mpi import MPI

    return MPI.COMM_WORLD


@pytest.fixture
def shared_dir(mpi_comm, tmp_path):
    """A folder every process sees (rank 0's temporary folder), for files one process writes and another reads."""
    return mpi_comm.bcast(str(tmp_path), root=0)
