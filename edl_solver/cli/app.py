"""The ``edl`` command: solve a case from a TOML file and/or flags, sweep a design space from a TOML
sweep file, compute what a lab measures on a channel, map the thin-layer model's validity, or run the
built-in demo.

Exit codes (``edl_solver.cli.exit_codes``): 0 success, 1 an output could not be written after the solve,
2 bad input of any kind (one line ``edl: error: ...`` on stderr, nothing written), 3 the solve did not
converge, 130 interrupted (a sweep keeps what it finished in ``OUT.h5.partial`` and says how to resume).

Each command lives in a module of its own (``_COMMANDS``), which provides ``add_<name>_command(subparsers)``
(adding its parser, whose ``run`` default is ``run_<name>_command(args) -> int``) and ``VALUE_FLAGS``, its
flags whose values may start with "-". This module parses the command line, dispatches, and turns the
errors into exit codes.

Everything is validated before anything is written: the case, then the output paths, then the solve;
the files are written last, each atomically (an existing file is replaced only by a complete one).
Heavy modules (numpy, numba, h5py, matplotlib) are imported only by the commands that need them.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence
from typing import Any, NoReturn

from edl_solver.cli.exit_codes import EXIT_CONVERGENCE, EXIT_INPUT, EXIT_INTERRUPTED, EXIT_OK, EXIT_WRITE_FAILED, fail

__all__ = ["main"]

#: The commands in the order of the help: (name, module).
_COMMANDS: tuple[tuple[str, str], ...] = (
    ("solve", "edl_solver.cli.solve_command"),
    ("transport", "edl_solver.cli.transport_command"),
    ("demo", "edl_solver.cli.demo"),
    ("sweep", "edl_solver.cli.sweep_command"),
    ("map", "edl_solver.cli.map_command"),
    ("fit", "edl_solver.cli.fit_command"),
    ("transient", "edl_solver.cli.transient_command"),
)
#: Flags that take no value (a value that is one of them is not attached to the flag before it).
_SWITCHES = frozenset({"-h", "--help", "--version", "-q", "--quiet", "--print-case", "--resume", "--profile"})

_MAIN_EPILOG = """\
examples:
  edl demo                     # a worked case: report, result file and figure
  edl demo --print-case        # its case file, a starting point for your own
  edl solve case.toml -o out.h5 --figure out.png
  edl solve --slit 20nm --ion Na+=1mM --ion Cl-=1mM --zeta -40mV --field 1kV/m
  edl sweep design.toml -o design.h5 --workers 4
  edl transport case.toml --length 10um --left 1mM --right 10mM --iv -0.2V:0.2V:41 --iv-figure iv.png
  edl fit data.csv --case case.toml --fit wall.charge_density --length 20um --width 10um -o fit.h5
  edl transient gate.toml -o gate.h5 --figure gate.png     # after a step at t = 0 ([transient] section)

'edl COMMAND --help' describes each command.
exit codes: 0 done, 1 output not written, 2 bad input, 3 no convergence, 130 interrupted.
"""


class _UsageError(Exception):
    """A command-line syntax error, turned into exit code 2 (argparse would exit the process)."""


class _Parser(argparse.ArgumentParser):
    #: Flags that take a value (see ``_attach_values``); set on the top-level parser by the commands.
    value_flags: frozenset[str] = frozenset()

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
        return fail(str(exc), EXIT_INPUT)
    except SystemExit as exc:  # --help and --version print and exit; a caller of main gets the code
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT

    from edl_solver.errors import ConvergenceError, InputError

    try:
        return args.run(args)
    except InputError as exc:
        return fail(str(exc), EXIT_INPUT)
    except ConvergenceError as exc:
        return fail(str(exc), EXIT_CONVERGENCE)
    except KeyboardInterrupt:
        return fail("interrupted", EXIT_INTERRUPTED)
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


def _attach_values(arguments: list[str], value_flags: frozenset[str]) -> list[str]:
    """Join a flag and a value that starts with '-' ("--zeta -40mV" -> "--zeta=-40mV").

    argparse reads "-40mV" as an unknown flag (only plain numbers like "-40" are taken as values), and
    negative potentials, charges and gradients are the common case here. ``value_flags`` are the flags
    that take a value (of every command); a value that is itself a flag is left alone.
    """
    flags = value_flags | _SWITCHES
    joined: list[str] = []
    i = 0
    while i < len(arguments):
        item = arguments[i]
        if item == "--":  # everything after it is positional
            joined.extend(arguments[i:])
            break
        value = arguments[i + 1] if i + 1 < len(arguments) else None
        if item in value_flags and value is not None and value.startswith("-") and value not in flags:
            joined.append(f"{item}={value}")
            i += 2
        else:
            joined.append(item)
            i += 1
    return joined


def _parser() -> _Parser:
    """The whole command line; ``parser.value_flags`` are the flags that take a value."""
    from edl_solver import __version__

    parser = _Parser(prog="edl", allow_abbrev=False, formatter_class=argparse.RawDescriptionHelpFormatter,
                     epilog=_MAIN_EPILOG,
                     description="Electric double layer and electroosmotic flow across a nanochannel (slit,\n"
                                 "capillary or rectangle), compared with the thin-layer (Helmholtz-Smoluchowski)\n"
                                 "slip model.")
    parser.add_argument("--version", action="version", version=f"edl {__version__}")
    commands = parser.add_subparsers(dest="command", title="commands", metavar="COMMAND")
    _add_commands(parser, commands)
    return parser


def _add_commands(parser: _Parser, commands: Any) -> None:
    """Register the commands of ``_COMMANDS``: each module adds its parser and declares its value flags.

    A module that fails to import raises: a broken command should be seen, not hidden.
    """
    import importlib

    for name, module_name in _COMMANDS:
        module = importlib.import_module(module_name)
        getattr(module, f"add_{name}_command")(commands)
        sub = commands.choices.get(name)
        if sub is not None and sub.get_default("run") is None:
            sub.set_defaults(run=getattr(module, f"run_{name}_command"))
        parser.value_flags = parser.value_flags | frozenset(getattr(module, "VALUE_FLAGS", ()))
