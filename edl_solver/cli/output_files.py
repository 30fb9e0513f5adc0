"""The output files of the ``edl`` commands: their flags, and the checks made before any work is done, so
that a bad path, or one another run is writing, costs nothing and writes nothing."""

from __future__ import annotations

import argparse
import os
from pathlib import Path

__all__ = ["OUTPUT_FLAGS", "add_output_flags", "existing_output", "result_and_figure", "writable"]

#: The flags of :func:`add_output_flags` that take a value.
OUTPUT_FLAGS = ("-o", "--output", "--figure")


def add_output_flags(parser: argparse.ArgumentParser, result_default: str | None,
                     figure_default: str | None) -> None:
    """-o/--output (the result file), --figure (the profiles) and -q/--quiet."""
    on_default = " (default: %(default)s)" if result_default else ""
    parser.add_argument("-o", "--output", metavar="OUT.h5", default=result_default,
                        help=f"write the result (HDF5/netCDF, read by edl_solver.load or xarray){on_default}")
    parser.add_argument("--figure", metavar="OUT.png", default=figure_default,
                        help=f"write a figure of the profiles (PNG){on_default}")
    parser.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")


def result_and_figure(args: argparse.Namespace, kind: str = "result") -> dict[str, Path]:
    """The files of -o and --figure ({kind: ..., "figure": ...}, those given), checked and different: before
    any solve, so that a bad one costs nothing and writes nothing. ``kind`` names the -o file (result, map, fit)."""
    from edl_solver.errors import InputError

    outputs = {}
    for what, flag, value in ((kind, "-o", args.output), ("figure", "--figure", args.figure)):
        if value is not None:
            outputs[what] = writable(flag, value)
    if len(outputs) == 2 and outputs[kind].resolve() == outputs["figure"].resolve():
        raise InputError(f"--figure: {args.figure!r} is also the {kind} file (-o), expected another file name")
    return outputs


def writable(flag: str, value: str) -> Path:
    """The file named by ``flag``'s value, if it can be created (checked before any work is done).

    Raises
    ------
    InputError
        An empty name, a directory, a directory that does not exist or is not writable, or a file another
        run is writing (it holds the file's lock, ``edl_solver.io.files.output_lock``).
    """
    from edl_solver.errors import InputError
    from edl_solver.io.files import check_unlocked

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
    check_unlocked(path, flag)
    return path


def existing_output(flag: str, path: Path, overwrite: bool) -> None:
    """Refuse to replace an existing ``path`` (a finished sweep or map, or any other file) without --overwrite.

    Raises
    ------
    InputError
        If ``path`` exists and ``overwrite`` is false; the message says how to replace it.
    """
    from edl_solver.errors import InputError

    if path.exists() and not overwrite:
        raise InputError(f"{flag}: {str(path)!r} already exists; add --overwrite to replace it, or choose another "
                         f"file name with {flag}")
