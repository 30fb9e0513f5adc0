"""Conversion of user inputs (SI numbers or strings with units) to SI floats.

Strings such as ``"1 mM"``, ``"-50 mV"`` or ``"25 degC"`` are parsed, never evaluated: the text must be
``NUMBER [UNIT]``, where NUMBER is one decimal number with an optional exponent (read by ``float``) and UNIT
is unit names with optional prefixes (``µ`` or ``u`` for micro) joined by ``*``, ``/`` or a space, each with
an optional integer power (``^-2``, ``**2``, ``²``). This grammar is checked here before pint sees the text;
pint then converts only the checked unit expression, through one ``UnitRegistry`` imported and built on first
use only (building it costs ~0.1 s) and cached for the life of the process. Names pint defines as constants
(``pi``, ``e``, ``c``, ``k``...) are not units and are refused. Plain numbers are taken to be SI already and
are passed through.
"""

from __future__ import annotations

import math
import re
from functools import cache, lru_cache
from numbers import Real
from typing import Any

from edl_solver.errors import InputError

__all__ = ["to_positive_si", "to_si"]

# (SI unit, quantity kind with article, SI unit name) of the kinds of input this package takes;
# only used to word error messages.
_KINDS: tuple[tuple[str, str, str], ...] = (
    ("m", "a length", "metre"),
    ("m^2", "an area", "square metre"),
    ("m^3", "a volume", "cubic metre"),
    ("s", "a time", "second"),
    ("K", "a temperature", "kelvin"),
    ("V", "an electric potential", "volt"),
    ("V/m", "an electric field", "volt per metre"),
    ("C", "an electric charge", "coulomb"),
    ("C/m^2", "a surface charge density", "coulomb per square metre"),
    ("C/m^3", "a volume charge density", "coulomb per cubic metre"),
    ("A", "an electric current", "ampere"),
    ("S/m", "an electrical conductivity", "siemens per metre"),
    ("F/m", "a permittivity", "farad per metre"),
    ("F/m^2", "a capacitance per area", "farad per square metre"),
    ("mol/m^3", "a concentration", "mole per cubic metre"),
    ("Pa", "a pressure", "pascal"),
    ("Pa/m", "a pressure gradient", "pascal per metre"),
    ("Pa*s", "a dynamic viscosity", "pascal second"),
    ("m^2/s", "a diffusivity", "square metre per second"),
    ("m/s", "a velocity", "metre per second"),
    ("m^3/s", "a volume flow rate", "cubic metre per second"),
    ("kg/m^3", "a mass density", "kilogram per cubic metre"),
)

# A plain decimal number, optionally followed by a unit expression. The number is parsed by
# float() rather than by pint so that no arithmetic is ever evaluated from user text. nan and inf
# are matched (to be refused as not finite) only as whole words, so "nanometer" is not "nan".
_QUANTITY = re.compile(
    r"\s*(?P<number>[+-]?(?:(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?|(?:nan|inf(?:inity)?)(?![^\W\d])))"
    r"\s*(?P<unit>.*?)\s*",
    re.IGNORECASE | re.DOTALL,
)
# Characters users paste from documents, mapped to what the pint parser reads.
_TRANSLATE = str.maketrans({"\u2212": "-", "\u2013": "-", "\u00b7": "*", "\u22c5": "*"})
_SUPERSCRIPTS = "\u207a\u207b\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079"  # ⁺⁻⁰¹²³⁴⁵⁶⁷⁸⁹
_FROM_SUPERSCRIPT = str.maketrans(_SUPERSCRIPTS, "+-0123456789")
# One token of a unit expression, after optional spaces: a unit name (letters, "_" or "°"; "%" and "‰"
# alone), an integer power written ^n, **n or in superscripts (no space before those), or * or /.
_UNIT_TOKEN = re.compile(
    rf"(?P<space>\s*)(?:(?P<name>(?:[^\W\d{_SUPERSCRIPTS}]|°)+|%|‰)"
    r"|(?:\^|\*\*)\s*(?P<power>[+-]?\d{1,3})(?!\d)"
    rf"|(?<=\S)(?P<superscript>[\u207a\u207b]?[{_SUPERSCRIPTS[2:]}]{{1,3}})"
    r"|(?P<operator>[*/]))"
)
# Dimensionless units that are units, not numbers in disguise (pint's names).
_DIMENSIONLESS_UNITS = frozenset({"percent", "permille", "ppm"})
# Of the names pint defines among its constants, those that are units of measure.
_UNITS_AMONG_CONSTANTS = frozenset({"standard_atmosphere"})


@lru_cache(maxsize=1)
def _registry() -> Any:
    """Build the process-wide pint registry (lazily: pint is slow to import and to build).

    ``autoconvert_offset_to_baseunit`` lets ``"25 degC"`` convert to 298.15 K. Molar is checked
    explicitly because ``M`` must mean mol/L here, never the mega prefix.
    """
    import pint

    registry = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    if not _is_molar(registry):
        registry.define("molar = mole / liter = M")
    if not _is_molar(registry):  # pragma: no cover - guards against a future pint change
        raise RuntimeError("pint registry does not read 'M' as mol/L; cannot parse concentrations")
    return registry


