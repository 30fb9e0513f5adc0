"""``sweep(workers=N)``: a sweep solved in compiled batches runs on N numba threads of this process (no worker
processes), one solved case by case in N worker processes; ``workers=1`` is one thread, the default (None) numba's
threads as set. Rules of this project's
interface: no physics here."""

from __future__ import annotations

from typing import Any

import numba
import pytest
import xarray as xr

import edl_solver as edl
import edl_solver.sweeping.run as sweep_run
from edl_solver.kernels import batch
from tests.helpers import KCL

SLIT = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"), field="1 kV/m")
AXES = {"geometry.height": ["10 nm", "20 nm", "40 nm"], "wall.zeta": ["-20 mV", "-60 mV"]}


@pytest.fixture
def seen(monkeypatch: pytest.MonkeyPatch) -> dict[str, list[int]]:
    """Numba threads of each compiled batch, and the local processes asked for."""
    record: dict[str, list[int]] = {"threads": [], "processes": []}
    solve_cases, local_pool = batch.solve_cases, sweep_run.local_pool

    def counted(*args: Any) -> None:
        record["threads"].append(numba.get_num_threads())
        solve_cases(*args)

    def pool(workers: int) -> Any:
        record["processes"].append(workers)
        return local_pool(workers)

    monkeypatch.setattr(batch, "solve_cases", counted)
    monkeypatch.setattr(sweep_run, "local_pool", pool)
    return record


def test_workers_of_a_compiled_sweep_are_threads_here(seen: dict[str, list[int]]) -> None:
    # Before: workers=2 started two processes of one thread each (~1-2 s each) for work the batch does on threads.
    # By default (workers=None) the batch runs on numba's threads as they are set: every core unless set fewer.
    default = edl.sweep(SLIT, AXES)
    one = edl.sweep(SLIT, AXES, workers=1)
    two = edl.sweep(SLIT, AXES, workers=2)
    xr.testing.assert_identical(two, one)
    xr.testing.assert_identical(default, one)
    assert seen["processes"] == [1, 1, 1]
    assert seen["threads"] == [numba.config.NUMBA_NUM_THREADS, 1, min(2, numba.config.NUMBA_NUM_THREADS)]
    assert numba.get_num_threads() == numba.config.NUMBA_NUM_THREADS  # restored after the sweep


def test_workers_of_a_case_by_case_sweep_are_processes(seen: dict[str, list[int]]) -> None:
    edl.sweep(SLIT, AXES, profiles=5, workers=2, rows_per_task=1)
    assert seen["processes"] == [2] and seen["threads"] == []
