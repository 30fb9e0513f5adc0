"""Compiled adaptive TR-BDF2 time stepping of the transient Poisson-Nernst-Planck system (``kernels.pnp_system``).

TR-BDF2 (Bank et al. 1985, IEEE Trans. Electron Devices 32, 1992; error estimate of Hosea & Shampine 1996,
Appl. Numer. Math. 20, 21): a trapezoidal stage to t + gamma h, then a BDF2 stage to t + h, gamma = 2 - sqrt(2)
so that both stages have the same iteration matrix M' - d h J, d = gamma / 2. It is L-stable and stiffly
accurate, so Poisson is simply enforced at each stage. Both stages are written in conservation form,
M(y_new) - b = c F(y_new), so the ion inventory changes only by the Newton residual, which the iteration drives
to round-off. Each stage solves the ions and the potential, then the flow (``kernels.pnp_flow``), which does not
act back on them.

Local error: est = 2 C h (F_n / gamma - F_gamma / (gamma (1 - gamma)) + F_n+1 / (1 - gamma)), C =
(-3 gamma^2 + 4 gamma - 2) / (12 (2 - gamma)), the leading term C h^3 y''' with y''' from the divided difference
of the three slopes; filtered through the iteration matrix, (M' - d h J)^-1 est, as is usual for stiff problems
(Hosea & Shampine 1996), which also gives the error of the potential; the velocities' through their own stage
matrix. Its size is measured as the volume-mean of each ion's concentration error and of the velocity errors and
the largest potential error, each over the scale of its change in the run (``scales``: the ion columns, psi, v,
w), against ``tol``; the step follows h (0.9 / err)^(1/3).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels import block_tridiagonal as blocks
from edl_solver.kernels.fv1d import tridiagonal_solve
from edl_solver.kernels.layout import DH
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

GAMMA = 2.0 - np.sqrt(2.0)
D_STAGE = GAMMA / 2.0
ERROR_CONSTANT = (-3.0 * GAMMA**2 + 4.0 * GAMMA - 2.0) / (12.0 * (2.0 - GAMMA))
MAX_NEWTON = 25
#: Largest Newton change of a log-concentration or of the potential (kT/e) in one iteration.
MAX_UPDATE = 2.0
#: Newton stops when the log-concentrations (and perturbations) change by less than this, so that the
#: residual left, and the inventory error it makes, is of the order of its square.
ION_TOLERANCE = 1e-12

#: Status codes of ``advance``.
OK, NEWTON_FAILED, STEP_TOO_SMALL, TOO_MANY_STEPS = 0, 1, 2, 3
#: Entries of the ``stats`` counters.
STAT_STEPS, STAT_REJECTED, STAT_NEWTON, STAT_FAILED_NEWTON = 0, 1, 2, 3


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
                limit = ION_TOLERANCE if q < nion else max(1e-3 * tol * scales[q], 1e-12 * (1.0 + abs(y[j, q])))
                if abs(step) > limit:
                    done = False
        if done:
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
    for _ in range(60):
        conserved(y, pr, b)
        assemble_problem(y, b, -1.0, t, pr, res, lower, diag, upper)
        for j in range(n):
            lo[j], di[j], up[j], rhs[j] = lower[j, nion, nion], diag[j, nion, nion], upper[j, nion, nion], res[j, nion]
        tridiagonal_solve(lo, di, up, rhs, out, work)
        biggest = 0.0
        for j in range(n):
            step = min(max(out[j], -MAX_UPDATE), MAX_UPDATE) if pr.model != DH else out[j]
            y[j, nion] -= step
            biggest = max(biggest, abs(out[j]) / (1.0 + abs(y[j, nion])))
        if biggest < 1e-14:
            ok = True
            break
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
def _estimate(f_n, f_g, f_new, step, out):
    """The local error before filtering: 2 C h (F_n / gamma - F_gamma / (gamma (1 - gamma)) + F_new / (1 - gamma))."""
    k = 2.0 * ERROR_CONSTANT * step
    for j in range(out.shape[0]):
        for q in range(out.shape[1]):
            out[j, q] = k * (f_n[j, q] / GAMMA - f_g[j, q] / (GAMMA * (1.0 - GAMMA)) + f_new[j, q] / (1.0 - GAMMA))


@njit(cache=True)
def _stages(y, fy, v, fv, t, step, pr, scales, tol, ys, vs, work, stats, trend):
    """The two stages of one step from (t, y, v) into ys[3] (y_new) and vs[3] (v_new), with their slopes in
    ys[4], vs[4] and the first stage's in ys[2], vs[2]; False if a Newton iteration failed. ``trend`` is the change
    of y per unit time over the last step (zero without one): the first stage starts from its extrapolation.
    ys/vs rows: 0 M(y_n), 1 b, 2 F_gamma, 3 the new value, 4 F_new, 5 the first stage's value, 6 scratch."""
    m_n, b, f_g, y_new, f_new, y_g = ys[0], ys[1], ys[2], ys[3], ys[4], ys[5]
    rho = work[9]
    c = D_STAGE * step
    fresh = np.ones(1, dtype=np.bool_)
    conserved(y, pr, m_n)
    b[:] = m_n + c * fy
    y_g[:] = y + (GAMMA * step) * trend
    it1 = _newton(y_g, b, c, t + GAMMA * step, pr, scales, tol, work, fresh)
    it2 = -1
    if it1 > 0:
        slopes(y_g, b, c, pr, f_g)
        flow_conserved(v, pr, vs[0])
        vs[1][:] = vs[0] + c * fv
        charge_density(y_g, pr, rho)
        flow_stage(vs[1], c, t + GAMMA * step, rho, pr, vs[5])
        stage_slopes(vs[5], vs[1], c, pr, vs[2])
        a1, a0 = 1.0 / (GAMMA * (2.0 - GAMMA)), (1.0 - GAMMA) ** 2 / (GAMMA * (2.0 - GAMMA))
        conserved(y_g, pr, b)
        b[:] = a1 * b - a0 * m_n
        y_new[:] = y + (y_g - y) / GAMMA  # start from the extrapolation through y_n and y_gamma
        it2 = _newton(y_new, b, c, t + step, pr, scales, tol, work, fresh)
        if it2 < 0:  # the extrapolated start can overshoot a steep front: retry from the stage value
            y_new[:] = y_g
            fresh[0] = True
            it2 = _newton(y_new, b, c, t + step, pr, scales, tol, work, fresh)
        if it2 > 0:
            slopes(y_new, b, c, pr, f_new)
            flow_conserved(vs[5], pr, vs[1])
            vs[1][:] = a1 * vs[1] - a0 * vs[0]
            charge_density(y_new, pr, rho)
            flow_stage(vs[1], c, t + step, rho, pr, vs[3])
            stage_slopes(vs[3], vs[1], c, pr, vs[4])
    stats[STAT_NEWTON] += max(it1, 0) + max(it2, 0)
    return it1 > 0 and it2 > 0


