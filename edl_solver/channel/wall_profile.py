"""The wall condition along a channel as a continuous profile in x (``Channel(..., wall_profile=...)``).

The profile gives, at each x, the value of what the case's wall fixes:

- a potential wall (``Wall(zeta=...)``): zeta, V (or "-40 mV");
- a charge wall (``Wall(charge_density=...)``): the charge density, C/m^2 (or "-20 mC/m^2");
- a regulated wall with one kind of site (and no gate): the site density, 1/m^2 (or "2 nm^-2"), every other
  property of the wall (pK, Stern capacitance, fixed charge) kept.

Regulated walls with several kinds of site, or with a gate, are refused (which of their values would vary is
not defined), and so is a slit whose two walls differ; a slit given a pair of equal walls gets the profile on
both. The profile is

- a callable ``value(x)``, x in m and the value in SI or a string with units: sampled once on
  ``shape.SHAPE_SAMPLES`` equal intervals of [0, L], as ``shape`` samples a callable size;
- a table ``{"position": [...], "value": [...]}``: positions rising strictly from 0 to L, values in SI or strings
  with units.

The value is linear in x between the rows. The channel is tabulated at ``wall_points`` values spanning the
profile's range (one when it is constant, so that a constant profile is the plain channel's table), each a
(ln c, ln size) table of ``taper_table``, and interpolated across the value by a local cubic (``ProfileSpline``).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.channel.shape import SHAPE_SAMPLES, table_columns
from edl_solver.constants import FARADAY
from edl_solver.errors import InputError
from edl_solver.inputs.units import to_si
from edl_solver.inputs.wall import Wall

__all__ = ["ProfileSpline", "WallProfile", "make_wall_profile"]

#: What a wall of each kind lets vary: (quantity, SI unit, what is expected).
_QUANTITIES = {"potential": ("zeta", "V", "a zeta potential in V (or '-40 mV')"),
               "charge": ("charge_density", "C/m^2", "a charge density in C/m^2 (or '-20 mC/m^2')"),
               "regulated": ("site_density", "1/m^2", "a positive site density in 1/m^2 (or '2 nm^-2')")}


@dataclass(frozen=True)
class WallProfile:
    """The value of the wall's fixed quantity along x, linear in x between the rows.

    Attributes
    ----------
    positions : tuple of float
        x of the rows, m, from 0 to L, strictly increasing.
    values : tuple of float
        The quantity at each row, SI.
    quantity : str
        "zeta" (V), "charge_density" (C/m^2) or "site_density" (1/m^2, of the wall's one kind of site).
    """

    positions: tuple[float, ...]
    values: tuple[float, ...]
    quantity: str

    @property
    def unit(self) -> str:
        """The SI unit of the values."""
        return {"zeta": "V", "charge_density": "C/m^2", "site_density": "1/m^2"}[self.quantity]

    @property
    def uniform(self) -> bool:
        """True when the value is the same everywhere."""
        return min(self.values) == max(self.values)

    def at(self, x: np.ndarray) -> np.ndarray:
        """The value at positions x (m), SI."""
        return np.interp(x, self.positions, self.values)

    def nodes(self, count: int, scale: float | None = None) -> np.ndarray:
        """``count`` values from the smallest to the largest (one when the profile is constant): equally spaced,
        or equally spaced in asinh(value / scale) when a scale is given (denser near zero)."""
        if self.uniform:
            return np.array([self.values[0]])
        if scale is None:
            return np.linspace(min(self.values), max(self.values), count)
        ends = np.arcsinh(np.array([min(self.values), max(self.values)]) / scale)
        nodes = scale * np.sinh(np.linspace(ends[0], ends[1], count))
        nodes[[0, -1]] = min(self.values), max(self.values)
        return nodes

    def case_at(self, case: Any, value: float) -> Any:
        """The case with its wall (both walls of a slit's equal pair) fixing ``value`` instead."""
        wall = case.walls[0]
        if self.quantity == "site_density":
            new = dataclasses.replace(wall, sites=(dataclasses.replace(wall.sites[0], density=float(value)),))
        else:
            new = dataclasses.replace(wall, **{self.quantity: float(value)})
        if new == wall:
            return case
        return dataclasses.replace(case, wall=(new, new) if isinstance(case.wall, tuple) else new)


class ProfileSpline:
    """The ion-resolved matrix at (u = ln c, s = ln size, wall value v): the features (log diagonal, correlations)
    of the ``taper_table.SectionSpline`` of each wall node, combined by a local cubic in the wall coordinate
    (``coordinate``: the value itself, or asinh of a charge density over F c size), then rebuilt into a matrix.

    A charge density is interpolated in w = asinh(sigma / (F c size)) because the section's ions follow
    ln c_(+-) = ln c +- w in the uniform-potential limit of a 1:1 salt (Teorell-Meyer-Sievers, from memory: the
    counter-charge 2 sigma/size per volume shared by the ions): linear in w, while in sigma the relations turn
    sharply across sigma = 0 over a width F c size, far below the nodes' spacing at low concentration. As that
    width depends on (c, size), the nodes' coordinates do too, and the cubic is the Lagrange one through the four
    nodes around v (two or three when there are fewer), computed point by point.
    """

    def __init__(self, splines: Sequence[Any], nodes: np.ndarray, quantity: str):
        self.splines, self.nodes = list(splines), np.asarray(nodes, dtype=float)
        self.u_range = self.splines[0].u_range
        self.quantity = quantity

    def coordinate(self, v: np.ndarray, u: np.ndarray, s: np.ndarray) -> np.ndarray:
        """The coordinate in which the features are interpolated, at values v and (u, s) broadcast with them."""
        if self.quantity != "charge_density":
            return v
        return np.arcsinh(v / (FARADAY * np.exp(u + s)))

    def weights(self, u: np.ndarray, s: np.ndarray, v: np.ndarray) -> np.ndarray:
        """The weight of each node at the points (u_k, s_k, v_k), shape (k, nodes); v is clipped to the nodes."""
        n = len(self.nodes)
        v = np.clip(np.asarray(v, dtype=float), self.nodes[0], self.nodes[-1])
        m = min(4, n)
        first = np.clip(np.searchsorted(self.nodes, v) - m // 2, 0, n - m)
        window = first[:, None] + np.arange(m)  # the m nodes around each v
        x = self.coordinate(self.nodes[window], u[:, None], s[:, None])
        t = self.coordinate(v, u, s)[:, None]
        local = np.ones((len(v), m))
        for a in range(m):
            for b in range(m):
                if a != b:
                    local[:, a] *= (t[:, 0] - x[:, b]) / (x[:, a] - x[:, b])
        out = np.zeros((len(v), n))
        np.put_along_axis(out, window, local, axis=1)
        return out

    def __call__(self, u: np.ndarray, s: np.ndarray, v: np.ndarray) -> np.ndarray:
        """Ion matrices at the points (u_k, s_k, v_k), shape (k, n, n)."""
        u, s = np.asarray(u, dtype=float), np.asarray(s, dtype=float)
        weights = self.weights(u, s, v)
        features = 0.0
        for k, spline in enumerate(self.splines):  # each table where its weight is not zero (at most 4 per point)
            used = weights[:, k] != 0.0
            if np.any(used):
                part = np.zeros((len(u), spline.feature_count))
                part[used] = weights[used, k, None] * spline.features(u[used], s[used])
                features = features + part
        return self.splines[0].rebuild(features)


def _wall_of(case: Any) -> tuple[str, str, str]:
    """(quantity, unit, expected) the profile of this case's wall gives; refuses walls it cannot vary."""
    if case.geometry.kind not in ("slit", "capillary"):
        raise InputError(f"channel.wall_profile: given for a {case.geometry.kind}, expected a slit or a capillary "
                         "(a wall that varies along a rectangular channel is not supported)")
    if not case.symmetric:
        raise InputError("channel.wall_profile: given for a slit with two different walls, expected a case with one "
                         "wall (or an equal pair), to which the profile applies on both sides")
    wall: Wall = case.walls[0]
    if wall.kind == "regulated" and (len(wall.sites) != 1 or wall.gate_voltage is not None):
        raise InputError(f"channel.wall_profile: a regulated wall with {len(wall.sites)} kinds of site"
                         f"{' and a gate' if wall.gate_voltage is not None else ''}, expected a wall fixing zeta, a "
                         "charge density, or regulated by exactly one kind of site without a gate (whose site "
                         "density the profile gives)")
    return _QUANTITIES[wall.kind]


def _value(value: object, unit: str, field: str, expected: str) -> float:
    number = to_si(value, unit, field)
    if unit == "1/m^2" and not number > 0.0:
        raise InputError(f"{field}: {value!r} is not positive, expected {expected}")
    return number


def _from_callable(function: Callable[[float], Any], length: float, unit: str, expected: str) -> list[tuple]:
    rows = []
    for position in np.linspace(0.0, length, SHAPE_SAMPLES + 1):
        try:
            value = function(float(position))
        except Exception as error:  # the user's function: any failure is an input error
            raise InputError(f"channel.wall_profile: the callable failed at x = {position:.6g} m ({error}), expected "
                             f"a function of x in m returning {expected}") from None
        rows.append((float(position), _value(value, unit, f"channel.wall_profile({position:.6g} m)", expected)))
    return rows


def _from_table(table: Mapping[str, Any], length: float, unit: str, expected: str) -> list[tuple]:
    x, values = table_columns(table, length, "value", "channel.wall_profile")
    return [(p, _value(v, unit, f"channel.wall_profile.value[{k}]", expected))
            for k, (p, v) in enumerate(zip(x, values))]


def make_wall_profile(value: object, length: float, case: Any) -> WallProfile:
    """The ``WallProfile`` of a ``Channel``'s ``wall_profile`` (see the module notes), channel length L in m.

    Raises
    ------
    InputError
        For a rectangle, a pair of different walls, a regulated wall with several kinds of site or a gate, or a
        profile that is not a callable or a table of values of the wall's quantity.
    """
    quantity, unit, expected = _wall_of(case)
    if isinstance(value, WallProfile):
        if value.quantity != quantity:
            raise InputError(f"channel.wall_profile: a profile of {value.quantity}, expected one of {quantity} (what "
                             "the case's wall fixes)")
        return value
    if callable(value):
        rows = _from_callable(value, length, unit, expected)
    elif isinstance(value, Mapping):
        rows = _from_table(value, length, unit, expected)
    else:
        raise InputError(f"channel.wall_profile: {value!r} is not allowed, expected a callable value(x) (x in m) or a "
                         f"table {{'position': [...], 'value': [...]}} of {expected}")
    return WallProfile(tuple(r[0] for r in rows), tuple(r[1] for r in rows), quantity)
