"""Compiled discrete transient Poisson-Nernst-Planck system of one cross-section, with the unsteady axial flow.

Dimensionless as the steady kernels (``kernels.fv1d``): psi = e phi / kT, lengths in L, concentrations over
their bulk values, rho_hat = sum_k w_k c_k (w_k = z_k c_k,bulk / sum_j z_j^2 c_j,bulk), Poisson
lap(psi) = -kappa2 rho_hat; time in L^2 / D_ref, d_k = D_k / D_ref. Unknowns per node (the columns of ``y``):
the ions (u_k = ln c_k for the full problem, the perturbation c_k - 1 for the linearised one) and psi; the flow
along the channel, which does not act back on them, is ``kernels.pnp_flow``'s.

Equations on the finite volumes of ``kernels.fv1d.finite_volume_metric`` (node volumes V_j, links a_j):

    V_j dc_kj/dt = d_k (J_k,j-1/2 - J_k,j+1/2),
    J_k,j+1/2 = a_j [B(z_k dpsi) c_kj - B(-z_k dpsi) c_k,j+1],  B(x) = x / (e^x - 1),  dpsi = psi_j+1 - psi_j

the Scharfetter-Gummel flux (Scharfetter & Gummel 1969, IEEE Trans. Electron Devices 16, 64), exact for a
constant flux between the nodes and zero at Boltzmann equilibrium, so the discrete steady state of a closed
section is c_k = n_k exp(-z_k psi) at the nodes. The linearised flux is a_j [(c_kj - c_k,j+1) - z_k dpsi].
No ion crosses a wall or the symmetry plane, and the fluxes are antisymmetric between neighbours, so
sum_j V_j c_kj changes only by the Newton residual: the inventory is conserved to round-off.

    0 = a_j (psi_j+1 - psi_j) - a_j-1 (psi_j - psi_j-1) + kappa2 V_j rho_j  (+ the wall terms of fv1d)

with the wall values from the drives (``drive_value``). Each implicit stage of the stepper solves
M(y) - b - c F(y, t) = 0 on the ion rows (M the conserved quantity V_j c_kj) and Poisson as it is; ``assemble``
returns that residual and its block-tridiagonal Jacobian (``kernels.block_tridiagonal``).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numba import njit

from edl_solver.kernels.layout import (
    DH,
    FLUX,
    POTENTIAL,
    REGULATED,
    SPECIES_VALENCE,
    SPECIES_WEIGHT,
    W_TYPE,
    W_VALUE,
)
from edl_solver.kernels.walls import regulated_charge


class PnpProblem(NamedTuple):
    """The arrays and scalars of one discrete problem (see the module docstring and ``model.pnp_setup``)."""

    link: np.ndarray  # (n - 1,) link conductances
    volume: np.ndarray  # (n,) node volumes
    kappa2: float  # (kappa L)^2
    ions: np.ndarray  # (n_ions, SPECIES_SIZE) valence and weight
    diff: np.ndarray  # (n_ions,) D_k / D_ref
    model: int  # PB or DH
    walls: np.ndarray  # (2, WALL_SIZE) wall rows of the left and right ends after the step
    wall_field: np.ndarray  # (2,) int: the entry of each wall row its drive sets (-1: none)
    flow_walls: np.ndarray  # (2, FLOW_SIZE) the flow conditions (``kernels.pnp_flow``)
    ratio: float  # rho_m D_ref / eta
    gauge: int  # node whose potential is held (walls of fixed charge only), else -1
    gauge_value: float
    dcode: np.ndarray  # (DRIVE_SLOTS,) int drive codes
    dbase: np.ndarray  # (DRIVE_SLOTS,) constant values
    dsine: np.ndarray  # (DRIVE_SLOTS, 4) offset, amplitude, angular frequency, phase
    dstart: np.ndarray  # (DRIVE_SLOTS + 1,) int offsets of each slot's points in dtimes / dvalues
    dtimes: np.ndarray
    dvalues: np.ndarray


#: Drive slots: the field and pressure-gradient multipliers and the values of the left and right wall ends.
SLOT_FIELD, SLOT_PRESSURE, SLOT_LEFT, SLOT_RIGHT = 0, 1, 2, 3
DRIVE_SLOTS = 4
#: Drive codes: a constant, offset + amplitude sin(omega t + phase), piecewise linear (jumps as repeated times).
CONSTANT, SINE, PIECEWISE = 0, 1, 2


@njit(cache=True)
def drive_value(slot, t, code, base, sine, start, times, values):
    """Value of drive ``slot`` at dimensionless time t (right-continuous at a jump)."""
    kind = code[slot]
    if kind == SINE:
        return sine[slot, 0] + sine[slot, 1] * np.sin(sine[slot, 2] * t + sine[slot, 3])
    if kind == PIECEWISE:
        lo, hi = start[slot], start[slot + 1]
        k = lo + np.searchsorted(times[lo:hi], t, side="right")
        if k == lo:
            return values[lo]
        if k == hi:
            return values[hi - 1]
        t0, t1 = times[k - 1], times[k]
        return values[k - 1] + (values[k] - values[k - 1]) * (t - t0) / (t1 - t0)
    return base[slot]


@njit(cache=True, error_model="numpy")
def bernoulli(x):
    """B(x) = x / (e^x - 1) and B'(x), accurate for every x (series near 0, no overflow for large |x|)."""
    if abs(x) < 1e-2:
        x2 = x * x
        return 1.0 - 0.5 * x + x2 / 12.0 - x2 * x2 / 720.0, -0.5 + x / 6.0 - x2 * x / 180.0 + x2 * x2 * x / 5040.0
    if x > 0.0:
        e = np.exp(-x)
        one_minus = -np.expm1(-x)
        return x * e / one_minus, (one_minus - x) * e / (one_minus * one_minus)
    m = np.expm1(x)
    return x / m, (m - x * np.exp(x)) / (m * m)


