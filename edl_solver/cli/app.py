"""The ``edl`` command: solve a case from a TOML file and/or flags, sweep a design space from a TOML
sweep file, or run the built-in demo.

Exit codes: 0 success, 1 an output could not be written after the solve, 2 bad input of any kind
(one line ``edl: error: ...`` on stderr, nothing written), 3 the solve did not converge, 130 interrupted
(a sweep keeps what it finished in ``OUT.h5.partial`` and says how to resume).

Commands kept in modules of their own (``_PLUGGED_COMMANDS``, e.g. ``edl map`` in ``edl_solver.cli.map``)
are registered when their module exists: it provides ``add_<name>_command(subparsers)``, which adds its
parser, and ``run_<name>_command(args) -> int``; an optional ``VALUE_FLAGS`` lists its flags whose
values may start with "-".

Everything is validated before anything is written: the case, then the output paths, then the solve;
the files are written last, each atomically (an existing file is replaced only by a complete one).
Heavy modules (numpy, numba, h5py, matplotlib) are imported only by the commands that need them.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn

__all__ = ["main"]

EXIT_OK = 0
EXIT_WRITE_FAILED = 1
EXIT_INPUT = 2
EXIT_CONVERGENCE = 3
EXIT_INTERRUPTED = 130

DEMO_RESULT = "edl_demo.h5"
DEMO_FIGURE = "edl_demo.png"

#: Flags that set one input of the case: (flag, metavar, dotted field it sets, help).
_CASE_FLAGS: tuple[tuple[str, str, str, str], ...] = (
    ("--slit", "HEIGHT", "geometry.height", "a slit of full wall-to-wall height HEIGHT, e.g. 50nm"),
    ("--capillary", "RADIUS", "geometry.radius", "a cylindrical capillary of radius RADIUS, e.g. 20nm"),
    ("--ion", "NAME=CONC", "electrolyte.ions",
     "an ion of the built-in table and its bulk concentration, e.g. K+=1mM; repeat for each ion (the "
     "ions given replace the case file's; a file ion given in full keeps its valence and diffusivity)"),
    ("--zeta", "ZETA", "wall.zeta", "wall potential relative to the reservoir, e.g. -50mV (every wall)"),
    ("--charge-density", "SIGMA", "wall.charge_density", "wall surface charge density, e.g. -2mC/m^2"),
    ("--top-zeta", "ZETA", "wall.top.zeta", "a different potential for the top wall of a slit"),
    ("--top-charge-density", "SIGMA", "wall.top.charge_density",
     "a different charge density for the top wall of a slit"),
    ("--temperature", "T", "solvent.temperature", "temperature of the water, e.g. 25degC or 298.15K"),
    ("--field", "E", "field", "axial electric field, e.g. 10kV/m"),
    ("--pressure-gradient", "G", "pressure_gradient",
     "axial pressure gradient dp/dx, e.g. -1bar/mm (negative pushes the liquid along +x)"),
    ("--tolerance", "TOL", "tolerance", "error up to which the thin-layer model counts as valid, e.g. 5%%"),
    ("--accuracy", "ACC", "numerics.accuracy", "target relative error of the results, e.g. 1e-6"),
)
#: Flags that set one value each, put under their dotted field as given.
_PLAIN_FLAGS = ("--temperature", "--field", "--pressure-gradient", "--tolerance", "--accuracy")
#: Flags that take a value: a value after them is never read as a flag, so "--zeta -40mV" works.
_VALUE_FLAGS = frozenset({flag for flag, *_ in _CASE_FLAGS}
                         | {"-o", "--output", "--figure", "--model", "--workers", "--dask", "--pH", "--diameter",
                            "--slip-length"}
                         | {"--length", "--pump-figure", "--conductance", "--conductance-figure", "--iv", "--left",
                            "--right", "--iv-figure"})
_FLAGS = _VALUE_FLAGS | {"-h", "--help", "--version", "-q", "--quiet", "--print-case", "--resume"}

#: Commands in modules of their own, registered when the module exists: (name, module).
_PLUGGED_COMMANDS: tuple[tuple[str, str], ...] = (("map", "edl_solver.cli.map"),)

_SOLVE_EPILOG = """\
examples:
  edl solve --slit 20nm --ion Na+=1mM --ion Cl-=1mM --zeta -40mV --field 1kV/m
  edl solve case.toml -o out.h5 --figure out.png
  edl solve case.toml --ion K+=10mM --ion Cl-=10mM    # the file's case at 10 mM
  edl demo --print-case > case.toml                    # a commented starting case file

Values carry their units, written without a space or in quotes: 20nm, '20 nm', 1mM (millimolar;
mm is millimetre), -40mV, 25degC, 10kV/m, -2mC/m^2. Flags override the values of the case file.
"""

_DEMO_EPILOG = f"""\
examples:
  edl demo                                   # writes {DEMO_RESULT} and {DEMO_FIGURE} here
  edl demo -o run.h5 --figure run.png
  edl demo --print-case > case.toml          # the demo as an editable case file
"""

_SWEEP_EPILOG = """\
examples:
  edl sweep design.toml                      # writes design.h5 next to design.toml
  edl sweep design.toml -o runs/design.h5 --workers 4
  edl sweep design.toml --dask tcp://scheduler:8786
  edl sweep design.toml --resume             # finish an interrupted sweep (design.h5.partial)

A sweep file is a case file plus a [sweep] table whose [sweep.axes] give the values of the inputs
to vary, one dimension per axis, in the file's order:

  [sweep.axes]
  "geometry.height" = { log = ["2 nm", "2 um"], points = 50 }
  "wall.zeta" = { linear = ["-150 mV", "-10 mV"], points = 30 }
  "electrolyte.concentration" = ["0.1 mM", "1 mM", "10 mM"]

