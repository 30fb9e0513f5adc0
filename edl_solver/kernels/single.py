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
    solved = solve_adaptive(inputs.problem, controls(p), guess)
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

    Its results cross into Python as one flat tuple (numba boxes a flat tuple faster than nested records,
    a few microseconds of a ~30 us solve); ``model.section.SolvedSection`` names them.

    Returns
    -------
    tuple
        status, iterations, estimate, residual, s, beta, psi, u_eo, u_p of the solve (``SectionSolve``), the
        scales (``layout.S_*``), the isolated walls (``layout.ISO_*`` rows; not finite when a wall alone in the
        bulk has no balancing potential, and then nothing else is meaningful), the ion-resolved and reduced
        response matrices and the slip velocities per unit field of ``solve_summarized``.
    """
    inputs = section_inputs(p)
    solved, ion_matrix, matrix, slip = solve_summarized(p, inputs, np.empty(0), out)
    return (solved.status, solved.iterations, solved.estimate, solved.residual, solved.s, solved.beta, solved.psi,
            solved.u_eo, solved.u_p, inputs.scales, inputs.isolated, ion_matrix, matrix, slip)