def _is_molar(registry: Any) -> bool:
    """True when ``"1 mM"`` and ``"1 M"`` parse as 1 and 1000 mol/m^3."""
    try:
        milli = registry.Quantity(1.0, "mM").to("mol/m^3").magnitude
        molar = registry.Quantity(1.0, "M").to("mol/m^3").magnitude
    except (AttributeError, TypeError, ValueError):  # undefined, or 'M' is not a concentration
        return False
    return math.isclose(milli, 1.0) and math.isclose(molar, 1000.0)


@lru_cache(maxsize=512)
def _parse_unit(text: str) -> Any:
    """Parse a unit expression once; pint Units are immutable, so caching is safe."""
    return _registry().parse_units(text)


def _unit_expression(text: str) -> tuple[str, tuple[str, ...]] | None:
    """Check ``text`` against the unit grammar: (the expression in pint's syntax, its unit names), or None.

    Only names, ``*``, ``/`` and integer powers can pass, so pint never sees a number or an operator
    outside the grammar ("+ 1 nm", "nm 1", "nm^0.5" and "(nm)" are None).
    """
    parts: list[str] = []
    names: list[str] = []
    position, want_name, powered = 0, True, False
    while position < len(text):
        token = _UNIT_TOKEN.match(text, position)
        if token is None:
            return None
        position = token.end()
        if token["name"]:
            name = token["name"]
            if not (name in ("%", "‰") or all(char.isalpha() or char in "_°" for char in name)):
                return None  # other word characters, e.g. the vulgar fraction in "m½"
            if not want_name:
                if not token["space"]:
                    return None
                parts.append("*")  # a space between unit names multiplies them ("mPa s")
            parts.append(name)
            names.append(name)
            want_name, powered = False, False
        elif token["operator"]:
            if want_name:
                return None
            parts.append(token["operator"])
            want_name = True
        else:
            if want_name or powered:
                return None
            power = token["power"] or token["superscript"].translate(_FROM_SUPERSCRIPT)
            parts.append(f"**{int(power)}")
            powered = True
    return None if want_name else ("".join(parts), tuple(names))


@cache
def _constant_names() -> frozenset[str]:
    """pint's names of the constants it defines (``pi``, ``elementary_charge``, ``speed_of_light``...).

    Read from pint's own constants file so that every alias (``π``, ``e``, ``c``, ``k``, ``R``...) is
    covered; the few below guard against that file moving in a future pint.
    """
    from importlib.resources import files

    try:
        text = files("pint").joinpath("constants_en.txt").read_text(encoding="utf-8")
    except (OSError, ModuleNotFoundError):  # pragma: no cover - pint without its definition files
        text = ""
    names = {line.split("=", 1)[0].strip() for line in text.splitlines()
             if "=" in line.split("#", 1)[0] and not line.lstrip().startswith("@")}
    return frozenset(names) | {"pi", "eulers_number", "ln10", "speed_of_light", "elementary_charge",
                               "boltzmann_constant", "planck_constant", "avogadro_number", "avogadro_constant"}


@lru_cache(maxsize=256)
def _name_problem(name: str) -> str | None:
    """None when ``name`` is a unit (with its prefix); else why not: ``""`` when unknown to pint, or a reason."""
    registry = _registry()
    try:
        candidates = registry.parse_unit_name(name)
    except Exception:  # pint raises several unrelated types on odd text
        return ""
    if not candidates:
        return ""
    for _, base, _ in candidates:  # pint may read a name more than one way ("Pa"); every reading must pass
        if base in _constant_names() and base not in _UNITS_AMONG_CONSTANTS:
            return f"{name!r} is a constant, not a unit"
        unit = registry.parse_units(base)
        if unit.dimensionless and base not in _DIMENSIONLESS_UNITS and registry.Quantity(1.0, unit).m_as("") != 1:
            return f"{name!r} is a number, not a unit"
    return None


@lru_cache(maxsize=512)
def _user_unit(text: str) -> tuple[Any, str]:
    """The pint Unit of a user's unit expression, or (None, why not: "" or " (reason)")."""
    expression = _unit_expression(text)
    if expression is None:
        return None, ""
    for name in expression[1]:
        problem = _name_problem(name)
        if problem is not None:
            return None, f" ({problem})" if problem else ""
    try:
        return _parse_unit(expression[0]), ""
    except Exception:  # pint raises several unrelated types (e.g. on an offset unit in a product)
        return None, ""


@cache
def _kind_table() -> dict[Any, tuple[str, str]]:
    """Map each known dimensionality to (kind with article, SI unit name)."""
    table: dict[Any, tuple[str, str]] = {}
    for symbol, kind, name in _KINDS:
        table.setdefault(_parse_unit(symbol).dimensionality, (kind, name))
    return table


