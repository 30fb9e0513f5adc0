"""``edl fit``: case inputs (wall charge, site pK, ...) fitted to measurements in lab CSV files, with their
standard errors, a report, a figure of the data against the model and an HDF5 record.

The case is given as for ``edl solve`` (``--case CASE.toml`` and/or the case flags); the files are read by
``edl_solver.fitting.measurements.read_measurements`` (device values turned into the summary's per-length
values with --length, --width and --channels); ``edl_solver.fit`` does the fit. Exit codes as for the other
commands: 0 done, 2 bad input (one line ``edl: error: ...`` naming the file, row and column of bad data, and
no output file), 3 no convergence. Everything is read and checked before the first solve; with -o the fit
file's lock is held throughout, so that a second run on the same file is refused; the files are written last,
each atomically.
"""

from __future__ import annotations

import argparse
from contextlib import nullcontext
from pathlib import Path
from typing import Any

from edl_solver.cli.case_flags import CASE_VALUE_FLAGS, add_case_flags
from edl_solver.cli.exit_codes import EXIT_CONVERGENCE, EXIT_INPUT, EXIT_OK, fail
from edl_solver.cli.output_files import result_and_figure

__all__ = ["VALUE_FLAGS", "add_fit_command", "parse_fit_flag", "run_fit_command"]

#: Flags of ``edl fit`` that take a value, the case flags among them.
VALUE_FLAGS = frozenset({"-o", "--output", "--figure", "--case", "--fit", "--length", "--width", "--channels",
                         "--max-evaluations"}) | CASE_VALUE_FLAGS

_EPILOG = """\
data:
  DATA.csv has a header row of 'name [unit]' columns (e.g. concentration [mM],conductance [nS],
  uncertainty [nS]), then one row per point; '#' lines are comments. Several files are several data
  sets fitted with shared parameters. Device values (conductance, streaming current, ...) become the
  model's per-length values with --length, --width (a slit's) and --channels.

fit:
  --fit PATH[,PATH...] names sweepable case inputs: wall.charge_density, wall.zeta, wall.site[0].pK,
  wall.site[0].density, wall.stern_capacitance, wall.slip_length, geometry.height, ... PATH=START sets
  a start value with its unit (wall.charge_density=-5mC/m^2). A fitted wall charge replaces the case's
  wall condition.

examples:
  edl fit examples/slit_conductance.csv --slit 100nm --ion K+=1mM --ion Cl-=1mM --charge-density -1mC/m^2 \\
      --fit wall.charge_density --length 20um --width 10um --channels 10 -o fit.h5 --figure fit.png
  edl fit ph3.csv ph7.csv --case silica.toml --fit wall.site[0].pK,wall.site[0].density --profile

The fit file opens with xarray.open_dataset(path, engine="h5netcdf", group="fit"): the data, the model
at the data and on a fine grid, the parameters, standard errors, covariance and correlation, the
thin-layer fit and the warnings.
"""


def add_fit_command(subparsers: Any) -> None:
    """Add the ``fit`` sub-command to the ``edl`` command's sub-parsers (its ``run`` is :func:`run_fit_command`)."""
    parser = subparsers.add_parser(
        "fit", help="fit wall properties (or other case inputs) to measurements in CSV files", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Fit case inputs to measured values in lab units by weighted least squares with the full\n"
                    "model; report them with standard errors, beside the thin-layer fit of the same data.")
    parser.add_argument("data", nargs="+", metavar="DATA.csv", help="measurement files (one data set each)")
    parser.add_argument("--case", metavar="CASE.toml", help="the case file; the case flags override it")
    parser.add_argument("--fit", metavar="PATH[=START][,...]", required=True, help="the case inputs to fit")
    parser.add_argument("--length", metavar="L", help="channel length, e.g. 20um (for device values)")
    parser.add_argument("--width", metavar="W", help="width of each slit, e.g. 10um (for a slit's device values)")
    parser.add_argument("--channels", metavar="N", default="1", help="identical channels in parallel (default: 1)")
    parser.add_argument("--profile", action="store_true", help="also profile-likelihood intervals (a few fits each)")
    parser.add_argument("--max-evaluations", metavar="N", default="100", help="most model evaluations (default: 100)")
    parser.add_argument("-o", "--output", metavar="FIT.h5", help="write the fit (HDF5 group 'fit', read by xarray)")
    parser.add_argument("--figure", metavar="FIT.png", help="write the data against the model, with residuals (PNG)")
    parser.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
    add_case_flags(parser)
    parser.set_defaults(run=run_fit_command)


