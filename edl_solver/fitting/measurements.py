"""Measurement files in lab units: a CSV of one measured quantity against case inputs, read into the SI
mapping that a fit takes (case-input paths and one summary key to arrays, and an optional "uncertainty").

A file is a header row of ``name [unit]`` columns, then one row per measured point; ``#`` comment lines and
blank lines may come anywhere. Cells are plain decimal numbers in the column's unit, read through the strict
unit parser of ``inputs.units`` (no arithmetic, no units in cells). Names are either the lab names below
(device values: the whole device of ``channels`` identical channels of ``length`` and, for slits,
``width``) or a sweepable case-input path or summary key itself (the model's own quantity: per unit width of
a slit, per capillary, per unit length; no device conversion).

Signs as in ``edl transport``'s device (``channel.device``): x from the left reservoir to the right one,
pressure Delta p = p(right) - p(left), voltage Delta V = V(right) - V(left), currents and flows positive from
left to right. With N channels of length L and w = W (slit width) or 1 (capillary):

- ``pressure``: pressure_gradient = Delta p / L (dp/dx; the case's convention)
- ``voltage``: field = -Delta V / L
- ``conductance`` G: conductance_per_length = G L / (N w)
- ``streaming current`` I at ``pressure`` Delta p: streaming_conductance = -I L / (N w Delta p)
- ``streaming conductance`` K, the current per pressure drop I / (p(left) - p(right)):
  streaming_conductance = K L / (N w)
- ``streaming potential`` Delta V at ``pressure`` Delta p: streaming_potential_coefficient = Delta V / Delta p
- ``eo flow rate`` Q (needs the voltage): flow_rate_eo = Q / (N w)
- ``current`` I (needs the voltage): current = I / (N w)

An uncertainty (one absolute standard deviation per point, in the measured column's unit) follows the same
conversion with the drives taken as exact. The device values are taken as the channels' own: a measured
conductance that includes the access resistance of the channel ends should be corrected first.
"""

from __future__ import annotations

import csv
import difflib
import math
import os
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.paths import PATH_UNITS
from edl_solver.inputs.units import to_positive_si, to_si
from edl_solver.results.schema import SUMMARY_UNITS

__all__ = ["DRIVE_NAMES", "INPUT_NAMES", "MEASURED_NAMES", "read_measurement_files", "read_measurements",
           "write_measurements"]


@dataclass(frozen=True)
class Measured:
    """A lab name of a measured device value and how it becomes a summary value.

    The summary value is the device value times ``L`` (if ``per_length``), over ``N w`` (if ``per_channel``),
    over ``pressure_sign`` times Delta p (if ``pressure_sign``); ``needs`` names the drive column it needs.
    """

    key: str
    unit: str
    per_length: bool = False
    per_channel: bool = False
    pressure_sign: int = 0
    needs: str = ""


#: Lab names of case inputs: name -> sweepable path.
INPUT_NAMES: dict[str, str] = {"concentration": "electrolyte.concentration", "ph": "electrolyte.pH",
                               "height": "geometry.height", "radius": "geometry.radius",
                               "temperature": "solvent.temperature"}
#: Lab names of the drives over the whole channel: name -> (SI unit, the case input it gives).
DRIVE_NAMES: dict[str, tuple[str, str]] = {"pressure": ("Pa", "pressure_gradient"),
                                           "pressure difference": ("Pa", "pressure_gradient"),
                                           "voltage": ("V", "field")}
