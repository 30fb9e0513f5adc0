"""The sections of a case file ([geometry], [electrolyte], [wall], [solvent], [numerics]) turned into the
objects of a ``Case``; each error names the dotted key of the file.

Split from :mod:`edl_solver.inputs.casefile`, which checks the whole file's shape and puts the sections
together.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Mapping
from typing import Any, TypeVar

from edl_solver.errors import InputError
from edl_solver.inputs.casefile_keys import SOLVENT_PROPERTIES, WALL_KEYS, WALL_PAIRS, geometry_of
from edl_solver.inputs.electrolyte import Electrolyte, Ion
from edl_solver.inputs.geometry import GEOMETRIES, Geometry
from edl_solver.inputs.solvent import Solvent, Water
from edl_solver.inputs.wall import Site, Wall

__all__ = ["EXAMPLES", "WALL_PRESETS", "build", "build_electrolyte", "build_geometry", "build_solvent", "build_walls",
           "optional_table", "required_section", "without_none"]

T = TypeVar("T")

#: Named walls for ``preset = "..."`` in a wall table: constructors taking only ``slip_length``.
WALL_PRESETS: dict[str, Callable[..., Wall]] = {"silica": Wall.silica}

#: An example size of each geometry for messages.
_SIZE_EXAMPLES = {"slit": "'50 nm'", "capillary": "'20 nm'", "rectangle": "'200 nm'"}

EXAMPLES = {
    "geometry": 'kind = "slit" and height = "50 nm" (or kind = "capillary" and radius = "20 nm", or kind = '
                '"rectangle", width = "200 nm" and height = "50 nm")',
    "electrolyte": 'ions = { "K+" = "1 mM", "Cl-" = "1 mM" }',
    "wall": 'zeta = "-50 mV", charge_density = "-2 mC/m^2" or preset = "silica"',
    "site": 'density = "8 nm^-2", pK = 7.5, charges = [0, -1]',
}


def without_none(value: Any) -> Any:
    """``value`` with every None-valued key of its tables dropped, recursively."""
    if isinstance(value, Mapping):
        return {key: without_none(item) for key, item in value.items() if item is not None}
    if isinstance(value, list):
        return [without_none(item) for item in value]
    return value


def required_section(data: Mapping[str, Any], name: str) -> Mapping[str, Any]:
    """A required table of the case, e.g. [geometry]."""
    if name not in data:
        raise InputError(f"missing section [{name}], expected {EXAMPLES[name]}")
    return optional_table(data[name], name)


def optional_table(value: Any, path: str) -> Mapping[str, Any]:
    """``value`` if it is a table (e.g. [solvent]), else one line naming ``path``."""
    if not isinstance(value, Mapping):
        raise InputError(f"{path}: {value!r} is not a table, expected [{path}] with its keys")
    return value


def build(constructor: Callable[..., T], kwargs: Mapping[str, Any], rename: tuple[str, str] | None = None) -> T:
    """Call ``constructor(**kwargs)``; ``rename`` rewrites the field prefix of its error messages so that
    they name the key of the file (the objects know only their own field names)."""
    try:
        return constructor(**kwargs)
    except InputError as exc:
        message = str(exc)
        if rename is not None and message.startswith(rename[0]):
            raise InputError(rename[1] + message[len(rename[0]):]) from None
        raise


def _flag(table: Mapping[str, Any], key: str, path: str) -> bool | None:
    """A true/false key of ``table`` (None when absent); TOML has booleans, so 1 or "yes" is an error."""
    value = table.get(key)
    if value is not None and not isinstance(value, bool):
        raise InputError(f"{path}.{key}: {value!r} is not true or false, expected a boolean")
    return value



def build_geometry(table: Mapping[str, Any]) -> Geometry:
    """[geometry]: its ``kind`` (one of ``GEOMETRIES``) and that geometry's size keys (``size_keys``)."""
    kind = table.get("kind")
    if kind is None:
        # Unambiguous without kind: a width makes a rectangle, else a height a slit, a radius a capillary.
        given = [name for name, shape in GEOMETRIES.items() if set(shape.size_keys) <= set(table)]
        given = ["rectangle"] if "rectangle" in given else given
        if len(given) != 1:
            choices = " or ".join(f"{name!r} (with {' and '.join(shape.size_keys)})"
                                  for name, shape in GEOMETRIES.items())
            raise InputError(f"geometry.kind: missing, expected {choices}")
        kind = given[0]
    if kind not in GEOMETRIES:
        close = difflib.get_close_matches(str(kind).lower(), list(GEOMETRIES), n=1, cutoff=0.5)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(f"geometry.kind: {kind!r} is not a geometry{hint}, expected "
                         f"{' or '.join(repr(name) for name in GEOMETRIES)}")
    keys = GEOMETRIES[kind].size_keys
    for other in GEOMETRIES.values():
        for key in other.size_keys:
            if key not in keys and key in table:
                raise InputError(f"geometry.{key}: {table[key]!r} is not used by a {kind}, expected "
                                 f"{' and '.join(f'geometry.{k}' for k in keys)}")
    for key in keys:
        if key not in table:
            raise InputError(f"geometry.{key}: missing, expected the {kind}'s {key} like "
                             f"{_SIZE_EXAMPLES.get(kind, repr('20 nm'))}")
    return GEOMETRIES[kind](*(table[key] for key in keys))


