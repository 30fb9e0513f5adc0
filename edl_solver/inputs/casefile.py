"""Case files: a TOML text (or the nested dict it parses to) turned into a validated ``Case``, and back.

The file mirrors the fields of :class:`~edl_solver.inputs.case.Case`, so that every input has one dotted
address ("geometry.height", "wall.zeta", "electrolyte.ions") that error messages, command-line
overrides and parameter sweeps share::

    # a 50 nm slit in 1 mM KCl
    model = "pb"                      # or "dh", or "steric" (finite ion size: give every ion a diameter)
    field = "10 kV/m"
    pressure_gradient = "-1 bar/mm"
    tolerance = "5 %"

    [geometry]
    kind = "slit"                     # or "capillary", with radius = "..."
    height = "50 nm"

    [electrolyte]
    ions = { "K+" = "1 mM", "Cl-" = "1 mM" }      # ions of the built-in table
    pH = 7                                        # optional; needed by walls with acid-base sites
    # water_ions = true                           # add H+ and OH- at that pH as ions
    # diameter = "0.7 nm"                         # every ion's diameter (steric model)
    # [[electrolyte.ion]]                         # any ion, given in full
    # name = "X+"
    # valence = 1
    # concentration = "1 mM"
    # diffusivity = "1e-9 m^2/s"
    # diameter = "0.7 nm"

    [wall]                            # one condition for every wall; or [wall.bottom] and [wall.top]
    zeta = "-50 mV"                   # or charge_density = "-2 mC/m^2"
    # slip_length = "5 nm"            # Navier slip (any wall)
    # A charge-regulating wall instead of zeta: acid-base sites, a Stern layer, a gate.
    # preset = "silica"               # silanol sites and Stern layer of silica (only slip_length beside it)
    # stern_capacitance = "2.9 F/m^2"
    # gate_voltage = "1 V"
    # gate_capacitance = "10 mF/m^2"
    # [[wall.site]]                   # one table per kind of site ([[wall.bottom.site]] for one wall)
    # name = "silanol"
    # density = "8 nm^-2"
    # pK = 7.5                        # or a list, one pK per step: pK = [4.0, 9.0]
    # charges = [0, -1]               # charge numbers of the states, most protonated first

    [solvent]                         # optional: water at 25 degC by default
    temperature = "25 degC"
    # viscoelectric = true            # water's viscoelectric coefficient; or viscoelectric_coefficient = 1e-15

    [numerics]                        # optional
    accuracy = 1e-6

:func:`case_from_mapping` is the one place where a nested dict becomes a ``Case``; the objects of
``edl_solver.inputs.case`` do the value checks, this module checks the shape (sections, keys, tables).
:func:`case_to_mapping` writes the same shape back (the form of ``case_to_mapping``), and
:func:`dumps_case` writes it as TOML text.
"""

from __future__ import annotations

import difflib
import json
import re
import sys
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any, TypeVar

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case, Numerics
from edl_solver.inputs.electrolyte import Electrolyte, Ion
from edl_solver.inputs.geometry import Capillary, Slit
from edl_solver.inputs.solvent import Solvent, Water
from edl_solver.inputs.wall import Site, Wall

__all__ = ["CASE_KEYS", "WALL_PRESETS", "case_from_mapping", "case_to_mapping", "dumps_case", "load_case",
           "loads_case", "read_mapping"]

T = TypeVar("T")

_ION_KEYS = ("name", "valence", "concentration", "diffusivity", "diameter")
_ELECTROLYTE_KEYS = ("ions", "ion", "pH", "water_ions", "diameter")
_SITE_KEYS = ("density", "pK", "charges", "name")
#: Keys of a wall table other than its list of sites.
_WALL_VALUE_KEYS = ("zeta", "charge_density", "stern_capacitance", "gate_voltage", "gate_capacitance",
                    "slip_length", "preset")
