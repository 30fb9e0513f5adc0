"""Sweep files: a base case and the axes of a design-space sweep, in one TOML file.

A sweep file is a case file (the same sections at the top level, see :mod:`edl_solver.inputs.casefile`, so
that any case file becomes a sweep by adding a table) plus a ``[sweep]`` table::

    # EO flow of a slit in KCl against height, wall potential and concentration
    field = "10 kV/m"

    [geometry]
    kind = "slit"
    height = "50 nm"                  # the base value; an axis of the same input replaces it

    [electrolyte]
    ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

    [wall]
    zeta = "-50 mV"

    [sweep]
    output_profiles = false           # optional: true (101 positions) or a number of positions across the
                                      # section also stores every case's profiles (large; slower;
                                      # not for a rectangle, whose profiles are 2-D)

    [sweep.axes]                      # one dimension per axis, in this order
    "geometry.height" = { log = ["2 nm", "2 um"], points = 50 }       # 50 values, evenly spaced in log
    "wall.zeta" = { linear = ["-150 mV", "-10 mV"], points = 30 }     # 30 values, evenly spaced
    "electrolyte.concentration" = ["0.1 mM", "1 mM", "10 mM"]         # the values themselves

Axes vary together along one dimension (named after the first of them) when they are zipped::

    [sweep]
    zip = [["wall.zeta", "solvent.temperature"]]   # a list of groups; ["a", "b"] alone is one group

    [sweep.axes]
    "wall.zeta" = ["-20 mV", "-40 mV", "-60 mV"]
    "solvent.temperature" = ["15 degC", "25 degC", "35 degC"]

Rules:

- An axis key is the dotted address of a case input (``edl_solver.inputs.paths.PATH_UNITS``: "geometry.height",
  "wall.zeta", "wall.top.charge_density", "solvent.temperature", "field", "model", ...) plus
  "electrolyte.concentration", which scales every ion so that the first ion's concentration is the value.
  Quote the key (``"wall.zeta" = ...``); the unquoted TOML form (``wall.zeta = ...``) means the same.
- Values carry their units ("2 nm", "-40 mV") or are plain SI numbers; one axis does not mix the two.
- A range has ``points >= 1`` values from the first bound to the second, both included (``points = 1``
  gives the first bound); a ``log`` range needs positive bounds.
- An input the axes set may be left out of the base case when its whole section is missing (no
  ``[wall]`` with a "wall.zeta" axis): the first value of the axis stands in for it.
- Two axes may not set the same input ("wall.zeta" with "wall.charge_density", or with "wall.top.zeta":
  use "wall.bottom.zeta" and "wall.top.zeta" for two different walls).

Every error is one line naming the file and the dotted TOML key, e.g.
``design.toml: sweep.axes."geometry.height".points: 0 is below 1, expected ...``.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from numbers import Real
from pathlib import Path
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.paths import check_conflicts
from edl_solver.sweeping.profiles import check_geometry, check_points

__all__ = ["SWEEP_KEYS", "SweepSpec", "load_sweep", "sweep_from_mapping"]

#: Keys of the [sweep] table.
SWEEP_KEYS = ("axes", "zip", "output_profiles")
#: Keys of a range table.
_RANGE_KEYS = ("log", "linear", "points")
#: More values than this on one axis is a typo, not a design space (it would also exhaust memory).
MAX_POINTS = 1_000_000
#: Wall keys that make a wall a charged one; a fixed zeta excludes them (as ``case.Wall`` does).


@dataclass(frozen=True)
class SweepSpec:
    """What a sweep file asks for: the arguments of :func:`edl_solver.sweep`. Unpacks as
    ``case, axes, zipped``.

    Attributes
    ----------
    case : Case
        The base case.
    axes : dict of str to list
        Dotted input path -> values in SI units (floats; words for "model"), in the file's order.
    zipped : list of list of str
        Groups of axis paths varied together along one dimension.
    profile_points : int
        Positions across the section at which profiles are stored (0: none), ``sweep(profiles=...)``.
    """

    case: Case
    axes: dict[str, list[Any]]
    zipped: list[list[str]]
    profile_points: int = 0

    def __iter__(self) -> Iterator[Any]:
        return iter((self.case, self.axes, self.zipped))


def load_sweep(path: str | Path) -> SweepSpec:
    """Read a TOML sweep file (shape in the module docstring).

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    SweepSpec
        ``(case, axes, zipped)``, ready for ``edl_solver.sweep(case, axes, zipped=zipped)``.

    Raises
    ------
    InputError
        One line starting with the file name and naming the dotted key: a missing or invalid file, an
        unknown key or axis (with a "did you mean" hint), an empty list, a bad range (``points`` not a
        positive integer, a log bound not positive), values with mixed or wrong units,
        zipped axes of different lengths, conflicting axes, or a value the case does not accept.
    """
    from edl_solver.inputs.casefile import read_mapping

    source = str(path)
    file = Path(path)
    # Worded here rather than by read_mapping, which speaks of case files.
    if not file.exists():
        raise InputError(f"{source}: sweep file not found")
    if file.is_dir():
        raise InputError(f"{source}: is a directory, expected a TOML sweep file")
    return sweep_from_mapping(read_mapping(file), source)


def sweep_from_mapping(data: Mapping[str, Any], source: str = "") -> SweepSpec:
    """Build a :class:`SweepSpec` from the parsed TOML of a sweep file.

    Parameters
    ----------
    data : Mapping
        The case-file sections and a ``"sweep"`` table (see the module docstring).
    source : str, optional
        Where ``data`` came from (a file name); prefixes every error message when given.

    Returns
    -------
    SweepSpec

    Raises
    ------
    InputError
        As :func:`load_sweep`.
    """
    try:
        return _spec(data)
    except InputError as exc:
        if source:
            raise InputError(f"{source}: {exc}") from None
        raise


def _spec(data: Mapping[str, Any]) -> SweepSpec:
    from edl_solver.inputs.casefile import case_from_mapping

    if not isinstance(data, Mapping):
        raise InputError(f"sweep file: {data!r} is not a table, expected the sections of a case file and [sweep]")
    table = _sweep_table(data)
    raw_axes = _flatten_axes(table.get("axes"))
    axes = {path: _axis_values(path, spec) for path, spec in raw_axes.items()}
    check_conflicts(axes, "sweep.axes")
    zipped = _zip_groups(table.get("zip", []), axes)
    where = "sweep.output_profiles"
    profile_points = check_points(table.get("output_profiles", False), where)
    case_data = {key: value for key, value in data.items() if key != "sweep"}
    _fill_from_axes(case_data, axes)
    case = case_from_mapping(case_data)
    check_geometry(case.geometry, profile_points, where)
    _check_cases(case, axes, raw_axes, zipped)
    return SweepSpec(case, axes, zipped, profile_points)


# -- the [sweep] table -------------------------------------------------------------------------------


def _sweep_table(data: Mapping[str, Any]) -> Mapping[str, Any]:
    if "sweep" not in data:
        # A misspelt section ("[sweeps]") is reported as such rather than as a missing one.
        close = [key for key in data if difflib.get_close_matches(str(key), ["sweep"], n=1, cutoff=0.7)]
        if close:
            raise InputError(f"unknown key {close[0]!r} (did you mean 'sweep'?)")
        raise InputError("missing section [sweep], expected [sweep.axes] with at least one axis, e.g. "
                         '"wall.zeta" = ["-20 mV", "-40 mV"]')
    table = data["sweep"]
    if not isinstance(table, Mapping):
        raise InputError(f"sweep: {table!r} is not a table, expected [sweep] with [sweep.axes]")
    for key in table:
        if key not in SWEEP_KEYS:
            raise InputError(f"unknown key 'sweep.{key}'{_did_you_mean(str(key), SWEEP_KEYS, 'sweep.')}")
    return table


def _did_you_mean(key: str, known: tuple[str, ...] | list[str], prefix: str = "") -> str:
    close = difflib.get_close_matches(key, list(known), n=1, cutoff=0.6)
    # Shortened or lengthened names ("lin", "logarithmic") are too far apart for difflib.
    close = close or [k for k in known if min(len(k), len(key)) >= 3 and (k.startswith(key) or key.startswith(k))]
    if close:
        return f" (did you mean '{prefix}{close[0]}'?)"
    return f" (known keys here: {', '.join(known)})"


# -- axes --------------------------------------------------------------------------------------------


def _key(path: str, *more: str) -> str:
    """The dotted TOML key of an axis (its path quoted), e.g. sweep.axes."wall.zeta".points."""
    return ".".join((f'sweep.axes."{path}"', *more))


def _sweepable() -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(every sweepable path, the paths whose values are words)."""
    from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS

    return (*PATH_UNITS, *WORD_PATHS), tuple(WORD_PATHS)


