"""Tests of edl_solver.inputs.units.to_si."""

from __future__ import annotations

import math
import subprocess
import sys
import time

import pytest
from hypothesis import given
from hypothesis import strategies as st

from edl_solver.errors import InputError
from edl_solver.inputs.units import _registry, to_si

# Expected SI values follow from the SI prefix and unit definitions (BIPM SI Brochure, 9th ed.,
# 2019; from memory): 1 M = 1 mol/L = 1000 mol/m^3, 1 bar = 1e5 Pa, 0 degC = 273.15 K.
EXAMPLES = [
    ("1 mM", "mol/m^3", 1.0),
    ("1 M", "mol/m^3", 1000.0),
    ("50 nm", "m", 50e-9),
    ("50 mm", "m", 0.05),
    ("-50 mV", "V", -0.05),
    ("10 kV/m", "V/m", 1e4),
    ("-2 mC/m^2", "C/m^2", -2e-3),
    ("25 degC", "K", 298.15),
    ("-1 bar/mm", "Pa/m", -1e8),
    ("1.957e-9 m^2/s", "m^2/s", 1.957e-9),
    ("0.89 mPa*s", "Pa*s", 0.89e-3),
    ("2.9 F/m^2", "F/m^2", 2.9),
    ("0.05", "dimensionless", 0.05),
    ("5 %", "dimensionless", 0.05),
    ("5%", "dimensionless", 0.05),
    ("\u221250 mV", "V", -0.05),  # unicode minus, as pasted from papers
    ("2 \u00b5m", "m", 2e-6),
]


@pytest.mark.parametrize(("text", "unit", "expected"), EXAMPLES)
def test_string_examples_convert_to_si(text: str, unit: str, expected: float) -> None:
    assert to_si(text, unit, "x") == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("value", [3, 2.5, -0.0, 1e-300])
def test_numbers_are_taken_as_si(value: float) -> None:
    result = to_si(value, "m", "height")
    assert result == value and type(result) is float


def test_millimolar_is_not_millimetre() -> None:
    # "mM" = millimolar and "mm" = millimetre: mixing them is a 1000x error in concentration.
    assert to_si("1 mM", "mol/m^3", "c") == pytest.approx(1.0, rel=1e-12)
    with pytest.raises(InputError, match=r"^concentration: '50 mm' has units of metre \(length\), "
                                         r"expected a concentration in mol/m\^3$"):
        to_si("50 mm", "mol/m^3", "concentration")


def test_wrong_dimension_names_field_value_and_expectation() -> None:
    with pytest.raises(InputError) as info:
        to_si("5 mV", "m", "height")
    assert str(info.value) == "height: '5 mV' has units of volt (electric potential), expected a length in m"


def test_bare_number_needs_a_unit_unless_dimensionless() -> None:
    with pytest.raises(InputError, match=r"^height: '50' has no unit, expected a length in m$"):
        to_si("50", "m", "height")
    assert to_si("78.4", "dimensionless", "eps") == 78.4


def test_percent_is_rejected_for_a_length() -> None:
    with pytest.raises(InputError, match=r"'5 %' has units of percent \(dimensionless\)"):
        to_si("5 %", "m", "height")


@pytest.mark.parametrize(
    "text", ["fifty mV", "mV", "", "   ", "50 furlongz", "5 m 3", "1/0 mV", "(mV", "1 (mV", "1 mV)", "1 m**m"])
def test_unparsable_strings(text: str) -> None:
    with pytest.raises(InputError, match=r"^zeta: .* is not a quantity with units, "
                                         r"expected an electric potential in V$"):
        to_si(text, "V", "zeta")


def test_unparsable_message_example() -> None:
    with pytest.raises(InputError) as info:
        to_si("fifty mV", "V", "zeta")
    assert str(info.value) == "zeta: 'fifty mV' is not a quantity with units, expected an electric potential in V"


def test_unparsable_dimensionless() -> None:
    with pytest.raises(InputError, match=r"^f: 'abc' is not a number, expected a dimensionless number$"):
        to_si("abc", "dimensionless", "f")


@pytest.mark.parametrize("value", [True, False, None, math.nan, math.inf, -math.inf, "nan m", "inf m", "1e400 m"])
def test_rejects_bool_none_and_non_finite(value: object) -> None:
    with pytest.raises(InputError, match=r"^height: .*(not a number|not finite).*expected a length in m$"):
        to_si(value, "m", "height")


def test_rejects_other_types() -> None:
    with pytest.raises(InputError, match=r"^height: \[1\] has type list, expected a length in m"):
        to_si([1], "m", "height")


def test_overflow_after_conversion_is_rejected() -> None:
    with pytest.raises(InputError, match="overflows"):
        to_si("1e300 km^3", "m^3", "volume")


def test_unknown_dimension_is_described() -> None:
    with pytest.raises(InputError, match=r"'1 mV\^2' has units of millivolt \*\* 2 \(dimension"):
        to_si("1 mV^2", "V", "zeta")


def test_error_messages_are_one_line() -> None:
    for value, unit in [("5 mV", "m"), ("fifty mV", "V"), (math.nan, "K"), ("1 mV^2", "V")]:
        with pytest.raises(InputError) as info:
            to_si(value, unit, "f")
        assert "\n" not in str(info.value)


def test_bad_target_unit_is_a_programming_error() -> None:
    with pytest.raises(ValueError, match="target unit 'parsec_per_fortnightz'"):
        to_si(1.0, "parsec_per_fortnightz", "f")


def test_registry_is_built_once() -> None:
    assert _registry() is _registry()


def test_parsing_is_fast_after_the_registry_exists() -> None:
    # Target ~0.1 ms per string; the generous bound only catches rebuilding the registry (~100 ms).
    to_si("1 mM", "mol/m^3", "c")
    start = time.perf_counter()
    for _ in range(200):
        to_si("-50 mV", "V", "zeta")
    assert (time.perf_counter() - start) / 200 < 5e-3


def test_import_does_not_import_pint() -> None:
    code = "import sys, edl_solver.inputs.units; print('pint' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_finite_floats_pass_through(value: float) -> None:
    assert to_si(value, "V", "zeta") == value


@given(st.floats(min_value=-1e250, max_value=1e250, allow_nan=False))
def test_nanometre_strings_scale_by_1e_minus_9(value: float) -> None:
    assert to_si(f"{value!r} nm", "m", "height") == pytest.approx(value * 1e-9, rel=1e-12, abs=1e-300)


@given(st.floats(min_value=-273.15, max_value=1e6, allow_nan=False))
def test_celsius_strings_offset_by_273_15(value: float) -> None:
    # 0 degC = 273.15 K by definition of the Celsius scale (BIPM SI Brochure; from memory).
    assert to_si(f"{value!r} degC", "K", "temperature") == pytest.approx(value + 273.15, rel=1e-12, abs=1e-9)
