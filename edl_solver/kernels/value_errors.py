"""Compiled error estimate of the lab values that are differences of response-matrix terms.

The nested-grid driver (``kernels.adaptive``) measures the error of every section integral against its own
size, and the summary values that are sums or ratios of integrals inherit that accuracy. The diffusio-osmotic
flow, the diffusion potential and the transference are different: each is a difference of terms weighted by the
ion diffusivities (the zero-current field from the salt and pressure couplings, the flow it drives against the
chemiosmotic flow), which may nearly cancel, so an integral accurate to 1e-6 can leave them at 1e-4 of their own
size. They are estimated here the way the integrals are: from the two Richardson extrapolations of the same
nested grids, each against its own size, or against the size of its terms where it vanishes.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import GAS_CONSTANT
from edl_solver.kernels.lab import cation_transference
from edl_solver.kernels.layout import P_TEMPERATURE
from edl_solver.kernels.prepare import ion_block
from edl_solver.kernels.response import ion_response_matrix, reduced_matrix, salt_totals

#: Number of values ``_differences`` returns (value, natural scale pairs follow them).
DIFFERENCES = 3


@njit(cache=True, error_model="numpy")
def _differences(p, sc, integrals, values, natural):
    """The diffusio-osmotic flow, the diffusion potential and the cation transference of the integrals (as
    ``lab.lab_quantities`` and ``lab.cation_transference`` compute them) into ``values``, and the sizes of the
    terms each is a difference of into ``natural`` (1 for the transference, a fraction)."""
    ion_matrix = ion_response_matrix(p, sc, integrals)
    m = reduced_matrix(p, ion_matrix)
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    total_c, total_nu = salt_totals(ion_block(p))
    x_p, x_s = rt * total_c, -rt * total_nu
    field = -(m[1, 0] * x_p + m[1, 2] * x_s) / m[1, 1]
    values[0] = m[0, 0] * x_p + m[0, 1] * field + m[0, 2] * x_s
    natural[0] = abs(m[0, 0] * x_p) + abs(m[0, 1] * field) + abs(m[0, 2] * x_s)
    values[1] = -field
    natural[1] = (abs(m[1, 0] * x_p) + abs(m[1, 2] * x_s)) / abs(m[1, 1])
    values[2] = cation_transference(p, ion_matrix)
    natural[2] = 1.0


@njit(cache=True, error_model="numpy")
def difference_error(p, sc, fine, coarse, vanishing):
    """Error estimate of the cancelling lab values from the extrapolated integrals of the three finest grids
    (``fine``) and of the three coarsest (``coarse``): the largest |fine - coarse| / 8 (as the driver's own
    estimate) over max(|value|, vanishing x the size of its terms). Non-finite values (an undefined transference)
    are skipped."""
    values, natural = np.empty(DIFFERENCES), np.empty(DIFFERENCES)
    other, unused = np.empty(DIFFERENCES), np.empty(DIFFERENCES)
    _differences(p, sc, fine, values, natural)
    _differences(p, sc, coarse, other, unused)
    estimate = 0.0
    for j in range(DIFFERENCES):
        scale = max(abs(values[j]), vanishing * natural[j], 1e-300)
        error = abs(values[j] - other[j]) / scale
        if np.isfinite(error):
            estimate = max(estimate, error)
    return estimate / 8.0
