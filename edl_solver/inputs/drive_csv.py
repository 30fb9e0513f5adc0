"""A drive's table read from a CSV file (``Drive.from_csv``): two columns, the time and the value.

The rules:

- UTF-8 text (a byte-order mark is skipped); blank lines and lines starting with ``#`` are skipped.
- Two fields a line, separated by a comma, a semicolon or a tab.
- The first line read is a header when its first field is not a number (only the first can be). A header field is
  ``NAME``, ``NAME (UNIT)``, ``NAME [UNIT]`` or ``NAME_UNIT``: the unit is the text in brackets at its end or,
  without brackets, the text after its last underscore (``time (us)``, ``zeta [mV]``, ``t_us``,
  ``field_kV/m``). A name with neither, or no header, means SI: seconds, and the SI unit of the drive's target.
  The time's unit must be a time; the value's a unit of what a drive can set (its dimension is checked against
  the target's when the drive is bound).
- Every other line holds two finite numbers; at least two such lines; times >= 0 and non-decreasing, a time at
  most twice (twice is a jump).

Every error is one line naming the file, the line number and what was expected.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

from edl_solver.errors import InputError
from edl_solver.inputs.drive_values import ANY_TARGET, is_drive_unit
from edl_solver.inputs.text_file import read_text
from edl_solver.inputs.units import to_si

__all__ = ["read_table"]

_SEPARATOR = re.compile(r"[,;\t]")
_BRACKETED = re.compile(r"^(?P<name>.*?)\s*(?:\((?P<round>[^()]*)\)|\[(?P<square>[^\[\]]*)\])$")
_FORMS = "NAME, NAME (UNIT), NAME [UNIT] or NAME_UNIT"


def _number(text: str) -> float | None:
    try:
        return float(text)
    except ValueError:
        return None


def _header_unit(field: str, where: str) -> str | None:
    """The unit a header field names, or None (SI)."""
    match = _BRACKETED.match(field)
    if match:
        unit = (match["round"] if match["round"] is not None else match["square"]).strip()
        if not unit:
            raise InputError(f"{where}: {field!r} has empty brackets, expected a unit in them, e.g. 'time (us)'")
        return unit
    if "_" in field:
        return field.rsplit("_", 1)[1].strip() or None
    return None


def _units(fields: list[str], where: str) -> tuple[float, str | None]:
    """(seconds per unit of the time column, the unit of the values or None) of a header line."""
    time_unit, value_unit = (_header_unit(field, where) for field in fields)
    factor = 1.0
    if time_unit is not None:
        try:
            factor = to_si(f"1 {time_unit}", "s", "")
        except InputError:
            raise InputError(f"{where}: the time's unit {time_unit!r} in {fields[0]!r} is not a unit of time, "
                             f"expected a header field {_FORMS} with a unit such as s, ms, us or ns") from None
    if value_unit is not None and not is_drive_unit(value_unit):
        raise InputError(f"{where}: the value's unit {value_unit!r} in {fields[1]!r} is not a unit a drive can "
                         f"set, expected a header field {_FORMS} with a unit of {ANY_TARGET}")
    return factor, value_unit


def read_table(path: str | Path) -> tuple[tuple[float, ...], tuple[float, ...], str | None]:
    """Read a drive table (rules in the module docstring).

    Returns
    -------
    times : tuple of float
        s.
    values : tuple of float
        In ``unit``.
    unit : str or None
        The value's unit of the header; None for SI.

    Raises
    ------
    InputError
        ``<path>: line <n>: <what is wrong>, expected <what>``, or a file that cannot be read.
    """
    file = Path(path)
    factor, unit, rows = 1.0, None, []
    first = True
    for number, line in enumerate(read_text(file, "drive table file").splitlines(), start=1):
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        where = f"{path}: line {number}"
        fields = [field.strip() for field in _SEPARATOR.split(stripped)]
        if len(fields) != 2:
            raise InputError(f"{where}: {stripped!r} has {len(fields)} fields, expected two (time and value) "
                             "separated by a comma, a semicolon or a tab")
        if first and _number(fields[0]) is None:
            factor, unit = _units(fields, where)
            first = False
            continue
        first = False
        rows.append((number, *_row(fields, where)))
    if len(rows) < 2:
        raise InputError(f"{path}: {len(rows)} line(s) of data, expected at least two lines of time and value")
    return _checked_times(rows, factor, path), tuple(value for _, _, value in rows), unit


def _row(fields: list[str], where: str) -> tuple[float, float]:
    values = [_number(field) for field in fields]
    for name, field, value in zip(("time", "value"), fields, values):
        if value is None or not math.isfinite(value):
            raise InputError(f"{where}: the {name} {field!r} is not a finite number, expected two numbers (time "
                             "and value)")
    return values[0], values[1]


def _checked_times(rows: list[tuple[int, float, float]], factor: float, path: str | Path) -> tuple[float, ...]:
    """The times in s, checked line by line: >= 0, non-decreasing, none more than twice."""
    times = []
    for i, (number, time, _) in enumerate(rows):
        where = f"{path}: line {number}"
        seconds = time if factor == 1.0 else float(f"{time * factor:.15g}")
        if seconds < 0.0:
            raise InputError(f"{where}: the time {time!r} is negative, expected times >= 0")
        if i and seconds < times[-1]:
            raise InputError(f"{where}: the time {time!r} is before the one above it, expected non-decreasing times")
        if i > 1 and seconds == times[-2]:
            raise InputError(f"{where}: the time {time!r} is listed a third time, expected a time at most twice "
                             "(twice is a jump)")
        times.append(seconds)
    return tuple(times)
