"""Compiled adaptive SDIRK time stepping of the transient Poisson-Nernst-Planck system (``kernels.pnp_system``).

Alexander's three-stage singly diagonally implicit Runge-Kutta method (Alexander 1977, SIAM J. Numer. Anal. 14,
1006; Hairer & Wanner, Solving Ordinary Differential Equations II, sec. IV.6): order 3, L-stable and stiffly
accurate (the last stage is the new value), so Poisson is simply enforced at each stage and a step needs no
slope from before it. All stages share the diagonal gamma, hence one iteration matrix M' - gamma h J per step
(a chord iteration reuses its factors). Every stage is written in conservation form,
M(Y_i) - gamma h F(Y_i) = M(y_n) + h sum_j<i a_ij F(Y_j): the fluxes cancel in the sum over the nodes, so each
stage's inventory is that of the right-hand side, which a uniform shift of each ion's log-concentration (far
below the iteration's tolerance) restores exactly once the iteration has converged. Each stage solves the ions
and the potential, then the flow (``kernels.pnp_flow``), which does not act back on them.

Local error: h sum_i (b_i - b^_i) F(Y_i) with the embedded second-order weights b^ (b^_3 = 0, derived here: sum
b^ = 1, sum b^ c = 1/2), filtered through the iteration matrix, (M' - gamma h J)^-1, as is usual for stiff
problems (Hairer & Wanner, sec. IV.8), which also gives the error of the potential; the velocities' through
their own stage matrix. Its size is measured as the volume-mean of each ion's concentration error and of the
velocity errors and the largest potential error, each over the scale of its change in the run (``scales``: the
ion columns, psi, v, w), against ``tol``; the step follows h (0.9 / err)^(1/3), and the solution carried is the
third-order one.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels import block_tridiagonal as blocks
from edl_solver.kernels.fv1d import tridiagonal_solve
from edl_solver.kernels.layout import DH, W_SITES
from edl_solver.kernels.pnp_flow import (
    charge_density,
    flow_conserved,
    flow_error,
    flow_slopes,
    flow_solve,
    flow_stage,
    stage_slopes,
)
from edl_solver.kernels.pnp_system import assemble_problem, conserved

#: Alexander's three-stage SDIRK: the diagonal gamma, the root of x^3 - 3 x^2 + 3 x / 2 - 1/6 in (1/6, 1/2).
GAMMA = 0.43586652150845899941601945
C2 = (1.0 + GAMMA) / 2.0
A21 = (1.0 - GAMMA) / 2.0
B1 = (-6.0 * GAMMA**2 + 16.0 * GAMMA - 1.0) / 4.0
B2 = (6.0 * GAMMA**2 - 20.0 * GAMMA + 5.0) / 4.0
#: The embedded second-order weights (third weight 0): sum = 1, sum b c = 1/2 (derived here).
BH2 = (1.0 - 2.0 * GAMMA) / (1.0 - GAMMA)
BH1 = 1.0 - BH2
MAX_NEWTON = 25
#: Largest Newton change of a log-concentration or of the potential (kT/e) in one iteration.
MAX_UPDATE = 2.0

#: Status codes of ``advance``.
OK, NEWTON_FAILED, STEP_TOO_SMALL, TOO_MANY_STEPS = 0, 1, 2, 3
#: Entries of the ``stats`` counters.
STAT_STEPS, STAT_REJECTED, STAT_NEWTON, STAT_FAILED_NEWTON = 0, 1, 2, 3


@njit(cache=True)
def _restore_inventory(y, b, pr):
    """Make each ion's inventory exactly that the stage conserves, sum_j b_jk (the fluxes cancel in the sum), by
    one uniform shift of its log-concentration (a scaling of c_k), far below the iteration's tolerance."""
    if pr.model == DH:
        return
    nion = pr.ions.shape[0]
    for k in range(nion):
        target, current = 0.0, 0.0
        for j in range(y.shape[0]):
            target += b[j, k]
            current += pr.volume[j] * np.exp(y[j, k])
        shift = np.log(target / current)
        for j in range(y.shape[0]):
            y[j, k] += shift