_WALL_KEYS = (*_WALL_VALUE_KEYS, "site")
_SOLVENT_PROPERTIES = ("temperature", "relative_permittivity", "viscosity")
_SOLVENT_KEYS = (*_SOLVENT_PROPERTIES, "name", "viscoelectric_coefficient", "viscoelectric")
_NUMERICS_KEYS = ("accuracy", "intervals", "max_iterations", "max_intervals")
_GEOMETRY_KEYS = {"slit": ("height",), "capillary": ("radius",)}
_SCALARS = ("model", "field", "pressure_gradient", "tolerance")
_WALL_TABLES = ("wall", "wall.bottom", "wall.top")

#: Named walls for ``preset = "..."`` in a wall table: constructors taking only ``slip_length``.
WALL_PRESETS: dict[str, Callable[..., Wall]] = {"silica": Wall.silica}

#: Every key a case file may hold, as dotted paths (list entries as "electrolyte.ion[].name" and
#: "wall.site[].pK"); used for "did you mean" hints and by sweeps that address inputs by path.
CASE_KEYS: tuple[str, ...] = (
    *_SCALARS,
    "geometry.kind", "geometry.height", "geometry.radius",
    "electrolyte.ions", "electrolyte.pH", "electrolyte.water_ions", "electrolyte.diameter",
    *(f"electrolyte.ion[].{key}" for key in _ION_KEYS),
    *(f"{wall}.{key}" for wall in _WALL_TABLES for key in _WALL_VALUE_KEYS),
    *(f"{wall}.site[].{key}" for wall in _WALL_TABLES for key in _SITE_KEYS),
    *(f"solvent.{key}" for key in _SOLVENT_KEYS),
    *(f"numerics.{key}" for key in _NUMERICS_KEYS),
)

_EXAMPLES = {
    "geometry": 'kind = "slit" and height = "50 nm" (or kind = "capillary" and radius = "20 nm")',
    "electrolyte": 'ions = { "K+" = "1 mM", "Cl-" = "1 mM" }',
    "wall": 'zeta = "-50 mV", charge_density = "-2 mC/m^2" or preset = "silica"',
    "site": 'density = "8 nm^-2", pK = 7.5, charges = [0, -1]',
}


def load_case(path: str | Path) -> Case:
    """Read a TOML case file and build its :class:`~edl_solver.inputs.case.Case`.

    Parameters
    ----------
    path : str or Path
        The case file (UTF-8 TOML, shape in the module docstring).

    Returns
    -------
    Case

    Raises
    ------
    InputError
        One line starting with the file name: a missing or unreadable file, a TOML syntax error (with
        its line number), an unknown key (with a "did you mean" hint and its dotted path), a missing
        section, or a value error from the ``Case`` objects (naming the field and the value).
    """
    return case_from_mapping(read_mapping(path), str(path))


def read_mapping(path: str | Path) -> dict[str, Any]:
    """Parse a TOML file into a dict without interpreting it (the command line edits it first).

    Raises
    ------
    InputError
        If the file is missing, unreadable, not UTF-8 or not valid TOML (the message names the line).
    """
    try:
        text = Path(path).read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise InputError(f"{path}: case file not found") from None
    except IsADirectoryError:
        raise InputError(f"{path}: is a directory, expected a TOML case file") from None
    except UnicodeDecodeError as exc:
        raise InputError(f"{path}: not UTF-8 text (byte {exc.start}), expected a TOML case file") from None
    except OSError as exc:
        raise InputError(f"{path}: cannot read the case file ({exc.strerror or exc})") from None
    return _parse(text, str(path))


def loads_case(text: str, source: str = "") -> Case:
    """Build a :class:`~edl_solver.inputs.case.Case` from the TOML text of a case file.

    Parameters
    ----------
    text : str
        The TOML text (shape in the module docstring).
    source : str, optional
        Where the text came from; prefixes every error message when given.

    Returns
    -------
    Case

    Raises
    ------
    InputError
        As :func:`load_case`.
    """
    return case_from_mapping(_parse(text, source), source)


def _parse(text: str, source: str) -> dict[str, Any]:
    """TOML text -> dict; a syntax error becomes one line with its line and column."""
    if sys.version_info >= (3, 11):
        import tomllib
    else:  # pragma: no cover - exercised on Python 3.10 only
        import tomli as tomllib

    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        prefix = f"{source}: " if source else ""
        reason = str(exc)
        if "line " not in reason:  # "(at end of document)": give its line too, as for every other error
            reason = f"{reason} (line {max(1, len(text.splitlines()))}, the last)"
        raise InputError(f"{prefix}invalid TOML: {reason}") from None


