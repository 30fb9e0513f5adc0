"""The unit of work of a sweep: the cases of some rows (lines along the last axis), solved in one compiled batch
where the sweep has a plan and one by one otherwise; module-level functions, so that worker processes and Dask
workers can run them."""

from __future__ import annotations

import threading
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.paths import Axis, case_at
from edl_solver.kernels import layout
from edl_solver.kernels.layout import PAIR_KEYS, SLOTS, SUMMARY_SIZE
from edl_solver.results.schema import CONVERGED, FAILED, SUMMARY_UNITS
from edl_solver.sweeping import profiles as sweep_profiles
from edl_solver.sweeping.plan import SweepPlan

#: Set by Ctrl-C during a sweep; checked between cases (see ``_interruptible``).
STOP = threading.Event()


def stop_if_asked() -> None:
    if STOP.is_set():
        raise KeyboardInterrupt


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
        stop_if_asked()
        one_by_one = _solve_batch(plan, points, values, out["status"])
    for flat in np.nonzero(one_by_one)[0].tolist():
        stop_if_asked()
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


# -- a task's results in compact form, for what crosses a network ------------------------------------------


def pack(part: dict[str, Any]) -> dict[str, Any]:
    """``solve_rows``'s results as one float array (rows, last axis, columns) with the statuses, and the
    messages of the failed cases alone: what a Dask worker sends back (a few pickled arrays rather than
    dozens, and no list of empty strings). ``unpack`` restores them exactly.

    The second value of a key that is not a (bottom, top) pair repeats the first, so it is not sent.
    """
    status = part["status"]
    columns, blocks = [], []
    for key, value in part.items():
        if key in ("rows", "status", "message"):
            continue
        if key in SUMMARY_UNITS and key not in PAIR_KEYS:
            value = value[..., :1]
        columns.append((key, value.shape[2:]))
        blocks.append(value.reshape(*status.shape, -1))
    failed = {(r, j): part["message"][r][j] for r, j in zip(*np.nonzero(status != CONVERGED))}
    return {"rows": part["rows"], "status": status, "values": np.concatenate(blocks, axis=-1),
            "columns": columns, "failed": failed}


def unpack(packed: dict[str, Any]) -> dict[str, Any]:
    """The results ``pack`` made compact, as ``solve_rows`` returned them."""
    status = packed["status"]
    part: dict[str, Any] = {"rows": packed["rows"], "status": status,
                            "message": [["" for _ in range(status.shape[1])] for _ in range(status.shape[0])]}
    for (r, j), text in packed["failed"].items():
        part["message"][r][j] = text
    values, at = packed["values"], 0
    for key, shape in packed["columns"]:
        size = int(np.prod(shape))
        block = values[..., at:at + size].reshape(*status.shape, *shape)
        at += size
        if key in SUMMARY_UNITS and key not in PAIR_KEYS:
            block = np.concatenate([block, block], axis=-1)
        part[key] = block
    return part
