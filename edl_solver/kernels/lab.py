"""Compiled lab quantities of a response matrix: what a lab measures per unit channel length (conductance,
streaming and pumping, diffusion, selectivity, energy conversion), in the ``layout.LAB_KEYS`` order.

The same function serves the full and the thin-layer matrix (``kernels.response``, ``kernels.thin_layer``).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.kernels.layout import (
    ION_VALENCE,
    L_CONDUCTANCE,
    L_DIFFUSION_POTENTIAL,
    L_DIFFUSIOOSMOTIC_FLOW,
    L_EFFICIENCY_AT_MAX_POWER,
    L_ELECTROVISCOUS,
    L_FIGURE_OF_MERIT,
    L_MAX_EFFICIENCY,
    L_MAX_POWER,
    L_PUMP_FLOW,
    L_PUMP_PRESSURE,
    L_STREAMING_CONDUCTANCE,
    L_STREAMING_POTENTIAL,
    L_TRANSFERENCE,
    LAB_SIZE,
    P_PRESSURE_GRADIENT,
    P_TEMPERATURE,
)
from edl_solver.kernels.prepare import ion_block
from edl_solver.kernels.response import salt_totals


@njit(cache=True, error_model="numpy")
def lab_quantities(m, p):
    """What a lab measures, per unit channel length, from a 3 x 3 response matrix (full or thin-layer), in the
    ``LAB_KEYS`` order (the cation transference left NaN: ``cation_transference``).

    Lab conditions use the hydrostatic pressure p and the salt gradient g = d ln c / dx:
    X_P = -dp/dx + RT g sum_i c_i and X_s = -RT g sum(nu). Sign conventions: a positive flow or current
    goes along +x; a pump's pressure rise is counted along its flow.

    - conductance (current per field, S m or S per unit width): M11.
    - streaming conductance: M10 (current per -dp/dx); streaming potential coefficient dV/dp at zero
      current: -M10 / M11 (Smoluchowski in the thin-layer limit: eps zeta / (eta K)).
    - electroviscous ratio: apparent over true viscosity at zero current, M00 / (M00 - M01 M10 / M11)
      = 1 / (1 - q^2).
    - EO pump: flow per field M01 (at no back pressure), pressure per applied voltage M01 / M00 (at no
      flow); the pump curve is linear between them.
    - diffusio-osmotic flow per unit d ln c/dx (positive: toward higher concentration) and diffusion
      potential dV / d ln c, both at zero current and no pressure difference (an ideally cation-selective
      channel gives -kT/e, the Nernst value).
    - transference numbers under a field: t_i = z_i F J_i / I; cation transference and selectivity t+ - t-.
    - energy conversion (pressure -> electrical): degree of coupling q^2 = M01^2 / (M00 M11), figure of merit
      q^2 / (1 - q^2), maximum efficiency q^2 / (1 + sqrt(1 - q^2))^2 and efficiency at maximum power
      q^2 / (2 (2 - q^2)) (linear irreversible thermodynamics, Kedem & Caplan 1965; van der Heyden, Bonthuis,
      Stein, Meyer & Dekker 2007, Nano Lett. 7, 1022, from memory); maximum power per length at the case's
      pressure gradient M01^2 (dp/dx)^2 / (4 M11).
    """
    ions = ion_block(p)
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    total_c, total_nu = salt_totals(ions)
    x_p, x_s = rt * total_c, -rt * total_nu  # per unit d ln c/dx at no hydrostatic pressure gradient
    field = -(m[1, 0] * x_p + m[1, 2] * x_s) / m[1, 1]  # zero current
    q2 = m[0, 1] * m[1, 0] / (m[0, 0] * m[1, 1])
    physical = q2 < 1.0  # q^2 >= 1 only from a model outside its validity
    root = np.sqrt(1.0 - q2) if physical else np.nan
    out = np.empty(LAB_SIZE)
    out[L_CONDUCTANCE] = m[1, 1]
    out[L_STREAMING_CONDUCTANCE] = m[1, 0]
    out[L_STREAMING_POTENTIAL] = -m[1, 0] / m[1, 1]
    out[L_ELECTROVISCOUS] = 1.0 / (1.0 - q2) if physical else np.nan
    out[L_PUMP_FLOW] = m[0, 1]
    out[L_PUMP_PRESSURE] = m[0, 1] / m[0, 0]
    out[L_DIFFUSIOOSMOTIC_FLOW] = m[0, 0] * x_p + m[0, 1] * field + m[0, 2] * x_s
    out[L_DIFFUSION_POTENTIAL] = -field
    out[L_FIGURE_OF_MERIT] = q2 / (1.0 - q2) if physical else np.nan
    out[L_MAX_EFFICIENCY] = q2 / (1.0 + root) ** 2
    out[L_EFFICIENCY_AT_MAX_POWER] = q2 / (2.0 * (2.0 - q2)) if physical else np.nan
    out[L_MAX_POWER] = m[0, 1] * m[1, 0] * p[P_PRESSURE_GRADIENT] ** 2 / (4.0 * m[1, 1])
    out[L_TRANSFERENCE] = np.nan
    return out


@njit(cache=True, error_model="numpy")
def cation_transference(p, ion_matrix):
    """Cation transference: the transference numbers t_i = z_i F J_i / I under a field at uniform
    concentration and zero volume flow (the back pressure that stops the EO flow applied, so the fluxes are
    those relative to the solvent, as in Hittorf's definition), summed over the cations. The selectivity is
    t+ - t- = 2 t+ - 1 (1: ideally cation-selective)."""
    ions = ion_block(p)
    n = ions.shape[0]
    solvent = 0.0
    for j in range(n):
        solvent -= ion_matrix[0, 1 + j] * ions[j, ION_VALENCE] * FARADAY
    solvent /= ion_matrix[0, 0]
    total = 0.0
    cations = 0.0
    for i in range(n):
        flux = ion_matrix[1 + i, 0] * solvent
        for j in range(n):
            flux += ion_matrix[1 + i, 1 + j] * ions[j, ION_VALENCE] * FARADAY
        current = ions[i, ION_VALENCE] * FARADAY * flux
        total += current
        if ions[i, ION_VALENCE] > 0.0:
            cations += current
    return cations / total