_EO_FLOW = Measured("flow_rate_eo", "m^3/s", per_channel=True, needs="voltage")
_EO_VELOCITY = Measured("mean_velocity_eo", "m/s", needs="voltage")
#: Lab names of measured device values.
MEASURED_NAMES: dict[str, Measured] = {
    "conductance": Measured("conductance_per_length", "S", per_length=True, per_channel=True),
    "streaming current": Measured("streaming_conductance", "A", True, True, pressure_sign=-1, needs="pressure"),
    "streaming conductance": Measured("streaming_conductance", "A/Pa", per_length=True, per_channel=True),
    "streaming potential": Measured("streaming_potential_coefficient", "V", pressure_sign=1, needs="pressure"),
    "streaming potential coefficient": Measured("streaming_potential_coefficient", "V/Pa"),
    "eo flow rate": _EO_FLOW, "electroosmotic flow rate": _EO_FLOW,
    "eo velocity": _EO_VELOCITY, "electroosmotic velocity": _EO_VELOCITY,
    "current": Measured("current", "A", per_channel=True, needs="voltage"),
}
#: A unit a lab would write for each lab name (for messages).
_EXAMPLES = {"concentration": "mM", "height": "nm", "radius": "nm", "temperature": "degC", "pressure": "mbar",
             "pressure difference": "mbar", "voltage": "V", "conductance": "nS", "streaming current": "pA",
             "streaming conductance": "pA/bar", "streaming potential": "mV",
             "streaming potential coefficient": "mV/bar",
             "eo flow rate": "nL/min", "electroosmotic flow rate": "nL/min", "eo velocity": "um/s",
             "electroosmotic velocity": "um/s", "current": "pA"}
#: Summary values that describe the solve, not the channel: never measured.
_NOT_MEASURABLE = ("charge_balance", "reciprocity_residual", "error_estimate", "eo_ratio", "hs_velocity")
#: Case inputs that must be positive at every point.
_POSITIVE = ("electrolyte.concentration", "geometry.height", "geometry.radius", "solvent.temperature")
_HEADER = re.compile(r"(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*")
_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")
_PLAIN = ("", "1", "-")  # the unit of a dimensionless column: none, [1] or [-]


@dataclass(frozen=True)
class _Device:
    """What the device conversions need: L, N, w and the geometry's kind (None where not given)."""

    length: float | None
    width: float | None
    channels: int
    kind: str | None


@dataclass(frozen=True)
class _Column:
    """One header cell: its role ("input", "drive", "measured", "uncertainty"), the key it gives and its units."""

    header: str
    role: str
    key: str
    unit: str  # as written ("" for none)
    si_unit: str
    lab: Measured | None = None  # a lab name of a measured device value


def read_measurements(path: str | os.PathLike[str], *, length: float | str | None = None,
                      width: float | str | None = None, channels: int = 1, geometry: Any = None,
                      min_points: int | None = None) -> dict[str, np.ndarray]:
    """Read one measurement file (CSV in lab units) into the SI mapping of a fit.

    Parameters
    ----------
    path : str or PathLike
        The CSV file (UTF-8; comma, semicolon or tab separated, as its header row is).
    length : float or str, optional
        Channel length L (m, or "20 um"); needed by the device values and drives that are per length.
    width : float or str, optional
        Width W of each slit (m, or "10 um"); needed by a slit's device values (a slit's summary is per width).
    channels : int
        Number N of identical channels in parallel.
    geometry : {"slit", "capillary"}, Slit, Capillary or Case, optional
        The channel's kind, needed to convert device values and to check the units of the summary values
        that are per width (slit) or per channel (capillary); a ``width`` alone means a slit.
    min_points : int, optional
        Refuse a file of fewer points (e.g. the number of parameters fitted plus one).

    Returns
    -------
    dict of str to numpy.ndarray
        Case-input paths (e.g. "electrolyte.concentration"), the one measured summary key and, if the file
        has one, "uncertainty", each an array of one SI float per point.

    Raises
    ------
    InputError
        One line naming the file, the row (the line number in the file) and the column: a cell that is empty
        or not a number, an unknown column name or unit, a unit of the wrong dimension, two columns for one
        input, no measured column or more than one, a negative concentration, an uncertainty that is not
        positive, a device value without the length, width or geometry it needs, fewer points than
        ``min_points``.
    """
    device = _device(length, width, channels, geometry)
    if min_points is not None and (isinstance(min_points, bool) or not isinstance(min_points, int)):
        raise InputError(f"min_points: {min_points!r} is not allowed, expected a whole number of points or None")
    name = os.fspath(path) if isinstance(path, (str, os.PathLike)) else path
    rows = _rows(path)
    if not rows:
        raise InputError(f"{name}: no header row, expected a row of 'name [unit]' columns such as "
                         "'concentration [mM],conductance [nS]'")
    columns = [_column(name, rows[0][0], header.strip(), device) for header in rows[0][1]]
    measured = _check_columns(name, rows[0][0], columns)
    if len(rows) < 2 or (min_points is not None and len(rows) - 1 < min_points):
        raise InputError(f"{name}: {len(rows) - 1} row(s) of data, expected at least {max(min_points or 1, 1)} "
                         "(one per measured point)")
    values = _cells(name, rows, columns)
    return _converted(name, rows, columns, values, measured, device)


