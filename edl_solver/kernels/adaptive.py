"""Compiled nested-grid driver: Richardson extrapolation and error control.

One case: solve on four nested grids (each halving the spacing of the previous), extrapolate the
section integrals from the three finest (h^2 and h^4 error terms removed) and from the three coarsest;
their difference, divided by 8 and taken relative to each integral's own size (``error_scale``), is the
error estimate, and the grid is doubled until it meets the requested accuracy. Batches of cases run in ``batch.py``.

Takes arrays, scalars and the records of ``kernels.records``; see ``kernels.fv1d`` for the single-grid
arithmetic and ``model.equilibrium`` for the Python side.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.kernels.fv1d import finite_volume_metric, pb_newton, response_offsets, section_integrals
from edl_solver.kernels.layout import (
    ACCURACY_MISSED,
    CONVERGED,
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
    NEWTON_FAILED,
    PLANAR,
    PROFILE_PSI,
    PROFILE_ROWS,
    PROFILE_U_EO,
    PROFILE_U_P,
    W_TYPE,
)
from edl_solver.kernels.records import NestedSolve, SectionSolve
from edl_solver.kernels.value_errors import difference_error

LEVELS = 4
#: Newton stops when a full step is below this (kT/e).
NEWTON_TOLERANCE = 1e-11
#: Newton steps are capped at this size (kT/e) before the line search.
MAX_STEP = 5.0

#: Potentials below this (kT/e) count as zero when errors are measured (and in the identity checks).
POTENTIAL_FLOOR = 1e-6


#: The accuracy the lab values that are differences of response-matrix terms are held to at least
#: (``value_errors``): their terms carry the round-off of bulk-sized integrals (~1e-8 of them in a channel
#: 1e4 Debye lengths wide), which no grid removes.
DIFFERENCE_FLOOR = 1e-7

#: Floor of the inner length in ``stretching`` (units of L): far below any layer the solver can resolve, so a
#: solve that reaches it fails as Newton's, not as an overflow.
SMALLEST_INNER_LENGTH = 1e-300


@njit(cache=True)
def stretching(inner_length):
    """Stretching beta of the tanh map whose wall cells resolve ``inner_length`` (units of L).

    Near a wall the map gives d ~ 2 exp(-2 beta) (exp(2 beta t) - 1), t = 1 - s: the geometric growth
    starts at d ~ 2 exp(-2 beta), set equal to the smallest physical scale of the layer.
    """
    # an inner length that underflowed (a wall potential of hundreds of kT/e) would give an infinite stretching
    return max(0.5 * np.log1p(2.0 / max(inner_length, SMALLEST_INNER_LENGTH)), 1e-3)


@njit(cache=True)
def computational_nodes(intervals, half):
    """Uniform nodes s in [0, 1] (half section) or [-1, 1] (full slit section), centre node exact."""
    if half:
        return np.linspace(0.0, 1.0, intervals + 1)
    s = np.linspace(-1.0, 1.0, 2 * intervals + 1)
    s[intervals] = 0.0
    return s


@njit(cache=True)
def inner_length(kappa2, wall_guess, counter):
    """Smallest scale of the layer in units of L: lambda_D shrunk by the Gouy-Chapman factor
    2 exp(-z |psi_w| / 2) of the steep innermost part at high wall potentials."""
    worst = max(abs(wall_guess[0]) * counter[0], abs(wall_guess[1]) * counter[1])
    return min(1.0, 2.0 * np.exp(-0.5 * worst)) / np.sqrt(kappa2)


@njit(cache=True)
def gouy_chapman_guess(x, kappa2, half, wall_guess, counter, psi):
    """Superposed Gouy-Chapman profiles (Gouy 1910; Chapman 1913) from the walls, in place on ``psi``:
    psi_w(d) = (4/z) artanh[tanh(z psi_w / 4) exp(-kappa d)], z the counter-ion valence; the mirror wall
    of a half section counts as the second wall."""
    kappa = np.sqrt(kappa2)
    left, z_left = wall_guess[0], counter[0]
    right, z_right = wall_guess[1], counter[1]
    if half:
        left, z_left = right, z_right
    for i in range(x.size):
        a = 4.0 / z_left * np.arctanh(_below_one(np.tanh(z_left * left / 4.0) * np.exp(-kappa * (x[i] + 1.0))))
        b = 4.0 / z_right * np.arctanh(_below_one(np.tanh(z_right * right / 4.0) * np.exp(-kappa * (1.0 - x[i]))))
        psi[i] = a + b


#: The largest double below 1: artanh of it is finite (18.7).
_LARGEST_BELOW_ONE = 1.0 - 2.0**-53


@njit(cache=True, inline="always")
def _below_one(v):
    """``v`` with its magnitude capped just below 1, so that its artanh is finite: tanh(z psi_w / 4) rounds to
    exactly 1 once z |psi_w| > ~76 (a Debye-Hueckel wall of huge charge), and an infinite start potential
    would turn the whole solve into NaN. Values below the cap pass unchanged, bit for bit."""
    return max(-_LARGEST_BELOW_ONE, min(_LARGEST_BELOW_ONE, v))


@njit(cache=True)
def prolong(coarse, fine):
    """Linear interpolation (in grid index) onto the grid with every interval halved."""
    m = coarse.size
    for i in range(m):
        fine[2 * i] = coarse[i]
    for i in range(m - 1):
        fine[2 * i + 1] = 0.5 * (coarse[i] + coarse[i + 1])


@njit(cache=True)
def correct_profile(fine, medium):
    """Richardson-correct a fine-grid profile in place with the next coarser one: psi + (psi - psi_2h)/3
    at the shared nodes, the correction interpolated (cubic in s, one-sided at the ends) between them.
    Removes the h^2 error term, so profiles are fourth-order accurate like the summary's building blocks."""
    m = medium.size
    d = np.empty(m)
    for i in range(m):
        d[i] = (fine[2 * i] - medium[i]) / 3.0
    for i in range(m - 1):
        if m < 4:
            mid = 0.5 * (d[i] + d[i + 1])
        elif i == 0:
            mid = (5.0 * d[0] + 15.0 * d[1] - 5.0 * d[2] + d[3]) / 16.0
        elif i == m - 2:
            mid = (5.0 * d[m - 1] + 15.0 * d[m - 2] - 5.0 * d[m - 3] + d[m - 4]) / 16.0
        else:
            mid = (-d[i - 1] + 9.0 * d[i] + 9.0 * d[i + 1] - d[i + 2]) / 16.0
        fine[2 * i + 1] += mid
    for i in range(m):
        fine[2 * i] += d[i]


