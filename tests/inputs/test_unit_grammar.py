"""Unit strings are parsed, not evaluated: ``NUMBER [UNIT]`` and nothing else, on every path that takes them.

NUMBER is one decimal number with an optional exponent; UNIT is unit names (with prefixes, ``µ`` or ``u`` for
micro) joined by ``*``, ``/``, ``^`` or ``**`` with integer powers. Arithmetic, a second number, constants such
as ``pi``, parentheses and powers that are not integers are InputErrors naming the field and the text.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import loads_case
from edl_solver.inputs.units import to_si
from edl_solver.sweeping.file import load_sweep
from tests.helpers import SWEEP_BASE_TOML, run, write_sweep

# -- text that main evaluated as arithmetic, or as a number times a constant ------------------------------

# (text, SI unit of the field); every one of these returned a number before the grammar check.
EVALUATED = [
    ("1 + 1 nm", "m"),  # the three examples of the issue
    ("1 nm 1", "m"),
    ("1 pi nm", "m"),
    ("1+1nm", "m"),  # operators between numbers
    ("1 nm/1", "m"),
    ("1pi", "dimensionless"),
    ("1 π nm", "m"),  # constants
    ("1 ln10 nm", "m"),
    ("1 eulers_number nm", "m"),
    ("1 c s", "m"),  # speed of light times a second
    ("1 e", "C"),  # elementary charge
    ("2 k K", "J"),  # Boltzmann constant
    ("2 pi", "dimensionless"),
    ("1 + 1", "dimensionless"),
    ("0.05 1", "dimensionless"),
    ("1 (nm)", "m"),  # parentheses
    ("1 nm^(2)", "m^2"),
    ("1 m^0.5*m^0.5", "m"),  # powers that are not integers
    ("1 m**0.5 * m**0.5", "m"),
    ("1 m^1.0", "m"),
    ("1 m^1^1", "m"),  # a power of a power
    ("1 m per s", "m/s"),  # words, not operators
    ("1 nm//s", "m/s"),  # not an operator of the grammar
]


@pytest.mark.parametrize(("text", "unit"), EVALUATED)
def test_arithmetic_numbers_and_constants_are_rejected(text: str, unit: str) -> None:
    with pytest.raises(InputError, match=rf"^x: {re.escape(repr(text))} is not a (number|quantity with units)"
                                         r"( \(.*\))?, expected "):
        to_si(text, unit, "x")


# Already rejected before the grammar check (by pint; "nanometer" as not finite); kept so that the check does
# not let them in.
STILL_REJECTED = ["", "   ", "nm", "pi nm", "pi", "1 - 1 nm", "1 2 nm", "1e3 1e-3 nm", "1 (2) nm", "1 (2 nm)",
                  "1 nm^", "1 nm**", "1 nm*", "1 /nm", "1 nm*/s",
                  "1 nm^x", "1 (nm", "1 nm)", "1 ()", "nanometer", "1 nm; 2", "1 __import__", "1 nm 1e3"]


@pytest.mark.parametrize("text", STILL_REJECTED)
def test_malformed_text_stays_rejected(text: str) -> None:
    with pytest.raises(InputError, match=rf"^height: {re.escape(repr(text))} is not a quantity with units"):
        to_si(text, "m", "height")


def test_message_names_field_text_and_expected_form() -> None:
    with pytest.raises(InputError) as info:
        to_si("1 + 1 nm", "m", "geometry.height")
    assert str(info.value) == "geometry.height: '1 + 1 nm' is not a quantity with units, expected a length in m"
    with pytest.raises(InputError) as info:
        to_si("1 pi nm", "m", "geometry.height")
    assert str(info.value) == ("geometry.height: '1 pi nm' is not a quantity with units ('pi' is a constant, "
                               "not a unit), expected a length in m")


# -- the forms the documentation uses keep working ----------------------------------------------------------

# Factors from the SI prefix and unit definitions (BIPM SI Brochure, 9th ed., 2019; from memory):
# 1 M = 1 mol/L = 1000 mol/m^3, 1 bar = 1e5 Pa, 0 degC = 273.15 K, 1 P = 0.1 Pa s, 1 atm = 101325 Pa.
ACCEPTED = [
    ("5mM", "mol/m^3", 5.0),
    ("-2 mC/m^2", "C/m^2", -2e-3),
    ("1 bar/mm", "Pa/m", 1e8),
    ("25 degC", "K", 298.15),
    ("25 °C", "K", 298.15),
    ("5 %", "dimensionless", 0.05),
    ("8 nm^-2", "1/m^2", 8e18),
    ("8 nm**-2", "1/m^2", 8e18),
    ("8 nm⁻²", "1/m^2", 8e18),  # as the text report prints it
    ("-2 mC/m²", "C/m^2", -2e-3),
    ("10 mF/m^2", "F/m^2", 1e-2),
    ("1e-3 mol/m^3", "mol/m^3", 1e-3),
    ("1 mol/L", "mol/m^3", 1000.0),
    ("2 S/m", "S/m", 2.0),
    ("300 K", "K", 300.0),
    ("2 um", "m", 2e-6),
    ("2 µm", "m", 2e-6),  # micro sign U+00B5
    ("2 μm", "m", 2e-6),  # Greek mu U+03BC
    ("0.89 mPa*s", "Pa*s", 0.89e-3),
    ("0.89 mPa s", "Pa*s", 0.89e-3),  # a space between unit names multiplies them (SI Brochure)
    ("0.89 mPa·s", "Pa*s", 0.89e-3),
    ("0.89 cP", "Pa*s", 0.89e-3),
    ("1 atm", "Pa", 101325.0),
    ("1e-18 m^2/V^2", "m^2/V^2", 1e-18),
    ("-1 bar / mm", "Pa/m", -1e8),
    ("1 m ^ 2", "m^2", 1.0),
    ("+.5E+1 nm", "m", 5e-9),
    ("5. nm", "m", 5e-9),
    ("  -50mV  ", "V", -0.05),
    ("77 degF", "K", 298.15),
    ("10 kV/m", "V/m", 1e4),
    ("1 m/s/s", "m/s^2", 1.0),
]


@pytest.mark.parametrize(("text", "unit", "expected"), ACCEPTED)
def test_documented_forms_are_accepted(text: str, unit: str, expected: float) -> None:
    assert to_si(text, unit, "x") == pytest.approx(expected, rel=1e-12)


# -- every path goes through the same parser --------------------------------------------------------------


def test_api_constructors_reject_arithmetic() -> None:
    with pytest.raises(InputError, match=r"^geometry\.height: '1 \+ 1 nm' is not a quantity with units"):
        edl.Slit(height="1 + 1 nm")
    with pytest.raises(InputError, match=r"^geometry\.radius: '1 nm 1' is not a quantity with units"):
        edl.Capillary(radius="1 nm 1")
    with pytest.raises(InputError, match=r"'1 pi mM' is not a quantity with units"):
        edl.Electrolyte.from_ions({"K+": "1 pi mM", "Cl-": "1 mM"})


CASE = """\
field = "1 kV/m"
pressure_gradient = "1 + 1 Pa/m"

