"""The ``edl map`` command: a validity map of the thin-layer model over two inputs of a case, given as for
``edl solve`` by a case file and/or the case flags (``edl_solver.cli.case_flags``).

Registered by ``edl_solver.cli.app`` through :func:`add_map_command`; :func:`run_map_command` runs it (and
reports its own errors, so that a parser built elsewhere can run it too).
Exit codes as for the other commands: 0 done, 2 bad input (one line ``edl: error: ...`` on stderr and
no output file), 3 no convergence. Everything is checked before the first solve; the files are written
last, each atomically. With -o the map file's lock (``MAP.h5.lock``) is held throughout, so that a second
run on the same map is refused at once; an existing map file is replaced only with --overwrite.
"""

from __future__ import annotations

import argparse
import math
from contextlib import nullcontext
from pathlib import Path
from typing import Any

from edl_solver.cli.case_flags import CASE_VALUE_FLAGS, add_case_flags
from edl_solver.cli.exit_codes import EXIT_CONVERGENCE, EXIT_INPUT, EXIT_INTERRUPTED, EXIT_OK, fail
from edl_solver.cli.output_files import existing_output, result_and_figure

__all__ = ["VALUE_FLAGS", "add_map_command", "parse_axis", "run_map_command"]

#: Flags of ``edl map`` that take a value (its axes never start with "-"), the case flags among them.
VALUE_FLAGS = frozenset({"-o", "--output", "--figure", "--workers"}) | CASE_VALUE_FLAGS

#: Tolerances always drawn as contour lines, besides the one of --tolerance.
_CONTOUR_TOLERANCES = (0.01, 0.05, 0.10)

_EPILOG = """\
axes:
  An axis is PATH:FROM:TO:COUNT[:log|lin], COUNT values from FROM to TO, evenly spaced in log
  (the default; FROM and TO of one sign) or linearly. PATH is an input of the case file
  (geometry.height, geometry.radius, geometry.width, electrolyte.concentration, wall.zeta,
  wall.charge_density, solvent.temperature, ...) or a dimensionless axis measured against the case
  file's electrolyte and solvent: kappa_h (half-height or radius over the Debye length), zeta_kT
  (zeta over kT/e) or, for a rectangle, aspect_ratio (W/H: the width follows the height, which
  kappa_h or geometry.height may set; a rectangle's points are solved one by one).
  electrolyte.concentration scales every ion so that the first ion has the value.
  Values carry their units, without a space: 2nm, 0.1mM (millimolar), -50mV, -2mC/m^2.

case:
  The base case is built as by 'edl solve': a case file, the case flags (--slit, --ion, --zeta,
  --charge-density, --silica, --pH, --model, ...; see 'edl solve --help'), or a case file with flags
  overriding its values; the axes then set their inputs over it. --tolerance is the case's tolerance
  (5 % unless the case file sets one): the boundary is found where the error equals it.

examples:
  edl map case.toml --x electrolyte.concentration:0.1mM:100mM:40 --y geometry.height:2nm:2um:60 \\
      --tolerance 5% -o map.h5 --figure map.png
  edl map --slit 50nm --ion K+=1mM --ion Cl-=1mM --silica --pH 7 \\
      --x electrolyte.concentration:0.1mM:100mM:20 --y geometry.height:5nm:2um:20 --figure map.png
  edl map case.toml --x kappa_h:0.3:300:50 --y zeta_kT:-8:-0.5:30:lin --figure map.png
  edl map case.toml --x wall.charge_density:-50mC/m^2:-0.5mC/m^2:30 --y geometry.height:5nm:1um:30
  edl map --rectangle 200nm×40nm --ion K+=1mM --ion Cl-=1mM --zeta -50mV --accuracy 1e-4 \\
      --x kappa_h:0.5:20:10 --y aspect_ratio:1:20:8 --figure map.png

The map file opens with xarray.open_dataset(path, engine="h5netcdf"): the errors
thin_layer_flow_rate_error and thin_layer_current_error ((thin - full)/full) on the two axes, every
summary value, the status of each case and the root-found boundaries at --tolerance (boundary for the
EO flow rate, boundary_current for the current). An existing map file is kept unless --overwrite is
given; a second run on a map being written is refused.
"""


