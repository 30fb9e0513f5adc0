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

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from dataclasses import field as _field
from typing import Literal

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.errors import InputError
from edl_solver.ions import lookup_ion
from edl_solver.solvent import Solvent, Water
from edl_solver.units import to_si

Model = Literal["pb", "dh"]
MODELS: tuple[str, ...] = ("pb", "dh")

#: Relative imbalance of the bulk charge accepted as neutral: sum z c <= this * sum |z| c.
NEUTRALITY_TOLERANCE = 1e-6


def _set(obj: object, name: str, value: object) -> None:
    object.__setattr__(obj, name, value)


def _positive(value: object, unit: str, field_name: str, expected: str) -> float:
    number = to_si(value, unit, field_name)
    if not number > 0.0:
        raise InputError(f"{field_name}: {value!r} is not positive, expected {expected}")
    return number


@dataclass(frozen=True)
class Ion:
    """One ionic species of the electrolyte.

    Parameters
    ----------
    name : str
        Label of the ion; names in the built-in table (``edl_solver.ions``) fill in ``valence`` and
        ``diffusivity`` when they are not given.
    valence : int, optional
        Charge number z (nonzero integer).
    concentration : float or str
        Bulk (reservoir) concentration, mol/m^3 (1 mol/m^3 = 1 mM), or a string such as "1 mM".
    diffusivity : float or str, optional
        Diffusion coefficient, m^2/s; sets the ion's mobility through Nernst-Einstein, D/(kT).
    """

    name: str
    valence: int | None = None
    concentration: float | str | None = None
    diffusivity: float | str | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            raise InputError(f"ion.name: {self.name!r} is not a name, expected a non-empty string like 'K+'")
        label = f"ion {self.name}"
        known = None
        if self.valence is None or self.diffusivity is None:
            known = lookup_ion(self.name)
        valence = known.valence if self.valence is None else self.valence
        if isinstance(valence, bool) or not isinstance(valence, (int, float)) or valence != int(valence) \
                or valence == 0:
            raise InputError(f"{label}.valence: {self.valence!r} is not a charge number, "
                             "expected a nonzero integer")
        _set(self, "valence", int(valence))
        if self.concentration is None:
            raise InputError(f"{label}.concentration: missing, expected a bulk concentration like '1 mM'")
        _set(self, "concentration", _positive(self.concentration, "mol/m^3", f"{label}.concentration",
                                              "a positive concentration in mol/m^3 (or '1 mM')"))
        diffusivity = known.diffusivity if self.diffusivity is None else self.diffusivity
        _set(self, "diffusivity", _positive(diffusivity, "m^2/s", f"{label}.diffusivity",
                                            "a positive diffusivity in m^2/s"))