@njit(cache=True)
def _error(fy, fv, step, ys, vs, work, pr, scales, tol):
    """The step's error estimate (module docstring) against ``tol``: 1 is the limit; 0 without control."""
    if tol <= 0.0:
        return 0.0
    est, flow_est = ys[6], vs[6]
    _estimate(fy, ys[2], ys[4], step, est)
    blocks.solve(work[5], work[6], work[7], work[8], est)
    _estimate(fv, vs[2], vs[4], step, flow_est)
    flow_solve(flow_est.copy(), D_STAGE * step, pr, flow_est)
    nion = pr.ions.shape[0]
    return max(error_norm(est, ys[3], pr, scales), flow_error(flow_est, pr, scales[nion + 1:])) / tol


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
    ys, vs = np.empty((7, n, m)), np.empty((7, n, 2))
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
        if not _stages(y, fy, v, fv, t, step, pr, scales, tol, ys, vs, work, stats, trend):
            stats[STAT_FAILED_NEWTON] += 1
            h = 0.25 * step
            continue
        err = _error(fy, fv, step, ys, vs, work, pr, scales, tol)
        factor = min(4.0, max(0.2, 0.9 * err ** (-1.0 / 3.0))) if err > 0.0 else 4.0
        if err > 1.0:
            stats[STAT_REJECTED] += 1
            h = step * factor
            continue
        steps += 1
        stats[STAT_STEPS] += 1
        trend[:] = (ys[3] - y) / step
        y[:] = ys[3]
        fy[:] = ys[4]
        v[:] = vs[3]
        fv[:] = vs[4]
        t = t_stop if step == remaining else t + step
        if tol > 0.0:
            h = step * factor if step == h else max(h, step * factor)
    return OK, h