[geometry]
kind = "slit"
height = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-40 mV"
"""


def test_case_file_rejects_arithmetic() -> None:
    with pytest.raises(InputError, match=r"pressure_gradient: '1 \+ 1 Pa/m' is not a quantity with units"):
        loads_case(CASE)


@pytest.mark.parametrize(("flag", "value"), [("--slit", "1+1nm"), ("--pressure-gradient", "1+1Pa/m"),
                                             ("--zeta", "-40 pi mV")])
def test_cli_flags_reject_arithmetic(tmp_path: Path, flag: str, value: str) -> None:
    argv = ["--slit", "20nm", "--ion", "Na+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV", "--field", "1kV/m"]
    if flag in argv:
        argv[argv.index(flag) + 1] = value
    else:
        argv += [flag, value]
    out = tmp_path / "out.h5"
    code, stdout, err = run(["solve", *argv, "-o", str(out)])
    assert code == 2 and stdout == "" and not out.exists()
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    assert flag in err and repr(value) in err and "is not a quantity with units" in err


def test_sweep_file_axes_reject_arithmetic(tmp_path: Path) -> None:
    text = SWEEP_BASE_TOML + '\n[sweep.axes]\n"geometry.height" = ["10 nm", "1 nm 1"]\n'
    with pytest.raises(InputError, match=r"geometry\.height.*'1 nm 1' is not a quantity with units"):
        load_sweep(write_sweep(tmp_path, text))
    text = SWEEP_BASE_TOML + '\n[sweep.axes]\n"wall.zeta" = { linear = ["-1 pi mV", "10 mV"], points = 3 }\n'
    with pytest.raises(InputError, match=r"wall\.zeta.*'-1 pi mV' is not a quantity with units"):
        load_sweep(write_sweep(tmp_path, text))


def test_api_sweep_axes_reject_arithmetic() -> None:
    base = loads_case(CASE.replace("1 + 1 Pa/m", "0 Pa/m"))
    with pytest.raises(InputError, match=r"^axes\.geometry\.height: '1 \+ 1 nm' is not a quantity with units"):
        edl.sweep(base, {"geometry.height": ["10 nm", "1 + 1 nm"]})


# -- properties -------------------------------------------------------------------------------------------

# SI prefixes and units with their factors to SI (BIPM SI Brochure, 9th ed., 2019; from memory), computed here
# independently of pint: (symbol, factor to the SI unit, that SI unit).
PREFIXES = {"": 1.0, "k": 1e3, "M": 1e6, "c": 1e-2, "m": 1e-3, "µ": 1e-6, "u": 1e-6, "n": 1e-9, "p": 1e-12}
UNITS = [("m", 1.0, "m"), ("s", 1.0, "s"), ("g", 1e-3, "kg"), ("mol", 1.0, "mol"), ("A", 1.0, "A"),
         ("K", 1.0, "K"), ("V", 1.0, "V"), ("C", 1.0, "C"), ("F", 1.0, "F"), ("S", 1.0, "S"), ("J", 1.0, "J"),
         ("Pa", 1.0, "Pa"), ("bar", 1e5, "Pa"), ("L", 1e-3, "m^3"), ("M", 1e3, "mol/m^3")]
SUPERSCRIPTS = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


@st.composite
def unit_terms(draw: st.DrawFn) -> tuple[str, float, str]:
    """One prefixed unit with a power: (text, factor to SI, SI unit of the term)."""
    symbol, factor, si = draw(st.sampled_from(UNITS))
    prefix = draw(st.sampled_from([p for p in PREFIXES if not (p == "M" and symbol == "M")]))
    power = draw(st.sampled_from([1, 1, 2, 3, -1, -2, -3]))
    written = draw(st.sampled_from(["^", "**", " ^ ", "sup"]))
    text = prefix + symbol
    if power != 1 or draw(st.booleans()):
        text += str(power).translate(SUPERSCRIPTS) if written == "sup" else f"{written}{power}"
    return text, (PREFIXES[prefix] * factor) ** power, f"({si})**{power}"


@st.composite
def quantities(draw: st.DrawFn) -> tuple[str, float, str]:
    """``NUMBER UNIT`` from the grammar: (text, expected SI value, SI unit)."""
    number = draw(st.floats(min_value=-1e30, max_value=1e30, allow_nan=False).filter(lambda v: abs(v) > 1e-30
                                                                                          or v == 0.0))
    number_text = draw(st.sampled_from([repr(number), f"{number:.6e}", f"{number:E}", f"{number:.4f}"]))
    if not number_text.startswith("-") and draw(st.booleans()):
        number_text = "+" + number_text
    terms = draw(st.lists(unit_terms(), min_size=1, max_size=3))
    text, expected, si = terms[0][0], terms[0][1], terms[0][2]
    for term, factor, term_si in terms[1:]:
        operator = draw(st.sampled_from(["*", "/", " * ", " / ", " "]))
        text += operator + term
        divide = operator.strip() == "/"
        expected = expected / factor if divide else expected * factor
        si += ("/" if divide else "*") + term_si
    space = draw(st.sampled_from(["", " ", "  "]))
    return f"{number_text}{space}{text}", float(number_text) * expected, si


@settings(max_examples=300, deadline=None)
@given(quantities())
def test_grammar_strings_convert_by_the_unit_factor(example: tuple[str, float, str]) -> None:
    text, expected, si = example
    assert math.isfinite(expected)
    assert to_si(text, si, "x") == pytest.approx(expected, rel=1e-12, abs=1e-300)


# The grammar, written again here independently of the implementation (test side).
NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
NAME = r"(?:[^\W\d]|°)+|%|‰"
POWER = r"(?:\s*(?:\^|\*\*)\s*[+-]?\d+|⁻?[⁰¹²³⁴⁵⁶⁷⁸⁹]+)?"
TERM = rf"(?:{NAME}){POWER}"
GRAMMAR = re.compile(rf"\s*{NUMBER}\s*(?:{TERM}(?:\s*[*/]\s*{TERM}|\s+{TERM})*)?\s*")
CONSTANTS = {"pi", "π", "e", "c", "k", "ln10", "eulers_number", "hbar", "R", "N_A", "k_B"}
TOKENS = ["1", "2.5", "1e3", "e", "-", "+", "*", "/", "^", "**", "(", ")", " ", ".", "nm", "m", "mM", "mV", "s",
          "pi", "π", "c", "k", "ln10", "%", "²", "0.5", "per", "nan", "inf", ",", "_", "degC", "hbar", "N_A"]


@settings(max_examples=1500, deadline=None)
@given(st.one_of(st.lists(st.sampled_from(TOKENS), min_size=1, max_size=6).map("".join), st.text(max_size=12)),
       st.sampled_from(["m", "dimensionless", "mol/m^3", "m/s"]))
def test_garbage_is_an_input_error_or_grammar(text: str, unit: str) -> None:
    try:
        value = to_si(text, unit, "x")
    except InputError:
        return
    assert GRAMMAR.fullmatch(text), f"{text!r} gave {value} but is not NUMBER [UNIT]"
    names = set(re.findall(NAME, re.sub(rf"^\s*{NUMBER}", "", text)))
    assert not names & CONSTANTS, f"{text!r} gave {value} from a constant"
