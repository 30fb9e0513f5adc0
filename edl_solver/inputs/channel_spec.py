"""The ``[channel]`` section of a case file: the finite channel of ``edl transport CASE.toml``::

    [channel]
    length = "5 um"
    left = "1 mM"                       # reservoir concentrations (of the first ion); both or neither,
    right = "1 mM"                      # default the case's
    size = ["10 nm", "200 nm"]          # radius (capillary) or height (slit) at x = 0 and x = L, linear between;
                                        # or a table: size = { position = ["0 um", "5 um"], size = ["10 nm", "200 nm"] }
                                        # or a file:  size = { csv = "shape.csv" }  (relative to the case file)
    access_resistance = true            # each end's access resistance in series (a slit needs width)
    width = "10 um"                     # a slit's width
    points = 32                         # concentrations of the table of cross-section solves
    size_points = 12                    # sizes of that table
    wall_points = 9                     # wall values of that table (with wall_profile)
    concentration_span = 50             # the table's reach beyond the reservoirs, each way (widened when needed)
    iv = { start = "-1 V", stop = "1 V", count = 41 }   # the I-V curve, V(L) - V(0)
    rectification = true                # |I(+V)/I(-V)| at the positive voltages of iv

    [[channel.wall_segments]]           # optional: the wall piecewise along x, as [wall] writes it, up to x_end
    x_end = "2.5 um"
    charge_density = "-20 mC/m^2"
    [[channel.wall_segments]]
    x_end = "5 um"                      # the last ends at the length
    charge_density = "20 mC/m^2"        # a slit with [wall.bottom] and [wall.top] gives bottom = {...}, top = {...}

The size file (``csv``) is UTF-8 text, ``#`` comments and blank lines skipped, two fields a line separated by a
comma, a semicolon or a tab; its first line is a header naming both columns with their units in brackets,
``position [um], radius [nm]`` (the second column ``radius`` for a capillary, ``height`` for a slit, or ``size``);
then at least two rows of finite numbers, positions rising from 0 to the length. ``wall_profile`` (a wall that
varies continuously along x) is read as ``{ position = [...], value = [...] }`` or ``{ csv = "..." }`` and passed
to ``Channel`` (which checks its values against the case's wall).

The case itself is read by ``inputs.casefile``, which leaves this section to this module (it is not part of the
``Case``: a case written back has no [channel]). Every error is one line naming the file, the dotted key, the value
and what was expected. ``edl transport`` lets each flag replace its key (``cli.transport_channel``).
"""

from __future__ import annotations

import difflib
import itertools
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from numbers import Integral
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.text_file import read_text
from edl_solver.inputs.units import to_positive_si, to_si

__all__ = ["CHANNEL_KEYS", "ChannelSpec", "channel_from_mapping", "read_channel_spec"]

#: Keys of the [channel] table.
CHANNEL_KEYS = ("length", "left", "right", "access_resistance", "width", "points", "size_points", "wall_points",
                "concentration_span", "size", "wall_segments", "wall_profile", "iv", "rectification")
_IV_KEYS = ("start", "stop", "count")
#: Most voltages of an I-V curve (as ``edl transport --iv``).
MOST_VOLTAGES = 1000
_SEPARATOR = re.compile(r"[,;\t]")
_HEADER = re.compile(r"^(?P<name>[A-Za-z_ ]*?)\s*\[(?P<unit>[^\[\]]+)\]$")
_IV_EXAMPLE = 'iv = { start = "-1 V", stop = "1 V", count = 41 }'


