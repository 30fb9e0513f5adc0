"""Compiled path of one solve: a packed case vector to its kernel inputs, the nested-grid solve and the summary,
in one call.

The same compiled steps as a single solve's Python path (``scaling.prepare``, ``equilibrium.solve_section``,
``_summary.summarize_solution``) and as a batch (``batch.solve_one``), so its values are theirs bit for bit;
one call instead of three saves the dispatch and the boxing of their inputs and outputs, about a quarter of
a warm solve. What the Python path adds on failure (continuation in the wall values, messages naming the
case) stays there: a case that does not converge here is solved again that way.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels import adaptive as _adaptive
from edl_solver.kernels.fv1d import response_offsets
from edl_solver.kernels.layout import CONVERGED
from edl_solver.kernels.prepare import section_inputs
from edl_solver.kernels.summary import summarize_solution

#: Status when a wall alone in the bulk has no balancing potential (``scaling.prepare`` raises on it).
NO_ISOLATED_WALL = -1


@njit(cache=True)
def solve_packed(p, accuracy, intervals, max_intervals, max_iterations, out):
    """Solve the packed case ``p`` from the Gouy-Chapman guess and fill its summary vector ``out``.

    Parameters
    ----------
    p : ndarray
        The packed case (``packing.case_vector``).
    accuracy, intervals, max_intervals, max_iterations
        The case's numerics (``intervals`` 0: adaptive), as ``_adaptive.solve_adaptive`` takes them.
    out : ndarray
        The summary vector (``layout.SLOTS``), filled when the solve converges.

    Returns
    -------
    status, iterations, estimate, residual, s, beta, psi, u_eo, u_p, scales, isolated, ion_matrix, matrix
        The status of ``_adaptive.solve_adaptive`` (or ``NO_ISOLATED_WALL``); its Newton iterations, error
        estimate and residual, the finest grid's computational nodes, stretching and profiles; the scales and
        isolated walls of ``_prepare.section_inputs``; the response matrices of the summary (empty unless
        CONVERGED).
    """
    (metric, half, kappa2, ions, model, walls, flow_walls, visco, guess, counter, sc,
     iso) = section_inputs(p)
    none = np.empty((0, 0))
    if not np.isfinite(iso).all():
        empty = np.empty(0)
        return NO_ISOLATED_WALL, 0, np.nan, np.nan, empty, np.nan, empty, empty, empty, sc, iso, none, none
    integrals = np.zeros(response_offsets(ions.shape[0])[3])
    status, iterations, estimate, residual, _, s, beta, psi, u_eo, u_p = _adaptive.solve_adaptive(
        metric, half, kappa2, ions, model, walls, flow_walls, visco, guess, counter, accuracy, intervals,
        max_intervals, max_iterations, np.empty(0), integrals)
    if status != CONVERGED:
        return status, iterations, estimate, residual, s, beta, psi, u_eo, u_p, sc, iso, none, none
    ion_matrix, matrix = summarize_solution(p, sc, iso, integrals, kappa2, s, beta, u_eo, estimate, out)
    return status, iterations, estimate, residual, s, beta, psi, u_eo, u_p, sc, iso, ion_matrix, matrix