def build_electrolyte(table: Mapping[str, Any]) -> Electrolyte:
    """[electrolyte]: ions from the table of names (``ions = {...}``) and/or ion tables, pH, water ions."""
    # electrolyte.diameter: the diameter of every ion that does not give its own (the steric model
    # needs one common size, and the short form ions = {...} has no room for it).
    shared = {"diameter": table["diameter"]} if "diameter" in table else {}
    ions: list[Ion] = []
    listed = table.get("ions")
    if isinstance(listed, Mapping):
        ions.extend(build(Ion, {"name": name, "concentration": c, **shared}, rename=("ion:", "electrolyte.ions:"))
                    for name, c in listed.items())
    elif listed is not None:
        ions.extend(_ion_list(listed, "electrolyte.ions", shared))
    if "ion" in table:
        ions.extend(_ion_list(table["ion"], "electrolyte.ion", shared))
    if not ions:
        raise InputError(f"electrolyte.ions: missing, expected {EXAMPLES['electrolyte']}")
    return Electrolyte(tuple(ions), pH=table.get("pH"), water_ions=bool(_flag(table, "water_ions", "electrolyte")))


def _ion_list(entries: Any, path: str, shared: Mapping[str, Any]) -> list[Ion]:
    if not isinstance(entries, list):
        raise InputError(f"{path}: {entries!r} is not a list of ion tables or a table of concentrations, "
                         f"expected e.g. {EXAMPLES['electrolyte']}")
    ions = []
    for i, entry in enumerate(entries):
        if not isinstance(entry, Mapping):
            raise InputError(f"{path}[{i}]: {entry!r} is not an ion table, expected name, concentration "
                             "(and valence, diffusivity for ions outside the table)")
        if "name" not in entry:
            raise InputError(f"{path}[{i}].name: missing, expected an ion name such as 'K+'")
        ions.append(build(Ion, {**shared, **entry}, rename=("ion:", f"{path}[{i}].name:")))
    return ions


def build_walls(table: Mapping[str, Any], geometry: Any) -> Wall | tuple[Wall, Wall]:
    """[wall] (one condition for every wall) or a pair of wall tables, named by the geometry's ``wall_names``:
    [wall.bottom] and [wall.top] of a slit, [wall.top_bottom] and [wall.sides] of a rectangle."""
    given = [name for name in WALL_PAIRS if name in table]
    if not given:
        return _one_wall(table, "wall")
    shape = geometry_of(geometry)
    if shape is None:  # the geometry's own error is raised before the walls are built
        raise InputError(f"wall.{given[0]}: the geometry is not known, expected [wall] with {EXAMPLES['wall']}")
    if any(key in table for key in WALL_KEYS):
        pair = "/".join(f"[wall.{name}]" for name in (shape.wall_names if shape.wall_count == 2 else given))
        raise InputError(f"wall: both a condition for every wall and {pair} given, expected one of the two")
    if shape.wall_count == 1:
        raise InputError(f"wall.{given[0]}: a {shape.kind} has one wall, expected [wall] with "
                         f"{EXAMPLES['wall']}")
    names = shape.wall_names
    tables = " and ".join(f"[wall.{name}]" for name in names)
    for name in given:
        if name not in names:
            raise InputError(f"wall.{name}: a {shape.kind} has no such walls, expected {tables} (or one [wall] "
                             "for every wall)")
    for name in names:
        if name not in table:
            raise InputError(f"wall.{name}: missing, expected [wall.{name}] with {EXAMPLES['wall']} "
                             f"(a {shape.kind} with [wall.{given[0]}] needs {tables})")
    return tuple(_one_wall(optional_table(table[name], f"wall.{name}"), f"wall.{name}") for name in names)


