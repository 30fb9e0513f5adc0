"""Compiled part of a single solve (``pipeline.solve``) after its inputs are prepared: the nested-grid solve and,
when it converged, the summary, in one call, so that the records cross from Python to the kernels once.

The steps are exactly those of a batch case (``batch.solve_one``), so single solves and sweeps agree bit for bit.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels.adaptive import solve_adaptive
from edl_solver.kernels.layout import CONVERGED
from edl_solver.kernels.prepare import controls, section_inputs
from edl_solver.kernels.summary import summarize
from edl_solver.kernels.thin_layer import outer_deviation, thin_slip

#: Rows of ``solve_packed``'s ``nodes``: computational nodes s, psi, u_eo, u_p of the finest grid.
NODE_ROWS = 4


@njit(cache=True)
def solve_summarized(p, inputs, guess, out):
    """Solve the section of the case vector ``p`` (prepared as ``inputs``, ``prepare.section_inputs``) with its
    numerics from ``guess`` (empty: the Gouy-Chapman guess) and, when it converged, fill its summary vector
    ``out``.

    Returns
    -------
    SectionSolve, ndarray, ndarray, ndarray
        The solve's record, the ion-resolved and reduced response matrices (empty unless converged) and the
        Helmholtz-Smoluchowski slip velocities per unit field of the (bottom, top) isolated walls
        (``thin_layer.thin_slip``).
    """
    slip = thin_slip(p, inputs.isolated)
    solved = solve_adaptive(inputs.problem, controls(p), guess, p, inputs.scales)
    if solved.status != CONVERGED:
        return solved, np.empty((0, 0)), np.empty((0, 0)), slip
    # as summary.summarize_solution, with the slip computed once
    deviation = outer_deviation(solved.s, solved.beta, solved.u_eo, p, inputs.scales, slip)
    ion_matrix, matrix = summarize(p, inputs, solved, slip, deviation, out)
    return solved, ion_matrix, matrix, slip


@njit(cache=True)
def solve_packed(p, out):
    """``solve_summarized`` of the packed case ``p`` from the Gouy-Chapman guess, its kernel inputs built here
    too (``prepare.section_inputs``): a whole single solve in one compiled call.

    Its results cross into Python as one flat tuple with few arrays (numba boxes each array it returns, ~0.25 us
    apiece, and nested records slower still); ``model.section.SolvedSection`` names them.

    Returns
    -------
    tuple
        usable (converged, and every isolated wall has its balancing potential: otherwise nothing else is
        meaningful), iterations, estimate, residual and beta of the solve (``SectionSolve``); ``nodes``, the
        rows s, psi, u_eo, u_p of the finest grid; ``small``, the scales (``layout.S_*``), the isolated walls
        (``layout.ISO_*`` rows, flattened) and the slip velocities per unit field of ``solve_summarized``; the
        ion-resolved and reduced response matrices.
    """
    inputs = section_inputs(p)
    solved, ion_matrix, matrix, slip = solve_summarized(p, inputs, np.empty(0), out)
    usable = solved.status == CONVERGED and np.isfinite(inputs.isolated).all()
    nodes = np.empty((NODE_ROWS, solved.s.size))
    nodes[0], nodes[1], nodes[2], nodes[3] = solved.s, solved.psi, solved.u_eo, solved.u_p
    small = np.concatenate((inputs.scales, inputs.isolated.ravel(), slip))
    return usable, solved.iterations, solved.estimate, solved.residual, solved.beta, nodes, small, ion_matrix, matrix
