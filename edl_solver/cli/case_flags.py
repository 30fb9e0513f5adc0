"""The case flags shared by ``edl solve``, ``edl transport``, ``edl map`` and ``edl fit`` (--slit, --rectangle,
--ion, --zeta, ...), and the case they give with a case file.

One schema: the case file is read as a mapping (``casefile.read_mapping``), the flags are written into it in
the shape of a case file (a flag that gives a whole section - the geometry, the ions, the wall conditions -
replaces that section; a flag that gives one value sets it at its dotted path through
``inputs.paths.set_input``, the paths that sweeps use), and ``casefile.case_from_mapping`` builds the case.
An error is then blamed on the flag that gave the value, or else on the case file.
"""

from __future__ import annotations

import argparse
import re
from pathlib import Path
from typing import Any

__all__ = ["CASE_FLAGS", "CASE_VALUE_FLAGS", "add_case_flags", "case_from_args"]

#: Flags that set one input of the case: (flag, metavar, dotted field it sets, help).
CASE_FLAGS: tuple[tuple[str, str, str, str], ...] = (
    ("--slit", "HEIGHT", "geometry.height", "a slit of full wall-to-wall height HEIGHT, e.g. 50nm"),
    ("--capillary", "RADIUS", "geometry.radius", "a cylindrical capillary of radius RADIUS, e.g. 20nm"),
    ("--rectangle", "W×H", "geometry.width, geometry.height",
     "a rectangular channel of width W and height H, e.g. 200nm×40nm, 200nmx40nm or '1um x 20nm'"),
    ("--ion", "NAME=CONC", "electrolyte.ions",
     "an ion of the built-in table and its bulk concentration, e.g. K+=1mM; repeat for each ion (the "
     "ions given replace the case file's; a file ion given in full keeps its valence and diffusivity)"),
    ("--zeta", "ZETA", "wall.zeta", "wall potential relative to the reservoir, e.g. -50mV (every wall)"),
    ("--charge-density", "SIGMA", "wall.charge_density", "wall surface charge density, e.g. -2mC/m^2"),
    ("--top-zeta", "ZETA", "wall.top.zeta", "a different potential for the top wall of a slit"),
    ("--top-charge-density", "SIGMA", "wall.top.charge_density",
     "a different charge density for the top wall of a slit"),
    ("--sides-zeta", "ZETA", "wall.sides.zeta",
     "a different potential for the side walls of a rectangle (--zeta then gives its top and bottom walls)"),
    ("--sides-charge-density", "SIGMA", "wall.sides.charge_density",
     "a different charge density for the side walls of a rectangle (--charge-density then gives its top and "
     "bottom walls)"),
    ("--temperature", "T", "solvent.temperature", "temperature of the water, e.g. 25degC or 298.15K"),
    ("--field", "E", "field", "axial electric field, e.g. 10kV/m"),
    ("--pressure-gradient", "G", "pressure_gradient",
     "axial pressure gradient dp/dx, e.g. -1bar/mm (negative pushes the liquid along +x)"),
    ("--tolerance", "TOL", "tolerance", "error up to which the thin-layer model counts as valid, e.g. 5%%"),
    ("--accuracy", "ACC", "numerics.accuracy", "target relative error of the results, e.g. 1e-6"),
)
#: Flags that set one value each, put at their dotted field as given.
_PLAIN_FLAGS = ("--temperature", "--field", "--pressure-gradient", "--tolerance", "--accuracy")
#: Flags of the physical models that set one value each at their dotted field (switches set true).
_MODEL_PATHS = (("--pH", "pH", "electrolyte.pH"), ("--diameter", "diameter", "electrolyte.diameter"))
#: Every case flag that takes a value (a value after it may start with "-", as in "--zeta -40mV").
CASE_VALUE_FLAGS = frozenset({flag for flag, *_ in CASE_FLAGS} | {"--model", "--pH", "--diameter", "--slip-length",
                                                                       "--bulk-conductivity"})

_CHARGE_SIGNS = ("+", "-", "\u207a", "\u207b", "\u2212")  # also superscript signs and the minus sign


