"""``edl sweep``: every case of a design space given by a TOML sweep file, written to one HDF5 (netCDF-4)
file; an interrupted sweep keeps what it finished in ``OUT.h5.partial`` and says how to resume. The output's
lock (``OUT.h5.lock``) is held from the first look at ``OUT.h5.partial`` to the end, so that a second run on
the same output is refused at once; a finished ``OUT.h5`` is replaced only with --overwrite."""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from edl_solver.cli.exit_codes import EXIT_INTERRUPTED, EXIT_OK, EXIT_WRITE_FAILED, fail
from edl_solver.cli.output_files import existing_output, writable

__all__ = ["VALUE_FLAGS", "add_sweep_command", "run_sweep_command"]

#: Flags of ``edl sweep`` that take a value.
VALUE_FLAGS = frozenset({"-o", "--output", "--workers", "--dask"})

_EPILOG = """\
examples:
  edl sweep design.toml                      # writes design.h5 next to design.toml
  edl sweep design.toml -o runs/design.h5 --workers 4   # 4 threads (or processes, see --workers)
  edl sweep design.toml --dask tcp://scheduler:8786
  edl sweep design.toml --resume             # finish an interrupted sweep (design.h5.partial)
  edl sweep design.toml --overwrite          # replace a finished design.h5

A sweep file is a case file plus a [sweep] table whose [sweep.axes] give the values of the inputs
to vary, one dimension per axis, in the file's order:

  [sweep.axes]
  "geometry.height" = { log = ["2 nm", "2 um"], points = 50 }
  "wall.zeta" = { linear = ["-150 mV", "-10 mV"], points = 30 }
  "electrolyte.concentration" = ["0.1 mM", "1 mM", "10 mM"]

'zip = [["a", "b"]]' in [sweep] varies axes a and b together (see edl_solver.sweeping.file).
'output_profiles = 101' in [sweep] also stores every case's profiles at 101 positions across the section
(not for a rectangle, whose profiles are 2-D: solve its points of interest with 'edl solve').
Results stream to OUT.h5.partial, renamed OUT.h5 when complete; an interrupted sweep keeps what it
finished, and --resume finishes it. Cases that fail are kept with status 1 and a message. An existing
OUT.h5 is kept unless --overwrite is given; a second run on an OUT.h5 being written is refused (the
running one holds OUT.h5.lock).
Open the result with xarray.open_dataset("OUT.h5", engine="h5netcdf").
"""


def add_sweep_command(commands: Any) -> None:
    """Add ``sweep`` to the sub-parsers ``commands`` (its ``run`` is :func:`run_sweep_command`)."""
    sweep = commands.add_parser(
        "sweep", help="solve every case of a design space given by a TOML sweep file", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Solve a base case at every combination of the values of its swept inputs and write\n"
                    "the summary values of all cases to one HDF5 (netCDF-4) file that xarray opens.")
    sweep.add_argument("sweep_file", metavar="SWEEP.toml", help="sweep file: a case file plus a [sweep] table")
    sweep.add_argument("-o", "--output", metavar="OUT.h5",
                       help="the result file (default: the sweep file's name with .h5, next to it)")
    where = sweep.add_mutually_exclusive_group()
    where.add_argument("--workers", metavar="N", type=int, default=None,
                       help="solve on N cores of this machine. A sweep solved in compiled batches (most) runs on "
                            "N threads of this process: they start at once and share its memory. A sweep solved "
                            "case by case (stored profiles, rectangles) runs in N worker processes: each takes "
                            "~1-2 s to start and ~200 MB of memory. Default: this process alone, compiled batches "
                            "on every core (NUMBA_NUM_THREADS sets fewer), a case-by-case sweep on one core")
    where.add_argument("--dask", metavar="ADDRESS",
                       help="solve on a Dask distributed cluster, e.g. tcp://scheduler:8786 (needs the "
                            "'distributed' package); the results are written here")
    sweep.add_argument("--resume", action="store_true",
                       help="finish the interrupted sweep kept in OUT.h5.partial (same sweep file)")
    sweep.add_argument("--overwrite", action="store_true", help="replace OUT.h5 if it exists (by default it is kept)")
    sweep.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors (no progress bar)")
    sweep.set_defaults(run=run_sweep_command)


