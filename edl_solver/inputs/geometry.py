"""Cross-sections: each geometry carries what differs between geometries, so that no other module needs
to ask which one it has.

A geometry knows its size and how it is named (the input path, the symbol of κ times its half-size, the
coordinate across it), its area and wetted perimeter, the metric of its cross-section (planar or
axisymmetric), whether its values are per unit width or per channel, and the closed forms that depend on
shape. Conventions (README): slit of full height H, y from 0 (bottom wall) to H (top wall), values per
unit width; capillary of radius a, r from 0 (axis) to a, values per channel.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar, Literal

from edl_solver.inputs.domain import check_size
from edl_solver.inputs.frozen import assign
from edl_solver.inputs.units import to_positive_si

#: How extensive values (flow rates, currents, conductances) are counted: per metre of slit width, or per
#: channel.
Extent = Literal["per_width", "per_channel"]


@dataclass(frozen=True)
class Slit:
    """Planar slit of full height H between two parallel walls (quantities per unit width).

    Parameters
    ----------
    height : float or str
        Full wall-to-wall height H, m (or "50 nm"), from 0.1 nm to 1 m (``inputs.domain``).
    """

    height: float | str

    kind: ClassVar[str] = "slit"
    #: Name of the size input, and its dotted path (sweeps, maps, case files).
    size_name: ClassVar[str] = "height"
    size_path: ClassVar[str] = "geometry.height"
    #: Symbol of the size, and where the coordinate across the section runs (reports).
    size_symbol: ClassVar[str] = "H"
    range_text: ClassVar[str] = "y from 0 (bottom wall) to H (top wall)"
    #: Coordinate across the section and its range.
    coordinate_name: ClassVar[str] = "y"
    coordinate_text: ClassVar[str] = "y/H (0 bottom wall, 1 top wall)"
    #: Exponent m of the cross-section metric r^m (0 planar).
    metric: ClassVar[int] = 0
    extent: ClassVar[Extent] = "per_width"
    #: A slit has two walls that may differ (a (bottom, top) pair).
    wall_count: ClassVar[int] = 2
    #: kappa times the half-size: symbol and words.
    kappa_symbol: ClassVar[str] = "κh"
    kappa_text: ClassVar[str] = "κh (half-height / Debye length)"
    centre_text: ClassVar[str] = "potential at the mid-plane"
    #: Where the coordinate across the section starts (its 0), for axis labels.
    origin_text: ClassVar[str] = "the bottom wall"

    def __post_init__(self) -> None:
        size = to_positive_si(self.height, "m", "geometry.height", "a positive height in m")
        check_size(self.height, size, "geometry.height")
        assign(self, "height", size)

    @property
    def size(self) -> float:
        """The size the user gives: full height H, m."""
        return self.height

    @property
    def half_size(self) -> float:
        """Half-height h = H/2, m: the length unit of the slit's dimensionless problem."""
        return 0.5 * self.height

    @property
    def across(self) -> float:
        """Wall-to-wall distance H, m."""
        return self.height

    @property
    def area(self) -> float:
        """Section area per unit width, H (m^2/m)."""
        return self.height

    @property
    def perimeter(self) -> float:
        """Wetted perimeter per unit width: the two walls, 2 (m/m)."""
        return 2.0

    def describe(self) -> str:
        """Short text for messages: 'slit H = 3e-08 m'."""
        return f"slit H = {self.height:.4g} m"

    def label(self) -> str:
        """Text for figure titles: 'Slit H = 30 nm'."""
        return f"Slit H = {self.height * 1e9:.4g} nm"

    def poiseuille_per_gradient(self, viscosity: float, slip: tuple[float, float]) -> float:
        """Flow rate per unit solvent force -dp/dx of plane Poiseuille flow with Navier slip, m^3/(Pa s) per
        unit width.

        With slip lengths b1, b2: u = (G / 2 eta)(-y^2 + C y + b1 C), C = H (H + 2 b2)/(H + b1 + b2), so
        Q = (G / 2 eta)(-H^3/3 + C (H^2/2 + b1 H)) (H^3 G / 12 eta without slip; plane Poiseuille flow).
        """
        h = self.height
        b1, b2 = slip
        c = h * (h + 2.0 * b2) / (h + b1 + b2)
        return (-h**3 / 3.0 + c * (h * h / 2.0 + b1 * h)) / (2.0 * viscosity)

    def access_resistance(self, conductivity: float) -> float | None:
        """Access resistance of one end opening into a reservoir: None, since a slit's grows without bound with
        the reservoir's size (two-dimensional spreading)."""
        return None

    def to_mapping(self) -> dict[str, object]:
        """The case-file table of this geometry."""
        return {"kind": self.kind, "height": self.height}