def read_measurement_files(paths: Iterable[str | os.PathLike[str]], **options: Any) -> list[dict[str, np.ndarray]]:
    """``read_measurements`` of each file (one measured quantity each), with the same options."""
    return [read_measurements(path, **options) for path in paths]


def _device(length: Any, width: Any, channels: Any, geometry: Any) -> _Device:
    """Check the device keywords."""
    if isinstance(channels, bool) or not isinstance(channels, int) or channels < 1:
        raise InputError(f"channels: {channels!r} is not allowed, expected a whole number of channels, at least 1")
    kind = getattr(getattr(geometry, "geometry", geometry), "kind", geometry)
    if not (kind is None or (isinstance(kind, str) and kind in ("slit", "capillary"))):
        raise InputError(f"geometry: {geometry!r} is not a channel geometry, expected 'slit' or 'capillary' "
                         "(or a Slit, Capillary or Case)")
    length = None if length is None else to_positive_si(length, "m", "length", "a positive channel length")
    width = None if width is None else to_positive_si(width, "m", "width", "a positive slit width")
    if width is not None and kind == "capillary":
        raise InputError(f"width: {width!r} given for a capillary, expected no width (a capillary's values are "
                         "per channel)")
    return _Device(length, width, channels, "slit" if kind is None and width is not None else kind)


def _rows(path: Any) -> list[tuple[int, list[str]]]:
    """The header and data rows of the file as (line number, cells); comment and blank lines left out."""
    if not isinstance(path, (str, os.PathLike)) or not os.fspath(path):
        raise InputError(f"path: {path!r} is not a file path, expected a str or pathlib.Path of a CSV file")
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"{os.fspath(path)}: not UTF-8 text, expected a CSV file saved as UTF-8") from None
    except OSError as exc:
        raise InputError(f"{os.fspath(path)}: cannot be read ({exc.strerror}), expected a CSV file") from None
    lines = [(number, line) for number, line in enumerate(text.splitlines(), start=1)
             if line.strip() and not line.lstrip().startswith("#")]
    if not lines:
        return []
    header = lines[0][1]
    delimiter = next((d for d in ",;\t" if d in header), ",")
    return [(number, next(csv.reader([line], delimiter=delimiter))) for number, line in lines]


def _where(name: str, row: int, header: str) -> str:
    return f"{name}: row {row}, column {header!r}"


def _column(name: str, row: int, header: str, device: _Device) -> _Column:
    """Classify one header cell and check its unit."""
    where = _where(name, row, header)
    match = _HEADER.fullmatch(header)
    if match is None or not match["name"]:
        raise InputError(f"{where}: not a column header, expected 'name [unit]' such as 'concentration [mM]'")
    text, unit = match["name"].strip(), (match["unit"] or "").strip()
    word = _word(text)  # lab names: any case and spacing; paths and summary keys: as written
    if text in PATH_UNITS:
        role, key, si_unit, lab = "input", text, PATH_UNITS[text], None
    elif word in INPUT_NAMES:
        role, key, si_unit, lab = "input", INPUT_NAMES[word], PATH_UNITS[INPUT_NAMES[word]], None
    elif word in DRIVE_NAMES:
        role, key, si_unit, lab = "drive", word.split()[0], DRIVE_NAMES[word][0], None
    elif word in MEASURED_NAMES:
        lab = MEASURED_NAMES[word]
        role, key, si_unit = "measured", lab.key, lab.unit
    elif text in SUMMARY_UNITS and not text.startswith("thin_layer_") and text not in _NOT_MEASURABLE:
        role, key, si_unit, lab = "measured", text, _summary_unit(where, text, device), None
    elif word == "uncertainty" or word.endswith(" uncertainty"):
        role, key, si_unit, lab = "uncertainty", word[:-len("uncertainty")].strip(), "", None
    elif text in SUMMARY_UNITS:
        raise InputError(f"{where}: {text!r} is the thin-layer model's or a check of the solve, not measured, expected "
                         "a quantity of the channel such as conductance_per_length")
    else:
        raise InputError(f"{where}: {text!r} is not a known column{_hint(text)}")
    if role != "uncertainty":
        _check_unit(where, unit, si_unit, _EXAMPLES.get(word, ""))
    return _Column(header, role, key, unit, si_unit, lab)