def case_from_mapping(data: Mapping[str, Any], source: str = "") -> Case:
    """Build a :class:`~edl_solver.inputs.case.Case` from the nested dict of a case file.

    Parameters
    ----------
    data : Mapping
        ``{"geometry": {"kind": "slit", "height": ...}, "electrolyte": {"ions": ..., "pH": ...}, "wall": {...}
        or {"bottom": {...}, "top": {...}}, "solvent": {...}, "numerics": {...}, "field": ...,
        "pressure_gradient": ..., "model": ..., "tolerance": ...}``. ``electrolyte.ions`` is either a
        table of ion names to concentrations or a list of ion tables (``name``, ``valence``,
        ``concentration``, ``diffusivity``, ``diameter``); ``electrolyte.ion`` (TOML ``[[electrolyte.ion]]``)
        is a further list of ion tables. A wall table holds ``zeta``, ``charge_density``,
        ``stern_capacitance``, ``gate_voltage``, ``gate_capacitance``, ``slip_length`` and ``site``, a list
        of site tables (``density``, ``pK``, ``charges``, ``name``), or ``preset`` (see ``WALL_PRESETS``)
        with at most ``slip_length``. Values are SI numbers or strings with units.
    source : str, optional
        Where ``data`` came from (a file name); prefixes every error message when given.

    Returns
    -------
    Case

    Raises
    ------
    InputError
        One line naming the source, the dotted key or field and the value.
    """
    try:
        if not isinstance(data, Mapping):
            raise InputError(f"case: {data!r} is not a table, expected the sections of a case file")
        data = _without_none(data)  # dicts written from dataclasses carry None for "not given"
        _check_keys(data)  # first, so a misspelt key is reported rather than the value it leaves missing
        # Keyword arguments are evaluated in order: errors come in the order of the file's sections.
        return Case(
            geometry=_geometry(_section(data, "geometry")),
            electrolyte=_electrolyte(_section(data, "electrolyte")),
            wall=_wall(_section(data, "wall"), data["geometry"]),
            solvent=_solvent(_table(data.get("solvent", {}), "solvent")),
            numerics=_build(Numerics, _table(data.get("numerics", {}), "numerics")),
            **{key: data[key] for key in _SCALARS if key in data},
        )
    except InputError as exc:
        if source:
            raise InputError(f"{source}: {exc}") from None
        raise


# -- shape checks ------------------------------------------------------------------------------------


def _check_keys(data: Mapping[str, Any]) -> None:
    """Reject any key the case does not use, wherever it is, naming it by its dotted path."""
    _known(data, (*_SCALARS, "geometry", "electrolyte", "wall", "solvent", "numerics"), "")
    for name, keys in (("geometry", ("kind", "height", "radius")), ("solvent", _SOLVENT_KEYS),
                       ("numerics", _NUMERICS_KEYS)):
        if isinstance(data.get(name), Mapping):
            _known(data[name], keys, name)
    electrolyte = data.get("electrolyte")
    if isinstance(electrolyte, Mapping):
        _known(electrolyte, _ELECTROLYTE_KEYS, "electrolyte")
        for key in ("ions", "ion"):
            entries = electrolyte.get(key)
            if isinstance(entries, list):
                for i, entry in enumerate(entries):
                    if isinstance(entry, Mapping):
                        _known(entry, _ION_KEYS, f"electrolyte.{key}[{i}]")
    wall = data.get("wall")
    if isinstance(wall, Mapping):
        _known(wall, (*_WALL_KEYS, "bottom", "top"), "wall")
        _check_site_keys(wall, "wall")
        for side in ("bottom", "top"):
            if isinstance(wall.get(side), Mapping):
                _known(wall[side], _WALL_KEYS, f"wall.{side}")
                _check_site_keys(wall[side], f"wall.{side}")


