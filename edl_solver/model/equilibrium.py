"""Equilibrium double layer and flow across one section, with grid refinement and error control.

Solves the discrete Poisson-Boltzmann (or Debye-Hueckel) equation with a damped Newton iteration on
nested wall-clustered grids, then the two Stokes problems, and extrapolates every section integral
(Richardson); the grid is refined until the error estimate meets the requested accuracy. The compiled
driver is ``_adaptive.solve_adaptive``; this module adds the fallback of continuation in the wall
values when Newton fails from the Gouy-Chapman guess, and turns failures into ``ConvergenceError``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from edl_solver.errors import ConvergenceError
from edl_solver.kernels import adaptive as _adaptive
from edl_solver.kernels import fv1d as _kernels
from edl_solver.model import grid
from edl_solver.model.scaling import SectionProblem


@dataclass(frozen=True)
class SectionSolution:
    """Dimensionless solution of one section (see scaling.py for the units).

    Attributes
    ----------
    grid : Grid
        Finest grid.
    psi, u_eo, u_p : ndarray
        Profiles on the finest grid (second-order accurate).
    integrals : ndarray
        Richardson-extrapolated section integrals, layout ``_kernels.I_*``.
    error_estimate : float
        Estimated relative error of the extrapolated integrals.
    iterations : int
        Newton iterations, all grids and refinements together.
    residual : float
        Max row-scaled residual on the finest grid (kT/e).
    """

    grid: grid.Grid
    psi: np.ndarray
    u_eo: np.ndarray
    u_p: np.ndarray
    integrals: np.ndarray
    error_estimate: float
    iterations: int
    residual: float


def _run(problem: SectionProblem, accuracy: float, intervals: int, max_iterations: int, max_intervals: int,
         guess: np.ndarray) -> tuple:
    out = np.zeros(_kernels.integral_count(problem.ions.shape[0]))
    result = _adaptive.solve_adaptive(
        problem.metric, problem.half, problem.kappa2, problem.ions, problem.model, problem.walls,
        problem.flow_walls, problem.visco, problem.wall_potential_guess, problem.counter_valence, accuracy,
        intervals, max_intervals, max_iterations, guess, out)
    return (*result, out)


def solve_section(problem: SectionProblem, accuracy: float, intervals: int | None = None,
                  max_iterations: int = 200, max_intervals: int = 4096,
                  label: str | Callable[[], str] = "") -> SectionSolution:
    """Solve one section to the requested relative ``accuracy`` (or on a fixed grid of ``intervals``).

    Raises
    ------
    ConvergenceError
        If Newton fails even with continuation in the wall values, or the error estimate misses
        ``accuracy`` at ``max_intervals`` cells per half section. ``label`` names the case.
    """
    fixed = intervals or 0
    status, its, estimate, residual, n_half, s, beta, psi, u_eo, u_p, out = _run(
        problem, accuracy, fixed, max_iterations, max_intervals, np.empty(0))
    iterations = its
    if status == _adaptive.NEWTON_FAILED:
        guess, its = _continuation(problem, n_half, max_iterations, label)
        iterations += its
        status, its, estimate, residual, n_half, s, beta, psi, u_eo, u_p, out = _run(
            problem, accuracy, fixed, max_iterations, max_intervals, guess)
        iterations += its
    if status != _adaptive.CONVERGED and callable(label):  # built only when a message needs it
        label = label()
    if status == _adaptive.NEWTON_FAILED:
        raise ConvergenceError(f"{label}: Poisson-Boltzmann Newton iteration did not converge on the "
                               f"refined grid (scaled residual {residual:.2g})")
    if status == _adaptive.ACCURACY_MISSED:
        raise ConvergenceError(
            f"{label}: the grid error estimate {estimate:.2g} is above the requested accuracy {accuracy:.2g} "
            f"with {n_half} cells per half section; raise numerics.max_intervals or loosen numerics.accuracy")
    return SectionSolution(grid.from_nodes(s, beta, problem.metric), psi, u_eo, u_p, out, estimate, iterations,
                           residual)


def _scaled_walls(rows: np.ndarray, t: float) -> np.ndarray:
    """Wall rows with their driving values scaled by t (continuation from uncharged walls at t = 0)."""
    scaled = rows.copy()
    scaled[:, _kernels.W_VALUE] *= t
    scaled[:, _kernels.W_SIGMA] *= t
    scaled[:, _kernels.W_GATE_V] *= t
    for j in range(_kernels.MAX_SITES):
        scaled[:, _kernels.W_SITE0 + j * _kernels.SITE_SIZE] *= t  # site densities
    return scaled


def _continuation(problem: SectionProblem, intervals: int, max_iterations: int, label: str | Callable[[], str]
                  ) -> tuple[np.ndarray, int]:
    """Reach the wall values in steps from zero when Newton fails from the initial guess.

    The continuation parameter t scales the wall values; its step doubles after a success and halves
    after a failure, and each solve starts from the previous solution. Runs on the first grid.
    """
    inner = _adaptive.inner_length(problem.kappa2, problem.wall_potential_guess, problem.counter_valence)
    g = grid.build(intervals, "half" if problem.half else "full", problem.metric, inner)
    psi = np.zeros(g.x.size)
    t, step, iterations = 0.0, 0.25, 0
    trial = psi.copy()
    while t < 1.0:
        target = min(1.0, t + step)
        trial[:] = psi
        status, its, residual = _kernels.pb_newton(
            trial, g.link, g.volume, problem.kappa2, problem.ions, problem.model, _scaled_walls(problem.walls, target),
            _adaptive.NEWTON_TOLERANCE, max_iterations, _adaptive.MAX_STEP)
        iterations += its
        if status == 0:
            psi[:], t, step = trial, target, step * 2.0
        else:
            step *= 0.5
            if step < 1e-4:
                name = label() if callable(label) else label
                raise ConvergenceError(
                    f"{name}: Poisson-Boltzmann Newton iteration did not converge (continuation stalled "
                    f"at {t:.3g} of the wall values, scaled residual {residual:.2g})")
    return psi, iterations
