"""The keys a case file may hold, and the check that rejects any other with a "did you mean" hint.

Split from :mod:`edl_solver.inputs.casefile` (which reads case files): one list of keys per table, the
dotted paths of all of them (``CASE_KEYS``), and :func:`check_keys`.
"""

from __future__ import annotations

import difflib
from collections.abc import Mapping
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs.geometry import GEOMETRIES

__all__ = ["CASE_KEYS", "ELECTROLYTE_KEYS", "ION_KEYS", "NUMERICS_KEYS", "SCALARS", "SITE_KEYS", "SOLVENT_KEYS",
           "SOLVENT_PROPERTIES", "WALL_KEYS", "WALL_PAIRS", "check_keys", "geometry_of", "single_wall"]

ION_KEYS = ("name", "valence", "concentration", "diffusivity", "diameter", "temperature_dependence")
ELECTROLYTE_KEYS = ("ions", "ion", "pH", "water_ions", "diameter")
SITE_KEYS = ("density", "pK", "charges", "name")
#: Keys of a wall table other than its list of sites.
WALL_VALUE_KEYS = ("zeta", "charge_density", "stern_capacitance", "gate_voltage", "gate_capacitance",
                   "slip_length", "preset")
WALL_KEYS = (*WALL_VALUE_KEYS, "site")
SOLVENT_PROPERTIES = ("temperature", "relative_permittivity", "viscosity")
SOLVENT_KEYS = (*SOLVENT_PROPERTIES, "name", "viscoelectric_coefficient", "viscoelectric", "density")
NUMERICS_KEYS = ("accuracy", "intervals", "max_iterations", "max_intervals")
#: Keys of [geometry]: its kind and the size inputs of each geometry ("height", "radius", "width").
GEOMETRY_KEYS = ("kind", *dict.fromkeys(key for geometry in GEOMETRIES.values() for key in geometry.size_keys))
SCALARS = ("model", "field", "pressure_gradient", "tolerance", "bulk_conductivity")
#: The names of the wall tables of every geometry with two walls (pairs): "bottom", "top" (slit), "top_bottom",
#: "sides" (rectangle).
WALL_PAIRS = tuple(dict.fromkeys(name for geometry in GEOMETRIES.values() if geometry.wall_count == 2
                                 for name in geometry.wall_names))
_WALL_TABLES = ("wall", *(f"wall.{name}" for name in WALL_PAIRS))

#: Every key a case file may hold, as dotted paths (list entries as "electrolyte.ion[].name" and
#: "wall.site[].pK"); used for "did you mean" hints and by sweeps that address inputs by path.
CASE_KEYS: tuple[str, ...] = (
    *SCALARS,
    *(f"geometry.{key}" for key in GEOMETRY_KEYS),
    "electrolyte.ions", "electrolyte.pH", "electrolyte.water_ions", "electrolyte.diameter",
    *(f"electrolyte.ion[].{key}" for key in ION_KEYS),
    *(f"{wall}.{key}" for wall in _WALL_TABLES for key in WALL_VALUE_KEYS),
    *(f"{wall}.site[].{key}" for wall in _WALL_TABLES for key in SITE_KEYS),
    *(f"solvent.{key}" for key in SOLVENT_KEYS),
    *(f"numerics.{key}" for key in NUMERICS_KEYS),
)


def geometry_of(geometry: Any) -> Any:
    """The geometry class a [geometry] table names, by its kind or, without a kind, by its size keys (a width
    makes a rectangle, a height a slit, a radius a capillary); None when it names none (its own check says why)."""
    if not isinstance(geometry, Mapping):
        return None
    kind = geometry.get("kind")
    if kind is not None:
        return GEOMETRIES.get(kind) if isinstance(kind, str) else None
    given = [shape for shape in GEOMETRIES.values() if set(shape.size_keys) <= set(geometry)]
    rectangles = [shape for shape in given if shape.kind == "rectangle"]
    given = rectangles or given
    return given[0] if len(given) == 1 else None


def single_wall(geometry: Any) -> bool:
    """Whether a [geometry] table names a geometry with one wall (a capillary), by its kind or, without a
    kind, by its size key; such a geometry takes no pair of wall tables."""
    shape = geometry_of(geometry)
    return shape is not None and shape.wall_count == 1


def check_keys(data: Mapping[str, Any]) -> None:
    """Reject any key the case does not use, wherever it is, naming it by its dotted path."""
    # [transient] holds the settings of a transient run (inputs.transient_spec), [channel] the finite channel of
    # edl transport (inputs.channel_spec): read by their own modules, not part of the case.
    _known(data, (*SCALARS, "geometry", "electrolyte", "wall", "solvent", "numerics", "transient", "channel"), "")
    for name, keys in (("geometry", GEOMETRY_KEYS), ("solvent", SOLVENT_KEYS),
                       ("numerics", NUMERICS_KEYS)):
        if isinstance(data.get(name), Mapping):
            _known(data[name], keys, name)
    electrolyte = data.get("electrolyte")
    if isinstance(electrolyte, Mapping):
        _known(electrolyte, ELECTROLYTE_KEYS, "electrolyte")
        for key in ("ions", "ion"):
            entries = electrolyte.get(key)
            if isinstance(entries, list):
                for i, entry in enumerate(entries):
                    if isinstance(entry, Mapping):
                        _known(entry, ION_KEYS, f"electrolyte.{key}[{i}]")
    wall = data.get("wall")
    if isinstance(wall, Mapping):
        _known(wall, (*WALL_KEYS, *WALL_PAIRS), "wall")
        _check_site_keys(wall, "wall")
        for side in WALL_PAIRS:
            if isinstance(wall.get(side), Mapping):
                _known(wall[side], WALL_KEYS, f"wall.{side}")
                _check_site_keys(wall[side], f"wall.{side}")


def _check_site_keys(wall: Mapping[str, Any], path: str) -> None:
    entries = wall.get("site")
    for i, entry in enumerate([entries] if isinstance(entries, Mapping) else
                              entries if isinstance(entries, list) else []):
        if isinstance(entry, Mapping):
            _known(entry, SITE_KEYS, f"{path}.site[{i}]")


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

