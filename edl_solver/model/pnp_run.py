"""A transient Poisson-Nernst-Planck run: the compiled stepper on nested grids, extrapolated to the accuracy.

Each grid is stepped from t = 0 to the last output time with an L-stable SDIRK (``kernels.pnp_stepper``), stopping
exactly at every output time and at every jump or kink of a drive (where the potential is made consistent with the
new wall values before stepping on). The time error is held to a share of ``Numerics(accuracy)`` by the stepper's
control; the grid error is removed by Richardson extrapolation over four nested grids of the reported series
(as the steady solver does), and the grids are refined until the estimate meets the accuracy, each series
measured against its largest magnitude in the run.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, NamedTuple

import numpy as np

from edl_solver.errors import ConvergenceError
from edl_solver.inputs.case import Case
from edl_solver.kernels import pnp_stepper
from edl_solver.model import pnp_quantities
from edl_solver.model.flow_operator import extrapolated, level_intervals
from edl_solver.model.pnp_setup import Setup, build

#: Cells per half section of the finest of the four grids to start from.
FIRST_INTERVALS = 64
#: Share of the accuracy the time stepping's tolerance starts from (cut where its error is found too large).
TIME_SHARE = 0.5
#: Smallest share of the accuracy the time stepping's tolerance may be cut to.
SMALLEST_SHARE = 1e-3 * TIME_SHARE
#: Steps allowed between two stops.
MAX_STEPS = 2_000_000


class GridRun(NamedTuple):
    """One grid's run: its setup, the states at the output times and the stepper's counters."""

    setup: Setup
    states: np.ndarray
    stats: np.ndarray


def run_grid(case: Case, before: Case, drives: Any, intervals: int, times: np.ndarray, tolerance: float,
             progress: Callable[[float], None] | None = None) -> GridRun:
    """Step one grid through the output ``times`` (s), the stepper's local error held to ``tolerance``."""
    setup = build(case, before, drives, intervals, float(times[-1]))
    pr = setup.problem
    nion = setup.bulk.size
    y, v = setup.start[:, :nion + 1].copy(), setup.start[:, nion + 1:].copy()
    slopes, flow_slopes = np.empty_like(y), np.empty_like(v)
    if not pnp_stepper.consistent(y, v, 0.0, pr, slopes, flow_slopes):
        raise ConvergenceError(f"{case.describe()}: the potential right after the step did not converge")
    t_out = times / setup.time_unit
    jumps = setup.breakpoints
    stops = np.unique(np.concatenate((t_out, jumps)))
    debye = 1.0 / pr.kappa2
    h = 1e-3 * min(t_out[0], debye, pr.ratio if pr.ratio > 0 else debye)
    stats = np.zeros(4, dtype=np.int64)
    states = np.empty((times.size, *setup.start.shape))
    t, k = 0.0, 0
    for stop in stops:
        status, h = pnp_stepper.advance(y, slopes, v, flow_slopes, t, stop, h, pr, setup.error_scales, tolerance,
                                        MAX_STEPS, stats)
        if status != pnp_stepper.OK:
            reason = {pnp_stepper.STEP_TOO_SMALL: "the time step fell below round-off",
                      pnp_stepper.TOO_MANY_STEPS: f"more than {MAX_STEPS} steps"}.get(status, "Newton failed")
            raise ConvergenceError(f"{case.describe()}: transient Poisson-Nernst-Planck: {reason} at "
                                   f"t = {t * setup.time_unit:.3g} s")
        t = stop
        if np.any(jumps == stop) and not pnp_stepper.consistent(y, v, stop, pr, slopes, flow_slopes):
            raise ConvergenceError(f"{case.describe()}: the potential after the drive's jump at "
                                   f"t = {stop * setup.time_unit:.3g} s did not converge")
        while k < t_out.size and t_out[k] == stop:
            states[k, :, :nion + 1] = y
            states[k, :, nion + 1:] = v
            k += 1
        if progress is not None:
            progress(stop / stops[-1])
    return GridRun(setup, states, stats)


def _share(progress: Callable[[float], None], width: float, offset: float) -> Callable[[float], None]:
    """``progress`` for one grid's part [offset, offset + width] of the run."""
    return lambda fraction: progress(offset + width * fraction)