def _word(text: str) -> str:
    """A name as lab names are matched: lower case, single spaces."""
    return " ".join(text.lower().split())


def _hint(text: str) -> str:
    """A "did you mean" hint for an unknown column name."""
    if "(" in text:
        return ", expected the unit in square brackets, e.g. 'conductance [nS]'"
    known = [*INPUT_NAMES, *DRIVE_NAMES, *MEASURED_NAMES, *PATH_UNITS, *SUMMARY_UNITS]
    close = difflib.get_close_matches(text.lower() if "." not in text else text, known, n=1, cutoff=0.6)
    if close:
        return f" (did you mean {close[0]!r}?)"
    return (f", expected a case input ({', '.join(INPUT_NAMES)}, {', '.join(DRIVE_NAMES)} or a sweepable path), "
            f"a measured value ({', '.join(MEASURED_NAMES)} or a summary key) or an uncertainty")


def _summary_unit(where: str, key: str, device: _Device) -> str:
    """The SI unit of a summary key: of a slit (per width) or a capillary (per channel) where it differs."""
    units = SUMMARY_UNITS[key][0]
    if isinstance(units, str):
        return "dimensionless" if units == "1" else units
    if device.kind is None:
        raise InputError(f"{where}: {key} is per unit width of a slit ({units[0]}) or per capillary ({units[1]}), "
                         "expected geometry='slit' or 'capillary' to tell which")
    return units[0] if device.kind == "slit" else units[1]


def _check_unit(where: str, unit: str, si_unit: str, example: str) -> None:
    """Refuse a unit that is not one of ``si_unit``'s dimension (through the strict parser)."""
    if si_unit == "dimensionless" and unit in _PLAIN:
        return
    expected = f"units of {si_unit}" + (f" such as {example}" if example else "")
    if not unit:
        raise InputError(f"{where}: no unit, expected one in square brackets after the name ({expected})")
    try:
        to_si(f"1 {unit}", si_unit, "unit")
    except InputError as exc:
        why = str(exc).split(": ", 1)[1].replace(repr(f"1 {unit}"), f"unit {unit!r}", 1).rsplit(", expected ", 1)[0]
        why = why.replace("is not a quantity with units", "is not a unit (names with prefixes joined by *, / or a "
                          "space, integer powers; no numbers)")
        raise InputError(f"{where}: {why}, expected {expected}") from None


def _check_columns(name: str, row: int, columns: Sequence[_Column]) -> _Column:
    """Check that the columns fit together; return the measured one."""
    measured = [column for column in columns if column.role == "measured"]
    if not measured:
        shown = ", ".join(repr(column.header) for column in columns)
        raise InputError(f"{name}: row {row}: no measured column among {shown}, expected one of "
                         f"{', '.join(MEASURED_NAMES)} or a summary key, with its unit")
    if len(measured) > 1:
        raise InputError(f"{_where(name, row, measured[1].header)}: a second measured column (after "
                         f"{measured[0].header!r}), expected one measured quantity per file (several files for more)")
    seen: dict[str, str] = {}  # what a column gives (a case input, or the uncertainty) -> its header
    for column in columns:
        target = {"drive": DRIVE_NAMES.get(column.key, ("", ""))[1], "uncertainty": "uncertainty"}.get(
            column.role, column.key)
        if column.role != "measured" and target in seen:
            raise InputError(f"{_where(name, row, column.header)}: gives the same {target} as column "
                             f"{seen[target]!r}, expected one column each")
        seen[target] = column.header
    _check_uncertainty(name, row, columns, measured[0])
    _check_needs(name, row, columns, measured[0])
    return measured[0]