'zip = [["a", "b"]]' in [sweep] varies axes a and b together (see edl_solver.sweeping.file).
'output_profiles = 101' in [sweep] also stores every case's profiles at 101 positions across the section.
Results stream to OUT.h5.partial, renamed OUT.h5 when complete; an interrupted sweep keeps what it
finished, and --resume finishes it. Cases that fail are kept with status 1 and a message.
Open the result with xarray.open_dataset("OUT.h5", engine="h5netcdf").
"""

_TRANSPORT_EPILOG = """\
examples:
  edl transport case.toml                                  # the report, with its transport block
  edl transport case.toml --length 10um --pump-figure pump.png
  edl transport case.toml --conductance 0.001mM:100mM:30 --conductance-figure conductance.png
  edl transport case.toml --length 5um --left 1mM --right 10mM --iv -150mV:150mV:31 \\
      --iv-figure iv.png -o channel.h5
  edl transport --slit 20nm --ion K+=1mM --ion Cl-=1mM --charge-density -5mC/m^2 --length 2um \\
      --left 0.1mM --right 1mM                             # membrane potential and osmotic power

why a command of its own: 'edl solve' answers for one cross-section (one solve, milliseconds);
'edl transport' answers for a whole channel as a lab measures it - a length, two reservoirs, curves
over voltage or concentration - which takes from tens to hundreds of solves. Its case flags and
report are those of 'edl solve'.

--length L makes a finite channel: its conductance and, with --left C and --right C (the
reservoirs' concentrations of the first ion; both or neither, default the case's), its membrane
potential, short-circuit current, maximum osmotic power and efficiency. --iv V1:V2:N adds its I-V
curve at N voltages V(right) - V(left), evenly spaced. --conductance C1:C2:N solves the section at
N concentrations, evenly spaced in log (per unit length, or of the channel with --length).
-o OUT.h5 holds the result (as 'edl solve' writes it) and the groups "conductance" and "channel":
  xarray.open_dataset("OUT.h5", engine="h5netcdf", group="channel")
"""

_MAIN_EPILOG = """\
examples:
  edl demo                     # a worked case: report, result file and figure
  edl demo --print-case        # its case file, a starting point for your own
  edl solve case.toml -o out.h5 --figure out.png
  edl solve --slit 20nm --ion Na+=1mM --ion Cl-=1mM --zeta -40mV --field 1kV/m
  edl sweep design.toml -o design.h5 --workers 4
  edl transport case.toml --length 10um --left 1mM --right 10mM --iv -0.2V:0.2V:41 --iv-figure iv.png

'edl COMMAND --help' describes each command.
exit codes: 0 done, 1 output not written, 2 bad input, 3 no convergence, 130 interrupted.
"""


class _UsageError(Exception):
    """A command-line syntax error, turned into exit code 2 (argparse would exit the process)."""


class _Parser(argparse.ArgumentParser):
    #: Flags that take a value (see ``_attach_values``); set on the top-level parser.
    value_flags: frozenset[str] = _VALUE_FLAGS

    def error(self, message: str) -> NoReturn:
        raise _UsageError(f"{message} (see '{self.prog} --help')")


def main(argv: Sequence[str] | None = None) -> int:
    """Run the ``edl`` command.

    Parameters
    ----------
    argv : sequence of str, optional
        The arguments after the program name; ``sys.argv[1:]`` by default.

    Returns
    -------
    int
        The exit code (see the module docstring).
    """
    arguments = list(sys.argv[1:] if argv is None else argv)
    parser = _parser()
    try:
        args = parser.parse_args(_attach_values(arguments, parser.value_flags))
    except _UsageError as exc:
        return _fail(str(exc), EXIT_INPUT)
    except SystemExit as exc:  # --help and --version print and exit; a caller of main gets the code
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT

    from edl_solver.errors import ConvergenceError, InputError

    try:
        return args.run(args)
    except InputError as exc:
        return _fail(str(exc), EXIT_INPUT)
    except ConvergenceError as exc:
        return _fail(str(exc), EXIT_CONVERGENCE)
    except KeyboardInterrupt:
        return _fail("interrupted", EXIT_INTERRUPTED)
    except BrokenPipeError:  # the reader of stdout left (``edl ... | head``): stop quietly
        _silence_stdout()
        return EXIT_WRITE_FAILED


def _silence_stdout() -> None:
    """Point stdout at /dev/null so that the interpreter's final flush raises nothing."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):  # not a real file (a test's buffer): nothing to flush into a pipe
        pass


def _fail(message: str, code: int) -> int:
    """Report an error as the one line ``edl: error: <message>`` on stderr."""
    print(f"edl: error: {' '.join(message.split())}", file=sys.stderr)
    return code


def _attach_values(arguments: list[str], value_flags: frozenset[str] = _VALUE_FLAGS) -> list[str]:
    """Join a flag and a value that starts with '-' ("--zeta -40mV" -> "--zeta=-40mV").

    argparse reads "-40mV" as an unknown flag (only plain numbers like "-40" are taken as values), and
    negative potentials, charges and gradients are the common case here. ``value_flags`` are the flags
    that take a value (those of plugged-in commands added).
    """
    joined: list[str] = []
    i = 0
    while i < len(arguments):
        item = arguments[i]
        if item == "--":  # everything after it is positional
            joined.extend(arguments[i:])
            break
        value = arguments[i + 1] if i + 1 < len(arguments) else None
        if item in value_flags and value is not None and value.startswith("-") and value not in _FLAGS:
            joined.append(f"{item}={value}")
            i += 2
        else:
            joined.append(item)
            i += 1
    return joined


# -- parser ------------------------------------------------------------------------------------------