class Extrapolated(NamedTuple):
    """The reported series extrapolated over the grids, its error estimate, and the finest grid's run."""

    values: np.ndarray
    estimate: float
    finest: GridRun
    intervals: int
    steps: int


def run(case: Case, before: Case, drives: Any, times: np.ndarray,
        progress: Callable[[float], None] | None = None) -> Extrapolated:
    """The series on nested grids, refined until the estimate meets the accuracy.

    The estimate adds the grids' (the extrapolation's change over one more grid) and the time stepping's: the
    coarsest grid is stepped once more at 8 times the tolerance, and with a global error that grows in proportion
    to the tolerance (a third-order method whose steps hold a local error estimate of order h^3) the difference is
    7 times the error at the tolerance. Where the time error takes more than half the accuracy the tolerance
    shrinks before the finer grids run. A refinement adds one finer grid and drops the coarsest.
    """
    numerics = case.numerics
    intervals = numerics.intervals or FIRST_INTERVALS
    cells = level_intervals(intervals)
    coarsest, share, timing = _time_share(case, before, drives, cells[0], times, TIME_SHARE)
    runs = {cells[0]: coarsest}  # a refinement reuses the grids it shares with the last round
    series = {cells[0]: pnp_quantities.series(coarsest.setup, coarsest.states, times)}
    steps = int(coarsest.stats[pnp_stepper.STAT_STEPS])
    while True:
        cells = level_intervals(intervals)
        for number, level in enumerate(cells):
            if level in runs:
                continue
            # the work per grid roughly doubles with its cells: the finest is about half of the whole
            report = None if progress is None else _share(progress, 2.0**number / 15.0, (2.0**number - 1) / 15.0)
            runs[level] = run_grid(case, before, drives, level, times, numerics.accuracy * share, report)
            steps += int(runs[level].stats[pnp_stepper.STAT_STEPS])
            series[level] = pnp_quantities.series(runs[level].setup, runs[level].states, times)
        finest = runs[cells[-1]]
        finer, coarser = (part.real for part in extrapolated([series[level] for level in cells]))
        # the difference is the error of the coarser extrapolation; the finer one's is smaller by 2^p, p >= 3 the
        # order of the first term left: an eighth, as the steady solver, the frequency response and the start-up do
        estimate = float(np.max(np.abs(finer - coarser) / _scale(finest.setup, finer))) / 8.0 + timing
        if estimate <= numerics.accuracy or numerics.intervals:
            return Extrapolated(finer, estimate, finest, intervals, steps)
        if 2 * intervals > numerics.max_intervals:
            raise ConvergenceError(f"{case.describe()}: transient Poisson-Nernst-Planck: accuracy "
                                   f"{numerics.accuracy:g} missed (estimate {estimate:.2g}) with {intervals} cells")
        intervals *= 2


def _scale(setup: Setup, values: np.ndarray) -> np.ndarray:
    """What each series' error is measured against: its largest magnitude, or its floor
    (``pnp_quantities.floors``)."""
    return np.maximum(np.maximum(np.max(np.abs(values), axis=0), pnp_quantities.floors(setup, values)), 1e-300)


def _time_share(case: Case, before: Case, drives: Any, cells: int, times: np.ndarray,
                share: float) -> tuple[GridRun, float, float]:
    """The coarsest grid's run at a share of the accuracy whose time error (estimated against a run at 8 times
    the tolerance) is at most half the accuracy; the run, the share and that error."""
    accuracy = case.numerics.accuracy
    while True:
        run = run_grid(case, before, drives, cells, times, accuracy * share)
        loose = run_grid(case, before, drives, cells, times, 8.0 * accuracy * share)
        tight = pnp_quantities.series(run.setup, run.states, times)
        difference = np.abs(pnp_quantities.series(loose.setup, loose.states, times) - tight)
        timing = float(np.max(difference / _scale(run.setup, tight))) / 7.0
        if timing <= 0.5 * accuracy:
            return run, share, timing
        share *= max(min(0.4 * accuracy / timing, 0.5), 1e-3)
        if share < SMALLEST_SHARE:
            raise ConvergenceError(f"{case.describe()}: transient Poisson-Nernst-Planck: the time stepping misses "
                                   f"accuracy {accuracy:g} (estimate {timing:.2g}) even at a tolerance a thousandth "
                                   "of the first")
