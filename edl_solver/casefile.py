"""Case files: a TOML text (or the nested dict it parses to) turned into a validated ``Case``.

The file mirrors the fields of :class:`~edl_solver.case.Case`, so that every input has one dotted
address ("geometry.height", "wall.zeta", "electrolyte.ions") that error messages, command-line
overrides and parameter sweeps share::

    # a 50 nm slit in 1 mM KCl
    model = "pb"                      # or "dh"
    field = "10 kV/m"
    pressure_gradient = "-1 bar/mm"
    tolerance = "5 %"

    [geometry]
    kind = "slit"                     # or "capillary", with radius = "..."
    height = "50 nm"

    [electrolyte]
    ions = { "K+" = "1 mM", "Cl-" = "1 mM" }      # ions of the built-in table
    # [[electrolyte.ion]]                         # any ion, given in full
    # name = "X+"
    # valence = 1
    # concentration = "1 mM"
    # diffusivity = "1e-9 m^2/s"

    [wall]                            # one condition for every wall; or [wall.bottom] and [wall.top]
    zeta = "-50 mV"                   # or charge_density = "-2 mC/m^2"

    [solvent]                         # optional: water at 25 degC by default
    temperature = "25 degC"

    [numerics]                        # optional
    accuracy = 1e-6

:func:`case_from_mapping` is the one place where a nested dict becomes a ``Case``; the objects of
``edl_solver.case`` do the value checks, this module checks the shape (sections, keys, tables).
"""

from __future__ import annotations

import difflib
import sys
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any, TypeVar

from edl_solver.case import Capillary, Case, Electrolyte, Ion, Numerics, Slit, Wall
from edl_solver.errors import InputError
from edl_solver.solvent import Solvent, Water

__all__ = ["CASE_KEYS", "case_from_mapping", "load_case", "loads_case", "read_mapping"]

T = TypeVar("T")

_ION_KEYS = ("name", "valence", "concentration", "diffusivity")
_WALL_KEYS = ("zeta", "charge_density")
_SOLVENT_KEYS = ("temperature", "relative_permittivity", "viscosity", "name")
_NUMERICS_KEYS = ("accuracy", "intervals", "max_iterations", "max_intervals")
_GEOMETRY_KEYS = {"slit": ("height",), "capillary": ("radius",)}
_SCALARS = ("model", "field", "pressure_gradient", "tolerance")

#: Every key a case file may hold, as dotted paths (ion entries as "electrolyte.ion[].name"); used for
#: "did you mean" hints and by sweeps that address inputs by path.
CASE_KEYS: tuple[str, ...] = (
    *_SCALARS,
    "geometry.kind", "geometry.height", "geometry.radius",
    "electrolyte.ions", *(f"electrolyte.ion[].{key}" for key in _ION_KEYS),
    *(f"wall.{key}" for key in _WALL_KEYS),
    *(f"wall.{side}.{key}" for side in ("bottom", "top") for key in _WALL_KEYS),
    *(f"solvent.{key}" for key in _SOLVENT_KEYS),
    *(f"numerics.{key}" for key in _NUMERICS_KEYS),
)

_EXAMPLES = {
    "geometry": 'kind = "slit" and height = "50 nm" (or kind = "capillary" and radius = "20 nm")',
    "electrolyte": 'ions = { "K+" = "1 mM", "Cl-" = "1 mM" }',
    "wall": 'zeta = "-50 mV" or charge_density = "-2 mC/m^2"',
}