def _check_site_keys(wall: Mapping[str, Any], path: str) -> None:
    entries = wall.get("site")
    for i, entry in enumerate([entries] if isinstance(entries, Mapping) else
                              entries if isinstance(entries, list) else []):
        if isinstance(entry, Mapping):
            _known(entry, _SITE_KEYS, f"{path}.site[{i}]")


def _known(table: Mapping[str, Any], keys: tuple[str, ...], path: str) -> None:
    """Raise on the first key of ``table`` not in ``keys``, with the closest known key as a hint."""
    for key in table:
        if key in keys:
            continue
        dotted = f"{path}.{key}" if path else str(key)
        raise InputError(f"unknown key {dotted!r}{_hint(str(key), keys, path)}")


def _hint(key: str, keys: tuple[str, ...], path: str) -> str:
    """' (did you mean 'wall.zeta'?)': a close key of the same table, else the same key elsewhere."""
    # Case slips ("ph", "pk") first, then shortened or lengthened names ("conc", "stern", "zeta_potential"),
    # which are too far apart for difflib, then difflib's near misses.
    close = [known for known in keys if known.lower() == key.lower()]
    close = close or [known for known in keys if min(len(key), len(known)) >= 3
                      and (known.startswith(key) or key.startswith(known))][:1]
    close = close or difflib.get_close_matches(key, keys, n=1, cutoff=0.6)
    if close:
        suggestion = f"{path}.{close[0]}" if path else close[0]
        return f" (did you mean {suggestion!r}?)"
    # A key put in the wrong table ("height" at the top level, "pK" in [wall]) is found by its last part;
    # paths below this table first ("wall.site[].name" for "wall.name"), then plain paths, then list entries.
    leaves: dict[str, str] = {}
    for full in sorted(CASE_KEYS, key=lambda dotted: (not dotted.startswith(f"{path}."), "[]" in dotted)):
        leaves.setdefault(full.rsplit(".", 1)[-1].lower(), full)
    close = difflib.get_close_matches(key.lower(), list(leaves), n=1, cutoff=0.8)
    return f" (did you mean {leaves[close[0]]!r}?)" if close else f" (known keys here: {', '.join(keys)})"


def _without_none(value: Any) -> Any:
    """``value`` with every None-valued key of its tables dropped, recursively."""
    if isinstance(value, Mapping):
        return {key: _without_none(item) for key, item in value.items() if item is not None}
    if isinstance(value, list):
        return [_without_none(item) for item in value]
    return value


def _section(data: Mapping[str, Any], name: str) -> Mapping[str, Any]:
    """A required table of the case, e.g. [geometry]."""
    if name not in data:
        raise InputError(f"missing section [{name}], expected {_EXAMPLES[name]}")
    return _table(data[name], name)


def _table(value: Any, path: str) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        raise InputError(f"{path}: {value!r} is not a table, expected [{path}] with its keys")
    return value


def _build(constructor: Callable[..., T], kwargs: Mapping[str, Any], rename: tuple[str, str] | None = None) -> T:
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


# -- sections ----------------------------------------------------------------------------------------


def _geometry(table: Mapping[str, Any]) -> Slit | Capillary:
    kind = table.get("kind")
    if kind is None:
        # Unambiguous without kind: a height makes a slit, a radius a capillary.
        given = [k for k, keys in _GEOMETRY_KEYS.items() if keys[0] in table]
        if len(given) != 1:
            raise InputError("geometry.kind: missing, expected 'slit' (with height) or 'capillary' (with radius)")
        kind = given[0]
    if kind not in _GEOMETRY_KEYS:
        close = difflib.get_close_matches(str(kind).lower(), list(_GEOMETRY_KEYS), n=1, cutoff=0.5)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(f"geometry.kind: {kind!r} is not a geometry{hint}, expected 'slit' or 'capillary'")
    size = _GEOMETRY_KEYS[kind][0]
    for other, keys in _GEOMETRY_KEYS.items():
        if other != kind and keys[0] in table:
            raise InputError(f"geometry.{keys[0]}: {table[keys[0]]!r} is not used by a {kind}, "
                             f"expected geometry.{size}")
    if size not in table:
        example = "'50 nm'" if kind == "slit" else "'20 nm'"
        raise InputError(f"geometry.{size}: missing, expected the {kind}'s {size} like {example}")
    return Slit(height=table[size]) if kind == "slit" else Capillary(radius=table[size])


