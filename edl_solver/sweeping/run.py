"""Design-space sweeps: many cases from a base case and axes over its inputs, into one xarray Dataset.

The axes (which inputs, their units, the case at a point) are in ``inputs.paths``; where the results go
(memory or a resumable file) in ``sweep_store``; how points are packed for the compiled batch in
``sweep_plan``; profiles on request in ``sweep_profiles``. This module runs the sweep.

Each case is solved exactly as ``edl_solver.solve`` solves it, so a sweep's values equal single solves.
A case that does not converge is marked (``status`` 1 and its ``message``) and the sweep carries on.
With a ``path`` the results stream to disk row by row (a row is one line along the last axis): the file
is built under ``<path>.partial`` and renamed when complete, so a killed sweep keeps what it finished and
``resume=True`` finishes it, with a result identical to an uninterrupted run. The sweep holds the output's
lock (``io.files.output_lock``) throughout, so a second run on the same path is refused at once, and a
finished file is replaced only with ``overwrite=True``.
"""

from __future__ import annotations

import os
import signal
import threading
from collections.abc import Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager, nullcontext
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS, Axis, case_at, check_axis_values, check_conflicts, make_axes
from edl_solver.io.files import checked_output_path, output_lock
from edl_solver.kernels import layout
from edl_solver.kernels.layout import PAIR_KEYS, SLOTS, SUMMARY_SIZE
from edl_solver.results.schema import CONVERGED, FAILED, PENDING, SUMMARY_UNITS
from edl_solver.sweeping import profiles as sweep_profiles
from edl_solver.sweeping.plan import SweepPlan, make_plan
from edl_solver.sweeping.store import SweepStore, rows_todo


def solve_rows(base_table: Mapping[str, Any], axes: Sequence[Axis], rows: Sequence[int],
               plan: SweepPlan | None = None, profile_points: int = 0) -> dict[str, Any]:
    """Solve the cases of some rows (lines along the last axis); a module-level function so that worker
    processes and Dask workers can run it.

    With a ``plan`` the cases are packed from it and solved in one compiled batch (``kernels.batch.solve_cases``,
    the same compiled steps as ``edl_solver.solve``); cases the batch cannot finish (no convergence from the
    start guess, an invalid combination of inputs) and every case without a plan go through
    ``edl_solver.solve`` one by one, which also words the reason of a failure. With ``profile_points``
    (and no plan: the batch returns no profiles) the profiles of each case are sampled at that many
    positions (``sweep_profiles``).

    Returns
    -------
    dict
        ``rows`` and, per summary key, an array (rows, last axis[, 2]); ``status`` and ``message``; with
        profiles, per profile variable an array (rows, last axis[, ion], position).
    """
    shape = tuple(axis.size for axis in axes)
    last = shape[-1]
    out: dict[str, Any] = {"rows": list(rows), "status": np.full((len(rows), last), FAILED, dtype=np.int8),
                           "message": [["" for _ in range(last)] for _ in rows]}
    values = {key: np.full((len(rows), last, 2), np.nan) for key in SUMMARY_UNITS}
    if profile_points:
        n_ions = len(base_table["electrolyte"]["ions"])
        values.update(sweep_profiles.empty((len(rows), last), n_ions, profile_points))
    points = (np.asarray(rows, dtype=np.int64)[:, None] * last + np.arange(last)).ravel()
    one_by_one = np.ones(points.size, dtype=bool)
    if plan is not None:
        _stop_if_asked()
        one_by_one = _solve_batch(plan, points, values, out["status"])
    for flat in np.nonzero(one_by_one)[0].tolist():
        _stop_if_asked()
        r, j = divmod(flat, last)
        _solve_one(base_table, axes, np.unravel_index(int(points[flat]), shape), values, out, r, j, profile_points)
    out.update(values)
    return out


