"""Equilibrium double layer and flow across a rectangular cross-section, with nested grids and error control.

The numerical core of issue 13, dimensionless and not yet wired into ``Case``: width W along y, height H along
z, lengths in h = min(W, H) / 2 (so kappa h is the Debye parameter of the narrower direction), potentials in
kT/e. One wall condition on the pair of walls z = 0, H (top and bottom) and one on the pair y = 0, W (the sides):
a fixed potential, a fixed charge or a charge-regulated wall each (two different fixed potentials are refused: the
wall charge would diverge at the corners). The quarter is solved (``rectangle_grid``) on four
nested tensor-product grids, each halving the spacing of the previous; the section integrals are extrapolated
(Richardson, h^2 and h^4 removed, ``kernels.adaptive.extrapolate``) from the three finest and from the three
coarsest, their difference over 8 relative to each integral's size is the error estimate, and the grid is
refined until the estimate meets the accuracy (to the size the estimate predicts, ``_next_intervals``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from edl_solver.errors import ConvergenceError
from edl_solver.kernels.adaptive import LEVELS, extrapolate, inner_length, starting_intervals, stretching
from edl_solver.kernels.layout import FLUX, POTENTIAL, W_VALUE
from edl_solver.model import rectangle_grid as fv
from edl_solver.model.rectangle_grid import (
    I_CENTRE,
    I_CORNER,
    I_FLUX,
    I_FLUX_SIDES,
    I_FLUX_TB,
    I_MID_Y,
    I_MID_Z,
    I_PSI,
    I_PSI_SIDES,
    I_PSI_TB,
    I_RHO,
    I_RHO_UEO,
    I_RHO_UP,
    I_UEO,
    I_UP,
    I_WALL,
    GridSolution,
    Ions,
)
from edl_solver.model.rectangle_walls import (  # noqa: F401 (the isolated walls, re-exported)
    WallPairs,
    check,
    grahame_potential,
    pair_rows,
    regulated_potential,
    wall_pairs,
)

#: Discrete identities (charge balance, reciprocity, u_eo = psi - zeta) hold to round-off and Newton's residual
#: in this scheme; beyond this a solve is declared failed rather than returned (as ``kernels.identities``).
IDENTITY_TOLERANCE = 1e-8
#: Potentials below this (kT/e) count as zero when errors are measured (``kernels.adaptive.POTENTIAL_FLOOR``).
POTENTIAL_FLOOR = 1e-6
#: A value below this fraction of its natural size is measured against that fraction (``adaptive.VANISHING``).
VANISHING = 1e-6


@dataclass(frozen=True)
class RectangleSection:
    """Dimensionless solution of a rectangular section (lengths in h = min(W, H) / 2, potentials in kT/e).

    Attributes
    ----------
    width, height : float
        W / h and H / h.
    kappa : float
        kappa h.
    zeta : float
        The wall potential (charged walls: its mean over the perimeter, an output).
    integrals : dict
        Extrapolated full-section integrals (``rectangle_grid.INTEGRALS``): ``psi`` int psi dA, ``u_eo`` int u_eo dA
        (the EO flow rate per unit field, units eps kT h^2 / (e eta)), ``u_p`` int u_p dA (the pressure flow per
        unit (dp/dx), units h^4 / eta; laplacian u_p = 1), ``rho`` int rho_hat dA, ``rho_u_p`` and ``rho_u_eo``
        (the streaming and EO convection integrals), ``wall_flux`` the outward-normal derivative of psi over the
        perimeter (the wall charge, units eps kT / e), ``flux_tb`` and ``flux_sides`` its parts on the walls z = 0, H
        and y = 0, W, ``wall_psi`` int psi ds over the perimeter (``psi_tb``, ``psi_sides`` its parts), ``psi_centre``.
    ion_integrals : ndarray
        The ion blocks (``rectangle_grid.ion_offsets`` less ``len(INTEGRALS)``): int c_k / c_k,bulk dA, int u_k dA,
        int (c_i / c_i,bulk) u_p dA, int (c_i / c_i,bulk) u_k dA, extrapolated; the 1-D solver's layout.
    area, perimeter : float
        W H / h^2 and 2 (W + H) / h.
    finest : GridSolution
        The finest grid's quarter (y, z nodes; psi, u_eo, u_p on them, not extrapolated).
    intervals : int
        Cells per direction of the quarter on the finest grid.
    iterations : int
        Newton iterations, all grids together.
    estimate : float
        Error estimate: the largest relative error of the integrals.
    charge_balance, reciprocity, eo_identity : float
        Residuals of wall_flux + kappa^2 int rho = 0, int u_eo = -kappa^2 int rho u_p and u_eo = psi - zeta
        (finest grid, the last pointwise, 0 unless all walls have one fixed potential), each relative to its natural
        size.
    charge_density : float or None
        The mean wall charge density sigma_hat over the perimeter (None when all walls have one fixed potential).
    wall_types : tuple of int
        The condition of the top/bottom pair and of the side pair (``kernels.layout``: POTENTIAL, FLUX, REGULATED).
    """

    width: float
    height: float
    kappa: float
    zeta: float
    integrals: dict[str, float]
    area: float
    perimeter: float
    finest: GridSolution
    intervals: int
    iterations: int
    estimate: float
    charge_balance: float
    reciprocity: float
    eo_identity: float
    charge_density: float | None = None
    ion_integrals: np.ndarray | None = None
    wall_types: tuple[int, int] = (POTENTIAL, POTENTIAL)

    @property
    def pair_potentials(self) -> dict[str, float]:
        """Mean wall potential (kT/e) of the top/bottom pair (``tb``, int psi ds / 2W) and of the sides (``sides``,
        / 2H), extrapolated."""
        v = self.integrals
        return {"tb": v["psi_tb"] / (2.0 * self.width), "sides": v["psi_sides"] / (2.0 * self.height)}

    @property
    def pair_charge_densities(self) -> dict[str, float]:
        """Mean wall charge density sigma_hat (outward-normal derivative of psi) of the top/bottom pair (``tb``,
        flux / 2W) and of the sides (``sides``, / 2H); NaN when all walls have one fixed potential (the split is
        not error-controlled there: ``rectangle_grid.flows_and_integrals``)."""
        v = self.integrals
        return {"tb": v["flux_tb"] / (2.0 * self.width), "sides": v["flux_sides"] / (2.0 * self.height)}

    @property
    def wall_potentials(self) -> dict[str, float]:
        """The wall potential (kT/e): ``mean`` over the perimeter, at the ``corner``, and mid-way along the walls
        ``y = W/2`` (``mid_y``) and ``z = H/2`` (``mid_z``), all extrapolated; zeta throughout on zeta walls."""
        v = self.integrals
        return {"mean": v["wall_psi"] / self.perimeter, "corner": v["psi_corner"], "mid_y": v["psi_mid_y"],
                "mid_z": v["psi_mid_z"]}

    @property
    def residual(self) -> float:
        """Newton's largest row-scaled residual on the finest grid, kT/e."""
        return self.finest.residual

    @property
    def mean_velocity_eo(self) -> float:
        """Mean EO velocity per unit field (units eps kT / (e eta)); 1 - mean psi / zeta times -zeta."""
        return self.integrals["u_eo"] / self.area

    @property
    def mean_potential(self) -> float:
        """Mean potential over the section (kT/e)."""
        return self.integrals["psi"] / self.area


