"""Packed case vectors for a whole sweep, assembled from its axes without building a Case per point.

Each value of each axis is applied to the base case alone (through ``inputs.paths.case_at``, exactly as a single
point is built) and packed (``packing.case_vector``); the columns of the packed vector an axis changes are
its own. When no two axes change the same column, the vector of any point is the base's with every axis's
columns taken from its value at the point's index. The symmetry flag of a slit depends on both walls, which
two axes may set: it is recomputed per point from the two walls' columns. The assembly is checked
against points built in full (the sweep's corners and centre); a sweep it does not hold for, or whose
axes change the number of ions, gets no plan and is solved case by case; so does every sweep of a rectangle
(the batch is 1-D).
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.geometry import Rectangle
from edl_solver.kernels.layout import P_METRIC, P_SLIP, P_SYMMETRIC, P_WALLS, PLANAR, WALL_SIZE
from edl_solver.model import packing

_WALL_COLUMNS = [np.arange(P_WALLS + side * WALL_SIZE, P_WALLS + (side + 1) * WALL_SIZE) for side in range(2)]


@dataclass(frozen=True)
class SweepPlan:
    """How to assemble the packed vectors of any points of a sweep.

    Attributes
    ----------
    shape : tuple of int
        Points along each axis.
    base : ndarray
        The base case's packed vector.
    columns : tuple of ndarray
        Per axis, the vector columns it sets.
    values : tuple of ndarray
        Per axis, (points along it, its columns): the values of those columns.
    valid : tuple of ndarray
        Per axis, whether each of its values gives a valid case (an invalid one is left to the case-by-case
        path, which records why).
    site_names_match : bool
        Whether the base's two walls name their sites alike (walls that differ only in names are not
        symmetric).
    """

    shape: tuple[int, ...]
    base: np.ndarray
    columns: tuple[np.ndarray, ...]
    values: tuple[np.ndarray, ...]
    valid: tuple[np.ndarray, ...]
    site_names_match: bool

    def vectors(self, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Packed vectors of the points with these flat (C-order) indices, and which of them are valid."""
        index = np.unravel_index(points, self.shape)
        out = np.tile(self.base, (points.size, 1))
        valid = np.ones(points.size, dtype=bool)
        for at, columns, values, ok in zip(index, self.columns, self.values, self.valid):
            if columns.size:
                out[:, columns] = values[at]
            valid &= ok[at]
        if self.base[P_METRIC] == PLANAR:  # a slit is symmetric where its two walls are the same
            same = np.all(out[:, _WALL_COLUMNS[0]] == out[:, _WALL_COLUMNS[1]], axis=1)
            same &= out[:, P_SLIP] == out[:, P_SLIP + 1]
            out[:, P_SYMMETRIC] = same & self.site_names_match
        return out, valid


def _vector_at(base_table: Mapping[str, Any], axes: Sequence[Any], index: Sequence[int]) -> np.ndarray | None:
    """The packed vector of one point built in full, or None when it is not a valid case."""
    from edl_solver.inputs.paths import case_at

    try:
        return packing.case_vector(case_at(base_table, axes, index))
    except InputError:
        return None


def _differs(vectors: np.ndarray, base: np.ndarray) -> np.ndarray:
    """Columns where any row differs from ``base`` (NaN equals NaN)."""
    both_nan = np.isnan(vectors) & np.isnan(base)
    return np.any((vectors != base) & ~both_nan, axis=0)


def make_plan(base_table: Mapping[str, Any], axes: Sequence[Any]) -> SweepPlan | None:
    """The plan of a sweep, or None when its points must be built one by one (see the module docstring)."""
    from edl_solver.inputs.casefile import case_from_mapping

    base_case = case_from_mapping(base_table)
    if isinstance(base_case.geometry, Rectangle):
        return None  # the compiled batch solves 1-D sections; a rectangle goes through edl_solver.solve
    base = packing.case_vector(base_case)
    columns, values, valid = [], [], []
    owner: dict[int, int] = {}
    for a, axis in enumerate(axes):
        rows, ok = [], []
        for i in range(axis.size):
            vector = _vector_at(base_table, (axis,), (i,))
            if vector is not None and vector.size != base.size:
                return None  # the axis changes the number of ions
            rows.append(base if vector is None else vector)
            ok.append(vector is not None)
        stack = np.array(rows)
        changed = _differs(stack, base)
        changed[P_SYMMETRIC] = False  # recomputed per point
        mine = np.nonzero(changed)[0]
        for column in mine.tolist():
            if column in owner:
                return None  # two axes set the same input
            owner[column] = a
        columns.append(mine)
        values.append(stack[:, mine])
        valid.append(np.array(ok))
    bottom, top = base_case.walls
    names = [[site.name for site in wall.sites] for wall in (bottom, top)]
    plan = SweepPlan(shape=tuple(axis.size for axis in axes), base=base, columns=tuple(columns),
                     values=tuple(values), valid=tuple(valid), site_names_match=names[0] == names[1])
    return plan if _holds(plan, base_table, axes) else None


def _holds(plan: SweepPlan, base_table: Mapping[str, Any], axes: Sequence[Any]) -> bool:
    """Whether the assembled vectors equal points built in full, at the corners and the centre."""
    ends = [sorted({0, size - 1}) for size in plan.shape]
    corners = list(itertools.islice(itertools.product(*ends), 64))
    checks = [*corners, tuple(size // 2 for size in plan.shape)]
    flat = np.ravel_multi_index(np.array(checks).T, plan.shape)
    assembled, valid = plan.vectors(np.atleast_1d(flat))
    for index, vector, ok in zip(checks, assembled, valid):
        full = _vector_at(base_table, axes, index)
        if (full is None) != (not ok):
            return False
        if full is not None and not np.array_equal(full, vector, equal_nan=True):
            return False
    return True
