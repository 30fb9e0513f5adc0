"""Compiled adaptive TR-BDF2 time stepping of the transient Poisson-Nernst-Planck system (``kernels.pnp_system``).

TR-BDF2 (Bank et al. 1985, IEEE Trans. Electron Devices 32, 1992; error estimate of Hosea & Shampine 1996,
Appl. Numer. Math. 20, 21): a trapezoidal stage to t + gamma h, then a BDF2 stage to t + h, gamma = 2 - sqrt(2)
so that both stages have the same iteration matrix M' - d h J, d = gamma / 2. It is L-stable and stiffly
accurate, so the algebraic rows (Poisson, no-slip walls) are simply enforced at each stage. Both stages are
written in conservation form, M(y_new) - b = c F(y_new), so the ion inventory changes only by the Newton
residual, which the Newton iteration drives to round-off.

Local error: est = 2 C h (F_n / gamma - F_gamma / (gamma (1 - gamma)) + F_n+1 / (1 - gamma)), C =
(-3 gamma^2 + 4 gamma - 2) / (12 (2 - gamma)), the leading term C h^3 y''' with y''' from the divided difference
of the three slopes; filtered through the iteration matrix, (M' - d h J)^-1 est, as is usual for stiff problems
(Hosea & Shampine 1996), which also gives the error of the potential. Its size is measured as the volume-mean of
each ion's concentration error and velocity error and the largest potential error, each over the scale of its
change in the run (``scales``), against ``tol``; the step follows h (0.9 / err)^(1/3).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels import block_tridiagonal as blocks
from edl_solver.kernels.fv1d import tridiagonal_solve
from edl_solver.kernels.layout import DH
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
    res, delta, lower, diag, upper, f_lower, f_diag, pivots, coupling = work
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
    """Size of the error ``e`` against the scales: volume means for ions and velocities, max for psi."""
    nion = pr.ions.shape[0]
    n, m = y.shape[0], y.shape[1]
    total = pr.volume.sum()
    worst = 0.0
    for q in range(m):
        acc = 0.0
        for j in range(n):
            if q < nion:
                size = abs(e[j, q]) * (1.0 if pr.model == DH else np.exp(y[j, q]))
                acc += pr.volume[j] * size
            elif q == nion:
                acc = max(acc, abs(e[j, q]))
            else:
                acc += pr.volume[j] * abs(e[j, q])
        if q != nion:
            acc /= total
        worst = max(worst, acc / scales[q])
    return worst


@njit(cache=True)
def slopes(y, b, c, pr, out):
    """F from a converged stage, (M(y) - b) / c, zero on the algebraic rows."""
    conserved(y, pr, out)
    for j in range(y.shape[0]):
        for q in range(y.shape[1]):
            out[j, q] = 0.0 if pr.algebraic[j, q] else (out[j, q] - b[j, q]) / c


@njit(cache=True)
def consistent(y, t, pr, fy):
    """Solve the algebraic rows at time t with the ions and velocities held (after a jump of a wall value or at
    the start), then F(y, t) into ``fy``; False if the potential does not converge."""
    n, m = y.shape[0], y.shape[1]
    nion = pr.ions.shape[0]
    res = np.empty((n, m))
    b = np.empty((n, m))
    lower, diag, upper = np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m, m))
    lo, di, up, rhs, work, out = (np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n),
                                  np.empty(n))
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
    for j in range(n):  # the no-slip rows are v = 0 already; F from one more evaluation
        for q in range(nion + 1, m):
            if pr.algebraic[j, q]:
                y[j, q] = 0.0
    conserved(y, pr, b)
    assemble_problem(y, b, -1.0, t, pr, res, lower, diag, upper)
    for j in range(n):
        for q in range(m):
            fy[j, q] = 0.0 if pr.algebraic[j, q] else res[j, q]
    return ok


@njit(cache=True)
def _error(fy, f_g, f_new, step, work, est, y_new, pr, scales, tol):
    """The step's error estimate (module docstring) against ``tol``: 1 is the limit; 0 without control."""
    if tol <= 0.0:
        return 0.0
    k = 2.0 * ERROR_CONSTANT * step
    for j in range(est.shape[0]):
        for q in range(est.shape[1]):
            est[j, q] = k * (fy[j, q] / GAMMA - f_g[j, q] / (GAMMA * (1.0 - GAMMA)) + f_new[j, q] / (1.0 - GAMMA))
    blocks.solve(work[5], work[6], work[7], work[8], est)
    return error_norm(est, y_new, pr, scales) / tol


