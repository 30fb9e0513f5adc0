"""Compiled response matrices of a solved section: ion by ion, and reduced to (volume flow, current, salt).

Each states its physics and sources in its docstring; ``kernels.lab`` turns a reduced matrix into what a
lab measures, ``kernels.thin_layer`` gives the thin-layer model's matrix in the same layout.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.kernels.fv1d import response_offsets
from edl_solver.kernels.layout import (
    I_UP,
    ION_CONCENTRATION,
    ION_DIFFUSIVITY,
    ION_INTEGRALS,
    ION_VALENCE,
    P_TEMPERATURE,
    S_AREA,
    S_PRESSURE_VELOCITY,
)
from edl_solver.kernels.prepare import ion_block


@njit(cache=True, error_model="numpy")
def ion_response_matrix(p, sc, integrals):
    """The linear-response matrix of the section, ion by ion (space-charge model, Gross & Osterle 1968,
    J. Chem. Phys. 49, 228; in the form of Peters, van Roij, Bazant & Biesheuvel 2016, from memory).

    With local equilibrium across the section, c_i = c_i,bulk exp(-z_i psi), the axial driving forces are
    the solvent force X_P = -d(p - RT sum_i c_i,bulk)/dx (the pressure gradient less the bulk osmotic one)
    and the ion forces X_i = -d mu~_i/dx (electrochemical potential per mole). Then
    eta lap(u) = -X_P - sum_i c_i X_i and j_i = c_i u + (D_i / RT) c_i X_i, so::

        Q   = L_PP X_P + sum_j L_Pj X_j,        L_PP = int u_P,  L_Pj = int u_j = int c_j u_P
        J_i = L_iP X_P + sum_j L_ij X_j,        L_ij = int c_i u_j + delta_ij (D_i / RT) int c_i

    with eta lap(u_P) = -1 and eta lap(u_j) = -c_j. The matrix is symmetric (Onsager 1931) because the Stokes
    operator is; ``identities.identity_residuals`` measures it.

    Returns
    -------
    ndarray
        (1 + n, 1 + n); row/column 0 the volume flow and X_P, then the ions. Q in m^3/s (m^2/s per unit
        width for a slit), J_i in mol/s (per unit width), X_P in Pa/m, X_i in J/(mol m).
    """
    ions = ion_block(p)
    n = ions.shape[0]
    ion_flow_at, conc_up_at, conc_flow_at, _ = response_offsets(n)
    flow_unit = sc[S_PRESSURE_VELOCITY] * sc[S_AREA]
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    m = np.empty((n + 1, n + 1))
    m[0, 0] = -flow_unit * integrals[I_UP]
    for i in range(n):
        c = ions[i, ION_CONCENTRATION]
        m[0, 1 + i] = flow_unit * c * integrals[ion_flow_at + i]
        m[1 + i, 0] = -flow_unit * c * integrals[conc_up_at + i]
        for j in range(n):
            m[1 + i, 1 + j] = flow_unit * (c * ions[j, ION_CONCENTRATION]) * integrals[conc_flow_at + i * n + j]
        m[1 + i, 1 + i] += ions[i, ION_DIFFUSIVITY] * c / rt * sc[S_AREA] * integrals[ION_INTEGRALS + i]
    return m


@njit(cache=True, error_model="numpy")
def salt_totals(ions):
    """(sum of the bulk concentrations, sum of the stoichiometric numbers c_i / min c) of ``ION_*`` rows."""
    total_c = 0.0
    smallest = np.inf
    for i in range(ions.shape[0]):
        total_c += ions[i, ION_CONCENTRATION]
        smallest = min(smallest, ions[i, ION_CONCENTRATION])
    return total_c, total_c / smallest


@njit(cache=True, error_model="numpy")
def reduced_matrix(p, ion_matrix):
    """The 3 x 3 matrix of (volume flow Q, current I, salt flux J_s) against (X_P, field E, salt force X_s).

    A salt gradient at fixed composition and a field give X_i = z_i F E + X_s / sum(nu), X_s = -d mu_s/dx
    with mu_s = sum_i nu_i mu_i per formula unit; I = F sum_i z_i J_i and J_s = sum_i J_i / sum(nu) are then
    the conjugate fluxes (the dissipation Q X_P + sum_i J_i X_i = Q X_P + I E + J_s X_s), so M = B^T L B stays
    symmetric. Units: I in A (A/m per unit width), J_s in mol/s, E in V/m, X_s in J/(mol m).
    """
    ions = ion_block(p)
    n = ions.shape[0]
    _, total_nu = salt_totals(ions)
    basis = np.zeros((n + 1, 3))
    basis[0, 0] = 1.0
    for i in range(n):
        basis[1 + i, 1] = ions[i, ION_VALENCE] * FARADAY
        basis[1 + i, 2] = 1.0 / total_nu
    return basis.T @ ion_matrix @ basis