def _parser() -> _Parser:
    """The whole command line; ``parser.value_flags`` are the flags that take a value."""
    from edl_solver import __version__

    formatter = argparse.RawDescriptionHelpFormatter
    parser = _Parser(prog="edl", allow_abbrev=False, formatter_class=formatter, epilog=_MAIN_EPILOG,
                     description="Electric double layer and electroosmotic flow across a nanochannel (slit or\n"
                                 "capillary), compared with the thin-layer (Helmholtz-Smoluchowski) slip model.")
    parser.add_argument("--version", action="version", version=f"edl {__version__}")
    commands = parser.add_subparsers(dest="command", title="commands", metavar="COMMAND")

    solve = commands.add_parser(
        "solve", help="solve a case given by a TOML file and/or flags", allow_abbrev=False,
        formatter_class=formatter, epilog=_SOLVE_EPILOG,
        description="Solve one case: the equilibrium double layer, the electroosmotic and pressure-driven\n"
                    "flow, the currents, and the error of the thin-layer slip model. Prints a report.")
    solve.add_argument("case", nargs="?", metavar="CASE.toml", help="case file (see 'edl demo --print-case')")
    _add_outputs(solve, result_default=None, figure_default=None)
    _add_case_flags(solve)
    solve.set_defaults(run=_run_solve)

    _add_transport_command(commands, formatter)

    demo = commands.add_parser(
        "demo", help="solve the built-in demonstration case", allow_abbrev=False, formatter_class=formatter,
        epilog=_DEMO_EPILOG,
        description="Solve the built-in case (a 30 nm slit with glass-like walls in 0.5 mM KCl), print\n"
                    "the report and write the result file and the figure.")
    demo.add_argument("--print-case", action="store_true",
                      help="print the demo's case file (TOML) and stop; a starting point for your own")
    _add_outputs(demo, result_default=DEMO_RESULT, figure_default=DEMO_FIGURE)
    demo.set_defaults(run=_run_demo)

    sweep = commands.add_parser(
        "sweep", help="solve every case of a design space given by a TOML sweep file", allow_abbrev=False,
        formatter_class=formatter, epilog=_SWEEP_EPILOG,
        description="Solve a base case at every combination of the values of its swept inputs and write\n"
                    "the summary values of all cases to one HDF5 (netCDF-4) file that xarray opens.")
    sweep.add_argument("sweep_file", metavar="SWEEP.toml", help="sweep file: a case file plus a [sweep] table")
    sweep.add_argument("-o", "--output", metavar="OUT.h5",
                       help="the result file (default: the sweep file's name with .h5, next to it)")
    where = sweep.add_mutually_exclusive_group()
    where.add_argument("--workers", metavar="N", type=int, default=1,
                       help="solve in N local processes (default: 1, in this process)")
    where.add_argument("--dask", metavar="ADDRESS",
                       help="solve on a Dask distributed cluster, e.g. tcp://scheduler:8786 (needs the "
                            "'distributed' package); the results are written here")
    sweep.add_argument("--resume", action="store_true",
                       help="finish the interrupted sweep kept in OUT.h5.partial (same sweep file)")
    sweep.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors (no progress bar)")
    sweep.set_defaults(run=_run_sweep)

    _add_plugged_commands(parser, commands)
    return parser


def _add_plugged_commands(parser: _Parser, commands: Any) -> None:
    """Register the commands of ``_PLUGGED_COMMANDS`` whose modules exist (imported only then).

    A module that exists but fails to import raises: a broken command should be seen, not hidden.
    """
    import importlib
    import importlib.util

    for name, module_name in _PLUGGED_COMMANDS:
        if importlib.util.find_spec(module_name) is None:
            continue
        module = importlib.import_module(module_name)
        getattr(module, f"add_{name}_command")(commands)
        sub = commands.choices.get(name)
        if sub is not None and sub.get_default("run") is None:
            sub.set_defaults(run=getattr(module, f"run_{name}_command"))
        parser.value_flags = parser.value_flags | frozenset(getattr(module, "VALUE_FLAGS", ()))


def _add_case_flags(parser: argparse.ArgumentParser) -> None:
    """The flags of ``_CASE_FLAGS`` and --model, in groups (shared by solve and transport)."""
    geometry = parser.add_argument_group("geometry (one of)").add_mutually_exclusive_group()
    electrolyte = parser.add_argument_group("electrolyte")
    walls = parser.add_argument_group("walls")
    bottom, top = walls.add_mutually_exclusive_group(), walls.add_mutually_exclusive_group()
    conditions = parser.add_argument_group("conditions and numerics")
    group_of = {"--slit": geometry, "--capillary": geometry, "--ion": electrolyte, "--zeta": bottom,
                "--charge-density": bottom, "--top-zeta": top, "--top-charge-density": top}
    for flag, metavar, field, text in _CASE_FLAGS:
        group = group_of.get(flag, conditions)
        action = "append" if flag == "--ion" else "store"
        group.add_argument(flag, metavar=metavar, action=action, help=f"{text} [{field}]")
    conditions.add_argument("--model", choices=("pb", "dh", "steric"),
                            help="pb: Poisson-Boltzmann; dh: its linearisation (Debye-Hueckel); steric: finite "
                                 "ion size, needs --diameter [model]")
    electrolyte.add_argument("--pH", metavar="PH", help="bulk pH, for charge-regulating walls [electrolyte.pH]")
    electrolyte.add_argument("--diameter", metavar="D",
                             help="one ion diameter for every ion (steric model), e.g. 0.7nm [electrolyte.diameter]")
    bottom.add_argument("--silica", action="store_true",
                        help="silica walls: silanol sites (pK 7.5, 8/nm^2) and a 2.9 F/m^2 Stern layer; needs --pH "
                             "[wall.preset]")
    walls.add_argument("--slip-length", metavar="B", help="Navier slip length of every wall, e.g. 2nm "
                                                          "[wall.slip_length]")
    conditions.add_argument("--viscoelectric", action="store_true",
                            help="viscosity rising with the field, water's coefficient [solvent.viscoelectric]")


def _add_outputs(parser: argparse.ArgumentParser, result_default: str | None, figure_default: str | None) -> None:
    on_default = " (default: %(default)s)" if result_default else ""
    parser.add_argument("-o", "--output", metavar="OUT.h5", default=result_default,
                        help=f"write the result (HDF5/netCDF, read by edl_solver.load or xarray){on_default}")
    parser.add_argument("--figure", metavar="OUT.png", default=figure_default,
                        help=f"write a figure of the profiles (PNG){on_default}")
    parser.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")


# -- commands ----------------------------------------------------------------------------------------


def _run_solve(args: argparse.Namespace) -> int:
    case = _case_from_args(args)
    outputs = _outputs(args)
    return _solve_and_write(case, outputs, args.quiet)


