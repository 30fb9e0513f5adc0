"""One cross-section solved and summarised: the equilibrium double layer, the flow and every summary value.

The compiled path (``kernels.single.solve_packed``) builds the kernel inputs, solves the nested grids from the
Gouy-Chapman guess and fills the summary in one call. A case it does not converge goes the Python path,
which adds continuation in the wall values and raises ConvergenceError naming the case (``scaling.prepare``,
``equilibrium.solve_summarized``); both run the same compiled steps on the same inputs, so their values agree
bit for bit.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from edl_solver.errors import ConvergenceError
from edl_solver.inputs.case import Case
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import single as _single
from edl_solver.model import crowding, equilibrium, scaling


class SolvedSection(NamedTuple):
    """A converged section (dimensionless, see ``scaling.py``) with its summary.

    Attributes
    ----------
    iterations : int
        Newton iterations, all grids (and continuation steps) together.
    estimate : float
        Estimated relative error of the extrapolated integrals.
    residual : float
        Max row-scaled residual on the finest grid (kT/e).
    beta : float
        Stretching of the finest grid (``grid.from_nodes``).
    nodes : ndarray
        (4, n) rows: the computational nodes ``s`` of the finest grid and the profiles ``psi``, ``u_eo``, ``u_p``
        on it (also as properties).
    small : ndarray
        The scales vector (``layout.S_*``, ``scaling.Scales``), the (2, 2) isolated walls (zeta V, sigma C/m^2)
        flattened, and the Helmholtz-Smoluchowski slip velocities per unit field of the (bottom, top) isolated
        walls, m^2/(V s) (properties ``scales``, ``isolated``, ``slip``). Few arrays, because each array the
        compiled solve returns costs a boxing.
    ion_matrix, matrix : ndarray
        Ion-resolved and reduced response matrices (``kernels.summary``).
    """

    iterations: int
    estimate: float
    residual: float
    beta: float
    nodes: np.ndarray
    small: np.ndarray
    ion_matrix: np.ndarray
    matrix: np.ndarray

    @property
    def s(self) -> np.ndarray:
        return self.nodes[0]

    @property
    def psi(self) -> np.ndarray:
        return self.nodes[1]

    @property
    def u_eo(self) -> np.ndarray:
        return self.nodes[2]

    @property
    def u_p(self) -> np.ndarray:
        return self.nodes[3]

    @property
    def scales(self) -> np.ndarray:
        return self.small[:_layout.SCALE_SIZE]

    @property
    def isolated(self) -> np.ndarray:
        return self.small[_layout.SCALE_SIZE:_ISOLATED_END].reshape(2, _layout.ISOLATED_SIZE)

    @property
    def slip(self) -> np.ndarray:
        return self.small[_ISOLATED_END:]

    @property
    def units(self) -> scaling.Scales:
        """The SI values of the dimensionless units."""
        return scaling.Scales(*self.scales.tolist())


_ISOLATED_END = _layout.SCALE_SIZE + 2 * _layout.ISOLATED_SIZE


def solve_and_summarize(vector: np.ndarray, case: Case, values: np.ndarray) -> SolvedSection:
    """Solve the packed case ``vector`` (``packing.case_vector(case)``) and fill its summary vector ``values``
    (``layout.SLOTS``).

    Raises
    ------
    ConvergenceError
        If Newton fails even with continuation in the wall values, the error estimate misses the accuracy at
        ``numerics.max_intervals``, or a wall alone in the bulk has no solution; the message names the case.
    """
    usable, *solved = _single.solve_packed(vector, values)
    if usable:
        return SolvedSection._make(solved)
    return _with_continuation(case, values)


def _with_continuation(case: Case, values: np.ndarray) -> SolvedSection:
    """The Python path: the same compiled steps, with continuation when Newton fails from the guess; a steric
    section that cannot hold its walls' charge is refused with that reason (``crowding.overfilled_walls``)."""
    overfilled = crowding.overfilled_walls(case)
    if overfilled:
        raise ConvergenceError(f"{case.describe()}: {overfilled}")
    prepared = scaling.prepare(case)
    section, ion_matrix, matrix, slip = equilibrium.solve_summarized(prepared, values, case.describe)
    nodes = np.vstack((section.grid.s, section.psi, section.u_eo, section.u_p))
    small = np.concatenate((prepared.scale_vector, prepared.isolated_array.ravel(), slip))
    return SolvedSection(section.iterations, section.error_estimate, section.residual, section.grid.beta, nodes,
                         small, ion_matrix, matrix)