def add_map_command(subparsers: Any) -> None:
    """Add the ``map`` sub-command to the ``edl`` command's sub-parsers.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The return of ``ArgumentParser.add_subparsers``; the new parser sets ``run`` to
        :func:`run_map_command`.
    """
    parser = subparsers.add_parser(
        "map", help="map the thin-layer model's error over two inputs of a case", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Solve a case over a plane of two inputs and map the error of the thin-layer slip model\n"
                    "for the EO flow rate and for the current, with the boundary where it equals the\n"
                    "tolerance found by root-finding. Prints where the boundary lies.")
    parser.add_argument("case", nargs="?", metavar="CASE.toml",
                        help="the base case file (see 'edl demo --print-case'); the case flags override it")
    parser.add_argument("--x", dest="x_axis", metavar="AXIS", required=True,
                        help="the horizontal axis, PATH:FROM:TO:COUNT[:log|lin]")
    parser.add_argument("--y", dest="y_axis", metavar="AXIS", required=True,
                        help="the vertical axis, PATH:FROM:TO:COUNT[:log|lin]")
    parser.add_argument("-o", "--output", metavar="MAP.h5", help="write the map (HDF5/netCDF, read by xarray)")
    parser.add_argument("--figure", metavar="MAP.png", help="write a figure of the map (PNG)")
    parser.add_argument("--workers", metavar="N", default=None,
                        help="solve on N cores, as edl sweep --workers (default: this process, on every core)")
    parser.add_argument("--resume", action="store_true",
                        help="finish a map interrupted by Ctrl-C or a crash (its cases are kept next to -o MAP.h5)")
    parser.add_argument("--overwrite", action="store_true", help="replace MAP.h5 if it exists (by default it is kept)")
    parser.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
    add_case_flags(parser)  # with --tolerance, the case's: the boundary is found where the error equals it
    parser.set_defaults(run=run_map_command)


def parse_axis(text: str, flag: str) -> tuple[str, list[float]]:
    """``PATH:FROM:TO:COUNT[:log|lin]`` -> ``(path, values)``, values SI (dimensionless for a pseudo-axis).

    Raises
    ------
    InputError
        Wrong shape, an unknown path, a value with wrong units, a count below 2, or a log scale over
        values of both signs or zero.
    """
    import numpy as np

    from edl_solver.analysis.map_axes import PSEUDO_AXES
    from edl_solver.errors import InputError
    from edl_solver.inputs.paths import PATH_UNITS
    from edl_solver.inputs.units import to_si

    shape = f"expected PATH:FROM:TO:COUNT[:log|lin], e.g. {flag} geometry.height:2nm:2um:60"
    parts = text.split(":")
    if len(parts) not in (4, 5) or not all(part.strip() for part in parts):
        raise InputError(f"{flag}: {text!r} is not an axis, {shape}")
    path, start, stop, count = (part.strip() for part in parts[:4])
    scale = parts[4].strip().lower() if len(parts) == 5 else "log"
    if path in PSEUDO_AXES:
        unit = "dimensionless"
    elif path in PATH_UNITS:
        unit = PATH_UNITS[path]
    else:
        import difflib

        known = (*PSEUDO_AXES, *PATH_UNITS)
        close = difflib.get_close_matches(path, known, n=1, cutoff=0.6)
        hint = f"did you mean {close[0]!r}?" if close else f"expected one of {', '.join(known)}"
        raise InputError(f"{flag}: {path!r} is not an axis input, {hint}")
    low, high = to_si(start, unit, f"{flag} {path} FROM"), to_si(stop, unit, f"{flag} {path} TO")
    if not count.isdigit() or not 2 <= int(count) <= 100_000:
        raise InputError(f"{flag}: COUNT {count!r} is not allowed, expected a whole number from 2 to 100000")
    if low == high:
        raise InputError(f"{flag}: FROM and TO are both {start!r}, expected two different values")
    if scale == "log":
        if not low * high > 0.0:
            raise InputError(f"{flag}: a log axis from {start!r} to {stop!r} crosses or touches zero, expected "
                             f"FROM and TO of one sign, or ':lin' at the end ({path}:{start}:{stop}:{count}:lin)")
        values = np.geomspace(low, high, int(count))
    elif scale == "lin":
        values = np.linspace(low, high, int(count))
    else:
        raise InputError(f"{flag}: scale {parts[4]!r} is not log or lin, {shape}")
    return path, [float(v) for v in values]