def _case_from_args(args: argparse.Namespace) -> Any:
    """The case of a case file (optional) with the case flags applied; errors name the flag or the file."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.casefile import case_from_mapping, read_mapping

    ions = _parse_ions(args.ion)  # its syntax first: "--ion K+ 1mM" would otherwise look like a file name
    if args.case is not None:
        _check_case_path(args.case)
    data = read_mapping(args.case) if args.case is not None else {}
    origins = _override(data, args, ions)
    _require_sections(data, args.case)
    try:
        return case_from_mapping(data)
    except InputError as exc:
        raise InputError(_locate(str(exc), origins, args.case)) from None


def _run_demo(args: argparse.Namespace) -> int:
    from edl_solver.cli.demo import DEMO_TOML, demo_case

    if args.print_case:
        sys.stdout.write(DEMO_TOML)
        return EXIT_OK
    case = demo_case()
    return _solve_and_write(case, _outputs(args), args.quiet)


def _solve_and_write(case: Any, outputs: dict[str, Path], quiet: bool) -> int:
    """Solve, write the files (each atomically, after the solve succeeded), then print the report.

    The files come before the report so that a reader who stops early (``edl ... | head``) still
    gets them.
    """
    from edl_solver import pipeline as solver

    result = solver.solve(case)
    written: list[tuple[str, Path]] = []
    failure = None
    try:
        if "result" in outputs:
            written.append(("result", result.to_hdf5(outputs["result"])))
        if "figure" in outputs:
            from edl_solver.plot import profiles as plotting

            written.append(("figure", plotting.profile_figure(result, outputs["figure"])))
    except OSError as exc:
        failure = f"cannot write {exc.filename or 'the output'}: {exc.strerror or exc}"
    if not quiet:
        print(result.report())
        if case.field == 0.0 and case.pressure_gradient == 0.0:
            # Zero drives give zero velocities and currents; the ratios and thin-layer errors still hold.
            print("note: no field and no pressure gradient, so no flow and no current; drive them with "
                  "--field E and/or --pressure-gradient G (ratios and errors above do not depend on them)")
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return _fail(failure, EXIT_WRITE_FAILED) if failure else EXIT_OK


def _run_sweep(args: argparse.Namespace) -> int:
    """Check the sweep file, the output and the cluster, then sweep; nothing is written before."""
    from edl_solver.errors import InputError
    from edl_solver.sweeping.file import load_sweep

    spec = load_sweep(args.sweep_file)
    source = Path(args.sweep_file)
    output = _writable("-o", args.output if args.output is not None else str(source.with_suffix(".h5")))
    if output.resolve() == source.resolve():
        raise InputError(f"-o: {str(output)!r} is the sweep file itself, expected another file name")
    partial = output.with_name(output.name + ".partial")
    if partial.exists() and not args.resume:
        raise InputError(f"{partial}: an interrupted sweep is kept there; add --resume to finish it (or delete "
                         "the file to start afresh)")
    if partial.exists():
        _check_partial(partial)
    if args.workers < 1:
        raise InputError(f"--workers: {args.workers} is not allowed, expected a positive integer")
    client = _dask_client(args.dask) if args.dask is not None else None
    from edl_solver.sweeping.run import sweep

    if args.resume and not partial.exists() and not args.quiet:
        print(f"note: no {partial.name} to resume, so the sweep starts from the beginning")
    try:
        result = sweep(spec.case, spec.axes, zipped=spec.zipped, path=output, resume=args.resume,
                       workers=args.workers, dask=client, progress=False if args.quiet else None,
                       profiles=spec.profile_points)
    except KeyboardInterrupt:
        if not partial.exists():
            return _fail("interrupted before any case was finished", EXIT_INTERRUPTED)
        return _fail(f"interrupted; the finished cases are kept in {partial}; to finish the sweep, run: "
                     f"{_resume_command(args)}", EXIT_INTERRUPTED)
    except OSError as exc:
        kept = f"; the finished cases are kept in {partial}" if partial.exists() else ""
        return _fail(f"cannot write {exc.filename or output}: {exc.strerror or exc}{kept}", EXIT_WRITE_FAILED)
    finally:
        if client is not None:
            client.close()
    if not args.quiet:
        print(_sweep_summary(result, output))
    return EXIT_OK


# -- edl transport -----------------------------------------------------------------------------------


def _add_transport_command(commands: Any, formatter: type[argparse.HelpFormatter]) -> None:
    transport = commands.add_parser(
        "transport", help="transport coefficients, conductance curve and a finite channel between reservoirs",
        allow_abbrev=False, formatter_class=formatter, epilog=_TRANSPORT_EPILOG,
        description="Solve a case as 'edl solve' does, then what a lab measures on a channel: the\n"
                    "electroosmotic pump curve, the conductance against salt concentration and, for a channel\n"
                    "of a given length between two reservoirs, its I-V curve, membrane potential and osmotic\n"
                    "power. Prints the report and writes the figures and the result file asked for.")
    transport.add_argument("case", nargs="?", metavar="CASE.toml", help="case file (see 'edl demo --print-case')")
    _add_outputs(transport, result_default=None, figure_default=None)
    channel = transport.add_argument_group("finite channel")
    channel.add_argument("--length", metavar="L", help="channel length, e.g. 10um")
    channel.add_argument("--left", metavar="C", help="salt concentration of the left reservoir (x = 0), e.g. 1mM "
                                                     "(of the first ion; needs --right and --length)")
    channel.add_argument("--right", metavar="C", help="salt concentration of the right reservoir (x = L), e.g. 10mM")
    channel.add_argument("--iv", metavar="V1:V2:N", help="I-V curve at N voltages V(right) - V(left) from V1 to V2, "
                                                         "e.g. -150mV:150mV:31 (needs --length)")
    channel.add_argument("--iv-figure", metavar="PNG", help="write a figure of the I-V curve (needs --iv)")
    curves = transport.add_argument_group("pump curve and conductance curve")
    curves.add_argument("--pump-figure", metavar="PNG",
                        help="write the linear EO pump curve at the case's field, full and thin-layer model "
                             "(back pressure over --length, or per unit length)")
    curves.add_argument("--conductance", metavar="C1:C2:N",
                        help="conductance at N salt concentrations from C1 to C2, evenly spaced in log, e.g. "
                             "0.001mM:100mM:30")
    curves.add_argument("--conductance-figure", metavar="PNG",
                        help="write the conductance curve, log-log, with the bulk line and the counter-ion plateau "
                             "(needs --conductance)")
    _add_case_flags(transport)
    transport.set_defaults(run=_run_transport)


#: Most points of an I-V or conductance curve (each one or more solves).
_MOST_POINTS = 1000


def _parse_range(text: str, flag: str, unit: str, log: bool) -> list[float]:
    """``FROM:TO:N`` -> N values (SI) from FROM to TO, evenly spaced (in log when ``log``)."""
    import numpy as np

    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_si

    example = "0.001mM:100mM:30" if log else "-150mV:150mV:31"
    parts = text.split(":")
    if len(parts) != 3 or not all(part.strip() for part in parts):
        raise InputError(f"{flag}: {text!r} is not FROM:TO:N, expected e.g. {flag} {example}")
    low, high = (to_si(part.strip(), unit, f"{flag} {name}") for part, name in zip(parts[:2], ("FROM", "TO")))
    count = parts[2].strip()
    if not count.isdigit() or not 2 <= int(count) <= _MOST_POINTS:
        raise InputError(f"{flag}: N {count!r} is not allowed, expected a whole number from 2 to {_MOST_POINTS}")
    if low == high:
        raise InputError(f"{flag}: FROM and TO are both {parts[0].strip()!r}, expected two different values")
    if log:
        if not (low > 0.0 and high > 0.0):
            raise InputError(f"{flag}: {text!r} has a concentration that is not positive, expected FROM and TO "
                             "above zero")
        return [float(v) for v in np.geomspace(low, high, int(count))]
    return [float(v) for v in np.linspace(low, high, int(count))]


def _positive(value: str, flag: str, unit: str, what: str) -> float:
    from edl_solver.inputs.units import to_positive_si

    return to_positive_si(value, unit, flag, what)


def _transport_plan(args: argparse.Namespace, case: Any) -> dict[str, Any]:
    """Check the transport flags against each other and the case; nothing is solved or written yet."""
    from edl_solver.channel.conductance import cases_at
    from edl_solver.errors import InputError

    plan: dict[str, Any] = {"length": None, "reservoirs": None, "voltages": None, "concentrations": None}
    for flag, value, needs, needed in (("--conductance-figure", args.conductance_figure, "--conductance",
                                        args.conductance), ("--iv-figure", args.iv_figure, "--iv", args.iv)):
        if value is not None and needed is None:
            raise InputError(f"{flag}: needs {needs} too, expected e.g. {needs} "
                             f"{'0.001mM:100mM:30' if needs == '--conductance' else '-150mV:150mV:31'}")
    if (args.left is None) != (args.right is None):
        given, missing = ("--left", "--right") if args.left is not None else ("--right", "--left")
        raise InputError(f"{given}: given without {missing}, expected both reservoir concentrations (or neither, "
                         "for reservoirs at the case's concentration)")
    if args.length is None:
        for flag, value in (("--left", args.left), ("--iv", args.iv)):
            if value is not None:
                raise InputError(f"{flag}: needs --length, the length of the channel, expected e.g. --length 10um")
    else:
        plan["length"] = _positive(args.length, "--length", "m", "a channel length, e.g. 10um")
        first = case.electrolyte.ions[0].concentration
        plan["reservoirs"] = (first, first) if args.left is None else (
            _positive(args.left, "--left", "mol/m^3", "a concentration, e.g. 1mM"),
            _positive(args.right, "--right", "mol/m^3", "a concentration, e.g. 10mM"))
        cases_at(case, list(plan["reservoirs"]))  # an electrolyte that cannot be scaled fails here, not later
    if args.iv is not None:
        plan["voltages"] = _parse_range(args.iv, "--iv", "V", log=False)
    if args.conductance is not None:
        plan["concentrations"] = _parse_range(args.conductance, "--conductance", "mol/m^3", log=True)
        cases_at(case, plan["concentrations"][:1])
    if args.pump_figure is not None and case.field == 0.0:
        raise InputError("--pump-figure: the case has no field, expected --field E (e.g. --field 10kV/m) or a "
                         "field in the case file")
    return plan


def _transport_outputs(args: argparse.Namespace) -> dict[str, Path]:
    """The output files, each checked to be writable and all different, before any solve."""
    from edl_solver.errors import InputError

    outputs: dict[str, Path] = {}
    seen: dict[Path, str] = {}
    for what, flag, value in (("result", "-o", args.output), ("figure", "--figure", args.figure),
                              ("pump curve", "--pump-figure", args.pump_figure),
                              ("conductance curve", "--conductance-figure", args.conductance_figure),
                              ("I-V curve", "--iv-figure", args.iv_figure)):
        if value is None:
            continue
        path = _writable(flag, value)
        if path.resolve() in seen:
            raise InputError(f"{flag}: {value!r} is also the file of {seen[path.resolve()]}, expected another "
                             "file name")
        seen[path.resolve()] = flag
        outputs[what] = path
    return outputs


def _run_transport(args: argparse.Namespace) -> int:
    """Check everything, solve, compute the curves, write the files (each atomically), print."""
    from edl_solver import pipeline as solver
    from edl_solver.errors import ConvergenceError

    case = _case_from_args(args)
    plan = _transport_plan(args, case)
    outputs = _transport_outputs(args)
    result = solver.solve(case)
    curve = channel = None
    if plan["concentrations"] is not None:
        from edl_solver.channel.conductance import conductance_curve

        curve = conductance_curve(case, plan["concentrations"], plan["length"],
                                  progress=False if args.quiet else None)
        if not (curve["status"].values == 0).any():
            raise ConvergenceError(f"--conductance: none of the {curve['status'].size} solves converged (the "
                                   f"first: {curve['message'].values[0]})")
    if plan["length"] is not None:
        from edl_solver.channel.conductance import channel_characteristics
        from edl_solver.channel.model import Channel

        spec = Channel(case, plan["length"], *plan["reservoirs"])
        channel = channel_characteristics(spec, plan["voltages"])
    written: list[tuple[str, Path]] = []
    failure = None
    try:
        if "result" in outputs:
            written.append(("result", _write_transport_file(outputs["result"], result, curve, channel)))
        written += _write_transport_figures(outputs, result, curve, channel, plan["length"])
    except OSError as exc:
        failure = f"cannot write {exc.filename or 'the output'}: {exc.strerror or exc}"
    if not args.quiet:
        print(result.report())
        if curve is not None:
            print(_conductance_lines(curve))
        if channel is not None:
            print(_channel_lines(channel, result))
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return _fail(failure, EXIT_WRITE_FAILED) if failure else EXIT_OK


def _write_transport_file(path: Path, result: Any, curve: Any, channel: Any) -> Path:
    """The Result, then the groups "conductance" and "channel", all in one temporary file renamed at the end:
    the final name never holds a file without its groups."""
    from edl_solver.io.files import atomic_output
    from edl_solver.io.hdf5 import write_result

    try:
        with atomic_output(path) as temporary:
            write_result(result, temporary)
            for group, data in (("conductance", curve), ("channel", channel)):
                if data is not None:
                    data.to_netcdf(temporary, group=group, mode="a", engine="h5netcdf")
    except OSError as exc:  # name the file the user asked for, not the temporary one
        raise OSError(exc.errno, exc.strerror or str(exc), str(path)) from exc
    return path


def _write_transport_figures(outputs: dict[str, Path], result: Any, curve: Any, channel: Any,
                             length: float | None) -> list[tuple[str, Path]]:
    written = []
    if "figure" in outputs:
        from edl_solver.plot import profiles as plotting

        written.append(("figure", plotting.profile_figure(result, outputs["figure"])))
    if not {"pump curve", "conductance curve", "I-V curve"} & outputs.keys():
        return written
    from edl_solver.plot import transport as transport_plots

    if "pump curve" in outputs:
        written.append(("pump curve", transport_plots.pump_curve_figure(result, outputs["pump curve"], length)))
    if "conductance curve" in outputs:
        written.append(("conductance curve", transport_plots.conductance_figure(curve, outputs["conductance curve"])))
    if "I-V curve" in outputs:
        written.append(("I-V curve", transport_plots.iv_figure(channel, outputs["I-V curve"])))
    return written


def _conductance_lines(curve: Any) -> str:
    """The conductance curve at up to seven concentrations, ends included, and where the bulk line meets the
    counter-ion estimate."""
    import math

    import numpy as np

    from edl_solver.channel.conductance import crossover_concentration
    from edl_solver.report.formatting import prefixed

    data = curve.sortby("concentration")
    c = data["concentration"].values
    unit = data["conductance"].attrs["units"].replace("*", "·")
    slit = data.attrs.get("geometry") == "slit"
    length = data.attrs.get("length_m")
    of = "per unit length" if length is None else f"of the {prefixed(length, 'm')} channel"
    status = data["status"].values
    lines = [f"Conductance against salt concentration ({of}{', per metre of slit width' if slit else ''}; "
             f"{c.size} concentrations, {int(np.count_nonzero(status == 0))} converged)",
             f"  {'c (mM)':>10}  {'full model':>12}  {'bulk line K·A':>14}  {'counter-ions only':>18}"]
    picks = sorted({round(i * (c.size - 1) / 6) for i in range(7)})
    estimate = np.where(np.isfinite(data["plateau_estimate"].values), data["plateau_estimate"].values,
                        data["plateau_conduction"].values)
    for i in picks:
        full = prefixed(data["conductance"].values[i], unit) if status[i] == 0 else "failed"
        lines.append(f"  {c[i]:>10.4g}  {full:>12}  {prefixed(data['bulk_conductance'].values[i], unit):>14}  "
                     f"{prefixed(estimate[i], unit):>18}")
    crossing = crossover_concentration(data)
    if math.isfinite(crossing):
        lines.append(f"  the bulk line meets the counter-ion estimate at c = {crossing:.3g} mM: below it the "
                     "double layers carry more current than the bulk")
    lines.append("  counter-ions only: their conduction 2μ|σ| (2πaμ|σ| in a capillary, μ = |z|eD/kT) and EO "
                 "convection; the limit c -> 0")
    return "\n".join(lines) + "\n"


def _channel_lines(data: Any, result: Any) -> str:
    """The finite channel's landmarks with units (per metre of width for a slit)."""
    import math

    from edl_solver.constants import FARADAY, GAS_CONSTANT
    from edl_solver.inputs.geometry import Capillary
    from edl_solver.report.formatting import prefixed

    case = result.case
    capillary = isinstance(case.geometry, Capillary)
    left, right = data.attrs["left_concentration"], data.attrs["right_concentration"]
    per = "" if capillary else "; per metre of slit width"
    amp, watt, siemens = ("A", "W", "S") if capillary else ("A/m", "W/m", "S/m")

    def value(name: str) -> float:
        return float(data[name].values)

    def row(label: str, text: str) -> str:
        return f"  {label:<48} {text}"

    lines = [f"Finite channel: length {prefixed(data.attrs['length'], 'm')} between reservoirs of {left:.4g} mM "
             f"(left, x = 0) and {right:.4g} mM (right, x = L){per}",
             row("conductance -dI/dΔV at zero current", prefixed(value("conductance"), siemens, 4))]
    if data.attrs["equal_reservoirs"]:
        lines.append("  equal reservoirs: no membrane potential and no osmotic power (give --left and --right)")
    else:
        thermal = GAS_CONSTANT * case.solvent.temperature / FARADAY
        references = [f"uncharged channel (Henderson) {value('henderson_potential') * 1e3:+.4g} mV"]
        sigma = result.summary["wall_charge_density"]
        sign = math.copysign(1.0, sum(sigma) if isinstance(sigma, tuple) else sigma) if sigma else 0.0
        ions = case.electrolyte.ions
        if sign and len(ions) == 2:
            counter = next(ion for ion in ions if ion.valence * sign < 0)
            nernst = -thermal / counter.valence * math.log(right / left)
            kind = "cation" if counter.valence > 0 else "anion"
            references.append(f"ideally {kind}-selective (Nernst) {nernst * 1e3:+.4g} mV")
        lines += [
            row("membrane potential V(right) - V(left) at I = 0", f"{value('membrane_potential') * 1e3:+.4f} mV"),
            row("", f"(for comparison: {'; '.join(references)})"),
            row("short-circuit current (ΔV = 0)", prefixed(value("short_circuit_current"), amp, 4)),
            row("maximum osmotic power", f"{prefixed(value('max_power'), watt, 4)} at ΔV = "
                                         f"{value('voltage_at_max_power') * 1e3:+.4g} mV"),
            row("efficiency at maximum power", f"{100 * value('efficiency'):.3g} % of the Gibbs energy released by "
                                               f"the salt flux ({100 * value('efficiency_total'):.3g} % of the whole "
                                               "free-energy input)"),
        ]
    if "voltage" in data.dims:
        status = data["status"].values
        volts = data["voltage"].values
        failed = int((status != 0).sum())
        span = f"{volts.size} voltages from {volts.min() * 1e3:+.4g} to {volts.max() * 1e3:+.4g} mV"
        lines.append(row("I-V curve", f"{span}, {'all converged' if not failed else f'{failed} did not converge'}"))
    if data.attrs.get("osmotic_power_status", "converged") != "converged":
        lines.append("  note: the maximum-power search did not converge; its values are undefined")
    return "\n".join(lines) + "\n"