@dataclass(frozen=True)
class ChannelSpec:
    """What the [channel] section asks for; None where a key is not given.

    Attributes
    ----------
    length : float
        m.
    left, right : float or None
        Reservoir concentrations, mol/m^3 (both or neither).
    access_resistance : bool or None
    width : float or None
        A slit's width, m.
    points, size_points, wall_points : int or None
    concentration_span : float or None
    size : tuple or dict or None
        A pair of sizes (m), or a table ``{"position": [...], "size": [...]}`` in m.
    wall_segments : list of (float, Wall or (Wall, Wall)) or None
    wall_profile : dict or None
        ``{"position": [...], "value": [...]}`` as given (or read from its CSV file).
    voltages : list of float or None
        The I-V curve's voltages, V.
    rectification : bool or None
    """

    length: float
    left: float | None = None
    right: float | None = None
    access_resistance: bool | None = None
    width: float | None = None
    points: int | None = None
    size_points: int | None = None
    size: Any = None
    wall_points: int | None = None
    concentration_span: float | None = None
    wall_segments: list[tuple[float, Any]] | None = None
    wall_profile: Any = None
    voltages: list[float] | None = None
    rectification: bool | None = None

    def channel_kwargs(self, case: Case) -> dict[str, Any]:
        """The keyword arguments of ``Channel(case, ...)`` of this section alone (reservoirs default to the case's
        first ion's concentration)."""
        first = case.electrolyte.ions[0].concentration
        kwargs: dict[str, Any] = {"length": self.length, "left_concentration": first if self.left is None else
                                  self.left, "right_concentration": first if self.right is None else self.right}
        for key in ("access_resistance", "width", "points", "size_points", "wall_points", "concentration_span", "size",
                    "wall_segments", "wall_profile"):
            if getattr(self, key) is not None:
                kwargs[key] = getattr(self, key)
        return kwargs


def read_channel_spec(path: str | Path, case: Case) -> ChannelSpec:
    """Read the [channel] section of a case file for ``case`` (the case the file and the flags make); CSV files
    are found relative to the file's folder.

    Raises
    ------
    InputError
        One line starting with the file name and naming the dotted key.
    """
    from edl_solver.inputs.casefile import read_mapping

    return channel_from_mapping(read_mapping(path), case, str(path), Path(path).parent)


def channel_from_mapping(data: Mapping[str, Any], case: Case, source: str = "", folder: str | Path = ".") \
        -> ChannelSpec:
    """The :class:`ChannelSpec` of the parsed TOML of a case file; ``source`` prefixes every error, CSV files are
    relative to ``folder``; ``case`` gives the size's name and the walls' form (``Channel`` checks the rest)."""
    try:
        return _spec(data, case, Path(folder))
    except InputError as exc:
        if source:
            raise InputError(f"{source}: {exc}") from None
        raise


def _unknown(key: str, name: Any, known: tuple[str, ...]) -> InputError:
    close = difflib.get_close_matches(str(name), known, n=1, cutoff=0.6)
    hint = f"did you mean '{key}.{close[0]}'?" if close else f"known keys here: {', '.join(known)}"
    return InputError(f"unknown key '{key}.{name}' ({hint})")


def _spec(data: Mapping[str, Any], case: Case, folder: Path) -> ChannelSpec:
    table = data.get("channel") if isinstance(data, Mapping) else None
    if not isinstance(table, Mapping):
        raise InputError(f"channel: {table!r} is not a table, expected [channel] with length = \"5 um\" and the "
                         "channel's other keys")
    for name in table:
        if name not in CHANNEL_KEYS:
            raise _unknown("channel", name, CHANNEL_KEYS)
    if "length" not in table:
        raise InputError('channel.length: missing, expected the channel\'s length, e.g. length = "5 um"')
    length = to_positive_si(table["length"], "m", "channel.length", "a channel length, e.g. '5 um'")
    if ("left" in table) != ("right" in table):
        given, missing = ("left", "right") if "left" in table else ("right", "left")
        raise InputError(f"channel.{given}: given without channel.{missing}, expected both reservoir "
                         "concentrations (or neither, for reservoirs at the case's concentration)")
    reservoirs = [to_positive_si(table[key], "mol/m^3", f"channel.{key}", "a concentration, e.g. '1 mM'")
                  if key in table else None for key in ("left", "right")]
    flags = [_flag(table, key) for key in ("access_resistance", "rectification")]
    width = to_positive_si(table["width"], "m", "channel.width", "a slit width, e.g. '10 um'") \
        if "width" in table else None
    if width is not None and case.geometry.kind != "slit":
        raise InputError(f"channel.width: {table['width']!r} for a {case.geometry.kind}, expected no width (a width "
                         "belongs to a slit)")
    counts = [_count(table, key) for key in ("points", "size_points")]
    voltages = _voltages(table["iv"]) if "iv" in table else None
    if flags[1] and voltages is not None and not any(v > 0.0 for v in voltages):
        raise InputError(f"channel.rectification: true with an I-V curve without positive voltages, expected "
                         f"channel.iv with positive voltages, e.g. {_IV_EXAMPLE}")
    spec = ChannelSpec(length, *reservoirs, flags[0], width, *counts,
                       size=_size(table["size"], length, case, folder) if "size" in table else None,
                       wall_segments=_segments(table["wall_segments"], case) if "wall_segments" in table else None,
                       wall_profile=_wall_profile(table["wall_profile"], folder) if "wall_profile" in table else None,
                       voltages=voltages, rectification=flags[1], wall_points=_count(table, "wall_points"),
                       concentration_span=_span(table))
    return spec


