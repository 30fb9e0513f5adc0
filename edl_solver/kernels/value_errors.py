"""Compiled error estimate of the lab values that are differences of response-matrix terms.

The nested-grid driver (``kernels.adaptive``) measures the error of every section integral against its own
size, and the summary values that are sums or ratios of integrals inherit that accuracy. The diffusio-osmotic
flow, the diffusion potential and the transference are different: each is a difference of terms weighted by the
ion diffusivities (the zero-current field from the salt and pressure couplings, the flow it drives against the
chemiosmotic flow), which may nearly cancel, so an integral accurate to 1e-6 can leave them at 1e-4 of their own
size. They are estimated here the way the integrals are: from the two Richardson extrapolations of the same
nested grids, each against its own size, or against the size of its terms where it vanishes.

What "relative accuracy" means for a value that vanishes by symmetry (the diffusion potential of a salt with equal
diffusivities in an uncharged section, or between walls of exactly opposite potential, where the streaming and the
salt-current couplings it is made of vanish too): it cannot be relative to the value itself, nor to the couplings,
whose two estimates are round-off of round-off; it is relative to the size the value would have without the
cancellation, the couplings' terms taken ion by ion, each by its magnitude (``_term_sizes``). That size does not
vanish with the wall charge: for the diffusion potential of an uncharged section it is the thermal voltage RT/F
(that of a salt whose anion alone moved), so a wall of exactly zero charge is held to 1e-6 (``VANISHING``) x the
accuracy x RT/F, as a slightly charged one. Values that do not cancel below that size keep their own scale, bit for
bit.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.kernels.lab import cation_transference
from edl_solver.kernels.layout import ION_VALENCE, P_TEMPERATURE
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
    terms = _term_sizes(p, ion_matrix)
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    total_c, total_nu = salt_totals(ion_block(p))
    x_p, x_s = rt * total_c, -rt * total_nu
    field = -(m[1, 0] * x_p + m[1, 2] * x_s) / m[1, 1]
    values[0] = m[0, 0] * x_p + m[0, 1] * field + m[0, 2] * x_s
    natural[0] = abs(m[0, 0] * x_p) + abs(m[0, 1] * field) + abs(m[0, 2] * x_s)
    values[1] = -field
    # the reduced couplings m[1, 0] and m[1, 2] are themselves sums over the ions that cancel (to round-off at zero
    # charge with equal diffusivities): the ions' terms one by one give a size that does not
    natural[1] = (terms[1, 0] * abs(x_p) + terms[1, 2] * abs(x_s)) / abs(m[1, 1])
    values[2] = cation_transference(p, ion_matrix)
    natural[2] = 1.0


@njit(cache=True, error_model="numpy")
def _term_sizes(p, ion_matrix):
    """|B|^T |L| |B|: the reduced matrix (``response.reduced_matrix``, M = B^T L B) with every ion's term counted
    by its magnitude, so that an entry that cancels between the ions keeps the size of its terms. At least |M|
    entry by entry."""
    ions = ion_block(p)
    n = ions.shape[0]
    _, total_nu = salt_totals(ions)
    basis = np.zeros((n + 1, 3))
    basis[0, 0] = 1.0
    for i in range(n):
        basis[1 + i, 1] = abs(ions[i, ION_VALENCE]) * FARADAY
        basis[1 + i, 2] = 1.0 / total_nu
    return basis.T @ np.abs(ion_matrix) @ basis


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
