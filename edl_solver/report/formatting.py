"""Numbers for reading: significant digits without exponent noise, engineering prefixes, percentages, and the
plain names of the models. Shared by the text report, the figures and the command line.

SI values are converted here for reading only; nothing here computes physics.
"""

from __future__ import annotations

import math
from typing import Any

from edl_solver.report.units import NOISE

__all__ = ["MODEL_NAMES", "number", "percent", "prefixed", "scaled"]

#: Plain names of the models, for reports and figure titles.
MODEL_NAMES = {"pb": "nonlinear Poisson-Boltzmann", "dh": "linearised Debye-Hückel",
               "steric": "Poisson-Boltzmann with finite ion size (steric, lattice gas)"}
_PREFIXES = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}


def number(value: float, digits: int = 3) -> str:
    """``value`` with ``digits`` significant digits, without exponent noise for ordinary sizes."""
    if not math.isfinite(value):
        return "undefined"
    text = f"{value:.{digits}g}"
    if "e+" in text and abs(value) < 1e6:  # 2340, not 2.34e+03
        return f"{float(text):.0f}"
    return text


def scaled(value: Any, scale: float, unit: str, digits: int = 3) -> str:
    """A value, or a (bottom, top) pair, multiplied by ``scale`` and followed by ``unit``."""
    if isinstance(value, tuple):
        return f"bottom {scaled(value[0], scale, unit, digits)}, top {scaled(value[1], scale, unit, digits)}"
    value = float(value)
    return number(value * scale, digits) + (f" {unit}" if math.isfinite(value) else "")


def prefixed(value: float, unit: str, digits: int = 3) -> str:
    """``value`` with the SI prefix that puts its mantissa in [1, 1000): 1.2e-11 A -> '12 pA'.

    Parameters
    ----------
    value : float
        In the unprefixed ``unit``.
    unit : str
        E.g. "A", "V/m" (the prefix applies to the first symbol, so avoid "m^3").
    digits : int
        Significant digits.

    Returns
    -------
    str
        "undefined" for NaN or infinity.
    """
    value = float(value)
    if not math.isfinite(value):
        return "undefined"
    if value == 0.0:
        return f"0 {unit}"
    exponent = min(max(3 * math.floor(math.log10(abs(value)) / 3), -18), 9)
    mantissa = value / 10.0**exponent
    if abs(float(f"{mantissa:.{digits}g}")) >= 1000.0 and exponent < 9:  # rounding reached the next prefix
        exponent += 3
        mantissa /= 1000.0
    return f"{mantissa:.{digits}g} {_PREFIXES[exponent]}{unit}"


def percent(fraction: float, signed: bool = False) -> str:
    """A fraction in per cent to 3 significant figures, '+' before a positive one when ``signed``:
    0.0236 -> '+2.36 %'; 0 below round-off (``units.NOISE``). The thin-layer verdict quotes this same text."""
    if not math.isfinite(fraction):
        return "undefined"
    if abs(fraction) < NOISE:  # round-off of a zero (e.g. a profile deviation between opposite walls)
        return "0 %"
    text = number(100.0 * fraction)  # 2360, not 2.36e+03
    return f"{'+' if signed and fraction > 0 else ''}{text} %"
