"""Equilibrium double layer and flow across one section, with grid refinement and error control.

Solves the discrete Poisson-Boltzmann (or Debye-Hueckel) equation with a damped Newton iteration on
nested wall-clustered grids (see grid.py and _kernels.py), then the two Stokes problems, and
extrapolates every section integral from the three finest grids (Richardson, errors in h^2 and h^4
removed). The same extrapolation from the three coarsest of four grids gives an error estimate; the
grid is refined until that estimate meets the requested accuracy.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from edl_solver import _kernels, grid
from edl_solver.errors import ConvergenceError
from edl_solver.scaling import SectionProblem

#: Newton stops when a full step is below this (kT/e).
NEWTON_TOLERANCE = 1e-11
#: Newton steps are capped at this size (kT/e) before the line search.
MAX_STEP = 5.0
LEVELS = 4


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


def initial_guess(problem: SectionProblem, x: np.ndarray) -> np.ndarray:
    """Superposed Gouy-Chapman profiles from the walls (Gouy 1910; Chapman 1913).

    psi_wall(d) = (4/z) artanh[tanh(z psi_w / 4) exp(-kappa d)] for each wall, z the counter-ion
    valence; the mirror wall of a half section counts as the second wall.
    """
    kappa = math.sqrt(problem.kappa2)
    left, right = problem.wall_potential_guess
    z_left, z_right = problem.counter_valence
    if problem.half:
        left, z_left = right, z_right
    distances = (x + 1.0, 1.0 - x)
    psi = np.zeros_like(x)
    for value, z, d in zip((left, right), (z_left, z_right), distances):
        psi += 4.0 / z * np.arctanh(np.tanh(z * value / 4.0) * np.exp(-kappa * d))
    return psi


def inner_length(problem: SectionProblem) -> float:
    """Smallest scale of the layer in units of L: lambda_D, shrunk by the Gouy-Chapman factor
    2 exp(-z |psi_w| / 2) at high wall potentials (the width of the steep innermost part)."""
    worst = max(abs(v) * z for v, z in zip(problem.wall_potential_guess, problem.counter_valence))
    return min(1.0, 2.0 * math.exp(-0.5 * worst)) / math.sqrt(problem.kappa2)


def _starting_intervals(problem: SectionProblem, accuracy: float, beta: float) -> int:
    """Cells per half section for the first try: more for stiff layers and tight accuracy."""
    wanted = max(32.0, 8.0 * beta) * max(1.0, (1e-6 / accuracy) ** (1.0 / 6.0))
    return int(2 ** math.ceil(math.log2(wanted)))


def _extrapolate(fine: np.ndarray, medium: np.ndarray, coarse: np.ndarray) -> np.ndarray:
    """Richardson extrapolation removing h^2 and h^4 error terms (each grid halves the spacing)."""
    return (64.0 * fine - 20.0 * medium + coarse) / 45.0


def _scale(values: np.ndarray, measure: float, n_ions: int) -> np.ndarray:
    """Magnitudes that the errors of the integrals are measured against (nonzero even when a value
    vanishes, e.g. the centre potential of a wide channel: then relative to the wall value)."""
    k = _kernels
    psi_scale = max(abs(values[k.I_PSI_LEFT]), abs(values[k.I_PSI_RIGHT]), 1e-300)
    wall_charge = abs(values[k.I_FLUX_LEFT]) + abs(values[k.I_FLUX_RIGHT]) + 1e-300
    up_scale = abs(values[k.I_UP]) / measure
    scale = np.abs(values).copy()
    floor = np.zeros_like(values)
    floor[[k.I_PSI, k.I_UEO]] = psi_scale * measure
    floor[[k.I_PSI_LEFT, k.I_PSI_RIGHT, k.I_PSI_CENTRE]] = psi_scale
    floor[[k.I_RHO, k.I_FLUX_LEFT, k.I_FLUX_RIGHT]] = wall_charge
    floor[k.I_RHO_UEO] = wall_charge * psi_scale
    floor[k.I_RHO_UP] = wall_charge * up_scale
    floor[k.ION_INTEGRALS:k.ION_INTEGRALS + n_ions] = measure
    return np.maximum(np.maximum(scale, floor), 1e-300)


def solve_section(problem: SectionProblem, accuracy: float, intervals: int | None = None,
                  max_iterations: int = 200, max_intervals: int = 4096, label: str = "") -> SectionSolution:
    """Solve one section to the requested relative ``accuracy``.

    Raises
    ------
    ConvergenceError
        If Newton fails even with continuation in the wall values, or the error estimate misses
        ``accuracy`` at ``max_intervals`` cells per half section. ``label`` names the case.
    """
    inner = inner_length(problem)
    beta = grid.stretching(inner)
    n_half = intervals or _starting_intervals(problem, accuracy, beta)
    n_ions = problem.valence.size
    psi = None
    iterations = 0
    while True:
        g = grid.build(n_half, "half" if problem.half else "full", problem.metric, inner)
        if psi is None:
            psi = initial_guess(problem, g.x)
        integrals = np.zeros((LEVELS, _kernels.ION_INTEGRALS + n_ions))
        u_eo, u_p = np.empty_like(psi), np.empty_like(psi)
        status, its, residual = _kernels.richardson_solve(
            g.s, g.beta, problem.metric, problem.kappa2, problem.valence, problem.weight, problem.linear,
            problem.bc_type, problem.bc_value, g.centre, problem.flow_type, problem.flow_value,
            psi, u_eo, u_p, LEVELS, NEWTON_TOLERANCE, max_iterations, MAX_STEP, integrals)
        iterations += its
        if status != 0:
            psi, its = _continuation(problem, g, max_iterations, label)
            iterations += its
            continue
        best = _extrapolate(integrals[3], integrals[2], integrals[1])
        lower = _extrapolate(integrals[2], integrals[1], integrals[0])
        measure = float(np.sum(g.volume))
        estimate = float(np.max(np.abs(best - lower) / _scale(best, measure, n_ions))) / 8.0
        if estimate <= accuracy or intervals is not None:
            return SectionSolution(g, psi, u_eo, u_p, best, estimate, iterations, residual)
        if 2 * n_half > max_intervals:
            raise ConvergenceError(
                f"{label}: the grid error estimate {estimate:.2g} is above the requested accuracy "
                f"{accuracy:.2g} with {n_half} cells per half section; raise numerics.max_intervals "
                "or loosen numerics.accuracy")
        fine = np.empty(2 * psi.size - 1)
        _kernels._prolong(psi, fine)
        psi = fine
        n_half *= 2


def _continuation(problem: SectionProblem, g: grid.Grid, max_iterations: int, label: str
                  ) -> tuple[np.ndarray, int]:
    """Reach the wall values in steps from zero when Newton fails from the initial guess.

    The step in the continuation parameter t (wall values times t) doubles after a success and halves
    after a failure; each solve starts from the previous solution.
    """
    psi = np.zeros(g.x.size)
    t, step, iterations = 0.0, 0.25, 0
    trial = psi.copy()
    while t < 1.0:
        target = min(1.0, t + step)
        trial[:] = psi
        status, its, residual = _kernels.pb_newton(
            trial, g.link, g.volume, problem.kappa2, problem.valence, problem.weight, problem.linear,
            problem.bc_type, problem.bc_value * target, NEWTON_TOLERANCE, max_iterations, MAX_STEP)
        iterations += its
        if status == 0:
            psi[:], t, step = trial, target, step * 2.0
        else:
            step *= 0.5
            if step < 1e-4:
                raise ConvergenceError(
                    f"{label}: Poisson-Boltzmann Newton iteration did not converge (continuation stalled "
                    f"at {t:.3g} of the wall values, scaled residual {residual:.2g})")
    return psi, iterations