def _check_partial(partial: Path) -> None:
    """A partial file that cannot be resumed (a run killed while it laid the file out) is reported as
    such, rather than as a traceback from the HDF5 library."""
    import h5py

    from edl_solver.errors import InputError

    try:
        with h5py.File(partial, "r") as f:
            laid_out = "status" in f and "sweep_json" in f.attrs
    except (OSError, KeyError, RuntimeError, ValueError) as exc:
        laid_out, reason = False, str(exc)
    else:
        reason = "its layout is incomplete"
    if not laid_out:
        raise InputError(f"{partial}: cannot be resumed ({reason}); delete it to start the sweep afresh")


def _dask_client(address: str) -> Any:
    """Connect to the Dask scheduler before anything is written, so that a wrong address costs nothing."""
    from edl_solver.errors import InputError

    try:
        from distributed import Client
    except ImportError:
        raise InputError("--dask: the 'distributed' package is not installed, expected "
                         "'pip install distributed' first") from None
    try:
        return Client(address, timeout="10s")
    except (OSError, ValueError, TypeError) as exc:  # refused, timed out, or not an address
        raise InputError(f"--dask: cannot connect to {address!r} ({exc})") from None


def _resume_command(args: argparse.Namespace) -> str:
    """The command line that finishes an interrupted sweep."""
    import shlex

    words = ["edl", "sweep", args.sweep_file]
    if args.output is not None:
        words += ["-o", args.output]
    if args.workers != 1:
        words += ["--workers", str(args.workers)]
    if args.dask is not None:
        words += ["--dask", args.dask]
    return shlex.join([*words, "--resume"])