@njit(cache=True, error_model="numpy")
def bernoulli_pair(x):
    """B(x), B'(x), B(-x), B'(-x) from one evaluation: B(-a) = a + B(a) and B'(-a) = -1 - B'(a), taken with
    a = |x| >= 0 so that no difference cancels."""
    a = abs(x)
    b, db = bernoulli(a)
    if x >= 0.0:
        return b, db, a + b, -1.0 - db
    return a + b, -1.0 - db, b, db


@njit(cache=True)
def wall_row(walls, end, field, value):
    """Copy of the wall row of ``end`` with its driven entry ``field`` (W_VALUE or W_GATE_V) set to ``value``."""
    row = walls[end].copy()
    if field >= 0:
        row[field] = value
    return row


@njit(cache=True, error_model="numpy")
def _node_terms(y, b, volume, kappa2, ions, linear, res, diag):
    """The conserved quantities and the space charge in Poisson, node by node."""
    nion = ions.shape[0]
    for j in range(y.shape[0]):
        rho = 0.0
        for k in range(nion):
            w = ions[k, SPECIES_WEIGHT]
            if linear:
                conc, dconc = y[j, k], 1.0
            else:
                conc = np.exp(y[j, k])
                dconc = conc
            res[j, k] = volume[j] * conc - b[j, k]
            diag[j, k, k] = volume[j] * dconc
            rho += w * conc
            diag[j, nion, k] = kappa2 * volume[j] * w * dconc
        res[j, nion] = kappa2 * volume[j] * rho


@njit(cache=True, error_model="numpy")
def _link_terms(y, c, link, ions, diff, linear, res, lower, diag, upper):
    """The ion fluxes and the Laplacian of psi, link by link."""
    nion = ions.shape[0]
    ip = nion
    for j in range(y.shape[0] - 1):
        a = link[j]
        dpsi = y[j + 1, ip] - y[j, ip]
        for k in range(nion):
            z = ions[k, SPECIES_VALENCE]
            ck = c * diff[k]
            if linear:
                flux = a * ((y[j, k] - y[j + 1, k]) - z * dpsi)
                d_left, d_right, d_psi = a, -a, -a * z  # d flux / d (c_j, c_j+1, psi_j+1); d/d psi_j = -d_psi
            else:
                bp, dbp, bm, dbm = bernoulli_pair(z * dpsi)
                cl, cr = np.exp(y[j, k]), np.exp(y[j + 1, k])
                flux = a * (bp * cl - bm * cr)
                d_left, d_right = a * bp * cl, -a * bm * cr
                d_psi = a * z * (dbp * cl + dbm * cr)
            # F_j = d (J_j-1/2 - J_j+1/2): node j loses the flux, node j+1 gains it; residual has -c F
            res[j, k] += ck * flux
            res[j + 1, k] -= ck * flux
            diag[j, k, k] += ck * d_left
            upper[j, k, k] += ck * d_right
            upper[j, k, ip] += ck * d_psi
            diag[j, k, ip] -= ck * d_psi
            lower[j + 1, k, k] -= ck * d_left
            diag[j + 1, k, k] -= ck * d_right
            diag[j + 1, k, ip] -= ck * d_psi
            lower[j + 1, k, ip] += ck * d_psi
        res[j, ip] += a * dpsi
        res[j + 1, ip] -= a * dpsi
        diag[j, ip, ip] -= a
        upper[j, ip, ip] += a
        diag[j + 1, ip, ip] -= a
        lower[j + 1, ip, ip] += a


