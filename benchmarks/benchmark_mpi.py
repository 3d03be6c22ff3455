"""MPI scale-out: a carpet of >= 400 designs and a 16-start multistart, serial against ``mpiexec -n 2``.

Each study runs twice as a separate program (``python -m benchmarks.benchmark_mpi STUDY``): once on one process and
once under ``mpiexec -n 2`` (its cases shared by ``om.DOEDriver(run_parallel=True)``, ``problems/parallel_cases``).
Both runs split the study into the same cases, so they must give the same numbers (checked: a digest of every
result array). Reported: wall time of the study (set-up included, interpreter start excluded), speed-up, and the
peak resident memory of each process (``ru_maxrss``). The MPI runs need mpi4py, petsc4py and ``mpiexec`` in the
Python that runs the benchmark, or in the one named by ``BYPASSOPT_MPI_PYTHON`` (``.ci/mpi`` builds such an
environment); without them the serial runs are measured and the parallel rows say why they are missing.

The carpet: the demo's default (multipoint) engine at a fixed FPR over a 20 x 20 BPR x OPR grid, in cases of
``CARPET_DESIGNS_PER_CASE`` designs. The multistart: the best-cycle problem of the design-point demo (BPR, FPR, OPR
and T4 free; a multipoint start costs about 20 s here, 16 of them would take 5 minutes per run) from 16 Latin-
hypercube starts.
"""

import argparse
import hashlib
import json
import os
import resource
import shutil
import subprocess
import sys
import time

import numpy as np

from benchmarks import REPO_ROOT, target