def _sweep_summary(result: Any, output: Path) -> str:
    """Cases, converged, failed (with the first reason), where the file is and how to open it."""
    import numpy as np

    status = result["status"].values
    failed = int(np.count_nonzero(status == 1))
    shape = " x ".join(f"{name} {size}" for name, size in result["status"].sizes.items())
    lines = [f"swept {status.size} cases ({shape}): {int(np.count_nonzero(status == 0))} converged, "
             f"{failed} failed"]
    if failed:
        first = str(result["message"].values[status == 1][0])
        lines.append(f"failed cases have status 1 and their reason in 'message', e.g.: {first}")
    path = output.resolve()
    lines.append(f"wrote the sweep to {path}")
    lines.append(f'open it with: xarray.open_dataset("{path}", engine="h5netcdf")')
    return "\n".join(lines)


# -- the case from a file and flags ------------------------------------------------------------------


def _parse_ions(items: list[str] | None) -> list[tuple[str, str]] | None:
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


_CHARGE_SIGNS = ("+", "-", "\u207a", "\u207b", "\u2212")  # also superscript signs and the minus sign


def _override(data: dict[str, Any], args: argparse.Namespace, ions: list[tuple[str, str]] | None
              ) -> dict[str, str]:
    """Put the flags' values into the case dict ``data``; return {dotted field: flag} of what they set."""
    from edl_solver.errors import InputError

    origins: dict[str, str] = {}
    if args.slit is not None:
        data["geometry"] = {"kind": "slit", "height": args.slit}
        origins["geometry.height"] = "--slit"
    elif args.capillary is not None:
        data["geometry"] = {"kind": "capillary", "radius": args.capillary}
        origins["geometry.radius"] = "--capillary"
    if ions is not None:
        entries = [{**_file_ion(data, name), "name": name, "concentration": c} for name, c in ions]
        for entry in entries:
            if "valence" not in entry and not entry["name"].rstrip(")").endswith(_CHARGE_SIGNS):
                # A salt ("KCl") where an ion is meant: the table lookup would suggest a wrong ion.
                raise InputError(f"--ion: {entry['name']!r} has no charge sign, expected one ion per flag, "
                                 "e.g. --ion K+=1mM --ion Cl-=1mM")
        data["electrolyte"] = {"ions": entries}
        origins.update({"electrolyte": "--ion", "electrolyte.ions": "--ion", "ion": "--ion"})
        origins.update({f"ion {name}.concentration": f"--ion {name}" for name, _ in ions})
        origins.update({f"electrolyte.ions[{i}].name": "--ion" for i in range(len(ions))})
    _override_walls(data, args, origins)
    fields = {flag: field for flag, _, field, _ in _CASE_FLAGS}
    for flag in _PLAIN_FLAGS:
        field = fields[flag]
        value = getattr(args, flag[2:].replace("-", "_"))
        if value is not None:
            section, _, key = field.rpartition(".")
            table = data.setdefault(section, {}) if section else data
            if not isinstance(table, dict):  # a malformed file section; the flag replaces it
                table = data[section] = {}
            table[key] = value
            origins[field] = flag
    if args.model is not None:
        data["model"] = args.model
    _override_models(data, args, origins)
    return origins