def run_map_command(args: argparse.Namespace) -> int:
    """Run ``edl map`` with parsed arguments; return the exit code (errors go to stderr as one line)."""
    from edl_solver.errors import ConvergenceError, InputError

    try:
        return _run(args)
    except InputError as exc:
        return fail(str(exc), EXIT_INPUT)
    except ConvergenceError as exc:
        return fail(str(exc), EXIT_CONVERGENCE)


def _run(args: argparse.Namespace) -> int:
    from edl_solver.analysis.map_axes import check_axes
    from edl_solver.cli.case_flags import case_from_args
    from edl_solver.errors import InputError
    from edl_solver.io.files import output_lock

    base = case_from_args(args)  # as edl solve builds it: the case file, the case flags over it
    x_axis, y_axis = parse_axis(args.x_axis, "--x"), parse_axis(args.y_axis, "--y")
    try:
        check_axes(base, x_axis, y_axis)
    except InputError as exc:  # name the flags rather than the Python arguments
        raise InputError(str(exc).replace("x_axis", "--x").replace("y_axis", "--y")) from None
    tolerance = float(base.tolerance)  # checked by the case: a fraction between 0 and 1
    workers = None if args.workers is None else args.workers.strip()
    if workers is not None and (not workers.isdigit() or int(workers) < 1):
        raise InputError(f"--workers: {args.workers!r} is not allowed, expected a positive whole number")
    outputs = result_and_figure(args, "map")
    # the map file's lock, held to the end (validity_map takes it again), before the look for an interrupted map
    with output_lock(outputs["map"], "-o") if "map" in outputs else nullcontext():
        if "map" in outputs:
            existing_output("-o", outputs["map"], args.overwrite)
        return _solve_and_write(args, base, (x_axis, y_axis), tolerance, None if workers is None else int(workers),
                                outputs)


def _solve_and_write(args: argparse.Namespace, base: Any, axes: tuple[Any, Any], tolerance: float, workers: int | None,
                     outputs: dict[str, Path]) -> int:
    """The map (from the interrupted sweep with --resume), its files and its summary."""
    from edl_solver.analysis.validity_map import validity_map
    from edl_solver.errors import ConvergenceError
    from edl_solver.plot.validity import map_figure
    from edl_solver.results.schema import CONVERGED

    partial = _interrupted_sweep(args, outputs)
    try:
        data = validity_map(base, *axes, tolerances=sorted({*_CONTOUR_TOLERANCES, tolerance}),
                            path=outputs.get("map"), boundary_tolerance=tolerance, workers=workers,
                            resume=args.resume, overwrite=args.overwrite)
    except KeyboardInterrupt:
        if partial is None or not partial.exists():
            return fail("interrupted before any case was kept", EXIT_INTERRUPTED)
        return fail(f"interrupted; the finished cases are kept in {partial}; to finish the map, run the same "
                    "command with --resume", EXIT_INTERRUPTED)
    converged = int((data["status"].values == CONVERGED).sum())
    if converged == 0:
        first = str(data["message"].values.flat[0])
        where = f"; every case's reason is in {outputs['map']}" if "map" in outputs else ""
        source = args.case or "the case of the flags"
        raise ConvergenceError(f"{source}: none of the {data['status'].size} cases of the map converged "
                               f"(the first: {first}){where}")
    written = []
    if "map" in outputs:
        written.append(("map", outputs["map"]))
    if "figure" in outputs:
        written.append(("figure", map_figure(data, outputs["figure"])))
    if not args.quiet:
        print(_summary(data, tolerance))
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return EXIT_OK


