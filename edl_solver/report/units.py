"""The one place that chooses how each quantity is shown: its unit for a geometry, one SI prefix per quantity,
three significant figures, and round-off noise written as 0. The text report, ``edl transport``'s lines and
the figures' axis labels all ask here, so a quantity reads in one unit everywhere.

The convention (values stay SI in results and files; this is for reading only):

- Potentials and voltages in mV, charge densities in mC/m², velocities in µm/s, sizes in nm, concentrations
  in mM: fixed units, the ones a lab quotes.
- Everything else takes an engineering prefix chosen once per quantity (from the largest value shown of it),
  so the values of one quantity, in a row, a column or a legend, share a unit: 4.54 µA/m and 0.0136 µA/m,
  not 4.54 µA/m and 13.6 nA/m.
- A slit is per metre of width: currents A/m, conductances S/m, powers W/m, flow rates µm²/s (µm³/s per µm
  of width). A capillary is per channel: A, S, W, and flow rates in litres per second (1 fL = 1 µm³).
- A conductance per unit length (conductance × length, what a section gives; S·m for a capillary) is shown
  as the conductance of a channel 1 µm long: divide by the length in µm for another channel.
- A value below 1e-10 of its quantity's natural scale in the same case (the slip velocity for a velocity,
  the largest current for a current, ...) is round-off of a zero and is written 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from edl_solver.inputs.geometry import Geometry

__all__ = ["NOISE", "REFERENCE_LENGTH", "Shown", "Unit", "show", "significant", "unit_of"]

#: Values below this fraction of their natural scale are round-off of a zero.
NOISE = 1e-10
#: The length of the channel whose conductance stands for a conductance per unit length, m.
REFERENCE_LENGTH = 1e-6
_PREFIXES = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


@dataclass(frozen=True)
class Unit:
    """How one quantity is shown: SI value x ``factor`` is in ``symbol`` + ``after``; ``symbol`` takes an
    engineering prefix when ``prefixed`` (the unit is fixed otherwise)."""

    symbol: str
    after: str = ""
    factor: float = 1.0
    prefixed: bool = True


_FIXED = {
    "potential": Unit("mV", factor=1e3, prefixed=False),
    "charge_density": Unit("mC/m²", factor=1e3, prefixed=False),
    "velocity": Unit("µm/s", factor=1e6, prefixed=False),
    "size": Unit("nm", factor=1e9, prefixed=False),
    "concentration": Unit("mM", prefixed=False),
    "fraction": Unit("%", factor=100.0, prefixed=False),
    "ratio": Unit("", prefixed=False),
    "length": Unit("m"),
    "field": Unit("V", "/m"),
    "pressure_gradient": Unit("Pa", "/m"),
    "pressure": Unit("Pa"),
    "streaming_potential": Unit("V", "/MPa", factor=1e6),
    "pump_pressure": Unit("Pa", "/V"),
}
#: Extensive quantities: (per metre of slit width, per capillary).
_EXTENSIVE = {
    "current": (Unit("A", "/m"), Unit("A")),
    "conductance": (Unit("S", "/m"), Unit("S")),
    "conductance_length": (Unit("S", "/m", 1.0 / REFERENCE_LENGTH), Unit("S", factor=1.0 / REFERENCE_LENGTH)),
    "power": (Unit("W", "/m"), Unit("W")),
    "flow_rate": (Unit("µm²/s", factor=1e12, prefixed=False), Unit("L/s", factor=1e3)),
}


def unit_of(quantity: str, geometry: Geometry | None = None) -> Unit:
    """The display unit of ``quantity`` (a name of this module's tables) for ``geometry`` (extensive
    quantities: per metre of width for a slit, per channel else; None: per channel)."""
    if quantity in _FIXED:
        return _FIXED[quantity]
    slit, capillary = _EXTENSIVE[quantity]
    return slit if geometry is not None and geometry.extent == "per_width" else capillary


def significant(value: float, digits: int = 3) -> str:
    """``value`` to ``digits`` significant figures, written out below a million: 2340, not 2.34e+03."""
    if not math.isfinite(value):
        return "undefined"
    if value == 0.0:
        return "0"
    text = f"{value:.{digits}g}"
    if "e+" in text and abs(value) < 1e6:
        return f"{float(text):.0f}"
    return text


@dataclass(frozen=True)
class Shown:
    """One quantity as shown: a scale from SI, its unit text, and the natural scale below which is noise."""

    scale: float
    unit: str
    natural: float
    digits: int = 3

    def value(self, value: float) -> str:
        """The number without its unit: 3 significant figures, 0 for round-off noise."""
        value = float(value)
        if not math.isfinite(value):
            return "undefined"
        if self.is_zero(value):
            return "0"
        return significant(value * self.scale, self.digits)

    def is_zero(self, value: float) -> bool:
        """Whether ``value`` (SI) is round-off of a zero: below ``NOISE`` times the natural scale."""
        return abs(float(value)) < NOISE * self.natural

    def __call__(self, value: float, signed: bool = False) -> str:
        """The number and its unit ('4.54 µA/m'); '+' before a positive one when ``signed``."""
        text = self.value(value)
        if signed and text not in ("0", "undefined") and not text.startswith("-"):
            text = "+" + text
        return text if text == "undefined" or not self.unit else f"{text} {self.unit}"


def show(quantity: str, geometry: Geometry | None, *values: float, natural: float = 0.0, digits: int = 3) -> Shown:
    """How to show ``values`` of one quantity: one prefix for all of them, chosen from the largest that is not
    noise; ``natural`` (SI) is the quantity's natural scale in the case (the largest |value| if larger)."""
    unit = unit_of(quantity, geometry)
    finite = [abs(float(v)) for v in values if math.isfinite(float(v))]
    natural = max([abs(natural), *finite], default=0.0)
    shown = [v for v in finite if v >= NOISE * natural and v > 0.0]
    if not unit.prefixed or not shown:
        return Shown(unit.factor, unit.symbol + unit.after, natural, digits)
    largest = max(shown) * unit.factor
    exponent = min(max(3 * math.floor(math.log10(largest) / 3), -18), 12)
    if abs(float(f"{largest / 10.0**exponent:.{digits}g}")) >= 1000.0 and exponent < 12:  # 999.7 -> 1.00 k
        exponent += 3
    return Shown(unit.factor / 10.0**exponent, f"{_PREFIXES[exponent]}{unit.symbol}{unit.after}", natural, digits)