@cache
def _target(unit: str) -> tuple[Any, str]:
    """Parse the SI target unit and word what is expected, e.g. ``"a length in m"``."""
    if unit == "dimensionless":
        return _parse_unit(""), "a dimensionless number"
    try:
        parsed = _parse_unit(unit)
    except Exception as exc:
        raise ValueError(f"to_si: target unit {unit!r} is not a unit known to pint") from exc
    if parsed.dimensionless:
        return parsed, "a dimensionless number"
    kind = _kind_table().get(parsed.dimensionality)
    return parsed, f"{kind[0] if kind else 'a quantity'} in {unit}"


def _describe(parsed: Any) -> str:
    """Word the units a user gave, e.g. ``"volt (electric potential)"``."""
    if parsed.dimensionless:
        return f"{parsed} (dimensionless)"
    kind = _kind_table().get(parsed.dimensionality)
    if kind is None:
        return f"{parsed} (dimension {parsed.dimensionality})"
    article_kind, name = kind
    return f"{name} ({article_kind.split(' ', 1)[1]})"


def to_si(value: Any, unit: str, field: str) -> float:
    """Convert a number or a string with units to a float in the SI unit ``unit``.

    Parameters
    ----------
    value : int, float or str
        A number, taken to be in SI units already, or a string ``NUMBER [UNIT]`` such as ``"1 mM"``,
        ``"-50 mV"``, ``"-2 mC/m^2"``, ``"8 nm^-2"``, ``"25 degC"`` or ``"5 %"`` (see the module docstring).
        ``M`` means mol/L, ``mm`` means millimetre. A bare number string (``"0.05"``) is accepted only
        for dimensionless targets.
    unit : str
        The SI unit to convert to, e.g. ``"m"``, ``"mol/m^3"``, ``"Pa*s"`` or ``"dimensionless"``.
    field : str
        Name of the input, used in error messages.

    Returns
    -------
    float
        The value in ``unit``; finite.

    Raises
    ------
    InputError
        If ``value`` is a bool, None, not finite, not ``NUMBER [UNIT]`` (arithmetic, a second number,
        a constant such as ``pi``, a power that is not an integer), lacks a unit, or has a
        dimensionality other than that of ``unit``.
    """
    target, expected = _target(unit)
    if isinstance(value, bool) or value is None:
        raise InputError(f"{field}: {value!r} is not a number, expected {expected}")
    if isinstance(value, Real):
        number = float(value)
        if not math.isfinite(number):
            raise InputError(f"{field}: {value!r} is not finite, expected {expected}")
        return number
    if not isinstance(value, str):
        raise InputError(
            f"{field}: {value!r} has type {type(value).__name__}, expected {expected} "
            "(a number in SI units or a string with units)"
        )
    return _string_to_si(value, target, expected, field)


def _string_to_si(text: str, target: Any, expected: str, field: str) -> float:
    """Parse ``text`` as ``number [unit]`` and convert it to ``target``."""
    match = _QUANTITY.fullmatch(text.translate(_TRANSLATE))
    dimensionless_target = target.dimensionless
    not_a_quantity = "is not a number" if dimensionless_target else "is not a quantity with units"
    if match is None:
        raise InputError(f"{field}: {text!r} {not_a_quantity}, expected {expected}")
    number = float(match["number"])
    if not math.isfinite(number):
        raise InputError(f"{field}: {text!r} is not finite, expected {expected}")
    unit_text = match["unit"]
    if not unit_text:
        if dimensionless_target:
            return number
        raise InputError(f"{field}: {text!r} has no unit, expected {expected}")
    parsed, why_not = _user_unit(unit_text)
    if parsed is None:
        raise InputError(f"{field}: {text!r} {not_a_quantity}{why_not}, expected {expected}")
    if parsed.dimensionality != target.dimensionality:
        raise InputError(f"{field}: {text!r} has units of {_describe(parsed)}, expected {expected}")
    try:
        result = float(_registry().Quantity(number, parsed).to(target).magnitude)
    except (ArithmeticError, ValueError) as exc:  # e.g. overflow of huge exponents
        raise InputError(f"{field}: {text!r} cannot be converted, expected {expected}") from exc
    if not math.isfinite(result):
        raise InputError(f"{field}: {text!r} overflows in SI units, expected {expected}")
    # Unit factors such as 1e-3 carry binary round-off ("1 mM" -> 0.9999999999999999); the user wrote
    # at most 15 significant digits, so round the noise away.
    return float(f"{result:.15g}")


def to_positive_si(value: Any, unit: str, field: str, expected: str) -> float:
    """``to_si`` that also requires a strictly positive result.

    Raises
    ------
    InputError
        ``{field}: {value!r} is not positive, expected {expected}`` (or the unit errors of ``to_si``).
    """
    number = to_si(value, unit, field)
    if not number > 0.0:
        raise InputError(f"{field}: {value!r} is not positive, expected {expected}")
    return number
