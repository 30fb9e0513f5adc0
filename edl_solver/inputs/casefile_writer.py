"""A ``Case`` written back in the shape of a case file: a plain dict (:func:`case_to_mapping`) and its TOML
text (:func:`dumps_case`).

Split from :mod:`edl_solver.inputs.casefile`, which reads that shape.
"""

from __future__ import annotations

import json
import re
from collections.abc import Mapping
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.solvent import default_density
from edl_solver.inputs.wall import Wall

__all__ = ["case_to_mapping", "dumps_case"]


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
        {"kind": "capillary", "radius": a} | {"kind": "rectangle", "width": W, "height": H}, "electrolyte":
        {"ions": [{"name", "valence", "concentration", "diffusivity"[, "diameter", "temperature_dependence"]}, ...][,
        "pH"]}, "wall": {...} | {"bottom": {...}, "top": {...}} (a slit) | {"top_bottom": {...}, "sides": {...}}
        (a rectangle),
        "solvent": {"temperature", "relative_permittivity", "viscosity", "name"[, "density"][,
        "viscoelectric_coefficient"]}, "field", "pressure_gradient", "model", "tolerance"[,
        "bulk_conductivity"], "numerics":
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
    geometry = case.geometry.to_mapping()
    if isinstance(case.wall, tuple):
        names = case.geometry.wall_names  # ("bottom", "top") of a slit, ("top_bottom", "sides") of a rectangle
        wall: dict[str, Any] = {names[0]: _wall_to_mapping(case.wall[0]), names[1]: _wall_to_mapping(case.wall[1])}
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
        if ion.temperature_dependence:  # a diffusivity at 25 degC that follows the temperature (a given one does not)
            entry["temperature_dependence"] = True
        ions.append(entry)
    electrolyte: dict[str, Any] = {"ions": ions}
    if case.electrolyte.pH is not None:
        electrolyte["pH"] = case.electrolyte.pH
    s = case.solvent
    solvent: dict[str, Any] = {"temperature": s.temperature, "relative_permittivity": s.relative_permittivity,
                               "viscosity": s.viscosity, "name": s.name}
    if s.viscoelectric_coefficient:
        solvent["viscoelectric_coefficient"] = s.viscoelectric_coefficient
    if s.density != default_density(s.temperature):  # a density given: the default is rebuilt on reading
        solvent["density"] = s.density
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
        # only when it is not the default, so that files of cases without it keep their shape
        **({"bulk_conductivity": case.bulk_conductivity} if case.bulk_conductivity != "limiting" else {}),
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
