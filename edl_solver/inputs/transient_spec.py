"""The ``[transient]`` section of a case file: the output times of a transient run, the case before the step and
the time-dependent drives (``edl transient CASE.toml``)::

    [transient]
    times = { start = "1 ns", stop = "10 us", count = 200, spacing = "log" }   # or a list: ["1 ns", "2 ns"]
    profile_times = ["10 ns", "1 us"]         # optional: the times of the profiles drawn (within the run)

    [transient.before]                        # optional: the case before the step, as changes of this case
    "wall.top.zeta" = "0 mV"                  # (the sweep paths of inputs.paths)
    "field" = "0 V/m"

    [transient.drive.field]                   # optional: one table per target (inputs.drives)
    kind = "sine"                             # sine, square, ramp or table
    amplitude = "10 kV/m"
    frequency = "1 MHz"

    [transient.drive."wall.top.zeta"]
    kind = "table"
    csv = "gate_trace.csv"                    # relative to the case file; or times = [...] and values = [...]

Rules: ``times`` are > 0 and increasing; a range has ``start`` > 0, ``stop`` > ``start``, ``count`` >= 2 values
spaced ``"log"`` (the default) or ``"linear"``, both ends included. Quote a dotted key (``"wall.top.zeta"``);
the unquoted form means the same. The case itself is read by ``inputs.casefile``, which leaves this section to
this module. Every error is one line naming the file, the dotted key, the value and what was expected.
"""

from __future__ import annotations

import difflib
from collections.abc import Mapping
from dataclasses import dataclass
from numbers import Integral, Real
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.drives import WALL_QUANTITIES, Drive
from edl_solver.inputs.units import to_si

__all__ = ["TRANSIENT_KEYS", "TransientSpec", "before_case", "read_transient_spec", "transient_from_mapping"]

#: Keys of the [transient] table, and of a range of times.
TRANSIENT_KEYS = ("times", "profile_times", "before", "drive")
_RANGE_KEYS = ("start", "stop", "count", "spacing")
_SPACINGS = ("log", "linear")
#: More output times than this is a typo, not a run.
MAX_TIMES = 100_000
#: Every name a drive's target may have in a file (``bind`` then keeps those of the case's geometry).
_TARGETS = ("field", "pressure_gradient", *(f"wall.{q}" for q in WALL_QUANTITIES),
            *(f"wall.{side}.{q}" for side in ("bottom", "top", "top_bottom", "sides") for q in WALL_QUANTITIES))
_EXAMPLE = 'times = { start = "1 ns", stop = "10 us", count = 200 } or times = ["1 ns", "2 ns"]'


@dataclass(frozen=True, eq=False)
class TransientSpec:
    """What the [transient] section asks for.

    Attributes
    ----------
    times : ndarray
        The output times, s (> 0, increasing).
    profile_times : ndarray or None
        The times of the profiles to draw, s; None: the reader of the run chooses.
    before_overrides : dict of str to float or str
        Input path -> SI value (a word for "model") of the case before the step; empty: the default before.
    drives : dict of str to Drive
        Target -> drive, unbound (``inputs.drives.bind`` checks them against the case).
    """

    times: np.ndarray
    profile_times: np.ndarray | None
    before_overrides: dict[str, Any]
    drives: dict[str, Drive]


def read_transient_spec(path: str | Path) -> TransientSpec:
    """Read the [transient] section of a case file (shape in the module docstring); CSV tables are found relative
    to the file's folder.

    Raises
    ------
    InputError
        One line starting with the file name and naming the dotted key.
    """
    from edl_solver.inputs.casefile import read_mapping

    return transient_from_mapping(read_mapping(path), str(path), Path(path).parent)


def transient_from_mapping(data: Mapping[str, Any], source: str = "", folder: str | Path = ".") -> TransientSpec:
    """The :class:`TransientSpec` of the parsed TOML of a case file; ``source`` prefixes every error, CSV files
    are relative to ``folder``."""
    try:
        return _spec(data, Path(folder))
    except InputError as exc:
        if source:
            raise InputError(f"{source}: {exc}") from None
        raise


