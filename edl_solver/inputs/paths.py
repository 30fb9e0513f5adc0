"""The axes of a sweep: which case inputs can be swept, their units, and the case at a point.

An axis is a dotted path of a case input (the keys of a TOML case file, ``casefile.CASE_KEYS``: e.g.
"geometry.height", "wall.zeta", "wall.top.charge_density", "solvent.temperature", "field") plus three
special paths: "electrolyte.concentration" scales every ion's bulk concentration so that the first ion's
equals the value (the salt concentration for a single salt listed cation first), "electrolyte.valence"
gives every ion that valence with its own sign (a z:z salt of equal concentrations stays neutral; the
ions keep their names and diffusivities, as model ions of another valence), and "geometry.aspect_ratio"
sets a rectangle's width to the value times its height at the point (applied after every other axis, so
that it follows a swept height). A slit's two walls are "wall.bottom" and "wall.top", a rectangle's two
wall pairs "wall.top_bottom" and "wall.sides" (the geometry's ``wall_names``). The cases are the
cartesian product of the axes in the given order; axes can also be zipped (varied together along one
dimension, named after the first of them).
"""

from __future__ import annotations

import difflib
import json
from collections.abc import Callable, Collection, Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case

#: Paths that are not keys of a case file but are understood by sweeps.
SPECIAL_PATHS = ("electrolyte.concentration", "electrolyte.valence", "geometry.aspect_ratio")
#: W/H of a rectangle, set last (see the module docstring).
ASPECT_RATIO = "geometry.aspect_ratio"
#: The walls a path can name one of: a slit's, then a rectangle's pair (``Geometry.wall_names``).
_PAIRS = (("bottom", "top"), ("top_bottom", "sides"))
_SIDES = tuple(side for pair in _PAIRS for side in pair)

_WALL_UNITS = {"zeta": "V", "charge_density": "C/m^2", "slip_length": "m", "stern_capacitance": "F/m^2",
               "gate_voltage": "V", "gate_capacitance": "F/m^2"}
_SITE_UNITS = {"pK": "dimensionless", "density": "1/m^2"}

#: SI unit of each sweepable path (for parsing values with units and for the file's attributes). Walls:
#: "wall.<key>" sets every wall, "wall.bottom.<key>" / "wall.top.<key>" one slit wall, "wall.top_bottom.<key>" /
#: "wall.sides.<key>" one wall pair of a rectangle; sites as "wall.site[0].pK" (first kind of site;
#: "wall.top.site[0].density" and so on).
PATH_UNITS = {
    "geometry.height": "m", "geometry.radius": "m", "geometry.width": "m", ASPECT_RATIO: "dimensionless",
    "electrolyte.concentration": "mol/m^3", "electrolyte.pH": "dimensionless", "electrolyte.valence": "dimensionless",
    **{f"wall.{key}": unit for key, unit in _WALL_UNITS.items()},
    **{f"wall.{side}.{key}": unit for side in _SIDES for key, unit in _WALL_UNITS.items()},
    **{f"wall.site[{j}].{key}": unit for j in range(4) for key, unit in _SITE_UNITS.items()},
    **{f"wall.{side}.site[{j}].{key}": unit for side in _SIDES for j in range(4)
       for key, unit in _SITE_UNITS.items()},
    "solvent.temperature": "K", "solvent.relative_permittivity": "dimensionless", "solvent.viscosity": "Pa*s",
    "solvent.viscoelectric_coefficient": "m^2/V^2", "solvent.density": "kg/m^3",
    "field": "V/m", "pressure_gradient": "Pa/m", "tolerance": "dimensionless",
    "numerics.accuracy": "dimensionless",
}
#: Paths whose values are words, not numbers.
WORD_PATHS = ("model",)
#: Keys of a wall table that set its electrical condition (a fixed zeta excludes the others).
_CHARGE_KEYS = ("charge_density", "site", "stern_capacitance", "gate_voltage", "gate_capacitance")


@dataclass(frozen=True)
class Axis:
    """One dimension of a sweep: its name (the first path) and the paths varied along it."""

    name: str
    paths: tuple[str, ...]
    values: tuple[tuple[Any, ...], ...]  # per path, its values (same length for zipped paths)

    @property
    def size(self) -> int:
        return len(self.values[0])


def _check_path(path: str) -> str:
    known = tuple(PATH_UNITS) + WORD_PATHS
    if path not in known:
        close = difflib.get_close_matches(path, known, n=1, cutoff=0.6)
        hint = f" (did you mean {close[0]!r}?)" if close else f" (sweepable inputs: {', '.join(known)})"
        raise InputError(f"axes: {path!r} is not a sweepable input{hint}")
    return path