def _override_models(data: dict[str, Any], args: argparse.Namespace, origins: dict[str, str]) -> None:
    """--pH, --diameter, --silica, --slip-length and --viscoelectric into the case dict."""
    def section(name: str) -> dict[str, Any]:
        table = data.get(name)
        if not isinstance(table, dict):
            table = data[name] = {}
        return table

    if args.pH is not None:
        section("electrolyte")["pH"] = args.pH
        origins["electrolyte.pH"] = "--pH"
    if args.diameter is not None:
        section("electrolyte")["diameter"] = args.diameter
        origins["electrolyte.diameter"] = "--diameter"
    if args.silica:
        data["wall"] = {"preset": "silica"}
        origins["wall.preset"] = "--silica"
    if args.slip_length is not None:
        wall = section("wall")
        for one in ([wall.get("bottom"), wall.get("top")] if "bottom" in wall or "top" in wall else [wall]):
            if isinstance(one, dict):
                one["slip_length"] = args.slip_length
        origins["wall.slip_length"] = "--slip-length"
    if args.viscoelectric:
        section("solvent")["viscoelectric"] = True
        origins["solvent.viscoelectric"] = "--viscoelectric"


def _file_ion(data: dict[str, Any], name: str) -> dict[str, Any]:
    """Valence and diffusivity of an ion the case file gives in full, so a flag changes only its amount."""
    electrolyte = data.get("electrolyte")
    if not isinstance(electrolyte, dict):
        return {}
    for key in ("ions", "ion"):
        entries = electrolyte.get(key)
        for entry in entries if isinstance(entries, list) else ():
            if isinstance(entry, dict) and entry.get("name") == name:
                return {k: entry[k] for k in ("valence", "diffusivity") if k in entry}
    return {}


