"""Compiled step from the section integrals of one case to its summary: every value ``Result.summary``
holds, in one float vector (layout ``layout.SLOTS``), plus the ion-resolved and reduced response matrices.

The physics lives beside it, one concern per module, each stating its sources: the response matrices
(``response``), the lab quantities (``lab``), the thin-layer counterparts (``thin_layer``) and the identity
checks (``identities``); model/profiles.py states the flow and concentration profiles. One compiled
copy serves a single solve (``pipeline``) and a sweep (``batch``) alike, so their values are identical.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import FARADAY
from edl_solver.kernels.identities import IDENTITY_TOLERANCE, identity_residuals
from edl_solver.kernels.lab import cation_transference, lab_quantities
from edl_solver.kernels.layout import (
    COMPARED,
    I_FLUX_LEFT,
    I_FLUX_RIGHT,
    I_PSI,
    I_PSI_CENTRE,
    I_PSI_LEFT,
    I_PSI_RIGHT,
    I_RHO_UEO,
    I_RHO_UP,
    I_UEO,
    I_UP,
    ION_CONCENTRATION,
    ION_DIFFUSIVITY,
    ION_INTEGRALS,
    ION_VALENCE,
    ISO_ZETA,
    L_TRANSFERENCE,
    LAB,
    LAB_KEYS,
    P_FIELD,
    P_PRESSURE_GRADIENT,
    P_SYMMETRIC,
    REGULATED,
    S_AREA,
    S_CHARGE_DENSITY,
    S_DEBYE_LENGTH,
    S_EO_VELOCITY,
    S_LENGTH,
    S_PRESSURE_VELOCITY,
    S_SECTION_AREA,
    S_THERMAL_VOLTAGE,
    S_VOLUME_CHARGE,
    SLOTS,
    W_STERN,
    W_TYPE,
    Z_CENTRE_POTENTIAL,
    Z_CHARGE_BALANCE,
    Z_CONDUCTION_CURRENT,
    Z_CURRENT,
    Z_CURRENT_PER_FIELD,
    Z_DEBYE_LENGTH,
    Z_EO_CONVECTION_CURRENT,
    Z_EO_RATIO,
    Z_ERROR_ESTIMATE,
    Z_FLOW_RATE_EO,
    Z_FLOW_RATE_PRESSURE,
    Z_HS,
    Z_KAPPA_H,
    Z_MEAN_POTENTIAL,
    Z_MEAN_VELOCITY_EO,
    Z_MEAN_VELOCITY_PRESSURE,
    Z_RECIPROCITY_RESIDUAL,
    Z_SELECTIVITY,
    Z_SIGMA,
    Z_STERN,
    Z_STREAMING_CURRENT,
    Z_THIN_LAYER_FLOW_RATE_EO,
    Z_THIN_LAYER_FLOW_RATE_ERROR,
    Z_THIN_LAYER_MAX_OUTER_DEVIATION,
    Z_THIN_LAYER_MEAN_VELOCITY_ERROR,
    Z_THIN_ZETA,
    Z_ZETA,
)
from edl_solver.kernels.prepare import ion_block, wall_si
from edl_solver.kernels.response import ion_response_matrix, reduced_matrix
from edl_solver.kernels.thin_layer import (
    bulk_cation_transference,
    outer_deviation,
    plug_shape,
    thin_layer_matrix,
    thin_slip,
)

#: Where each lab quantity goes in the summary vector.
LAB_SLOTS = np.array([SLOTS[key] for key in LAB_KEYS])
#: The lab quantities with thin-layer counterparts, and the slots of those and of their relative errors.
COMPARED_LAB = np.array([LAB[key] for key in COMPARED])
COMPARED_THIN = np.array([SLOTS[f"thin_layer_{key}"] for key in COMPARED])
COMPARED_ERROR = np.array([SLOTS[f"thin_layer_{key}_error"] for key in COMPARED])


@njit(cache=True, error_model="numpy")
def _set_pair(out, at, bottom, top, symmetric):
    out[at] = top if symmetric else bottom
    out[at + 1] = top


@njit(cache=True, error_model="numpy")
def _relative_error(thin, full):
    return (thin - full) / full if full != 0.0 and np.isfinite(thin) else np.nan


@njit(cache=True, error_model="numpy")
def _equilibrium(p, sc, integrals, symmetric, out):
    """Wall, centre and mean potentials, the wall charge and the Stern-plane potential (pairs: bottom, top).

    Behind a Stern layer the charge plane sits at psi_0 = zeta + sigma / C_S (NaN without one).
    """
    vt = sc[S_THERMAL_VOLTAGE]
    zetas = (integrals[I_PSI_LEFT] * vt, integrals[I_PSI_RIGHT] * vt)
    sigmas = (integrals[I_FLUX_LEFT] * sc[S_CHARGE_DENSITY], integrals[I_FLUX_RIGHT] * sc[S_CHARGE_DENSITY])
    _set_pair(out, Z_ZETA, zetas[0], zetas[1], symmetric)
    _set_pair(out, Z_SIGMA, sigmas[0], sigmas[1], symmetric)
    stern = np.empty(2)
    for side in range(2):
        row = wall_si(p, side)
        inverse = row[W_STERN] if row[W_TYPE] == REGULATED else 0.0
        stern[side] = zetas[side] + sigmas[side] * inverse if inverse > 0.0 else np.nan
    _set_pair(out, Z_STERN, stern[0], stern[1], symmetric)
    out[Z_DEBYE_LENGTH] = sc[S_DEBYE_LENGTH]
    out[Z_KAPPA_H] = sc[S_LENGTH] / sc[S_DEBYE_LENGTH]
    out[Z_CENTRE_POTENTIAL] = integrals[I_PSI_CENTRE] * vt
    out[Z_MEAN_POTENTIAL] = integrals[I_PSI] * sc[S_AREA] / sc[S_SECTION_AREA] * vt


@njit(cache=True, error_model="numpy")
def _flow_and_currents(p, sc, integrals, out):
    """Flow rates, mean velocities and currents at the case's field and pressure gradient; returns the EO
    flow rate per unit field.

    Q_eo = E (eps kT / e eta) int u_eo dA, Q_p = (dp/dx)(L^2 / eta) int u_p dA; currents: conduction
    (Nernst-Einstein, F^2/RT sum z^2 D c int c/c_bulk dA) and convection of the space charge by either flow.
    """
    ions = ion_block(p)
    field, gradient = p[P_FIELD], p[P_PRESSURE_GRADIENT]
    vt, area, section = sc[S_THERMAL_VOLTAGE], sc[S_AREA], sc[S_SECTION_AREA]
    eo_per_field = sc[S_EO_VELOCITY] * integrals[I_UEO] * area
    q_eo = field * eo_per_field
    q_p = gradient * sc[S_PRESSURE_VELOCITY] * integrals[I_UP] * area
    out[Z_FLOW_RATE_EO] = q_eo
    out[Z_FLOW_RATE_PRESSURE] = q_p
    out[Z_MEAN_VELOCITY_EO] = q_eo / section
    out[Z_MEAN_VELOCITY_PRESSURE] = q_p / section
    conduction = 0.0
    for i in range(ions.shape[0]):
        conduction += (ions[i, ION_VALENCE] ** 2 * ions[i, ION_DIFFUSIVITY] * ions[i, ION_CONCENTRATION]
                       * integrals[ION_INTEGRALS + i])
    conductance = FARADAY / vt * area * conduction
    charge_area = sc[S_VOLUME_CHARGE] * area
    eo_convection = charge_area * sc[S_EO_VELOCITY] * integrals[I_RHO_UEO]
    streaming = gradient * charge_area * sc[S_PRESSURE_VELOCITY] * integrals[I_RHO_UP]
    out[Z_CONDUCTION_CURRENT] = field * conductance
    out[Z_STREAMING_CURRENT] = streaming
    out[Z_EO_CONVECTION_CURRENT] = field * eo_convection
    out[Z_CURRENT] = field * (conductance + eo_convection) + streaming
    out[Z_CURRENT_PER_FIELD] = conductance + eo_convection
    return eo_per_field


@njit(cache=True, error_model="numpy")
def _thin_layer_flow(p, sc, iso, slip, shape, eo_per_field, deviation, symmetric, out):
    """The thin-layer model's EO flow from the slip velocities of the isolated walls (the first wall's share of the
    mean velocity ``shape[0]``, ``thin_layer.plug_shape``), and its error."""
    field, section = p[P_FIELD], sc[S_SECTION_AREA]
    thin_per_field = section * (shape[0] * slip[0] + (1.0 - shape[0]) * slip[1])
    # between walls of opposite sign either flow may vanish; below round-off of the slip scale the relative
    # error and the ratio are undefined (NaN) rather than noise
    negligible = 1e-10 * section * max(abs(slip[0]), abs(slip[1]))
    error = (thin_per_field - eo_per_field) / eo_per_field if abs(eo_per_field) > negligible else np.nan
    _set_pair(out, Z_HS, slip[0] * field, slip[1] * field, symmetric)
    out[Z_EO_RATIO] = eo_per_field / thin_per_field if abs(thin_per_field) > negligible else np.nan
    _set_pair(out, Z_THIN_ZETA, iso[0, ISO_ZETA], iso[1, ISO_ZETA], symmetric)
    out[Z_THIN_LAYER_FLOW_RATE_EO] = thin_per_field * field
    out[Z_THIN_LAYER_FLOW_RATE_ERROR] = error
    out[Z_THIN_LAYER_MEAN_VELOCITY_ERROR] = error  # same area, so the same relative error
    out[Z_THIN_LAYER_MAX_OUTER_DEVIATION] = deviation


@njit(cache=True, error_model="numpy")
def _transport(p, sc, iso, slip, shape, integrals, out):
    """Lab quantities of the full and the thin-layer response matrices, and the thin-layer ones' relative
    errors; returns the ion-resolved and the reduced matrices."""
    ion_matrix = ion_response_matrix(p, sc, integrals)
    matrix = reduced_matrix(p, ion_matrix)
    full = lab_quantities(matrix, p)
    full[L_TRANSFERENCE] = cation_transference(p, ion_matrix)
    thin = lab_quantities(thin_layer_matrix(p, sc, iso, slip, shape), p)
    thin[L_TRANSFERENCE] = bulk_cation_transference(p)
    for j in range(LAB_SLOTS.size):
        out[LAB_SLOTS[j]] = full[j]
    out[Z_SELECTIVITY] = 2.0 * full[L_TRANSFERENCE] - 1.0
    for j in range(COMPARED_LAB.size):
        value = thin[COMPARED_LAB[j]]
        out[COMPARED_THIN[j]] = value
        out[COMPARED_ERROR[j]] = _relative_error(value, full[COMPARED_LAB[j]])
    return ion_matrix, matrix


@njit(cache=True, error_model="numpy")
def summarize_integrals(p, sc, iso, slip, shape, integrals, deviation, out):
    """Fill ``out`` (``SLOTS`` layout) from the extrapolated section ``integrals`` (``I_*`` layout) of the case vector
    ``p`` with scales ``sc``, all but the identity checks and the error estimate; returns the ion-resolved and the
    reduced response matrices. ``shape`` is the thin-layer flow's shape (``thin_layer.plug_shape``); a rectangle
    passes its own (``model.rectangle_case``), with its integrals in this layout."""
    symmetric = p[P_SYMMETRIC] != 0.0
    _equilibrium(p, sc, integrals, symmetric, out)
    eo_per_field = _flow_and_currents(p, sc, integrals, out)
    _thin_layer_flow(p, sc, iso, slip, shape, eo_per_field, deviation, symmetric, out)
    return _transport(p, sc, iso, slip, shape, integrals, out)


@njit(cache=True, error_model="numpy")
def summarize(p, inputs, solved, slip, deviation, out):
    """Fill ``out`` (``SLOTS`` layout) from the extrapolated section integrals of ``solved`` (a ``SectionSolve``
    of the case vector ``p`` prepared as ``inputs``); returns the ion-resolved and the reduced response
    matrices. ``slip`` is ``thin_slip`` of the isolated walls and ``deviation`` ``outer_deviation`` of the
    finest profile."""
    sc, iso, integrals = inputs.scales, inputs.isolated, solved.integrals
    ion_matrix, matrix = summarize_integrals(p, sc, iso, slip, plug_shape(p, sc), integrals, deviation, out)
    balance, reciprocity = identity_residuals(p, inputs.problem.kappa2, integrals, ion_matrix)
    out[Z_CHARGE_BALANCE] = balance
    out[Z_RECIPROCITY_RESIDUAL] = reciprocity
    out[Z_ERROR_ESTIMATE] = solved.estimate
    return ion_matrix, matrix


@njit(cache=True, error_model="numpy")
def summarize_solution(p, inputs, solved, out):
    """``summarize`` a solved section, with the outer-region deviation of its finest EO profile; the step a
    single solve and a batch share. Returns the ion-resolved and the reduced response matrices."""
    slip = thin_slip(p, inputs.isolated)
    deviation = outer_deviation(solved.s, solved.beta, solved.u_eo, p, inputs.scales, slip)
    return summarize(p, inputs, solved, slip, deviation, out)


@njit(cache=True, error_model="numpy")
def identities_hold(out):
    """Whether a filled summary vector passes the identity checks (``IDENTITY_TOLERANCE``; NaN fails)."""
    return max(out[Z_CHARGE_BALANCE], out[Z_RECIPROCITY_RESIDUAL]) <= IDENTITY_TOLERANCE