def _solve_batch(plan: SweepPlan, points: np.ndarray, values: dict[str, np.ndarray], status: np.ndarray
                 ) -> np.ndarray:
    """Solve the valid points in one compiled batch, filling ``values`` and ``status`` (rows, last axis);
    returns which points are left to the case-by-case path."""
    from edl_solver.kernels import batch as _batch

    vectors, valid = plan.vectors(points)
    chosen = np.nonzero(valid)[0]
    summaries = np.full((chosen.size, SUMMARY_SIZE), np.nan)
    codes = np.empty(chosen.size, dtype=np.int64)
    iterations = np.empty(chosen.size, dtype=np.int64)
    _batch.solve_cases(np.ascontiguousarray(vectors[chosen]), summaries, codes, iterations)
    solved = codes == layout.CONVERGED  # kernel codes; the others are KERNEL_FAILURES, re-solved one by one
    done = chosen[solved]
    finished = summaries[solved]
    last = status.shape[1]
    r, j = np.divmod(done, last)
    status[r, j] = CONVERGED
    for key, at in SLOTS.items():
        pair = key in PAIR_KEYS
        values[key][r, j, 0] = finished[:, at]
        values[key][r, j, 1] = finished[:, at + 1] if pair else finished[:, at]
    left = np.ones(points.size, dtype=bool)
    left[done] = False
    return left


def _solve_one(base_table: Mapping[str, Any], axes: Sequence[Axis], index: tuple[int, ...],
               values: dict[str, np.ndarray], out: dict[str, Any], r: int, j: int, profile_points: int = 0) -> None:
    """Solve one point with ``edl_solver.solve`` (and sample its profiles); a failure is recorded with its
    reason."""
    from edl_solver.pipeline import solve

    try:
        result = solve(case_at(base_table, axes, index))
    except (ConvergenceError, InputError) as error:
        out["message"][r][j] = str(error)
        return
    except Exception as error:  # one broken case must not stop a long sweep: record it and go on
        out["message"][r][j] = f"unexpected {type(error).__name__}: {error}"
        return
    out["status"][r, j] = CONVERGED
    for key, value in result.summary.items():
        if key in values:  # a key some cases lack (stern_potential without a Stern layer) stays NaN
            values[key][r, j] = value if isinstance(value, tuple) else (value, value)
    if profile_points:
        for name, sampled in sweep_profiles.sample(result.profiles, profile_points).items():
            values[name][r, j] = sampled