@dataclass(frozen=True)
class Electrolyte:
    """The bulk (reservoir) electrolyte: any number of ions, electroneutral.

    Parameters
    ----------
    ions : sequence of Ion
        At least one cation and one anion; sum_i z_i c_i = 0 within ``NEUTRALITY_TOLERANCE``.
    """

    ions: tuple[Ion, ...]

    def __post_init__(self) -> None:
        ions = tuple(self.ions) if isinstance(self.ions, Sequence) and not isinstance(self.ions, str) \
            else None
        if not ions or not all(isinstance(ion, Ion) for ion in ions):
            raise InputError(f"electrolyte.ions: {self.ions!r} is not a list of Ion, expected at least "
                             "one cation and one anion")
        names = [ion.name for ion in ions]
        for name in names:
            if names.count(name) > 1:
                raise InputError(f"electrolyte.ions: {name!r} is given twice, expected each ion once")
        net = sum(ion.valence * ion.concentration for ion in ions)
        total = sum(abs(ion.valence) * ion.concentration for ion in ions)
        if abs(net) > NEUTRALITY_TOLERANCE * total:
            raise InputError(f"electrolyte: bulk charge sum(z*c) = {net:.6g} mol/m^3 is not neutral, "
                             "expected cation and anion charges to balance")
        _set(self, "ions", ions)

    @classmethod
    def from_ions(cls, concentrations: Mapping[str, float | str]) -> Electrolyte:
        """Electrolyte from table ions and their concentrations, e.g. ``{"K+": "1 mM", "Cl-": "1 mM"}``."""
        if not isinstance(concentrations, Mapping) or not concentrations:
            raise InputError(f"electrolyte: {concentrations!r} is not a mapping of ion names to "
                             "concentrations, expected e.g. {'K+': '1 mM', 'Cl-': '1 mM'}")
        return cls(tuple(Ion(name=name, concentration=c) for name, c in concentrations.items()))

    @property
    def ionic_strength(self) -> float:
        """Ionic strength I = (1/2) sum z_i^2 c_i, mol/m^3."""
        return 0.5 * sum(ion.valence**2 * ion.concentration for ion in self.ions)

    def debye_length(self, solvent: Solvent) -> float:
        """Debye length lambda_D = sqrt(eps kT / (e^2 N_A sum z_i^2 c_i)), m (e.g. Israelachvili,
        Intermolecular and Surface Forces)."""
        return math.sqrt(solvent.permittivity * solvent.thermal_voltage
                         / (ELEMENTARY_CHARGE * AVOGADRO * 2.0 * self.ionic_strength))


@dataclass(frozen=True)
class Slit:
    """Planar slit of full height H between two parallel walls (quantities per unit width).

    Parameters
    ----------
    height : float or str
        Full wall-to-wall height H, m (or "50 nm").
    """

    height: float | str

    def __post_init__(self) -> None:
        _set(self, "height", _positive(self.height, "m", "geometry.height", "a positive height in m"))

    @property
    def half_size(self) -> float:
        """Half-height h = H/2, m: the length unit of the slit's dimensionless problem."""
        return 0.5 * self.height


@dataclass(frozen=True)
class Capillary:
    """Cylindrical capillary of radius a (axisymmetric).

    Parameters
    ----------
    radius : float or str
        Radius a, m (or "20 nm").
    """

    radius: float | str

    def __post_init__(self) -> None:
        _set(self, "radius", _positive(self.radius, "m", "geometry.radius", "a positive radius in m"))

    @property
    def half_size(self) -> float:
        """Radius a, m: the length unit of the capillary's dimensionless problem."""
        return self.radius


Geometry = Slit | Capillary


@dataclass(frozen=True)
class Wall:
    """Electrical condition of one wall: fixed potential or fixed surface charge density.

    Parameters
    ----------
    zeta : float or str, optional
        Wall (zeta) potential relative to the reservoir, V (or "-50 mV").
    charge_density : float or str, optional
        Surface charge density sigma = eps dphi/dn (n pointing from the liquid into the wall, so sigma
        and zeta share their sign), C/m^2 (or "-2 mC/m^2").

    Exactly one of the two is given.
    """

    zeta: float | str | None = None
    charge_density: float | str | None = None

    def __post_init__(self) -> None:
        if (self.zeta is None) == (self.charge_density is None):
            given = "both" if self.zeta is not None else "neither"
            raise InputError(f"wall: {given} of zeta={self.zeta!r} and charge_density={self.charge_density!r} "
                             "given, expected exactly one")
        if self.zeta is not None:
            _set(self, "zeta", to_si(self.zeta, "V", "wall.zeta"))
        else:
            _set(self, "charge_density", to_si(self.charge_density, "C/m^2", "wall.charge_density"))

    @property
    def kind(self) -> Literal["potential", "charge"]:
        """Which quantity the wall fixes."""
        return "potential" if self.zeta is not None else "charge"