def _electrolyte(table: Mapping[str, Any]) -> Electrolyte:
    # electrolyte.diameter: the diameter of every ion that does not give its own (the steric model
    # needs one common size, and the short form ions = {...} has no room for it).
    shared = {"diameter": table["diameter"]} if "diameter" in table else {}
    ions: list[Ion] = []
    listed = table.get("ions")
    if isinstance(listed, Mapping):
        ions.extend(_build(Ion, {"name": name, "concentration": c, **shared}, rename=("ion:", "electrolyte.ions:"))
                    for name, c in listed.items())
    elif listed is not None:
        ions.extend(_ion_list(listed, "electrolyte.ions", shared))
    if "ion" in table:
        ions.extend(_ion_list(table["ion"], "electrolyte.ion", shared))
    if not ions:
        raise InputError(f"electrolyte.ions: missing, expected {_EXAMPLES['electrolyte']}")
    return Electrolyte(tuple(ions), pH=table.get("pH"), water_ions=bool(_flag(table, "water_ions", "electrolyte")))


def _ion_list(entries: Any, path: str, shared: Mapping[str, Any]) -> list[Ion]:
    if not isinstance(entries, list):
        raise InputError(f"{path}: {entries!r} is not a list of ion tables or a table of concentrations, "
                         f"expected e.g. {_EXAMPLES['electrolyte']}")
    ions = []
    for i, entry in enumerate(entries):
        if not isinstance(entry, Mapping):
            raise InputError(f"{path}[{i}]: {entry!r} is not an ion table, expected name, concentration "
                             "(and valence, diffusivity for ions outside the table)")
        if "name" not in entry:
            raise InputError(f"{path}[{i}].name: missing, expected an ion name such as 'K+'")
        ions.append(_build(Ion, {**shared, **entry}, rename=("ion:", f"{path}[{i}].name:")))
    return ions


def _wall(table: Mapping[str, Any], geometry: Any) -> Wall | tuple[Wall, Wall]:
    sides = [side for side in ("bottom", "top") if side in table]
    if not sides:
        return _one_wall(table, "wall")
    if any(key in table for key in _WALL_KEYS):
        raise InputError("wall: both a condition for every wall and [wall.bottom]/[wall.top] given, "
                         "expected one of the two")
    if isinstance(geometry, Mapping) and (geometry.get("kind") == "capillary" or "radius" in geometry):
        raise InputError(f"wall.{sides[0]}: a capillary has one wall, expected [wall] with "
                         f"{_EXAMPLES['wall']}")
    for side in ("bottom", "top"):
        if side not in table:
            raise InputError(f"wall.{side}: missing, expected [wall.{side}] with {_EXAMPLES['wall']} "
                             f"(a slit with [wall.{sides[0]}] needs both walls)")
    return tuple(_one_wall(_table(table[side], f"wall.{side}"), f"wall.{side}") for side in ("bottom", "top"))


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
    return _build(WALL_PRESETS[name], {key: table[key] for key in ("slip_length",) if key in table},
                  rename=("wall", path))


def _sites(entries: Any, path: str) -> tuple[Site, ...]:
    """The sites of a wall: [[wall.site]] tables (a single [wall.site] table is one site)."""
    if isinstance(entries, Mapping):
        entries = [entries]
    if not isinstance(entries, list):
        raise InputError(f"{path}.site: {entries!r} is not a list of site tables, expected [[{path}.site]] "
                         f"with {_EXAMPLES['site']}")
    sites = []
    for i, entry in enumerate(entries):
        where = f"{path}.site[{i}]"
        if not isinstance(entry, Mapping):
            raise InputError(f"{where}: {entry!r} is not a site table, expected {_EXAMPLES['site']}")
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
        sites.append(_build(Site, kwargs, rename=(f"site {name}", where)))
    return tuple(sites)


