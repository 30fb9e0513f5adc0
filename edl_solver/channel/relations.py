"""The salt of a channel and its reduced response matrix: the small pieces that the table (``model``), the
path along the channel (``quadrature``, ``path``) and the operating functions (``operating``) share.

The salt is the electrolyte with every ion in its reservoir ratio; its concentration c is the first ion's.
"""

from __future__ import annotations

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.model.bulk import salt_stoichiometry

__all__ = ["SaltRatios", "reduce_matrices"]


def reduce_matrices(ion_matrices: np.ndarray, basis: np.ndarray) -> np.ndarray:
    """M = B^T L B (``kernels.response.reduced_matrix``) for a stack of ion matrices."""
    return np.einsum("ai,kab,bj->kij", basis, ion_matrices, basis)


class SaltRatios:
    """Sum of nu_i and sum_i c_i per unit salt concentration (the electrolyte's fixed ratios)."""

    def __init__(self, case: Case):
        ions = case.electrolyte.ions
        self.total_nu = float(np.sum(salt_stoichiometry(case)))
        self.total_concentration = sum(i.concentration for i in ions) / ions[0].concentration