@njit(cache=True)
def extrapolate(fine, medium, coarse, out):
    """Richardson extrapolation removing the h^2 and h^4 error terms (spacing halves per grid)."""
    for j in range(out.size):
        out[j] = (64.0 * fine[j] - 20.0 * medium[j] + coarse[j]) / 45.0


#: A value counts as vanishing, and is measured against its natural scale instead of its own size, only below this
#: fraction of that scale (e.g. the EO flow between walls of exactly opposite potential).
VANISHING = 1e-6
#: Round-off of an extrapolated integral relative to its natural scale: the floor rises to stay above it at tight
#: accuracies, so that a value that vanishes exactly does not refine for ever on its round-off.
ROUNDOFF = 1e-13


@njit(cache=True)
def error_scale(values, measure, half, walls, n_ions, kappa, accuracy, scale):
    """Magnitudes the errors of the integrals are measured against: each its own size, so that every summary
    value built from it (the flows, the currents, the mean and wall potentials, the wall charges) meets the
    accuracy relative to itself, even a small difference such as the EO flow between walls of opposite sign.

    Only a value below a tiny fraction of its natural size (``VANISHING``; raised with ``ROUNDOFF / accuracy``)
    counts as vanishing and is measured against that fraction of it: the natural sizes are built from the
    wall potential, the wall charge (the space charge it holds is the charge over kappa^2, Gauss) and the
    pressure-flow scale. The centre potential, exponentially small in a wide channel, is measured against the
    wall potential (so is the left end of a half section, the centre), and a prescribed charge against the
    wall charge; each ion's integral against the section (it enters the summary only in sums that the
    section's size dominates); the response blocks against their own sizes.
    """
    # Natural scales, with floors of 1e-6 kT/e for potentials and the charge such a potential holds on a
    # Debye-Hueckel wall, so that walls at (or near) zero potential or charge are measured against a physical size
    zero_charge = POTENTIAL_FLOOR * max(1.0, kappa)
    psi_scale = max(abs(values[I_PSI_LEFT]), abs(values[I_PSI_RIGHT]), POTENTIAL_FLOOR)
    wall_charge = abs(values[I_FLUX_LEFT]) + abs(values[I_FLUX_RIGHT]) + zero_charge
    up_scale = abs(values[I_UP]) / measure
    # the sizes below which a value vanishes; never below what counts as zero potential or charge
    fraction = max(VANISHING, min(1.0, ROUNDOFF / accuracy))
    psi_small = max(fraction * psi_scale, POTENTIAL_FLOOR)
    charge_small = max(fraction * wall_charge, zero_charge)
    space_small = charge_small / (kappa * kappa)  # the space charge a wall charge holds (Gauss)
    for j in range(values.size):
        scale[j] = abs(values[j])
    scale[I_PSI] = max(scale[I_PSI], psi_small * measure)
    scale[I_UEO] = max(scale[I_UEO], psi_small * measure)
    # the left end of a half section is the centre: its potential is measured as the centre's
    scale[I_PSI_LEFT] = max(scale[I_PSI_LEFT], psi_scale if half else psi_small)
    scale[I_PSI_RIGHT] = max(scale[I_PSI_RIGHT], psi_small)
    scale[I_PSI_CENTRE] = max(scale[I_PSI_CENTRE], psi_scale)
    scale[I_RHO] = max(scale[I_RHO], space_small)
    # a prescribed charge (or the symmetry plane) is the input itself: only its round-off varies, so it is measured
    # against the wall charge as a whole
    for end, at in ((0, I_FLUX_LEFT), (1, I_FLUX_RIGHT)):
        scale[at] = max(scale[at], wall_charge if int(walls[end, W_TYPE]) == FLUX else charge_small)
    scale[I_RHO_UEO] = max(scale[I_RHO_UEO], space_small * psi_scale)
    scale[I_RHO_UP] = max(scale[I_RHO_UP], space_small * up_scale)
    for k in range(n_ions):
        scale[ION_INTEGRALS + k] = max(scale[ION_INTEGRALS + k], measure)
    for j in range(values.size):
        scale[j] = max(scale[j], 1e-300)


