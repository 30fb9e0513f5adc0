"""The small named records the compiled steps hand each other (numba reads a ``NamedTuple`` as a struct).

A kernel takes the records it needs instead of a long row of positional arguments: the section problem,
the numerics, a grid's finite-volume metric, and it returns the outcome of a solve as one record. Python
builds and reads the same records (``model.scaling``, ``model.equilibrium``). The packed vectors inside
follow ``kernels.layout``.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from edl_solver.kernels.layout import SPECIES_VALENCE


class SectionProblem(NamedTuple):
    """Dimensionless statement of one cross-section problem, ready for the kernels (see ``kernels.fv1d``
    for the packed ``ions``, ``walls`` and ``flow_walls`` arrays).

    The grid's left end is the bottom wall (full slit section) or the centre (half section); the right
    end is the top wall or the single wall.

    Attributes
    ----------
    metric : int
        PLANAR (slit) or AXISYMMETRIC (capillary).
    half : bool
        Whether the half section from the centre to the wall is solved (a symmetric slit, a capillary).
    kappa2 : float
        (kappa L)^2, L the half-size.
    ions : ndarray
        (n, SPECIES_SIZE) rows: valence, weight z c / sum z^2 c, steric packing c N_A d^3.
    model : int
        PB, DH or STERIC.
    walls : ndarray
        (2, WALL_SIZE) dimensionless wall rows of the grid's left and right ends.
    flow_walls : ndarray
        (2, FLOW_SIZE) flow conditions of the two ends.
    visco : float
        Viscoelectric coefficient f (kT / (e L))^2.
    wall_potential_guess : ndarray
        Potentials (kT/e) of the ends' walls alone in the bulk: the start of the solve and the stretching.
    counter_valence : ndarray
        Largest counter-ion valence at each end.
    """

    metric: int
    half: bool
    kappa2: float
    ions: np.ndarray
    model: int
    walls: np.ndarray
    flow_walls: np.ndarray
    visco: float
    wall_potential_guess: np.ndarray
    counter_valence: np.ndarray

    @property
    def valence(self) -> np.ndarray:
        """Ion valences."""
        return self.ions[:, SPECIES_VALENCE]


class SectionInputs(NamedTuple):
    """What ``kernels.prepare.section_inputs`` makes of a case vector: the section problem, the ``S_*``
    scales and the (2, ISOLATED_SIZE) isolated (zeta, sigma) of the bottom and top walls."""

    problem: SectionProblem
    scales: np.ndarray
    isolated: np.ndarray


class Controls(NamedTuple):
    """The numerics of one solve: relative ``accuracy``; ``intervals`` > 0 fixes the finest grid's cells per
    half section (0: adaptive, up to ``max_intervals``); Newton stops after ``max_iterations``."""

    accuracy: float
    intervals: int
    max_intervals: int
    max_iterations: int


class Cells(NamedTuple):
    """Finite-volume metric of one grid (``kernels.fv1d.finite_volume_metric``): node positions ``x``, link
    conductances ``link`` (n - 1), node volumes ``volume`` (n) and link lengths ``spacing`` (n - 1)."""

    x: np.ndarray
    link: np.ndarray
    volume: np.ndarray
    spacing: np.ndarray


class NestedSolve(NamedTuple):
    """Outcome of ``kernels.adaptive.nested_solve``: status (0 converged), Newton iterations, the final scaled
    residual, the raw finest (psi, u_eo, u_p) (``PROFILE_*`` rows, for the next refinement), the same
    Richardson-corrected, and the finest grid's cells."""

    status: int
    iterations: int
    residual: float
    raw: np.ndarray
    profiles: np.ndarray
    cells: Cells


class SectionSolve(NamedTuple):
    """Outcome of ``kernels.adaptive.solve_adaptive`` for one case.

    Attributes
    ----------
    status : int
        CONVERGED, NEWTON_FAILED or ACCURACY_MISSED (``kernels.layout``).
    iterations : int
        Newton iterations, all grids and refinements together.
    estimate : float
        Error estimate of the extrapolated integrals (inf when Newton failed).
    residual : float
        Max row-scaled residual on the finest grid (kT/e).
    intervals : int
        Cells per half section of the finest grid.
    s, beta, cells
        The finest grid: computational nodes, stretching, finite-volume metric.
    psi, u_eo, u_p : ndarray
        Profiles on the finest grid (Richardson-corrected).
    integrals : ndarray
        The extrapolated section integrals (``I_*`` layout).
    """

    status: int
    iterations: int
    estimate: float
    residual: float
    intervals: int
    s: np.ndarray
    beta: float
    cells: Cells
    psi: np.ndarray
    u_eo: np.ndarray
    u_p: np.ndarray
    integrals: np.ndarray
