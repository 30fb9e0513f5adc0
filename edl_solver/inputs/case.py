"""The immutable description of one cross-section problem, in SI floats.

Every public object here is a frozen dataclass that validates and converts its inputs once, when it
is built: numbers are SI, strings with units ("1 mM", "50 nm", "-50 mV") are parsed at this edge and
stored as SI floats, and a bad value raises ``InputError`` naming the field and the value at once.
Variants are made with ``dataclasses.replace``.

Conventions (see the README): reservoir potential 0 and reservoir (bulk) concentrations; slit of full
height H with y from 0 (bottom wall) to H (top wall), quantities per unit width; capillary of radius a
with r from 0 (axis) to a; the field E > 0 points along +x, the axial direction.
"""

from __future__ import annotations

from dataclasses import dataclass
from dataclasses import field as _field
from numbers import Integral
from typing import Literal

from edl_solver.errors import InputError
from edl_solver.inputs.domain import check_case
from edl_solver.inputs.electrolyte import Electrolyte
from edl_solver.inputs.frozen import assign as _set
from edl_solver.inputs.geometry import GEOMETRIES, Geometry
from edl_solver.inputs.solvent import Solvent, Water
from edl_solver.inputs.units import to_si
from edl_solver.inputs.wall import Wall

Model = Literal["pb", "dh", "steric"]
MODELS: tuple[str, ...] = ("pb", "dh", "steric")
#: Laws of the bulk conductivity: infinite dilution, or corrected for the ion atmosphere (model.conductivity).
BULK_CONDUCTIVITY_LAWS: tuple[str, ...] = ("limiting", "onsager")

#: Grid cells per half section: the nested grids halve the finest one three times (``kernels.adaptive.LEVELS``
#: = 4), so a grid is a multiple of 8 with at least one cell on the coarsest; at most 2^20 (memory).
GRID_STEP = 8
MAX_GRID = 2**20
#: Newton iterations per grid: at least one, at most this (the default is 200).
MAX_ITERATIONS = 100_000


@dataclass(frozen=True)
class Numerics:
    """Numerical controls (defaults meet the stated accuracy; change them only to trade speed).

    Parameters
    ----------
    accuracy : float
        Target relative error of every summary value (vanishing values: relative to the wall value).
        The grid is refined until the Richardson error estimate is below it.
    intervals : int, optional
        Grid cells between the centre and a wall on the finest grid (a multiple of 8, at most 2^20); by
        default chosen from the stiffness of the layer and refined as needed.
    max_iterations : int
        Newton iteration limit per grid (1 to 100000).
    max_intervals : int
        Refinement stops here (a multiple of 8, at most 2^20); a case that still misses ``accuracy`` raises
        ``ConvergenceError``.
    """

    accuracy: float = 1e-6
    intervals: int | None = None
    max_iterations: int = 200
    max_intervals: int = 4096

    def __post_init__(self) -> None:
        accuracy = to_si(self.accuracy, "dimensionless", "numerics.accuracy")
        if not 1e-13 <= accuracy < 1.0:
            raise InputError(f"numerics.accuracy: {self.accuracy!r} is out of range, expected 1e-13 <= "
                             "accuracy < 1")
        _set(self, "accuracy", accuracy)
        if self.intervals is not None:
            _set(self, "intervals", _count("intervals", self.intervals, GRID_STEP, MAX_GRID, GRID_STEP))
        _set(self, "max_iterations", _count("max_iterations", self.max_iterations, 1, MAX_ITERATIONS))
        _set(self, "max_intervals", _count("max_intervals", self.max_intervals, GRID_STEP, MAX_GRID, GRID_STEP))