def _flag(table: Mapping[str, Any], key: str) -> bool | None:
    value = table.get(key)
    if value is not None and not isinstance(value, bool):
        raise InputError(f"channel.{key}: {value!r} is not true or false, expected {key} = true or false")
    return value


def _count(table: Mapping[str, Any], key: str) -> int | None:
    value = table.get(key)
    if value is not None and (isinstance(value, bool) or not isinstance(value, Integral)):
        raise InputError(f"channel.{key}: {value!r} is not a whole number, expected e.g. {key} = "
                         f"{ {'points': 32, 'size_points': 12}.get(key, 9)}")
    return None if value is None else int(value)


def _span(table: Mapping[str, Any]) -> float | None:
    """``concentration_span``: a plain number (a factor), checked for its range by ``Channel``."""
    value = table.get("concentration_span")
    if value is not None and (isinstance(value, bool) or not isinstance(value, Integral | float)):
        raise InputError(f"channel.concentration_span: {value!r} is not a number, expected a factor, e.g. "
                         "concentration_span = 500")
    return None if value is None else float(value)


def _voltages(value: Any) -> list[float]:
    """``{start, stop, count}`` -> ``count`` evenly spaced voltages, V, both ends included."""
    if not isinstance(value, Mapping):
        raise InputError(f"channel.iv: {value!r} is not a table, expected {_IV_EXAMPLE}")
    for name in value:
        if name not in _IV_KEYS:
            raise _unknown("channel.iv", name, _IV_KEYS)
    for name in _IV_KEYS:
        if name not in value:
            raise InputError(f"channel.iv.{name}: missing, expected {_IV_EXAMPLE}")
    start, stop = (to_si(value[name], "V", f"channel.iv.{name}") for name in ("start", "stop"))
    if not (math.isfinite(start) and math.isfinite(stop)) or start == stop:
        raise InputError(f"channel.iv.stop: {value['stop']!r} is not allowed with start {value['start']!r}, "
                         "expected two different finite voltages")
    count = value["count"]
    if isinstance(count, bool) or not isinstance(count, Integral) or not 2 <= count <= MOST_VOLTAGES:
        raise InputError(f"channel.iv.count: {count!r} is not allowed, expected a whole number from 2 to "
                         f"{MOST_VOLTAGES}")
    return [float(v) for v in np.linspace(start, stop, int(count))]


# -- the size --------------------------------------------------------------------------------------------------------


