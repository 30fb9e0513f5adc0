"""Compiled identity checks of a discrete solution: charge balance and Onsager reciprocity hold to round-off
in this scheme, so a larger residual means a failed solve, never an answer."""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels.adaptive import POTENTIAL_FLOOR
from edl_solver.kernels.layout import (
    AXISYMMETRIC,
    I_FLUX_LEFT,
    I_FLUX_RIGHT,
    I_PSI_LEFT,
    I_PSI_RIGHT,
    I_RHO,
    I_RHO_UP,
    I_UEO,
    P_METRIC,
    P_SYMMETRIC,
)

#: Discrete identities (charge balance, Onsager reciprocity) hold to round-off; beyond this a solve is
#: declared failed rather than returned.
IDENTITY_TOLERANCE = 1e-8


@njit(cache=True, error_model="numpy")
def identity_residuals(p, kappa2, integrals, ion_matrix):
    """Charge balance and reciprocity of the discrete solution (a solve fails beyond ``IDENTITY_TOLERANCE``).

    Both are exact identities of the scheme: the operator is symmetric and the wall charge comes from the
    end cells' balance. Reciprocity (Onsager 1931): the streaming current per pressure gradient equals the
    EO flow rate per field, int u_eo dV = -kappa2 int rho u_p dV, and the whole ion-resolved matrix is
    symmetric (each entry measured against its row and column scale).
    """
    half = p[P_SYMMETRIC] != 0.0
    left = 0.0 if half else integrals[I_FLUX_LEFT]  # a half section starts at the centre, not at a wall
    wall = abs(left) + abs(integrals[I_FLUX_RIGHT]) + POTENTIAL_FLOOR * max(1.0, np.sqrt(kappa2))
    balance = abs(kappa2 * integrals[I_RHO] + integrals[I_FLUX_RIGHT] + left) / wall
    eo, streaming = integrals[I_UEO], -kappa2 * integrals[I_RHO_UP]
    if p[P_METRIC] == AXISYMMETRIC:
        measure = 0.5  # int r dr over the radius
    else:
        measure = 1.0 if half else 2.0
    wall_scale = max(abs(integrals[I_PSI_LEFT]), abs(integrals[I_PSI_RIGHT]), POTENTIAL_FLOOR) * measure
    reciprocity = abs(eo - streaming) / max(abs(eo), abs(streaming), wall_scale, 1e-300)
    onsager = 0.0
    for a in range(ion_matrix.shape[0]):
        for b in range(a):
            size = np.sqrt(abs(ion_matrix[a, a])) * np.sqrt(abs(ion_matrix[b, b]))
            onsager = max(onsager, abs(ion_matrix[a, b] - ion_matrix[b, a]) / size)
    return balance, max(reciprocity, onsager)