def _count(name: str, value: object, least: int, most: int, step: int = 1) -> int:
    """``numerics.<name>`` as a plain int (numpy integers will do) in [least, most], a multiple of ``step``."""
    multiple = f", a multiple of {step}" if step > 1 else ""
    expected = f"expected an integer of at least {least} and at most {most}{multiple}"
    if isinstance(value, bool) or not isinstance(value, Integral):
        raise InputError(f"numerics.{name}: {value!r} is not an integer, {expected}")
    if value < least:
        raise InputError(f"numerics.{name}: {value!r} is too small for the solver, {expected}")
    if value > most:
        raise InputError(f"numerics.{name}: {value!r} is too large, {expected}")
    if value % step:
        raise InputError(f"numerics.{name}: {value!r} is not a multiple of {step} (the nested grids halve it three "
                         f"times), {expected}")
    return int(value)


@dataclass(frozen=True)
class Case:
    """One cross-section problem: geometry, electrolyte, walls, solvent, drives, model and numerics.

    Parameters
    ----------
    geometry : Slit, Capillary or Rectangle
    electrolyte : Electrolyte
    wall : Wall or (Wall, Wall)
        One wall condition for every wall, or a (bottom, top) pair for a slit, a (top and bottom, sides) pair for a
        rectangle (the walls z = 0, H and the walls y = 0, W).
    solvent : Solvent
        Defaults to water at 25 degC (``Water()``).
    field : float or str
        Axial electric field E along +x, V/m (or "10 kV/m").
    pressure_gradient : float or str
        Axial pressure gradient dp/dx, Pa/m (or "-1 bar/mm"); negative drives flow along +x.
    model : {"pb", "dh"}
        Nonlinear Poisson-Boltzmann or its linearisation (Debye-Hueckel).
    tolerance : float or str
        Relative error up to which the thin-layer slip model is called valid (default 5 %).
    numerics : Numerics
    bulk_conductivity : {"limiting", "onsager"}
        The conductivity of the bulk electrolyte in the bulk and thin-layer values: infinite dilution
        (Nernst-Einstein, the default) or corrected for the ion atmosphere (``model.conductivity``). The double
        layer always uses the point-ion mobilities.

    A case outside the solver's domain (``inputs.domain``: kappa times the half-size outside 1e-3 to 1e4, a
    given zeta, charge or gate beyond 15 kT/e) is refused with an ``InputError`` naming the field.
    """

    geometry: Geometry
    electrolyte: Electrolyte
    wall: Wall | tuple[Wall, Wall]
    solvent: Solvent = _field(default_factory=Water)
    field: float | str = 0.0
    pressure_gradient: float | str = 0.0
    model: Model = "pb"
    tolerance: float | str = 0.05
    numerics: Numerics = _field(default_factory=Numerics)
    bulk_conductivity: str = "limiting"

    def __post_init__(self) -> None:
        if not isinstance(self.geometry, tuple(GEOMETRIES.values())):
            raise InputError(f"geometry: {self.geometry!r} is not a geometry, expected Slit(height=...), "
                             "Capillary(radius=...) or Rectangle(width=..., height=...)")
        if not isinstance(self.electrolyte, Electrolyte):
            raise InputError(f"electrolyte: {self.electrolyte!r} is not an Electrolyte, expected "
                             "Electrolyte([...]) or Electrolyte.from_ions({...})")
        if isinstance(self.wall, (tuple, list)):
            pair = "(" + ", ".join(self.geometry.wall_names) + ")"
            if self.geometry.wall_count == 1:
                raise InputError(f"wall: a {pair} pair was given for a {self.geometry.kind}, expected one Wall")
            if len(self.wall) != 2 or not all(isinstance(w, Wall) for w in self.wall):
                raise InputError(f"wall: {self.wall!r} is not a {pair} pair of Wall, expected two")
            _set(self, "wall", tuple(self.wall))
        elif not isinstance(self.wall, Wall):
            raise InputError(f"wall: {self.wall!r} is not a Wall, expected Wall(zeta=...) or "
                             "Wall(charge_density=...)")
        if not isinstance(self.solvent, Solvent):
            raise InputError(f"solvent: {self.solvent!r} is not a Solvent, expected Solvent(...) or Water(...)")
        _set(self, "field", to_si(self.field, "V/m", "field"))
        _set(self, "pressure_gradient", to_si(self.pressure_gradient, "Pa/m", "pressure_gradient"))
        if self.model not in MODELS:
            raise InputError(f"model: {self.model!r} is not a model, expected one of {', '.join(MODELS)}")
        if self.model == "steric":
            diameters = {ion.diameter for ion in self.electrolyte.ions}
            if None in diameters or len(diameters) != 1:
                raise InputError(f"model: 'steric' needs one common diameter on every ion, got "
                                 f"{sorted((i.name, i.diameter) for i in self.electrolyte.ions)!r}, expected "
                                 "Ion(..., diameter=...) the same for all")
        if any(w.sites for w in self.walls) and self.electrolyte.proton_concentration is None:
            raise InputError("electrolyte.pH: missing, expected a pH (or an H+ ion) for the charge-regulating "
                             "sites of the wall")
        tolerance = to_si(self.tolerance, "dimensionless", "tolerance")
        if not 0.0 < tolerance < 1.0:
            raise InputError(f"tolerance: {self.tolerance!r} is out of range, expected a fraction "
                             "between 0 and 1 (e.g. 0.05 or '5 %')")
        _set(self, "tolerance", tolerance)
        if self.bulk_conductivity not in BULK_CONDUCTIVITY_LAWS:
            raise InputError(f"bulk_conductivity: {self.bulk_conductivity!r} is not a conductivity law, expected one "
                             f"of {', '.join(BULK_CONDUCTIVITY_LAWS)}")
        if not isinstance(self.numerics, Numerics):
            raise InputError(f"numerics: {self.numerics!r} is not Numerics, expected Numerics(...)")
        self.electrolyte.diffusivities(self.solvent.temperature)  # refuses a temperature outside the ions' laws
        check_case(self)  # last: the domain is judged on inputs that are each valid

    @property
    def walls(self) -> tuple[Wall, Wall]:
        """(bottom, top) walls of a slit, (top and bottom, sides) of a rectangle; (wall, wall) for a capillary."""
        return self.wall if isinstance(self.wall, tuple) else (self.wall, self.wall)

    @property
    def symmetric(self) -> bool:
        """True when one condition holds on every wall (half the section is solved)."""
        return not isinstance(self.wall, tuple) or self.wall[0] == self.wall[1]

    @property
    def debye_length(self) -> float:
        """Debye length of the bulk electrolyte, m."""
        return self.electrolyte.debye_length(self.solvent)

    def describe(self) -> str:
        """One-line description used in messages and reports."""
        size = self.geometry.describe()
        ions = ", ".join(f"{ion.name} {ion.concentration:.4g} mol/m^3" for ion in self.electrolyte.ions)
        walls = [_describe_wall(w) for w in (self.walls[:1] if self.symmetric else self.walls)]
        return f"{size}; {ions}; wall {' / '.join(walls)}; model {self.model}"


def _describe_wall(wall: Wall) -> str:
    """The wall's condition in a few words: its zeta, its charge, or what regulates its charge (sites, a fixed
    charge behind a Stern layer, a gate)."""
    if wall.kind == "potential":
        return f"zeta = {wall.zeta:.4g} V"
    if wall.kind == "charge":
        return f"sigma = {wall.charge_density:.4g} C/m^2"
    parts = [f"{site.name} pK {'/'.join(f'{pk:g}' for pk in site.pks)}" for site in wall.sites]
    if wall.charge_density is not None:
        parts.append(f"sigma = {wall.charge_density:.4g} C/m^2")
    if wall.stern_capacitance is not None:
        parts.append(f"Stern {wall.stern_capacitance:.4g} F/m^2")
    if wall.gate_voltage is not None:
        parts.append(f"gate {wall.gate_voltage:.4g} V")
    return "regulated (" + ", ".join(parts) + ")"
