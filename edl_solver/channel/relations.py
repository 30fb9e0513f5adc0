"""The salt of a channel and its reduced response matrix: the small pieces that the table (``model``), the
path along the channel (``quadrature``, ``path``) and the operating functions (``operating``) share.

The salt is the electrolyte with every ion in its reservoir ratio; its concentration c is the first ion's.
"""

from __future__ import annotations

import numpy as np

from edl_solver.constants import FARADAY
from edl_solver.inputs.case import Case
from edl_solver.model.bulk import salt_stoichiometry

__all__ = ["SaltRatios", "basis_of", "reduce_matrices", "zero_current_gradient"]


def reduce_matrices(ion_matrices: np.ndarray, basis: np.ndarray) -> np.ndarray:
    """M = B^T L B (``kernels.response.reduced_matrix``) for a stack of ion matrices (stacked matmul: several times
    faster than the equivalent einsum on the small matrices of every point along a channel)."""
    return basis.T @ ion_matrices @ basis


class SaltRatios:
    """Sum of nu_i and sum_i c_i per unit salt concentration (the electrolyte's fixed ratios)."""

    def __init__(self, case: Case):
        ions = case.electrolyte.ions
        self.total_nu = float(np.sum(salt_stoichiometry(case)))
        self.total_concentration = sum(i.concentration for i in ions) / ions[0].concentration


def basis_of(case: Case) -> np.ndarray:
    """The (1 + n) x 3 matrix B of ``kernels.response.reduced_matrix``: M = B^T L B."""
    valence = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
    total = float(np.sum(salt_stoichiometry(case)))
    basis = np.zeros((valence.size + 1, 3))
    basis[0, 0] = 1.0
    basis[1:, 1] = valence * FARADAY
    basis[1:, 2] = 1.0 / total
    return basis


def zero_current_gradient(matrices: np.ndarray, rt: float, total_nu: float, total_c: np.ndarray) -> np.ndarray:
    """dV/d ln c at zero current and no hydrostatic gradient: X_P = RT sum c_i, X_s = -RT sum nu per unit
    d ln c/dx, E = -(M_IP X_P + M_Is X_s) / M_II (as ``kernels.lab.lab_quantities``)."""
    x_p, x_s = rt * total_c, -rt * total_nu
    return (matrices[:, 1, 0] * x_p + matrices[:, 1, 2] * x_s) / matrices[:, 1, 1]
