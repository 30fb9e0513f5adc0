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
from collections.abc import Callable
from dataclasses import dataclass
from typing import ClassVar, Literal

import numpy as np

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
    #: A slit has two walls that may differ (a (bottom, top) pair): their names in case files, paths and files.
    wall_count: ClassVar[int] = 2
    wall_names: ClassVar[tuple[str, str]] = ("bottom", "top")
    #: The walls in reports: in a pair of values, and as line titles (each wall, then every wall).
    wall_words: ClassVar[tuple[str, str]] = ("bottom", "top")
    wall_titles: ClassVar[tuple[str, str, str]] = ("Bottom wall", "Top wall", "Both walls")
    #: The size inputs (case-file keys) of this geometry.
    size_keys: ClassVar[tuple[str, ...]] = ("height",)
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

    def size_text(self, show: Callable[[float], str]) -> str:
        """The size in words for reports, each length shown by ``show``: 'height H = 30 nm'."""
        return f"height H = {show(self.height)}"

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
    wall_names: ClassVar[tuple[str, str]] = ("bottom", "top")
    wall_words: ClassVar[tuple[str, str]] = ("bottom", "top")
    wall_titles: ClassVar[tuple[str, str, str]] = ("Wall", "Wall", "Wall")
    size_keys: ClassVar[tuple[str, ...]] = ("radius",)
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

    def size_text(self, show: Callable[[float], str]) -> str:
        """The size in words for reports: 'radius a = 15 nm'."""
        return f"radius a = {show(self.radius)}"

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


@dataclass(frozen=True)
class Rectangle:
    """Rectangular channel of width W and height H (quantities per channel).

    The section spans y from 0 to W (across the width) and z from 0 to H (across the height); the walls come in
    two pairs, z = 0, H (top and bottom) and y = 0, W (the sides), each pair with one condition. Lengths of the
    dimensionless problem are in h = min(W, H) / 2, so kappa h is the Debye parameter of the narrower direction.

    Parameters
    ----------
    width, height : float or str
        W and H, m (or "1 um", "20 nm"), each from 0.1 nm to 1 m (``inputs.domain``).
    """

    width: float | str
    height: float | str

    kind: ClassVar[str] = "rectangle"
    #: The size that sets kappa h (maps and domain messages): the height; both sizes are inputs (``size_keys``).
    size_name: ClassVar[str] = "height"
    size_path: ClassVar[str] = "geometry.height"
    size_keys: ClassVar[tuple[str, ...]] = ("width", "height")
    size_symbol: ClassVar[str] = "H"
    range_text: ClassVar[str] = "y from 0 to W (across the width), z from 0 to H (across the height)"
    coordinate_name: ClassVar[str] = "y"
    coordinate_text: ClassVar[str] = "y/W and z/H (0 to 1 across the width and the height)"
    metric: ClassVar[int] = 0
    extent: ClassVar[Extent] = "per_channel"
    #: Two wall pairs that may differ: top and bottom (z = 0, H), and the sides (y = 0, W).
    wall_count: ClassVar[int] = 2
    wall_names: ClassVar[tuple[str, str]] = ("top_bottom", "sides")
    wall_words: ClassVar[tuple[str, str]] = ("top/bottom", "sides")
    wall_titles: ClassVar[tuple[str, str, str]] = ("Top and bottom walls", "Side walls", "All four walls")
    kappa_symbol: ClassVar[str] = "κh"
    kappa_text: ClassVar[str] = "κh (half the smaller side / Debye length)"
    centre_text: ClassVar[str] = "potential at the centre"
    origin_text: ClassVar[str] = "a corner"

    def __post_init__(self) -> None:
        for name, unit_text in (("width", "a positive width in m"), ("height", "a positive height in m")):
            value = getattr(self, name)
            size = to_positive_si(value, "m", f"geometry.{name}", unit_text)
            check_size(value, size, f"geometry.{name}")
            assign(self, name, size)

    @property
    def size(self) -> float:
        """The smaller side min(W, H), m: twice the length unit h."""
        return min(self.width, self.height)

    @property
    def half_size(self) -> float:
        """h = min(W, H) / 2, m: the length unit of the rectangle's dimensionless problem."""
        return 0.5 * min(self.width, self.height)

    @property
    def across(self) -> float:
        """The smaller wall-to-wall distance min(W, H), m."""
        return min(self.width, self.height)

    @property
    def aspect_ratio(self) -> float:
        """W / H."""
        return self.width / self.height

    @property
    def area(self) -> float:
        """Section area W H, m^2."""
        return self.width * self.height

    @property
    def perimeter(self) -> float:
        """Wetted perimeter 2 (W + H), m."""
        return 2.0 * (self.width + self.height)

    @property
    def top_bottom_share(self) -> float:
        """The top and bottom walls' share w of the mean velocity that wall slip velocities drive across the section
        (Stokes flow without body force: u harmonic, u_tb on z = 0, H and u_s on y = 0, W; mean u = w u_tb +
        (1 - w) u_s): the mean of the harmonic function that is 1 on the top and bottom walls and 0 on the sides,
        ``harmonic_share`` (derived here by separation of variables)."""
        return harmonic_share(self.width, self.height)

    def size_text(self, show: Callable[[float], str]) -> str:
        """The size in words for reports: 'width W = 200 nm and height H = 40 nm (W/H = 5)'."""
        return f"width W = {show(self.width)} and height H = {show(self.height)} (W/H = {self.aspect_ratio:.4g})"

    def describe(self) -> str:
        """Short text for messages: 'rectangle W = 1e-06 m, H = 2e-08 m'."""
        return f"rectangle W = {self.width:.4g} m, H = {self.height:.4g} m"

    def label(self) -> str:
        """Text for figure titles: 'Rectangle 1000 × 20 nm (W × H)'."""
        return f"Rectangle {self.width * 1e9:.4g} × {self.height * 1e9:.4g} nm (W × H)"

    def poiseuille_per_gradient(self, viscosity: float, slip: tuple[float, float]) -> float:
        """Flow rate per unit solvent force -dp/dx of Poiseuille flow in a rectangular duct (no slip), m^4/(Pa s):
        Q = (a b^3 / 12 eta)[1 - (192 b / (pi^5 a)) sum over odd n of tanh(n pi a / 2 b) / n^5], a >= b the sides
        (the Fourier series of the duct flow; White, Viscous Fluid Flow, 3rd ed. 2006, eq. 3-48, from memory)."""
        return duct_flow_per_gradient(self.width, self.height, viscosity)

    def access_resistance(self, conductivity: float) -> float | None:
        """Access resistance of one end: None, no closed form is used for a rectangular opening."""
        return None

    def to_mapping(self) -> dict[str, object]:
        """The case-file table of this geometry."""
        return {"kind": self.kind, "width": self.width, "height": self.height}