def _interrupted_sweep(args: argparse.Namespace, outputs: dict[str, Path]) -> Path | None:
    """Where the map's sweep keeps its finished cases (None without -o); refuse to start afresh over an
    interrupted one, and to resume without a file."""
    from edl_solver.errors import InputError

    if "map" not in outputs:
        if args.resume:
            raise InputError("--resume: a map keeps its finished cases only next to its file, expected -o MAP.h5 "
                             "as in the interrupted run")
        return None
    partial = outputs["map"].with_name(outputs["map"].name + ".sweep.partial")
    if partial.exists() and not args.resume:
        raise InputError(f"{partial}: an interrupted map is kept there; add --resume to finish it (or delete the "
                         "file to start afresh)")
    if args.resume and not partial.exists() and not args.quiet:
        print(f"note: no {partial.name} to resume, so the map starts from the beginning")
    return partial


#: Short symbols of the axes for the printed boundary ("{ion}": the first ion of the case).
_SYMBOLS = {"geometry.height": "H", "geometry.radius": "a", "geometry.width": "W", "aspect_ratio": "W/H",
            "electrolyte.concentration": "c({ion})",
            "wall.zeta": "zeta", "wall.charge_density": "sigma", "solvent.temperature": "T",
            "zeta_kT": "zeta/(kT/e)"}


def _shown(name: str, value: float, table: dict[str, Any], digits: int) -> str:
    """``symbol = value unit`` in the units of the figure (nm, mM, mV, ...)."""
    from edl_solver.inputs.geometry import GEOMETRIES
    from edl_solver.plot.validity import axis_display

    scale, offset, label = axis_display(name, table)
    unit = label.rsplit("(", 1)[1].rstrip(")") if label.endswith(")") and "(" in label else ""
    if name == "kappa_h":  # "kappa*h" or "kappa*a": the geometry's symbol in plain letters
        symbol = GEOMETRIES[table["geometry"]["kind"]].kappa_symbol.replace("κ", "kappa*")
    else:
        symbol = _SYMBOLS.get(name, name).format(ion=table["electrolyte"]["ions"][0]["name"])
    text = f"{value * scale + offset:.{digits}g}"
    return f"{symbol} = {text} {unit}".rstrip() if unit and not unit.startswith("kT") else f"{symbol} = {text}"


def _summary(data: Any, tolerance: float) -> str:
    """A few lines: cases, how many are within the tolerance, and where the boundary lies."""
    import json

    from edl_solver.results.schema import CONVERGED

    status = data["status"].values
    table = json.loads(data.attrs["case_json"])
    total, converged = status.size, int((status == CONVERGED).sum())
    lines = [f"validity map of {data.attrs['y_axis']} x {data.attrs['x_axis']}: {total} cases, {converged} converged"
             + (f", {total - converged} did not (status 1 in the map)" if converged < total else "")]
    percent = f"{tolerance * 100:g} %"
    errors = (("EO flow rate", "thin_layer_flow_rate_error"), ("current per field", "thin_layer_current_error"))
    for name, key in errors:
        within = int((abs(data[key].values[status == CONVERGED]) <= tolerance).sum())
        lines.append(f"thin-layer {name} within {percent} in {within} of {converged} cases")
    for variable, name in (("boundary", "EO flow-rate"), ("boundary_current", "current")):
        if variable in data.variables:
            lines.extend(_boundary_lines(data[variable], f"|{name} error| = {percent}", table))
    return "\n".join(lines)


def _boundary_lines(curve: Any, where: str, table: dict[str, Any]) -> list[str]:
    """Where a root-found boundary lies: a heading and up to five points of the curve."""
    other, axis = curve.dims[0], curve.attrs["axis"]
    found = [(float(o), float(b)) for o, b in zip(curve[other].values, curve.values) if math.isfinite(b)]
    side = {"above": "larger", "below": "smaller"}.get(curve.attrs.get("valid_side", ""))
    lines = [f"boundary where {where}, root-found along {axis}"
             + (f" (thin-layer model valid at {side} {axis}):" if side else ":")]
    if not found:
        lines.append(f"  outside the map for every {other}")
    # a long curve is shown at five evenly spread points, ends included
    picks = sorted({round(i * (len(found) - 1) / 4) for i in range(5)}) if len(found) > 6 else range(len(found))
    for i in picks:
        o, b = found[i]
        lines.append(f"  at {_shown(other, o, table, 4)}: {_shown(axis, b, table, 6)}")
    return lines