@njit(cache=True)
def _stages(y, fy, t, step, pr, scales, tol, m_n, b1, b2, y_g, y_new, f_g, work, stats, trend):
    """The two stages of one step from (t, y) into ``y_new`` (and ``f_g``); False if a Newton iteration failed.
    ``trend`` is the change of y per unit time over the last step (zero without one): the first stage starts from
    its extrapolation."""
    conserved(y, pr, m_n)
    c = D_STAGE * step
    fresh = np.ones(1, dtype=np.bool_)
    b1[:] = m_n + c * fy
    y_g[:] = y + (GAMMA * step) * trend
    it1 = _newton(y_g, b1, c, t + GAMMA * step, pr, scales, tol, work, fresh)
    it2 = -1
    if it1 > 0:
        slopes(y_g, b1, c, pr, f_g)
        conserved(y_g, pr, b2)
        b2[:] = b2 / (GAMMA * (2.0 - GAMMA)) - m_n * ((1.0 - GAMMA) ** 2 / (GAMMA * (2.0 - GAMMA)))
        y_new[:] = y + (y_g - y) / GAMMA  # start from the extrapolation through y_n and y_gamma
        it2 = _newton(y_new, b2, c, t + step, pr, scales, tol, work, fresh)
        if it2 < 0:  # the extrapolated start can overshoot a steep front: retry from the stage value
            y_new[:] = y_g
            fresh[0] = True
            it2 = _newton(y_new, b2, c, t + step, pr, scales, tol, work, fresh)
    stats[STAT_NEWTON] += max(it1, 0) + max(it2, 0)
    return it1 > 0 and it2 > 0


@njit(cache=True)
def advance(y, fy, t, t_stop, h, pr, scales, tol, max_steps, stats):
    """Step ``y`` (consistent at t, with slopes ``fy``) to exactly ``t_stop``, in place.

    Returns (status, h): the step size to try next. ``stats`` accumulates the ``STAT_*`` counters. With
    ``tol`` <= 0 the steps are h without error control (to measure the order of the method).
    """
    n, m = y.shape[0], y.shape[1]
    est = np.empty((n, m))
    work = (np.empty((n, m)), np.empty((n, m)), np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m, m)),
            np.empty((n, m, m)), np.empty((n, m, m)), np.empty((n, m), dtype=np.int64), np.empty((n, m, m)))
    m_n, b1, b2, f_g, f_new = np.empty((n, m)), np.empty((n, m)), np.empty((n, m)), np.empty((n, m)), np.empty((n, m))
    y_g, y_new = np.empty((n, m)), np.empty((n, m))
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
        if not _stages(y, fy, t, step, pr, scales, tol, m_n, b1, b2, y_g, y_new, f_g, work, stats, trend):
            stats[STAT_FAILED_NEWTON] += 1
            h = 0.25 * step
            continue
        slopes(y_new, b2, D_STAGE * step, pr, f_new)
        err = _error(fy, f_g, f_new, step, work, est, y_new, pr, scales, tol)
        factor = min(4.0, max(0.2, 0.9 * err ** (-1.0 / 3.0))) if err > 0.0 else 4.0
        if err > 1.0:
            stats[STAT_REJECTED] += 1
            h = step * factor
            continue
        steps += 1
        stats[STAT_STEPS] += 1
        trend[:] = (y_new - y) / step
        y[:] = y_new
        fy[:] = f_new
        t = t_stop if step == remaining else t + step
        if tol > 0.0:
            h = step * factor if step == h else max(h, step * factor)
    return OK, h
