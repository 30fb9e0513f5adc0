"""Compiled unsteady axial flow of the transient Poisson-Nernst-Planck solver (``kernels.pnp_system``).

The flow does not act back on the section's ions (the field and the flow are along a long uniform channel), so
each implicit stage solves the ions and the potential first and then the two velocities, which are linear:

    r V_j dv_j/dt = [A v]_j + kappa2 V_j rho_j e(t),     r V_j dw_j/dt = [A w]_j - V_j g(t)

(v the field-driven velocity in eps kT E_s / (e eta), w the pressure-driven one in G_s L^2 / eta, A the Stokes
operator of ``model.flow_operator`` with no slip, Navier slip or symmetry at the ends, r = rho_m D_ref / eta).
A stage (r V - c A) v = b + c f(t) is two tridiagonal solves; the matrix is symmetric positive definite, so the
Thomas algorithm needs no pivoting. The columns of the (n, 2) arrays are v and w.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels.fv1d import tridiagonal_solve
from edl_solver.kernels.layout import DH, FLOW_CODE, FLOW_VALUE, POTENTIAL, ROBIN, SPECIES_WEIGHT
from edl_solver.kernels.pnp_system import SLOT_FIELD, SLOT_PRESSURE, drive_value


@njit(cache=True)
def charge_density(y, pr, out):
    """rho_hat at the nodes of the ion columns of ``y`` into ``out``."""
    nion = pr.ions.shape[0]
    for j in range(y.shape[0]):
        rho = 0.0
        for k in range(nion):
            rho += pr.ions[k, SPECIES_WEIGHT] * (y[j, k] if pr.model == DH else np.exp(y[j, k]))
        out[j] = rho


@njit(cache=True)
def _forcing(rho, t, pr, out):
    """f(t): kappa2 V rho e(t) for v and -V g(t) for w."""
    e_t = drive_value(SLOT_FIELD, t, pr.dcode, pr.dbase, pr.dsine, pr.dstart, pr.dtimes, pr.dvalues)
    g_t = drive_value(SLOT_PRESSURE, t, pr.dcode, pr.dbase, pr.dsine, pr.dstart, pr.dtimes, pr.dvalues)
    for j in range(rho.size):
        out[j, 0] = pr.kappa2 * pr.volume[j] * rho[j] * e_t
        out[j, 1] = -pr.volume[j] * g_t


@njit(cache=True)
def _no_slip(pr, end):
    return int(pr.flow_walls[end, FLOW_CODE]) == POTENTIAL


@njit(cache=True, error_model="numpy")
def flow_solve(rhs, c, pr, out):
    """(r V - c A) x = rhs for both columns into ``out``; x = 0 at no-slip walls."""
    n = rhs.shape[0]
    lower, diag, upper = np.zeros(n), np.empty(n), np.zeros(n)
    column, work, result = np.empty(n), np.empty(n), np.empty(n)
    for j in range(n):
        diag[j] = pr.ratio * pr.volume[j]
    for j in range(n - 1):
        a = c * pr.link[j]
        diag[j] += a
        diag[j + 1] += a
        upper[j] = -a
        lower[j + 1] = -a
    for end in range(2):
        j = 0 if end == 0 else n - 1
        if _no_slip(pr, end):
            diag[j], lower[j], upper[j] = 1.0, 0.0, 0.0
        elif int(pr.flow_walls[end, FLOW_CODE]) == ROBIN:
            diag[j] += c * pr.flow_walls[end, FLOW_VALUE]
    for q in range(2):
        for j in range(n):
            column[j] = rhs[j, q]
        for end in range(2):
            if _no_slip(pr, end):
                column[0 if end == 0 else n - 1] = 0.0
        tridiagonal_solve(lower, diag, upper, column, result, work)
        for j in range(n):
            out[j, q] = result[j]


@njit(cache=True)
def flow_stage(b, c, t, rho, pr, out):
    """The stage's velocities: (r V - c A) v = b + c f(t) into ``out``."""
    rhs = np.empty_like(b)
    _forcing(rho, t, pr, rhs)
    for j in range(b.shape[0]):
        for q in range(2):
            rhs[j, q] = b[j, q] + c * rhs[j, q]
    flow_solve(rhs, c, pr, out)


@njit(cache=True)
def flow_conserved(v, pr, out):
    """r V v."""
    for j in range(v.shape[0]):
        for q in range(2):
            out[j, q] = pr.ratio * pr.volume[j] * v[j, q]


@njit(cache=True)
def flow_slopes(v, rho, t, pr, out):
    """F = A v + f(t) into ``out``, zero at no-slip walls."""
    n = v.shape[0]
    _forcing(rho, t, pr, out)
    for j in range(n - 1):
        a = pr.link[j]
        for q in range(2):
            flow = a * (v[j + 1, q] - v[j, q])
            out[j, q] += flow
            out[j + 1, q] -= flow
    for end in range(2):
        j = 0 if end == 0 else n - 1
        for q in range(2):
            if _no_slip(pr, end):
                out[j, q] = 0.0
            elif int(pr.flow_walls[end, FLOW_CODE]) == ROBIN:
                out[j, q] -= pr.flow_walls[end, FLOW_VALUE] * v[j, q]


@njit(cache=True)
def stage_slopes(v, b, c, pr, out):
    """F of a solved stage, (r V v - b) / c, zero at no-slip walls (as ``pnp_stepper.slopes``)."""
    n = v.shape[0]
    flow_conserved(v, pr, out)
    for j in range(n):
        for q in range(2):
            out[j, q] = (out[j, q] - b[j, q]) / c
    for end in range(2):
        if _no_slip(pr, end):
            out[0 if end == 0 else n - 1, :] = 0.0


@njit(cache=True)
def flow_error(e, pr, scales):
    """Volume-mean size of the velocity error ``e`` against the scales of v and w."""
    total = pr.volume.sum()
    worst = 0.0
    for q in range(2):
        acc = 0.0
        for j in range(e.shape[0]):
            acc += pr.volume[j] * abs(e[j, q])
        worst = max(worst, acc / total / scales[q])
    return worst
