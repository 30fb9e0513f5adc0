"""One grid of the rectangular cross-section: the 2-D finite-volume operator, the Poisson-Boltzmann Newton
iteration, the Stokes solves and the section integrals (nested grids and error control are in rectangle.py).

Dimensionless as the 1-D solver (``kernels.fv1d``): psi = e phi / kT, lengths in h = min(W, H) / 2, charge
rho_hat(psi) with laplacian(psi) = -kappa2 rho_hat. The quarter [0, W/2h] x [0, H/2h] is solved, with zero normal
derivative on the two inner edges (the symmetry planes) and on each of the two outer ones (the side wall y = W/2
and the top wall z = H/2, each standing for its pair) either psi = zeta or a given outward-normal derivative
sigma_hat, fixed or regulated (charged walls: Gauss, the wall nodes' balances take sigma_hat times their wall faces,
as ``kernels.fv1d`` does at a charged end). The charge is the 1-D solver's: point ions, linearised, or the lattice
gas of one ion size (``Ions``).

Vertex-centred finite volumes on a tensor-product grid: each direction is the 1-D half-section grid of
``kernels.fv1d.finite_volume_metric`` (tanh map clustered at its wall, ``kernels.adaptive.stretching``), the
cell of node (i, j) the product of the 1-D cells. The 5-point operator L (flux balance of each cell) is
symmetric and used for Poisson and both Stokes problems alike, so that u_eo = psi - zeta holds to round-off on
the grid (equal walls, no slip, uniform viscosity) and reciprocity int u_eo = -kappa2 int rho u_p is exact.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from edl_solver.kernels.adaptive import computational_nodes
from edl_solver.kernels.fv1d import finite_volume_metric
from edl_solver.kernels.layout import PLANAR
from edl_solver.kernels.walls import regulated_charge

#: Newton stops when a full step is below this (kT/e), as ``kernels.adaptive.NEWTON_TOLERANCE``.
NEWTON_TOLERANCE = 1e-11
#: A step below this fraction of the potential that no longer halves is at the solve's round-off floor: converged.
ROUNDOFF_STEP = 1e-9
#: Newton steps are capped at this size (kT/e) before the line search (not for DH), as ``kernels.adaptive``.
MAX_STEP = 5.0
#: Newton iterations per grid before the solve counts as failed.
MAX_ITERATIONS = 100
#: Below this step (kT/e) the Jacobian is kept (chord steps): it then changes by about z * step of its charge part
#: (rho' ~ cosh psi), so the chord steps still contract by a factor of ten or more each, and the factorisations,
#: most of a solve's time, are saved for the large steps.
REUSE_STEP = 0.05


def factor(matrix: sp.csc_matrix):
    """Sparse LU of a symmetric 5-point matrix: a minimum-degree ordering of A^T + A (about half the fill of the
    default column ordering on these grids) and the diagonal pivots (the matrices are definite)."""
    return splu(matrix, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                options={"SymmetricMode": True})

#: Order of the section integrals (``GridSolution.integrals``), full section, lengths in h:
#: int psi dA, int u_eo dA, int u_p dA, int rho dA, int rho u_p dA, int rho u_eo dA, the wall flux
#: (the outward-normal derivative of psi integrated over the perimeter: the total wall charge in units of eps kT/(e h)).
#: Then the wall potential: int psi ds over the perimeter, and psi at the corner, mid-way along the walls y = W/2
#: and z = H/2 (nodes every grid shares, so they extrapolate as the integrals do; zeta throughout on zeta walls).
#: Then the same wall flux and int psi ds split between the two walls z = 0, H (``_tb``, top and bottom) and the
#: two walls y = 0, W (``_sides``), and psi at the centre. The ion blocks follow (``ion_offsets``).
INTEGRALS = ("psi", "u_eo", "u_p", "rho", "rho_u_p", "rho_u_eo", "wall_flux", "wall_psi", "psi_corner",
             "psi_mid_y", "psi_mid_z", "flux_tb", "flux_sides", "psi_tb", "psi_sides", "psi_centre")
(I_PSI, I_UEO, I_UP, I_RHO, I_RHO_UP, I_RHO_UEO, I_FLUX, I_WALL, I_CORNER, I_MID_Y, I_MID_Z, I_FLUX_TB,
 I_FLUX_SIDES, I_PSI_TB, I_PSI_SIDES, I_CENTRE) = range(len(INTEGRALS))


def ion_offsets(n_ions: int) -> tuple[int, int, int, int, int]:
    """Where the ion blocks of the integral vector start, and its length (the 1-D layout, ``kernels.layout``):
    int c_k / c_k,bulk dA (n), int u_k dA for the flow of the body force on ion k (laplacian u_k = -c_k / c_k,bulk;
    n), int (c_i / c_i,bulk) u_p dA (n), int (c_i / c_i,bulk) u_k dA (n * n, row i, column k)."""
    first = len(INTEGRALS)
    return first, first + n_ions, first + 2 * n_ions, first + 3 * n_ions, first + 3 * n_ions + n_ions**2



@dataclass(frozen=True)
class Axis:
    """One direction of the quarter: nodes x from the symmetry plane (0) to the wall (``half_length``), link
    conductances 1/dx (n), node volumes (n + 1, half cells at both ends) and the stretching beta of the map."""

    x: np.ndarray
    link: np.ndarray
    volume: np.ndarray
    beta: float


def axis(half_length: float, intervals: int, beta: float) -> Axis:
    """The 1-D grid of ``intervals`` cells over [0, half_length], clustered at the wall by the tanh map of
    stretching ``beta`` (``kernels.fv1d.finite_volume_metric`` in units of the half-length, then rescaled)."""
    cells = finite_volume_metric(computational_nodes(intervals, True), beta, PLANAR)
    return Axis(cells.x * half_length, cells.link / half_length, cells.volume * half_length, beta)


def _axis_diagonal(ax: Axis, walls: bool) -> np.ndarray:
    """Diagonal of the 1-D flux balance of the unknown nodes: without ``walls`` the n nodes before the wall (the
    wall link on the last row), with them all n + 1 (no link beyond the wall: its flux is given); no link beyond
    the symmetry plane; the off-diagonals are the links themselves."""
    diag = np.zeros(ax.link.size + walls)
    diag[: ax.link.size] -= ax.link
    diag[1:] -= ax.link[: diag.size - 1]
    return diag


def _five_point(y: Axis, z: Axis, walls: tuple[bool, bool]) -> tuple[sp.csc_matrix, np.ndarray]:
    """K_y x V_z + V_y x K_z (the 1-D balances times the other direction's volumes) assembled straight into CSC
    arrays (symmetric, so column c holds row c: neighbours (i-1, j), (i, j-1), (i, j), (i, j+1), (i+1, j) in row
    order), and the positions of the diagonal in its data. ``walls``: whether the nodes of the side wall (y = W/2)
    and of the top wall (z = H/2) are unknowns too."""
    ny, nz = y.link.size + walls[0], z.link.size + walls[1]
    vy, vz = y.volume[:ny], z.volume[:nz]
    i, j = np.divmod(np.arange(ny * nz), nz)
    values = np.zeros((ny * nz, 5))
    rows = np.arange(ny * nz)[:, None] + np.array([-nz, -1, 0, 1, nz])
    present = np.column_stack([i > 0, j > 0, np.ones(i.size, bool), j < nz - 1, i < ny - 1])
    values[:, 0] = y.link[np.maximum(i - 1, 0)] * vz[j]
    values[:, 1] = vy[i] * z.link[np.maximum(j - 1, 0)]
    values[:, 2] = _axis_diagonal(y, walls[0])[i] * vz[j] + vy[i] * _axis_diagonal(z, walls[1])[j]
    values[:, 3] = vy[i] * z.link[np.minimum(j, nz - 2)]
    values[:, 4] = y.link[np.minimum(i, ny - 2)] * vz[j]
    indptr = np.concatenate([[0], np.cumsum(present.sum(axis=1))])
    matrix = sp.csc_matrix((values[present], rows[present], indptr), shape=(ny * nz, ny * nz))
    return matrix, indptr[:-1] + present[:, :2].sum(axis=1)


@dataclass(frozen=True)
class Operator:
    """The 2-D operator on the unknown nodes, in the order index = i * nz + j: the nodes before the walls, and the
    wall nodes of a pair whose flux is given (``walls``: side walls y = W/2, top wall z = H/2; the corner is an
    unknown only when both are).

    ``matrix`` is L, the flux balance of each cell; ``wall_sides`` and ``wall_tb`` the balance's parts from the side
    and the top wall at unit value (L psi + value_sides * wall_sides + value_tb * wall_tb is the whole balance): a
    fixed-potential pair, its wall nodes at unit potential; a charged pair (its wall nodes unknowns), a unit
    outward-normal derivative of psi on each wall node's faces on that wall (their lengths); ``volume`` the cells'
    areas; ``diagonal`` |diag L|; ``diagonal_index`` where the diagonal sits in ``matrix.data`` (Jacobians are L
    with its diagonal shifted).
    """

    y: Axis
    z: Axis
    matrix: sp.csc_matrix
    wall_sides: np.ndarray
    wall_tb: np.ndarray
    volume: np.ndarray
    diagonal: np.ndarray
    diagonal_index: np.ndarray
    walls: tuple[bool, bool] = (False, False)

    @property
    def shape(self) -> tuple[int, int]:
        """The unknown nodes' block of the quarter's node array."""
        return self.y.link.size + self.walls[0], self.z.link.size + self.walls[1]

    def shifted(self, shift: np.ndarray) -> sp.csc_matrix:
        """L + diag(shift), on L's own sparsity structure (no sparse addition)."""
        data = self.matrix.data.copy()
        data[self.diagonal_index] += shift
        return sp.csc_matrix((data, self.matrix.indices, self.matrix.indptr), shape=self.matrix.shape)


def operator(y: Axis, z: Axis, walls: tuple[bool, bool] = (False, False)) -> Operator:
    """The 5-point operator of the tensor-product grid ``y`` x ``z`` (``Operator``); ``walls``: whether the side
    and the top wall nodes are unknowns (their flux given)."""
    matrix, index = _five_point(y, z, walls)
    ny, nz = y.link.size + walls[0], z.link.size + walls[1]
    vy, vz = y.volume[:ny], z.volume[:nz]
    sides, tb = np.zeros((ny, nz)), np.zeros((ny, nz))
    sides[-1, :] = vz if walls[0] else y.link[-1] * vz
    tb[:, -1] = vy if walls[1] else vy * z.link[-1]
    return Operator(y, z, matrix, sides.ravel(), tb.ravel(), np.outer(vy, vz).ravel(), -matrix.data[index], index,
                    walls)


@dataclass(frozen=True)
class Ions:
    """The ions as the charge sees them: valences z_k, weights w_k = z_k c_k / sum z^2 c, packings nu_k = c_k N_A d^3
    (``kernels.layout.SPECIES_PACKING``; zero unless steric) and the model, "pb", "dh" or "steric"."""

    valences: np.ndarray
    weights: np.ndarray
    packing: np.ndarray
    model: str

    @property
    def dh(self) -> bool:
        return self.model == "dh"


def charge(psi: np.ndarray, ions: Ions) -> tuple[np.ndarray, np.ndarray]:
    """rho_hat(psi) and its derivative: sum_k w_k exp(-z_k psi) (PB), -psi (DH), or the lattice gas's (Bikerman
    1942) sum_k w_k exp(-z_k psi) / D, D = 1 + sum_k nu_k (exp(-z_k psi) - 1) (steric), as ``kernels.fv1d.charge``."""
    if ions.dh:
        return -psi, -np.ones_like(psi)
    e = np.exp(-np.multiply.outer(psi, ions.valences))
    rho, drho = e @ ions.weights, -(e @ (ions.weights * ions.valences))
    if ions.model != "steric":
        return rho, drho
    crowd, dcrowd = 1.0 + np.expm1(-np.multiply.outer(psi, ions.valences)) @ ions.packing, \
        -(e @ (ions.packing * ions.valences))
    return rho / crowd, (drho * crowd - rho * dcrowd) / crowd**2


def regulated_wall(psi: np.ndarray, wall_row: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """sigma_hat and d sigma_hat / d psi of a regulated wall (``kernels.walls.regulated_charge``, the 1-D solver's
    law, sites, Stern layer and gate) at each wall potential of ``psi``."""
    out = np.array([regulated_charge(p, wall_row)[:2] for p in psi.tolist()]).reshape(-1, 2)
    return out[:, 0], out[:, 1]


#: The condition of one pair of walls in ``newton``: its value (the potential of a fixed-potential pair, kT/e, or the
#: charge density sigma_hat of a charged one) and, for a regulated pair, its row (``kernels.walls``), else None.
PairCondition = tuple[float, "np.ndarray | None"]


def newton(op: Operator, psi: np.ndarray, pairs: tuple[PairCondition, PairCondition], kappa2: float,
           ions: Ions) -> tuple[int, int, float]:
    """Damped Newton iteration for L psi + value_sides wall_sides + value_tb wall_tb + kappa2 V rho(psi) = 0, in
    place on ``psi`` (the unknown nodes; ``pairs`` the side and the top pair's conditions). A regulated pair's value
    is ignored: each of its wall nodes takes sigma_hat(psi) times its faces on that wall, its Jacobian diagonal
    d sigma_hat / d psi times them, as ``kernels.fv1d._regulated_ends`` (the corner of two charged pairs takes both
    pairs' charges on their own faces). As ``kernels.fv1d.pb_newton``: the Jacobian L + kappa2 V rho'(psi) (negative
    definite; the regulated wall's d sigma / d psi <= 0 keeps it so) factored by sparse LU each step (once for DH,
    where it is constant; kept once the steps are below ``REUSE_STEP``), steps capped at ``MAX_STEP`` and halved
    until the row-scaled residual decreases.

    Returns
    -------
    status : int
        0 converged (a full step below ``NEWTON_TOLERANCE``, or at the round-off floor), 1 iteration limit, 2 line
        search failed.
    iterations : int
    residual : float
        The largest row-scaled residual at the solution (kT/e; NaN unless converged).
    """
    faces = (op.wall_sides, op.wall_tb)
    nodes = [np.flatnonzero(f) for f in faces]

    def residual(p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        rho, drho = charge(p, ions)
        res, jac = op.matrix @ p + kappa2 * op.volume * rho, kappa2 * op.volume * drho
        for (value, row), face, at in zip(pairs, faces, nodes):
            if row is None:
                res += value * face
            else:
                sigma, dsigma = regulated_wall(p[at], row)
                res[at] += sigma * face[at]
                jac[at] += dsigma * face[at]
        return res, jac

    regulated = any(row is not None for _, row in pairs)
    linear = ions.dh and not regulated  # a regulated wall's law is nonlinear even in a DH layer
    res, jac = residual(psi)
    scale = op.diagonal + np.abs(jac)
    norm = np.linalg.norm(res / scale)
    lu, last = None, np.inf
    for it in range(1, MAX_ITERATIONS + 1):
        if lu is None or (not linear and last > REUSE_STEP):
            lu = factor(op.shifted(jac))
        step = lu.solve(-res)
        biggest, previous = np.max(np.abs(step)), last
        last = biggest
        if not np.isfinite(biggest):
            return 2, it, np.nan
        size = max(1.0, np.max(np.abs(psi)))
        # converged: a step below the tolerance, or one that no longer shrinks at the round-off floor of the solve
        # (a condition number ~1e8 of the stretched grids puts it near 1e-8 of the potential; large potentials of
        # thin-walled Debye-Hueckel channels, hundreds of kT/e, reach it above NEWTON_TOLERANCE)
        if biggest < NEWTON_TOLERANCE or (biggest < ROUNDOFF_STEP * size and biggest > 0.5 * previous):
            psi += step
            res, jac = residual(psi)
            return 0, it, float(np.max(np.abs(res) / (op.diagonal + np.abs(jac))))
        lam = 1.0 if (biggest <= MAX_STEP or linear) else MAX_STEP / biggest
        for _ in range(60):
            trial = psi + lam * step
            res, jac = residual(trial)
            new = np.linalg.norm(res / scale)
            if np.isfinite(new) and new <= (1.0 - 1e-4 * lam) * norm:
                break
            lam *= 0.5
        else:
            return 2, it, np.nan
        psi[:] = trial
        scale = op.diagonal + np.abs(jac)
        norm = np.linalg.norm(res / scale)
    return 1, MAX_ITERATIONS, np.nan


@dataclass(frozen=True)
class GridSolution:
    """The solution on one grid: the fields on the quarter's (ny + 1) x (nz + 1) nodes (walls included; index
    [i, j] at (y[i], z[j])), the section integrals (``INTEGRALS`` order, full section) and Newton's iterations."""

    y: np.ndarray
    z: np.ndarray
    psi: np.ndarray
    u_eo: np.ndarray
    u_p: np.ndarray
    integrals: np.ndarray
    iterations: int
    #: Newton's largest row-scaled residual at the solution (kT/e), as the 1-D solver reports it.
    residual: float = float("nan")


def full_nodes(op: Operator, inner: np.ndarray, wall_value: float) -> np.ndarray:
    """The unknowns as the quarter's node array, with the other (fixed-potential wall) nodes set to ``wall_value``."""
    out = np.full((op.y.x.size, op.z.x.size), wall_value, dtype=float)
    ny, nz = op.shape
    out[:ny, :nz] = inner.reshape(ny, nz)
    return out


def concentrations(psi: np.ndarray, ions: Ions) -> np.ndarray:
    """c_k / c_k,bulk at each potential of ``psi`` (last axis the ion): exp(-z_k psi), linearised 1 - z_k psi for DH,
    exp(-z_k psi) / D for the lattice gas (as ``kernels.fv1d._concentrations``)."""
    product = np.multiply.outer(psi, ions.valences)
    if ions.dh:
        return 1.0 - product
    if ions.model == "steric":
        return np.exp(-product) / (1.0 + np.expm1(-product) @ ions.packing)[..., None]
    return np.exp(-product)


def _wall_fluxes(grid_psi: np.ndarray, grid_rho: np.ndarray, y: Axis, z: Axis, kappa2: float,
                 wall_charge: tuple[np.ndarray | None, np.ndarray | None]) -> tuple[float, float]:
    """The quarter's wall flux of the side and the top pair. A charged pair's is its charge density at its nodes
    (``wall_charge``; the corner included) times their faces. A fixed-potential pair's is the rest of the total:
    the total is the sum of the wall cells' fluxes, a fixed node's from its cell balance (the flux out of its wall
    faces, -kappa2 V rho - L psi), a charged node's its charge, so that the pairs sum to -kappa2 int rho dA up to
    Newton's residual; the charged pair's part of the corner's cell is its own charge there."""
    balance = (_five_point(y, z, (True, True))[0] @ grid_psi.ravel()).reshape(grid_psi.shape)
    balance += kappa2 * np.outer(y.volume, z.volume) * grid_rho
    sides, tb = wall_charge
    given = (sides @ z.volume, 0.0) if sides is not None else (0.0, tb @ y.volume)
    fixed = np.zeros(grid_psi.shape, bool)  # the fixed pair's nodes, the corner included
    if sides is not None:
        fixed[:, -1] = True
    else:
        fixed[-1, :] = True
    charged_faces = (sides[:-1] @ z.volume[:-1]) if sides is not None else (tb[:-1] @ y.volume[:-1])
    total = -np.sum(balance[fixed]) + charged_faces
    return (given[0], total - given[0]) if sides is not None else (total - given[1], given[1])


def flows_and_integrals(op: Operator, grid_psi: np.ndarray, kappa2: float, ions: Ions, iterations: int,
                        wall_charge: tuple[np.ndarray | None, np.ndarray | None] = (None, None)) -> GridSolution:
    """The Stokes solves (L of the zeta-wall ``op`` factored once for all right-hand sides; u = 0 on the walls)
    and the integrals of a converged ``grid_psi`` (the quarter's node array, walls included). EO: laplacian u_eo =
    -kappa2 rho (units eps kT E / (e eta)); pressure: laplacian u_p = 1 (units (dp/dx) h^2 / eta); ion k:
    laplacian u_k = -c_k / c_k,bulk (the columns of the linear-response matrix, ``kernels.response``). On zeta walls
    (``wall_charge`` None for both pairs) the wall flux is the wall nodes' cell balances, so that it equals
    -kappa2 int rho dA up to Newton's residual; ``wall_charge`` holds a charged pair's sigma_hat at its nodes, the
    side walls' (y = W/2, first) and the top wall's (z = H/2), times their wall faces, and the balance holds up to
    Newton's residual likewise (the rows of L sum to zero); a fixed-potential pair with a charged one takes the
    rest of the total (``_wall_fluxes``)."""
    y, z = op.y, op.z
    valences = ions.valences
    grid_rho = charge(grid_psi.ravel(), ions)[0].reshape(grid_psi.shape)
    ratios = concentrations(grid_psi, ions)  # (ny, nz, ions)
    inner = ratios[:-1, :-1].reshape(-1, valences.size)
    rhs = np.column_stack([kappa2 * op.volume * grid_rho[:-1, :-1].ravel(), -op.volume, op.volume[:, None] * inner])
    flows = factor(-op.matrix).solve(rhs)
    u_eo, u_p = full_nodes(op, flows[:, 0], 0.0), full_nodes(op, flows[:, 1], 0.0)
    ion_flows = np.zeros((*grid_psi.shape, valences.size))
    ion_flows[:-1, :-1] = flows[:, 2:].reshape(*(n - 1 for n in grid_psi.shape), valences.size)
    dA = np.outer(y.volume, z.volume)
    n = valences.size
    first, flow_at, conc_up_at, conc_flow_at, size = ion_offsets(n)
    out = np.empty(size)
    out[I_PSI] = np.sum(dA * grid_psi)
    out[I_UEO] = np.sum(dA * u_eo)
    out[I_UP] = np.sum(dA * u_p)
    out[I_RHO] = np.sum(dA * grid_rho)
    out[I_RHO_UP] = np.sum(dA * grid_rho * u_p)
    out[I_RHO_UEO] = np.sum(dA * grid_rho * u_eo)
    if wall_charge[0] is None and wall_charge[1] is None:
        # wall nodes: sigma = -kappa2 V rho(zeta) - sum over links of a (psi_neighbour - zeta); only the links into
        # the unknown nodes carry a difference (along a wall, psi = zeta throughout). Its split between the walls
        # is left undefined (NaN): near the corner the wall charge density goes as r log r (a right-angle wedge
        # with a source), and the split's grid error, h^2 log h, defeats the extrapolation; equal zeta walls need
        # only the total
        zeta = grid_psi[-1, -1]
        wall_area = np.sum(dA[-1, :]) + np.sum(dA[:-1, -1])
        inward = (y.link[-1] * np.sum(z.volume[:-1] * (grid_psi[-2, :-1] - zeta))
                  + z.link[-1] * np.sum(y.volume[:-1] * (grid_psi[:-1, -2] - zeta)))
        out[I_FLUX] = -kappa2 * grid_rho[-1, -1] * wall_area - inward
        out[I_FLUX_TB] = out[I_FLUX_SIDES] = np.nan
    elif wall_charge[0] is not None and wall_charge[1] is not None:
        out[I_FLUX_SIDES] = wall_charge[0] @ z.volume
        out[I_FLUX_TB] = wall_charge[1] @ y.volume
        out[I_FLUX] = out[I_FLUX_TB] + out[I_FLUX_SIDES]
    else:
        out[I_FLUX_SIDES], out[I_FLUX_TB] = _wall_fluxes(grid_psi, grid_rho, y, z, kappa2, wall_charge)
        out[I_FLUX] = out[I_FLUX_TB] + out[I_FLUX_SIDES]
    out[I_PSI_SIDES] = np.sum(z.volume * grid_psi[-1, :])
    out[I_PSI_TB] = np.sum(y.volume * grid_psi[:, -1])
    out[I_WALL] = out[I_PSI_TB] + out[I_PSI_SIDES]
    weighted = dA[..., None] * ratios
    out[first:flow_at] = np.sum(weighted, axis=(0, 1))
    out[flow_at:conc_up_at] = np.sum(dA[..., None] * ion_flows, axis=(0, 1))
    out[conc_up_at:conc_flow_at] = np.sum(weighted * u_p[..., None], axis=(0, 1))
    out[conc_flow_at:] = np.einsum("yzi,yzk->ik", weighted, ion_flows).ravel()
    whole = np.r_[I_PSI:I_WALL + 1, I_FLUX_TB:I_CENTRE, first:size]
    out[whole] *= 4.0  # the quarter to the full section
    out[[I_CORNER, I_MID_Y, I_MID_Z, I_CENTRE]] = grid_psi[-1, -1], grid_psi[-1, 0], grid_psi[0, -1], grid_psi[0, 0]
    return GridSolution(y.x, z.x, grid_psi, u_eo, u_p, out, iterations)


def prolong(coarse: np.ndarray) -> np.ndarray:
    """Bilinear interpolation (in grid index) of a node array onto the grid with every interval halved."""
    def along(a: np.ndarray) -> np.ndarray:
        fine = np.empty((2 * a.shape[0] - 1, *a.shape[1:]))
        fine[::2] = a
        fine[1::2] = 0.5 * (a[:-1] + a[1:])
        return fine

    return along(along(coarse).T).T


def gouy_chapman_start(y: Axis, z: Axis, zetas: tuple[float, float], kappa: float,
                       counters: tuple[float, float]) -> np.ndarray:
    """Start potential on the quarter's nodes: the Gouy-Chapman profile (Gouy 1910; Chapman 1913)
    g(d) = (4/z) artanh[tanh(z zeta / 4) exp(-kappa d)] of each wall and its mirror, for the side walls' potential
    and counter-ion valence (``zetas``, ``counters``: sides, top) along y and the top wall's along z, as fractions
    f = g / zeta of each, combined as f_y zeta_s + f_z zeta_t - f_y f_z (zeta_s + zeta_t) / 2: zeta [1 - (1 - f_y)
    (1 - f_z)] for equal walls (zeta on every wall), each pair's potential along its wall away from the corner."""
    def fraction(ax: Axis, zeta: float, counter: float) -> np.ndarray:
        if zeta == 0.0:
            return np.zeros(ax.x.size)
        t, wall = np.tanh(counter * zeta / 4.0), ax.x[-1]
        g = sum(np.arctanh(np.clip(t * np.exp(-kappa * d), -1 + 1e-16, 1 - 1e-16)) for d in (wall - ax.x, wall + ax.x))
        return np.clip(4.0 / counter * g / zeta, 0.0, 1.0)

    (zs, zt), (cs, ct) = zetas, counters
    fy, fz = fraction(y, zs, cs), fraction(z, zt, ct)
    if zs == zt:
        return zs * (1.0 - np.outer(1.0 - fy, 1.0 - fz))
    return np.add.outer(zs * fy, zt * fz) - 0.5 * (zs + zt) * np.outer(fy, fz)