@njit(cache=True)
def _newton(y, b, c, t, pr, scales, tol, work, fresh):
    """Solve M(y) - b - c F(y, t) = 0 in place from the start in ``y``; the iteration count or -1 on failure.

    A chord (simplified Newton) iteration: the iteration matrix is factored when ``fresh[0]`` is set (once per
    step: both stages have the same matrix) and again whenever an iteration shrinks the change by less than
    half. The factors stay in ``work`` for the error filter.
    """
    res, delta, lower, diag, upper = work[0], work[1], work[2], work[3], work[4]
    f_lower, f_diag, pivots, coupling = work[5], work[6], work[7], work[8]
    nion = pr.ions.shape[0]
    n, m = y.shape[0], y.shape[1]
    previous = np.inf
    for it in range(MAX_NEWTON):
        assemble_problem(y, b, c, t, pr, res, lower, diag, upper)
        if fresh[0]:
            f_lower[:] = lower
            f_diag[:] = diag
            if not blocks.factor(f_lower, f_diag, upper, pivots, coupling):
                return -1
            fresh[0] = False
        delta[:] = res
        blocks.solve(f_lower, f_diag, pivots, coupling, delta)
        biggest = 0.0
        for j in range(n):
            for q in range(nion + 1):
                biggest = max(biggest, abs(delta[j, q]))
        if not np.isfinite(biggest):
            return -1
        shrink = MAX_UPDATE / biggest if biggest > MAX_UPDATE and pr.model != DH else 1.0
        done = shrink == 1.0
        for j in range(n):
            for q in range(m):
                step = shrink * delta[j, q]
                y[j, q] -= step
                # the potential and velocities to a thousandth of the tolerance, not below round-off
                limit = max(1e-3 * tol * scales[q], 1e-12 * (1.0 + abs(y[j, q])))
                if abs(step) > limit:
                    done = False
        if done:
            _restore_inventory(y, b, pr)
            return it + 1
        if biggest > 0.5 * previous:  # slow: a fresh Jacobian at this iterate
            fresh[0] = True
        previous = biggest
    return -1


@njit(cache=True)
def error_norm(e, y, pr, scales):
    """Size of the error ``e`` of the ions and the potential: volume means for ions, the largest for psi."""
    nion = pr.ions.shape[0]
    n = y.shape[0]
    total = pr.volume.sum()
    worst = 0.0
    for q in range(nion + 1):
        acc = 0.0
        for j in range(n):
            if q < nion:
                acc += pr.volume[j] * abs(e[j, q]) * (1.0 if pr.model == DH else np.exp(y[j, q]))
            else:
                acc = max(acc, abs(e[j, q]))
        if q < nion:
            acc /= total
        worst = max(worst, acc / scales[q])
    return worst


@njit(cache=True)
def slopes(y, b, c, pr, out):
    """F from a converged stage, (M(y) - b) / c, zero on the potential rows."""
    nion = pr.ions.shape[0]
    conserved(y, pr, out)
    for j in range(y.shape[0]):
        for q in range(nion):
            out[j, q] = (out[j, q] - b[j, q]) / c
        out[j, nion] = 0.0


@njit(cache=True)
def consistent(y, v, t, pr, fy, fv):
    """Solve Poisson at time t with the ions and velocities held (after a jump of a wall value or at the start),
    then the slopes F(y, t) and F_v(v, t) into ``fy`` and ``fv``; False if the potential does not converge."""
    n, m = y.shape[0], y.shape[1]
    nion = pr.ions.shape[0]
    res, b = np.empty((n, m)), np.empty((n, m))
    lower, diag, upper = np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m, m))
    lo, di, up, rhs, work, out = np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n)
    ok = False
    previous = np.inf
    sites = pr.model != DH and (pr.walls[0, W_SITES] > 0 or pr.walls[1, W_SITES] > 0)
    for _ in range(60):
        conserved(y, pr, b)
        assemble_problem(y, b, -1.0, t, pr, res, lower, diag, upper)
        for j in range(n):
            lo[j], di[j], up[j], rhs[j] = lower[j, nion, nion], diag[j, nion, nion], upper[j, nion, nion], res[j, nion]
        tridiagonal_solve(lo, di, up, rhs, out, work)
        largest = np.max(np.abs(out))
        # linear but for charge-regulating sites: damped only with sites, by one scale for every node
        shrink = min(1.0, MAX_UPDATE / largest) if sites and largest > 0.0 else 1.0
        biggest = 0.0
        for j in range(n):
            y[j, nion] -= shrink * out[j]
            biggest = max(biggest, abs(out[j]) / (1.0 + abs(y[j, nion])))
        # converged, or at the round-off floor of the solve (no longer shrinking, far below any tolerance)
        if biggest < 1e-13 or (biggest < 1e-9 and biggest > 0.5 * previous):
            ok = True
            break
        previous = biggest
    conserved(y, pr, b)
    assemble_problem(y, b, -1.0, t, pr, res, lower, diag, upper)
    for j in range(n):
        for q in range(nion):
            fy[j, q] = res[j, q]
        fy[j, nion] = 0.0
    charge_density(y, pr, out)
    flow_slopes(v, out, t, pr, fv)
    return ok


@njit(cache=True)
def _stage_start(i, y, ys, step, trend, out):
    """The first guess of stage i: the last step's trend, then the line through y_n and the previous stage."""
    if i == 0:
        out[:] = y + (GAMMA * step) * trend
    elif i == 1:
        out[:] = y + (C2 / GAMMA) * (ys[7] - y)
    else:
        out[:] = y + (ys[8] - y) / C2


