"""The compiled batch shares its rows between threads dynamically (``kernels.schedule``): each row is solved once,
and its values do not depend on the thread count, the order of the rows or where a chunk boundary falls.

Speed is measured by benchmarks/bench_scaling.py, not here (timings are no tests).
"""

from __future__ import annotations

import numba
import numpy as np
import pytest
from numba import njit, prange

import edl_solver as edl
from edl_solver.kernels import batch as _batch
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import schedule
from edl_solver.model import packing


def _vectors(count: int) -> np.ndarray:
    """Packed slit cases from thin to thick double layers (their Newton counts differ), KCl, zeta -60 mV."""
    cases = [edl.Case(geometry=edl.Slit(height=h), wall=edl.Wall(zeta=-0.06), field=1e3,
                      electrolyte=edl.Electrolyte.from_ions({"K+": c, "Cl-": c}))
             for h, c in zip(np.geomspace(3e-9, 1e-6, count), np.geomspace(100.0, 0.1, count)[::-1])]
    return np.array([packing.case_vector(c) for c in cases])


def _solve(vectors: np.ndarray, threads: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    n = vectors.shape[0]
    summaries = np.full((n, _layout.SUMMARY_SIZE), np.nan)
    status, iterations = np.full(n, -1, dtype=np.int64), np.full(n, -1, dtype=np.int64)
    before = numba.get_num_threads()
    numba.set_num_threads(threads)
    try:
        _batch.solve_cases(np.ascontiguousarray(vectors), summaries, status, iterations)
    finally:
        numba.set_num_threads(before)
    return summaries, status, iterations


@pytest.fixture(scope="module")
def vectors() -> np.ndarray:
    return _vectors(37)  # not a multiple of any chunk: the last chunk is short


@pytest.fixture(scope="module")
def one_thread(vectors: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return _solve(vectors, 1)


def test_every_row_is_solved(one_thread: tuple[np.ndarray, np.ndarray, np.ndarray]) -> None:
    summaries, status, iterations = one_thread
    assert (status == _batch.CONVERGED).all()
    assert (iterations > 0).all() and not np.isnan(summaries[:, _layout.Z_CENTRE_POTENTIAL]).any()


@pytest.mark.skipif(numba.config.NUMBA_NUM_THREADS < 2, reason="numba has one thread here")
def test_two_threads_give_the_values_of_one_bit_for_bit(vectors: np.ndarray, one_thread: tuple) -> None:
    for got, expected in zip(_solve(vectors, 2), one_thread):
        np.testing.assert_array_equal(got, expected)


def test_values_do_not_depend_on_the_order_of_the_rows(vectors: np.ndarray, one_thread: tuple) -> None:
    order = np.random.default_rng(16).permutation(vectors.shape[0])
    for got, expected in zip(_solve(vectors[order], numba.config.NUMBA_NUM_THREADS), one_thread):
        np.testing.assert_array_equal(got, expected[order])


def test_an_empty_batch_solves_nothing(vectors: np.ndarray) -> None:
    summaries, status, _ = _solve(vectors[:0], 2)
    assert summaries.shape[0] == status.shape[0] == 0


@pytest.mark.parametrize(("n", "size"), [(0, 1), (1, 1), (2047, 1), (2048, 2), (40_000, 16), (10**7, 16)])
def test_chunks_are_small_enough_to_share_and_never_empty(n: int, size: int) -> None:
    assert schedule.chunk_size(n) == size


@njit(parallel=True)
def _take_all(count: int, takes: int) -> np.ndarray:
    """Every index of a prange takes ``takes`` values of one shared counter; returns all values taken."""
    counter = np.zeros(1, dtype=np.int64)
    taken = np.empty((count, takes), dtype=np.int64)
    for i in prange(count):
        for k in range(takes):
            taken[i, k] = schedule.fetch_add(counter, 1)
    return taken.ravel()


@pytest.mark.skipif(numba.config.NUMBA_NUM_THREADS < 2, reason="numba has one thread here")
def test_the_counter_hands_out_each_value_once_under_contention() -> None:
    # a plain counter[0] += 1 in its place hands values out twice here (checked; common practice)
    taken = np.sort(_take_all(2, 2_000_000))  # long enough for the two threads to overlap
    np.testing.assert_array_equal(taken, np.arange(taken.size))
