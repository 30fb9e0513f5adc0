"""Time-dependent drives of a transient run: a signal of time (``Drive``) and the signal bound to an input of a
case (``bind`` -> ``BoundDrive``).

A ``Drive`` is one of four signals of the time t > 0 after the step (s):

- ``Drive.sine(amplitude, frequency, offset=0, phase=0)``: offset + amplitude sin(2 pi f t + phase);
- ``Drive.square(amplitude, frequency, offset=0, duty=0.5, delay=0)``: the offset until ``delay``, then
  offset + amplitude for the first ``duty`` of each period and offset - amplitude for the rest;
- ``Drive.ramp(start, end, duration, delay=0)``: start until ``delay``, linear to end over ``duration``, then end;
- ``Drive.table(times, values)`` (or ``Drive.from_csv(path)``, see ``inputs.drive_csv``): linear between the
  points, held at the first value before them and at the last after them; a time listed twice is a jump.

Times and frequencies are converted to SI when the drive is made ("5 us", "1 MHz"). The values (amplitude,
offset, start, end, the table's values) are kept as given until the drive is bound to its target, whose unit
they must have: a number is in the target's SI unit, or in the drive's ``unit`` when one is given ("mV" for a
table read from a file with the unit in its header); a string carries its unit ("10 kV/m", "25 mV").

``bind(drives, case)`` checks a mapping of targets to drives against the case: "field" (V/m),
"pressure_gradient" (Pa/m), and the walls' "wall.zeta", "wall.charge_density", "wall.gate_voltage" (every
wall) or "wall.bottom.zeta", "wall.top.charge_density", ... (one wall of a slit), the paths of
``inputs.paths``. A drive's value replaces the case's value of its target at every t > 0.
"""

from __future__ import annotations

import difflib
import json
import math
from collections.abc import Mapping
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs import drive_signals as signals
from edl_solver.inputs import drive_values as checks
from edl_solver.inputs.units import to_si

__all__ = ["DRIVE_KINDS", "QUANTITY_UNITS", "WALL_QUANTITIES", "BoundDrive", "Drive", "bind", "drive_targets",
           "drives_from_json", "drives_json"]

#: The keys of each kind of drive (beside ``kind`` and ``unit``), the required ones first.
_KEYS: dict[str, tuple[str, ...]] = {
    "sine": ("amplitude", "frequency", "offset", "phase"),
    "square": ("amplitude", "frequency", "offset", "duty", "delay"),
    "ramp": ("start", "end", "duration", "delay"),
    "table": ("times", "values"),
}
DRIVE_KINDS: tuple[str, ...] = tuple(_KEYS)
_REQUIRED = {"sine": 2, "square": 2, "ramp": 3, "table": 2}
_DEFAULTS = {"offset": 0.0, "phase": 0.0, "duty": 0.5, "delay": 0.0}
#: Keys whose values have the unit of the target (kept as given until ``bind``).
VALUE_KEYS = ("amplitude", "offset", "start", "end")
#: SI unit of each quantity a drive can set, and its name in messages.
QUANTITY_UNITS = {"field": "V/m", "pressure_gradient": "Pa/m", "zeta": "V", "charge_density": "C/m^2",
                  "gate_voltage": "V"}