@njit(cache=True)
def _hold(j, col, value, res, lower, diag, upper):
    """Make row (j, col) the algebraic condition y[j, col] = value (its residual ``value`` given)."""
    res[j, col] = value
    diag[j, col, :] = 0.0
    diag[j, col, col] = 1.0
    upper[j, col, :] = 0.0
    lower[j, col, :] = 0.0


@njit(cache=True, error_model="numpy")
def _wall_terms(y, row, end, nion, res, lower, diag, upper):
    """One wall end's potential condition or charge."""
    j = 0 if end == 0 else y.shape[0] - 1
    kind = int(row[W_TYPE])
    if kind == POTENTIAL:
        _hold(j, nion, y[j, nion] - row[W_VALUE], res, lower, diag, upper)
    elif kind == FLUX:
        res[j, nion] += row[W_VALUE]
    elif kind == REGULATED:
        sigma, dsigma, _ = regulated_charge(y[j, nion], row)
        res[j, nion] += sigma
        diag[j, nion, nion] += dsigma


@njit(cache=True, error_model="numpy")
def assemble(y, b, c, t, link, volume, kappa2, ions, diff, model, walls, wall_field, gauge, gauge_value, dcode,
             dbase, dsine, dstart, dtimes, dvalues, res, lower, diag, upper):
    """Residual M(y) - b - c F(y, t) (ion rows) / Poisson (potential rows) into ``res`` and its Jacobian into the
    (n, m, m) blocks ``lower``, ``diag``, ``upper`` (see the module docstring).

    With c = -1 and b = M(y) the ion rows of ``res`` are F(y, t) itself. ``gauge`` >= 0 replaces that node's
    Poisson row by psi = ``gauge_value`` (walls of fixed charge only: the potential has no reference).
    """
    nion = ions.shape[0]
    linear = model == DH
    lower[:] = 0.0
    diag[:] = 0.0
    upper[:] = 0.0
    _node_terms(y, b, volume, kappa2, ions, linear, res, diag)
    _link_terms(y, c, link, ions, diff, linear, res, lower, diag, upper)
    for end in range(2):
        value = drive_value(SLOT_LEFT + end, t, dcode, dbase, dsine, dstart, dtimes, dvalues)
        _wall_terms(y, wall_row(walls, end, wall_field[end], value), end, nion, res, lower, diag, upper)
    if gauge >= 0:
        _hold(gauge, nion, y[gauge, nion] - gauge_value, res, lower, diag, upper)
    return y.shape[1]


@njit(cache=True)
def assemble_problem(y, b, c, t, pr, res, lower, diag, upper):
    """``assemble`` with the arrays of a ``PnpProblem``."""
    return assemble(y, b, c, t, pr.link, pr.volume, pr.kappa2, pr.ions, pr.diff, pr.model, pr.walls,
                    pr.wall_field, pr.gauge, pr.gauge_value, pr.dcode, pr.dbase, pr.dsine, pr.dstart, pr.dtimes,
                    pr.dvalues, res, lower, diag, upper)


@njit(cache=True)
def conserved(y, pr, out):
    """M(y): V_j c_kj (or V_j times the perturbation); 0 on the potential rows."""
    nion = pr.ions.shape[0]
    for j in range(y.shape[0]):
        for k in range(nion):
            out[j, k] = pr.volume[j] * (y[j, k] if pr.model == DH else np.exp(y[j, k]))
        out[j, nion] = 0.0
