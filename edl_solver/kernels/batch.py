"""Compiled batch of cases: packed case vectors in, summary vectors out, the cases in parallel (prange).

Each case goes through exactly the compiled steps of a single solve (``solver.solve``): its kernel inputs
(``_prepare.section_inputs``), the nested-grid solve from the Gouy-Chapman guess
(``_adaptive.solve_adaptive``) and the summary (``_summary.summarize_solution``), so a batch's
values equal single solves bit for bit. What a single solve adds on failure, continuation in the wall values
and a message naming the case, is left to the caller: a case that is not CONVERGED here is solved again
one by one.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from edl_solver.kernels import adaptive as _adaptive
from edl_solver.kernels.fv1d import response_offsets
from edl_solver.kernels.layout import CONVERGED, IDENTITY_FAILED
from edl_solver.kernels.prepare import section_inputs
from edl_solver.kernels.summary import identities_hold, summarize_solution
from edl_solver.model.packing import P_ACCURACY, P_INTERVALS, P_MAX_INTERVALS, P_MAX_ITERATIONS

# status codes of a case (the first three as _adaptive's)
ACCURACY_MISSED = _adaptive.ACCURACY_MISSED


@njit(cache=True)
def solve_one(p, out):
    """One packed case: fill its summary vector ``out``; returns the status and the Newton iterations."""
    (metric, half, kappa2, ions, model, walls, flow_walls, visco, guess, counter, sc,
     iso) = section_inputs(p)
    integrals = np.zeros(response_offsets(ions.shape[0])[3])
    status, iterations, estimate, _, _, s, beta, _, u_eo, _ = _adaptive.solve_adaptive(
        metric, half, kappa2, ions, model, walls, flow_walls, visco, guess, counter, p[P_ACCURACY],
        int(p[P_INTERVALS]), int(p[P_MAX_INTERVALS]), int(p[P_MAX_ITERATIONS]), np.empty(0), integrals)
    if status != CONVERGED:
        return status, iterations
    summarize_solution(p, sc, iso, integrals, kappa2, s, beta, u_eo, estimate, out)
    return (CONVERGED if identities_hold(out) else IDENTITY_FAILED), iterations


@njit(cache=True, parallel=True)
def solve_cases(vectors, summaries, status, iterations):
    """Row i of ``vectors`` (packed cases, all with the same number of ions) -> row i of ``summaries``
    (``_layout.SLOTS`` layout), ``status`` and ``iterations``; the rows run in parallel."""
    for i in prange(vectors.shape[0]):
        st, its = solve_one(vectors[i], summaries[i])
        status[i] = st
        iterations[i] = its