@dataclass(frozen=True)
class Numerics:
    """Numerical controls (defaults meet the stated accuracy; change them only to trade speed).

    Parameters
    ----------
    accuracy : float
        Target relative error of every summary value (vanishing values: relative to the wall value).
        The grid is refined until the Richardson error estimate is below it.
    intervals : int, optional
        Grid cells between the centre and a wall on the finest grid (a multiple of 8); by default
        chosen from the stiffness of the layer and refined as needed.
    max_iterations : int
        Newton iteration limit per grid.
    max_intervals : int
        Refinement stops here; a case that still misses ``accuracy`` raises ``ConvergenceError``.
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
        if self.intervals is not None and (isinstance(self.intervals, bool) or not isinstance(
                self.intervals, int) or self.intervals < 8 or self.intervals % 8):
            raise InputError(f"numerics.intervals: {self.intervals!r} is not allowed, expected a "
                             "multiple of 8, at least 8")
        for name in ("max_iterations", "max_intervals"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                raise InputError(f"numerics.{name}: {value!r} is not allowed, expected a positive integer")


@dataclass(frozen=True)
class Case:
    """One cross-section problem: geometry, electrolyte, walls, solvent, drives, model and numerics.

    Parameters
    ----------
    geometry : Slit or Capillary
    electrolyte : Electrolyte
    wall : Wall or (Wall, Wall)
        One wall condition for every wall, or a (bottom, top) pair for a slit.
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

    def __post_init__(self) -> None:
        if not isinstance(self.geometry, (Slit, Capillary)):
            raise InputError(f"geometry: {self.geometry!r} is not a geometry, expected Slit(height=...) or "
                             "Capillary(radius=...)")
        if not isinstance(self.electrolyte, Electrolyte):
            raise InputError(f"electrolyte: {self.electrolyte!r} is not an Electrolyte, expected "
                             "Electrolyte([...]) or Electrolyte.from_ions({...})")
        if isinstance(self.wall, (tuple, list)):
            if isinstance(self.geometry, Capillary):
                raise InputError("wall: a (bottom, top) pair was given for a capillary, expected one Wall")
            if len(self.wall) != 2 or not all(isinstance(w, Wall) for w in self.wall):
                raise InputError(f"wall: {self.wall!r} is not a (bottom, top) pair of Wall, expected two")
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
        tolerance = to_si(self.tolerance, "dimensionless", "tolerance")
        if not 0.0 < tolerance < 1.0:
            raise InputError(f"tolerance: {self.tolerance!r} is out of range, expected a fraction "
                             "between 0 and 1 (e.g. 0.05 or '5 %')")
        _set(self, "tolerance", tolerance)
        if not isinstance(self.numerics, Numerics):
            raise InputError(f"numerics: {self.numerics!r} is not Numerics, expected Numerics(...)")

    @property
    def walls(self) -> tuple[Wall, Wall]:
        """(bottom, top) walls of a slit; (wall, wall) for a capillary."""
        return self.wall if isinstance(self.wall, tuple) else (self.wall, self.wall)

    @property
    def symmetric(self) -> bool:
        """True when one condition holds on every wall (half the section is solved)."""
        bottom, top = self.walls
        return bottom == top

    @property
    def debye_length(self) -> float:
        """Debye length of the bulk electrolyte, m."""
        return self.electrolyte.debye_length(self.solvent)

    def describe(self) -> str:
        """One-line description used in messages and reports."""
        g = self.geometry
        size = f"slit H = {g.height:.4g} m" if isinstance(g, Slit) else f"capillary a = {g.radius:.4g} m"
        ions = ", ".join(f"{ion.name} {ion.concentration:.4g} mol/m^3" for ion in self.electrolyte.ions)
        walls = []
        for w in (self.walls[:1] if self.symmetric else self.walls):
            walls.append(f"zeta = {w.zeta:.4g} V" if w.kind == "potential"
                         else f"sigma = {w.charge_density:.4g} C/m^2")
        return f"{size}; {ions}; wall {' / '.join(walls)}; model {self.model}"
