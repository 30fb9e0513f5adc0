"""The axial Stokes operator of a solved slit or capillary section, for the unsteady flows (``model.frequency``,
``model.startup``): the equilibrium space charge on a fixed grid and the finite-volume Laplacian of the steady
solver (``kernels.fv1d.stokes_operator``), with its walls (no slip, Navier slip, a symmetry plane).

Dimensionless as the steady solve: lengths in L (half-height or radius), the EO flow per unit field in
eps kT / (e eta) (lap v = -kappa2 rho_hat at steady state), the pressure flow per unit dp/dx in L^2 / eta
(lap w = 1), time in rho_m L^2 / eta.
"""

from __future__ import annotations

import dataclasses
from typing import NamedTuple

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Rectangle
from edl_solver.kernels import layout, prepare
from edl_solver.kernels.adaptive import LEVELS, extrapolate
from edl_solver.kernels.fv1d import charge, finite_volume_metric
from edl_solver.model import packing, section


class FlowOperator(NamedTuple):
    """The discrete operator on one grid: rows sum_j a_ij (v_j - v_i) - robin_i v_i (``lower``/``diagonal``/
    ``upper`` bands, symmetric), node volumes, the space charge rho_hat at the nodes, the rows held at v = 0
    (no-slip walls) and the case's scales vector."""

    lower: np.ndarray
    diagonal: np.ndarray
    upper: np.ndarray
    volume: np.ndarray
    rho: np.ndarray
    kappa2: float
    fixed: tuple[int, ...]
    scales: np.ndarray


def check_section(case: Case, what: str) -> None:
    """InputErrors for what the unsteady flows do not model: rectangles, a viscoelectric solvent (nonlinear in
    the field), a solvent without density."""
    if not isinstance(case, Case):
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    if isinstance(case.geometry, Rectangle):
        raise InputError(f"case.geometry: the {what} of a rectangle is not solved, expected a Slit or a Capillary")
    if case.solvent.viscoelectric_coefficient:
        raise InputError(f"solvent.viscoelectric_coefficient: {case.solvent.viscoelectric_coefficient:g} m^2/V^2 "
                         f"makes the flow nonlinear in the field, expected 0 for the {what}")
    if case.solvent.density is None:
        raise InputError(f"solvent.density: none at {case.solvent.temperature:g} K (outside water's correlation), "
                         "expected Solvent(..., density=...) in kg/m^3")


def flow_operator(case: Case, intervals: int) -> FlowOperator:
    """The equilibrium of ``case`` solved on a fixed grid of ``intervals`` cells and its Stokes operator."""
    fixed_case = dataclasses.replace(case, numerics=dataclasses.replace(case.numerics, intervals=intervals))
    vector = packing.case_vector(fixed_case)
    solved = section.solve_and_summarize(vector, fixed_case, np.empty(layout.SUMMARY_SIZE))
    cells = finite_volume_metric(solved.s, solved.beta, int(vector[layout.P_METRIC]))
    ions, model = prepare.species(vector), int(vector[layout.P_MODEL])
    rho = np.array([charge(p, ions, model)[0] for p in solved.psi.tolist()])
    sc = solved.scales
    flow_walls = prepare.section_problem(vector, sc, prepare.isolated_walls(vector, sc)).flow_walls
    link = cells.link
    n = link.size + 1
    diagonal = -(np.concatenate(([0.0], link)) + np.concatenate((link, [0.0])))
    fixed = []
    for end, row in ((0, 0), (1, n - 1)):
        code = int(flow_walls[end, layout.FLOW_CODE])
        if code == layout.POTENTIAL:
            fixed.append(row)
        elif code == layout.ROBIN:  # Navier slip: the wall shear -v / b_hat into the end cell
            diagonal[row] -= flow_walls[end, layout.FLOW_VALUE]
    lower, upper = np.concatenate(([0.0], link)), np.concatenate((link, [0.0]))
    kappa2 = (sc[layout.S_LENGTH] / sc[layout.S_DEBYE_LENGTH]) ** 2
    return FlowOperator(lower, diagonal, upper, cells.volume, rho, kappa2, tuple(fixed), sc)


def free_rows(op: FlowOperator) -> np.ndarray:
    """The rows that are unknowns (all but the no-slip walls)."""
    keep = np.ones(op.volume.size, dtype=bool)
    keep[list(op.fixed)] = False
    return keep


def dense_matrix(op: FlowOperator) -> np.ndarray:
    """The operator on the unknown rows as a dense symmetric matrix (no-slip rows and columns removed)."""
    n = op.volume.size
    full = np.diag(op.diagonal) + np.diag(op.upper[:-1], 1) + np.diag(op.lower[1:], -1)
    keep = free_rows(op)
    return full[np.ix_(keep, keep)] if n else full


def extrapolated(levels: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Richardson over the LEVELS grids (finest last) of real or complex arrays of one shape: the estimate from
    the three finest and the one from the three coarsest (``kernels.adaptive.extrapolate``)."""
    shape, size = levels[0].shape, levels[0].size
    parts = [np.concatenate((np.real(lv).ravel(), np.imag(lv).ravel())) for lv in levels]
    finer, coarser = np.empty(2 * size), np.empty(2 * size)
    extrapolate(parts[3], parts[2], parts[1], finer)
    extrapolate(parts[2], parts[1], parts[0], coarser)
    return ((finer[:size] + 1j * finer[size:]).reshape(shape), (coarser[:size] + 1j * coarser[size:]).reshape(shape))


def level_intervals(finest: int) -> list[int]:
    """Cells of the LEVELS nested grids whose finest has ``finest`` cells, coarsest first."""
    return [finest // 2 ** (LEVELS - 1 - level) for level in range(LEVELS)]