@dataclass(frozen=True)
class Drive:
    """A signal of time t > 0 (s) for a drive of a transient run; make it with ``Drive.sine``, ``Drive.square``,
    ``Drive.ramp``, ``Drive.table`` or ``Drive.from_csv`` (see the module docstring).

    Parameters
    ----------
    kind : {"sine", "square", "ramp", "table"}
    amplitude, offset, start, end : float or str, optional
        Values in the target's unit (kept as given until ``bind``).
    frequency : float or str, optional
        Hz (or "1 MHz"); > 0.
    phase : float, optional
        rad (sine).
    duty : float or str, optional
        Fraction of each period at offset + amplitude, in (0, 1) (or "25 %").
    delay, duration : float or str, optional
        s (or "5 us"); delay >= 0, duration > 0.
    times : sequence of float or str, optional
        s (table); non-decreasing, >= 0, at least two, a time twice is a jump.
    values : sequence of float or str, optional
        One per time (table), in the target's unit.
    unit : str, optional
        The unit of the plain numbers among the values (default: the target's SI unit).
    """

    kind: str
    amplitude: float | str | None = None
    frequency: float | str | None = None
    offset: float | str | None = None
    phase: float | str | None = None
    duty: float | str | None = None
    delay: float | str | None = None
    start: float | str | None = None
    end: float | str | None = None
    duration: float | str | None = None
    times: tuple[float, ...] | None = None
    values: tuple[float | str, ...] | None = None
    unit: str | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.kind, str) or self.kind not in _KEYS:
            raise InputError(f"drive.kind: {self.kind!r} is not a kind of drive, expected one of "
                             f"{', '.join(DRIVE_KINDS)}")
        keys = _KEYS[self.kind]
        for name in (f.name for f in fields(self)):
            value = getattr(self, name)
            if name not in (*keys, "kind", "unit") and value is not None:
                raise InputError(f"drive.{name}: {value!r} given for a {self.kind} drive, expected only "
                                 f"{', '.join(keys)} (and unit)")
        for name in keys[:_REQUIRED[self.kind]]:
            if getattr(self, name) is None:
                raise InputError(f"drive.{name}: missing, expected the {name} of the {self.kind} drive")
        for name in keys:
            if getattr(self, name) is None:
                object.__setattr__(self, name, _DEFAULTS[name])
        self._check_times()
        self._check_values()

    def _check_values(self) -> None:
        """The values in the target's unit: finite numbers or strings, checked again when bound."""
        if self.unit is not None and not checks.is_drive_unit(self.unit):
            raise InputError(f"drive.unit: {self.unit!r} is not a unit a drive can set, expected a unit of "
                             f"{checks.ANY_TARGET}")
        for name in VALUE_KEYS:
            if getattr(self, name) is not None:
                object.__setattr__(self, name, checks.raw_value(getattr(self, name), f"drive.{name}"))
        if self.values is not None:
            count = len(self.times)
            if not checks.is_sequence(self.values) or len(self.values) != count:
                raise InputError(f"drive.values: {self.values!r} is not one value per time, expected {count} values")
            object.__setattr__(self, "values", tuple(checks.raw_value(v, f"drive.values[{i}]")
                                                     for i, v in enumerate(self.values)))

    def _check_times(self) -> None:
        """Times and frequencies in SI, in range."""
        for name in ("frequency", "phase", "duty", "delay", "duration"):
            if getattr(self, name) is not None:
                object.__setattr__(self, name, checks.time_parameter(name, getattr(self, name), f"drive.{name}"))
        if self.times is not None:
            object.__setattr__(self, "times", checks.times(self.times, "drive.times"))

    @classmethod
    def sine(cls, amplitude: float | str, frequency: float | str, offset: float | str = 0.0,
             phase: float = 0.0) -> Drive:
        """offset + amplitude sin(2 pi frequency t + phase)."""
        return cls("sine", amplitude=amplitude, frequency=frequency, offset=offset, phase=phase)

    @classmethod
    def square(cls, amplitude: float | str, frequency: float | str, offset: float | str = 0.0,
               duty: float | str = 0.5, delay: float | str = 0.0) -> Drive:
        """offset before ``delay``; then offset + amplitude for the first ``duty`` of each period, offset -
        amplitude for the rest."""
        return cls("square", amplitude=amplitude, frequency=frequency, offset=offset, duty=duty, delay=delay)

    @classmethod
    def ramp(cls, start: float | str, end: float | str, duration: float | str, delay: float | str = 0.0) -> Drive:
        """``start`` until ``delay``, linear to ``end`` over ``duration``, then ``end``."""
        return cls("ramp", start=start, end=end, duration=duration, delay=delay)

    @classmethod
    def table(cls, times: Any, values: Any, unit: str | None = None) -> Drive:
        """Linear between the points (``times`` in s, non-decreasing, >= 0; a time twice is a jump), held before
        the first and after the last; ``unit``: that of the plain numbers among ``values``."""
        return cls("table", times=times, values=values, unit=unit)

    @classmethod
    def from_csv(cls, path: str | Path) -> Drive:
        """A table read from a CSV file of two columns, time and value (rules in ``inputs.drive_csv``); the
        drive keeps the points, not the path."""
        from edl_solver.inputs.drive_csv import read_table

        times, values, unit = read_table(path)
        return cls.table(times, values, unit=unit)

    def __repr__(self) -> str:
        arguments = ", ".join(f"{key}={value!r}" for key, value in self.to_mapping().items() if key != "kind")
        return f"Drive.{self.kind}({arguments})"

    def to_mapping(self) -> dict[str, Any]:
        """A plain dict (JSON and TOML): ``kind``, the drive's keys, ``unit`` when given; ``from_mapping`` of it
        is this drive."""
        table: dict[str, Any] = {"kind": self.kind}
        for name in (*_KEYS[self.kind], "unit"):
            value = getattr(self, name)
            if value is not None:
                table[name] = list(value) if isinstance(value, tuple) else value
        return table

    @classmethod
    def from_mapping(cls, table: Mapping[str, Any], where: str = "drive") -> Drive:
        """The drive of a plain dict (``to_mapping``, a TOML table); errors name ``where`` and the key."""
        if not isinstance(table, Mapping):
            raise InputError(f"{where}: {table!r} is not a table, expected kind = one of {', '.join(DRIVE_KINDS)} "
                             "and its keys")
        kind = table.get("kind")
        if not isinstance(kind, str) or kind not in _KEYS:
            raise InputError(f"{where}.kind: {kind!r} is not a kind of drive, expected one of "
                             f"{', '.join(DRIVE_KINDS)}")
        known = (*_KEYS[kind], "kind", "unit")
        for key in table:
            if key not in known:
                close = difflib.get_close_matches(str(key), known, n=1, cutoff=0.6)
                hint = f"did you mean {close[0]!r}?" if close else f"a {kind} drive takes {', '.join(known)}"
                raise InputError(f"unknown key '{where}.{key}' ({hint})")
        try:
            return cls(**{key: tuple(v) if isinstance(v, list) else v for key, v in table.items()})
        except InputError as exc:
            text = str(exc)
            raise InputError(f"{where}{text[len('drive'):]}" if text.startswith("drive.") else text) from None

    def describe(self) -> str:
        """One line, e.g. "sine of amplitude '10 kV/m' at 1e+06 Hz, offset 0 (SI), phase 0 rad"."""
        unit = f" {self.unit}" if self.unit else " (SI)"

        def shown(value: Any) -> str:
            return repr(value) if isinstance(value, str) else f"{value:g}{unit}"

        if self.kind == "sine":
            return (f"sine of amplitude {shown(self.amplitude)} at {self.frequency:g} Hz, offset {shown(self.offset)}, "
                    f"phase {self.phase:g} rad")
        if self.kind == "square":
            return (f"square wave of amplitude {shown(self.amplitude)} at {self.frequency:g} Hz, offset "
                    f"{shown(self.offset)}, duty {self.duty:g}, delay {self.delay:g} s")
        if self.kind == "ramp":
            return (f"ramp from {shown(self.start)} to {shown(self.end)} over {self.duration:g} s after "
                    f"{self.delay:g} s")
        return (f"table of {len(self.times)} points from {self.times[0]:g} s to {self.times[-1]:g} s, values "
                f"{shown(self.values[0])} to {shown(self.values[-1])}")


