"""The wall condition along a channel: piecewise in x (``Channel(..., wall_segments=...)``).

``wall_segments`` is a list of ``(x_end, wall)`` pairs: the wall (an ``edl.Wall``, or a pair of them where the case
has a pair) holds from the previous segment's end (0 for the first) to ``x_end``, in m or a string with units. The
ends rise strictly and the last is the channel's length, so the segments cover (0, L]; a bipolar channel is two
segments of opposite charge. Every wall fixes what the case's wall fixes (potential, charge or a regulated charge),
so that the channel's tables vary only in the wall's value. A rectangle is refused (its section cannot vary along x).

The along-channel solve (``taper_path``) uses one table per distinct wall (``taper_table``) and the table of the
segment containing x; c, V and p are continuous across a segment end and the fluxes are uniform.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.units import to_si
from edl_solver.inputs.wall import Wall

__all__ = ["WallSegments", "make_wall_segments"]

_EXPECTED = "a list of (x_end, Wall) pairs with x_end rising strictly to the channel's length"


@dataclass(frozen=True)
class WallSegments:
    """The wall along x: ``walls[k]`` holds on (ends[k-1], ends[k]] (from 0 for k = 0).

    Attributes
    ----------
    ends : tuple of float
        The segments' right ends, m; the last is the channel's length.
    walls : tuple
        The wall of each segment (a ``Wall``, or a pair where the case has a pair).
    """

    ends: tuple[float, ...]
    walls: tuple[Any, ...]

    @property
    def distinct(self) -> tuple[Any, ...]:
        """The distinct walls, in order of first appearance (one table each)."""
        out: list[Any] = []
        for wall in self.walls:
            if wall not in out:
                out.append(wall)
        return tuple(out)

    @property
    def table_index(self) -> tuple[int, ...]:
        """For each segment, the index of its wall in ``distinct``."""
        distinct = self.distinct
        return tuple(distinct.index(wall) for wall in self.walls)

    def segment_at(self, x: np.ndarray) -> np.ndarray:
        """The segment containing each position x (m): k with ends[k-1] < x <= ends[k] (x = 0 in the first)."""
        return np.minimum(np.searchsorted(np.array(self.ends), x, side="left"), len(self.ends) - 1)


def _kind(wall: Any) -> tuple[str, ...]:
    walls = wall if isinstance(wall, tuple) else (wall,)
    return tuple(w.kind for w in walls)


def _check_wall(wall: Any, reference: Any, k: int) -> Any:
    if isinstance(wall, list):
        wall = tuple(wall)
    pair = isinstance(reference, tuple)
    ok = (isinstance(wall, tuple) and len(wall) == 2 and all(isinstance(w, Wall) for w in wall)) if pair \
        else isinstance(wall, Wall)
    if not ok:
        raise InputError(f"channel.wall_segments[{k}]: {wall!r} is not allowed, expected "
                         f"{'a (Wall, Wall) pair as the case has' if pair else 'an edl.Wall'}")
    if _kind(wall) != _kind(reference):
        raise InputError(f"channel.wall_segments[{k}]: a wall fixing {_kind(wall)}, expected a wall of the case's "
                         f"kind {_kind(reference)}")
    return wall


def make_wall_segments(value: object, length: float, case: Any) -> WallSegments:
    """The ``WallSegments`` of a ``Channel``'s ``wall_segments`` for a channel of length L (m).

    Raises
    ------
    InputError
        For a rectangle, or segments that are not (x_end, Wall) pairs covering (0, L] in rising order with walls
        of the case's kind.
    """
    if case.geometry.kind not in ("slit", "capillary"):
        raise InputError(f"channel.wall_segments: given for a {case.geometry.kind}, expected a slit or a capillary "
                         "(a wall that varies along a rectangular channel is not supported)")
    if isinstance(value, WallSegments):
        return value
    if isinstance(value, str | Wall) or not isinstance(value, Sequence) or len(value) == 0:
        raise InputError(f"channel.wall_segments: {value!r} is not allowed, expected {_EXPECTED}")
    ends, walls = [], []
    for k, item in enumerate(value):
        if isinstance(item, str) or not isinstance(item, Sequence) or len(item) != 2:
            raise InputError(f"channel.wall_segments[{k}]: {item!r} is not allowed, expected an (x_end, Wall) pair")
        end = to_si(item[0], "m", f"channel.wall_segments[{k}].x_end")
        if not math.isfinite(end) or end <= (ends[-1] if ends else 0.0):
            raise InputError(f"channel.wall_segments[{k}].x_end: {item[0]!r} is not allowed, expected {_EXPECTED}")
        ends.append(end)
        walls.append(_check_wall(item[1], case.wall, k))
    if not math.isclose(ends[-1], length, rel_tol=1e-9):
        raise InputError(f"channel.wall_segments[{len(ends) - 1}].x_end: {ends[-1]:.6g} m, expected the channel's "
                         f"length {length:.6g} m (the segments cover (0, L])")
    ends[-1] = length
    return WallSegments(tuple(ends), tuple(walls))