def _label(column: _Column) -> str:
    """The name part of a header, as lab names are matched."""
    match = _HEADER.fullmatch(column.header)
    return _word(match["name"]) if match else ""


def _check_uncertainty(name: str, row: int, columns: Sequence[_Column], measured: _Column) -> None:
    """An uncertainty column belongs to the measured column and has its dimension."""
    for column in columns:
        if column.role != "uncertainty":
            continue
        where = _where(name, row, column.header)
        if column.key and column.key != _label(measured):
            raise InputError(f"{where}: an uncertainty of {column.key!r}, which is not the measured column, expected "
                             f"'uncertainty [unit]' or '{_label(measured)} uncertainty [unit]'")
        _check_unit(where, column.unit, measured.si_unit, _EXAMPLES.get(_label(measured), ""))


def _check_needs(name: str, row: int, columns: Sequence[_Column], measured: _Column) -> None:
    """A measured value that needs a drive (the pressure of a streaming current, the voltage of a current)."""
    needs = measured.lab.needs if measured.lab else ""
    keys = {column.key for column in columns}
    if needs == "pressure" and "pressure" not in keys:
        raise InputError(f"{_where(name, row, measured.header)}: needs the pressure difference of each point, "
                         "expected a column 'pressure [mbar]' (p(right) - p(left))")
    if needs == "voltage" and not keys & {"voltage", "field"}:
        raise InputError(f"{_where(name, row, measured.header)}: needs the voltage of each point, expected a column "
                         "'voltage [V]' (V(right) - V(left)) or 'field [V/m]'")


def _cells(name: str, rows: Sequence[tuple[int, list[str]]], columns: Sequence[_Column]) -> list[np.ndarray]:
    """Every data cell in SI, column by column."""
    si_unit = next(column.si_unit for column in columns if column.role == "measured")
    values = [np.empty(len(rows) - 1) for _ in columns]
    for i, (row, cells) in enumerate(rows[1:]):
        if len(cells) != len(columns):
            raise InputError(f"{name}: row {row}: {len(cells)} cell(s), expected {len(columns)} (one per column of "
                             "the header)")
        for j, (column, cell) in enumerate(zip(columns, cells)):
            values[j][i] = _cell(_where(name, row, column.header), cell, column,
                                 si_unit if column.role == "uncertainty" else column.si_unit)
    return values


def _cell(where: str, cell: str, column: _Column, si_unit: str) -> float:
    """One cell: a plain number in the column's unit, to SI, checked."""
    text = cell.strip()
    unit = "" if column.unit in _PLAIN else column.unit
    expected = f"a plain number in {unit}" if unit else "a plain number"
    if not text:
        raise InputError(f"{where}: empty cell, expected {expected}")
    if _NUMBER.fullmatch(text) is None:
        raise InputError(f"{where}: {text!r} is not a number, expected {expected}")
    value = to_si(f"{text} {unit}" if unit else text, si_unit, where)
    if column.role == "uncertainty" and not value > 0.0:
        raise InputError(f"{where}: {text!r} is not a positive uncertainty, expected {expected} above 0 (one "
                         "standard deviation)")
    if column.key in _POSITIVE and not value > 0.0:
        what = "negative" if value < 0.0 else "zero"
        raise InputError(f"{where}: {text!r} is {what}, expected a positive {column.key.split('.')[-1]}")
    return value