@njit(cache=True)
def starting_intervals(beta, accuracy):
    """Cells per half section of the first try: more for stiff layers and tight accuracy."""
    wanted = max(32.0, 8.0 * beta) * max(1.0, (1e-6 / accuracy) ** (1.0 / 6.0))
    return int(2 ** np.ceil(np.log2(wanted)))


@njit(cache=True)
def _level_cells(s, beta, metric, level):
    """The ``Cells`` of grid ``level`` (of LEVELS, finest last) whose finest nodes are ``s``."""
    return finite_volume_metric(s[::2 ** (LEVELS - 1 - level)].copy(), beta, metric)


@njit(cache=True)
def nested_solve(problem, s, beta, start, max_iter, levels, first_level, coarse):
    """Solve ``problem`` on nested grids and fill ``levels[level]`` with the section integrals (LEVELS grids,
    finest last).

    ``s`` are the finest computational nodes and ``start`` the start guess there. The coarsest grid starts
    from its subsample, each finer one from the prolonged coarser solution (nested iteration), so fine grids
    need one or two Newton steps. Levels below ``first_level`` are taken as already solved (after a
    refinement they are the previous grids); ``coarse`` then holds the raw ``PROFILE_*`` rows of the level
    just below. The finest profiles are Richardson-corrected with the next coarser grid
    (``correct_profile``).

    Returns
    -------
    NestedSolve
        Status (0 converged), total Newton iterations, final scaled residual, the raw and the corrected
        finest profiles, and the finest grid's cells.
    """
    total = 0
    residual = 0.0
    guess = coarse[PROFILE_PSI].copy()
    ue_previous = coarse[PROFILE_U_EO].copy()
    up_previous = coarse[PROFILE_U_P].copy()
    half = s[0] == 0.0
    raw = np.empty((PROFILE_ROWS, s.size))
    profiles = np.empty((PROFILE_ROWS, s.size))
    cells = _level_cells(s, beta, problem.metric, first_level)
    for level in range(first_level, LEVELS):
        stride = 2 ** (LEVELS - 1 - level)
        if level > first_level:
            cells = _level_cells(s, beta, problem.metric, level)
        n = cells.x.size
        if level == first_level and first_level == 0:
            p = start[::stride].copy()
        else:
            p = np.empty(n)
            prolong(guess, p)
        status, its, residual = pb_newton(p, cells, problem, problem.walls, NEWTON_TOLERANCE, max_iter, MAX_STEP)
        total += its
        if status != 0:
            return NestedSolve(status, total, residual, raw, profiles, cells)
        ue = np.empty(n)
        up = np.empty(n)
        centre = 0 if half else (n - 1) // 2
        section_integrals(p, cells, problem, centre, ue, up, levels[level])
        if level == LEVELS - 1:
            raw[PROFILE_PSI], raw[PROFILE_U_EO], raw[PROFILE_U_P] = p, ue, up
            correct_profile(p, guess)
            correct_profile(ue, ue_previous)
            correct_profile(up, up_previous)
            profiles[PROFILE_PSI], profiles[PROFILE_U_EO], profiles[PROFILE_U_P] = p, ue, up
        guess, ue_previous, up_previous = p, ue, up
    return NestedSolve(0, total, residual, raw, profiles, cells)