def _solvent(table: Mapping[str, Any]) -> Solvent:
    """Water (correlations for what is not given) unless another ``name`` is given with every property."""
    name = table.get("name", "water")
    properties = {key: table[key] for key in _SOLVENT_PROPERTIES if key in table}
    coefficient = table.get("viscoelectric_coefficient")
    default = _flag(table, "viscoelectric", "solvent")
    if default is not None and coefficient is not None:
        raise InputError(f"solvent.viscoelectric: {default!r} given with viscoelectric_coefficient = "
                         f"{coefficient!r}, expected one of the two")
    if name == "water":
        viscoelectric = coefficient if coefficient is not None else bool(default)
        return _build(Water, {**properties, "viscoelectric": viscoelectric}, rename=("water.", "solvent."))
    if default:
        raise InputError(f"solvent.viscoelectric: true takes water's coefficient, but the solvent is {name!r}, "
                         "expected solvent.viscoelectric_coefficient (m^2/V^2) for it")
    for key in _SOLVENT_PROPERTIES:
        if key not in properties:
            raise InputError(f"solvent.{key}: missing, expected it for solvent {name!r} (only water has "
                             "built-in properties)")
    extra = {} if coefficient is None else {"viscoelectric_coefficient": coefficient}
    return _build(Solvent, {**properties, "name": name, **extra})


# -- Case -> plain dict -> TOML text ----------------------------------------------------------------


def _wall_to_mapping(wall: Wall) -> dict[str, Any]:
    """A wall in full (never as a preset: a file must not change meaning if a preset's values do)."""
    table: dict[str, Any] = {key: getattr(wall, key) for key in ("zeta", "charge_density", "stern_capacitance",
                                                                 "gate_voltage", "gate_capacitance")
                             if getattr(wall, key) is not None}
    if wall.slip_length:
        table["slip_length"] = wall.slip_length
    if wall.sites:
        table["site"] = [{"name": site.name, "density": site.density,
                          "pK": list(site.pK) if isinstance(site.pK, tuple) else site.pK,
                          "charges": list(site.charges)} for site in wall.sites]
    return table


def case_to_mapping(case: Case) -> dict[str, Any]:
    """The case as a plain dict of SI numbers, strings and lists (JSON- and TOML-compatible, no None).

    Parameters
    ----------
    case : Case

    Returns
    -------
    dict
        The shape :func:`case_from_mapping` reads: ``{"geometry": {"kind": "slit", "height": H} |
        {"kind": "capillary", "radius": a}, "electrolyte": {"ions": [{"name", "valence", "concentration",
        "diffusivity"[, "diameter"]}, ...][, "pH"]}, "wall": {...} | {"bottom": {...}, "top": {...}},
        "solvent": {"temperature", "relative_permittivity", "viscosity", "name"[,
        "viscoelectric_coefficient"]}, "field", "pressure_gradient", "model", "tolerance", "numerics":
        {"accuracy", "max_iterations", "max_intervals"[, "intervals"]}}``; a wall holds its non-default
        fields and its sites as ``"site": [{"name", "density", "pK", "charges"}, ...]``. Optional keys
        are left out when not set. ``case_from_mapping`` rebuilds an equal case, except that an
        electrolyte built with ``water_ions=True`` comes back with H+ and OH- as plain ions (and
        ``water_ions=False``): reading the flag again would add them twice.

    Raises
    ------
    InputError
        If ``case`` is not a Case.
    """
    if not isinstance(case, Case):
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    g = case.geometry
    geometry = {"kind": "slit", "height": g.height} if isinstance(g, Slit) else {"kind": "capillary",
                                                                                  "radius": g.radius}
    if isinstance(case.wall, tuple):
        wall: dict[str, Any] = {"bottom": _wall_to_mapping(case.wall[0]), "top": _wall_to_mapping(case.wall[1])}
    else:
        wall = _wall_to_mapping(case.wall)
    numerics: dict[str, Any] = {
        "accuracy": case.numerics.accuracy,
        "max_iterations": case.numerics.max_iterations,
        "max_intervals": case.numerics.max_intervals,
    }
    if case.numerics.intervals is not None:  # TOML has no null: "automatic" is an absent key
        numerics["intervals"] = case.numerics.intervals
    ions = []
    for ion in case.electrolyte.ions:
        entry = {"name": ion.name, "valence": ion.valence, "concentration": ion.concentration,
                 "diffusivity": ion.diffusivity}
        if ion.diameter is not None:
            entry["diameter"] = ion.diameter
        ions.append(entry)
    electrolyte: dict[str, Any] = {"ions": ions}
    if case.electrolyte.pH is not None:
        electrolyte["pH"] = case.electrolyte.pH
    s = case.solvent
    solvent: dict[str, Any] = {"temperature": s.temperature, "relative_permittivity": s.relative_permittivity,
                               "viscosity": s.viscosity, "name": s.name}
    if s.viscoelectric_coefficient:
        solvent["viscoelectric_coefficient"] = s.viscoelectric_coefficient
    return {
        "geometry": geometry,
        "electrolyte": electrolyte,
        "wall": wall,
        "solvent": solvent,
        "field": case.field,
        "pressure_gradient": case.pressure_gradient,
        "model": case.model,
        "tolerance": case.tolerance,
        "numerics": numerics,
    }