def run_sweep_command(args: argparse.Namespace) -> int:
    """Check the sweep file and the output, take the output's lock, check what is there and the cluster, then
    sweep; nothing is written before."""
    from edl_solver.errors import InputError
    from edl_solver.io.files import output_lock
    from edl_solver.sweeping.file import load_sweep

    spec = load_sweep(args.sweep_file)
    source = Path(args.sweep_file)
    output = writable("-o", args.output if args.output is not None else str(source.with_suffix(".h5")))
    if output.resolve() == source.resolve():
        raise InputError(f"-o: {str(output)!r} is the sweep file itself, expected another file name")
    with output_lock(output, "-o"):  # held until the sweep ends; sweep() takes it again
        partial = _checked_start(args, output)
        client = _dask_client(args.dask) if args.dask is not None else None
        from edl_solver.sweeping.run import sweep

        try:
            result = sweep(spec.case, spec.axes, zipped=spec.zipped, path=output, resume=args.resume,
                           workers=args.workers, dask=client, progress=False if args.quiet else None,
                           profiles=spec.profile_points, overwrite=args.overwrite)
        except KeyboardInterrupt:
            if not partial.exists():
                return fail("interrupted before any case was finished", EXIT_INTERRUPTED)
            return fail(f"interrupted; the finished cases are kept in {partial}; to finish the sweep, run: "
                        f"{_resume_command(args)}", EXIT_INTERRUPTED)
        except OSError as exc:
            kept = f"; the finished cases are kept in {partial}" if partial.exists() else ""
            return fail(f"cannot write {exc.filename or output}: {exc.strerror or exc}{kept}", EXIT_WRITE_FAILED)
        finally:
            if client is not None:
                client.close()
    if not args.quiet:
        print(_sweep_summary(result, output))
    return EXIT_OK


def _checked_start(args: argparse.Namespace, output: Path) -> Path:
    """With the output's lock held: refuse a finished output without --overwrite, an interrupted sweep without
    --resume (no run holds it now), one that cannot be resumed, and a bad worker count; the partial file."""
    from edl_solver.errors import InputError

    existing_output("-o", output, args.overwrite)
    partial = output.with_name(output.name + ".partial")
    if partial.exists() and not args.resume:
        raise InputError(f"{partial}: an interrupted sweep is kept there; add --resume to finish it (or delete "
                         "the file to start afresh)")
    if partial.exists():
        _check_partial(partial)
    if args.workers is not None and args.workers < 1:
        raise InputError(f"--workers: {args.workers} is not allowed, expected a positive integer")
    if args.resume and not partial.exists() and not args.quiet:
        print(f"note: no {partial.name} to resume, so the sweep starts from the beginning")
    return partial


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
    if args.workers is not None:
        words += ["--workers", str(args.workers)]
    if args.dask is not None:
        words += ["--dask", args.dask]
    if args.overwrite:
        words.append("--overwrite")
    return shlex.join([*words, "--resume"])


def _sweep_summary(result: Any, output: Path) -> str:
    """Cases, converged, failed (with the first reason), where the file is and how to open it."""
    import numpy as np

    from edl_solver.results.schema import CONVERGED, FAILED

    status = result["status"].values
    failed = int(np.count_nonzero(status == FAILED))
    shape = " x ".join(f"{name} {size}" for name, size in result["status"].sizes.items())
    lines = [f"swept {status.size} cases ({shape}): {int(np.count_nonzero(status == CONVERGED))} converged, "
             f"{failed} failed"]
    if failed:
        first = str(result["message"].values[status == FAILED][0])
        lines.append(f"failed cases have status {FAILED} and their reason in 'message', e.g.: {first}")
    path = output.resolve()
    lines.append(f"wrote the sweep to {path}")
    lines.append(f'open it with: xarray.open_dataset("{path}", engine="h5netcdf")')
    return "\n".join(lines)
