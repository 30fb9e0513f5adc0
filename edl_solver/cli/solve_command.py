"""``edl solve``: one case from a TOML case file and/or the case flags; prints the report and writes the
result file and the figure asked for (after the solve, each atomically)."""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from edl_solver.cli.case_flags import CASE_VALUE_FLAGS, add_case_flags, case_from_args
from edl_solver.cli.exit_codes import EXIT_OK, EXIT_WRITE_FAILED, fail
from edl_solver.cli.output_files import OUTPUT_FLAGS, add_output_flags, result_and_figure

__all__ = ["VALUE_FLAGS", "add_solve_command", "run_solve_command", "solve_and_write"]

#: Flags of ``edl solve`` that take a value.
VALUE_FLAGS = CASE_VALUE_FLAGS | frozenset(OUTPUT_FLAGS)

_EPILOG = """\
examples:
  edl solve --slit 20nm --ion Na+=1mM --ion Cl-=1mM --zeta -40mV --field 1kV/m
  edl solve --rectangle 200nm×40nm --ion K+=1mM --ion Cl-=1mM --charge-density -1mC/m^2
  edl solve case.toml -o out.h5 --figure out.png
  edl solve case.toml --ion K+=10mM --ion Cl-=10mM    # the file's case at 10 mM
  edl demo --print-case > case.toml                    # a commented starting case file

Values carry their units, written without a space or in quotes: 20nm, '20 nm', 1mM (millimolar;
mm is millimetre), -40mV, 25degC, 10kV/m, -2mC/m^2. Flags override the values of the case file.
"""


def add_solve_command(commands: Any) -> None:
    """Add ``solve`` to the sub-parsers ``commands`` (its ``run`` is :func:`run_solve_command`)."""
    solve = commands.add_parser(
        "solve", help="solve a case given by a TOML file and/or flags", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Solve one case: the equilibrium double layer, the electroosmotic and pressure-driven\n"
                    "flow, the currents, and the error of the thin-layer slip model. Prints a report.")
    solve.add_argument("case", nargs="?", metavar="CASE.toml", help="case file (see 'edl demo --print-case')")
    add_output_flags(solve, result_default=None, figure_default=None)
    add_case_flags(solve)
    solve.set_defaults(run=run_solve_command)


def run_solve_command(args: argparse.Namespace) -> int:
    """The case, then the output paths, then the solve; the files are written last."""
    case = case_from_args(args)
    outputs = result_and_figure(args)
    return solve_and_write(case, outputs, args.quiet)


def solve_and_write(case: Any, outputs: dict[str, Path], quiet: bool) -> int:
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
    return fail(failure, EXIT_WRITE_FAILED) if failure else EXIT_OK