def duct_flow_per_gradient(width: float, height: float, viscosity: float) -> float:
    """Poiseuille flow rate per unit -dp/dx of a W x H rectangular duct, m^4/(Pa s) (``Rectangle``'s closed form).

    With a >= b the two sides, Q = (a b^3 / 12 eta)[1 - (192 b / (pi^5 a)) sum_{n odd} tanh(n pi a / 2b) / n^5]
    (White, Viscous Fluid Flow, 3rd ed. 2006, eq. 3-48, from memory). The terms fall as n^-5: the sum is taken
    until tanh is 1 to round-off (n pi a / 2b > 20), and the rest in closed form,
    sum_{n odd >= N} n^-5 = zeta(5, N/2) / 32 (Hurwitz).
    """
    from scipy.special import zeta

    a, b = max(width, height), min(width, height)
    last = max(1, int(np.ceil(40.0 * b / (np.pi * a))) | 1)  # odd, with tanh(n pi a / 2b) = 1 beyond it
    n = np.arange(1, last + 1, 2, dtype=float)
    total = float(np.sum(np.tanh(n * np.pi * a / (2.0 * b)) / n**5)) + float(zeta(5.0, (last + 2) / 2.0)) / 32.0
    return a * b**3 / (12.0 * viscosity) * (1.0 - 192.0 * b / (np.pi**5 * a) * total)


def harmonic_share(width: float, height: float) -> float:
    """Mean over a W x H rectangle of the harmonic function phi that is 1 on the walls z = 0, H and 0 on y = 0, W.

    With the origin at the centre, phi = sum_{n odd} (4 / n pi) (-1)^((n-1)/2) cos(n pi y / W) cosh(n pi z / W) /
    cosh(n pi H / 2W) (a square wave in y on z = +-H/2, zero on y = +-W/2; separation of variables, derived here), so
    mean phi = S(W, H) = sum_{n odd} 16 W tanh(n pi H / 2W) / (n^3 pi^3 H). The terms fall as n^-3 once tanh is 1,
    but only after n ~ W/H: a flat rectangle (W > H) takes 1 - S(H, W), the share of the other pair, whose terms
    saturate at once. The sum runs until tanh is 1 to round-off and the rest is closed,
    sum_{n odd >= N} n^-3 = zeta(3, N/2) / 8 (Hurwitz).
    """
    from scipy.special import zeta

    if width > height:
        return 1.0 - harmonic_share(height, width)
    ratio = height / width
    last = max(1, int(np.ceil(40.0 / (np.pi * ratio))) | 1)  # odd; tanh(n pi H / 2W) = 1 beyond it
    n = np.arange(1, last + 1, 2, dtype=float)
    total = float(np.sum(np.tanh(n * np.pi * ratio / 2.0) / n**3)) + float(zeta(3.0, (last + 2) / 2.0)) / 8.0
    return 16.0 / (np.pi**3 * ratio) * total


Geometry = Slit | Capillary | Rectangle
#: Every geometry by its case-file ``kind``.
GEOMETRIES: dict[str, type[Slit] | type[Capillary] | type[Rectangle]] = {
    "slit": Slit, "capillary": Capillary, "rectangle": Rectangle}


def extent_unit(units: str | tuple[str, str], geometry: Geometry) -> str:
    """The unit of an extensive value for this geometry: ``units`` is (per unit width, per channel), or one
    unit that holds for both."""
    if isinstance(units, str):
        return units
    return units[0] if geometry.extent == "per_width" else units[1]