@dataclass(frozen=True)
class Capillary:
    """Cylindrical capillary of radius a (axisymmetric).

    Parameters
    ----------
    radius : float or str
        Radius a, m (or "20 nm"), from 0.1 nm to 1 m (``inputs.domain``).
    """

    radius: float | str

    kind: ClassVar[str] = "capillary"
    size_name: ClassVar[str] = "radius"
    size_path: ClassVar[str] = "geometry.radius"
    size_symbol: ClassVar[str] = "a"
    range_text: ClassVar[str] = "r from 0 (axis) to a (wall)"
    coordinate_name: ClassVar[str] = "r"
    coordinate_text: ClassVar[str] = "r/a (0 axis, 1 wall)"
    metric: ClassVar[int] = 1
    extent: ClassVar[Extent] = "per_channel"
    wall_count: ClassVar[int] = 1
    kappa_symbol: ClassVar[str] = "κa"
    kappa_text: ClassVar[str] = "κa (radius / Debye length)"
    centre_text: ClassVar[str] = "potential on the axis"
    origin_text: ClassVar[str] = "the axis"

    def __post_init__(self) -> None:
        size = to_positive_si(self.radius, "m", "geometry.radius", "a positive radius in m")
        check_size(self.radius, size, "geometry.radius")
        assign(self, "radius", size)

    @property
    def size(self) -> float:
        """The size the user gives: radius a, m."""
        return self.radius

    @property
    def half_size(self) -> float:
        """Radius a, m: the length unit of the capillary's dimensionless problem."""
        return self.radius

    @property
    def across(self) -> float:
        """Wall-to-wall distance (diameter) 2a, m."""
        return 2.0 * self.radius

    @property
    def area(self) -> float:
        """Section area pi a^2, m^2."""
        return math.pi * self.radius**2

    @property
    def perimeter(self) -> float:
        """Wetted perimeter 2 pi a, m."""
        return 2.0 * math.pi * self.radius

    def describe(self) -> str:
        """Short text for messages: 'capillary a = 1.5e-08 m'."""
        return f"capillary a = {self.radius:.4g} m"

    def label(self) -> str:
        """Text for figure titles: 'Capillary a = 15 nm'."""
        return f"Capillary a = {self.radius * 1e9:.4g} nm"

    def poiseuille_per_gradient(self, viscosity: float, slip: tuple[float, float]) -> float:
        """Flow rate per unit solvent force -dp/dx of Hagen-Poiseuille flow with Navier slip b (the second of
        ``slip``), m^4/(Pa s): Q = pi a^4 G (1 + 4 b / a) / (8 eta)."""
        a = self.radius
        return math.pi * a**4 * (1.0 + 4.0 * slip[1] / a) / (8.0 * viscosity)

    def access_resistance(self, conductivity: float) -> float | None:
        """Access resistance of one end opening into a reservoir of conductivity K (S/m), 1/(4 K a) ohm (Hall
        1975, J. Gen. Physiol. 66, 531, from memory)."""
        return 1.0 / (4.0 * conductivity * self.radius)

    def to_mapping(self) -> dict[str, object]:
        """The case-file table of this geometry."""
        return {"kind": self.kind, "radius": self.radius}


Geometry = Slit | Capillary
#: Every geometry by its case-file ``kind``.
GEOMETRIES: dict[str, type[Slit] | type[Capillary]] = {"slit": Slit, "capillary": Capillary}


def extent_unit(units: str | tuple[str, str], geometry: Slit | Capillary) -> str:
    """The unit of an extensive value for this geometry: ``units`` is (per unit width, per channel), or one
    unit that holds for both."""
    if isinstance(units, str):
        return units
    return units[0] if geometry.extent == "per_width" else units[1]
