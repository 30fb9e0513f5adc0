"""Compiled arithmetic on arrays for one grid: the Poisson-Boltzmann Newton iteration, the Stokes solve
and the section integrals (nested grids and error control are in _adaptive.py).

Everything here takes only arrays and scalars and knows nothing of cases or units (see grid.py for the
finite-volume metric and equilibrium.py for the physics these kernels serve). Dimensionless variables:
psi = e*phi/kT, lengths in the half-size L, the charge density rho_hat = sum_k w_k exp(-z_k psi) with
w_k = z_k c_k / sum_j z_j^2 c_j, so that Poisson reads  laplacian(psi) = -kappa2 * rho_hat  with
kappa2 = (kappa L)^2.

Boundary codes (per end of the grid): POTENTIAL fixes the node value; FLUX fixes the outward-normal
derivative (wall charge, or 0 at a symmetry plane); ROBIN (flow only) is a Navier slip wall
u = -b du/dn, given as the coefficient 1/b_hat.
"""

from __future__ import annotations

import numpy as np
from numba import njit

POTENTIAL = 0
FLUX = 1
ROBIN = 2

# Layout of the integral vector filled by ``section_integrals``; ions follow from ION_INTEGRALS on.
I_PSI = 0  # int psi dV
I_UEO = 1  # int u_eo dV
I_UP = 2  # int u_p dV
I_RHO_UEO = 3  # int rho u_eo dV
I_RHO_UP = 4  # int rho u_p dV
I_RHO = 5  # int rho dV
I_PSI_LEFT = 6
I_PSI_RIGHT = 7
I_FLUX_LEFT = 8  # outward-normal derivative of psi at the left end (r^m sigma_hat)
I_FLUX_RIGHT = 9
I_PSI_CENTRE = 10
ION_INTEGRALS = 11  # int c_k / c_k,bulk dV for each ion k


@njit(cache=True)
def finite_volume_metric(s, beta, metric, x, link, volume):
    """Nodes x = tanh(beta s)/tanh(beta), link conductances and node volumes (see grid.py).

    Node spacings come from the identity tanh(p) - tanh(q) = sinh(p - q) / (cosh p cosh q), never from
    differences of x: wall cells can be 1e-12 of the half-size, below the resolution of x near 1.
    """
    n = s.size
    t = np.tanh(beta)
    dx = np.empty(n - 1)
    for i in range(n):
        x[i] = np.tanh(beta * s[i]) / t
    for i in range(n - 1):
        dx[i] = np.sinh(beta * (s[i + 1] - s[i])) / (np.cosh(beta * s[i]) * np.cosh(beta * s[i + 1]) * t)
        link[i] = (0.5 * (x[i] + x[i + 1]) if metric == 1 else 1.0) / dx[i]
    for i in range(n):
        left = 0.5 * dx[i - 1] if i > 0 else 0.0
        right = 0.5 * dx[i] if i < n - 1 else 0.0
        if metric == 1:
            # int r dr over [x - left, x + right]
            volume[i] = right * (x[i] + 0.5 * right) + left * (x[i] - 0.5 * left)
        else:
            volume[i] = right + left


@njit(cache=True)
def tridiagonal_solve(lower, diag, upper, rhs, out, work):
    """Thomas algorithm for a diagonally dominant tridiagonal system (no pivoting needed).

    Row i reads lower[i] * out[i-1] + diag[i] * out[i] + upper[i] * out[i+1] = rhs[i].
    """
    n = diag.size
    work[0] = upper[0] / diag[0]
    out[0] = rhs[0] / diag[0]
    for i in range(1, n):
        denom = diag[i] - lower[i] * work[i - 1]
        work[i] = upper[i] / denom if i < n - 1 else 0.0
        out[i] = (rhs[i] - lower[i] * out[i - 1]) / denom
    for i in range(n - 2, -1, -1):
        out[i] -= work[i] * out[i + 1]