@njit(cache=True)
def _start(problem, s, beta, guess):
    """Start profile on the nodes ``s``: ``guess`` (on them, or on a grid they subsample), or the
    Gouy-Chapman guess when it is empty."""
    psi = np.empty(s.size)
    if guess.size == s.size:
        psi[:] = guess
    elif guess.size > s.size and (guess.size - 1) % (s.size - 1) == 0:
        psi[:] = guess[::(guess.size - 1) // (s.size - 1)]
    else:
        x = np.tanh(beta * s) / np.tanh(beta)
        gouy_chapman_guess(x, problem.kappa2, problem.half, problem.wall_potential_guess, problem.counter_valence,
                           psi)
    return psi


@njit(cache=True)
def solve_adaptive(problem, controls, guess, case, case_scales):
    """One case (``SectionProblem``) to the accuracy of its ``Controls``.

    ``controls.intervals`` > 0 fixes the finest grid (no refinement); 0 chooses it from the stiffness and
    refines, each refinement solving only the new finest grid (the coarser three are the previous ones).
    ``guess`` is a start profile on the first grid's nodes, or empty for the Gouy-Chapman guess. ``case`` and
    ``case_scales`` are the case vector and its ``S_*`` scales, whose lab values that may cancel join the estimate
    (``value_errors.difference_error``); empty arrays leave them out (a section solved without its summary).

    Returns
    -------
    SectionSolve
        Status CONVERGED, NEWTON_FAILED or ACCURACY_MISSED, the extrapolated integrals, the finest grid and
        its profiles.
    """
    n_ions = problem.ions.shape[0]
    metric, half, kappa2 = problem.metric, problem.half, problem.kappa2
    beta = stretching(inner_length(kappa2, problem.wall_potential_guess, problem.counter_valence))
    intervals, max_intervals = controls.intervals, controls.max_intervals
    n_half = intervals if intervals > 0 else min(starting_intervals(beta, controls.accuracy), max_intervals)
    s = computational_nodes(n_half, half)
    psi = _start(problem, s, beta, guess)
    size = response_offsets(n_ions)[3]
    out = np.zeros(size)
    levels = np.zeros((LEVELS, size))
    lower = np.empty(size)
    scale = np.empty(size)
    iterations = 0
    first_level = 0
    coarse = np.empty((PROFILE_ROWS, 0))
    while True:
        run = nested_solve(problem, s, beta, psi, controls.max_iterations, levels, first_level, coarse)
        iterations += run.iterations
        finest = run.profiles
        if run.status != 0:
            return SectionSolve(NEWTON_FAILED, iterations, np.inf, run.residual, n_half, s, beta, run.cells, psi,
                                finest[PROFILE_U_EO], finest[PROFILE_U_P], out)
        extrapolate(levels[3], levels[2], levels[1], out)
        extrapolate(levels[2], levels[1], levels[0], lower)
        measure = 1.0 if (half and metric == PLANAR) else (2.0 if metric == PLANAR else 0.5)
        error_scale(out, measure, half, problem.walls, n_ions, np.sqrt(kappa2), controls.accuracy, scale)
        estimate = 0.0
        for j in range(out.size):
            estimate = max(estimate, abs(out[j] - lower[j]) / scale[j])
        estimate /= 8.0
        if estimate <= controls.accuracy and case.size > 0:  # the lab values that may cancel, on a final candidate
            derived = difference_error(case, case_scales, out, lower,
                                       max(VANISHING, min(1.0, ROUNDOFF / controls.accuracy)))
            target = max(controls.accuracy, DIFFERENCE_FLOOR)
            estimate = derived if derived > target else max(estimate, min(derived, controls.accuracy))
        done = estimate <= controls.accuracy or intervals > 0
        if done or 2 * n_half > max_intervals:
            return SectionSolve(CONVERGED if done else ACCURACY_MISSED, iterations, estimate, run.residual, n_half,
                                s, beta, run.cells, finest[PROFILE_PSI], finest[PROFILE_U_EO], finest[PROFILE_U_P],
                                out)
        # refine: the three finer grids become the coarser three of the new set
        for level in range(LEVELS - 1):
            levels[level, :] = levels[level + 1, :]
        first_level = LEVELS - 1
        coarse = run.raw
        n_half *= 2
        s = computational_nodes(n_half, half)
        psi = np.empty(s.size)  # the finest guess is prolonged from the raw coarse solution inside