def _flatten_axes(axes: Any) -> dict[str, Any]:
    """{path: spec} in the file's order; unquoted dotted keys arrive as nested tables and are joined."""
    if axes is None:
        raise InputError('sweep.axes: missing, expected [sweep.axes] with at least one axis, e.g. '
                         '"wall.zeta" = ["-20 mV", "-40 mV"]')
    if not isinstance(axes, Mapping) or not axes:
        raise InputError(f"sweep.axes: {axes!r} has no axes, expected at least one, e.g. "
                         '"wall.zeta" = ["-20 mV", "-40 mV"]')
    from edl_solver.inputs.paths import flatten_dotted

    known, _ = _sweepable()
    return flatten_dotted(axes, known, lambda path: InputError(
        f"sweep.axes: {path!r} is not an input a sweep can vary{_axis_hint(path)}"))


def _axis_hint(path: str) -> str:
    from edl_solver.inputs.casefile import CASE_KEYS

    known, _ = _sweepable()
    if path in CASE_KEYS:  # a real input: a suggestion of a similar name would mislead
        return f" (it is a case input, but not a sweepable one: {', '.join(known)})"
    close = difflib.get_close_matches(path, list(known), n=1, cutoff=0.6)
    if close:
        return f" (did you mean {close[0]!r}?)"
    return f" (sweepable inputs: {', '.join(known)})"