@njit(cache=True)
def _stages(y, v, t, step, pr, scales, tol, ys, vs, work, stats, trend):
    """The three stages of one step from (t, y, v); the new values in ys[5], vs[5], the stage slopes in ys[2:5],
    vs[2:5]; False if a Newton iteration failed. Stage i solves M(Y) - gamma h F(Y) = M(y_n) + h sum_j a_ij F_j
    (conservation form) at t + c_i h. ``trend`` is the change of y per unit time over the last step (zero
    without one). ys/vs rows: 0 M(y_n), 1 b, 2-4 the stage slopes, 5 the last stage, 6 scratch, 7-8 the first two
    stages."""
    m_n, b, rho = ys[0], ys[1], work[9]
    c = GAMMA * step
    fresh = np.ones(1, dtype=np.bool_)
    conserved(y, pr, m_n)
    flow_conserved(v, pr, vs[0])
    weights = ((0.0, 0.0), (A21, 0.0), (B1, B2))
    times = (GAMMA, C2, 1.0)
    iterations = 0
    for i in range(3):
        b[:] = m_n
        vs[1][:] = vs[0]
        for j in range(i):
            b += (step * weights[i][j]) * ys[2 + j]
            vs[1] += (step * weights[i][j]) * vs[2 + j]
        stage, flow = (ys[7 + i], vs[7 + i]) if i < 2 else (ys[5], vs[5])
        _stage_start(i, y, ys, step, trend, stage)
        it = _newton(stage, b, c, t + times[i] * step, pr, scales, tol, work, fresh)
        if it < 0 and i > 0:  # the extrapolated start can overshoot a steep front: retry from the last stage
            stage[:] = ys[6 + i]
            fresh[0] = True
            it = _newton(stage, b, c, t + times[i] * step, pr, scales, tol, work, fresh)
        if it < 0:
            stats[STAT_NEWTON] += iterations
            return False
        iterations += it
        slopes(stage, b, c, pr, ys[2 + i])
        charge_density(stage, pr, rho)
        flow_stage(vs[1], c, t + times[i] * step, rho, pr, flow)
        stage_slopes(flow, vs[1], c, pr, vs[2 + i])
    stats[STAT_NEWTON] += iterations
    return True


@njit(cache=True)
def _error(step, ys, vs, work, pr, scales, tol):
    """The step's error estimate, h sum_i (b_i - b^_i) F_i filtered through the iteration matrix, against
    ``tol``: 1 is the limit; 0 without control."""
    if tol <= 0.0:
        return 0.0
    est, flow_est = ys[6], vs[6]
    est[:] = step * ((B1 - BH1) * ys[2] + (B2 - BH2) * ys[3] + GAMMA * ys[4])
    blocks.solve(work[5], work[6], work[7], work[8], est)
    flow_est[:] = step * ((B1 - BH1) * vs[2] + (B2 - BH2) * vs[3] + GAMMA * vs[4])
    flow_solve(flow_est.copy(), GAMMA * step, pr, flow_est)
    nion = pr.ions.shape[0]
    return max(error_norm(est, ys[5], pr, scales), flow_error(flow_est, pr, scales[nion + 1:])) / tol


@njit(cache=True)
def advance(y, fy, v, fv, t, t_stop, h, pr, scales, tol, max_steps, stats):
    """Step the ions and potential ``y`` (n, m) and the velocities ``v`` (n, 2), consistent at t with slopes
    ``fy``, ``fv``, to exactly ``t_stop``, in place.

    Returns (status, h): the step size to try next. ``stats`` accumulates the ``STAT_*`` counters. With
    ``tol`` <= 0 the steps are h without error control (to measure the order of the method).
    """
    n, m = y.shape[0], y.shape[1]
    work = (np.empty((n, m)), np.empty((n, m)), np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m, m)),
            np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m), dtype=np.int64), np.empty((n, m, m)),
            np.empty(n))
    ys, vs = np.empty((9, n, m)), np.empty((9, n, 2))
    trend = np.zeros((n, m))  # no history at the start of a stretch (the last stop may have been a jump)
    steps = 0
    while t < t_stop:
        if steps >= max_steps:
            return TOO_MANY_STEPS, h
        remaining = t_stop - t
        if remaining <= 1e-13 * t_stop:  # a sliver left by the rounding of the sum of the steps
            break
        step = h
        if step >= remaining * (1.0 - 1e-9):
            step = remaining
        elif step > 0.5 * remaining:
            step = 0.5 * remaining  # two even steps rather than a long one and a sliver
        if step < 1e-14 * max(t_stop, 1e-300):
            return STEP_TOO_SMALL, h
        if not _stages(y, v, t, step, pr, scales, tol, ys, vs, work, stats, trend):
            stats[STAT_FAILED_NEWTON] += 1
            h = 0.25 * step
            continue
        err = _error(step, ys, vs, work, pr, scales, tol)
        factor = min(4.0, max(0.2, 0.9 * err ** (-1.0 / 3.0))) if err > 0.0 else 4.0
        if err > 1.0:
            stats[STAT_REJECTED] += 1
            h = step * factor
            continue
        steps += 1
        stats[STAT_STEPS] += 1
        trend[:] = (ys[5] - y) / step
        y[:] = ys[5]
        fy[:] = ys[4]  # stiffly accurate: the last stage's slope is F(y_n+1)
        v[:] = vs[5]
        fv[:] = vs[4]
        t = t_stop if step == remaining else t + step
        if tol > 0.0:
            h = step * factor if step == h else max(h, step * factor)
    return OK, h
