"""Sweeps on Dask: tasks sized from the measured cost of a case, compact results, each worker's batch on as
many numba threads as it has threads, values identical to the in-process sweep (the command line against a
scheduler and workers started from the command line: tests/cli/test_sweep_dask.py). Rules of this project's
interface and common practice of task scheduling: no physics here."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.sweeping.on_dask import TASKS_PER_THREAD, solve_task, task_rows
from edl_solver.sweeping.rows import pack, solve_rows, unpack
from tests.helpers import KCL

SLIT = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"), field="1 kV/m")
AXES = {"geometry.height": ["5 nm", "20 nm", "80 nm"], "wall.zeta": ["-20 mV", "-60 mV", "-100 mV", "-140 mV"]}


def test_tasks_cover_every_row_once_and_shrink_towards_the_end() -> None:
    todo = list(range(1000))
    tasks = task_rows(todo, last=10, seconds_per_case=1e-4, threads=2)  # 0.5 s = 5,000 cases = 500 rows
    assert [row for task in tasks for row in task] == todo
    sizes = [len(task) for task in tasks]
    assert sizes[0] == 1000 // (TASKS_PER_THREAD * 2)  # a share that leaves work for every thread
    assert sizes == sorted(sizes, reverse=True) and sizes[-1] == 1
    # a costly case: tasks of about half a second each
    assert max(len(t) for t in task_rows(todo, last=10, seconds_per_case=0.01, threads=2)) == 5


def test_compact_results_restore_exactly_with_failures_and_profiles() -> None:
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import make_axes

    axes = make_axes({"geometry.height": ["10 nm", "-1 nm"], "wall.zeta": ["-20 mV", "-60 mV"]}, [])
    part = solve_rows(case_to_mapping(SLIT), axes, [0, 1], None, profile_points=5)
    assert list(part["status"][1]) == [1, 1] and part["message"][1][0]  # the negative height fails, with a reason
    packed = pack(part)
    assert packed["values"].dtype == np.float64 and packed["values"].ndim == 3
    assert set(packed["failed"]) == {(1, 0), (1, 1)}
    restored = unpack(packed)
    assert restored.keys() == part.keys() and restored["message"] == part["message"]
    for key in part:
        if key not in ("rows", "message"):
            np.testing.assert_array_equal(restored[key], part[key], err_msg=key)


@pytest.fixture(scope="module")
def two_thread_worker():
    from distributed import Client, LocalCluster

    # Loopback only, no dashboard: nothing is exposed beyond this machine.
    with LocalCluster(n_workers=1, threads_per_worker=2, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster, Client(cluster) as client:
        yield client


def test_a_sweep_on_a_two_thread_worker_equals_the_in_process_one(two_thread_worker) -> None:
    expected = edl.sweep(SLIT, AXES)
    xr.testing.assert_identical(edl.sweep(SLIT, AXES, dask=two_thread_worker), expected)  # measured task sizes
    xr.testing.assert_identical(edl.sweep(SLIT, AXES, dask=two_thread_worker, rows_per_task=1), expected)


def test_a_task_sends_compact_results_its_time_and_runs_on_its_worker_threads(two_thread_worker) -> None:
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import make_axes
    from edl_solver.sweeping.plan import make_plan

    table, axes = case_to_mapping(SLIT), make_axes(AXES, [])
    job = (table, axes, make_plan(table, axes), 0)
    import numba

    packed = two_thread_worker.submit(solve_task, job, [0, 2], True, pure=False).result()
    assert packed["seconds"] > 0 and packed["failed"] == {}
    # Before: numba was left at the machine's core count, whatever the worker's threads (oversubscription).
    assert packed["threads"] == min(2, numba.config.NUMBA_NUM_THREADS)
    np.testing.assert_array_equal(unpack(packed)["debye_length"], solve_rows(*job[:2], [0, 2], job[2])["debye_length"])