def _axis_values(path: str, spec: Any) -> list[Any]:
    """The values of one axis, in SI units (words for word paths)."""
    _, words = _sweepable()
    if isinstance(spec, Mapping):
        if path in words:
            raise InputError(f"{_key(path)}: a range of words is not defined, expected a list such as "
                             '["pb", "dh"]')
        return _range_values(path, spec)
    if not isinstance(spec, list):
        raise InputError(f"{_key(path)}: {spec!r} is not a list of values or a range, expected e.g. "
                         '["1 mM", "10 mM"] or { log = ["1 mM", "100 mM"], points = 5 }')
    if not spec:
        raise InputError(f"{_key(path)}: the list of values is empty, expected at least one value")
    if path in words:
        for i, word in enumerate(spec):
            if not isinstance(word, str):
                raise InputError(f"{_key(path)}[{i}]: {word!r} is not a word, expected e.g. \"pb\" or \"dh\"")
        return list(spec)
    return _numbers(path, spec, _key(path))


def _numbers(path: str, items: list[Any], key: str) -> list[float]:
    """Numbers or strings with units -> SI floats; one axis uses one of the two forms throughout."""
    from edl_solver.inputs.paths import PATH_UNITS
    from edl_solver.inputs.units import to_si

    unit = PATH_UNITS[path]
    values = []
    for i, item in enumerate(items):
        if isinstance(item, bool) or not isinstance(item, (str, Real)):
            raise InputError(f"{key}[{i}]: {item!r} is not a value, expected a number or a string with units")
        values.append(to_si(item, unit, f"{key}[{i}]"))
    if unit != "dimensionless":
        # A bare number is SI; next to values with units it is more likely a unit forgotten.
        texts = [i for i, item in enumerate(items) if isinstance(item, str)]
        numbers = [i for i, item in enumerate(items) if not isinstance(item, str)]
        if texts and numbers:
            raise InputError(f"{key}[{numbers[0]}]: {items[numbers[0]]!r} has no unit while {items[texts[0]]!r} "
                             f"has one, expected every value with units (or every value a number in {unit})")
    return values


def _range_values(path: str, spec: Mapping[str, Any]) -> list[float]:
    """A ``log`` or ``linear`` range of ``points`` values, both bounds included."""
    import numpy as np

    for key in spec:
        if key not in _RANGE_KEYS:
            raise InputError(f"unknown key {_key(path, str(key))!r}{_did_you_mean(str(key), _RANGE_KEYS)}")
    kinds = [kind for kind in ("log", "linear") if kind in spec]
    if len(kinds) != 1:
        given = "both log and linear" if kinds else "neither log nor linear"
        raise InputError(f"{_key(path)}: {given} given, expected one of log = [start, stop] or "
                         "linear = [start, stop], with points = N")
    kind = kinds[0]
    bounds = spec[kind]
    if not isinstance(bounds, list) or len(bounds) != 2:
        raise InputError(f"{_key(path, kind)}: {bounds!r} is not two bounds, expected [start, stop] "
                         'such as ["2 nm", "2 um"]')
    if "points" not in spec:
        raise InputError(f"{_key(path, 'points')}: missing, expected the number of values, e.g. points = 10")
    points = spec["points"]
    if isinstance(points, bool) or not isinstance(points, int):
        raise InputError(f"{_key(path, 'points')}: {points!r} is not an integer, expected a whole number "
                         "of values such as 10")
    if not 1 <= points <= MAX_POINTS:
        raise InputError(f"{_key(path, 'points')}: {points} is out of range, expected 1 <= points <= {MAX_POINTS}")
    start, stop = _numbers(path, bounds, _key(path, kind))
    if kind == "log":
        for bound, value in zip(bounds, (start, stop)):
            if not value > 0.0:
                raise InputError(f"{_key(path, kind)}: {bound!r} is not positive, expected positive bounds "
                                 "for a logarithmic range (use linear = [...] to cross or touch zero)")
        values = np.geomspace(start, stop, points) if points > 1 else np.array([start])
    else:
        values = np.linspace(start, stop, points)
    # 15 significant digits, as units.to_si does: "50 nm" in a range is 5e-08, not 4.999999999999999e-08,
    # so that the coordinate can be selected by the value the user has in mind.
    return [float(f"{v:.15g}") for v in values]