@njit(cache=True)
def charge(psi, valence, weight, linear):
    """Dimensionless charge density rho_hat(psi) and its derivative.

    Nonlinear (Boltzmann): rho = sum_k w_k exp(-z_k psi); linear (Debye-Hueckel): rho = -psi, since
    sum_k w_k = 0 (bulk neutrality) and sum_k w_k z_k = 1.
    """
    if linear:
        return -psi, -1.0
    rho = 0.0
    drho = 0.0
    for k in range(valence.size):
        term = weight[k] * np.exp(-valence[k] * psi)
        rho += term
        drho -= valence[k] * term
    return rho, drho


@njit(cache=True)
def _pb_residual(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, res, scale):
    """Residual of the discrete Poisson-Boltzmann equation and the size of each row's diagonal.

    Row i: a_i (psi_{i+1} - psi_i) - a_{i-1} (psi_i - psi_{i-1}) + kappa2 V_i rho(psi_i) (+ r^m sigma at
    a FLUX end) = 0; a POTENTIAL end reads psi - value = 0. res/scale is a local correction in units
    of kT/e.
    """
    n = psi.size
    for i in range(n):
        rho, drho = charge(psi[i], valence, weight, linear)
        r = kappa2 * volume[i] * rho
        d = kappa2 * volume[i] * abs(drho)
        if i < n - 1:
            r += link[i] * (psi[i + 1] - psi[i])
            d += link[i]
        if i > 0:
            r -= link[i - 1] * (psi[i] - psi[i - 1])
            d += link[i - 1]
        end = 0 if i == 0 else (1 if i == n - 1 else -1)
        if end >= 0:
            if bc_type[end] == POTENTIAL:
                r = psi[i] - bc_value[end]
                d = 1.0
            else:
                r += bc_value[end]
        res[i] = r
        scale[i] = d


@njit(cache=True)
def _scaled_norms(res, scale):
    """Euclidean and max norms of res/scale."""
    total = 0.0
    worst = 0.0
    for i in range(res.size):
        q = abs(res[i]) / scale[i]
        total += q * q
        worst = max(worst, q)
    return np.sqrt(total), worst


@njit(cache=True)
def pb_newton(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, tol, max_iter,
              max_step):
    """Damped Newton iteration for the discrete Poisson-Boltzmann equation, in place on ``psi``.

    The Jacobian is tridiagonal and negative definite (the Boltzmann charge decreases with psi), so
    each step costs O(n). Steps are capped at ``max_step`` (kT/e) and halved until the row-scaled
    residual decreases in the Euclidean norm (a backtracking line search; the row scaling is frozen
    during the search so that the Newton step is a descent direction).

    Returns
    -------
    status : int
        0 converged (a full step below ``tol``), 1 iteration limit, 2 line search failed.
    iterations : int
    residual : float
        Max row-scaled residual (kT/e) at exit.
    """
    n = psi.size
    res = np.empty(n)
    scale = np.empty(n)
    trial_scale = np.empty(n)
    lower = np.empty(n)
    diag = np.empty(n)
    upper = np.empty(n)
    step = np.empty(n)
    work = np.empty(n)
    trial = np.empty(n)
    _pb_residual(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, res, scale)
    norm, worst = _scaled_norms(res, scale)
    for it in range(1, max_iter + 1):
        for i in range(n):
            _, drho = charge(psi[i], valence, weight, linear)
            lower[i] = link[i - 1] if i > 0 else 0.0
            upper[i] = link[i] if i < n - 1 else 0.0
            diag[i] = kappa2 * volume[i] * drho - lower[i] - upper[i]
            step[i] = -res[i]
        for end in range(2):
            i = 0 if end == 0 else n - 1
            if bc_type[end] == POTENTIAL:
                lower[i] = 0.0
                upper[i] = 0.0
                diag[i] = 1.0
        tridiagonal_solve(lower, diag, upper, step.copy(), step, work)
        biggest = 0.0
        for i in range(n):
            biggest = max(biggest, abs(step[i]))
        if not np.isfinite(biggest):
            return 2, it, worst
        if biggest < tol:
            for i in range(n):
                psi[i] += step[i]
            _pb_residual(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, res, scale)
            norm, worst = _scaled_norms(res, scale)
            return 0, it, worst
        lam = 1.0 if biggest <= max_step else max_step / biggest
        accepted = False
        for _ in range(60):
            for i in range(n):
                trial[i] = psi[i] + lam * step[i]
            _pb_residual(trial, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, res,
                         trial_scale)
            new = 0.0
            for i in range(n):
                q = res[i] / scale[i]
                new += q * q
            new = np.sqrt(new)
            if np.isfinite(new) and new <= (1.0 - 1e-4 * lam) * norm:
                accepted = True
                break
            lam *= 0.5
        if not accepted:
            _pb_residual(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, res, scale)
            norm, worst = _scaled_norms(res, scale)
            return 2, it, worst
        for i in range(n):
            psi[i] = trial[i]
            scale[i] = trial_scale[i]
        norm, worst = _scaled_norms(res, scale)
    return 1, max_iter, worst


