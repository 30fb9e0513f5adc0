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
    kind = "slit"                     # or "capillary", with radius = "..."; or "rectangle", with width = "..."
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

    [wall]                            # one condition for every wall; or [wall.bottom] and [wall.top] (a slit),
                                      # [wall.top_bottom] and [wall.sides] (a rectangle's two pairs of walls)
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
``edl_solver.inputs.case`` do the value checks, this module and its parts check the shape: the known keys
(:mod:`~edl_solver.inputs.casefile_keys`) and each section (:mod:`~edl_solver.inputs.casefile_sections`).
:func:`case_to_mapping` writes the same shape back and :func:`dumps_case` writes it as TOML text
(:mod:`~edl_solver.inputs.casefile_writer`, re-exported here).
"""

from __future__ import annotations

import sys
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from edl_solver.errors import InputError
from edl_solver.inputs import casefile_sections as sections
from edl_solver.inputs.case import Case, Numerics
from edl_solver.inputs.casefile_keys import CASE_KEYS, SCALARS, check_keys
from edl_solver.inputs.casefile_sections import WALL_PRESETS
from edl_solver.inputs.casefile_writer import case_to_mapping, dumps_case
from edl_solver.inputs.text_file import read_text

__all__ = ["CASE_KEYS", "WALL_PRESETS", "case_from_mapping", "case_to_mapping", "dumps_case", "load_case",
           "loads_case", "read_mapping"]

#: The error of a file nested deeper than Python's recursion limit (case files and sweep files alike).
_TOO_DEEP = "lists or tables nested too deeply to read, expected tables and lists nested a few levels at most"


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
    text = read_text(path, "TOML case file", bom=False)
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

    prefix = f"{source}: " if source else ""
    try:
        return tomllib.loads(text)
    except RecursionError:  # the parser recurses once per level of nesting
        raise InputError(f"{prefix}{_TOO_DEEP}") from None
    except tomllib.TOMLDecodeError as exc:
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
        or {"bottom": {...}, "top": {...}} (a slit's two walls) or {"top_bottom": {...}, "sides": {...}} (a
        rectangle's two pairs of walls), "solvent": {...}, "numerics": {...}, "field": ...,
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
        return _build_case(data)
    except RecursionError:  # a value nested deeper than the checks (and repr) can walk
        raise InputError(f"{source}: {_TOO_DEEP}" if source else _TOO_DEEP) from None
    except InputError as exc:
        if source:
            raise InputError(f"{source}: {exc}") from None
        raise


def _build_case(data: Mapping[str, Any]) -> Case:
    """``case_from_mapping`` without the source: the checks and the objects, in the order of the file."""
    if not isinstance(data, Mapping):
        raise InputError(f"case: {data!r} is not a table, expected the sections of a case file")
    data = sections.without_none(data)  # dicts written from dataclasses carry None for "not given"
    check_keys(data)  # first, so a misspelt key is reported rather than the value it leaves missing
    # Keyword arguments are evaluated in order: errors come in the order of the file's sections.
    return Case(
        geometry=sections.build_geometry(sections.required_section(data, "geometry")),
        electrolyte=sections.build_electrolyte(sections.required_section(data, "electrolyte")),
        wall=sections.build_walls(sections.required_section(data, "wall"), data["geometry"]),
        solvent=sections.build_solvent(sections.optional_table(data.get("solvent", {}), "solvent")),
        numerics=sections.build(Numerics, sections.optional_table(data.get("numerics", {}), "numerics")),
        **{key: data[key] for key in SCALARS if key in data},
    )
