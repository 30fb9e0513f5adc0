"""Compiled batch of cases: packed case vectors in, summary vectors out, the cases in parallel (prange).

Each case goes through exactly the compiled steps of a single solve (``pipeline.solve``): its kernel inputs
(``prepare.section_inputs``), the nested-grid solve from the Gouy-Chapman guess (``adaptive.solve_adaptive``)
and the summary (``summary.summarize_solution``), so a batch's values equal single solves bit for bit. What a
single solve adds on failure, continuation in the wall values and a message naming the case, is left to the
caller: a case that is not CONVERGED here is solved again one by one.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from edl_solver.kernels.adaptive import solve_adaptive
from edl_solver.kernels.layout import CONVERGED, IDENTITY_FAILED
from edl_solver.kernels.prepare import controls, section_inputs
from edl_solver.kernels.schedule import chunk_size, fetch_add
from edl_solver.kernels.summary import identities_hold, summarize_solution


@njit(cache=True)
def solve_one(p, out):
    """One packed case: fill its summary vector ``out``; returns the status and the Newton iterations."""
    inputs = section_inputs(p)
    solved = solve_adaptive(inputs.problem, controls(p), np.empty(0), p, inputs.scales)
    if solved.status != CONVERGED:
        return solved.status, solved.iterations
    summarize_solution(p, inputs, solved, out)
    return (CONVERGED if identities_hold(out) else IDENTITY_FAILED), solved.iterations


@njit(cache=True, parallel=True)
def solve_cases(vectors, summaries, status, iterations):
    """Row i of ``vectors`` (packed cases, all with the same number of ions) -> row i of ``summaries``
    (``layout.SLOTS`` layout), ``status`` and ``iterations``; the rows run in parallel.

    Each thread takes chunks of consecutive rows from a shared counter (``schedule``) until none is left, rather
    than one fixed block of the range each: cases of unequal cost, or a thread that loses its core for a while,
    then hold the others up by one chunk at most. Every row is solved on its own, so the values do not depend on
    the number of threads or on which thread solved a row.
    """
    n = vectors.shape[0]
    size = chunk_size(n)
    chunks = (n + size - 1) // size
    taken = np.zeros(1, dtype=np.int64)  # chunks handed out so far
    # numba gives each thread a block of this range: the first index of a thread's block takes chunks until none
    # is left, so its other indices find none (the thread count is not known here: see schedule.MIN_CHUNKS)
    for _ in prange(chunks):
        chunk = fetch_add(taken, 1)
        while chunk < chunks:
            for i in range(chunk * size, min(n, (chunk + 1) * size)):
                st, its = solve_one(vectors[i], summaries[i])
                status[i] = st
                iterations[i] = its
            chunk = fetch_add(taken, 1)