def _zip_groups(value: Any, axes: Mapping[str, list[Any]]) -> list[list[str]]:
    if not isinstance(value, list):
        raise InputError(f"sweep.zip: {value!r} is not a list of groups, expected e.g. "
                         '[["geometry.height", "wall.zeta"]]')
    if value and all(isinstance(item, str) for item in value):  # one group written without its brackets
        value = [value]
    groups: list[list[str]] = []
    seen: set[str] = set()
    for g, group in enumerate(value):
        if not isinstance(group, list) or not all(isinstance(path, str) for path in group):
            raise InputError(f"sweep.zip[{g}]: {group!r} is not a list of axis names, expected e.g. "
                             '["geometry.height", "wall.zeta"]')
        if len(group) < 2:
            raise InputError(f"sweep.zip[{g}]: {group!r} names {len(group)} axis, expected two or more to vary "
                             "together")
        for path in group:
            if path not in axes:
                hint = difflib.get_close_matches(path, list(axes), n=1, cutoff=0.6)
                shown = f" (did you mean {hint[0]!r}?)" if hint else f" (the axes are {', '.join(axes)})"
                raise InputError(f"sweep.zip[{g}]: {path!r} is not an axis of [sweep.axes]{shown}")
            if path in seen:
                raise InputError(f"sweep.zip[{g}]: {path!r} is zipped twice, expected each axis in one group")
            seen.add(path)
        lengths = {len(axes[path]) for path in group}
        if len(lengths) > 1:
            shown = ", ".join(f'"{path}" has {len(axes[path])}' for path in group)
            raise InputError(f"sweep.zip[{g}]: zipped axes need the same number of values, but {shown}")
        groups.append(list(group))
    return groups


# -- the base case and the cases along each axis -----------------------------------------------------


def _fill_from_axes(case_data: dict[str, Any], axes: Mapping[str, list[Any]]) -> None:
    """Let an axis supply an input whose whole section the base case leaves out."""
    for path, values in axes.items():
        if path == "electrolyte.concentration" or "." not in path:
            continue  # the ions themselves must be given; top-level inputs have defaults
        section, *rest = path.split(".")
        if section in case_data:
            continue
        node = case_data.setdefault(section, {})
        for key in rest[:-1]:
            node = node.setdefault(key, {})
        node[rest[-1]] = values[0]


def _check_cases(case: Case, axes: Mapping[str, list[Any]], raw: Mapping[str, Any],
                 zipped: list[list[str]]) -> None:
    """Build the case at each value of each axis (the others at their first value), so that a value the
    case rejects (a negative height, a top wall on a capillary) is reported now, naming its axis.

    For a range only its bounds are built: the checks are intervals, which hold between the bounds.
    """
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import case_at, make_axes

    sweep_axes = make_axes(axes, zipped)
    table = case_to_mapping(case)
    for a, axis in enumerate(sweep_axes):
        ranged = all(isinstance(raw[path], Mapping) for path in axis.paths)
        indices = sorted({0, axis.size - 1}) if ranged else range(axis.size)
        for i in indices:
            index = [0] * len(sweep_axes)
            index[a] = i
            try:
                case_at(table, sweep_axes, index)
            except InputError as exc:
                path = axis.paths[0]
                key = _key(path) if len(axis.paths) == 1 else " and ".join(_key(p) for p in axis.paths)
                raise InputError(f"{key}: at {_shown_value(raw[path], i, axis.size)} the case is not valid: "
                                 f"{exc}") from None


def _shown_value(spec: Any, i: int, size: int) -> str:
    """The value as the file writes it: the list item, or the range bound."""
    if isinstance(spec, list):
        return repr(spec[i])
    bounds = next(spec[k] for k in ("log", "linear") if k in spec)
    return f"{bounds[0 if i == 0 else 1]!r} (a bound of the range)" if size > 1 else repr(bounds[0])
