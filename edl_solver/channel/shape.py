"""The section size along a channel: the radius of a capillary or the height of a slit at each x.

``Channel(..., size=...)`` takes, besides None (the case's own geometry, a uniform channel):

- a pair ``(a, b)``: the size at x = 0 and at x = L, linear in x between them (a cone, a tapered slit);
- a callable ``size(x) -> size``, x and the size in m (a constriction, an hourglass): sampled once on
  ``SHAPE_SAMPLES`` equal intervals of [0, L] and taken linear between the samples;
- a table ``{"position": [...], "size": [...]}``: positions from 0 to L (strictly increasing), sizes at them,
  floats in m or strings with units; linear between the rows.

Every shape becomes a ``Shape``: positions and sizes in m, the size linear in x between them. Sizes are
checked at the edge (positive, finite); the cross-section solver's own range is checked when it is solved.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.units import to_positive_si, to_si

__all__ = ["SHAPE_SAMPLES", "Shape", "make_shape", "table_columns"]

#: Equal intervals of [0, L] on which a callable shape is sampled (a multiple of 4: x = L/2 and L/4 are samples).
SHAPE_SAMPLES = 400


@dataclass(frozen=True)
class Shape:
    """The section size along the channel, linear in x between the rows.

    Attributes
    ----------
    positions : tuple of float
        x of the rows, m, from 0 to L, strictly increasing.
    sizes : tuple of float
        The radius (capillary) or height (slit) at each row, m.
    """

    positions: tuple[float, ...]
    sizes: tuple[float, ...]

    @property
    def ends(self) -> tuple[float, float]:
        """The size at x = 0 and at x = L, m."""
        return self.sizes[0], self.sizes[-1]

    @property
    def uniform(self) -> bool:
        """True when the size is the same everywhere."""
        return min(self.sizes) == max(self.sizes)

    def at(self, x: np.ndarray) -> np.ndarray:
        """The size at positions x (m), m."""
        return np.interp(x, self.positions, self.sizes)


def _size(value: object, field: str) -> float:
    size = to_positive_si(value, "m", field, "a positive size in m (or '10 nm')")
    if not math.isfinite(size):
        raise InputError(f"{field}: {value!r} is not finite, expected a positive size in m (or '10 nm')")
    return size


def _from_callable(function: Callable[[float], Any], length: float) -> Shape:
    x = np.linspace(0.0, length, SHAPE_SAMPLES + 1)
    sizes = []
    for position in x:
        try:
            value = function(float(position))
        except Exception as error:  # the user's function: any failure is an input error
            raise InputError(f"channel.size: the callable failed at x = {position:.6g} m ({error}), expected a "
                             "function of x in m returning the size in m") from None
        sizes.append(_size(value, f"channel.size({position:.6g} m)"))
    return Shape(tuple(float(v) for v in x), tuple(sizes))


def table_columns(table: Mapping[str, Any], length: float, name: str, field: str) -> tuple[list[float], Sequence]:
    """The positions (m; from 0 to L, rising strictly, the last set to L exactly) and the raw ``name`` column of a
    table ``{"position": [...], name: [...]}`` along a channel of length L (m), ``field`` naming it in errors.

    Raises
    ------
    InputError
        For other keys, columns that are not two lists of the same length (at least two rows), or positions that do
        not rise strictly from 0 to L.
    """
    if set(table) != {"position", name}:
        raise InputError(f"{field}: a table with keys {sorted(table)}, expected exactly 'position' and '{name}'")
    positions, values = table["position"], table[name]
    if isinstance(positions, str) or isinstance(values, str) or not isinstance(positions, Sequence | np.ndarray) \
            or not isinstance(values, Sequence | np.ndarray) or len(positions) != len(values) or len(values) < 2:
        raise InputError(f"{field}: the table's 'position' and '{name}' are not two lists of the same length, "
                         "expected at least two rows")
    x = [to_si(p, "m", f"{field}.position") for p in positions]
    if x[0] != 0.0 or not math.isclose(x[-1], length, rel_tol=1e-9) or any(b <= a for a, b in itertools.pairwise(x)):
        raise InputError(f"{field}.position: {list(positions)!r} is not allowed, expected positions rising "
                         f"strictly from 0 to the length {length:.6g} m")
    x[-1] = length
    return x, values


def _from_table(table: Mapping[str, Any], length: float) -> Shape:
    x, sizes = table_columns(table, length, "size", "channel.size")
    return Shape(tuple(x), tuple(_size(s, f"channel.size.size[{k}]") for k, s in enumerate(sizes)))


def make_shape(size: object, length: float, kind: str) -> Shape:
    """The ``Shape`` of a ``Channel``'s ``size`` (see the module notes) for a channel of length L (m).

    Raises
    ------
    InputError
        For a rectangle, or a size that is not a pair, a callable or a table of positive sizes.
    """
    if kind not in ("slit", "capillary"):
        raise InputError(f"channel.size: given for a {kind}, expected a slit or a capillary (a section that varies "
                         "along a rectangular channel is not supported)")
    if isinstance(size, Shape):
        return size
    if callable(size):
        return _from_callable(size, length)
    if isinstance(size, Mapping):
        return _from_table(size, length)
    if isinstance(size, str) or not isinstance(size, Sequence | np.ndarray) or len(size) != 2:
        raise InputError(f"channel.size: {size!r} is not allowed, expected two sizes (x = 0, x = L) such as "
                         "('10 nm', '200 nm'), a callable size(x) in m, or a table {'position': [...], 'size': [...]}")
    return Shape((0.0, length), (_size(size[0], "channel.size[0]"), _size(size[1], "channel.size[1]")))