def _spec(data: Mapping[str, Any], folder: Path) -> TransientSpec:
    if not isinstance(data, Mapping):
        raise InputError(f"case file: {data!r} is not a table, expected the sections of a case file and [transient]")
    if "transient" not in data:
        close = [key for key in data if difflib.get_close_matches(str(key), ["transient"], n=1, cutoff=0.7)]
        if close:
            raise InputError(f"unknown key {close[0]!r} (did you mean 'transient'?)")
        raise InputError(f"missing section [transient], expected [transient] with {_EXAMPLE}")
    table = data["transient"]
    if not isinstance(table, Mapping):
        raise InputError(f"transient: {table!r} is not a table, expected [transient] with {_EXAMPLE}")
    for key in table:
        if key not in TRANSIENT_KEYS:
            close = difflib.get_close_matches(str(key), TRANSIENT_KEYS, n=1, cutoff=0.6)
            hint = f"did you mean 'transient.{close[0]}'?" if close else f"known keys here: {', '.join(TRANSIENT_KEYS)}"
            raise InputError(f"unknown key 'transient.{key}' ({hint})")
    if "times" not in table:
        raise InputError(f"transient.times: missing, expected {_EXAMPLE}")
    times = _times(table["times"], "transient.times")
    profile_times = None
    if "profile_times" in table:
        profile_times = _time_list(table["profile_times"], "transient.profile_times")
        late = np.flatnonzero(profile_times > times[-1] * (1 + 1e-12))
        if late.size:
            raise InputError(f"transient.profile_times[{late[0]}]: {profile_times[late[0]]:.6g} s is after the last "
                             f"time ({times[-1]:.6g} s), expected times within the run")
    return TransientSpec(times, profile_times, _before(table.get("before", {})),
                         _drives(table.get("drive", {}), folder))


# -- times ---------------------------------------------------------------------------------------------------------


def _times(value: Any, key: str) -> np.ndarray:
    """A range table or a list of times (or one time)."""
    if not isinstance(value, Mapping):
        return _time_list(value, key)
    for name in value:
        if name not in _RANGE_KEYS:
            close = difflib.get_close_matches(str(name), _RANGE_KEYS, n=1, cutoff=0.6)
            hint = f"did you mean '{key}.{close[0]}'?" if close else f"known keys here: {', '.join(_RANGE_KEYS)}"
            raise InputError(f"unknown key '{key}.{name}' ({hint})")
    for name in ("start", "stop", "count"):
        if name not in value:
            raise InputError(f"{key}.{name}: missing, expected {_EXAMPLE}")
    start, stop = (to_si(value[name], "s", f"{key}.{name}") for name in ("start", "stop"))
    if not start > 0.0:
        raise InputError(f"{key}.start: {value['start']!r} is not after the step, expected a time > 0 s")
    if not stop > start:
        raise InputError(f"{key}.stop: {value['stop']!r} is not after start ({start:.6g} s), expected stop > start")
    count = value["count"]
    if isinstance(count, bool) or not isinstance(count, Integral) or not 2 <= count <= MAX_TIMES:
        raise InputError(f"{key}.count: {count!r} is not a number of times, expected a whole number from 2 to "
                         f"{MAX_TIMES}")
    spacing = value.get("spacing", "log")
    if spacing not in _SPACINGS:
        raise InputError(f"{key}.spacing: {spacing!r} is not a spacing, expected one of {', '.join(_SPACINGS)}")
    times = np.geomspace(start, stop, int(count)) if spacing == "log" else np.linspace(start, stop, int(count))
    times[0], times[-1] = start, stop  # exactly the ends given
    if np.any(np.diff(times) <= 0.0):
        raise InputError(f"{key}: {count} times from {start:.6g} s to {stop:.6g} s are not distinct in floating "
                         "point, expected fewer times or a wider range")
    return times