def _axis_values(path: str, values: Any) -> tuple[Any, ...]:
    """The values of one axis as SI floats (or words), checked."""
    from edl_solver.inputs.units import to_si

    if isinstance(values, (str, bytes)) or not isinstance(values, Iterable):
        raise InputError(f"axes.{path}: {values!r} is not a list of values, expected a sequence")
    items = list(values)
    if not items:
        raise InputError(f"axes.{path}: the list of values is empty, expected at least one value")
    if path in WORD_PATHS:
        return tuple(str(v) for v in items)
    return tuple(to_si(v, PATH_UNITS[path], f"axes.{path}") for v in items)


#: Pairs of geometry inputs that cannot be swept together: two geometries, or two settings of one width.
_GEOMETRY_CLASHES = ({"geometry.height", "geometry.radius"}, {"geometry.width", "geometry.radius"},
                     {ASPECT_RATIO, "geometry.radius"})


def check_conflicts(axes: Iterable[str], where: str = "axes") -> None:
    """Reject two axes of which the later would overwrite the other's input (the sweep applies the axes
    in order, so one of them would silently have no effect)."""
    paths = list(axes)
    for i, first in enumerate(paths):
        for second in paths[i + 1:]:
            if {first, second} in _GEOMETRY_CLASHES:
                raise InputError(f'{where}: "{first}" and "{second}" are two geometries, expected one of them')
            if {first, second} == {"geometry.width", ASPECT_RATIO}:
                raise InputError(f'{where}: "{first}" and "{second}" both set the width, expected one of them')
            if first.startswith("wall.") and second.startswith("wall.") and _walls_clash(first, second, where):
                raise InputError(f'{where}: "{first}" and "{second}" both set the same input, expected one '
                                 f"of them{_other_wall_hint(first, second)}")


def _wall_scope(path: str) -> tuple[str, str]:
    """(a wall's name ("bottom", "top", "top_bottom", "sides") or "every", the key within it) of a "wall..." path."""
    rest = path[len("wall."):]
    side, _, key = rest.partition(".")
    return (side, key) if side in _SIDES else ("every", rest)


def _walls_clash(first: str, second: str, where: str) -> bool:
    (scope1, key1), (scope2, key2) = _wall_scope(first), _wall_scope(second)
    if scope1 != scope2 and "every" not in (scope1, scope2):
        if _pair_of(scope1) != _pair_of(scope2):
            raise InputError(f'{where}: "{first}" and "{second}" name the walls of two geometries, expected '
                             "wall.bottom/wall.top (a slit) or wall.top_bottom/wall.sides (a rectangle)")
        return False  # the two walls of a slit, or the two wall pairs of a rectangle, are independent
    kinds = {key.split("[")[0].split(".")[0] for key in (key1, key2)}
    return key1 == key2 or ("zeta" in kinds and bool(kinds & set(_CHARGE_KEYS)))


def _pair_of(side: str) -> tuple[str, str]:
    """The pair of wall names ``side`` belongs to."""
    return next(pair for pair in _PAIRS if side in pair)


def _other_wall_hint(first: str, second: str) -> str:
    """For every wall against one wall: how to vary the other wall instead."""
    scopes = {_wall_scope(first)[0]: first, _wall_scope(second)[0]: second}
    if "every" not in scopes or len(scopes) != 2:
        return ""
    side = next(scope for scope in scopes if scope != "every")
    pair = _pair_of(side)
    other = pair[1] if side == pair[0] else pair[0]
    noun = "wall" if pair == _PAIRS[0] else "wall pair"
    return f" (vary the {other} {noun} with 'wall.{other}.{_wall_scope(scopes['every'])[1]}')"


