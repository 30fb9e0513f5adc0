"""Compiled step from the section integrals of one case to its summary: every value ``Result.summary``
holds, in one float vector (layout ``SLOTS``), plus the ion-resolved and reduced response matrices.

Each step states its physics and sources in its docstring (the response matrices of the space-charge
model, the lab quantities, the thin-layer matrix, the identity checks); flow.py and transport.py state
the flow-rate and current integrals, thin_layer.py the slip model. One compiled copy serves a single solve
(solver.py) and a sweep (_batch.py) alike, so their values are identical.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.kernels.adaptive import POTENTIAL_FLOOR
from edl_solver.kernels.fv1d import (
    I_FLUX_LEFT,
    I_FLUX_RIGHT,
    I_PSI,
    I_PSI_CENTRE,
    I_PSI_LEFT,
    I_PSI_RIGHT,
    I_RHO,
    I_RHO_UEO,
    I_RHO_UP,
    I_UEO,
    I_UP,
    ION_INTEGRALS,
    REGULATED,
    W_STERN,
    W_TYPE,
    response_offsets,
)
from edl_solver.kernels.layout import SLOTS
from edl_solver.kernels.prepare import (
    S_AREA,
    S_CHARGE_DENSITY,
    S_DEBYE_LENGTH,
    S_EO_VELOCITY,
    S_LENGTH,
    S_PRESSURE_VELOCITY,
    S_SECTION_AREA,
    S_THERMAL_VOLTAGE,
    S_VOLUME_CHARGE,
    ion_block,
    wall_si,
)
from edl_solver.model.packing import (
    P_CAPILLARY,
    P_FIELD,
    P_PERMITTIVITY,
    P_PRESSURE_GRADIENT,
    P_SLIP,
    P_SYMMETRIC,
    P_TEMPERATURE,
    P_VISCOSITY,
)

#: Discrete identities (charge balance, Onsager reciprocity) hold to round-off; beyond this a solve is
#: declared failed rather than returned.
IDENTITY_TOLERANCE = 1e-8
#: The thin-layer profile is compared with the full one farther than this many Debye lengths from the walls.
OUTER_REGION_DEBYE_LENGTHS = 3.0

#: Lab quantities of a 3 x 3 response matrix, in this order (see ``lab_quantities``), then the
#: cation transference (filled separately for the full and the thin-layer model).
LAB_KEYS = ("conductance_per_length", "streaming_conductance", "streaming_potential_coefficient",
            "electroviscous_ratio", "eo_pump_flow_per_field", "eo_pump_pressure_per_voltage",
            "diffusioosmotic_flow", "diffusion_potential", "figure_of_merit", "max_efficiency",
            "efficiency_at_max_power", "max_power_per_length", "cation_transference")
LAB_TRANSFERENCE = LAB_KEYS.index("cation_transference")
LAB_SLOTS = np.array([SLOTS[key] for key in LAB_KEYS])
#: Lab quantities whose thin-layer counterparts are reported with their relative error.
COMPARED = ("conductance_per_length", "streaming_potential_coefficient", "electroviscous_ratio",
            "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
            "max_efficiency")
COMPARED_LAB = np.array([LAB_KEYS.index(key) for key in COMPARED])
COMPARED_THIN = np.array([SLOTS[f"thin_layer_{key}"] for key in COMPARED])
COMPARED_ERROR = np.array([SLOTS[f"thin_layer_{key}_error"] for key in COMPARED])

# Slots of the summary keys written by name below (numba reads module-level ints as constants).
Z_ZETA = SLOTS["zeta"]
Z_SIGMA = SLOTS["wall_charge_density"]
Z_STERN = SLOTS["stern_potential"]
Z_HS = SLOTS["hs_velocity"]
Z_THIN_ZETA = SLOTS["thin_layer_zeta"]
Z_DEBYE_LENGTH = SLOTS["debye_length"]
Z_KAPPA_H = SLOTS["kappa_h"]
Z_CENTRE_POTENTIAL = SLOTS["centre_potential"]
Z_MEAN_POTENTIAL = SLOTS["mean_potential"]
Z_FLOW_RATE_EO = SLOTS["flow_rate_eo"]
Z_FLOW_RATE_PRESSURE = SLOTS["flow_rate_pressure"]
Z_MEAN_VELOCITY_EO = SLOTS["mean_velocity_eo"]
Z_MEAN_VELOCITY_PRESSURE = SLOTS["mean_velocity_pressure"]
Z_CONDUCTION_CURRENT = SLOTS["conduction_current"]
Z_STREAMING_CURRENT = SLOTS["streaming_current"]
Z_EO_CONVECTION_CURRENT = SLOTS["eo_convection_current"]
Z_CURRENT = SLOTS["current"]
Z_CURRENT_PER_FIELD = SLOTS["current_per_field"]
Z_EO_RATIO = SLOTS["eo_ratio"]
Z_THIN_LAYER_FLOW_RATE_EO = SLOTS["thin_layer_flow_rate_eo"]
Z_THIN_LAYER_FLOW_RATE_ERROR = SLOTS["thin_layer_flow_rate_error"]
Z_THIN_LAYER_MEAN_VELOCITY_ERROR = SLOTS["thin_layer_mean_velocity_error"]
Z_THIN_LAYER_MAX_OUTER_DEVIATION = SLOTS["thin_layer_max_outer_deviation"]
Z_SELECTIVITY = SLOTS["selectivity"]
Z_CHARGE_BALANCE = SLOTS["charge_balance"]
Z_RECIPROCITY_RESIDUAL = SLOTS["reciprocity_residual"]
Z_ERROR_ESTIMATE = SLOTS["error_estimate"]


@njit(cache=True, error_model="numpy")
def thin_slip(p, iso):
    """Helmholtz-Smoluchowski slip velocity per unit field of the (bottom, top) isolated walls, m^2/(V s):
    -(eps / eta)(zeta + b sigma / eps) (see ``thin_layer.slip_velocity``)."""
    eps, eta = p[P_PERMITTIVITY], p[P_VISCOSITY]
    out = np.empty(2)
    for side in range(2):
        out[side] = -eps * 1.0 / eta * (iso[side, 0] + p[P_SLIP + side] * iso[side, 1] / eps)
    return out


@njit(cache=True, error_model="numpy")
def outer_deviation(s, beta, u_eo, p, sc, slip):
    """Largest |thin-layer - full| EO velocity outside the double layers, over the largest slip speed.

    The outer region lies farther than ``OUTER_REGION_DEBYE_LENGTHS`` Debye lengths from every wall; when
    the layers overlap it shrinks to the centre. Inside the layers the slip model does not claim to hold,
    so the comparison stops there. ``u_eo`` is the dimensionless EO profile on the finest computational
    nodes ``s`` of the tanh map with stretching ``beta``.
    """
    largest = max(abs(slip[0]), abs(slip[1]))
    if largest == 0.0:
        return np.nan
    length = sc[S_LENGTH]
    capillary = p[P_CAPILLARY] != 0.0
    t = np.tanh(beta)
    farthest = 0.0
    for i in range(s.size):
        farthest = max(farthest, length * (1.0 - abs(np.tanh(beta * s[i]) / t)))
    limit = min(OUTER_REGION_DEBYE_LENGTHS * sc[S_DEBYE_LENGTH], farthest)
    worst = 0.0
    for i in range(s.size):
        x = np.tanh(beta * s[i]) / t
        distance = length * (1.0 - abs(x))
        if distance < limit:
            continue
        if capillary:
            thin = slip[1]
        else:
            thin = slip[0] + (slip[1] - slip[0]) * (1.0 + x) / 2.0
        worst = max(worst, abs(thin - sc[S_EO_VELOCITY] * u_eo[i]))
    return worst / largest


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
    operator is; ``identity_residuals`` measures it.

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
        c = ions[i, 1]
        m[0, 1 + i] = flow_unit * c * integrals[ion_flow_at + i]
        m[1 + i, 0] = -flow_unit * c * integrals[conc_up_at + i]
        for j in range(n):
            m[1 + i, 1 + j] = flow_unit * (c * ions[j, 1]) * integrals[conc_flow_at + i * n + j]
        m[1 + i, 1 + i] += ions[i, 2] * c / rt * sc[S_AREA] * integrals[ION_INTEGRALS + i]
    return m


@njit(cache=True, error_model="numpy")
def _salt_totals(ions):
    """(sum of the bulk concentrations, sum of the stoichiometric numbers c_i / min c)."""
    total_c = 0.0
    smallest = np.inf
    for i in range(ions.shape[0]):
        total_c += ions[i, 1]
        smallest = min(smallest, ions[i, 1])
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
    _, total_nu = _salt_totals(ions)
    basis = np.zeros((n + 1, 3))
    basis[0, 0] = 1.0
    for i in range(n):
        basis[1 + i, 1] = ions[i, 0] * FARADAY
        basis[1 + i, 2] = 1.0 / total_nu
    return basis.T @ ion_matrix @ basis


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
    total_c, total_nu = _salt_totals(ions)
    x_p, x_s = rt * total_c, -rt * total_nu  # per unit d ln c/dx at no hydrostatic pressure gradient
    field = -(m[1, 0] * x_p + m[1, 2] * x_s) / m[1, 1]  # zero current
    q2 = m[0, 1] * m[1, 0] / (m[0, 0] * m[1, 1])
    physical = q2 < 1.0  # q^2 >= 1 only from a model outside its validity
    root = np.sqrt(1.0 - q2) if physical else np.nan
    out = np.empty(len(LAB_KEYS))
    out[0] = m[1, 1]
    out[1] = m[1, 0]
    out[2] = -m[1, 0] / m[1, 1]
    out[3] = 1.0 / (1.0 - q2) if physical else np.nan
    out[4] = m[0, 1]
    out[5] = m[0, 1] / m[0, 0]
    out[6] = m[0, 0] * x_p + m[0, 1] * field + m[0, 2] * x_s
    out[7] = -field
    out[8] = q2 / (1.0 - q2) if physical else np.nan
    out[9] = q2 / (1.0 + root) ** 2
    out[10] = q2 / (2.0 * (2.0 - q2)) if physical else np.nan
    out[11] = m[0, 1] * m[1, 0] * p[P_PRESSURE_GRADIENT] ** 2 / (4.0 * m[1, 1])
    out[12] = np.nan
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
        solvent -= ion_matrix[0, 1 + j] * ions[j, 0] * FARADAY
    solvent /= ion_matrix[0, 0]
    total = 0.0
    cations = 0.0
    for i in range(n):
        flux = ion_matrix[1 + i, 0] * solvent
        for j in range(n):
            flux += ion_matrix[1 + i, 1 + j] * ions[j, 0] * FARADAY
        current = ions[i, 0] * FARADAY * flux
        total += current
        if ions[i, 0] > 0.0:
            cations += current
    return cations / total


@njit(cache=True, error_model="numpy")
def _chemiosmotic_slip(zeta, ions, p, thermal_voltage):
    """Thin-layer diffusio-osmotic slip velocity per unit d ln c/dx of a symmetric z:z electrolyte, m^2/s:
    u = -(eps / eta)(kT / z e)^2 4 ln cosh(z e zeta / 4 kT) d ln c/dx (chemiosmosis; Prieve, Anderson, Ebel &
    Lowell 1984, J. Fluid Mech. 148, 247, from memory; it follows from the Gouy-Chapman layer, since
    int_0^inf x (cosh psi - 1) dx = 4 ln cosh(psi_w / 4)). NaN for other electrolytes."""
    if ions.shape[0] != 2 or ions[0, 0] != -ions[1, 0]:
        return np.nan
    z = abs(ions[0, 0])
    vt = thermal_voltage / z
    return -p[P_PERMITTIVITY] / p[P_VISCOSITY] * vt * vt * 4.0 * np.log(np.cosh(zeta / (4.0 * vt)))


@njit(cache=True, error_model="numpy")
def _poiseuille(p, sc):
    """Flow rate per unit solvent force of plain Poiseuille flow with Navier slip, as
    ``thin_layer.poiseuille_per_gradient`` states it."""
    eta = p[P_VISCOSITY]
    if p[P_CAPILLARY] != 0.0:
        a = sc[S_LENGTH]
        return np.pi * a**4 * (1.0 + 4.0 * p[P_SLIP + 1] / a) / (8.0 * eta)
    h = 2.0 * sc[S_LENGTH]
    b1, b2 = p[P_SLIP], p[P_SLIP + 1]
    c = h * (h + 2.0 * b2) / (h + b1 + b2)
    return (-h**3 / 3.0 + c * (h * h / 2.0 + b1 * h)) / (2.0 * eta)


@njit(cache=True, error_model="numpy")
def thin_layer_matrix(p, sc, iso, slip):
    """The 3 x 3 response matrix of the thin-layer model (layout as ``reduced_matrix``).

    Bulk electrolyte everywhere, the double layers reduced to slip velocities: Poiseuille flow with the walls'
    slip lengths; EO slip (mean of the walls' Helmholtz-Smoluchowski velocities) coupling flow and field both
    ways (Smoluchowski's streaming relation); bulk conduction K = (F^2 / RT) sum z_i^2 D_i c_i; bulk diffusion
    and convection of the salt; chemiosmotic slip for the salt force (z:z electrolytes only; NaN otherwise).
    """
    ions = ion_block(p)
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    total_c, total_nu = _salt_totals(ions)
    area = sc[S_SECTION_AREA]
    poiseuille = _poiseuille(p, sc)
    eo = area * 0.5 * (slip[0] + slip[1])
    vt = sc[S_THERMAL_VOLTAGE]
    chemi = 0.5 * (_chemiosmotic_slip(iso[0, 0], ions, p, vt) + _chemiosmotic_slip(iso[1, 0], ions, p, vt))
    salt_flow = total_c / total_nu * poiseuille + area * chemi / (-rt * total_nu)
    conduction = 0.0
    diffusion = 0.0
    salt = 0.0
    for i in range(ions.shape[0]):
        z, c, d = ions[i, 0], ions[i, 1], ions[i, 2]
        conduction += z * z * d * c
        diffusion += z * d * c
        salt += d * c
    conductance = FARADAY**2 / rt * area * conduction
    diffusion_current = FARADAY * area / (rt * total_nu) * diffusion
    salt_diffusion = area / (rt * total_nu**2) * salt
    salt_current = total_c / total_nu * eo + diffusion_current
    m = np.empty((3, 3))
    m[0, 0], m[0, 1], m[0, 2] = poiseuille, eo, salt_flow
    m[1, 0], m[1, 1], m[1, 2] = eo, conductance, salt_current
    m[2, 0], m[2, 1], m[2, 2] = salt_flow, salt_current, total_c / total_nu * salt_flow + salt_diffusion
    return m


@njit(cache=True, error_model="numpy")
def _relative_error(thin, full):
    return (thin - full) / full if full != 0.0 and np.isfinite(thin) else np.nan


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
    if p[P_CAPILLARY] != 0.0:
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


@njit(cache=True, error_model="numpy")
def _set_pair(out, at, bottom, top, symmetric):
    out[at] = top if symmetric else bottom
    out[at + 1] = top


@njit(cache=True, error_model="numpy")
def summarize_solution(p, sc, iso, integrals, kappa2, s, beta, u_eo, estimate, out):
    """``summarize`` a solved section, with the outer-region deviation of its finest EO profile ``u_eo`` (on
    the computational nodes ``s`` of the tanh map with stretching ``beta``); the step a single solve and a
    batch share. Returns the ion-resolved and the reduced response matrices."""
    slip = thin_slip(p, iso)
    deviation = outer_deviation(s, beta, u_eo, p, sc, slip)
    return summarize(p, sc, iso, slip, integrals, kappa2, deviation, estimate, out)


@njit(cache=True, error_model="numpy")
def identities_hold(out):
    """Whether a filled summary vector passes the identity checks (``IDENTITY_TOLERANCE``; NaN fails)."""
    return max(out[Z_CHARGE_BALANCE], out[Z_RECIPROCITY_RESIDUAL]) <= IDENTITY_TOLERANCE


@njit(cache=True, error_model="numpy")
def summarize(p, sc, iso, slip, integrals, kappa2, deviation, estimate, out):
    """Fill ``out`` (``SLOTS`` layout) from the extrapolated section integrals; returns the ion-resolved
    and the reduced response matrices. ``slip`` is ``thin_slip`` of the isolated walls, ``deviation``
    ``outer_deviation`` of the finest profile and ``estimate`` the grid error estimate."""
    ions = ion_block(p)
    symmetric = p[P_SYMMETRIC] != 0.0
    field, gradient = p[P_FIELD], p[P_PRESSURE_GRADIENT]
    vt, area, section = sc[S_THERMAL_VOLTAGE], sc[S_AREA], sc[S_SECTION_AREA]
    # equilibrium: wall, centre and mean potentials, wall charge (a pair: bottom, top)
    zetas = (integrals[I_PSI_LEFT] * vt, integrals[I_PSI_RIGHT] * vt)
    sigmas = (integrals[I_FLUX_LEFT] * sc[S_CHARGE_DENSITY], integrals[I_FLUX_RIGHT] * sc[S_CHARGE_DENSITY])
    _set_pair(out, Z_ZETA, zetas[0], zetas[1], symmetric)
    _set_pair(out, Z_SIGMA, sigmas[0], sigmas[1], symmetric)
    stern = np.empty(2)
    for side in range(2):
        row = wall_si(p, side)
        inverse = row[W_STERN] if row[W_TYPE] == REGULATED else 0.0
        # potential of the charge plane behind the Stern layer: psi_0 = zeta + sigma / C_S
        stern[side] = zetas[side] + sigmas[side] * inverse if inverse > 0.0 else np.nan
    _set_pair(out, Z_STERN, stern[0], stern[1], symmetric)
    out[Z_DEBYE_LENGTH] = sc[S_DEBYE_LENGTH]
    out[Z_KAPPA_H] = sc[S_LENGTH] / sc[S_DEBYE_LENGTH]
    out[Z_CENTRE_POTENTIAL] = integrals[I_PSI_CENTRE] * vt
    out[Z_MEAN_POTENTIAL] = integrals[I_PSI] * area / section * vt
    # flow: Q_eo = E (eps kT / e eta) int u_eo dA, Q_p = (dp/dx)(L^2 / eta) int u_p dA
    eo_per_field = sc[S_EO_VELOCITY] * integrals[I_UEO] * area
    q_eo = field * eo_per_field
    q_p = gradient * sc[S_PRESSURE_VELOCITY] * integrals[I_UP] * area
    out[Z_FLOW_RATE_EO] = q_eo
    out[Z_FLOW_RATE_PRESSURE] = q_p
    out[Z_MEAN_VELOCITY_EO] = q_eo / section
    out[Z_MEAN_VELOCITY_PRESSURE] = q_p / section
    # currents: conduction (Nernst-Einstein) and convection of the space charge
    conduction = 0.0
    for i in range(ions.shape[0]):
        conduction += ions[i, 0] ** 2 * ions[i, 2] * ions[i, 1] * integrals[ION_INTEGRALS + i]
    conductance = FARADAY / vt * area * conduction
    charge_area = sc[S_VOLUME_CHARGE] * area
    eo_convection = charge_area * sc[S_EO_VELOCITY] * integrals[I_RHO_UEO]
    streaming = gradient * charge_area * sc[S_PRESSURE_VELOCITY] * integrals[I_RHO_UP]
    out[Z_CONDUCTION_CURRENT] = field * conductance
    out[Z_STREAMING_CURRENT] = streaming
    out[Z_EO_CONVECTION_CURRENT] = field * eo_convection
    out[Z_CURRENT] = field * (conductance + eo_convection) + streaming
    out[Z_CURRENT_PER_FIELD] = conductance + eo_convection
    # the thin-layer model: slip velocities of the isolated walls, and its error on the EO flow
    thin_per_field = section * 0.5 * (slip[0] + slip[1])
    # between walls of opposite sign either flow may vanish; below round-off of the slip scale the relative
    # error and the ratio are undefined (NaN) rather than noise
    negligible = 1e-10 * section * max(abs(slip[0]), abs(slip[1]))
    error = (thin_per_field - eo_per_field) / eo_per_field if abs(eo_per_field) > negligible else np.nan
    _set_pair(out, Z_HS, slip[0] * field, slip[1] * field, symmetric)
    out[Z_EO_RATIO] = eo_per_field / thin_per_field if abs(thin_per_field) > negligible else np.nan
    _set_pair(out, Z_THIN_ZETA, iso[0, 0], iso[1, 0], symmetric)
    out[Z_THIN_LAYER_FLOW_RATE_EO] = thin_per_field * field
    out[Z_THIN_LAYER_FLOW_RATE_ERROR] = error
    out[Z_THIN_LAYER_MEAN_VELOCITY_ERROR] = error  # same area, so the same relative error
    out[Z_THIN_LAYER_MAX_OUTER_DEVIATION] = deviation
    # transport: lab quantities of the full and the thin-layer response matrices
    ion_matrix = ion_response_matrix(p, sc, integrals)
    matrix = reduced_matrix(p, ion_matrix)
    full = lab_quantities(matrix, p)
    full[LAB_TRANSFERENCE] = cation_transference(p, ion_matrix)
    thin = lab_quantities(thin_layer_matrix(p, sc, iso, slip), p)
    bulk = 0.0
    bulk_cations = 0.0
    for i in range(ions.shape[0]):
        share = ions[i, 0] ** 2 * ions[i, 2] * ions[i, 1]
        bulk += share
        if ions[i, 0] > 0.0:
            bulk_cations += share
    thin[LAB_TRANSFERENCE] = bulk_cations / bulk
    for j in range(LAB_SLOTS.size):
        out[LAB_SLOTS[j]] = full[j]
    out[Z_SELECTIVITY] = 2.0 * full[LAB_TRANSFERENCE] - 1.0
    for j in range(COMPARED_LAB.size):
        value = thin[COMPARED_LAB[j]]
        out[COMPARED_THIN[j]] = value
        out[COMPARED_ERROR[j]] = _relative_error(value, full[COMPARED_LAB[j]])
    balance, reciprocity = identity_residuals(p, kappa2, integrals, ion_matrix)
    out[Z_CHARGE_BALANCE] = balance
    out[Z_RECIPROCITY_RESIDUAL] = reciprocity
    out[Z_ERROR_ESTIMATE] = estimate
    return ion_matrix, matrix