def _error_scale(values: np.ndarray, zeta: float, area: float, kappa: float, perimeter: float) -> np.ndarray:
    """Magnitudes the integrals' errors are measured against: each its own size, floored at a tiny fraction of
    its natural size (as ``kernels.adaptive.error_scale``), so that a vanishing value does not refine for ever;
    ``zeta`` the size of the wall potentials."""
    psi_small = max(VANISHING * abs(zeta), POTENTIAL_FLOOR)
    charge_small = max(VANISHING * abs(values[I_FLUX]), POTENTIAL_FLOOR * max(1.0, kappa))
    space_small = charge_small / kappa**2
    up_scale = abs(values[I_UP]) / area
    floors = np.zeros(values.size)
    floors[[I_PSI, I_UEO]] = psi_small * area
    floors[I_UP] = 1e-300
    floors[I_RHO] = space_small
    floors[I_RHO_UP] = space_small * up_scale
    floors[I_RHO_UEO] = space_small * abs(zeta)
    floors[I_FLUX] = charge_small
    floors[I_WALL] = psi_small * perimeter
    floors[[I_CORNER, I_MID_Y, I_MID_Z]] = psi_small
    # as the 1-D solver: the centre potential, exponentially small in a wide channel, against the wall potential; a
    # pair's wall charge against the whole (given charges vary only by round-off); each ion's integral against the
    # section (it enters the summary only in sums the section dominates); the response blocks against their own sizes
    floors[I_CENTRE] = max(abs(zeta), POTENTIAL_FLOOR)
    floors[[I_FLUX_TB, I_FLUX_SIDES]] = max(abs(values[I_FLUX]), charge_small)
    floors[[I_PSI_TB, I_PSI_SIDES]] = psi_small * perimeter
    first = len(fv.INTEGRALS)
    n_ions = round((np.sqrt(9.0 + 4.0 * (values.size - first)) - 3.0) / 2.0)  # the ion blocks hold n (3 + n)
    floors[first: first + n_ions] = area
    return np.maximum(np.abs(values), np.maximum(floors, 1e-300))