def make_axes(axes: Mapping[str, Any], zipped: Sequence[Sequence[str]] = ()) -> tuple[Axis, ...]:
    """Axes in the given order; paths named together in ``zipped`` share one dimension.

    Raises
    ------
    InputError
        Unknown path, empty or non-list values, zipped paths of different lengths or not in ``axes``.
    """
    if not isinstance(axes, Mapping) or not axes:
        raise InputError(f"axes: {axes!r} is not a mapping of input paths to values, expected e.g. "
                         "{'geometry.height': [...]}")
    values = {_check_path(path): _axis_values(path, v) for path, v in axes.items()}
    check_conflicts(values)
    group_of: dict[str, tuple[str, ...]] = {}
    for group in zipped:
        group = tuple(group)
        for path in group:
            if path not in values:
                raise InputError(f"zip: {path!r} is not one of the axes, expected one of {', '.join(values)}")
            if path in group_of:
                raise InputError(f"zip: {path!r} is zipped twice, expected each axis in at most one group")
            group_of[path] = group
        lengths = {len(values[p]) for p in group}
        if len(lengths) > 1:
            shown = ", ".join(f"{p} has {len(values[p])}" for p in group)
            raise InputError(f"zip: zipped axes must have equal lengths, but {shown}")
    result, seen = [], set()
    for path in values:
        if path in seen:
            continue
        group = group_of.get(path, (path,))
        seen.update(group)
        result.append(Axis(name=group[0], paths=group, values=tuple(values[p] for p in group)))
    return tuple(result)


def _set_wall(wall: dict[str, Any], key: str, value: Any) -> None:
    """Set one key of a wall table; a fixed zeta and the charge keys exclude each other."""
    if key == "zeta":
        for other in _CHARGE_KEYS:
            wall.pop(other, None)
    elif key in ("charge_density", "stern_capacitance", "gate_voltage", "gate_capacitance"):
        wall.pop("zeta", None)
    if key.startswith("site["):
        index, leaf = int(key[5:key.index("]")]), key.split(".")[-1]
        sites = wall.get("site", [])
        if index >= len(sites):
            raise InputError(f"axes: wall.{key} names site {index}, but the wall has {len(sites)} kind(s) of site")
        sites[index][leaf] = value
        return
    wall[key] = value


def set_input(table: dict[str, Any], path: str, value: Any) -> None:
    """Set one input of a case mapping (the shape of a case file) at its dotted ``path``, as given.

    "wall.<key>" sets every wall ("wall.bottom.<key>" / "wall.top.<key>" one wall of a slit,
    "wall.top_bottom.<key>" / "wall.sides.<key>" one wall pair of a rectangle, splitting one condition for
    every wall into a pair); a fixed zeta and the charge keys exclude each other. Any other path sets the value
    at that key, creating the tables on the way (a value that is not a table where a table is needed is
    replaced). The sweep's own meanings (:func:`case_at`: scaled concentrations, valences, aspect ratios, water
    following its temperature) are not applied here.
    """
    if path.startswith("wall."):
        _set_wall_path(table, path[len("wall."):], value)
        return
    node = table
    *parents, leaf = path.split(".")
    for key in parents:
        child = node.get(key)
        if not isinstance(child, dict):
            child = node[key] = {}
        node = child
    node[leaf] = value


def _set_wall_path(table: dict[str, Any], rest: str, value: Any) -> None:
    """``rest`` of a "wall..." path: "<key>" on every wall, "<wall name>.<key>" on one wall (or wall pair)."""
    wall = table.get("wall")
    if not isinstance(wall, dict):
        wall = table["wall"] = {}
    names = next((pair for pair in _PAIRS if any(side in wall for side in pair)), None)
    side = rest.split(".")[0]
    if side in _SIDES:
        _check_wall_name(table.get("geometry"), side, rest)
        if names is None:  # one condition for every wall becomes a pair
            names = _pair_of(side)
            table["wall"] = wall = {names[0]: wall, names[1]: json.loads(json.dumps(wall))}
        if side not in names:
            raise InputError(f"wall.{rest}: the case's walls are [wall.{names[0]}] and [wall.{names[1]}], "
                             f"expected a path of one of them (wall.{names[0]}.* or wall.{names[1]}.*)")
        _set_wall(wall[side], rest[len(side) + 1:], value)
        return
    for one in ([wall.get(name) for name in names] if names is not None else [wall]):
        if isinstance(one, dict):
            _set_wall(one, rest, value)


def _check_wall_name(geometry: Any, side: str, rest: str) -> None:
    """Refuse a wall name that the case's geometry does not have (a slit's "top" on a rectangle)."""
    from edl_solver.inputs.casefile_keys import geometry_of

    shape = geometry_of(geometry)
    if shape is None or (side in shape.wall_names and shape.wall_count == 2):
        return
    key = rest[len(side) + 1:]
    if shape.wall_count == 1:
        raise InputError(f"wall.{rest}: a {shape.kind} has one wall, expected wall.{key}")
    first, second = shape.wall_names
    raise InputError(f"wall.{rest}: a {shape.kind}'s walls are {first} and {second}, expected wall.{first}.{key} "
                     f"or wall.{second}.{key}")