def add_case_flags(parser: argparse.ArgumentParser) -> None:
    """The flags of ``CASE_FLAGS`` and the model flags, in groups (shared by solve and transport)."""
    geometry = parser.add_argument_group("geometry (one of)").add_mutually_exclusive_group()
    electrolyte = parser.add_argument_group("electrolyte")
    walls = parser.add_argument_group("walls")
    bottom, top = walls.add_mutually_exclusive_group(), walls.add_mutually_exclusive_group()
    sides = walls.add_mutually_exclusive_group()
    conditions = parser.add_argument_group("conditions and numerics")
    group_of = {"--slit": geometry, "--capillary": geometry, "--rectangle": geometry, "--ion": electrolyte,
                "--zeta": bottom, "--charge-density": bottom, "--top-zeta": top, "--top-charge-density": top,
                "--sides-zeta": sides, "--sides-charge-density": sides}
    for flag, metavar, field, text in CASE_FLAGS:
        group = group_of.get(flag, conditions)
        action = "append" if flag == "--ion" else "store"
        group.add_argument(flag, metavar=metavar, action=action, help=f"{text} [{field}]")
    conditions.add_argument("--model", choices=("pb", "dh", "steric"),
                            help="pb: Poisson-Boltzmann; dh: its linearisation (Debye-Hueckel); steric: finite "
                                 "ion size, needs --diameter [model]")
    conditions.add_argument("--bulk-conductivity", choices=("limiting", "onsager"),
                            help="bulk conductivity of the bulk and thin-layer values: limiting (infinite dilution, "
                                 "the default) or onsager (corrected for the ion atmosphere, to ~0.1 M) "
                                 "[bulk_conductivity]")
    electrolyte.add_argument("--pH", metavar="PH", help="bulk pH, for charge-regulating walls [electrolyte.pH]")
    electrolyte.add_argument("--diameter", metavar="D",
                             help="one ion diameter for every ion (steric model), e.g. 0.7nm [electrolyte.diameter]")
    bottom.add_argument("--silica", action="store_true",
                        help="silica walls: silanol sites (pK 7.5, 8/nm^2) and a 2.9 F/m^2 Stern layer; needs --pH; "
                             "with --top-* or --sides-*, the other walls [wall.preset]")
    walls.add_argument("--slip-length", metavar="B", help="Navier slip length of every wall, e.g. 2nm "
                                                          "[wall.slip_length]")
    conditions.add_argument("--viscoelectric", action="store_true",
                            help="viscosity rising with the field, water's coefficient [solvent.viscoelectric]")


