"""Where a sweep's tasks run on this machine: numba threads in this process (the compiled batch), or spawned
worker processes of one thread each (sweeps solved case by case).

Threads share one process: they start at once and cost no memory of their own, but only the compiled batch
(numba ``prange``) runs on them. Processes solve any case (profiles, rectangles, continuation), but each
takes ~1-2 s to start (Python, numpy, the compiled kernels from the cache) and ~200 MB of memory.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

from edl_solver.errors import InputError


@contextmanager
def numba_threads(count: int) -> Iterator[None]:
    """Run the compiled batch on ``count`` numba threads (at most numba's pool, the machine's cores by
    default) in the calling thread, restoring the previous count on exit."""
    import numba

    before = numba.get_num_threads()
    numba.set_num_threads(max(1, min(count, numba.config.NUMBA_NUM_THREADS)))
    try:
        yield
    finally:
        numba.set_num_threads(before)


#: Why local workers fail to start, nearly always: spawned workers import the calling script again.
UNGUARDED = ("workers: the worker processes could not start; a script that calls edl.sweep(..., workers=N) "
             "must make that call under `if __name__ == \"__main__\":` (each worker imports the script again), "
             "or use workers=1")


@contextmanager
def local_pool(workers: int) -> Iterator[Any]:
    """A started pool of ``workers`` spawned processes (None for one worker), shut down on exit.

    Raises
    ------
    InputError
        If the first worker cannot start: nearly always a script without the ``__main__`` guard
        (``UNGUARDED``). Checked here, before the output file is opened.
    """
    if workers == 1:
        yield None
        return
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor
    from concurrent.futures.process import BrokenProcessPool

    context = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(workers, mp_context=context, initializer=one_thread) as pool:
        try:
            pool.submit(_started).result()
        except BrokenProcessPool:
            raise InputError(UNGUARDED) from None
        yield pool


def _started() -> None:
    """The first task of a pool: returns once a worker is up."""


def check_not_starting_a_worker() -> None:
    # A worker being spawned imports the main script again; a script without the `__main__` guard would
    # sweep once more in every worker (and start workers of its own): stop it at once.
    import multiprocessing

    if getattr(multiprocessing.current_process(), "_inheriting", False):
        raise RuntimeError(UNGUARDED)


def one_thread() -> None:
    # Each worker is one process on one core: keep numba from spawning threads of its own. The variable
    # only counts before numba starts its threads, so set the live value as well. numba may already be
    # imported (the kernels' cache locator imports it): reload its configuration before the threads start,
    # or the first compilation in the worker finds the variable changed under live threads and fails.
    os.environ["NUMBA_NUM_THREADS"] = "1"
    import numba
    from numba.core import config

    config.reload_config()
    numba.set_num_threads(1)