#: Issue target: speed-up of ``mpiexec -n 2`` over one process on 2 cores.
SPEEDUP_TARGET = 1.7
PROCESSES = 2
#: Full sizes: a 20 x 20 carpet (400 designs) in cases of 25, and 16 starts.
CARPET_SIDE = 20
CARPET_DESIGNS_PER_CASE = 25
NUM_STARTS = 16
#: Quick sizes (smoke test): a 2 x 2 carpet of the design-point model in 2 cases, 2 starts.
QUICK = {"side": 2, "per_case": 2, "starts": 2}
#: Grid and FPR of the carpet (inside the demo's design-variable box, invented).
BPR_RANGE, OPR_RANGE, CARPET_FPR = (8.0, 13.0), (30.0, 50.0), 1.55
#: One linear-algebra thread per process in both runs: mpiexec binds each process to a core, so a serial run with
#: threaded BLAS would sum in another order (round-off differences that an optimizer's path can grow), and the
#: processes would compete for the cores.
ONE_THREAD = {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1", "MKL_NUM_THREADS": "1"}
#: Seconds one study run may take before it is stopped.
RUN_TIMEOUT_S = 1800


def _digest(arrays):
    """SHA-256 of the arrays' bytes (NaN included): equal digests mean bit-for-bit equal results."""
    h = hashlib.sha256()
    for a in arrays:
        h.update(np.ascontiguousarray(np.asarray(a, dtype=float)).tobytes())
    return h.hexdigest()[:16]


def _study(name, quick):
    """Run one study in this process (under mpiexec: on every process); return (summary, digest)."""
    from bypassopt.scenario import design_point_scenario, load_scenario

    scenario = load_scenario()
    if name == "carpet":
        from bypassopt.problems.carpet import run_carpet

        side, per_case = (QUICK["side"], QUICK["per_case"]) if quick else (CARPET_SIDE, CARPET_DESIGNS_PER_CASE)
        if quick:
            scenario = design_point_scenario(scenario)
        result = run_carpet(scenario, np.linspace(*BPR_RANGE, side), np.linspace(*OPR_RANGE, side), fpr_mode="fixed",
                            fixed_fpr=CARPET_FPR, designs_per_case=per_case)
        summary = {"designs": int(result["BPR"].size), "cases": result["cases"],
                   "evaluated": int(np.sum(result["feasible"])), "model_runs": result["model_runs"]}
        return summary, _digest([result["objective"], result["FPR"], *result["margins"].values()])
    from bypassopt.problems.multistart import run_multistart

    result = run_multistart(design_point_scenario(scenario), num_starts=QUICK["starts"] if quick else NUM_STARTS)
    summary = {"starts": result["num_starts"], "converged": result["spread"]["converged"],
               "agree": result["spread"]["agree"], "best": result["best"] and result["best"]["objective"],
               "start_seconds": [s["seconds"] for s in result["starts"]]}
    rows = [[s["objective"], *s["design"].values()] for s in result["starts"]]
    return summary, _digest(rows)


def _main(argv=None):
    """Entry of one measured run: time the study, gather each process's peak memory, print JSON (process 0)."""
    parser = argparse.ArgumentParser()
    parser.add_argument("study", choices=("carpet", "multistart"))
    parser.add_argument("--quick", action="store_true")
    args = parser.parse_args(argv)
    import openmdao.api  # noqa: F401 - imported before the clock starts, as for a serial run
    from openmdao.utils.mpi import MPI

    comm = MPI.COMM_WORLD if MPI is not None else None
    if comm is not None:
        comm.barrier()
    t0 = time.perf_counter()
    summary, digest = _study(args.study, args.quick)
    seconds = time.perf_counter() - t0
    rss_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    rss = comm.gather(rss_mib, root=0) if comm is not None else [rss_mib]
    if comm is None or comm.rank == 0:
        print("BENCHMARK-JSON " + json.dumps({"seconds": seconds, "rss_mib": rss, "digest": digest,
                                              "processes": 1 if comm is None else comm.size, **summary}))


def mpi_python():
    """Return (python, mpiexec, why-not): a Python with mpi4py and petsc4py, and mpiexec; why-not '' when usable."""
    python = os.environ.get("BYPASSOPT_MPI_PYTHON", sys.executable)
    mpiexec = shutil.which("mpiexec")
    if mpiexec is None:
        return python, None, "no mpiexec on PATH"
    check = subprocess.run([python, "-c", "import mpi4py, petsc4py"], capture_output=True, text=True, timeout=120)
    if check.returncode != 0:
        return python, mpiexec, f"{python} cannot import mpi4py and petsc4py (see .ci/mpi; BYPASSOPT_MPI_PYTHON)"
    return python, mpiexec, ""


def _measure(study, quick, python, launcher=()):
    """Run one study program (serially or under ``launcher``) and return its JSON line as a dict."""
    cmd = [*launcher, python, "-m", "benchmarks.benchmark_mpi", study] + (["--quick"] if quick else [])
    env = dict(os.environ, OPENMDAO_REPORTS="0", **ONE_THREAD)
    done = subprocess.run(cmd, cwd=REPO_ROOT, capture_output=True, text=True, timeout=RUN_TIMEOUT_S, env=env)
    lines = [ln for ln in done.stdout.splitlines() if ln.startswith("BENCHMARK-JSON ")]
    if done.returncode != 0 or not lines:
        raise RuntimeError(f"{' '.join(cmd)} failed ({done.returncode}): {done.stderr[-2000:]}")
    return json.loads(lines[-1].split(" ", 1)[1])


def run(quick=False):
    """Carpet and multistart, serial and (where MPI is usable) under ``mpiexec -n 2``: times, speed-up, memory."""
    t0 = time.perf_counter()
    python, mpiexec, why_not = mpi_python()
    launcher = [mpiexec, "-n", str(PROCESSES), "--oversubscribe"] if mpiexec else []
    if launcher and hasattr(os, "geteuid") and os.geteuid() == 0:
        launcher.insert(1, "--allow-run-as-root")
    rows, targets, result = [], [], {"benchmark": "mpi", "quick": quick, "mpi": not why_not, "why_not": why_not}
    for study in ("carpet", "multistart"):
        serial = _measure(study, quick, python if not why_not else sys.executable)
        what = (f"{serial['designs']} designs in {serial['cases']} cases" if study == "carpet"
                else f"{serial['starts']} starts, {serial['converged']} converged")
        rows.append((f"{study}, 1 process", f"{serial['seconds']:.1f} s",
                     f"{what}; peak memory {serial['rss_mib'][0]:.0f} MiB"))
        entry = {"serial": serial}
        if why_not:
            rows.append((f"{study}, mpiexec -n {PROCESSES}", "not measured", why_not))
            targets.append(target(f"{study} speed-up on {PROCESSES} processes", "not measured",
                                  f">= {SPEEDUP_TARGET:g}x", False, why_not))
        else:
            parallel = _measure(study, quick, python, launcher)
            speedup = serial["seconds"] / parallel["seconds"]
            same = parallel["digest"] == serial["digest"]
            rows.append((f"{study}, mpiexec -n {PROCESSES}", f"{parallel['seconds']:.1f} s",
                         f"speed-up {speedup:.2f}x; peak memory per process "
                         f"{', '.join(f'{m:.0f}' for m in parallel['rss_mib'])} MiB; results "
                         f"{'bit-for-bit equal to' if same else 'DIFFERENT from'} the serial run"))
            if study == "multistart":  # the split of the serial run's case times (OpenMDAO: case k on process k % N)
                work = np.array(serial["start_seconds"])
                shares = [float(np.sum(work[p::PROCESSES])) for p in range(PROCESSES)]
                entry_bound = float(np.sum(work) / max(shares))
                rows.append((f"{study}, case-time split", " / ".join(f"{x:.1f} s" for x in shares),
                             f"the serial run's start times summed per process of mpiexec -n {PROCESSES}: at most "
                             f"{entry_bound:.2f}x on free cores"))
            targets.append(target(f"{study} speed-up on {PROCESSES} processes", f"{speedup:.2f}x",
                                  f">= {SPEEDUP_TARGET:g}x", speedup >= SPEEDUP_TARGET,
                                  "2-core machine shared with other work: load average "
                                  f"{os.getloadavg()[0]:.1f} after the runs"))
            targets.append(target(f"{study}: parallel results equal the serial ones", "equal" if same else "differ",
                                  "bit-for-bit", same, ""))
            entry.update(parallel=parallel, speedup=speedup, same=same)
        result[study] = entry
    result.update(rows=rows, targets=targets, seconds=time.perf_counter() - t0)
    return result


if __name__ == "__main__":  # pragma: no cover
    _main()