@dataclass(frozen=True)
class _Physics:
    """What every grid solve needs: kappa h, the ions, the wall pairs and the size of the wall potentials."""

    kappa: float
    ions: Ions
    pairs: WallPairs

    @property
    def potential(self) -> float:
        return max(abs(p) for p in self.pairs.isolated)

    def describe(self, half_w: float, half_h: float) -> str:
        return f"rectangle {2 * half_w:g} x {2 * half_h:g} h, kappa h = {self.kappa:g}, {self.pairs.describe()}"


def _solve_grid(half_w: float, half_h: float, betas: tuple[float, float], intervals: int, start: np.ndarray | None,
                physics: _Physics) -> GridSolution:
    """One grid of ``intervals`` cells per direction, Newton from ``start`` (quarter node array) or, if None, from
    the Gouy-Chapman start of each pair's isolated-wall potential."""
    kappa, ions, pairs = physics.kappa, physics.ions, physics.pairs
    y, z = fv.axis(half_w, intervals, betas[0]), fv.axis(half_h, intervals, betas[1])
    op = fv.operator(y, z)
    if start is None:
        start = fv.gouy_chapman_start(y, z, pairs.start, kappa, pairs.counters)
    poisson = fv.operator(y, z, pairs.unknown_walls) if any(pairs.unknown_walls) else op
    ny, nz = poisson.shape
    psi = start[:ny, :nz].ravel().copy()
    status, its, residual = fv.newton(poisson, psi, pairs.conditions, kappa**2, ions)
    if status != 0:
        why = "the iteration limit was reached" if status == 1 else "the line search failed"
        raise ConvergenceError(f"{physics.describe(half_w, half_h)}: Newton failed on the {intervals} x {intervals} "
                               f"grid ({why})")
    grid_psi = fv.full_nodes(poisson, psi, pairs.fixed)
    solved = fv.flows_and_integrals(op, grid_psi, kappa**2, ions, its, pairs.charges(grid_psi))
    return dataclasses.replace(solved, residual=residual)


#: Order the extrapolated integrals are taken to converge at when the next grid is chosen (between the corners'
#: ~4 and the smooth part's 6; a guess too low only over-refines, one too high costs another refinement).
PREDICTED_ORDER = 5.0
#: Different pairs other than two fixed charges (``WallPairs.rough_corner``): a fixed potential meeting a flux leaves
#: r log r at the corner (the right-angle wedge with one fixed-potential and one flux side has odd integer exponents,
#: which the flux resonates with; derived here: -(2 sigma / pi)(t log r + x theta) there), a regulated wall meeting
#: another condition r^2 log r (its charge varies along it from the corner). Their h^2 log h error survives the
#: Richardson steps (the extrapolated wall potential integrals then converge at order 2 only), so these grids are fitted
#: instead (``_fit_levels``): A + C h^2 log h + D h^2 + F h^4 through the four levels (observed order about 3.5), the
#: estimate its distance from the fit without h^4 through the three finest, and the next grid predicted at this order.
ROUGH_CORNER_ORDER = 3.0
#: Margin on the predicted grid, so that the estimate there lands below the accuracy rather than just above it.
PREDICTION_MARGIN = 1.5


def _looser(estimate: float) -> float:
    """The accuracy, one significant digit rounded up, that an error estimate meets."""
    exponent = np.floor(np.log10(estimate))
    return float(np.ceil(estimate / 10**exponent) * 10**exponent)