def _converted(name: str, rows: Sequence[tuple[int, list[str]]], columns: Sequence[_Column],
               values: Sequence[np.ndarray], measured: _Column, device: _Device) -> dict[str, np.ndarray]:
    """The SI mapping: inputs as they are, drives over the length, the measured value per channel and length."""
    header_row = rows[0][0]
    by_key = {column.key: value for column, value in zip(columns, values)}
    lab = measured.lab
    out: dict[str, np.ndarray] = {}
    for column, value in zip(columns, values):
        where = _where(name, header_row, column.header)
        if column.role == "input":
            out[column.key] = value
        elif column.role == "drive" and not (lab and lab.needs == "pressure" and column.key == "pressure"):
            length = _need_length(where, device)
            out[DRIVE_NAMES[column.key][1]] = value / length if column.key == "pressure" else -value / length
    scale = np.ones(len(rows) - 1)
    if lab is not None:
        where = _where(name, header_row, measured.header)
        if lab.per_length:
            scale *= _need_length(where, device)
        if lab.per_channel:
            scale /= device.channels * _need_width(where, device)
        if lab.pressure_sign:
            pressure = by_key["pressure"]
            _check_nonzero(name, rows, next(c for c in columns if c.key == "pressure"), pressure)
            scale /= lab.pressure_sign * pressure
    out[measured.key] = by_key[measured.key] * scale
    if "uncertainty" in [column.role for column in columns]:
        uncertainty = next(value for column, value in zip(columns, values) if column.role == "uncertainty")
        out["uncertainty"] = uncertainty * np.abs(scale)
    return out


def _need_length(where: str, device: _Device) -> float:
    if device.length is None:
        raise InputError(f"{where}: needs the channel length, expected read_measurements(..., length='20 um')")
    return device.length


def _need_width(where: str, device: _Device) -> float:
    """w: the slit's width, or 1 for a capillary (whose summary values are per channel)."""
    if device.kind is None:
        raise InputError(f"{where}: needs the channel's geometry (a slit's summary is per unit width, a capillary's "
                         "per channel), expected geometry='slit' (with width=...) or geometry='capillary'")
    if device.kind == "capillary":
        return 1.0
    if device.width is None:
        raise InputError(f"{where}: needs the width of each slit (the summary is per unit width), expected "
                         "read_measurements(..., width='10 um')")
    return device.width


def _check_nonzero(name: str, rows: Sequence[tuple[int, list[str]]], column: _Column, pressure: np.ndarray) -> None:
    """A streaming current or potential is divided by its pressure difference: refuse a zero one."""
    for (row, _), value in zip(rows[1:], pressure):
        if value == 0.0:
            raise InputError(f"{_where(name, row, column.header)}: zero pressure difference, expected a non-zero one "
                             "(the streaming value is divided by it)")


def write_measurements(path: str | os.PathLike[str], columns: Mapping[str, Sequence[float]], *,
                       comments: Sequence[str] = (), digits: int = 6) -> None:
    """Write a measurement file: comment lines, the header of ``columns`` and one row per point.

    Parameters
    ----------
    path : str or PathLike
        The CSV file, written whole or not at all (``io.files.atomic_output``).
    columns : mapping of str to sequence of float
        Header (``"name [unit]"``, as ``read_measurements`` reads it) -> values in that unit, one per point.
    comments : sequence of str
        Lines written first, each after "# ".
    digits : int
        Significant digits of the values.

    Raises
    ------
    InputError
        Columns of different lengths, a value that is not finite, a header or comment with a line break.
    """
    from edl_solver.io.files import atomic_output

    if not columns:
        raise InputError("columns: empty, expected a mapping of 'name [unit]' headers to values")
    table = {str(header): [float(v) for v in values] for header, values in columns.items()}
    sizes = {header: len(values) for header, values in table.items()}
    if len(set(sizes.values())) != 1:
        raise InputError(f"columns: {sizes} values per column, expected the same number in each")
    for text in (*table, *comments):
        if "\n" in text or "\r" in text:
            raise InputError(f"columns: {text!r} has a line break, expected one line")
    for header, values in table.items():
        if not all(math.isfinite(v) for v in values):
            raise InputError(f"columns[{header!r}]: a value that is not finite, expected numbers")
    lines = [f"# {comment}" for comment in comments]
    lines.append(",".join(f'"{header}"' if "," in header else header for header in table))
    lines += [",".join(f"{v:.{digits}g}" for v in row) for row in zip(*table.values())]
    with atomic_output(path) as temporary:
        temporary.write_text("\n".join(lines) + "\n", encoding="utf-8")
