"""Electric currents along the channel: ionic conduction and convection of the space charge.

Conduction (Nernst-Einstein mobility D/kT): I_cond = E (e^2 N_A / kT) sum_i z_i^2 D_i int c_i dA.
Convection: I_conv = int rho_e u dA, split into its EO part (proportional to E) and the streaming part
(the pressure-driven flow). Slit values are per unit width.
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver import _kernels as k
from edl_solver.case import Case
from edl_solver.constants import AVOGADRO, FARADAY, GAS_CONSTANT
from edl_solver.scaling import Scales


def current_summary(integrals: np.ndarray, units: Scales, case: Case) -> dict[str, float]:
    """Conduction, streaming and EO convection currents and the current per unit field, SI."""
    ions = case.electrolyte.ions
    conductance = FARADAY / units.thermal_voltage * units.area * sum(
        ion.valence**2 * ion.diffusivity * ion.concentration * integrals[k.ION_INTEGRALS + i]
        for i, ion in enumerate(ions))
    charge_area = units.volume_charge * units.area
    eo_convection = charge_area * units.eo_velocity_per_field * integrals[k.I_RHO_UEO]
    streaming_per_gradient = charge_area * units.pressure_velocity_per_gradient * integrals[k.I_RHO_UP]
    per_field = conductance + eo_convection
    streaming = case.pressure_gradient * streaming_per_gradient
    return {
        "conduction_current": case.field * conductance,
        "streaming_current": streaming,
        "eo_convection_current": case.field * eo_convection,
        "current": case.field * per_field + streaming,
        "current_per_field": per_field,
        "_streaming_current_per_gradient": streaming_per_gradient,
    }


def concentrations(psi: np.ndarray, case: Case) -> np.ndarray:
    """Ion concentrations across the section, mol/m^3: c_i = c_i,bulk exp(-z_i psi) (linearised for the
    Debye-Hueckel model; divided by the crowding factor 1 + sum_j nu_j (exp(-z_j psi) - 1) for the steric
    model, Kilic, Bazant & Ajdari 2007)."""
    ions = case.electrolyte.ions
    if case.model == "dh":
        return np.array([ion.concentration * (1.0 - ion.valence * psi) for ion in ions])
    boltzmann = np.array([np.exp(-ion.valence * psi) for ion in ions])
    bulk = np.array([ion.concentration for ion in ions])[:, None]
    if case.model == "steric":
        packing = bulk * AVOGADRO * ions[0].diameter ** 3
        return bulk * boltzmann / (1.0 + np.sum(packing * (boltzmann - 1.0), axis=0))
    return bulk * boltzmann


def ion_response_matrix(integrals: np.ndarray, units: Scales, case: Case) -> np.ndarray:
    """The linear-response matrix of the section, ion by ion (space-charge model, Gross & Osterle 1968,
    J. Chem. Phys. 49, 228; in the form of Peters, van Roij, Bazant & Biesheuvel 2016, from memory).

    With local equilibrium across the section, c_i = c_i,bulk exp(-z_i psi), the axial driving forces are
    the solvent force X_P = -d(p - RT sum_i c_i,bulk)/dx (the pressure gradient less the bulk osmotic one)
    and the ion forces X_i = -d mu~_i/dx (electrochemical potential per mole). Then
    eta lap(u) = -X_P - sum_i c_i X_i and j_i = c_i u + (D_i / RT) c_i X_i, so::

        Q   = L_PP X_P + sum_j L_Pj X_j,        L_PP = int u_P,  L_Pj = int u_j = int c_j u_P
        J_i = L_iP X_P + sum_j L_ij X_j,        L_ij = int c_i u_j + delta_ij (D_i / RT) int c_i

    with eta lap(u_P) = -1 and eta lap(u_j) = -c_j. The matrix is symmetric (Onsager 1931) because the Stokes
    operator is; ``reciprocity_residual`` measures it.

    Returns
    -------
    ndarray
        (1 + n, 1 + n); row/column 0 the volume flow and X_P, then the ions. Q in m^3/s (m^2/s per unit
        width for a slit), J_i in mol/s (per unit width), X_P in Pa/m, X_i in J/(mol m).
    """
    ions = case.electrolyte.ions
    n = len(ions)
    ion_flow_at, conc_up_at, conc_flow_at, _ = k.response_offsets(n)
    flow_unit = units.pressure_velocity_per_gradient * units.area  # (L^2/eta) * area factor
    bulk = np.array([ion.concentration for ion in ions])
    matrix = np.empty((n + 1, n + 1))
    matrix[0, 0] = -flow_unit * integrals[k.I_UP]
    matrix[0, 1:] = flow_unit * bulk * integrals[ion_flow_at:ion_flow_at + n]
    matrix[1:, 0] = -flow_unit * bulk * integrals[conc_up_at:conc_up_at + n]
    convective = integrals[conc_flow_at:conc_flow_at + n * n].reshape(n, n)
    matrix[1:, 1:] = flow_unit * np.outer(bulk, bulk) * convective
    rt = GAS_CONSTANT * case.solvent.temperature
    diffusive = np.array([ion.diffusivity for ion in ions]) * bulk / rt * units.area
    matrix[1:, 1:] += np.diag(diffusive * integrals[k.ION_INTEGRALS:k.ION_INTEGRALS + n])
    return matrix


def salt_stoichiometry(case: Case) -> np.ndarray:
    """Ions per formula unit of the electrolyte, nu_i = c_i / min_j c_j (KCl 1, 1; CaCl2 1, 2)."""
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    return bulk / bulk.min()


def reduced_matrix(ion_matrix: np.ndarray, case: Case) -> np.ndarray:
    """The 3 x 3 matrix of (volume flow Q, current I, salt flux J_s) against (X_P, field E, salt force X_s).

    A salt gradient at fixed composition and a field give X_i = z_i F E + X_s / sum(nu), X_s = -d mu_s/dx
    with mu_s = sum_i nu_i mu_i per formula unit; I = F sum_i z_i J_i and J_s = sum_i J_i / sum(nu) are then
    the conjugate fluxes (the dissipation Q X_P + sum_i J_i X_i = Q X_P + I E + J_s X_s), so M = B^T L B stays
    symmetric. Units: I in A (A/m per unit width), J_s in mol/s, E in V/m, X_s in J/(mol m).
    """
    valence = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
    total = float(np.sum(salt_stoichiometry(case)))
    n = valence.size
    basis = np.zeros((n + 1, 3))
    basis[0, 0] = 1.0
    basis[1:, 1] = valence * FARADAY
    basis[1:, 2] = 1.0 / total
    return basis.T @ ion_matrix @ basis


def lab_quantities(matrix: np.ndarray, case: Case, units: Scales) -> dict[str, float]:
    """What a lab measures, per unit channel length, from a 3 x 3 response matrix (full or thin-layer).

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
    m = matrix.tolist()  # plain floats: this runs on every solve, and numpy scalars are slow one by one
    rt = GAS_CONSTANT * case.solvent.temperature
    total_c = sum(ion.concentration for ion in case.electrolyte.ions)
    total_nu = total_c / min(ion.concentration for ion in case.electrolyte.ions)  # sum of salt_stoichiometry
    # per unit g = d ln c/dx at no hydrostatic pressure gradient: X_P = RT sum c, X_s = -RT sum nu
    x_p, x_s = rt * total_c, -rt * total_nu
    field = -(m[1][0] * x_p + m[1][2] * x_s) / m[1][1]  # zero current
    do_flow = m[0][0] * x_p + m[0][1] * field + m[0][2] * x_s  # per unit g
    q2 = m[0][1] * m[1][0] / (m[0][0] * m[1][1])
    # q^2 >= 1 would violate the second law; only a model outside its validity (the thin-layer model in an
    # overlapped channel) produces it, and then the conversion figures and the apparent viscosity are undefined
    physical = q2 < 1.0
    root = math.sqrt(1.0 - q2) if physical else math.nan
    return {
        "conductance_per_length": m[1][1],
        "streaming_conductance": m[1][0],
        "streaming_potential_coefficient": -m[1][0] / m[1][1],
        "electroviscous_ratio": 1.0 / (1.0 - q2) if physical else math.nan,
        "eo_pump_flow_per_field": m[0][1],
        "eo_pump_pressure_per_voltage": m[0][1] / m[0][0],
        "diffusioosmotic_flow": do_flow,
        "diffusion_potential": -field,
        "figure_of_merit": q2 / (1.0 - q2) if physical else math.nan,
        "max_efficiency": q2 / (1.0 + root) ** 2,
        "efficiency_at_max_power": q2 / (2.0 * (2.0 - q2)) if physical else math.nan,
        "max_power_per_length": m[0][1] * m[1][0] * case.pressure_gradient**2 / (4.0 * m[1][1]),
    }


def transference(ion_matrix: np.ndarray, case: Case) -> dict[str, float]:
    """Transference numbers t_i = z_i F J_i / I under a field at uniform concentration and zero volume flow
    (the back pressure that stops the EO flow applied, so the fluxes are those relative to the solvent, as in
    Hittorf's definition), summed over the cations, and the selectivity t+ - t- (1: ideally cation-selective).
    """
    valence = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
    drive = valence * FARADAY  # X_i per unit E
    solvent = -float(ion_matrix[0, 1:] @ drive) / ion_matrix[0, 0]  # X_P that makes Q = 0
    fluxes = ion_matrix[1:, 0] * solvent + ion_matrix[1:, 1:] @ drive
    shares = valence * FARADAY * fluxes / float(np.sum(valence * FARADAY * fluxes))
    cations = float(np.sum(shares[valence > 0]))
    return {"cation_transference": cations, "selectivity": 2.0 * cations - 1.0}
