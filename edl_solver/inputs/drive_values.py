"""The checks of a drive's inputs (``inputs.drives``): its values, kept as given until bound to a target, and
its times and frequencies, converted to SI at once."""

from __future__ import annotations

import math
from numbers import Real
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.units import to_si

__all__ = ["ANY_TARGET", "is_drive_unit", "is_sequence", "raw_value", "time_parameter", "times"]

#: The SI units of the values a drive can set (field, pressure gradient, potential, charge density).
_TARGET_UNITS = ("V/m", "Pa/m", "V", "C/m^2")
ANY_TARGET = "a field (V/m), a pressure gradient (Pa/m), a potential (V) or a surface charge density (C/m^2)"


def is_sequence(value: Any) -> bool:
    """A list, a tuple or a one-dimensional array."""
    return isinstance(value, (list, tuple)) or (isinstance(value, np.ndarray) and value.ndim == 1)


def _parses(text: str, unit: str) -> bool:
    try:
        to_si(text, unit, "")
    except InputError:
        return False
    return True


def is_drive_unit(unit: Any) -> bool:
    """Whether ``unit`` is a unit of a quantity a drive can set ("mV", "kV/m", "mC/m^2", "bar/mm")."""
    return isinstance(unit, str) and any(_parses(f"1 {unit}", target) for target in _TARGET_UNITS)


def raw_value(value: Any, field: str) -> float | str:
    """A value kept until the drive is bound: a finite number (as a float), or a string that is a quantity of
    some target (its unit is checked against the target's when bound)."""
    if isinstance(value, bool) or not isinstance(value, (Real, str)):
        raise InputError(f"{field}: {value!r} is not a value, expected a number or a string with units such as "
                         "'10 kV/m' or '25 mV'")
    if isinstance(value, Real):
        if not math.isfinite(value):
            raise InputError(f"{field}: {value!r} is not finite, expected a finite value")
        return float(value)
    if not any(_parses(value, unit) for unit in _TARGET_UNITS):
        raise InputError(f"{field}: {value!r} is not a value a drive can set, expected {ANY_TARGET}")
    return value


def times(value: Any, field: str) -> tuple[float, ...]:
    """A table's times, SI: at least two, >= 0, non-decreasing, none listed more than twice."""
    if not is_sequence(value) or len(value) < 2:
        raise InputError(f"{field}: {value!r} is not a list of times, expected at least two times in s >= 0")
    result = tuple(to_si(t, "s", f"{field}[{i}]") for i, t in enumerate(value))
    for i, t in enumerate(result):
        if t < 0.0:
            raise InputError(f"{field}[{i}]: {value[i]!r} is negative, expected times >= 0 s")
        if i and t < result[i - 1]:
            raise InputError(f"{field}[{i}]: {value[i]!r} is before the time above it ({result[i - 1]:.6g} s), "
                             "expected non-decreasing times")
        if i > 1 and t == result[i - 2]:
            raise InputError(f"{field}[{i}]: {value[i]!r} is listed a third time, expected a time at most twice "
                             "(twice is a jump)")
    return result


def time_parameter(name: str, value: Any, field: str) -> float:
    """``frequency`` (Hz, > 0), ``phase`` (rad), ``duty`` (in (0, 1)), ``delay`` (s, >= 0) or ``duration``
    (s, > 0) in SI."""
    if name == "frequency":
        number = to_si(value, "Hz", field)
        if not number > 0.0:
            raise InputError(f"{field}: {value!r} is not positive, expected a frequency > 0 Hz")
    elif name in ("phase", "duty"):
        number = to_si(value, "dimensionless", field)
        if name == "duty" and not 0.0 < number < 1.0:
            raise InputError(f"{field}: {value!r} is out of range, expected a fraction of the period between 0 and "
                             "1 (e.g. 0.5 or '50 %')")
    else:
        number = to_si(value, "s", field)
        if name == "delay" and number < 0.0:
            raise InputError(f"{field}: {value!r} is negative, expected a delay >= 0 s")
        if name == "duration" and not number > 0.0:
            raise InputError(f"{field}: {value!r} is not positive, expected a duration > 0 s")
    return number
