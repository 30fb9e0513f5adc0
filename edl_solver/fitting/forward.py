"""The forward model of a fit: the measured quantity at every data point for any parameter values, many parameter
vectors in one compiled batch (``kernels.batch.solve_cases``, the compiled steps of ``edl_solver.solve``).

Each point's packed case vector (``model.packing``) is built once, with the parameters at their start values;
a parameter's value then only changes its own columns of the vector, which are taken from the base case with
that value alone (as ``sweeping.plan`` assembles the points of a sweep), so a Jacobian of n points and k
parameters is one batch of n (k + 1) cases without building a Case per point. The assembly is checked against
vectors built in full; where it does not hold (a parameter and an independent variable setting the same column)
every vector is built in full. A point the batch does not finish is solved again by ``edl_solver.solve``
(continuation); one that still fails raises ``ConvergenceError`` naming it: it never enters the fit silently.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.paths import Axis, case_at
from edl_solver.kernels import layout
from edl_solver.kernels.layout import P_METRIC, P_SLIP, P_SYMMETRIC, P_WALLS, PLANAR, SLOTS, SUMMARY_SIZE, WALL_SIZE
from edl_solver.model import packing

from .problem import Dataset

#: Batches of at least this many cases run in parallel (``batch.solve_cases``); smaller ones row by row
#: (``batch.solve_one``, what each parallel row runs), since starting the threads costs milliseconds.
PARALLEL_ROWS = 256
_WALL_COLUMNS = [np.arange(P_WALLS + side * WALL_SIZE, P_WALLS + (side + 1) * WALL_SIZE) for side in range(2)]


def _axes(paths: Sequence[str], values: Sequence[float]) -> tuple[Axis, ...]:
    """One one-point axis per parameter."""
    return tuple(Axis(name=p, paths=(p,), values=((float(v),),)) for p, v in zip(paths, values))


def _differs(vectors: np.ndarray, base: np.ndarray) -> np.ndarray:
    both_nan = np.isnan(vectors) & np.isnan(base)
    return np.any((vectors != base) & ~both_nan, axis=0)


class Forward:
    """The model values of all data points at given parameter values.

    Parameters
    ----------
    case : Case
        The template case.
    datasets : sequence of Dataset
    paths : sequence of str
        The parameter paths.
    start : ndarray
        Start values of the parameters (SI); the template's wall condition is replaced by them.
    """

    def __init__(self, case: Case, datasets: Sequence[Dataset], paths: Sequence[str], start: np.ndarray) -> None:
        from edl_solver.inputs.casefile import case_to_mapping

        self.paths = tuple(paths)
        self.table = case_to_mapping(case_at(case_to_mapping(case), _axes(paths, start), [0] * len(paths)))
        template = case_at(self.table, (), ())
        self.base = packing.case_vector(template)
        bottom, top = template.walls  # walls that differ only in their sites' names are not symmetric
        self._names_match = [s.name for s in bottom.sites] == [s.name for s in top.sites]
        self.points: list[tuple[int, int]] = [(d, i) for d, one in enumerate(datasets) for i in range(one.size)]
        self.input_axes = [Axis(name="points", paths=tuple(one.inputs), values=tuple(tuple(v) for v in
                                                                                    one.inputs.values()))
                           if one.inputs else None for one in datasets]
        self.slots = np.array([SLOTS[datasets[d].quantity] for d, _ in self.points])
        self.vectors0 = np.array([self._point_vector(datasets, d, i) for d, i in self.points])
        if self.vectors0.shape[1] != self.base.size:
            raise InputError("data: an independent variable changes the number of ions, expected the ions of the case")
        self.forward_solves = 0
        self.batches = 0
        self._columns = [self._parameter_columns(k, float(v)) for k, v in enumerate(start)]
        self._cache: dict[tuple[int, float], np.ndarray] = {}
        self.assembled = self._assembly_holds(np.asarray(start, dtype=float))

    def _point_vector(self, datasets: Sequence[Dataset], d: int, i: int) -> np.ndarray:
        """The packed vector of a point at the start values; InputError naming the point when it is no valid case."""
        try:
            return packing.case_vector(self.case(d, i))
        except InputError as error:
            label = "data" if len(datasets) == 1 else f"data[{d}]"
            shown = ", ".join(f"{path} = {values[i]:g}" for path, values in datasets[d].inputs.items())
            raise InputError(f"{label}: point {i} ({shown}) is not a valid case: {error}") from None

    def case(self, d: int, i: int, theta: Sequence[float] | None = None) -> Case:
        """The case of point ``i`` of data set ``d``, built in full (at ``theta``, or the start values)."""
        axes: tuple[Axis, ...] = (self.input_axes[d],) if self.input_axes[d] is not None else ()
        index = [i] * len(axes)
        if theta is not None:
            axes += _axes(self.paths, theta)
            index += [0] * len(self.paths)
        return case_at(self.table, axes, index)

    def _parameter_vector(self, k: int, value: float) -> np.ndarray:
        return packing.case_vector(case_at(self.table, _axes(self.paths[k:k + 1], [value]), [0]))

    def _parameter_columns(self, k: int, value: float) -> np.ndarray:
        """The vector columns parameter ``k`` sets (found from two nearby values)."""
        other = value * 1.01 if value != 0 else 1e-3
        stack = np.array([self._parameter_vector(k, value), self._parameter_vector(k, other)])
        changed = _differs(stack, self.base)
        changed[P_SYMMETRIC] = False
        return np.nonzero(changed)[0]

    def _assembly_holds(self, start: np.ndarray) -> bool:
        """Whether assembled vectors equal vectors built in full (first and last point, parameters moved)."""
        independent = _differs(self.vectors0, self.base)
        independent[P_SYMMETRIC] = False
        mine = np.concatenate(self._columns) if self._columns else np.array([], dtype=int)
        if np.any(independent[mine]) or np.unique(mine).size != mine.size:
            return False
        theta = np.where(start != 0, start * 1.013, 1.3e-3)
        checks = sorted({0, len(self.points) - 1})
        try:
            assembled = self._assemble(theta[None, :], checks)
        except InputError:
            return False
        for row, p in zip(assembled, checks):
            full = packing.case_vector(self.case(*self.points[p], theta))
            if not np.array_equal(full, row, equal_nan=True):
                return False
        return True

    def _columns_at(self, k: int, value: float) -> np.ndarray:
        key = (k, float(value))
        if key not in self._cache:
            if len(self._cache) > 4096:
                self._cache.clear()
            self._cache[key] = self._parameter_vector(k, value)[self._columns[k]]
        return self._cache[key]

    def _assemble(self, thetas: np.ndarray, points: Sequence[int]) -> np.ndarray:
        """Packed vectors of ``points`` at each row of ``thetas``: (rows x points, vector)."""
        out = np.tile(self.vectors0[list(points)], (thetas.shape[0], 1))
        n = len(points)
        for r, theta in enumerate(thetas):
            for k, value in enumerate(theta):
                out[r * n:(r + 1) * n, self._columns[k]] = self._columns_at(k, value)
        if self.base[P_METRIC] == PLANAR:  # a slit is symmetric where its two walls are the same
            same = np.all(out[:, _WALL_COLUMNS[0]] == out[:, _WALL_COLUMNS[1]], axis=1)
            same &= out[:, P_SLIP] == out[:, P_SLIP + 1]
            out[:, P_SYMMETRIC] = same & self._names_match
        return out

    def _vectors(self, thetas: np.ndarray) -> np.ndarray:
        if self.assembled:
            return self._assemble(thetas, range(len(self.points)))
        return np.array([packing.case_vector(self.case(d, i, theta)) for theta in thetas for d, i in self.points])

    def evaluate(self, thetas: Any) -> np.ndarray:
        """The model value at every point for each parameter vector: (len(thetas), points), in one batch."""
        from edl_solver.kernels import batch

        thetas = np.atleast_2d(np.asarray(thetas, dtype=float))
        vectors = np.ascontiguousarray(self._vectors(thetas))
        summaries = np.full((vectors.shape[0], SUMMARY_SIZE), np.nan)
        codes = np.empty(vectors.shape[0], dtype=np.int64)
        iterations = np.empty(vectors.shape[0], dtype=np.int64)
        if vectors.shape[0] >= PARALLEL_ROWS:
            batch.solve_cases(vectors, summaries, codes, iterations)
        else:  # the same compiled steps row by row: a parallel launch costs more than a few small cases
            for row in range(vectors.shape[0]):
                codes[row], iterations[row] = batch.solve_one(vectors[row], summaries[row])
        self.forward_solves += vectors.shape[0]
        self.batches += 1
        n = len(self.points)
        slots = np.tile(self.slots, thetas.shape[0])
        values = summaries[np.arange(vectors.shape[0]), slots]
        for row in np.nonzero(codes != layout.CONVERGED)[0].tolist():
            values[row] = self._solve_one(thetas[row // n], row % n)
        missing = np.nonzero(~np.isfinite(values))[0]
        if missing.size:  # a key the case does not have (stern_potential without a Stern layer)
            p = int(missing[0]) % n
            raise InputError(f"data: {self._quantity(p)!r} is not defined for this case (the model gives no value "
                             f"at point {self.points[p][1]} of data set {self.points[p][0]}), expected a summary "
                             "quantity the case has")
        return values.reshape(thetas.shape[0], n)

    def _solve_one(self, theta: np.ndarray, p: int) -> float:
        """A point the batch did not finish, through ``edl_solver.solve``; ConvergenceError naming it."""
        from edl_solver.pipeline import solve

        d, i = self.points[p]
        self.forward_solves += 1
        where = ", ".join(f"{path} = {v[i]:.6g}" for path, v in zip(self.input_axes[d].paths,
                                                                       self.input_axes[d].values)
                          ) if self.input_axes[d] is not None else "the template's inputs"
        at = ", ".join(f"{path} = {v:.6g}" for path, v in zip(self.paths, theta))
        try:
            result = solve(self.case(d, i, theta))
        except (ConvergenceError, InputError) as error:
            raise ConvergenceError(f"fit: the model at point {i} of data set {d} ({where}) with {at} did not "
                                   f"converge: {error}") from None
        value = result.summary[self._quantity(p)]
        return float(value[0] if isinstance(value, tuple) else value)

    def _quantity(self, p: int) -> str:
        slot = int(self.slots[p])
        return next(key for key, at in SLOTS.items() if at == slot)
