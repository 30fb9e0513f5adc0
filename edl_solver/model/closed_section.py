"""Equilibrium double layers on the transient solver's grid: with the reservoir (Poisson-Boltzmann with the bulk
concentrations) and of a closed section (Poisson-Boltzmann with a fixed ion inventory).

A section whose ions cannot leave relaxes to zero flux of every ion, c_k = n_k exp(-z_k psi), with the
unknown constants n_k set by the inventories sum_j V_j c_kj = I_k instead of by a reservoir (n_k = 1 in bulk
units). That is the long-time limit of the transient Poisson-Nernst-Planck problem; it is solved here directly
(Newton on psi and ln n_k, a sparse direct solve) on the same finite volumes as the transient
(``kernels.pnp_system``), so the two agree to the time integration's accuracy. For the linearised problem,
c_k - 1 = nu_k - z_k psi with constants nu_k.

Walls of fixed charge only leave the potential without a reference (psi + C with n_k e^{z_k C} is the same
state): the potential of one node (``gauge``) is then held.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from edl_solver.errors import ConvergenceError
from edl_solver.kernels.layout import DH, FLUX, POTENTIAL, REGULATED, SPECIES_VALENCE, SPECIES_WEIGHT, W_TYPE, W_VALUE
from edl_solver.kernels.walls import regulated_charge

MAX_ITERATIONS = 200
#: Largest Newton change of the potential or of ln n_k in one iteration, kT/e.
MAX_UPDATE = 2.0


class Equilibrium(NamedTuple):
    """psi at the nodes, the ion variables (n, n_ions): ln c_k (full) or c_k - 1 (linearised), and the
    constants ln n_k (or nu_k)."""

    psi: np.ndarray
    ions: np.ndarray
    constants: np.ndarray


def _concentrations(psi: np.ndarray, constants: np.ndarray, valence: np.ndarray, model: int) -> np.ndarray:
    """(n, n_ions): ln c_k = ln n_k - z_k psi, or c_k - 1 = nu_k - z_k psi."""
    del model  # the same form: ln n_k - z_k psi, or nu_k - z_k psi
    return constants[None, :] - valence[None, :] * psi[:, None]


def solve(link: np.ndarray, volume: np.ndarray, kappa2: float, species: np.ndarray, model: int,
          walls: np.ndarray, psi0: np.ndarray, constants0: np.ndarray, inventory: np.ndarray | None,
          gauge: int = -1, gauge_value: float = 0.0, what: str = "equilibrium") -> Equilibrium:
    """Newton for the equilibrium; with ``inventory`` None the constants stay at ``constants0`` (reservoir).

    Parameters
    ----------
    link, volume : ndarray
        The finite-volume metric (``kernels.fv1d.finite_volume_metric``).
    kappa2 : float
        (kappa L)^2.
    species : ndarray
        (n_ions, SPECIES_SIZE) valence and weight rows.
    model : int
        PB or DH.
    walls : ndarray
        (2, WALL_SIZE) dimensionless wall rows of the left and right ends.
    psi0, constants0 : ndarray
        The start.
    inventory : ndarray or None
        sum_j V_j c_kj per ion (c in bulk units; for DH sum_j V_j (c_kj - 1)).
    gauge, gauge_value
        Node whose potential is held (walls of fixed charge only), or -1.

    Raises
    ------
    ConvergenceError
        If Newton does not converge.
    """
    valence, weight = species[:, SPECIES_VALENCE], species[:, SPECIES_WEIGHT]
    n, nion = psi0.size, valence.size
    free = inventory is not None
    psi, constants = psi0.astype(float).copy(), constants0.astype(float).copy()
    rows = np.arange(n)
    for _ in range(MAX_ITERATIONS):
        var = _concentrations(psi, constants, valence, model)
        conc = var if model == DH else np.exp(var)
        dconc = np.ones_like(conc) if model == DH else conc  # d c / d (constant); d c / d psi = -z dconc
        res = np.zeros(n + (nion if free else 0))
        res[:n] = kappa2 * volume * (conc @ weight)
        res[:n - 1] += link * (psi[1:] - psi[:-1])
        res[1:n] -= link * (psi[1:] - psi[:-1])
        diag = -kappa2 * volume * ((dconc * valence[None, :]) @ weight)
        diag[:n - 1] -= link
        diag[1:] -= link
        jac = sp.lil_matrix((res.size, res.size))
        jac.setdiag(np.concatenate((diag, np.zeros(res.size - n))))
        jac[rows[:-1], rows[1:]] = link
        jac[rows[1:], rows[:-1]] = link
        if free:
            for k in range(nion):
                jac[rows, n + k] = kappa2 * volume * weight[k] * dconc[:, k]
                res[n + k] = volume @ conc[:, k] - inventory[k]
                jac[n + k, rows] = -valence[k] * volume * dconc[:, k]
                jac[n + k, n + k] = volume @ dconc[:, k]
        for end, j in ((0, 0), (1, n - 1)):
            kind = int(walls[end, W_TYPE])
            if kind == POTENTIAL:
                _hold(jac, res, j, psi[j] - walls[end, W_VALUE])
            elif kind == FLUX:
                res[j] += walls[end, W_VALUE]
            elif kind == REGULATED:
                sigma, dsigma, _ = regulated_charge(psi[j], walls[end])
                res[j] += sigma
                jac[j, j] = jac[j, j] + dsigma
        if gauge >= 0:
            _hold(jac, res, gauge, psi[gauge] - gauge_value)
        delta = spla.spsolve(jac.tocsc(), res)
        if not np.all(np.isfinite(delta)):
            break
        biggest = float(np.max(np.abs(delta)))
        shrink = min(1.0, MAX_UPDATE / biggest) if model != DH and biggest > 0 else 1.0
        psi -= shrink * delta[:n]
        if free:
            constants -= shrink * delta[n:]
        if shrink == 1.0 and biggest < 1e-13 * (1.0 + float(np.max(np.abs(psi)))):
            return Equilibrium(psi, _concentrations(psi, constants, valence, model), constants)
    raise ConvergenceError(f"{what}: Newton did not converge on the transient grid")


def _hold(jac: sp.lil_matrix, res: np.ndarray, row: int, value: float) -> None:
    """Make ``row`` read psi_row - target = 0 (its residual ``value``)."""
    jac.rows[row] = [row]
    jac.data[row] = [1.0]
    res[row] = value