def sweep(base: Case, axes: Mapping[str, Any], *, zipped: Sequence[Sequence[str]] | None = (),
          path: str | os.PathLike[str] | None = None, resume: bool = False, workers: int = 1,
          dask: Any = None, rows_per_task: int | None = None, progress: bool | None = None,
          profiles: bool | int | None = None, overwrite: bool = False) -> Any:
    """Solve every case of a design space and return the summaries as an ``xarray.Dataset``.

    Parameters
    ----------
    base : Case
        The case every point starts from.
    axes : mapping of str to sequence
        Dotted input path -> values (SI numbers or strings with units), e.g.
        ``{"geometry.height": [...], "wall.zeta": [...]}``; one dimension per axis, in this order.
    zipped : sequence of sequences of str, optional
        Groups of axis paths varied together along one dimension (named after the group's first path);
        ``None`` or empty: none.
    path : str or Path, optional
        HDF5 (netCDF-4) file to stream the results to; opened by ``xarray.open_dataset(path,
        engine="h5netcdf")``. Built as ``<path>.partial`` and renamed when complete. Checked before any
        case is solved; ``<path>.lock`` beside it is locked meanwhile, so that another run on the same path
        is refused.
    resume : bool
        Finish the sweep of an interrupted ``<path>.partial`` instead of starting afresh.
    workers : int
        Local worker processes (1: in this process).
    dask : str or distributed.Client, optional
        A Dask distributed scheduler address or client; rows are sent to it in tasks and the results
        gathered and written here.
    rows_per_task : int, optional
        Rows (lines along the last axis) per task; by default about 4,000 cases per task in this process
        and 1,000 per task for workers or Dask (so that they share the work), 500 when the cases are
        solved one by one (no compiled batch).
    progress : bool, optional
        Show a progress bar (tqdm); by default only when attached to a terminal.
    profiles : bool or int, optional
        Also store every case's profiles across the section, at this many positions evenly spaced in y/H (slit)
        or r/a (capillary; refused for a rectangle, whose profiles are 2-D), ``True`` for 101 (``sweep_profiles``).
        They are large, and the cases are then solved one by one (3 times slower than the compiled batch).
    overwrite : bool
        Replace a file that already exists at ``path`` (by default it is kept and the sweep refused).

    Returns
    -------
    xarray.Dataset
        One dimension per axis; every ``result.summary`` key as a variable with ``units`` and
        ``long_name`` (pair values on an extra ``wall`` dimension when the walls differ); ``status``
        (0 converged, 1 failed) and ``message`` per case. With a ``path``, the file as xarray reads it:
        loaded into memory when its values take up to ``LOAD_LIMIT_BYTES`` (256 MiB, about 500,000
        cases), else opened lazily (values read from the file on access; close it when done). With
        profiles, ``profile_<field>`` variables on an extra ``position`` dimension (and ``ion`` for the
        concentrations).

    Raises
    ------
    InputError
        Bad arguments or output path, an axis value that makes no valid case
        (``inputs.paths.check_axis_values``), a file at ``path`` without ``overwrite``, or another run writing
        ``path``: before any case is solved.
    """
    from edl_solver.inputs.casefile import case_to_mapping

    _check_options(base, workers, overwrite)
    sweep_axes = make_axes(axes, _checked_zipped(zipped))
    base_table = case_to_mapping(base)
    check_axis_values(base_table, sweep_axes)
    profile_points = sweep_profiles.check_geometry(base.geometry, sweep_profiles.check_points(profiles))
    target = checked_output_path(path) if path is not None else None
    with output_lock(target) if target is not None else nullcontext():
        if target is not None and target.exists() and not overwrite:
            raise InputError(f"path: {str(path)!r} already exists, expected a new file name, or overwrite=True "
                             "to replace it")
        # the workers start (or fail to) before the store is opened: a sweep that cannot run leaves no file
        with _local_pool(workers if dask is None else 1) as pool:
            store = _open_store(base, base_table, sweep_axes, profile_points, target, resume)
            try:
                _fill(store, (base_table, sweep_axes, profile_points), (workers, pool), dask, rows_per_task, progress)
            except BaseException:
                store.abandon()
                raise
            return store.finish()


def _check_options(base: Case, workers: int, overwrite: bool) -> None:
    """One-line InputErrors for a base that is not a Case, a worker count that is not a positive integer and
    an overwrite that is not a bool; a RuntimeError in a worker being started (``_check_not_starting_a_worker``)."""
    _check_not_starting_a_worker()
    if not isinstance(base, Case):
        raise InputError(f"base: {type(base).__name__} is not a Case, expected edl_solver.Case(...)")
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        raise InputError(f"workers: {workers!r} is not allowed, expected a positive integer")
    if not isinstance(overwrite, bool):
        raise InputError(f"overwrite: {overwrite!r} is not allowed, expected True or False")


def _checked_zipped(zipped: Any) -> list[list[str]]:
    """The zipped groups as lists of paths (None: no groups)."""
    if zipped is None:
        return []
    shape = "expected a list of groups of axis paths, e.g. [['wall.zeta', 'solvent.temperature']]"
    if isinstance(zipped, (str, bytes)) or not isinstance(zipped, Iterable):
        raise InputError(f"zipped: {zipped!r} is not a list of groups, {shape}")
    groups = list(zipped)
    for group in groups:
        if isinstance(group, (str, bytes)) or not isinstance(group, Iterable):
            raise InputError(f"zipped: {group!r} is not a group of axis paths, {shape}")
    return [list(group) for group in groups]