def _next_intervals(n: int, excess: float, max_intervals: int, order: float = PREDICTED_ORDER) -> int:
    """Cells per direction of the next try after an estimate ``excess`` times the accuracy on ``n`` cells: the
    grid the observed error predicts (at ``order``), at least 1.25 n, a multiple of 2^(LEVELS - 1), at most
    ``max_intervals``. The estimate is measured again there, so a prediction only decides the cost, never the
    accuracy. Returns n or less where no larger grid is allowed."""
    step = 2 ** (LEVELS - 1)
    wanted = max(1.25 * n, n * (PREDICTION_MARGIN * excess) ** (1.0 / order))
    wanted = min(int(np.ceil(wanted / step)) * step, max_intervals // step * step)
    return 2 * n if n < wanted <= 2 * n and 2 * n <= max_intervals and wanted > 1.75 * n else wanted


def _nested(half_w: float, half_h: float, betas: tuple[float, float], n: int,
            physics: _Physics) -> list[GridSolution]:
    """The LEVELS nested grids of n / 2^(LEVELS - 1), ..., n cells per direction, coarsest first, each Newton
    starting from the prolonged coarser solution (nested iteration: the fine grids need one or two steps)."""
    levels: list[GridSolution] = []
    start = None
    for level in range(LEVELS):
        levels.append(_solve_grid(half_w, half_h, betas, n // 2 ** (LEVELS - 1 - level), start, physics))
        start = fv.prolong(levels[-1].psi)
    return levels


def _identities(sol: GridSolution, zeta: float | None, kappa: float, area: float,
                perimeter: float) -> tuple[float, ...]:
    """Charge balance, reciprocity and the pointwise u_eo = psi - zeta (``zeta`` the one potential of all four
    walls; None otherwise, and 0 returned) of one grid, relative residuals."""
    v = sol.integrals
    wall = abs(v[I_FLUX]) + POTENTIAL_FLOOR * max(1.0, kappa) * perimeter
    balance = abs(v[I_FLUX] + kappa**2 * v[I_RHO]) / wall
    streaming = -kappa**2 * v[I_RHO_UP]
    size = max(abs(v[I_UEO]), abs(streaming), max(abs(zeta or 0.0), POTENTIAL_FLOOR) * area, 1e-300)
    reciprocity = abs(v[I_UEO] - streaming) / size
    if zeta is None:  # the wall potential is not uniform: u_eo = psi - psi_wall holds nowhere in particular
        return balance, reciprocity, 0.0
    eo = np.max(np.abs(sol.u_eo - (sol.psi - zeta))) / max(abs(zeta), POTENTIAL_FLOOR)
    return balance, reciprocity, eo


def _validate(width: float, height: float, debye_length: float, z_k: np.ndarray, c_k: np.ndarray, model: str,
              packing: np.ndarray | None, accuracy: float) -> None:
    """InputError for a field out of range (``solve_rectangle_section``; the walls: ``rectangle_walls``)."""
    for name, value in (("width", width), ("height", height), ("debye_length", debye_length)):
        check(name, value, "a positive finite length", np.isfinite(value) and value > 0)
    check("valences", list(z_k), "nonzero valences of both signs, one per concentration",
          z_k.size == c_k.size and z_k.size >= 2 and np.all(z_k != 0) and z_k.min() < 0 < z_k.max())
    check("concentrations", list(c_k), "positive and electroneutral (sum z c = 0)",
          np.all(c_k > 0) and abs(z_k @ c_k) <= 1e-9 * (np.abs(z_k) @ c_k))
    check("model", model, '"pb", "dh" or "steric" (with packing)',
          model in ("pb", "dh") or (model == "steric" and packing is not None))
    if packing is not None:
        check("packing", list(packing), 'None unless model = "steric"', model == "steric")
        ratio = packing / c_k if packing.shape == c_k.shape else np.array([np.nan])
        check("packing", list(packing), "c_k N_A d^3 of each ion (one diameter d: proportional to the "
              "concentrations), positive, summing to less than 1",
              bool(np.all(np.isfinite(ratio)) and np.all(ratio > 0) and np.ptp(ratio) <= 1e-9 * ratio.max()
                   and packing.sum() < 1.0))
    check("accuracy", accuracy, "a number in [1e-13, 0.1]", 1e-13 <= accuracy <= 0.1)


def _fit_levels(values: list[np.ndarray], quartic: bool) -> np.ndarray:
    """The h -> 0 limit A of A + C h^2 log h + D h^2 (+ F h^4 if ``quartic``) through the integrals of successive
    halvings (``values``, coarsest first: one more than the terms), each integral alike (h = 2^-level: a scale of h only
    moves C log(scale) h^2 into D)."""
    h = 0.5 ** np.arange(len(values), dtype=float)
    terms = [np.ones_like(h), h**2 * np.log(h), h**2] + ([h**4] if quartic else [])
    return np.linalg.solve(np.column_stack(terms), np.array(values))[0]


def _refine(half_w: float, half_h: float, betas: tuple[float, float], n: int, physics: _Physics,
            control: tuple[float, int, int]) -> tuple[list[GridSolution], np.ndarray, float, int]:
    """Nested grids from n cells per direction, refined until the error estimate meets the accuracy (``control``:
    accuracy, fixed intervals or 0, max_intervals); returns the grids, the extrapolated integrals, the estimate and
    the finest grid's cells per direction."""
    accuracy, intervals, max_intervals = control
    kappa = physics.kappa
    width, height = 2 * half_w, 2 * half_h
    area, perimeter = width * height, 2.0 * (width + height)
    rough = physics.pairs.rough_corner
    order = ROUGH_CORNER_ORDER if rough else PREDICTED_ORDER
    levels = _nested(half_w, half_h, betas, n, physics)
    while True:
        values = [s.integrals for s in levels]
        out, lower = np.empty(values[0].size), np.empty(values[0].size)
        if rough:  # the fit's distance from the one without h^4: the lower fit's error, a bound on the finer one's
            out, lower, divisor = _fit_levels(values, True), _fit_levels(values[1:], False), 1.0
        else:  # the 1-D solver's: two Richardson extrapolations, at orders of 3 and beyond 8 times the finer's error
            extrapolate(values[3], values[2], values[1], out)
            extrapolate(values[2], values[1], values[0], lower)
            divisor = 8.0
        scale = _error_scale(out, physics.potential, area, kappa, perimeter)
        estimate = float(np.nanmax(np.abs(out - lower) / scale) / divisor)
        if estimate <= accuracy or intervals > 0:
            break
        wanted = _next_intervals(n, estimate / accuracy, max_intervals, order)
        if wanted <= n:
            raise ConvergenceError(f"{physics.describe(half_w, half_h)}: accuracy {accuracy:g} missed (estimate "
                                   f"{estimate:.2g}) with {n} cells per direction (max_intervals = {max_intervals}); "
                                   f"a looser accuracy (Numerics(accuracy={_looser(estimate):g}) or more) would "
                                   "be met on this grid")
        if wanted == 2 * n:  # the three finest grids are the next set's coarser ones
            levels = [*levels[1:], _solve_grid(half_w, half_h, betas, wanted, fv.prolong(levels[-1].psi), physics)]
        else:
            levels = _nested(half_w, half_h, betas, wanted, physics)
        n = wanted
    return levels, out, estimate, n


def _mean_charge(pairs: WallPairs, integrals: dict[str, float], perimeter: float) -> float | None:
    """The mean wall charge density: None on walls of one fixed potential, the given one on walls of one charge,
    else the wall flux over the perimeter."""
    sides, tb = pairs.rows
    if pairs.equal_zeta:
        return None
    if pairs.kinds == (FLUX, FLUX) and sides[W_VALUE] == tb[W_VALUE]:
        return float(sides[W_VALUE])
    return integrals["wall_flux"] / perimeter


def solve_rectangle_section(width: float, height: float, debye_length: float, valences, concentrations,
                            model: str = "pb", zeta: float | None = None, accuracy: float = 1e-6,
                            max_intervals: int = 512, intervals: int = 0,
                            charge_density: float | None = None, wall_row=None, wall_rows=None,
                            packing=None) -> RectangleSection:
    """Solve the double layer and the EO and pressure-driven flow across a W x H rectangle.

    Parameters
    ----------
    width, height : float
        W and H, any one length unit (only ratios enter).
    debye_length : float
        lambda_D in the same unit.
    valences, concentrations : sequence of float
        The ions' valences z_k and bulk concentrations c_k (any unit; electroneutral: sum z_k c_k = 0).
    model : {"pb", "dh", "steric"}
        Poisson-Boltzmann, its Debye-Hueckel linearisation, or the lattice gas of ions of one size (Bikerman 1942;
        ``packing`` required), as the 1-D solver (``kernels.fv1d.charge``).
    zeta : float
        Wall potential in kT/e, the same on all four walls (0 if no wall condition is given).
    accuracy : float
        Relative accuracy every integral is refined to (estimated as in the 1-D solver).
    max_intervals : int
        Largest number of cells per direction of the quarter; ConvergenceError beyond.
    intervals : int
        If > 0, the finest grid's cells per direction, fixed (no refinement; the estimate is still returned).
    charge_density : float, optional
        Instead of ``zeta``: the walls' charge density sigma_hat = sigma h e / (eps kT), the same on all four walls
        (the outward-normal derivative of psi; ``kernels.walls.dimensionless_wall``'s scaling with lengths in h).
        The wall potential is then an output (``RectangleSection.wall_potentials``).
    wall_row : numpy.ndarray, optional
        Instead of ``zeta`` or ``charge_density``: charge-regulated walls, the same on all four, the kernels'
        dimensionless row of a REGULATED wall (``kernels.walls.dimensionless_wall`` of ``model.packing.wall_row_si``
        with length h = min(W, H) / 2 in the unit of W and H). Each wall node's charge is the 1-D solver's law
        (``kernels.walls.regulated_charge``) at its potential; the start is the isolated wall's potential
        (``rectangle_walls.regulated_potential``). Wall potentials and the mean charge density are outputs.
    wall_rows : pair of numpy.ndarray, optional
        Instead of the above: the conditions of the walls z = 0, H (top and bottom) and of the walls y = 0, W (the
        sides), each a dimensionless wall row as ``wall_row`` of type POTENTIAL (W_VALUE zeta in kT/e), FLUX
        (W_VALUE sigma_hat) or REGULATED. Two different potentials are refused (the wall charge would diverge at
        the corners). A fixed-potential pair holds its wall nodes, the corners included; the other pair's are
        unknowns with their flux. Per pair: ``RectangleSection.pair_potentials``, ``pair_charge_densities``.
    packing : sequence of float, optional
        The steric model's nu_k = c_k N_A d^3 of each ion (``kernels.layout.SPECIES_PACKING``, one diameter d).

    Raises
    ------
    InputError
        A field out of range. ConvergenceError: Newton failed, the accuracy was missed within ``max_intervals``,
        or an identity of the scheme failed.
    """
    z_k, c_k = np.asarray(valences, float), np.asarray(concentrations, float)
    packing = None if packing is None else np.asarray(packing, float).ravel()
    _validate(width, height, debye_length, z_k, c_k, model, packing, accuracy)
    rows = pair_rows(zeta, charge_density, wall_row, wall_rows)
    h = 0.5 * min(width, height)
    half_w, half_h, kappa = 0.5 * width / h, 0.5 * height / h, h / debye_length
    ions = Ions(z_k, z_k * c_k / (z_k**2 @ c_k), np.zeros(z_k.size) if packing is None else packing, model)
    pairs = wall_pairs(rows, kappa, ions, c_k / (z_k**2 @ c_k))
    physics = _Physics(kappa, ions, pairs)
    # the layer's smallest scale, of the steeper pair, in both directions (the corners see both layers)
    inner = inner_length(kappa**2, np.array(pairs.layer), np.array(pairs.counters))
    betas = (stretching(inner / half_w), stretching(inner / half_h))
    n = intervals if intervals > 0 else min(starting_intervals(max(betas), accuracy), max_intervals)
    check("intervals", n, f"a multiple of {2 ** (LEVELS - 1)}", n % 2 ** (LEVELS - 1) == 0)
    area, perimeter = width * height / h**2, 2.0 * (width + height) / h
    levels, out, estimate, n = _refine(half_w, half_h, betas, n, physics, (accuracy, intervals, max_intervals))
    checks = _identities(levels[-1], pairs.fixed if pairs.equal_zeta else None, kappa, area, perimeter)
    if max(checks) > IDENTITY_TOLERANCE:
        raise ConvergenceError(f"rectangle {width:g} x {height:g}: an identity of the scheme failed (charge balance "
                               f"{checks[0]:.2g}, reciprocity {checks[1]:.2g}, u_eo = psi - zeta {checks[2]:.2g})")
    integrals = dict(zip(fv.INTEGRALS, out.tolist()))
    mean_zeta = pairs.fixed if pairs.equal_zeta else integrals["wall_psi"] / perimeter
    return RectangleSection(2 * half_w, 2 * half_h, kappa, mean_zeta, integrals, area, perimeter, levels[-1], n,
                            sum(s.iterations for s in levels), estimate, *checks,
                            _mean_charge(pairs, integrals, perimeter), out[len(fv.INTEGRALS):],
                            (pairs.kinds[1], pairs.kinds[0]))