# -- a drive bound to its target ---------------------------------------------------------------------------------

#: The wall quantities a drive can set.
WALL_QUANTITIES = ("zeta", "charge_density", "gate_voltage")


@dataclass(frozen=True)
class BoundDrive:
    """A drive bound to an input of a case, in SI (made by :func:`bind`).

    Attributes
    ----------
    target : str
        The input it drives, e.g. "field", "wall.zeta", "wall.top.charge_density".
    quantity : {"field", "pressure_gradient", "zeta", "charge_density", "gate_voltage"}
    walls : tuple of str
        The walls it drives, "bottom" and/or "top" (the entries of ``Case.walls``: "wall.<key>" drives both, as
        does a drive of a capillary's one wall); () for the field and the pressure gradient.
    unit : str
        The SI unit of its values.
    kind : {"sine", "piecewise"}
        A sine, or piecewise linear (a square wave, a ramp, a table).
    sine : tuple of float or None
        (offset, amplitude, frequency in Hz, phase in rad) of a sine, SI.
    drive : Drive
        The drive as given.
    parameters : tuple of float
        The SI parameters: those of ``sine``; (offset, amplitude, frequency, duty, delay) of a square wave; (start,
        end, duration, delay) of a ramp; the times and then the values of a table.
    """

    target: str
    quantity: str
    walls: tuple[str, ...]
    unit: str
    kind: str
    sine: tuple[float, float, float, float] | None
    drive: Drive
    parameters: tuple[float, ...]

    def _points(self, t_end: float) -> tuple[np.ndarray, np.ndarray]:
        """The signal's points (a square wave's up to past ``t_end``)."""
        kind, p = self.drive.kind, self.parameters
        if kind == "ramp":
            return signals.ramp_points(*p)
        if kind == "table":
            n = len(p) // 2
            return np.array(p[:n]), np.array(p[n:])
        if kind == "square":
            return signals.square_points(*p, t_end, f"drives[{self.target!r}]")
        raise ValueError(f"{self.target}: a sine drive has no points, expected its .sine")

    def value(self, t: Any) -> Any:
        """The value (SI) at the times ``t`` (s > 0; a float for a number, an array for an array)."""
        times = np.asarray(t, dtype=float)
        if self.sine is not None:
            offset, amplitude, frequency, phase = self.sine
            out = offset + amplitude * np.sin(2.0 * np.pi * frequency * times + phase)
        elif self.drive.kind == "square":
            out = signals.square_value(*self.parameters, times)
        else:
            out = signals.evaluate(*self._points(1.0), times)
        return out if out.ndim else float(out)

    def piecewise(self, t_end: float) -> tuple[np.ndarray, np.ndarray]:
        """(times, values), SI, piecewise linear from 0 to ``t_end`` with each jump as a time listed twice (its
        left value, then its right one); not for a sine."""
        signals.check_end(t_end)
        return signals.clip(*self._points(t_end), t_end)

    def breakpoints(self, t_end: float) -> np.ndarray:
        """The sorted times in (0, t_end] where the drive jumps or its slope changes (none for a sine)."""
        signals.check_end(t_end)
        if self.sine is not None:
            return np.zeros(0)
        return signals.breakpoints(*self._points(t_end), t_end)

    def to_mapping(self) -> dict[str, Any]:
        """The drive's plain dict (``Drive.to_mapping``); bound again to ``target`` it is this drive."""
        return self.drive.to_mapping()