def _set_path(table: dict[str, Any], path: str, value: Any) -> None:
    """Set one swept input in the plain-dict form of a case (``case_to_mapping``)."""
    electrolyte = table["electrolyte"]
    if path in ("electrolyte.concentration", "electrolyte.pH", "electrolyte.valence") and any(
            ion["name"] in ("H+", "OH-") for ion in electrolyte["ions"]):
        raise InputError(f"axes: {path!r} cannot be swept when H+ or OH- are among the ions, expected the pH given "
                         "on its own (Electrolyte(..., pH=...) without water_ions)")
    if path == "electrolyte.concentration":
        ions = electrolyte["ions"]
        factor = value / ions[0]["concentration"]
        for ion in ions:
            ion["concentration"] *= factor
        return
    if path == "electrolyte.valence":
        if not (value >= 1 and value == int(value)):
            raise InputError(f"axes: electrolyte.valence {value:g} is not a valence, expected a whole number of at "
                             "least 1 (every ion takes it, with its own sign)")
        for ion in electrolyte["ions"]:
            ion["valence"] = int(value) if ion["valence"] > 0 else -int(value)
        return
    if path == ASPECT_RATIO:
        _set_aspect_ratio(table["geometry"], value)
        return
    if path == "solvent.temperature" and table["solvent"].get("name") == "water":
        # water's permittivity and viscosity follow the temperature (its correlations)
        coefficient = table["solvent"].get("viscoelectric_coefficient")
        table["solvent"] = {"temperature": value, "name": "water"}
        if coefficient:
            table["solvent"]["viscoelectric_coefficient"] = coefficient
        return
    set_input(table, path, value)


def _set_aspect_ratio(geometry: dict[str, Any], value: float) -> None:
    """A rectangle's width as ``value`` times its height (``ASPECT_RATIO``)."""
    if geometry.get("kind") != "rectangle":
        raise InputError(f"axes: {ASPECT_RATIO!r} is the width over the height of a rectangle, but the case is a "
                         f"{geometry.get('kind')}, expected a rectangle")
    if not value > 0.0:
        raise InputError(f"axes: {ASPECT_RATIO} {value!r} is not a ratio of two sides, expected a positive number")
    geometry["width"] = value * geometry["height"]


def case_at(base_table: Mapping[str, Any], axes: Sequence[Axis], index: Sequence[int]) -> Case:
    """The case at one multi-index of the sweep (an aspect ratio set last, on the point's height)."""
    from edl_solver.inputs.casefile import case_from_mapping

    table = json.loads(json.dumps(base_table))  # a deep copy of plain data
    settings = [(path, values[i]) for axis, i in zip(axes, index) for path, values in zip(axis.paths, axis.values)]
    for path, value in sorted(settings, key=lambda setting: setting[0] == ASPECT_RATIO):  # stable
        _set_path(table, path, value)
    return case_from_mapping(table)


def check_axis_values(base_table: Mapping[str, Any], axes: Sequence[Axis]) -> None:
    """Build the case at every value of every axis, the other axes at their first value, so that a value that
    makes no valid case (a negative height, pH 20, valence 0, an unknown model, a site that does not exist) is
    refused before anything is solved, naming its axis and value.

    A value that is valid alone but not together with a value of another axis is still found only at its
    point, where the sweep records it as failed.

    Raises
    ------
    InputError
        ``axes['PATH']: at VALUE the case is not valid: <the case's own message>``.
    """
    for a, axis in enumerate(axes):
        for i in range(axis.size):
            index = [0] * len(axes)
            index[a] = i
            try:
                case_at(base_table, axes, index)
            except InputError as exc:
                key = " and ".join(f"axes[{path!r}]" for path in axis.paths)
                raise InputError(f"{key}: at {axis.values[0][i]!r} the case is not valid: {exc}") from None


def flatten_dotted(table: Mapping[str, Any], known: Collection[str],
                   unknown: Callable[[str], Exception]) -> dict[str, Any]:
    """{path: value} of a table keyed by dotted input paths, quoted or not: TOML turns an unquoted dotted key into
    nested tables, which are joined back. No known path starts another, so the value at a known path is never
    walked into. A key that is no known path (nor the start of one) raises ``unknown(path)``.
    """
    flat: dict[str, Any] = {}

    def walk(node: Mapping[str, Any], prefix: str) -> None:
        for name, value in node.items():
            path = f"{prefix}{name}"
            if path in known:
                flat[path] = value
            elif isinstance(value, Mapping) and any(k.startswith(f"{path}.") for k in known):
                walk(value, f"{path}.")
            else:
                raise unknown(path)

    walk(table, "")
    return flat
