"""Multipoint engine with its take-off and cruise points in an om.ParallelGroup (``parallel_points``).

Under ``mpiexec -n 2`` each point runs on its own process; the results and total derivatives must be those of the
serial model (built on ``MPI.COMM_SELF`` on each process). The first test needs no MPI.
"""

import numpy as np
import openmdao.api as om
import pytest
from openmdao.utils.assert_utils import assert_no_approx_partials
from openmdao.utils.mpi import MPI

from bypassopt.components.interface import ALL_PLAIN
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.problems.best_cycle import apply_scenario
from bypassopt.scenario import load_scenario

#: The issue's tolerance on results and totals, parallel against serial (relative to each array's largest entry).
PARALLEL_RTOL = 1e-10
#: Outputs compared: the objectives and limits of the best-cycle problem, and the points' states.
OUTPUTS = ["mission_fuel", "powerplant_mass", "installed_TSFC", "clearance_margin", "diameter_margin",
           "takeoff:Tt41", "takeoff:Tt3", "takeoff:W3_corrected", "takeoff:BPR", "cruise:installed_TSFC",
           "cruise:Fn_required", "cruise:FPR", "hpt_vane_cooling_frac"]
#: Design variables of the totals.
WRT = ["BPR", "FPR", "OPR", "Tt4"]
#: A design step (relative) that the second evaluation makes: the warm-start paths of both models.
STEP = {"BPR": 1.02, "OPR": 0.98}


def _build(parallel, comm=None, nn=2):
    prob = om.Problem(comm=comm, reports=False)
    prob.model.add_subsystem("engine", InstalledMultipointGroup(num_nodes=nn, parallel_points=parallel, **ALL_PLAIN),
                             promotes=["*"])
    prob.setup()
    apply_scenario(prob, load_scenario())
    prob.set_val("BPR", [10.0, 10.8])
    return prob


def _self_comm():
    return MPI.COMM_SELF if MPI is not None else None


def _results(prob):
    prob.run_model()
    values = {name: np.array(prob.get_val(name, get_remote=True)) for name in OUTPUTS}
    return values, prob.compute_totals(OUTPUTS, WRT)


def _assert_same(values, totals, ref_values, ref_totals):
    for name, ref in ref_values.items():
        np.testing.assert_allclose(values[name], ref, rtol=PARALLEL_RTOL, atol=PARALLEL_RTOL * np.max(np.abs(ref)),
                                   err_msg=name)
    for key, ref in ref_totals.items():
        np.testing.assert_allclose(totals[key], ref, rtol=PARALLEL_RTOL, atol=PARALLEL_RTOL * np.max(np.abs(ref)),
                                   err_msg=f"d{key[0]}/d{key[1]}")


def _step(prob):
    for name, factor in STEP.items():
        prob.set_val(name, prob.get_val(name) * factor)


def test_parallel_points_option_without_mpi_is_the_serial_model():
    """One process: same promoted names, results and totals as the default model; analytic partials only."""
    ref, par = _build(False, _self_comm()), _build(True, _self_comm())
    assert {m["prom_name"] for m in par.model.get_io_metadata(iotypes="output").values()} == \
        {m["prom_name"] for m in ref.model.get_io_metadata(iotypes="output").values()}
    assert {m["prom_name"] for m in par.model.get_io_metadata(iotypes="input").values()} == \
        {m["prom_name"] for m in ref.model.get_io_metadata(iotypes="input").values()}
    _assert_same(*_results(par), *_results(ref))
    assert_no_approx_partials(par.model)
    _step(ref)
    _step(par)
    _assert_same(*_results(par), *_results(ref))


def test_points_on_their_own_processes_match_serial(mpi_comm):
    """mpiexec -n 2: take-off on one process, cruise on the other; results and totals equal serial within 1e-10."""
    ref, par = _build(False, MPI.COMM_SELF), _build(True, mpi_comm)
    local = [name for name in ("takeoff", "cruise") if getattr(par.model.engine.points, name)._is_local]
    assert len(local) == 1
    assert sorted(sum(mpi_comm.allgather(local), [])) == ["cruise", "takeoff"]
    _assert_same(*_results(par), *_results(ref))
    _step(ref)  # the warm-start path of the outer Newton (no first sub-solve pass) and the points' own warm starts
    _step(par)
    _assert_same(*_results(par), *_results(ref))


def test_a_point_that_fails_fails_on_every_process(mpi_comm):
    """A take-off thrust the engine cannot give: AnalysisError on both processes (no hang), then a good run again."""
    ref, par = _build(False, MPI.COMM_SELF), _build(True, mpi_comm)
    ref_values, ref_totals = _results(ref)
    _results(par)
    good = par.get_val("takeoff:Fn_required").copy()
    par.set_val("takeoff:Fn_required", 4.0 * good)
    with pytest.raises(om.AnalysisError):
        par.run_model()
    par.set_val("takeoff:Fn_required", good)
    _assert_same(*_results(par), ref_values, ref_totals)
