"""Equilibrium double layer and flow across one section, with grid refinement and error control.

Solves the discrete Poisson-Boltzmann (or Debye-Hueckel) equation with a damped Newton iteration on
nested wall-clustered grids, then the two Stokes problems, and extrapolates every section integral
(Richardson); the grid is refined until the error estimate meets the requested accuracy. The compiled
driver is ``kernels.adaptive.solve_adaptive``; this module adds the fallback of continuation in the wall
values when Newton fails from the Gouy-Chapman guess, and turns failures into ``ConvergenceError``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from edl_solver.errors import ConvergenceError
from edl_solver.kernels import adaptive as _adaptive
from edl_solver.kernels import fv1d as _kernels
from edl_solver.kernels import single as _single
from edl_solver.kernels.layout import (
    ACCURACY_MISSED,
    CONVERGED,
    DH,
    MAX_SITES,
    NEWTON_FAILED,
    P_ACCURACY,
    P_MAX_ITERATIONS,
    SITE_DENSITY,
    SITE_SIZE,
    W_GATE_V,
    W_SIGMA,
    W_SITE0,
    W_VALUE,
)
from edl_solver.kernels.records import Controls, SectionProblem, SectionSolve
from edl_solver.model import grid
from edl_solver.model.scaling import Prepared

#: The start of a solve from the Gouy-Chapman guess (no profile given).
_NO_GUESS = np.empty(0)
#: z |psi_w| (kT/e) above which tanh(z psi_w / 4) rounds to 1: the Gouy-Chapman guess saturates.
SATURATED_POTENTIAL = 76.0
#: z |psi_w| (kT/e) the grid and start of a saturated case are built for instead.
TAME_POTENTIAL = 20.0
#: z |psi_w| (kT/e) the grid and start of a Debye-Hueckel case that failed are built for (its layer's scale is
#: the Debye length: the Gouy-Chapman factor 2 exp(-z |psi_w| / 2) of ``adaptive.inner_length`` is then ~1).
DH_POTENTIAL = 2.0


@dataclass(frozen=True)
class SectionSolution:
    """Dimensionless solution of one section (see scaling.py for the units).

    Attributes
    ----------
    grid : Grid
        Finest grid.
    solved : SectionSolve
        The compiled solve's record (``kernels.records``): integrals, profiles, error estimate.
    iterations : int
        Newton iterations, all grids, refinements and any continuation together.
    """

    grid: grid.Grid
    solved: SectionSolve
    iterations: int

    @property
    def psi(self) -> np.ndarray:
        """Potential on the finest grid (kT/e; fourth-order accurate after the Richardson correction)."""
        return self.solved.psi

    @property
    def u_eo(self) -> np.ndarray:
        """EO velocity per unit field on the finest grid (units of eps kT / (e eta))."""
        return self.solved.u_eo

    @property
    def u_p(self) -> np.ndarray:
        """Pressure-driven velocity per unit gradient on the finest grid (units of L^2 / eta)."""
        return self.solved.u_p

    @property
    def integrals(self) -> np.ndarray:
        """Richardson-extrapolated section integrals, layout ``layout.I_*``."""
        return self.solved.integrals

    @property
    def error_estimate(self) -> float:
        """Estimated relative error of the extrapolated integrals."""
        return self.solved.estimate

    @property
    def residual(self) -> float:
        """Max row-scaled residual on the finest grid (kT/e)."""
        return self.solved.residual


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
    controls = Controls(float(accuracy), int(intervals or 0), int(max_intervals), int(max_iterations))
    def run(guess: np.ndarray, posed: SectionProblem) -> tuple:
        return (_adaptive.solve_adaptive(posed, controls, guess, _NO_GUESS, _NO_GUESS),)  # no summary: no case

    section, _ = _settle(problem, run, accuracy, max_iterations, label)
    return section


def solve_summarized(prepared: Prepared, out: np.ndarray, label: str | Callable[[], str] = ""
                     ) -> tuple[SectionSolution, np.ndarray, np.ndarray, np.ndarray]:
    """``solve_section`` of a prepared case with its own numerics, and its summary vector ``out``
    (``layout.SLOTS``) filled by the same compiled call (``kernels.single.solve_summarized``).

    Returns
    -------
    SectionSolution, ndarray, ndarray, ndarray
        The solution, the ion-resolved and reduced response matrices, and the slip velocities per unit field
        of the isolated (bottom, top) walls (``kernels.thin_layer.thin_slip``).

    Raises
    ------
    ConvergenceError
        As ``solve_section``.
    """
    vector, inputs = prepared.vector, prepared.inputs
    section, (ion_matrix, matrix, slip) = _settle(
        inputs.problem, lambda guess, posed: _single.solve_summarized(vector, inputs._replace(problem=posed), guess,
                                                                      out),
        float(vector[P_ACCURACY]), int(vector[P_MAX_ITERATIONS]), label)
    return section, ion_matrix, matrix, slip


def _settle(problem: SectionProblem, run: Callable[[np.ndarray], tuple], accuracy: float, max_iterations: int,
            label: str | Callable[[], str]) -> tuple[SectionSolution, tuple]:
    """Run the compiled solve (``run(guess, problem)`` returns its ``SectionSolve`` first, then anything else)
    from the Gouy-Chapman guess, again after a continuation when Newton failed (and, for a saturated wall
    potential, on a tamer grid: ``_tamed``), and turn a failure into a ``ConvergenceError``. Returns the
    solution and the rest of the last run's outcome."""
    solved, *rest = run(_NO_GUESS, problem)
    iterations = solved.iterations
    if solved.status == NEWTON_FAILED:
        tame = _tamed(problem)
        try:
            solved, rest, its = _continued(problem, run, solved.intervals, max_iterations, label)
            iterations += its
        except ConvergenceError:
            if tame is None:
                raise
        if tame is not None and solved.status == NEWTON_FAILED:
            solved, *rest = run(_NO_GUESS, tame)
            iterations += solved.iterations
            if solved.status == NEWTON_FAILED:
                solved, rest, its = _continued(tame, run, solved.intervals, max_iterations,
                                               lambda: _far_label(problem, label))
                iterations += its
    if solved.status != CONVERGED and callable(label):  # built only when a message needs it
        label = label()
    if solved.status == NEWTON_FAILED:
        raise ConvergenceError(f"{label}: Poisson-Boltzmann Newton iteration did not converge on the "
                               f"refined grid (scaled residual {solved.residual:.2g})")
    if solved.status == ACCURACY_MISSED:
        raise ConvergenceError(
            f"{label}: the grid error estimate {solved.estimate:.2g} is above the requested accuracy "
            f"{accuracy:.2g} with {solved.intervals} cells per half section; raise numerics.max_intervals or "
            "loosen numerics.accuracy")
    finest = grid.from_cells(solved.s, solved.beta, problem.metric, solved.cells)
    return SectionSolution(finest, solved, iterations), tuple(rest)