def case_from_args(args: argparse.Namespace) -> Any:
    """The case of a case file (optional) with the case flags applied; errors name the flag or the file."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.casefile import case_from_mapping, read_mapping

    ions = _parse_ions(args.ion)  # its syntax first: "--ion K+ 1mM" would otherwise look like a file name
    if args.case is not None:
        _check_case_path(args.case)
    data = read_mapping(args.case) if args.case is not None else {}
    origins = _apply_flags(data, args, ions)
    _require_sections(data, args.case)
    try:
        return case_from_mapping(data)
    except InputError as exc:
        raise InputError(_locate(str(exc), origins, args.case)) from None


def _parse_ions(items: list[str] | None) -> list[tuple[str, str]] | None:
    """``NAME=CONC`` of each --ion -> [(name, concentration text)]; None without --ion."""
    from edl_solver.errors import InputError

    if not items:
        return None
    ions = []
    for item in items:
        name, sep, concentration = item.partition("=")
        if not sep or not name.strip():
            raise InputError(f"--ion: {item!r} is not NAME=CONCENTRATION, expected e.g. --ion K+=1mM")
        ions.append((name.strip(), concentration))
    return ions


def _check_case_path(path: str) -> None:
    from edl_solver.errors import InputError

    if not Path(path).exists() and not path.endswith(".toml"):
        # Most often a unit split from its number: "--slit 20 nm" leaves "nm" as the case file.
        raise InputError(f"{path!r}: no such case file (a value with a unit is written without a space or "
                         "in quotes: --slit 20nm or --slit '20 nm')")


def _apply_flags(data: dict[str, Any], args: argparse.Namespace, ions: list[tuple[str, str]] | None
                 ) -> dict[str, str]:
    """Write the flags' values into the case mapping ``data``; return {dotted field: flag} of what they set.

    The order is that of the sections: geometry, electrolyte, walls, then the single values (so that a
    section replaced by a flag takes the single values given with it).
    """
    from edl_solver.inputs.geometry import GEOMETRIES
    from edl_solver.inputs.paths import set_input

    origins: dict[str, str] = {}
    for kind, shape in GEOMETRIES.items():  # --slit HEIGHT, --capillary RADIUS, --rectangle W×H: one of them
        size = getattr(args, kind, None)
        if size is not None:
            sizes = _rectangle_sides(size) if len(shape.size_keys) == 2 else (size,)
            data["geometry"] = {"kind": kind, **dict(zip(shape.size_keys, sizes))}
            # "--rectangle width: ..." says which side of W×H is wrong
            origins.update({f"geometry.{key}": f"--{kind} {key}" if len(sizes) == 2 else f"--{kind}"
                            for key in shape.size_keys})
            break
    if ions is not None:
        data["electrolyte"] = {"ions": _ion_entries(data, ions)}
        origins.update({"electrolyte": "--ion", "electrolyte.ions": "--ion", "ion": "--ion"})
        origins.update({f"ion {name}.concentration": f"--ion {name}" for name, _ in ions})
        origins.update({f"electrolyte.ions[{i}].name": "--ion" for i in range(len(ions))})
    _apply_wall_flags(data, args, origins)
    fields = {flag: field for flag, _, field, _ in CASE_FLAGS}
    for flag in _PLAIN_FLAGS:
        value = getattr(args, flag[2:].replace("-", "_"))
        if value is not None:
            set_input(data, fields[flag], value)
            origins[fields[flag]] = flag
    if args.model is not None:
        set_input(data, "model", args.model)
    if getattr(args, "bulk_conductivity", None) is not None:
        set_input(data, "bulk_conductivity", args.bulk_conductivity)
    _apply_model_flags(data, args, origins)
    return origins


#: What parts the two sides of --rectangle: ×, x, X or * (a length's units hold none of them).
_BY = re.compile(r"\s*[×xX*]\s*")


def _rectangle_sides(text: str) -> tuple[str, str]:
    """``W×H`` (or ``WxH``, ``W*H``, spaces allowed) of --rectangle -> (width text, height text)."""
    from edl_solver.errors import InputError

    sides = _BY.split(text.strip())
    if len(sides) != 2 or not all(sides):
        raise InputError(f"--rectangle: {text!r} is not WIDTH×HEIGHT, expected e.g. --rectangle 200nm×40nm, "
                         "--rectangle 200nmx40nm or --rectangle '1um x 20nm'")
    return sides[0], sides[1]


def _ion_entries(data: dict[str, Any], ions: list[tuple[str, str]]) -> list[dict[str, Any]]:
    """The ion tables of the --ion flags (a file ion given in full keeps its valence and diffusivity)."""
    from edl_solver.errors import InputError

    entries = [{**_file_ion(data, name), "name": name, "concentration": c} for name, c in ions]
    for entry in entries:
        if "valence" not in entry and not entry["name"].rstrip(")").endswith(_CHARGE_SIGNS):
            # A salt ("KCl") where an ion is meant: the table lookup would suggest a wrong ion.
            raise InputError(f"--ion: {entry['name']!r} has no charge sign, expected one ion per flag, "
                             "e.g. --ion K+=1mM --ion Cl-=1mM")
    return entries


def _file_ion(data: dict[str, Any], name: str) -> dict[str, Any]:
    """Valence and diffusivity of an ion the case file gives in full, so a flag changes only its amount."""
    electrolyte = data.get("electrolyte")
    if not isinstance(electrolyte, dict):
        return {}
    for key in ("ions", "ion"):
        entries = electrolyte.get(key)
        for entry in entries if isinstance(entries, list) else ():
            if isinstance(entry, dict) and entry.get("name") == name:
                return {k: entry[k] for k in ("valence", "diffusivity", "temperature_dependence") if k in entry}
    return {}


def _apply_wall_flags(data: dict[str, Any], args: argparse.Namespace, origins: dict[str, str]) -> None:
    """--zeta/--charge-density replace the wall section (one condition for every wall); --top-* then set a
    slit's top wall apart, --sides-* a rectangle's side walls (--zeta/--charge-density giving its top and bottom
    walls)."""
    from edl_solver.errors import InputError

    def condition(zeta: str | None, sigma: str | None) -> dict[str, str] | None:
        return {"zeta": zeta} if zeta is not None else {"charge_density": sigma} if sigma is not None else None

    every = condition(args.zeta, args.charge_density)
    apart = [(name, condition(getattr(args, f"{name}_zeta"), getattr(args, f"{name}_charge_density")))
             for name in ("top", "sides")]
    apart = [(name, wall) for name, wall in apart if wall is not None]
    if every is None and not apart:
        return
    first_flag = "--zeta" if args.zeta is not None else "--charge-density"
    if not apart:
        data["wall"] = every
        origins.update({f"wall.{key}": first_flag for key in ("zeta", "charge_density")})
        return
    name, second = apart[0]
    second_flag = f"--{name}-zeta" if getattr(args, f"{name}_zeta") is not None else f"--{name}-charge-density"
    if len(apart) == 2:
        raise InputError(f"{second_flag}: given with --sides-*, expected --top-* for a slit's top wall or --sides-* "
                         "for a rectangle's side walls, not both")
    names = _wall_names(data.get("geometry"), name, second_flag)
    wall = data.get("wall") if isinstance(data.get("wall"), dict) else {}
    first_now = wall.get(names[0]) if any(key in wall for key in names) else wall or None
    first = every if every is not None else {"preset": "silica"} if args.silica else first_now
    if not isinstance(first, dict):
        raise InputError(f"{second_flag}: the {names[0]} walls have no condition, expected --zeta or "
                         "--charge-density (or a [wall] section in the case file) as well")
    data["wall"] = {names[0]: first, names[1]: second}
    origins.update({f"wall.{names[1]}.{key}": second_flag for key in ("zeta", "charge_density")})
    if every is not None:
        origins.update({f"wall.{names[0]}.{key}": first_flag for key in ("zeta", "charge_density")})


def _wall_names(geometry: Any, name: str, flag: str) -> tuple[str, str]:
    """The case's two wall names, checked against the flag that sets the second apart (``name``: top or sides)."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.casefile_keys import geometry_of

    shape = geometry_of(geometry)
    if shape is not None and shape.wall_count == 1:
        raise InputError(f"{flag}: a {shape.kind} has one wall, expected --zeta or --charge-density alone")
    names = shape.wall_names if shape is not None else ("bottom", "top") if name == "top" else ("top_bottom", "sides")
    if names[1] == name:
        return names
    if name == "sides":
        raise InputError(f"{flag}: a {shape.kind} has no side walls (its walls are {names[0]} and {names[1]}), "
                         "expected --top-zeta or --top-charge-density for its top wall")
    raise InputError(f"{flag}: a {shape.kind}'s top wall is one pair with its bottom wall (set by --zeta or "
                     "--charge-density), expected --sides-zeta or --sides-charge-density for its side walls")