def _time_list(value: Any, key: str) -> np.ndarray:
    """A list of times (or one time) in s, > 0, increasing."""
    items = [value] if isinstance(value, (str, Real)) and not isinstance(value, bool) else value
    if not isinstance(items, list) or not items or len(items) > MAX_TIMES:
        raise InputError(f"{key}: {value!r} is not a list of times, expected from 1 to {MAX_TIMES} times such as "
                         '["1 ns", "1 us"]')
    times = np.array([to_si(item, "s", f"{key}[{i}]") for i, item in enumerate(items)])
    for i, time in enumerate(times):
        if not time > 0.0:
            raise InputError(f"{key}[{i}]: {items[i]!r} is not after the step, expected times > 0 s")
        if i and not time > times[i - 1]:
            raise InputError(f"{key}[{i}]: {items[i]!r} is not after the time before it ({times[i - 1]:.6g} s), "
                             "expected increasing times")
    return times


# -- the case before and the drives --------------------------------------------------------------------------------


def _flatten(table: Any, key: str, known: tuple[str, ...]) -> dict[str, Any]:
    """{path: value} of a table whose keys are dotted paths, quoted or not (``inputs.paths.flatten_dotted``)."""
    from edl_solver.inputs.paths import flatten_dotted

    if not isinstance(table, Mapping):
        raise InputError(f"{key}: {table!r} is not a table, expected [{key}] with one key per input path")

    def unknown(path: str) -> InputError:
        close = difflib.get_close_matches(path, known, n=1, cutoff=0.6)
        hint = f"did you mean {close[0]!r}?" if close else f"known here: {', '.join(known)}"
        return InputError(f'{key}: "{path}" is not a path known here ({hint})')

    return flatten_dotted(table, known, unknown)


def _before(table: Any) -> dict[str, Any]:
    """The changes of the case before the step: path -> SI value (a word for "model")."""
    from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS, check_conflicts

    key = "transient.before"
    flat = _flatten(table, key, (*PATH_UNITS, *WORD_PATHS))
    check_conflicts(flat, key)
    overrides: dict[str, Any] = {}
    for path, value in flat.items():
        where = f'{key}."{path}"'
        if path in WORD_PATHS:
            if not isinstance(value, str):
                raise InputError(f"{where}: {value!r} is not a word, expected e.g. \"pb\" or \"dh\"")
            overrides[path] = value
        else:
            overrides[path] = to_si(value, PATH_UNITS[path], where)
    return overrides


def _drives(table: Any, folder: Path) -> dict[str, Drive]:
    """Target -> Drive of the [transient.drive] tables (a table with ``csv`` is read from that file)."""
    key = "transient.drive"
    flat = _flatten(table, key, _TARGETS)
    drives = {}
    for target, spec in flat.items():
        where = f'{key}."{target}"'
        if isinstance(spec, Mapping) and "csv" in spec:
            drives[target] = _csv_drive(spec, where, folder)
        else:
            drives[target] = Drive.from_mapping(spec, where)
    return drives


def _csv_drive(spec: Mapping[str, Any], where: str, folder: Path) -> Drive:
    """A table drive read from the CSV file its ``csv`` key names (relative to the case file's folder)."""
    extra = [name for name in spec if name not in ("kind", "csv")]
    if extra:
        raise InputError(f"{where}.{extra[0]}: given beside csv, expected only kind = \"table\" and csv = \"FILE\" "
                         "(the file holds the times, the values and their units)")
    if spec.get("kind", "table") != "table":
        raise InputError(f"{where}.kind: {spec['kind']!r} with csv, expected kind = \"table\"")
    name = spec["csv"]
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{where}.csv: {name!r} is not a file name, expected the path of a CSV file of times and "
                         "values")
    try:
        return Drive.from_csv(folder / name)
    except InputError as exc:
        raise InputError(f"{where}.csv: {exc}") from None


def before_case(case: Case, spec: TransientSpec) -> Case | None:
    """The case before the step: ``case`` with the spec's ``before_overrides`` (the sweep's meaning of each path,
    ``inputs.paths``); None when there are none (the run's default before).

    Raises
    ------
    InputError
        ``transient.before: the case before the step is not valid: <the case's own message>``.
    """
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import case_at, make_axes

    if not spec.before_overrides:
        return None
    try:
        axes = make_axes({path: [value] for path, value in spec.before_overrides.items()})
        return case_at(case_to_mapping(case), axes, [0] * len(axes))
    except InputError as exc:
        raise InputError(f"transient.before: the case before the step is not valid: {exc}") from None