def dumps_case(case: Case | Mapping[str, Any]) -> str:
    """The TOML text of a case file for ``case`` (a Case, or the dict form of :func:`case_to_mapping`).

    Numbers are written in SI with every digit of their float value, so :func:`loads_case` gives back
    an equal case (but see :func:`case_to_mapping` on ``water_ions``).

    Parameters
    ----------
    case : Case or Mapping

    Returns
    -------
    str
        Top-level keys first, then one ``[section]`` per table and one ``[[...]]`` per list entry.

    Raises
    ------
    InputError
        If a value cannot be written as TOML (None, or an object that is not a number, string, bool,
        list or table).
    """
    table = case_to_mapping(case) if isinstance(case, Case) else case
    if not isinstance(table, Mapping):
        raise InputError(f"case: {type(case).__name__} is not a Case or a table, expected edl_solver.Case(...)")
    return "# edl_solver case file (SI units)\n" + "\n".join(_toml_table(table, "")).lstrip("\n") + "\n"


_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


def _toml_key(key: str) -> str:
    return key if _BARE_KEY.fullmatch(key) else _toml_string(key)


def _toml_string(text: str) -> str:
    # A JSON string is a TOML basic string, but for DEL, which TOML wants escaped.
    return json.dumps(text, ensure_ascii=False).replace("\x7f", "\\u007f")


def _is_table_list(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(item, Mapping) for item in value)


def _toml_table(table: Mapping[str, Any], prefix: str) -> list[str]:
    """Lines of one table: its plain keys, then its sub-tables and lists of tables (as headers)."""
    lines = [f"{_toml_key(str(key))} = {_toml_value(value, f'{prefix}{key}')}" for key, value in table.items()
             if not isinstance(value, Mapping) and not _is_table_list(value)]
    for key, value in table.items():
        name = f"{prefix}{_toml_key(str(key))}"
        if isinstance(value, Mapping):
            body = _toml_table(value, f"{name}.")
            # a header of nothing but sub-tables ([wall] before [wall.bottom]) is implied by theirs
            header = ["", f"[{name}]"] if not body or body[0] else []
            lines += [*header, *body]
        elif _is_table_list(value):
            for entry in value:
                lines += ["", f"[[{name}]]", *_toml_table(entry, f"{name}.")]
    return lines


def _toml_value(value: Any, path: str) -> str:
    if isinstance(value, bool):  # before int: bool is an int
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return repr(value)  # the shortest text that reads back to the same float; TOML spells inf, nan alike
    if isinstance(value, str):
        return _toml_string(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(item, f"{path}[{i}]") for i, item in enumerate(value)) + "]"
    if isinstance(value, Mapping):
        items = (f"{_toml_key(str(k))} = {_toml_value(v, f'{path}.{k}')}" for k, v in value.items())
        return "{ " + ", ".join(items) + " }"
    raise InputError(f"{path}: {value!r} cannot be written to TOML, expected a number, string, bool, list or table")
