"""Compiled arithmetic on arrays for one grid: the Poisson-Boltzmann Newton iteration, the Stokes solve
and the section integrals (nested grids and error control are in adaptive.py).

Everything here takes only arrays, scalars and the records of ``kernels.records`` (a ``SectionProblem``, a
grid's ``Cells``) and knows nothing of cases or units (see grid.py for the finite-volume metric and
scaling.py for how the arrays are filled; ``kernels.layout`` declares every packed layout). Dimensionless
variables: psi = e*phi/kT, lengths in the half-size L, charge density rho_hat = rho_e / (e N_A sum_j z_j^2 c_j),
so that Poisson reads  laplacian(psi) = -kappa2 rho_hat  with kappa2 = (kappa L)^2.

The section problem (``SectionProblem``)
---------------------------------------
ions : (n_ions, SPECIES_SIZE) array of (z_k, w_k, nu_k): valence, weight w_k = z_k c_k / sum_j z_j^2 c_j and the
    steric packing parameter nu_k = c_k N_A d^3 (0 without finite ion size).
model : PB (Boltzmann), DH (linearised) or STERIC (lattice-gas, Bikerman 1942; Kilic, Bazant & Ajdari
    2007, Phys. Rev. E 75, 021502): c_k = c_k,bulk exp(-z_k psi) / (1 + sum_j nu_j (exp(-z_j psi) - 1)).
walls : (2, WALL_SIZE) array, one row per end of the grid (left, right), layout W_*:
    POTENTIAL fixes psi (W_VALUE); FLUX fixes the outward-normal derivative of psi, i.e. the wall charge
    sigma_hat = sigma e L / (eps kT) (W_VALUE; 0 at a symmetry plane); REGULATED has a charge that depends
    on the potential psi_0 of the charge plane: a fixed part, a gate term C_g (V_g - psi_0) and acid-base
    sites, with a Stern layer psi_0 - psi_d = sigma / C_S between the charge plane and the diffuse layer
    (psi_d is the end node). Capacitances are in units of eps / L, charges as sigma_hat.
flow_walls : (2, FLOW_SIZE) array of (code, value) per end for the Stokes problems: POTENTIAL = prescribed
    velocity (0: no slip), FLUX = prescribed normal derivative (0 at a symmetry plane), ROBIN = Navier
    slip u = -b du/dn with value 1/b_hat (b in units of L).
visco : viscoelectric coefficient f (kT / (e L))^2: eta / eta_0 = 1 + visco |grad psi|^2 (Lyklema &
    Overbeek 1961).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels import layout
from edl_solver.kernels.layout import (
    AXISYMMETRIC,
    DH,
    FLOW_CODE,
    FLOW_VALUE,
    FLUX,
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
    POTENTIAL,
    REGULATED,
    ROBIN,
    SPECIES_PACKING,
    SPECIES_VALENCE,
    SPECIES_WEIGHT,
    STERIC,
    W_TYPE,
    W_VALUE,
)
from edl_solver.kernels.records import Cells
from edl_solver.kernels.walls import regulated_charge

#: Rows of the Stokes right-hand sides and flows of ``section_integrals``: EO, pressure, then one per ion.
FORCE_EO, FORCE_PRESSURE, FORCE_IONS = 0, 1, 2

#: Start of the three response blocks of the integral vector and its length (``layout.response_offsets``),
#: compiled for the kernels.
response_offsets = njit(cache=True)(layout.response_offsets)


@njit(cache=True)
def finite_volume_metric(s, beta, metric):
    """The ``Cells`` of the nodes s: x = tanh(beta s)/tanh(beta), link conductances, node volumes and link
    lengths (see grid.py).

    Node spacings come from the identity tanh(p) - tanh(q) = sinh(p - q) / (cosh p cosh q), never from
    differences of x: wall cells can be 1e-12 of the half-size, below the resolution of x near 1.
    """
    n = s.size
    x = np.empty(n)
    link = np.empty(n - 1)
    volume = np.empty(n)
    dx = np.empty(n - 1)
    t = np.tanh(beta)
    cosh = np.empty(n)  # each node's cosh once, not once per adjacent link
    for i in range(n):
        x[i] = np.tanh(beta * s[i]) / t
        cosh[i] = np.cosh(beta * s[i])
    for i in range(n - 1):
        dx[i] = np.sinh(beta * (s[i + 1] - s[i])) / (cosh[i] * cosh[i + 1] * t)
        link[i] = (0.5 * (x[i] + x[i + 1]) if metric == AXISYMMETRIC else 1.0) / dx[i]
    for i in range(n):
        left = 0.5 * dx[i - 1] if i > 0 else 0.0
        right = 0.5 * dx[i] if i < n - 1 else 0.0
        if metric == AXISYMMETRIC:
            # int r dr over [x - left, x + right]
            volume[i] = right * (x[i] + 0.5 * right) + left * (x[i] - 0.5 * left)
        else:
            volume[i] = right + left
    return Cells(x, link, volume, dx)


@njit(cache=True, error_model="numpy")
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


@njit(cache=True, inline="always")
def charge(psi, ions, model):
    """Dimensionless charge density rho_hat(psi) and its derivative.

    PB: rho = sum_k w_k exp(-z_k psi). DH: rho = -psi (sum_k w_k = 0 by neutrality, sum_k w_k z_k = 1).
    STERIC: rho = sum_k w_k exp(-z_k psi) / D, D = 1 + sum_k nu_k (exp(-z_k psi) - 1).
    """
    if model == DH:
        return -psi, -1.0
    rho = 0.0
    drho = 0.0
    crowd = 1.0
    dcrowd = 0.0
    for k in range(ions.shape[0]):
        z = ions[k, SPECIES_VALENCE]
        e = np.exp(-z * psi)
        rho += ions[k, SPECIES_WEIGHT] * e
        drho -= ions[k, SPECIES_WEIGHT] * z * e
        crowd += ions[k, SPECIES_PACKING] * (e - 1.0)
        dcrowd -= ions[k, SPECIES_PACKING] * z * e
    if model == STERIC:
        return rho / crowd, (drho * crowd - rho * dcrowd) / (crowd * crowd)
    return rho, drho


@njit(cache=True, error_model="numpy")
def _pb_residual(psi, link, volume, kappa2, ions, model, walls, res, scale, jac):
    """Residual of the discrete Poisson-Boltzmann equation, the size of each row's diagonal and the
    diagonal of the Jacobian.

    Row i: a_i (psi_{i+1} - psi_i) - a_{i-1} (psi_i - psi_{i-1}) + kappa2 V_i rho(psi_i) (+ sigma_hat at a
    FLUX or REGULATED end) = 0; a POTENTIAL end reads psi - value = 0. res/scale is a local correction in
    units of kT/e. ``walls`` are the problem's wall rows or, during a continuation, rows scaled from them.
    The grid's and the problem's arrays come as plain arguments, not as the records: each array unpacked
    from a record costs a reference count (an atomic call) per call of this hot function. A REGULATED end's
    charge is added by ``_residual``.
    """
    n = psi.size
    for i in range(n):
        rho, drho = charge(psi[i], ions, model)
        r = kappa2 * volume[i] * rho
        d = kappa2 * volume[i] * abs(drho)
        j = kappa2 * volume[i] * drho
        if i < n - 1:
            r += link[i] * (psi[i + 1] - psi[i])
            d += link[i]
            j -= link[i]
        if i > 0:
            r -= link[i - 1] * (psi[i] - psi[i - 1])
            d += link[i - 1]
            j -= link[i - 1]
        res[i] = r
        scale[i] = d
        jac[i] = j
    for end in range(2):
        i = 0 if end == 0 else n - 1
        kind = int(walls[end, W_TYPE])
        if kind == POTENTIAL:
            res[i] = psi[i] - walls[end, W_VALUE]
            scale[i] = 1.0
            jac[i] = 1.0
        elif kind == FLUX:
            res[i] += walls[end, W_VALUE]


@njit(cache=True)
def _regulated_ends(psi, walls, res, scale, jac):
    """Add the charge of a REGULATED end (``walls.regulated_charge``) to the rows of ``_pb_residual``.

    Kept out of ``_pb_residual``, called for every Newton step and line-search trial, so that it has no call
    and no exception path: numba then prunes the reference counts of its array arguments (~15 atomics a call).
    """
    for end in range(2):
        if int(walls[end, W_TYPE]) == REGULATED:
            i = 0 if end == 0 else psi.size - 1
            sigma, dsigma, _ = regulated_charge(psi[i], walls[end])
            res[i] += sigma
            scale[i] += abs(dsigma)
            jac[i] += dsigma


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


#: Newton's step tolerance relative to the largest potential, where that exceeds the absolute one.
ROUNDOFF_STEP = 1e-13


@njit(cache=True, inline="always")
def _step_size(step, psi, tol):
    """The largest |step| and whether it is below the tolerance: ``tol`` (kT/e) up to potentials of ~100 kT/e,
    beyond (a linear layer of large charge reaches 1e5 kT/e) ``ROUNDOFF_STEP`` relative to the largest |psi|, since
    a step cannot fall below the round-off of psi itself."""
    biggest = 0.0
    largest = 0.0
    for i in range(psi.size):
        biggest = max(biggest, abs(step[i]))
        largest = max(largest, abs(psi[i]))
    return biggest, biggest < max(tol, ROUNDOFF_STEP * largest)


@njit(cache=True, error_model="numpy")
def pb_newton(psi, cells, problem, walls, tol, max_iter, max_step):
    """Damped Newton iteration for the discrete Poisson-Boltzmann equation of ``problem`` with the wall rows
    ``walls`` on the grid ``cells``, in place on ``psi``.

    The Jacobian is tridiagonal and negative definite (the charge decreases with psi, in the liquid as on
    a regulated wall), so each step costs O(n). Steps are capped at ``max_step`` (kT/e; not for DH) and halved until
    the row-scaled residual decreases in the Euclidean norm (a backtracking line search; the row scaling
    is frozen during the search so that the Newton step is a descent direction).

    Returns
    -------
    status : int
        0 converged (a full step below ``tol``), 1 iteration limit, 2 line search failed.
    iterations : int
    residual : float
        Max row-scaled residual (kT/e) at exit.
    """
    n = psi.size
    link, volume, kappa2, ions, model = cells.link, cells.volume, problem.kappa2, problem.ions, problem.model
    regulated = int(walls[0, W_TYPE]) == REGULATED or int(walls[1, W_TYPE]) == REGULATED
    rows = np.empty((11, n))  # the work arrays, one allocation
    res, scale, jac, trial_scale, trial_jac, lower = rows[0], rows[1], rows[2], rows[3], rows[4], rows[5]
    upper, step, rhs, work, trial = rows[6], rows[7], rows[8], rows[9], rows[10]
    _pb_residual(psi, link, volume, kappa2, ions, model, walls, res, scale, jac)
    if regulated:
        _regulated_ends(psi, walls, res, scale, jac)
    norm, worst = _scaled_norms(res, scale)
    for it in range(1, max_iter + 1):
        for i in range(n):
            lower[i] = link[i - 1] if i > 0 else 0.0
            upper[i] = link[i] if i < n - 1 else 0.0
            rhs[i] = -res[i]
        for end in range(2):
            i = 0 if end == 0 else n - 1
            if int(walls[end, W_TYPE]) == POTENTIAL:
                lower[i] = 0.0
                upper[i] = 0.0
        tridiagonal_solve(lower, jac, upper, rhs, step, work)
        biggest, small = _step_size(step, psi, tol)
        if not np.isfinite(biggest + step.sum()):  # max() skips NaN (a zero pivot of a too stretched grid)
            return 2, it, worst
        if small:
            for i in range(n):
                psi[i] += step[i]
            _pb_residual(psi, link, volume, kappa2, ions, model, walls, res, scale, jac)
            if regulated:
                _regulated_ends(psi, walls, res, scale, jac)
            norm, worst = _scaled_norms(res, scale)
            return 0, it, worst
        # a linear (Debye-Hueckel) problem's Newton step is exact at any size: capping it only costs iterations
        lam = 1.0 if biggest <= max_step or model == DH else max_step / biggest
        accepted = False
        for _ in range(60):
            for i in range(n):
                trial[i] = psi[i] + lam * step[i]
            _pb_residual(trial, link, volume, kappa2, ions, model, walls, res, trial_scale, trial_jac)
            if regulated:
                _regulated_ends(trial, walls, res, trial_scale, trial_jac)
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
            _pb_residual(psi, link, volume, kappa2, ions, model, walls, res, scale, jac)
            if regulated:
                _regulated_ends(psi, walls, res, scale, jac)
            norm, worst = _scaled_norms(res, scale)
            return 2, it, worst
        for i in range(n):
            psi[i] = trial[i]
            scale[i] = trial_scale[i]
            jac[i] = trial_jac[i]
        norm, worst = _scaled_norms(res, scale)
    return 1, max_iter, worst


@njit(cache=True)
def stokes_operator(link, viscosity, wall_viscosity, flow_walls):
    """Factor the discrete Stokes operator div(eta grad u) across the section once, for several right-hand
    sides (``stokes_solve``).

    Rows: a_i eta_i (u_{i+1} - u_i) - a_{i-1} eta_{i-1} (u_i - u_{i-1}) = V_i rhs_i with eta_i the relative
    viscosity of link i. Ends: POTENTIAL = prescribed velocity (no slip: 0), FLUX = prescribed normal
    derivative (0 at a symmetry plane), ROBIN = Navier slip u = -b du/dn (value 1/b_hat): the wall shear
    stress -eta_w u / b enters the end cell, with ``wall_viscosity`` (per end) the viscosity at the wall.

    Returns
    -------
    ndarray
        (3, n): the sub-diagonal, the pivots and the super-diagonal over the pivots of the Thomas algorithm
        (as ``tridiagonal_solve`` computes them).
    """
    n = link.size + 1
    factor = np.empty((3, n))
    extra = np.zeros(n)  # the diagonal beyond the links: the Robin walls' shear
    kinds = (int(flow_walls[0, FLOW_CODE]), int(flow_walls[1, FLOW_CODE]))
    for end in range(2):
        if kinds[end] == ROBIN:
            extra[0 if end == 0 else n - 1] += flow_walls[end, FLOW_VALUE] * wall_viscosity[end]
    # Pivots in subtraction-free form: with lower_i = upper_{i-1} (a symmetric operator whose rows sum to
    # -extra_i), pivot_i = -(upper_i + s_i), s_i = extra_i + lower_i s_{i-1} / (lower_i + s_{i-1}) (conductances
    # in series). The textbook recursion forms s_i as the difference of link coefficients up to 1/h_min, and a
    # slip wall's 1/b, tiny next to them on a grid stretched for a steep layer, was lost to that cancellation.
    series = np.inf  # s of a prescribed-velocity row: the next row sees its whole link
    for i in range(n):
        lower = link[i - 1] * viscosity[i - 1] if i > 0 else 0.0
        upper = link[i] * viscosity[i] if i < n - 1 else 0.0
        if (i == 0 and kinds[0] == POTENTIAL) or (i == n - 1 and kinds[1] == POTENTIAL):
            factor[0, i], factor[1, i], factor[2, i] = 0.0, 1.0, 0.0
            series = np.inf
            continue
        if i == 0:
            series = extra[0]
        else:
            series = extra[i] + (lower if series == np.inf else lower * series / (lower + series))
        factor[0, i] = lower
        factor[1, i] = -(upper + series)
        factor[2, i] = upper / factor[1, i]
    return factor


@njit(cache=True, error_model="numpy")
def stokes_solve(factor, volume, rhs, sign, flow_walls, u):
    """Solve div(eta grad u) = sign * rhs with the factored operator (``stokes_operator``), in place on ``u``."""
    n = u.size
    # factor[row, i], not row views: a view costs a reference count per call
    for i in range(n):
        b = sign * rhs[i] * volume[i]
        end = 0 if i == 0 else (1 if i == n - 1 else -1)
        if end >= 0:
            kind = int(flow_walls[end, FLOW_CODE])
            if kind == POTENTIAL:
                b = flow_walls[end, FLOW_VALUE]
            elif kind == FLUX:
                b -= flow_walls[end, FLOW_VALUE]
        u[i] = b / factor[1, 0] if i == 0 else (b - factor[0, i] * u[i - 1]) / factor[1, i]
    for i in range(n - 2, -1, -1):
        u[i] -= factor[2, i] * u[i + 1]


@njit(cache=True, error_model="numpy")
def stokes_solve_rows(factor, volume, rhs, signs, flow_walls, u):
    """``stokes_solve`` of every row j of ``rhs`` with sign ``signs[j]`` into row j of ``u``, in one sweep: the
    rows' chains of divisions are independent and overlap in the processor, where one solve after another
    waits for each division in turn. Each row's arithmetic is ``stokes_solve``'s."""
    m, n = rhs.shape
    for i in range(n):
        end = 0 if i == 0 else (1 if i == n - 1 else -1)
        kind = int(flow_walls[end, FLOW_CODE]) if end >= 0 else -1
        for j in range(m):
            b = signs[j] * rhs[j, i] * volume[i]
            if kind == POTENTIAL:
                b = flow_walls[end, FLOW_VALUE]
            elif kind == FLUX:
                b -= flow_walls[end, FLOW_VALUE]
            u[j, i] = b / factor[1, 0] if i == 0 else (b - factor[0, i] * u[j, i - 1]) / factor[1, i]
    for i in range(n - 2, -1, -1):
        for j in range(m):
            u[j, i] -= factor[2, i] * u[j, i + 1]


@njit(cache=True)
def _concentrations(psi, ions, model, out, first, at):
    """c_k / c_k,bulk of every ion at potential psi into ``out[first + k, at]`` (linearised for DH,
    crowding-limited for STERIC); returns rho_hat(psi) (as ``charge``), with one exponential per ion. Takes
    indices rather than a column: a view per node would cost a reference count per node."""
    n_ions = ions.shape[0]
    if model == DH:
        for k in range(n_ions):
            out[first + k, at] = 1.0 - ions[k, SPECIES_VALENCE] * psi
        return -psi
    rho = 0.0
    crowd = 1.0
    for k in range(n_ions):
        e = np.exp(-ions[k, SPECIES_VALENCE] * psi)
        out[first + k, at] = e
        rho += ions[k, SPECIES_WEIGHT] * e
        crowd += ions[k, SPECIES_PACKING] * (e - 1.0)
    if model == STERIC:
        for k in range(n_ions):
            out[first + k, at] /= crowd
        return rho / crowd
    return rho


@njit(cache=True)
def _accumulate(psi, volume, kappa2, forces, flows, out):
    """The volume integrals of the ``I_*`` vector (all but the end values) from the potential, the Stokes
    right-hand sides ``forces`` and their ``flows`` (``FORCE_*`` rows, see ``section_integrals``)."""
    n = psi.size
    n_ions = forces.shape[0] - FORCE_IONS
    for j in range(out.size):
        out[j] = 0.0
    ion_flow_at, conc_up_at, conc_flow_at, _ = response_offsets(n_ions)
    for i in range(n):
        v = volume[i]
        r = -forces[FORCE_EO, i] / kappa2
        out[I_PSI] += v * psi[i]
        out[I_UEO] += v * flows[FORCE_EO, i]
        out[I_UP] += v * flows[FORCE_PRESSURE, i]
        out[I_RHO_UEO] += v * r * flows[FORCE_EO, i]
        out[I_RHO_UP] += v * r * flows[FORCE_PRESSURE, i]
        out[I_RHO] += v * r
        for k in range(n_ions):
            out[ION_INTEGRALS + k] += v * forces[FORCE_IONS + k, i]
            out[ion_flow_at + k] += v * flows[FORCE_IONS + k, i]
            out[conc_up_at + k] += v * forces[FORCE_IONS + k, i] * flows[FORCE_PRESSURE, i]
            for m in range(n_ions):
                out[conc_flow_at + k * n_ions + m] += v * forces[FORCE_IONS + k, i] * flows[FORCE_IONS + m, i]


@njit(cache=True)
def section_integrals(psi, cells, problem, centre, u_eo, u_p, out):
    """Flow fields ``u_eo``, ``u_p`` and the integral vector ``out`` (``I_*`` layout) of a converged potential
    ``psi`` of ``problem`` on the grid ``cells``, ``centre`` the index of the centre node.

    EO flow: div(eta grad u_eo) = -kappa2 rho_hat (u_eo in units of eps E kT / (e eta_0); equal to
    psi - psi_wall for uniform viscosity and no slip). Pressure flow: div(eta grad u_p) = 1 (u_p in units
    of (dp/dx) L^2 / eta_0). The link lengths ``cells.spacing`` give the field in the viscosity.
    """
    link, volume, spacing = cells.link, cells.volume, cells.spacing
    kappa2, ions, model = problem.kappa2, problem.ions, problem.model
    flow_walls, visco = problem.flow_walls, problem.visco
    n = psi.size
    n_ions = ions.shape[0]
    # the Stokes right-hand sides as rows: EO body force -kappa2 rho_hat, pressure 1, each ion's concentration
    # (its body force, sign -1: the columns of the linear-response matrix); ``flows`` gets their solutions
    forces = np.empty((FORCE_IONS + n_ions, n))
    signs = np.full(FORCE_IONS + n_ions, -1.0)
    signs[FORCE_EO] = signs[FORCE_PRESSURE] = 1.0
    for i in range(n):
        forces[FORCE_EO, i] = -kappa2 * _concentrations(psi[i], ions, model, forces, FORCE_IONS, i)
        forces[FORCE_PRESSURE, i] = 1.0
    rho = forces[FORCE_EO]
    viscosity = np.ones(n - 1)
    wall_viscosity = np.ones(2)
    if visco > 0.0:
        for i in range(n - 1):
            grad = (psi[i + 1] - psi[i]) / spacing[i]
            viscosity[i] = 1.0 + visco * grad * grad
        # the field at the walls from the end cells' balance (the wall charge), not from the first link:
        # a slip wall's shear stress needs the viscosity at the wall itself
        left = -link[0] * (psi[1] - psi[0]) + volume[0] * rho[0]
        right = link[n - 2] * (psi[n - 1] - psi[n - 2]) + volume[n - 1] * rho[n - 1]
        wall_viscosity[0] = 1.0 + visco * left * left
        wall_viscosity[1] = 1.0 + visco * right * right
    operator = stokes_operator(link, viscosity, wall_viscosity, flow_walls)
    flows = np.empty((FORCE_IONS + n_ions, n))
    stokes_solve_rows(operator, volume, forces, signs, flow_walls, flows)
    u_eo[:] = flows[FORCE_EO]
    u_p[:] = flows[FORCE_PRESSURE]
    _accumulate(psi, volume, kappa2, forces, flows, out)
    out[I_PSI_LEFT] = psi[0]
    out[I_PSI_RIGHT] = psi[n - 1]
    out[I_PSI_CENTRE] = psi[centre]
    # Wall flux from the end cell's balance, so that charge is conserved to round-off.
    rho0, _ = charge(psi[0], ions, model)
    rho1, _ = charge(psi[n - 1], ions, model)
    out[I_FLUX_LEFT] = -link[0] * (psi[1] - psi[0]) - kappa2 * volume[0] * rho0
    out[I_FLUX_RIGHT] = link[n - 2] * (psi[n - 1] - psi[n - 2]) - kappa2 * volume[n - 1] * rho1