def _size(value: Any, length: float, case: Case, folder: Path) -> Any:
    """A pair of sizes (m) or a table of positions and sizes (m): positive sizes, positions rising from 0 to L."""
    if isinstance(value, Mapping) and "csv" in value:
        if set(value) != {"csv"}:
            extra = next(name for name in value if name != "csv")
            raise InputError(f"channel.size.{extra}: given beside csv, expected only csv = \"FILE\" (the file "
                             "holds the positions, the sizes and their units)")
        name = value["csv"]
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"channel.size.csv: {name!r} is not a file name, expected the path of a CSV file "
                             "such as \"shape.csv\"")
        positions, sizes = _csv_columns(folder / name, (case.geometry.size_name, "size"), "channel.size.csv")
        return _table(positions, sizes, length, (f"channel.size.csv: {folder / name}: positions",
                                                 f"channel.size.csv: {folder / name}: sizes"))
    if isinstance(value, Mapping):
        for key in value:
            if key not in ("position", "size"):
                raise _unknown("channel.size", key, ("position", "size", "csv"))
        for key in ("position", "size"):
            if not isinstance(value.get(key), list) or len(value[key]) < 2:
                raise InputError(f"channel.size.{key}: {value.get(key)!r} is not a list of at least two values, "
                                 "expected size = { position = [\"0 um\", \"5 um\"], size = [\"10 nm\", \"200 nm\"] }")
        if len(value["position"]) != len(value["size"]):
            raise InputError(f"channel.size.size: {len(value['size'])} sizes for {len(value['position'])} positions, "
                             "expected one size at each position")
        positions = [to_si(p, "m", f"channel.size.position[{k}]") for k, p in enumerate(value["position"])]
        sizes = [_positive_size(s, f"channel.size.size[{k}]") for k, s in enumerate(value["size"])]
        return _table(positions, sizes, length, ("channel.size.position", "channel.size.size"))
    if not isinstance(value, list) or len(value) != 2:
        raise InputError(f"channel.size: {value!r} is not allowed, expected a pair [\"10 nm\", \"200 nm\"], a table "
                         "{ position = [...], size = [...] } or { csv = \"shape.csv\" }")
    return tuple(_positive_size(s, f"channel.size[{k}]") for k, s in enumerate(value))


def _positive_size(value: Any, key: str) -> float:
    size = to_positive_si(value, "m", key, "a positive size, e.g. '10 nm'")
    if not math.isfinite(size):
        raise InputError(f"{key}: {value!r} is not finite, expected a positive size, e.g. '10 nm'")
    return size


def _table(positions: list[float], sizes: list[float], length: float, where: tuple[str, str]
           ) -> dict[str, list[float]]:
    """The table, its positions checked to rise strictly from 0 to the length (the last set to it exactly);
    ``where`` names the positions and the sizes in the errors."""
    if positions[0] != 0.0 or not math.isclose(positions[-1], length, rel_tol=1e-9) or \
            any(b <= a for a, b in itertools.pairwise(positions)):
        shown = [float(f"{p:.6g}") for p in positions]
        raise InputError(f"{where[0]}: {shown!r} m is not allowed, "
                         f"expected positions rising strictly from 0 to the length {length:.6g} m")
    for k, size in enumerate(sizes):
        if not (math.isfinite(size) and size > 0.0):
            raise InputError(f"{where[1]}[{k}]: {size!r} m is not allowed, expected a positive size")
    return {"position": [*positions[:-1], length], "size": list(sizes)}


def _header(fields: list[str], names: tuple[str, ...], where: str, value_unit: str | None) -> tuple[float, Any]:
    """(m per unit of the position, the value column's unit or its factor to ``value_unit``) of a header."""
    expected = f"a header 'position [um], {names[0]} [nm]'" if value_unit == "m" else \
        "a header 'position [um], value [UNIT]'"
    parsed = [_HEADER.match(field) for field in fields]
    if not all(parsed):
        raise InputError(f"{where}: {', '.join(fields)!r} does not name both columns with units in brackets, expected "
                         f"{expected}")
    if parsed[0]["name"].strip().lower() != "position" or parsed[1]["name"].strip().lower() not in names:
        raise InputError(f"{where}: the columns {parsed[0]['name']!r}, {parsed[1]['name']!r}, expected 'position' "
                         f"and {' or '.join(repr(n) for n in names)}: {expected}")
    factors = []
    for match, unit in zip(parsed, ("m", value_unit)):
        if unit is None:
            factors.append(match["unit"].strip())
            continue
        try:
            factors.append(to_si(f"1 {match['unit'].strip()}", unit, ""))
        except InputError:
            raise InputError(f"{where}: the unit {match['unit']!r} of {match['name'].strip()!r} is not a length, "
                             f"expected {expected}") from None
    return factors[0], factors[1]


