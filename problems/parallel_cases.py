"""Independent cases of a study run by OpenMDAO's DOEDriver, spread over MPI processes, read back with CaseReader.

A study (carpet blocks, multistart starts) hands ``run_cases`` a function ``run_case(k, comm)`` that computes case
``k`` from scratch on the communicator ``comm`` and returns a flat float vector of fixed length. ``run_cases``
builds one problem whose model is a ``CaseComp`` with input ``case`` (the case number) and output ``result``,
drives it with ``om.DOEDriver(om.ListGenerator(...))`` (under MPI with ``run_parallel=True``: OpenMDAO gives case
``k`` to process ``k % number of processes``) and records every case with an ``om.SqliteRecorder``. Each process
then reads its own case file with ``om.CaseReader`` and the records are gathered, so that every process returns the
whole table. A case computes the same numbers on whichever process it runs (``run_case`` starts from scratch), so
a parallel study equals the serial one exactly.
"""

import os
import shutil
import tempfile

import numpy as np
import openmdao.api as om

#: Name of the case files (OpenMDAO appends ``_<rank>`` under MPI, and writes ``_meta`` beside them).
CASE_FILE = "cases.sql"


def world_comm():
    """Return ``MPI.COMM_WORLD`` when running under MPI with more than one process (OpenMDAO's view), else None."""
    from openmdao.utils.mpi import MPI

    return MPI.COMM_WORLD if MPI is not None else None


def self_comm(comm):
    """Return a one-process communicator for a sub-problem under ``comm`` (None outside MPI: OpenMDAO's default)."""
    if comm is None or comm.size == 1:
        from openmdao.utils.mpi import MPI

        return MPI.COMM_SELF if MPI is not None else None
    return comm


class CaseComp(om.ExplicitComponent):
    """Run case ``case`` of a study (option ``run_case``) and output its flat result vector.

    A case that raises gives ``failed`` = 1 and NaN results, and its message is kept in ``errors`` {case: text} on
    the process that ran it (a failure raised out of ``compute`` would not reach the case records: OpenMDAO 3.41's
    DOEDriver recorded such a case as a success, with the previous case's outputs). The outputs are piecewise
    constant in the case number (an integer index), so their partial derivatives are zero and left undeclared (as
    OpenMDAO asks for zero partials); the cases are driven by a DOE, never differentiated.
    """

    def initialize(self):
        """Declare options."""
        self.options.declare("run_case", recordable=False,
                             desc="function (k, comm) -> flat float array of length size: case k from scratch")
        self.options.declare("size", types=int, desc="length of each case's result vector")

    def setup(self):
        """Declare the case number and the result."""
        self.add_input("case", val=0.0, units=None, desc="case number (an integer)")
        self.add_output("result", val=np.zeros(self.options["size"]), units=None,
                        desc="the case's results, flattened as the study defines")
        self.add_output("failed", val=0.0, units=None, desc="1 where the case raised (its results are NaN), else 0")
        self.errors = {}

    def compute_partials(self, inputs, partials):
        """Compute nothing: every partial is zero, and OpenMDAO asks that zero partials be left undeclared.

        The case number is an index; the outputs are constant between integers.
        """

    def compute(self, inputs, outputs):
        """Run the case on this component's communicator (one process per case)."""
        k = int(round(float(np.real(inputs["case"][0]))))
        outputs["failed"] = 1.0
        outputs["result"] = np.nan
        try:
            result = np.asarray(self.options["run_case"](k, self.comm), dtype=float).ravel()
            if result.size != self.options["size"]:
                raise ValueError(f"case {k} returned {result.size} values, expected {self.options['size']}")
        except Exception as err:  # recorded as the case's failure; raised by run_cases once every case is read
            self.errors[k] = f"{type(err).__name__}: {err}"
            return
        outputs["result"] = result
        outputs["failed"] = 0.0


def run_cases(run_case, num_cases, size, comm=None, workdir=None):
    """Run ``num_cases`` independent cases with ``om.DOEDriver`` (in parallel under MPI); return their results.

    Parameters
    ----------
    run_case : callable
        ``run_case(k, comm)`` -> flat float array of length ``size``: case ``k`` computed from scratch on the
        communicator ``comm`` (one process; ``None`` outside MPI). It should catch its own failures and encode
        them in its result: a case that raises is an error of the study.
    num_cases : int
        Number of cases (numbered 0 .. num_cases - 1).
    size : int
        Length of each result vector.
    comm : MPI communicator or None
        Processes sharing the cases; None takes ``MPI.COMM_WORLD`` under ``mpiexec`` (``world_comm``).
    workdir : str or None
        Folder for the case files; every process must see it (OpenMDAO writes the metadata that each process's
        ``CaseReader`` needs beside process 0's file). None: a temporary folder that process 0 makes in the
        current folder (on a cluster, usually a file system every node sees) and removes afterwards.

    Returns
    -------
    numpy.ndarray
        Shape (num_cases, size), on every process.
    """
    comm = world_comm() if comm is None else comm
    nprocs = 1 if comm is None else comm.size
    rank = 0 if comm is None else comm.rank
    own_dir = workdir is None
    if own_dir:
        folder = tempfile.mkdtemp(prefix=".bypassopt-cases-", dir=os.getcwd()) if rank == 0 else None
        folder = comm.bcast(folder, root=0) if nprocs > 1 else folder
    else:
        folder = os.path.abspath(workdir)
    path = os.path.join(folder, CASE_FILE)
    records, failed = {}, []
    try:
        prob = om.Problem(comm=comm, reports=False) if comm is not None else om.Problem(reports=False)
        prob.model.add_subsystem("cases", CaseComp(run_case=run_case, size=size), promotes=["*"])
        prob.model.add_design_var("case", lower=0.0, upper=float(max(num_cases - 1, 1)))
        cases = [[("case", float(k))] for k in range(num_cases)]
        prob.driver = om.DOEDriver(om.ListGenerator(cases), run_parallel=nprocs > 1, procs_per_model=1)
        prob.driver.recording_options["includes"] = ["result", "failed"]
        prob.driver.add_recorder(om.SqliteRecorder(path))
        prob.setup()
        prob.run_driver()
        prob.cleanup()
        if nprocs > 1:
            comm.barrier()  # the metadata file (process 0) is complete before any process reads
        try:
            own_file = f"{path}_{rank}" if nprocs > 1 else path
            errors = prob.model.cases.errors
            for case in om.CaseReader(own_file).get_cases("driver", recurse=False):
                k = int(round(float(case.get_val("case")[0])))
                records[k] = np.array(case.get_val("result"), dtype=float)
                if case.get_val("failed")[0] > 0.5 or not case.success:
                    failed.append(f"case {k}: {errors.get(k) or case.msg}")
        except Exception as err:  # reported on every process below, never left to hang the others
            failed.append(f"reading the case file of process {rank}: {type(err).__name__}: {err}")
        if nprocs > 1:  # every process gets every record (and every failure) before anything is raised
            merged, failed_all = {}, []
            for part, fails in comm.allgather((records, failed)):
                merged.update(part)
                failed_all += fails
            records, failed = merged, failed_all
    finally:
        if nprocs > 1:
            comm.barrier()
        if own_dir and rank == 0:
            shutil.rmtree(folder, ignore_errors=True)
    if failed:
        raise RuntimeError(f"{len(failed)} of {num_cases} cases failed: " + "; ".join(sorted(set(failed))))
    missing = sorted(set(range(num_cases)) - set(records))
    if missing:
        raise RuntimeError(f"no record of cases {missing} of {num_cases}")
    return np.array([records[k] for k in range(num_cases)])