@njit(cache=True)
def stokes(link, volume, rhs, bc_type, bc_value, u):
    """Solve the discrete Stokes equation (L u)_i = rhs_i V_i across the section, in place on ``u``.

    Ends: POTENTIAL = prescribed velocity (no slip: 0), FLUX = prescribed outward-normal derivative
    (0 at a symmetry plane), ROBIN = Navier slip u = -b du/dn given as bc_value = 1/b_hat.
    """
    n = u.size
    lower = np.empty(n)
    diag = np.empty(n)
    upper = np.empty(n)
    b = np.empty(n)
    work = np.empty(n)
    for i in range(n):
        lower[i] = link[i - 1] if i > 0 else 0.0
        upper[i] = link[i] if i < n - 1 else 0.0
        diag[i] = -lower[i] - upper[i]
        b[i] = rhs[i] * volume[i]
    for end in range(2):
        i = 0 if end == 0 else n - 1
        if bc_type[end] == POTENTIAL:
            lower[i] = 0.0
            upper[i] = 0.0
            diag[i] = 1.0
            b[i] = bc_value[end]
        elif bc_type[end] == FLUX:
            b[i] -= bc_value[end]
        else:
            diag[i] -= bc_value[end]
    tridiagonal_solve(lower, diag, upper, b, u, work)


@njit(cache=True)
def section_integrals(psi, link, volume, kappa2, valence, weight, linear, bc_type, bc_value, centre,
                      flow_type, flow_value, u_eo, u_p, out):
    """Flow fields and the integral vector (see the I_* layout) of a converged potential ``psi``.

    EO flow: laplacian(u_eo) = -kappa2 rho_hat (u_eo in units of eps E kT / (e eta), equal to
    psi - psi_wall for uniform properties and no slip). Pressure flow: laplacian(u_p) = 1 (u_p in units
    of (dp/dx) L^2 / eta).
    """
    n = psi.size
    rho = np.empty(n)
    for i in range(n):
        rho[i], _ = charge(psi[i], valence, weight, linear)
        rho[i] *= -kappa2
    stokes(link, volume, rho, flow_type, flow_value, u_eo)
    ones = np.ones(n)
    stokes(link, volume, ones, flow_type, flow_value, u_p)
    for j in range(out.size):
        out[j] = 0.0
    for i in range(n):
        v = volume[i]
        r = -rho[i] / kappa2 if kappa2 > 0.0 else 0.0
        out[I_PSI] += v * psi[i]
        out[I_UEO] += v * u_eo[i]
        out[I_UP] += v * u_p[i]
        out[I_RHO_UEO] += v * r * u_eo[i]
        out[I_RHO_UP] += v * r * u_p[i]
        out[I_RHO] += v * r
        for k in range(valence.size):
            if linear:
                c = 1.0 - valence[k] * psi[i]
            else:
                c = np.exp(-valence[k] * psi[i])
            out[ION_INTEGRALS + k] += v * c
    out[I_PSI_LEFT] = psi[0]
    out[I_PSI_RIGHT] = psi[n - 1]
    out[I_PSI_CENTRE] = psi[centre]
    # Wall flux from the end cell's balance, so that charge is conserved to round-off.
    rho0, _ = charge(psi[0], valence, weight, linear)
    rho1, _ = charge(psi[n - 1], valence, weight, linear)
    out[I_FLUX_LEFT] = -link[0] * (psi[1] - psi[0]) - kappa2 * volume[0] * rho0
    out[I_FLUX_RIGHT] = link[n - 2] * (psi[n - 1] - psi[n - 2]) - kappa2 * volume[n - 1] * rho1