def drive_targets(case: Any) -> tuple[str, ...]:
    """The targets a drive can have in ``case``: the field, the pressure gradient, every wall's quantities and,
    with two walls, each wall's."""
    sides = case.geometry.wall_names if case.geometry.wall_count == 2 else ()
    return ("field", "pressure_gradient", *(f"wall.{q}" for q in WALL_QUANTITIES),
            *(f"wall.{side}.{q}" for side in sides for q in WALL_QUANTITIES))


def bind(drives: Mapping[str, Drive] | None, case: Any, where: str = "drives") -> tuple[BoundDrive, ...]:
    """Bind each drive to its target in ``case``, checked: the target exists and fits the wall, the values have
    the target's unit, and the case is valid at the drive's extreme values of a wall quantity.

    Parameters
    ----------
    drives : mapping of str to Drive, or None
        Target ("field", "pressure_gradient", "wall.zeta", "wall.top.charge_density", ...) -> drive.
    case : Case
        A slit or a capillary.
    where : str
        The name of ``drives`` in messages.

    Returns
    -------
    tuple of BoundDrive
        In the order of ``drives``; () for None or no drives.

    Raises
    ------
    InputError
        One line naming the target, the value and what was expected.
    """
    if drives is None:
        return ()
    if not isinstance(drives, Mapping):
        raise InputError(f"{where}: {drives!r} is not a mapping of targets to drives, expected e.g. "
                         "{'field': Drive.sine('10 kV/m', '1 MHz')}")
    if drives and case.geometry.kind not in ("slit", "capillary"):
        raise InputError(f"{where}: a {case.geometry.kind}'s section cannot be driven in time, expected a slit or a "
                         "capillary")
    bound = tuple(_bind_one(target, drive, case, where) for target, drive in drives.items())
    driven: dict[tuple[str, str], str] = {}
    for one in bound:
        for side in one.walls:
            other = driven.setdefault((side, one.quantity), one.target)
            if other != one.target:
                raise InputError(f"{where}: {other!r} and {one.target!r} both drive the {side} wall's {one.quantity}, "
                                 "expected one of them")
    return bound


def _bind_one(target: Any, drive: Any, case: Any, where: str) -> BoundDrive:
    targets = drive_targets(case)
    if target not in targets:
        close = difflib.get_close_matches(str(target), targets, n=1, cutoff=0.6)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(f"{where}: {target!r} is not a target of a drive of a {case.geometry.kind}{hint}, expected "
                         f"one of {', '.join(targets)}")
    label = f"{where}[{target!r}]"
    if not isinstance(drive, Drive):
        raise InputError(f"{label}: {drive!r} is not a Drive, expected Drive.sine(...), Drive.square(...), "
                         "Drive.ramp(...), Drive.table(...) or Drive.from_csv(...)")
    parts = target.split(".")
    quantity = parts[-1]
    walls = () if parts[0] != "wall" else ("bottom", "top") if len(parts) == 2 else (parts[1],)
    for side in walls:
        _check_wall(case, side, quantity, label)
    unit = QUANTITY_UNITS[quantity]
    parameters = _si_parameters(drive, unit, label)
    sine = parameters if drive.kind == "sine" else None
    bound = BoundDrive(target, quantity, walls, unit, "sine" if sine else "piecewise", sine, drive, parameters)
    if walls:
        _check_extremes(case, bound, label)
    return bound