def _apply_model_flags(data: dict[str, Any], args: argparse.Namespace, origins: dict[str, str]) -> None:
    """--pH, --diameter, --silica, --slip-length and --viscoelectric into the case mapping."""
    from edl_solver.inputs.paths import set_input

    for flag, name, path in _MODEL_PATHS:
        value = getattr(args, name)
        if value is not None:
            set_input(data, path, value)
            origins[path] = flag
    apart = any(getattr(args, f"{name}_{key}") is not None for name in ("top", "sides")
                for key in ("zeta", "charge_density"))
    if args.silica and not apart:  # with --top-*/--sides-*, the first wall (pair) is silica (_apply_wall_flags)
        data["wall"] = {"preset": "silica"}  # the whole wall: a preset admits only a slip length beside it
        origins["wall.preset"] = "--silica"
    if args.slip_length is not None:
        set_input(data, "wall.slip_length", args.slip_length)  # every wall
        origins["wall.slip_length"] = "--slip-length"
    if args.viscoelectric:
        set_input(data, "solvent.viscoelectric", True)
        origins["solvent.viscoelectric"] = "--viscoelectric"


def _require_sections(data: dict[str, Any], path: str | None) -> None:
    """A missing part of the case, named with the flags that give it."""
    from edl_solver.errors import InputError

    needs = {"geometry": "--slit HEIGHT, --capillary RADIUS or --rectangle W×H",
             "electrolyte": "--ion NAME=CONC for each ion", "wall": "--zeta ZETA or --charge-density SIGMA"}
    missing = [name for name in needs if name not in data]
    if not missing:
        return
    if path is not None:
        raise InputError(f"{path}: missing section [{missing[0]}]; add it or give {needs[missing[0]]}")
    if len(missing) == len(needs):
        raise InputError("no case given: pass a case file (try 'edl demo --print-case > case.toml') or the flags "
                         "--slit/--capillary/--rectangle, --ion and --zeta/--charge-density (see 'edl solve --help')")
    raise InputError(f"no {missing[0]} given: add {needs[missing[0]]}")


def _locate(message: str, origins: dict[str, str], path: str | None) -> str:
    """Say where a bad value came from: its flag (which replaces the field name) or the case file."""
    field, sep, rest = message.partition(": ")
    if sep and field in origins:
        return f"{origins[field]}: {rest}"
    return f"{path}: {message}" if path is not None else message