def load_case(path: str | Path) -> Case:
    """Read a TOML case file and build its :class:`~edl_solver.case.Case`.

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
    """Build a :class:`~edl_solver.case.Case` from the TOML text of a case file.

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
    """Build a :class:`~edl_solver.case.Case` from the nested dict of a case file.

    Parameters
    ----------
    data : Mapping
        ``{"geometry": {"kind": "slit", "height": ...}, "electrolyte": {"ions": ...}, "wall": {...} or
        {"bottom": {...}, "top": {...}}, "solvent": {...}, "numerics": {...}, "field": ...,
        "pressure_gradient": ..., "model": ..., "tolerance": ...}``. ``electrolyte.ions`` is either a
        table of ion names to concentrations or a list of ion tables (``name``, ``valence``,
        ``concentration``, ``diffusivity``); ``electrolyte.ion`` (TOML ``[[electrolyte.ion]]``) is a
        further list of ion tables. Values are SI numbers or strings with units.
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
        _known(electrolyte, ("ions", "ion"), "electrolyte")
        for key in ("ions", "ion"):
            entries = electrolyte.get(key)
            if isinstance(entries, list):
                for i, entry in enumerate(entries):
                    if isinstance(entry, Mapping):
                        _known(entry, _ION_KEYS, f"electrolyte.{key}[{i}]")
    wall = data.get("wall")
    if isinstance(wall, Mapping):
        _known(wall, (*_WALL_KEYS, "bottom", "top"), "wall")
        for side in ("bottom", "top"):
            if isinstance(wall.get(side), Mapping):
                _known(wall[side], _WALL_KEYS, f"wall.{side}")


def _known(table: Mapping[str, Any], keys: tuple[str, ...], path: str) -> None:
    """Raise on the first key of ``table`` not in ``keys``, with the closest known key as a hint."""
    for key in table:
        if key in keys:
            continue
        dotted = f"{path}.{key}" if path else str(key)
        raise InputError(f"unknown key {dotted!r}{_hint(str(key), keys, path)}")


def _hint(key: str, keys: tuple[str, ...], path: str) -> str:
    """' (did you mean 'wall.zeta'?)': a close key of the same table, else the same key elsewhere."""
    close = difflib.get_close_matches(key, keys, n=1, cutoff=0.6)
    # Shortened or lengthened names ("conc", "zeta_potential") are too far apart for difflib.
    close = close or [known for known in keys if min(len(key), len(known)) >= 3
                      and (known.startswith(key) or key.startswith(known))][:1]
    if close:
        suggestion = f"{path}.{close[0]}" if path else close[0]
        return f" (did you mean {suggestion!r}?)"
    # A key put in the wrong table ("height" at the top level) is found by its last part.
    leaves = {full.rsplit(".", 1)[-1]: full for full in reversed(CASE_KEYS) if "[]" not in full}
    close = difflib.get_close_matches(key, list(leaves), n=1, cutoff=0.8)
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
    ions: list[Ion] = []
    listed = table.get("ions")
    if isinstance(listed, Mapping):
        ions.extend(_build(Ion, {"name": name, "concentration": c}, rename=("ion:", "electrolyte.ions:"))
                    for name, c in listed.items())
    elif listed is not None:
        ions.extend(_ion_list(listed, "electrolyte.ions"))
    if "ion" in table:
        ions.extend(_ion_list(table["ion"], "electrolyte.ion"))
    if not ions:
        raise InputError(f"electrolyte.ions: missing, expected {_EXAMPLES['electrolyte']}")
    return Electrolyte(tuple(ions))


def _ion_list(entries: Any, path: str) -> list[Ion]:
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
        ions.append(_build(Ion, entry, rename=("ion:", f"{path}[{i}].name:")))
    return ions


def _wall(table: Mapping[str, Any], geometry: Any) -> Wall | tuple[Wall, Wall]:
    sides = [side for side in ("bottom", "top") if side in table]
    if not sides:
        return _build(Wall, table)
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
    return tuple(_build(Wall, _table(table[side], f"wall.{side}"), rename=("wall", f"wall.{side}"))
                 for side in ("bottom", "top"))


def _solvent(table: Mapping[str, Any]) -> Solvent:
    """Water (correlations for what is not given) unless another ``name`` is given with every property."""
    name = table.get("name", "water")
    properties = {key: table[key] for key in _SOLVENT_KEYS[:3] if key in table}
    if name == "water":
        return _build(Water, properties, rename=("water.", "solvent."))
    for key in _SOLVENT_KEYS[:3]:
        if key not in properties:
            raise InputError(f"solvent.{key}: missing, expected it for solvent {name!r} (only water has "
                             "built-in properties)")
    return _build(Solvent, {**properties, "name": name})