def _continued(problem: SectionProblem, run: Callable[[np.ndarray, SectionProblem], tuple], intervals: int,
               max_iterations: int, label: str | Callable[[], str]) -> tuple[object, list, int]:
    """``run`` from the end of a continuation (``_continuation``): the solve record, the rest and the iterations."""
    guess, its = _continuation(problem, intervals, max_iterations, label)
    solved, *rest = run(guess, problem)
    return solved, rest, its + solved.iterations


def _tamed(problem: SectionProblem) -> SectionProblem | None:
    """The problem with the wall potentials that set its grid and start capped, or None when none is above the
    cap: z |psi_w| above ``SATURATED_POTENTIAL`` capped at ``TAME_POTENTIAL``, and for the Debye-Hueckel model
    any above ``DH_POTENTIAL`` capped at it.

    Above ``SATURATED_POTENTIAL`` (a Debye-Hueckel wall of large fixed charge gives hundreds of kT/e) the
    Gouy-Chapman guess saturates in double precision and the wall cells it asks for are far below the precision
    of the grid. A Debye-Hueckel layer has no Gouy-Chapman steepening at all: its smallest scale is the Debye
    length at any potential, and cells far thinner only spoil the precision. The equations are the same, only
    the grid and the start differ. Used only after the solve failed, so converging cases keep their grid.
    """
    reduced = np.abs(problem.wall_potential_guess) * problem.counter_valence
    cap = DH_POTENTIAL if problem.model == DH else TAME_POTENTIAL
    if not reduced.max() > (DH_POTENTIAL if problem.model == DH else SATURATED_POTENTIAL):
        return None
    capped = np.sign(problem.wall_potential_guess) * np.minimum(reduced, cap) / problem.counter_valence
    return problem._replace(wall_potential_guess=capped)


def _far_label(problem: SectionProblem, label: str | Callable[[], str]) -> str:
    """The case's name with its wall potential, for the refusal of a case whose tamer grid failed too."""
    name = label() if callable(label) else label
    worst = float(np.max(np.abs(problem.wall_potential_guess) * problem.counter_valence))
    beyond = ("far beyond the Debye-Hueckel linearisation's validity (|z e psi / kT| < 1)" if problem.model == DH
              else f"above the {SATURATED_POTENTIAL:g} up to which the solver resolves its layer")
    return f"{name}: the wall alone in the bulk would sit at |z e psi / kT| = {worst:.3g}, {beyond}"


def _scaled_walls(rows: np.ndarray, t: float) -> np.ndarray:
    """Wall rows with their driving values scaled by t (continuation from uncharged walls at t = 0)."""
    scaled = rows.copy()
    scaled[:, W_VALUE] *= t
    scaled[:, W_SIGMA] *= t
    scaled[:, W_GATE_V] *= t
    for j in range(MAX_SITES):
        scaled[:, W_SITE0 + j * SITE_SIZE + SITE_DENSITY] *= t
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
        status, its, residual = _kernels.pb_newton(trial, g.cells, problem, _scaled_walls(problem.walls, target),
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