def _override_walls(data: dict[str, Any], args: argparse.Namespace, origins: dict[str, str]) -> None:
    """--zeta/--charge-density set every wall; --top-* then set a slit's top wall apart."""
    from edl_solver.errors import InputError

    def condition(zeta: str | None, sigma: str | None) -> dict[str, str] | None:
        return {"zeta": zeta} if zeta is not None else {"charge_density": sigma} if sigma is not None else None

    every = condition(args.zeta, args.charge_density)
    top = condition(args.top_zeta, args.top_charge_density)
    if every is None and top is None:
        return
    wall = data.get("wall") if isinstance(data.get("wall"), dict) else {}
    bottom_now = wall.get("bottom") if "bottom" in wall or "top" in wall else wall or None
    bottom_flag = "--zeta" if args.zeta is not None else "--charge-density"
    top_flag = "--top-zeta" if args.top_zeta is not None else "--top-charge-density"
    if top is None:
        data["wall"] = every
        origins.update({f"wall.{key}": bottom_flag for key in ("zeta", "charge_density")})
        return
    geometry = data.get("geometry")
    if isinstance(geometry, dict) and (geometry.get("kind") == "capillary" or "radius" in geometry):
        raise InputError(f"{top_flag}: a capillary has one wall, expected --zeta or --charge-density alone")
    bottom = every if every is not None else bottom_now
    if not isinstance(bottom, dict):
        raise InputError(f"{top_flag}: the bottom wall has no condition, expected --zeta or --charge-density "
                         "(or a [wall] section in the case file) as well")
    data["wall"] = {"bottom": bottom, "top": top}
    origins.update({f"wall.top.{key}": top_flag for key in ("zeta", "charge_density")})
    if every is not None:
        origins.update({f"wall.bottom.{key}": bottom_flag for key in ("zeta", "charge_density")})


def _require_sections(data: dict[str, Any], path: str | None) -> None:
    """A missing part of the case, named with the flags that give it."""
    from edl_solver.errors import InputError

    needs = {"geometry": "--slit HEIGHT or --capillary RADIUS", "electrolyte": "--ion NAME=CONC for each ion",
             "wall": "--zeta ZETA or --charge-density SIGMA"}
    missing = [name for name in needs if name not in data]
    if not missing:
        return
    if path is not None:
        raise InputError(f"{path}: missing section [{missing[0]}]; add it or give {needs[missing[0]]}")
    if len(missing) == len(needs):
        raise InputError("no case given: pass a case file (try 'edl demo --print-case > case.toml') or the "
                         "flags --slit/--capillary, --ion and --zeta/--charge-density (see 'edl solve --help')")
    raise InputError(f"no {missing[0]} given: add {needs[missing[0]]}")


def _locate(message: str, origins: dict[str, str], path: str | None) -> str:
    """Say where a bad value came from: its flag (which replaces the field name) or the case file."""
    field, sep, rest = message.partition(": ")
    if sep and field in origins:
        return f"{origins[field]}: {rest}"
    return f"{path}: {message}" if path is not None else message


def _outputs(args: argparse.Namespace) -> dict[str, Path]:
    """Check the output paths before the solve, so that a bad one costs nothing and writes nothing."""
    from edl_solver.errors import InputError

    outputs = {}
    for what, flag, value in (("result", "-o", args.output), ("figure", "--figure", args.figure)):
        if value is not None:
            outputs[what] = _writable(flag, value)
    if len(outputs) == 2 and outputs["result"].resolve() == outputs["figure"].resolve():
        raise InputError(f"--figure: {args.figure!r} is also the result file (-o), expected another file name")
    return outputs


def _writable(flag: str, value: str) -> Path:
    """The file named by ``flag``'s value, if it can be created (checked before any work is done)."""
    from edl_solver.errors import InputError

    if not value.strip():
        raise InputError(f"{flag}: {value!r} is empty, expected a file name")
    path = Path(value).expanduser()
    parent = path.parent
    if path.is_dir():
        raise InputError(f"{flag}: {value!r} is a directory, expected a file name")
    if not parent.is_dir():
        state = "is not a directory" if parent.exists() else "does not exist"
        raise InputError(f"{flag}: {value!r} cannot be written, its directory {str(parent)!r} {state}")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"{flag}: {value!r} cannot be written, its directory {str(parent)!r} is not writable")
    return path
