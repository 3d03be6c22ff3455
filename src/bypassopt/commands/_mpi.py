"""Commands under ``mpiexec``: process 0 runs the command as usual, every other process only its share of the cases.

``bypassopt carpet ... --designs-per-case M`` (and ``multistart``) split their cases over the processes of an
``mpiexec -n N`` run through OpenMDAO (``bypassopt.problems.parallel_cases``). Process 0 checks and locks
``--out``, shows progress, writes every file and prints; the other processes (``is_worker_process``) load the
same scenario, take part in the same study (the command module's ``worker(args, scenario)``) and write and print
nothing. A command without ``worker`` does everything on process 0 (the others return at once). A process that
fails returns a non-zero code, and ``mpiexec`` then stops the whole run.
"""

import contextlib
import io
import os
import warnings

#: Environment variables in which MPI launchers give a process its rank (Open MPI, MPICH/Hydra, PMIx, Slurm's srun).
RANK_VARIABLES = ("OMPI_COMM_WORLD_RANK", "PMIX_RANK", "PMI_RANK", "SLURM_PROCID")


def launched_rank():
    """Return the rank an MPI launcher gave this process (0 when none did); reads the environment only."""
    for name in RANK_VARIABLES:
        value = os.environ.get(name, "")
        if value.isdigit():
            return int(value)
    return 0


def is_worker_process():
    """Return True on the processes other than 0 of an ``mpiexec`` run (no import of MPI or OpenMDAO)."""
    return launched_rank() != 0


def run_worker(args):
    """Take part in the study of ``args.command`` on a process other than 0: compute, write and print nothing.

    Returns the exit code: 0, 2 for a scenario that does not load (process 0 reports it), 1 for any other failure.
    """
    from bypassopt.commands import MODULES
    from bypassopt.commands._run import EXIT_BAD_INPUT, EXIT_OK, EXIT_UNEXPECTED

    worker = getattr(MODULES[args.command], "worker", None)
    if worker is None:
        return EXIT_OK
    with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()):
        import openmdao.api  # noqa: F401 - it sets its own warning filters when imported: before ours

        if not args.debug:
            warnings.simplefilter("ignore")
        from bypassopt.scenario import ScenarioError, load_scenario

        try:
            scenario = load_scenario(args.scenario)
        except ScenarioError:
            return EXIT_BAD_INPUT
        if getattr(args, "model", None):
            scenario["optimizer"]["model"] = args.model
        try:
            worker(args, scenario)
        except ScenarioError:
            return EXIT_BAD_INPUT
        except Exception:  # noqa: BLE001 - process 0 reports the failure; this one only stops with a code
            if args.debug:
                raise
            return EXIT_UNEXPECTED
    return EXIT_OK
