"""A sweep's tasks on a Dask distributed cluster.

* Each task runs the compiled batch on as many numba threads as its worker has threads (set in the task:
  a worker process imports the package once and serves tasks of any size), one batch at a time per worker.
* The task size comes from the measured cost of a case: small calibration tasks, two per worker thread (a
  worker's first batch is preceded by a warm-up row, so that loading the compiled kernels is not counted),
  give the seconds per case on a worker; the first to finish sizes the rest, cut to about ``TASK_SECONDS``
  each, smaller towards the end (guided scheduling: every worker thread gets several, and the workers
  finish together).
* The sweep's description (base case, axes, packed-vector plan) goes to every worker once; a task carries
  its rows alone, and sends back one float array, the statuses and the messages of failed cases
  (``rows.pack``).
"""

from __future__ import annotations

import threading
import time
from collections.abc import Iterable, Sequence
from typing import Any

from edl_solver.sweeping.rows import pack, solve_rows, unpack
from edl_solver.sweeping.workers import numba_threads

#: Seconds of solving per task once the cost of a case is known: long enough that the ~5-10 ms a task
#: costs the scheduler and the network is small, short enough to share the work out.
TASK_SECONDS = 0.5
#: Tasks per worker thread at least, for a sweep long enough.
TASKS_PER_THREAD = 4
#: Cases of a calibration task (about): 5-30 ms of compiled batch.
CALIBRATION_CASES = 500

#: One compiled batch at a time in a worker process: each uses all of the worker's threads.
_BATCH = threading.Lock()
#: Set once this worker process has run a compiled batch (its compiled code is loaded).
_WARM = threading.Event()


def _worker_threads() -> int:
    """Threads of the Dask worker running this task (1 outside a worker)."""
    try:
        from distributed import get_worker

        return int(get_worker().state.nthreads)
    except (ImportError, ValueError, AttributeError):
        return 1


def solve_task(job: tuple[Any, ...], rows: Sequence[int], warm_up: bool = False) -> dict[str, Any]:
    """Solve some rows on a Dask worker; returns their compact results (``rows.pack``), ``seconds``, the time
    the solving took (without a warm-up, which solves the first row once more in a worker's first calibration
    task), and the numba ``threads`` the batch ran on."""
    import numba

    base_table, axes, plan, profile_points = job
    compiled = plan is not None  # the batch runs on numba threads; single solves on the task's own thread
    with _BATCH if compiled else _NoLock(), numba_threads(_worker_threads()) if compiled else _NoLock():
        if warm_up and compiled and not _WARM.is_set():  # a first batch loads its compiled code: not a case's cost
            solve_rows(base_table, axes, rows[:1], plan, profile_points)
            _WARM.set()
        started = time.perf_counter()
        part = solve_rows(base_table, axes, rows, plan, profile_points)
        seconds = time.perf_counter() - started
        threads = numba.get_num_threads() if compiled else 1
    return {**pack(part), "seconds": seconds, "threads": threads}


class _NoLock:
    def __enter__(self) -> None:
        return None

    def __exit__(self, *exc: object) -> None:
        return None


def task_rows(todo: list[int], last: int, seconds_per_case: float, threads: int) -> list[list[int]]:
    """The rows cut into tasks: about ``TASK_SECONDS`` each, never more than a share of what is left that
    gives every worker thread ``TASKS_PER_THREAD`` tasks (so that tasks shrink towards the end)."""
    tasks, at = [], 0
    longest = max(1, int(TASK_SECONDS / max(seconds_per_case, 1e-9) / last))
    while at < len(todo):
        share = max(1, (len(todo) - at) // (TASKS_PER_THREAD * threads))
        size = min(longest, share)
        tasks.append(todo[at:at + size])
        at += size
    return tasks


def _results(done: Any) -> Iterable[dict[str, Any]]:
    for _, packed in done:
        yield unpack(packed)


def run_on_dask(todo: list[int], job: tuple[Any, ...], last: int, dask: Any,
                rows_per_task: int | None) -> Iterable[dict[str, Any]]:
    """Yield the results of every row of ``todo`` as tasks complete on the cluster ``dask`` (an address or
    a ``distributed.Client``); ``rows_per_task`` fixes the task size instead of measuring it."""
    from distributed import Client, as_completed

    client = dask if isinstance(dask, Client) else Client(dask)
    try:
        [shared] = client.scatter([job], broadcast=True, hash=False)
        threads = max(1, sum(w.get("nthreads", 1) for w in client.scheduler_info()["workers"].values()))
        submitted: list[Any] = []

        def submit(rows: list[int], warm_up: bool = False) -> Any:
            submitted.append(client.submit(solve_task, shared, rows, warm_up, pure=False))
            return submitted[-1]

        try:
            size = rows_per_task or max(1, CALIBRATION_CASES // last)
            if rows_per_task is not None or not todo:
                yield from _results(as_completed([submit(todo[i:i + size]) for i in range(0, len(todo), size)],
                                                 with_results=True))
                return
            # two calibration tasks per worker thread, so that none waits idle while the first result comes back
            # and sizes the rest
            first = [todo[i:i + size] for i in range(0, min(len(todo), 2 * threads * size), size)]
            done = as_completed([submit(rows, True) for rows in first], with_results=True)
            _, packed = next(done)
            yield unpack(packed)
            per_case = packed["seconds"] / packed["status"].size
            done.update(submit(rows) for rows in task_rows(todo[len(first) * size:], last, per_case, threads))
            yield from _results(done)
        finally:
            client.cancel(submitted)
    finally:
        if client is not dask:
            client.close()
