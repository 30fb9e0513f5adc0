"""The wall conditions of the rectangle core (``model.rectangle``): the kernels' rows of the two wall pairs (top and
bottom, z = 0, H; the sides, y = 0, W) from the solver's keywords, checked; each pair's isolated-wall potential (the
Newton start and the grid stretching); what the grid solve needs of them (``WallPairs``)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from edl_solver.errors import InputError
from edl_solver.kernels.layout import (
    FLUX,
    POTENTIAL,
    REGULATED,
    SPECIES_PACKING,
    SPECIES_SIZE,
    SPECIES_VALENCE,
    SPECIES_WEIGHT,
    W_TYPE,
    W_VALUE,
    WALL_SIZE,
)
from edl_solver.kernels.prepare import cap_crowded_layer
from edl_solver.model import rectangle_grid as fv
from edl_solver.model.rectangle_grid import Ions, PairCondition


def check(name: str, value: object, expected: str, ok: bool) -> None:
    """One-line InputError naming the field, its value and what was expected, unless ``ok``."""
    if not ok:
        raise InputError(f"{name} = {value!r}: expected {expected}")


def layer_pressure(psi: float, ions: Ions, strengths: np.ndarray) -> float:
    """The diffuse layer's first integral P(psi) = -int_0^psi rho_hat, so that an isolated flat wall carries
    sigma_hat = sign(psi) kappa sqrt(2 P) (Grahame 1947, from memory; as ``kernels.walls.layer_pressure``):
    sum_k q_k (exp(-z_k psi) - 1) for PB (q_k = c_k / sum z^2 c, ``strengths``), psi^2 / 2 for DH, and for the
    lattice gas of one ion size ln(1 + sum_k nu_k (exp(-z_k psi) - 1)) / sum_k z_k^2 nu_k (derived here: with
    nu_k = a q_k, rho_hat = -D' / (a D), and a = a sum z^2 q = sum z^2 nu)."""
    if ions.dh:
        return 0.5 * psi * psi
    excess = np.expm1(-ions.valences * psi)
    if ions.model == "steric":
        return max(float(np.log1p(ions.packing @ excess) / (ions.valences**2 @ ions.packing)), 0.0)
    return max(float(strengths @ excess), 0.0)


def _layer_charge(psi: float, kappa: float, ions: Ions, strengths: np.ndarray) -> float:
    return float(np.copysign(kappa * np.sqrt(2.0 * layer_pressure(psi, ions, strengths)), psi))


def grahame_potential(sigma: float, kappa: float, ions: Ions, strengths: np.ndarray) -> float:
    """Potential (kT/e) of an isolated flat wall of charge sigma_hat: the root of the layer charge
    (``layer_pressure``) = sigma_hat; DH: sigma_hat / kappa. Bisection-safe root (brentq) on a doubling bracket."""
    if ions.dh or sigma == 0.0:
        return sigma / kappa

    def mismatch(psi: float) -> float:
        return _layer_charge(psi, kappa, ions, strengths) - sigma

    bound = np.copysign(1.0, sigma)
    while mismatch(bound) * np.sign(sigma) < 0:
        bound *= 2.0
    return float(brentq(mismatch, 0.0, bound, xtol=1e-14, rtol=1e-14))


def regulated_potential(wall_row: np.ndarray, kappa: float, ions: Ions, strengths: np.ndarray) -> float:
    """Potential (kT/e) of an isolated flat regulated wall: the root of the layer charge (``layer_pressure``) = the
    wall's law sigma_hat(psi) (``kernels.walls.regulated_charge``), unique as the layer charge rises and the wall's
    falls with psi (as ``kernels.walls.isolated_wall``), on a doubling bracket."""
    def mismatch(psi: float) -> float:
        return _layer_charge(psi, kappa, ions, strengths) - fv.regulated_wall(np.array([psi]), wall_row)[0][0]

    a, b = -1.0, 1.0
    while mismatch(a) > 0 and a > -1e3:
        a *= 2.0
    while mismatch(b) < 0 and b < 1e3:
        b *= 2.0
    check("wall_row", "(regulated wall)", "a wall law whose isolated wall potential lies within 1000 kT/e",
          mismatch(a) <= 0 <= mismatch(b))
    return float(brentq(mismatch, a, b, xtol=1e-14, rtol=1e-14))


def _row(kind: int, value: float) -> np.ndarray:
    row = np.zeros(WALL_SIZE)
    row[W_TYPE], row[W_VALUE] = kind, value
    return row


def _checked_pairs(wall_rows) -> tuple[np.ndarray, np.ndarray]:
    """The (sides, top/bottom) rows of ``wall_rows`` = (top/bottom, sides), checked."""
    size = len(wall_rows) if hasattr(wall_rows, "__len__") else 0
    check("wall_rows", f"({size} rows)", "two wall rows (top/bottom, sides)", size == 2)
    rows = [np.asarray(r, float) for r in wall_rows]
    for name, row in zip(("wall_rows[0] (top/bottom)", "wall_rows[1] (sides)"), rows):
        check(name, "(array)", "a dimensionless wall row (kernels.walls.dimensionless_wall) of type POTENTIAL, FLUX "
              "or REGULATED", row.shape == (WALL_SIZE,) and bool(np.all(np.isfinite(row)))
              and row[W_TYPE] in (POTENTIAL, FLUX, REGULATED))
    tb, sides = rows
    if tb[W_TYPE] == sides[W_TYPE] == POTENTIAL and tb[W_VALUE] != sides[W_VALUE]:
        raise InputError(f"wall_rows = (zeta {tb[W_VALUE]:g}, zeta {sides[W_VALUE]:g}) kT/e: expected one fixed "
                         "potential on all walls (the wall charge diverges at the corners between different ones; "
                         "give charges or regulated walls)")
    return sides, tb


def pair_rows(zeta: float | None, charge_density: float | None, wall_row, wall_rows) -> tuple[np.ndarray, np.ndarray]:
    """The kernels' dimensionless rows of the side pair and of the top/bottom pair from the solver's keywords (at
    most one given; none: zero potential), InputError for a bad one."""
    given = [name for name, v in (("zeta", zeta), ("charge_density", charge_density), ("wall_row", wall_row),
                                  ("wall_rows", wall_rows)) if v is not None]
    check("wall condition", given, "at most one of zeta, charge_density, wall_row, wall_rows", len(given) <= 1)
    if wall_rows is not None:
        return _checked_pairs(wall_rows)
    if wall_row is not None:
        row = np.asarray(wall_row, float)
        check("wall_row", "(array)", "the dimensionless row of a REGULATED wall (kernels.walls.dimensionless_wall)",
              row.shape == (WALL_SIZE,) and row[W_TYPE] == REGULATED and bool(np.all(np.isfinite(row))))
        return row, row
    if charge_density is not None:
        check("charge_density", charge_density, "a finite dimensionless charge density", np.isfinite(charge_density))
        row = _row(FLUX, float(charge_density))
        return row, row
    zeta = 0.0 if zeta is None else zeta
    check("zeta", zeta, "a finite potential in kT/e", np.isfinite(zeta))
    row = _row(POTENTIAL, float(zeta))
    return row, row


def _text(row: np.ndarray) -> str:
    kind = row[W_TYPE]
    return "regulated" if kind == REGULATED else f"zeta = {row[W_VALUE]:g} kT/e" if kind == POTENTIAL else \
        f"sigma_hat = {row[W_VALUE]:g}"


@dataclass(frozen=True)
class WallPairs:
    """The side pair's and the top/bottom pair's conditions (in that order: the quarter's nodes [-1, :] and
    [:, -1]): their kernel ``rows``, isolated-wall potentials (``isolated``; the error floors), the potentials the
    start and the grid stretching take (``start``, ``layer``: capped for DH and steric layers, as the 1-D solver)
    and the counter-ion valences."""

    rows: tuple[np.ndarray, np.ndarray]
    isolated: tuple[float, float]
    start: tuple[float, float]
    layer: tuple[float, float]
    counters: tuple[float, float]

    @property
    def kinds(self) -> tuple[int, int]:
        return int(self.rows[0][W_TYPE]), int(self.rows[1][W_TYPE])

    @property
    def equal_zeta(self) -> bool:
        """All four walls at one fixed potential (the present path: the wall flux split is left undefined)."""
        return self.kinds == (POTENTIAL, POTENTIAL)

    @property
    def rough_corner(self) -> bool:
        """Different pairs other than two fixed charges: a fixed potential meeting a flux, or a regulated wall
        (whose charge varies along it) meeting another condition (``rectangle.ROUGH_CORNER_ORDER``)."""
        return not np.array_equal(self.rows[0], self.rows[1]) and self.kinds != (FLUX, FLUX)

    @property
    def unknown_walls(self) -> tuple[bool, bool]:
        """Whether each pair's wall nodes are unknowns (a charged or regulated pair)."""
        return self.kinds[0] != POTENTIAL, self.kinds[1] != POTENTIAL

    @property
    def conditions(self) -> tuple[PairCondition, PairCondition]:
        """``rectangle_grid.newton``'s pair conditions."""
        return tuple((0.0, row) if row[W_TYPE] == REGULATED else (float(row[W_VALUE]), None)
                     for row in self.rows)

    @property
    def fixed(self) -> float:
        """The fixed potential of the walls that have one (0 if none)."""
        return next((float(r[W_VALUE]) for r in self.rows if r[W_TYPE] == POTENTIAL), 0.0)

    def charges(self, grid_psi: np.ndarray) -> tuple[np.ndarray | None, np.ndarray | None]:
        """sigma_hat at each wall node of a charged or regulated pair (the corner included; None for a fixed one)."""
        out = []
        for row, nodes in zip(self.rows, (grid_psi[-1, :], grid_psi[:, -1])):
            kind = row[W_TYPE]
            out.append(None if kind == POTENTIAL else np.full(nodes.size, row[W_VALUE]) if kind == FLUX else
                       fv.regulated_wall(nodes, row)[0])
        return out[0], out[1]

    def describe(self) -> str:
        sides, tb = self.rows
        if np.array_equal(sides, tb):
            return "regulated walls" if sides[W_TYPE] == REGULATED else _text(sides)
        return f"top/bottom {_text(tb)}, sides {_text(sides)}"


def _counter(psi: float, valences: np.ndarray) -> float:
    """The counter-ions' largest valence (the sign opposite to the wall's)."""
    return float(valences.max() if psi < 0 else -valences.min())


def wall_pairs(rows: tuple[np.ndarray, np.ndarray], kappa: float, ions: Ions, strengths: np.ndarray) -> WallPairs:
    """``WallPairs`` of the (sides, top/bottom) ``rows``: each pair's isolated-wall potential (its zeta, Grahame's
    for a charge, the regulated root), the counter-ion valence; a linear (DH) layer has only the Debye length,
    whatever its wall potential (the stretching sees 0); a steric one is capped where crowding starts
    (``kernels.prepare.cap_crowded_layer``, for the start and the stretching)."""
    isolated = []
    for row in rows:
        kind = row[W_TYPE]
        isolated.append(float(row[W_VALUE]) if kind == POTENTIAL else
                        grahame_potential(float(row[W_VALUE]), kappa, ions, strengths) if kind == FLUX else
                        regulated_potential(row, kappa, ions, strengths))
    counters = np.array([_counter(p, ions.valences) for p in isolated])
    start = np.array(isolated)
    if ions.model == "steric":
        species = np.zeros((ions.valences.size, SPECIES_SIZE))
        species[:, SPECIES_VALENCE], species[:, SPECIES_WEIGHT] = ions.valences, ions.weights
        species[:, SPECIES_PACKING] = ions.packing
        cap_crowded_layer(start, counters, species)
    layer = np.zeros(2) if ions.dh else start
    return WallPairs(rows, (isolated[0], isolated[1]), (start[0], start[1]), (layer[0], layer[1]),
                     (counters[0], counters[1]))