def _one_wall(table: Mapping[str, Any], path: str) -> Wall:
    """One wall table (at ``path``, e.g. "wall.top"): a preset, or the fields of ``Wall``."""
    if "preset" in table:
        return _preset(table, path)
    kwargs = {key: value for key, value in table.items() if key != "site"}
    if "site" in table:
        kwargs["sites"] = _sites(table["site"], path)
    try:
        return Wall(**kwargs)
    except InputError as exc:  # Wall names itself "wall" and its list "sites"; the file says path and "site"
        message = str(exc)
        if message.startswith("wall"):
            message = path + message[len("wall"):]
        if message.startswith(f"{path}.sites"):
            message = f"{path}.site" + message[len(f"{path}.sites"):]
        raise InputError(message) from None


def _preset(table: Mapping[str, Any], path: str) -> Wall:
    name = table["preset"]
    if not isinstance(name, str) or name not in WALL_PRESETS:
        close = difflib.get_close_matches(str(name).lower(), list(WALL_PRESETS), n=1, cutoff=0.5)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(f"{path}.preset: {name!r} is not a wall preset{hint}, expected one of "
                         f"{', '.join(WALL_PRESETS)}")
    extra = [key for key in table if key not in ("preset", "slip_length")]
    if extra:
        raise InputError(f"{path}.{extra[0]}: {table[extra[0]]!r} given with preset = {name!r}, which sets the "
                         "whole wall; expected only slip_length beside a preset (or the wall in full instead)")
    return build(WALL_PRESETS[name], {key: table[key] for key in ("slip_length",) if key in table},
                  rename=("wall", path))


def _sites(entries: Any, path: str) -> tuple[Site, ...]:
    """The sites of a wall: [[wall.site]] tables (a single [wall.site] table is one site)."""
    if isinstance(entries, Mapping):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(f"{path}.site: {entries!r} is not a list of site tables, expected [[{path}.site]] "
                         f"with {EXAMPLES['site']}")
    sites = []
    for i, entry in enumerate(entries):
        where = f"{path}.site[{i}]"
        if not isinstance(entry, Mapping):
            raise InputError(f"{where}: {entry!r} is not a site table, expected {EXAMPLES['site']}")
        for key, expected in (("density", "a site density like '8 nm^-2'"), ("pK", "a pK like 7.5")):
            if key not in entry:
                raise InputError(f"{where}.{key}: missing, expected {expected}")
        name = entry.get("name", "site")
        if not isinstance(name, str):
            raise InputError(f"{where}.name: {name!r} is not a name, expected a string like 'silanol'")
        kwargs = dict(entry)
        pk, charges = entry["pK"], entry.get("charges")
        if isinstance(pk, list):
            kwargs["pK"] = tuple(pk)
        elif isinstance(pk, bool) or not isinstance(pk, (int, float, str)):
            raise InputError(f"{where}.pK: {pk!r} is not a number or a list of numbers, expected e.g. 7.5 or "
                             "[4.0, 9.0]")
        if isinstance(charges, list):
            kwargs["charges"] = tuple(charges)
        elif charges is not None:
            raise InputError(f"{where}.charges: {charges!r} is not a list of charge numbers, expected e.g. [0, -1]")
        sites.append(build(Site, kwargs, rename=(f"site {name}", where)))
    return tuple(sites)


def build_solvent(table: Mapping[str, Any]) -> Solvent:
    """Water (correlations for what is not given) unless another ``name`` is given with every property."""
    name = table.get("name", "water")
    properties = {key: table[key] for key in (*SOLVENT_PROPERTIES, "density") if key in table}
    coefficient = table.get("viscoelectric_coefficient")
    default = _flag(table, "viscoelectric", "solvent")
    if default is not None and coefficient is not None:
        raise InputError(f"solvent.viscoelectric: {default!r} given with viscoelectric_coefficient = "
                         f"{coefficient!r}, expected one of the two")
    if name == "water":
        viscoelectric = coefficient if coefficient is not None else bool(default)
        return build(Water, {**properties, "viscoelectric": viscoelectric}, rename=("water.", "solvent."))
    if default:
        raise InputError(f"solvent.viscoelectric: true takes water's coefficient, but the solvent is {name!r}, "
                         "expected solvent.viscoelectric_coefficient (m^2/V^2) for it")
    for key in SOLVENT_PROPERTIES:
        if key not in properties:
            raise InputError(f"solvent.{key}: missing, expected it for solvent {name!r} (only water has "
                             "built-in properties)")
    extra = {} if coefficient is None else {"viscoelectric_coefficient": coefficient}
    return build(Solvent, {**properties, "name": name, **extra})