def _open_store(base: Case, base_table: dict[str, Any], sweep_axes: Sequence[Axis], profile_points: int,
                path: Path | None, resume: bool) -> SweepStore:
    """The store of the sweep: in memory, or a new (or, with ``resume``, the interrupted) file.

    The sweep's specification (base case and axes) goes into the file, so that a resume can check that it
    finishes the same sweep; a ``wall`` dimension is made when the walls differ or a swept path names one.
    """
    pair = isinstance(base.wall, tuple) or any(p.startswith("wall.") and p.split(".")[1] in base.geometry.wall_names
                                               for axis in sweep_axes for p in axis.paths)
    spec = {"base": base_table, "axes": [[a.name, list(a.paths), [list(v) for v in a.values]] for a in sweep_axes]}
    if profile_points:
        spec["profile_points"] = profile_points
    return SweepStore(spec, sweep_axes, base.geometry, pair, path, resume,
                      ions=[ion.name for ion in base.electrolyte.ions], profile_points=profile_points)


def _fill(store: SweepStore, job: tuple[Mapping[str, Any], Sequence[Axis], int], local: tuple[int, Any],
          dask: Any, rows_per_task: int | None, progress: bool | None) -> None:
    """Solve the rows the store still lacks, task by task, writing each task's results as it completes.

    ``job`` is the base table, the axes and the profile points; ``local`` the worker count and their
    started pool (None for one); Ctrl-C stops the sweep between cases (``_interruptible``), keeping what
    was written.
    """
    base_table, sweep_axes, profile_points = job
    workers, pool = local
    # profiles come from single solves, so a sweep that stores them needs no compiled batch
    plan = None if profile_points else make_plan(base_table, sweep_axes)
    todo = rows_todo(store.status)
    last = sweep_axes[-1].size
    per_task = rows_per_task or max(1, _cases_per_task(plan, workers, dask) // last)
    tasks = [todo[i:i + per_task] for i in range(0, len(todo), per_task)]
    with _progress_bar(len(todo) * last, progress) as bar, _interruptible():
        for part in _run(tasks, (base_table, sweep_axes, plan, profile_points), pool, dask):
            store.write(part)
            bar.update(len(part["rows"]) * last)
            _stop_if_asked()


def _cases_per_task(plan: SweepPlan | None, workers: int, dask: Any) -> int:
    """Default task size: each task is committed to the file with two flushes (~6 ms each), so compiled
    batches go in large tasks; workers and Dask get smaller ones to share them out."""
    if plan is None:
        return 500
    return 4000 if workers == 1 and dask is None else 1000


#: Set by Ctrl-C during a sweep; checked between cases (see ``_interruptible``).
_STOP = threading.Event()


@contextmanager
def _interruptible() -> Iterator[None]:
    """Turn Ctrl-C into a flag that the sweep checks between cases.

    Python raises KeyboardInterrupt wherever the main thread happens to be, and when that is inside a weakref
    or garbage-collection callback (frequent in a long sweep) the interrupt is printed and ignored, so the
    sweep would run on. A second Ctrl-C interrupts at once, as usual.
    """
    if threading.current_thread() is not threading.main_thread() \
            or signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        yield
        return

    def ask_to_stop(signum: int, frame: Any) -> None:
        _STOP.set()
        signal.signal(signal.SIGINT, signal.default_int_handler)

    _STOP.clear()
    signal.signal(signal.SIGINT, ask_to_stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, signal.default_int_handler)
        _STOP.clear()


def _stop_if_asked() -> None:
    if _STOP.is_set():
        raise KeyboardInterrupt


def _run(tasks: list[list[int]], job: tuple[Any, ...], pool: Any, dask: Any) -> Iterable[dict[str, Any]]:
    """Yield each task's results as it completes (in this process, a started pool of local processes, or
    Dask); ``job`` holds the arguments of ``solve_rows`` other than the rows: base table, axes, plan,
    profile points."""
    base_table, axes, plan, profile_points = job
    if dask is not None:
        yield from _run_dask(tasks, job, dask)
    elif pool is None:
        for rows in tasks:
            yield solve_rows(base_table, axes, rows, plan, profile_points)
    else:
        import concurrent.futures as cf

        futures = [pool.submit(solve_rows, base_table, axes, rows, plan, profile_points) for rows in tasks]
        try:
            for future in cf.as_completed(futures):
                yield future.result()
        except BaseException:
            for future in futures:
                future.cancel()
            raise


#: Why local workers fail to start, nearly always: spawned workers import the calling script again.
_UNGUARDED = ("workers: the worker processes could not start; a script that calls edl.sweep(..., workers=N) "
              "must make that call under `if __name__ == \"__main__\":` (each worker imports the script again), "
              "or use workers=1")


@contextmanager
def _local_pool(workers: int) -> Iterator[Any]:
    """A started pool of ``workers`` spawned processes (None for one worker), shut down on exit.

    Raises
    ------
    InputError
        If the first worker cannot start: nearly always a script without the ``__main__`` guard
        (``_UNGUARDED``). Checked here, before the output file is opened.
    """
    if workers == 1:
        yield None
        return
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor
    from concurrent.futures.process import BrokenProcessPool

    context = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(workers, mp_context=context, initializer=_one_thread) as pool:
        try:
            pool.submit(_started).result()
        except BrokenProcessPool:
            raise InputError(_UNGUARDED) from None
        yield pool


def _started() -> None:
    """The first task of a pool: returns once a worker is up."""


def _check_not_starting_a_worker() -> None:
    # A worker being spawned imports the main script again; a script without the `__main__` guard would
    # sweep once more in every worker (and start workers of its own): stop it at once.
    import multiprocessing

    if getattr(multiprocessing.current_process(), "_inheriting", False):
        raise RuntimeError(_UNGUARDED)


def _one_thread() -> None:
    # Each worker is one process on one core: keep numba from spawning threads of its own. The variable
    # only counts before numba starts its threads, so set the live value as well. numba may already be
    # imported (the kernels' cache locator imports it): reload its configuration before the threads start,
    # or the first compilation in the worker finds the variable changed under live threads and fails.
    os.environ["NUMBA_NUM_THREADS"] = "1"
    import numba
    from numba.core import config

    config.reload_config()
    numba.set_num_threads(1)


def _run_dask(tasks: list[list[int]], job: tuple[Any, ...], dask: Any) -> Iterable[dict[str, Any]]:
    from distributed import Client, as_completed

    client = dask if isinstance(dask, Client) else Client(dask)
    try:
        base_table, axes, plan, profile_points = job
        futures = [client.submit(solve_rows, base_table, axes, rows, plan, profile_points, pure=False)
                   for rows in tasks]
        for future in as_completed(futures):
            yield future.result()
    finally:
        if client is not dask:
            client.close()


class _NoBar:
    def __enter__(self) -> _NoBar:
        return self

    def __exit__(self, *exc: object) -> None:
        return None

    def update(self, n: int) -> None:
        return None


def _progress_bar(total: int, progress: bool | None) -> Any:
    try:
        from tqdm import tqdm
    except ImportError:  # tqdm is optional
        return _NoBar()
    # disable=None: tqdm turns itself off when not attached to a terminal (CI, pipes)
    return tqdm(total=total, unit="case", disable=None if progress is None else not progress,
                desc="sweep", smoothing=0.1)


__all__ = ["CONVERGED", "FAILED", "PATH_UNITS", "PENDING", "WORD_PATHS", "Axis", "case_at", "check_conflicts",
           "make_axes", "solve_rows", "sweep"]
