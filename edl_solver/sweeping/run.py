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
from contextlib import closing, contextmanager, nullcontext
from pathlib import Path
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS, Axis, case_at, check_axis_values, check_conflicts, make_axes
from edl_solver.io.files import checked_output_path, output_lock
from edl_solver.results.schema import CONVERGED, FAILED, PENDING
from edl_solver.sweeping import profiles as sweep_profiles
from edl_solver.sweeping.on_dask import run_on_dask
from edl_solver.sweeping.plan import SweepPlan, make_plan
from edl_solver.sweeping.rows import STOP, solve_rows, stop_if_asked
from edl_solver.sweeping.store import SweepStore, rows_todo
from edl_solver.sweeping.workers import check_not_starting_a_worker, local_pool, numba_threads
from edl_solver.sweeping.workers import one_thread as _one_thread  # noqa: F401  (tests set a worker up with it)
from edl_solver.sweeping.writer import BackgroundWriter


def sweep(base: Case, axes: Mapping[str, Any], *, zipped: Sequence[Sequence[str]] | None = (),
          path: str | os.PathLike[str] | None = None, resume: bool = False, workers: int | None = None,
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
        HDF5 (netCDF-4) file to stream the results to (``xarray.open_dataset(path, engine="h5netcdf")``).
        Built as ``<path>.partial`` and renamed when complete. Checked before any case is solved;
        ``<path>.lock`` beside it is locked meanwhile, so that another run on the same path is refused.
    resume : bool
        Finish the sweep of an interrupted ``<path>.partial`` instead of starting afresh.
    workers : int, optional
        N cores: N threads here for compiled batches, N spawned processes for a sweep solved case by case (costs in
        ``workers.py``). None (the default): this process, compiled batches on numba's threads (every core).
    dask : str or distributed.Client, optional
        A Dask distributed scheduler address or client (``on_dask``); the results are written here.
    rows_per_task : int, optional
        Rows (lines along the last axis) per task; by default ~4,000 cases per thread here, 500 per worker
        process, ~0.5 s of solving on Dask.
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
        plan = None if profile_points else make_plan(base_table, sweep_axes)  # profiles come from single solves
        job = (base_table, sweep_axes, plan, profile_points)
        # the workers start (or fail to) before the store is opened: a sweep that cannot run leaves no file
        with local_pool(_processes(workers, plan, dask)) as pool:
            store = _open_store(base, base_table, sweep_axes, profile_points, target, resume)
            try:
                _fill(store, job, (workers, pool), dask, rows_per_task, progress)
            except BaseException:
                store.abandon()
                raise
            return store.finish()


def _processes(workers: int | None, plan: SweepPlan | None, dask: Any) -> int:
    """Local worker processes: none beside this one for a compiled batch (it runs on ``workers`` numba threads
    here, ``workers.numba_threads``), on Dask or by default; ``workers`` for a sweep solved case by case."""
    return workers if workers is not None and plan is None and dask is None else 1


def _check_options(base: Case, workers: int | None, overwrite: bool) -> None:
    """One-line InputErrors for a base that is not a Case, a worker count that is not a positive integer and
    an overwrite that is not a bool; a RuntimeError in a worker being started
    (``workers.check_not_starting_a_worker``)."""
    check_not_starting_a_worker()
    if not isinstance(base, Case):
        raise InputError(f"base: {type(base).__name__} is not a Case, expected edl_solver.Case(...)")
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int) or workers < 1):
        raise InputError(f"workers: {workers!r} is not allowed, expected a positive integer (or None: this "
                         "process, on numba's threads)")
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


def _fill(store: SweepStore, job: tuple[Mapping[str, Any], Sequence[Axis], SweepPlan | None, int],
          local: tuple[int, Any], dask: Any, rows_per_task: int | None, progress: bool | None) -> None:
    """Solve the rows the store still lacks, task by task, storing each task's results as it completes (to a
    file in a thread of its own, ``writer.BackgroundWriter``, while the next tasks are solved).

    ``job`` is the base table, the axes, the plan (None: case by case) and the profile points; ``local`` the
    worker count and their started pool (None when the sweep runs in this process); Ctrl-C stops the sweep
    between cases (``_interruptible``), keeping what was solved.
    """
    last = job[1][-1].size
    todo = rows_todo(store.status)
    writer = BackgroundWriter(store) if store.file is not None else None
    try:
        # closing: the tasks' generator ends at once on Ctrl-C (numba threads restored, Dask tasks cancelled)
        with _progress_bar(len(todo) * last, progress) as bar, _interruptible(), \
                closing(_run(todo, last, job, local, dask, rows_per_task)) as parts:
            for part in parts:
                writer.put(part) if writer is not None else store.write(part)
                bar.update(len(part["rows"]) * last)
                stop_if_asked()
    finally:
        if writer is not None:
            writer.close()  # what was solved is written, even on Ctrl-C


def _tasks(todo: list[int], last: int, per_task: int | None, cases: int) -> list[list[int]]:
    """The rows in tasks of ``per_task`` rows, by default about ``cases`` cases."""
    size = per_task or max(1, cases // last)
    return [todo[i:i + size] for i in range(0, len(todo), size)]


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
        STOP.set()
        signal.signal(signal.SIGINT, signal.default_int_handler)

    STOP.clear()
    signal.signal(signal.SIGINT, ask_to_stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, signal.default_int_handler)
        STOP.clear()


def _run(todo: list[int], last: int, job: tuple[Any, ...], local: tuple[int, Any], dask: Any,
         rows_per_task: int | None) -> Iterable[dict[str, Any]]:
    """Yield each task's results as it completes: in this process (a compiled batch on ``workers`` numba
    threads), a started pool of local processes (each task 500 cases solved one by one), or Dask
    (``on_dask``); ``job`` holds the arguments of ``solve_rows`` other than the rows."""
    base_table, axes, plan, profile_points = job
    workers, pool = local
    if dask is not None:
        yield from run_on_dask(todo, job, last, dask, rows_per_task)
    elif pool is None:
        # a compiled batch of ~4,000 cases is ~0.1-0.2 s a thread: the commits and task costs stay small
        with numba_threads(workers) if plan is not None and workers is not None else nullcontext():
            threads = _numba_thread_count() if plan is not None else 0
            for rows in _tasks(todo, last, rows_per_task, 4000 * threads if plan is not None else 500):
                yield solve_rows(base_table, axes, rows, plan, profile_points)
    else:
        import concurrent.futures as cf

        futures = [pool.submit(solve_rows, base_table, axes, rows, plan, profile_points)
                   for rows in _tasks(todo, last, rows_per_task, 500)]
        try:
            for future in cf.as_completed(futures):
                yield future.result()
        except BaseException:
            for future in futures:
                future.cancel()
            raise


def _numba_thread_count() -> int:
    """The numba threads the compiled batch runs on in this thread now."""
    import numba

    return numba.get_num_threads()


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