def _check_wall(case: Any, side: str, quantity: str, label: str) -> None:
    """Refuse a wall quantity the wall does not have."""
    wall = case.walls[0 if side == "bottom" else 1]
    who = "the wall" if case.geometry.wall_count == 1 else f"the {side} wall"
    if quantity == "zeta" and wall.zeta is None:
        raise InputError(f"{label}: {who} fixes its charge, expected a wall with a fixed zeta (Wall(zeta=...)) for "
                         "a zeta drive")
    if quantity == "charge_density" and (wall.zeta is not None or wall.sites):
        why = "fixes its potential (zeta)" if wall.zeta is not None else "has acid-base sites (its charge regulates)"
        raise InputError(f"{label}: {who} {why}, expected a fixed-charge wall without sites "
                         "(Wall(charge_density=...)) for a charge_density drive")
    if quantity == "gate_voltage" and wall.gate_capacitance is None:
        raise InputError(f"{label}: {who} has no gate, expected a wall with a gate capacitance (Wall(..., "
                         "gate_voltage=..., gate_capacitance=...)) for a gate_voltage drive")


def _si_parameters(drive: Drive, unit: str, label: str) -> tuple[float, ...]:
    """The drive's parameters in SI, its values converted to the target's ``unit``."""
    factor = 1.0
    if drive.unit is not None:
        try:
            factor = to_si(f"1 {drive.unit}", unit, f"{label}.unit")
        except InputError:
            raise InputError(f"{label}.unit: {drive.unit!r} does not convert to {unit}, expected a unit of the "
                             f"target's quantity ({unit})") from None

    def si(value: float | str, key: str) -> float:
        if isinstance(value, str):
            return to_si(value, unit, f"{label}.{key}")
        number = value if factor == 1.0 else float(f"{value * factor:.15g}")
        if not math.isfinite(number):
            raise InputError(f"{label}.{key}: {value!r} {drive.unit} overflows in {unit}, expected a finite value")
        return number

    if drive.kind == "table":
        return (*drive.times, *(si(v, f"values[{i}]") for i, v in enumerate(drive.values)))
    if drive.kind == "ramp":
        return si(drive.start, "start"), si(drive.end, "end"), drive.duration, drive.delay
    head = (si(drive.offset, "offset"), si(drive.amplitude, "amplitude"), drive.frequency)
    return (*head, drive.phase) if drive.kind == "sine" else (*head, drive.duty, drive.delay)


def _check_extremes(case: Any, bound: BoundDrive, label: str) -> None:
    """Refuse a wall drive whose lowest or highest value makes a case outside the solver's domain."""
    from edl_solver.inputs.casefile import case_from_mapping, case_to_mapping
    from edl_solver.inputs.paths import set_input

    p = bound.parameters
    if bound.drive.kind in ("sine", "square"):
        values = [p[0] - abs(p[1]), p[0] + abs(p[1])]
    elif bound.drive.kind == "ramp":
        values = [p[0], p[1]]
    else:
        values = list(p[len(p) // 2:])
    base = json.dumps(case_to_mapping(case))
    for value in sorted({min(values), max(values)}):
        table = json.loads(base)
        set_input(table, bound.target, value)
        try:
            case_from_mapping(table)
        except InputError as exc:
            raise InputError(f"{label}: at {value:.6g} {bound.unit} the case is not valid: {exc}") from None


def drives_json(bound: tuple[BoundDrive, ...]) -> str:
    """JSON text of {target: drive mapping} ("{}" for no drives), the run's ``drives_json`` attribute."""
    return json.dumps({one.target: one.to_mapping() for one in bound})


def drives_from_json(text: str, case: Any) -> tuple[BoundDrive, ...]:
    """The bound drives of :func:`drives_json` text, bound again to ``case``."""
    try:
        data = json.loads(text)
    except (TypeError, ValueError):
        raise InputError(f"drives_json: {str(text)[:80]!r} is not JSON text, expected an object of targets to "
                         "drives") from None
    if not isinstance(data, dict):
        raise InputError(f"drives_json: {str(text)[:80]!r} is not a JSON object, expected targets to drives")
    return bind({target: Drive.from_mapping(table, f"drives_json[{target!r}]") for target, table in data.items()},
                case, "drives_json")
