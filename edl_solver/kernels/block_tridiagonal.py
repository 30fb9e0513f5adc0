"""Compiled block-tridiagonal LU for the transient Poisson-Nernst-Planck Jacobian (``kernels.pnp_system``).

The unknowns of one node (the ions, the potential, the two velocities) form an m x m block; a node couples to
its two neighbours only, so the Jacobian is block tridiagonal: row j reads
``lower[j] y[j-1] + diag[j] y[j] + upper[j] y[j+1]``. Block Gaussian elimination (the block Thomas algorithm)
costs O(n m^3); each diagonal block is factored with partial pivoting inside the block (Golub & Van Loan,
Matrix Computations, 4th ed., sec. 4.5.1, from memory). The rows of a node are diagonally dominant in the
time-stepping matrix (mass plus a scaled Laplacian), which is what makes the elimination across blocks stable
without pivoting between them.
"""

from __future__ import annotations

import numpy as np
from numba import njit


@njit(cache=True, error_model="numpy")
def _factor_block(a, pivots):
    """LU with partial pivoting of the small square matrix ``a``, in place; False if it is singular."""
    m = a.shape[0]
    for k in range(m):
        best, row = abs(a[k, k]), k
        for i in range(k + 1, m):
            if abs(a[i, k]) > best:
                best, row = abs(a[i, k]), i
        pivots[k] = row
        if best == 0.0 or not np.isfinite(best):
            return False
        if row != k:
            for j in range(m):
                a[k, j], a[row, j] = a[row, j], a[k, j]
        inv = 1.0 / a[k, k]
        for i in range(k + 1, m):
            a[i, k] *= inv
            f = a[i, k]
            if f != 0.0:
                for j in range(k + 1, m):
                    a[i, j] -= f * a[k, j]
    return True


@njit(cache=True, error_model="numpy")
def _solve_block(lu, pivots, b):
    """Solve with a block factored by ``_factor_block``, in place on the vector ``b``."""
    m = lu.shape[0]
    for k in range(m):
        p = pivots[k]
        if p != k:
            b[k], b[p] = b[p], b[k]
    for i in range(1, m):
        s = b[i]
        for j in range(i):
            s -= lu[i, j] * b[j]
        b[i] = s
    for i in range(m - 1, -1, -1):
        s = b[i]
        for j in range(i + 1, m):
            s -= lu[i, j] * b[j]
        b[i] = s / lu[i, i]


@njit(cache=True, error_model="numpy")
def factor(lower, diag, upper, pivots, coupling):
    """Block LU of the block-tridiagonal matrix, in place: ``diag`` becomes the factored Schur blocks and
    ``coupling[j] = diag_j^-1 upper[j]``. Returns False if a block is singular.

    Shapes: (n, m, m) for the blocks, (n, m) integer ``pivots``.
    """
    n, m = diag.shape[0], diag.shape[1]
    column = np.empty(m)
    for j in range(n):
        if j > 0:  # diag_j -= lower_j coupling_{j-1}
            for a in range(m):
                for b in range(m):
                    s = 0.0
                    for c in range(m):
                        s += lower[j, a, c] * coupling[j - 1, c, b]
                    diag[j, a, b] -= s
        if not _factor_block(diag[j], pivots[j]):
            return False
        if j < n - 1:
            for b in range(m):
                for a in range(m):
                    column[a] = upper[j, a, b]
                _solve_block(diag[j], pivots[j], column)
                for a in range(m):
                    coupling[j, a, b] = column[a]
    return True


@njit(cache=True, error_model="numpy")
def solve(lower, diag, pivots, coupling, rhs):
    """Solve with the factors of ``factor``, in place on ``rhs`` of shape (n, m)."""
    n, m = rhs.shape[0], rhs.shape[1]
    for j in range(n):
        if j > 0:
            for a in range(m):
                s = 0.0
                for c in range(m):
                    s += lower[j, a, c] * rhs[j - 1, c]
                rhs[j, a] -= s
        _solve_block(diag[j], pivots[j], rhs[j])
    for j in range(n - 2, -1, -1):
        for a in range(m):
            s = 0.0
            for c in range(m):
                s += coupling[j, a, c] * rhs[j + 1, c]
            rhs[j, a] -= s