def parse_fit_flag(text: str) -> dict[str, str | None]:
    """``PATH[=START][,PATH...]`` -> {path: start text or None}; the paths are checked by the fit."""
    from edl_solver.errors import InputError

    parameters: dict[str, str | None] = {}
    for item in text.split(","):
        path, _, start = (part.strip() for part in item.partition("="))
        if not path or (_ and not start):
            raise InputError(f"--fit: {text!r} is not a list of inputs, expected PATH[=START][,PATH...], e.g. "
                             "--fit wall.charge_density=-5mC/m^2,wall.site[0].pK")
        if path in parameters:
            raise InputError(f"--fit: {path!r} is named twice, expected each input once")
        parameters[path] = start or None
    return parameters


def run_fit_command(args: argparse.Namespace) -> int:
    """Run ``edl fit`` with parsed arguments; return the exit code (errors go to stderr as one line)."""
    from edl_solver.errors import ConvergenceError, InputError

    try:
        return _run(args)
    except InputError as exc:
        return fail(str(exc), EXIT_INPUT)
    except ConvergenceError as exc:
        return fail(str(exc), EXIT_CONVERGENCE)


def _whole(flag: str, value: str, least: int) -> int:
    from edl_solver.errors import InputError

    text = str(value).strip()
    if not text.isdigit() or int(text) < least:
        raise InputError(f"{flag}: {value!r} is not allowed, expected a whole number of at least {least}")
    return int(text)


def _run(args: argparse.Namespace) -> int:
    from edl_solver.cli.case_flags import case_from_args
    from edl_solver.errors import InputError
    from edl_solver.fitting.measurements import read_measurement_files
    from edl_solver.fitting.problem import parse_data, parse_parameters
    from edl_solver.io.files import output_lock

    case = case_from_args(args)
    parameters = parse_fit_flag(args.fit)
    channels, evaluations = _whole("--channels", args.channels, 1), _whole("--max-evaluations", args.max_evaluations, 1)
    outputs = _outputs(args)
    data = read_measurement_files(args.data, length=args.length, width=args.width, channels=channels,
                                  geometry=case, min_points=len(parameters))
    try:  # the parameters against the data, before any solve: errors name the flag
        parse_parameters(parameters, parse_data(data))
    except InputError as exc:
        raise InputError(str(exc).replace("parameters[", "--fit[").replace("parameters:", "--fit:", 1)) from None
    with output_lock(outputs["fit"], "-o") if "fit" in outputs else nullcontext():
        return _fit_and_write(args, case, data if len(data) > 1 else data[0], parameters, evaluations, outputs)


def _fit_and_write(args: argparse.Namespace, case: Any, data: Any, parameters: dict[str, str | None],
                   evaluations: int, outputs: dict[str, Path]) -> int:
    import warnings

    from edl_solver.analysis.fit_record import fit_dataset
    from edl_solver.fitting.run import fit
    from edl_solver.fitting.uncertainty import IdentifiabilityWarning
    from edl_solver.io.fit_file import write_fit
    from edl_solver.plot.fit_figure import fit_figure
    from edl_solver.report.fit_text import fit_lines

    with warnings.catch_warnings():  # the report lists them
        warnings.simplefilter("ignore", IdentifiabilityWarning)
        result = fit(case, data, parameters, profile=args.profile, max_evaluations=evaluations)
    record = fit_dataset(case, result, list(args.data))
    written = []
    if "fit" in outputs:
        written.append(("fit", write_fit(record, outputs["fit"])))
    if "figure" in outputs:
        written.append(("figure", fit_figure(record, outputs["figure"])))
    if not args.quiet:
        print("\n".join(fit_lines(result, list(args.data))))
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return EXIT_OK


def _outputs(args: argparse.Namespace) -> dict[str, Path]:
    """Check the output paths before any solve, so that a bad one costs nothing and writes nothing."""
    from edl_solver.errors import InputError

    outputs = result_and_figure(args, "fit")
    if any(Path(source).expanduser().resolve() == path.resolve() for source in args.data for path in outputs.values()):
        raise InputError("-o/--figure: an output file is also a data file, expected another file name")
    return outputs