def _csv_columns(path: Path, names: tuple[str, ...], key: str, value_unit: str | None = "m") -> tuple[list, list]:
    """The two columns of a position table: positions in m, values in m (``value_unit`` "m"), or, with
    ``value_unit`` None, strings "VALUE UNIT" in the header's unit."""
    header, positions, values = None, [], []
    for number, line in enumerate(read_text(path, "CSV file (relative to the case file)", key).splitlines(), start=1):
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        where = f"{key}: {path}: line {number}"
        fields = [field.strip() for field in _SEPARATOR.split(stripped)]
        if len(fields) != 2:
            raise InputError(f"{where}: {stripped!r} has {len(fields)} fields, expected two (position and "
                             f"{names[0]}) separated by a comma, a semicolon or a tab")
        if header is None:
            header = _header(fields, names, where, value_unit)
            continue
        try:
            row = [float(field) for field in fields]
        except ValueError:
            row = [math.nan]
        if not all(math.isfinite(v) for v in row):
            raise InputError(f"{where}: {stripped!r} is not two finite numbers, expected a position and a "
                             f"{names[0]}")
        positions.append(row[0] * header[0])
        values.append(row[1] * header[1] if value_unit is not None else f"{row[1]!r} {header[1]}")
    if len(positions) < 2:
        raise InputError(f"{key}: {path}: {len(positions)} row(s) of data, expected a header and at least two rows")
    return positions, values


# -- the wall along x ------------------------------------------------------------------------------------------------


def _segments(value: Any, case: Case) -> list[tuple[float, Any]]:
    """[[channel.wall_segments]]: (x_end in m, the wall) of each table, its wall read as [wall] is."""
    from edl_solver.inputs.casefile_keys import WALL_KEYS, WALL_PAIRS
    from edl_solver.inputs.casefile_sections import build_walls

    if isinstance(value, Mapping):
        value = [value]
    if not isinstance(value, list) or not value:
        raise InputError(f"channel.wall_segments: {value!r} is not a list of tables, expected [[channel.wall_segments]]"
                         " tables with x_end and the wall's settings as [wall] writes them")
    segments = []
    for k, table in enumerate(value):
        key = f"channel.wall_segments[{k}]"
        if not isinstance(table, Mapping):
            raise InputError(f"{key}: {table!r} is not a table, expected x_end and the wall's settings")
        for name in table:
            if name not in ("x_end", *WALL_KEYS, *WALL_PAIRS):
                raise _unknown(key, name, ("x_end", *WALL_KEYS, *WALL_PAIRS))
        for side in WALL_PAIRS:
            if isinstance(table.get(side), Mapping):
                for name in table[side]:
                    if name not in WALL_KEYS:
                        raise _unknown(f"{key}.{side}", name, WALL_KEYS)
        if "x_end" not in table:
            raise InputError(f"{key}.x_end: missing, expected the end of this wall along x, e.g. x_end = \"2.5 um\"")
        end = to_si(table["x_end"], "m", f"{key}.x_end")
        try:
            wall = build_walls({name: v for name, v in table.items() if name != "x_end"},
                               {"kind": case.geometry.kind})
        except InputError as exc:
            message = str(exc)
            raise InputError(key + message[len("wall"):] if message.startswith("wall") else f"{key}: {message}") \
                from None
        segments.append((end, wall))
    return segments


def _wall_profile(value: Any, folder: Path) -> dict[str, Any]:
    """``{ position = [...], value = [...] }`` or ``{ csv = "..." }``, read as given: ``Channel(wall_profile=...)``
    checks it, where this version has that field (``cli.transport_channel`` refuses it otherwise)."""
    if isinstance(value, Mapping) and set(value) == {"csv"}:
        name = value["csv"]
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"channel.wall_profile.csv: {name!r} is not a file name, expected the path of a CSV "
                             "file such as \"charge.csv\"")
        positions, values = _csv_columns(folder / name, ("value", "zeta", "charge_density"),
                                         "channel.wall_profile.csv", value_unit=None)
        return {"position": positions, "value": values}
    if not isinstance(value, Mapping) or set(value) != {"position", "value"}:
        raise InputError(f"channel.wall_profile: {value!r} is not allowed, expected {{ position = [...], value = "
                         "[...] } or { csv = \"FILE\" }")
    return {"position": value["position"], "value": value["value"]}
