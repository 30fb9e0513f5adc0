"""One cross-section solved and summarised: the equilibrium double layer, the flow and every summary value.

The compiled path (``_single.solve_packed``) runs the kernel inputs, the nested-grid solve from the
Gouy-Chapman guess and the compiled summary in one call. A case it does not converge goes the Python path,
which adds continuation in the wall values and raises ConvergenceError naming the case (``scaling.prepare``,
``equilibrium.solve_section``); both run the same compiled steps on the same inputs, so their values agree bit
for bit.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import single as _single
from edl_solver.kernels import summary as _summary
from edl_solver.model import equilibrium, scaling


class SolvedSection(NamedTuple):
    """A converged section (dimensionless, see ``scaling.py``) with its summary.

    Attributes
    ----------
    iterations : int
        Newton iterations, all grids (and continuation steps) together.
    estimate : float
        Estimated relative error of the extrapolated integrals.
    residual : float
        Max row-scaled residual on the finest grid (kT/e).
    s, beta
        Computational nodes and stretching of the finest grid (``grid.from_nodes``).
    psi, u_eo, u_p : ndarray
        Profiles on the finest grid.
    scales, isolated : ndarray
        The ``_prepare`` scales vector (``scaling.Scales``) and the (2, 2) isolated walls (zeta V, sigma C/m^2).
    ion_matrix, matrix : ndarray
        Ion-resolved and reduced response matrices (``_summary.summarize``).
    """

    iterations: int
    estimate: float
    residual: float
    s: np.ndarray
    beta: float
    psi: np.ndarray
    u_eo: np.ndarray
    u_p: np.ndarray
    scales: np.ndarray
    isolated: np.ndarray
    ion_matrix: np.ndarray
    matrix: np.ndarray

    @property
    def units(self) -> scaling.Scales:
        """The SI values of the dimensionless units."""
        return scaling.Scales(*self.scales.tolist())


def solve_and_summarize(vector: np.ndarray, case: Case, values: np.ndarray) -> SolvedSection:
    """Solve the packed case ``vector`` (``packing.case_vector(case)``) and fill its summary vector ``values``
    (``_layout.SLOTS``).

    Raises
    ------
    ConvergenceError
        If Newton fails even with continuation in the wall values, the error estimate misses the accuracy at
        ``numerics.max_intervals``, or a wall alone in the bulk has no solution; the message names the case.
    """
    numerics = case.numerics
    solved = _single.solve_packed(vector, numerics.accuracy, numerics.intervals or 0, numerics.max_intervals,
                                  numerics.max_iterations, values)
    if solved[0] == _layout.CONVERGED:
        return SolvedSection._make(solved[1:])  # after the status
    return _with_continuation(case, values)


def _with_continuation(case: Case, values: np.ndarray) -> SolvedSection:
    """The Python path: the same compiled steps, with continuation when Newton fails from the guess."""
    prepared = scaling.prepare(case)
    numerics = case.numerics
    section = equilibrium.solve_section(prepared.problem, numerics.accuracy, numerics.intervals,
                                        numerics.max_iterations, numerics.max_intervals, case.describe)
    ion_matrix, matrix = _summary.summarize_solution(
        prepared.vector, prepared.scale_vector, prepared.isolated_array, section.integrals, prepared.problem.kappa2,
        section.grid.s, section.grid.beta, section.u_eo, section.error_estimate, values)
    return SolvedSection(section.iterations, section.error_estimate, section.residual, section.grid.s,
                         section.grid.beta, section.psi, section.u_eo, section.u_p, prepared.scale_vector,
                         prepared.isolated_array, ion_matrix, matrix)
