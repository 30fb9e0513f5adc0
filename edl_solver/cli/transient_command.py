"""``edl transient``: the section after a step at t = 0 (of the walls, the field, the pressure gradient) and under
time-dependent drives, written as one HDF5 (netCDF-4) file with its drives, a report and a figure.

The case is given as for ``edl solve`` (a case file and/or the case flags). The run's settings come from the case
file's ``[transient]`` section (``edl_solver.inputs.transient_spec``: output times, profile times, the overrides
that give the case before the step, the drives); --times, --profile-times and --before override or stand in for
them. Everything is read and checked before the run; with -o the file's lock is held throughout (a second run on
the same file is refused at once); the files are written last, each atomically, so a failed or interrupted run
writes nothing. A progress bar goes to stderr when it is a terminal (as ``edl sweep``'s).
"""

from __future__ import annotations

import argparse
import dataclasses
from collections.abc import Callable, Iterator
from contextlib import contextmanager, nullcontext
from pathlib import Path
from typing import Any

from edl_solver.cli.case_flags import CASE_VALUE_FLAGS, add_case_flags
from edl_solver.cli.exit_codes import EXIT_OK, EXIT_WRITE_FAILED, fail

__all__ = ["VALUE_FLAGS", "add_transient_command", "parse_times", "run_transient_command"]

#: Flags of ``edl transient`` that take a value, the case flags among them.
VALUE_FLAGS = frozenset({"-o", "--output", "--figure", "--report", "--times", "--profile-times", "--before"}) \
    | CASE_VALUE_FLAGS
#: Output times of --times FROM:TO:N at most.
_MOST_TIMES = 100_000

_EPILOG = """\
the [transient] section of the case file:
  [transient]
  times = { start = "1 ns", stop = "10 us", count = 200, spacing = "log" }   # or a list: ["1 ns", "2 ns"]
  profile_times = ["10 ns", "1 us"]         # optional: the profiles drawn in the figure
  [transient.before]                         # optional: the case before the step (sweep path names)
  "wall.top.zeta" = "0 mV"
  [transient.drive.field]                    # optional: a time-dependent drive, one table per target
  kind = "sine"
  amplitude = "10 kV/m"
  frequency = "1 MHz"

  By default the case before the step is the case at rest (no field, no pressure gradient): a flow start-up.

examples:
  edl transient gate.toml -o gate.h5 --figure gate.png --report gate.txt
  edl transient case.toml --times 1ns:10us:200 --before wall.top.zeta=0mV -o run.h5
  edl transient --slit 40nm --ion Na+=1mM --ion Cl-=1mM --zeta -50mV --field 10kV/m --times 1ps:100ns:50

The run file opens with xarray.open_dataset(path, engine="h5netcdf") (or
edl_solver.io.transient_file.read_transient): series on 'time', profiles on (time, x) and (time, ion, x);
its attributes hold the case after the step (case_json), before it (before_json) and the drives (drives_json).
"""


def add_transient_command(commands: Any) -> None:
    """Add ``transient`` to the sub-parsers ``commands`` (its ``run`` is :func:`run_transient_command`)."""
    parser = commands.add_parser(
        "transient", help="the section after a step at t = 0 and under time-dependent drives", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Follow the section in time after a step of the walls or the drives at t = 0 (from the\n"
                    "equilibrium before it) and under time-dependent drives: wall charge and potential, flow,\n"
                    "currents and profiles at the output times. Prints a report.")
    parser.add_argument("case", nargs="?", metavar="CASE.toml", help="case file, with a [transient] section")
    parser.add_argument("-o", "--output", metavar="RUN.h5",
                        help="write the run (HDF5/netCDF with its drives, read by xarray)")
    parser.add_argument("--figure", metavar="RUN.png", help="write a figure: walls and flow against time, profiles")
    parser.add_argument("--report", metavar="RUN.txt", help="write the report to a text file as well")
    parser.add_argument("--times", metavar="FROM:TO:N|T1,T2,...",
                        help="output times after the step: N log-spaced from FROM to TO (1ns:10us:200) or a list "
                             "(1ns,5ns,20ns); replaces the [transient] times")
    parser.add_argument("--profile-times", metavar="T1,T2,...", help="times of the profiles drawn (default: a few)")
    parser.add_argument("--before", metavar="PATH=VALUE", action="append",
                        help="a value of the case before the step, by its sweep path, e.g. wall.top.zeta=0mV; "
                             "repeat for several; added to [transient.before]")
    parser.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors (no progress bar)")
    add_case_flags(parser)
    parser.set_defaults(run=run_transient_command)


def parse_times(text: str, flag: str) -> Any:
    """``FROM:TO:N`` (N times evenly spaced in log time) or ``T1,T2,...`` -> times in s (ndarray).

    Raises
    ------
    InputError
        Not of either form, times not positive, N not a whole number from 1 to 100000. (That the times increase
        is checked by the run.)
    """
    import numpy as np

    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_positive_si

    def time(part: str, name: str) -> float:
        return to_positive_si(part.strip(), "s", f"{flag} {name}".rstrip(), "a time after the step, e.g. 10ns")

    if ":" not in text:
        parts = text.split(",")
        if not all(part.strip() for part in parts):
            raise InputError(f"{flag}: {text!r} is not a list of times, expected e.g. {flag} 1ns,5ns,20ns")
        return np.array([time(part, "") for part in parts])
    parts = text.split(":")
    if len(parts) != 3 or not all(part.strip() for part in parts):
        raise InputError(f"{flag}: {text!r} is not FROM:TO:N, expected e.g. {flag} 1ns:10us:200")
    count = parts[2].strip()
    if not count.isdigit() or not 1 <= int(count) <= _MOST_TIMES:
        raise InputError(f"{flag}: N {count!r} is not allowed, expected a whole number from 1 to {_MOST_TIMES}")
    return np.geomspace(time(parts[0], "FROM"), time(parts[1], "TO"), int(count))


def _before_flags(items: list[str] | None) -> dict[str, str]:
    """``PATH=VALUE`` of each --before -> {path: value text}."""
    from edl_solver.errors import InputError

    overrides: dict[str, str] = {}
    for item in items or ():
        path, sep, value = (part.strip() for part in item.partition("="))
        if not sep or not path or not value:
            raise InputError(f"--before: {item!r} is not PATH=VALUE, expected e.g. --before wall.top.zeta=0mV")
        if path in overrides:
            raise InputError(f"--before: {path!r} is given twice, expected each path once")
        overrides[path] = value
    return overrides


@dataclasses.dataclass(frozen=True)
class _Settings:
    """The run's settings after the flags: those of ``inputs.transient_spec.TransientSpec``, and the spec read
    from the case file (None without a [transient] section)."""

    times: Any
    profile_times: Any
    before_overrides: dict[str, Any]
    drives: dict[str, Any]
    file_spec: Any = None


def _settings(args: argparse.Namespace) -> _Settings:
    """The case file's [transient] section, with the flags applied."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.casefile import read_mapping

    file_spec = None
    if args.case is not None and "transient" in read_mapping(args.case):
        from edl_solver.inputs.transient_spec import read_transient_spec

        file_spec = read_transient_spec(args.case)
    times = parse_times(args.times, "--times") if args.times is not None else \
        file_spec.times if file_spec is not None else None
    if times is None:
        where = f"{args.case} has no [transient] section" if args.case is not None else "no case file"
        raise InputError(f"--times: missing ({where}), expected --times FROM:TO:N or a [transient] section with "
                         "times in the case file")
    profile_times = parse_times(args.profile_times, "--profile-times") if args.profile_times is not None else \
        file_spec.profile_times if file_spec is not None else None
    before = {**(file_spec.before_overrides if file_spec is not None else {}), **_before_flags(args.before)}
    drives = dict(file_spec.drives) if file_spec is not None else {}
    return _Settings(times, profile_times, before, drives, file_spec)


def _before(case: Any, settings: _Settings) -> Any:
    """The case before the step (``inputs.transient_spec.before_case``), None for the default (the case at rest)."""
    if not settings.before_overrides:
        return None
    from edl_solver.inputs.transient_spec import TransientSpec, before_case

    fields = {"times": settings.times, "profile_times": settings.profile_times,
              "before_overrides": settings.before_overrides, "drives": settings.drives}
    spec = dataclasses.replace(settings.file_spec, **fields) if settings.file_spec is not None else \
        TransientSpec(**fields)
    return before_case(case, spec)


def _outputs(args: argparse.Namespace) -> dict[str, Path]:
    """-o, --figure and --report, checked and different, before the run (a bad one costs nothing)."""
    from edl_solver.cli.output_files import writable
    from edl_solver.errors import InputError

    outputs: dict[str, Path] = {}
    for what, flag, value in (("run", "-o", args.output), ("figure", "--figure", args.figure),
                              ("report", "--report", args.report)):
        if value is None:
            continue
        path = writable(flag, value)
        same = next((other for other, p in outputs.items() if p.resolve() == path.resolve()), None)
        if same is not None or (args.case is not None and path.resolve() == Path(args.case).resolve()):
            raise InputError(f"{flag}: {value!r} is also the {same or 'case'} file, expected another file name")
        outputs[what] = path
    return outputs


@contextmanager
def _progress(quiet: bool) -> Iterator[Callable[[float], None]]:
    """A callback progress(fraction) that draws a bar on stderr when it is a terminal (tqdm, as ``edl sweep``)."""
    try:
        from tqdm import tqdm
    except ImportError:  # tqdm is optional
        yield lambda fraction: None
        return
    steps = 1000
    # disable=None: tqdm turns itself off when not attached to a terminal (CI, pipes)
    with tqdm(total=steps, disable=True if quiet else None, desc="transient", smoothing=0.1,
              bar_format="{desc}: {percentage:3.0f}%|{bar}| [{elapsed}<{remaining}]") as bar:
        def update(fraction: float) -> None:
            done = round(steps * min(max(float(fraction), 0.0), 1.0))
            if done > bar.n:
                bar.update(done - bar.n)

        yield update


def _run(case: Any, spec: _Settings, before: Any, progress: Callable[[float], None]) -> Any:
    """``model.startup.transient`` with the drives and the progress bar."""
    from edl_solver.model.startup import transient

    return transient(case, spec.times, before=before, drives=spec.drives or None, progress=progress)


def run_transient_command(args: argparse.Namespace) -> int:
    """The case, the settings and the outputs, checked; then the run (the -o lock held); the files last."""
    from edl_solver.cli.case_flags import case_from_args
    from edl_solver.io.files import output_lock
    from edl_solver.plot.transient_figure import profile_indices

    case = case_from_args(args)
    spec = _settings(args)
    before = _before(case, spec)
    profile_indices(spec.times, spec.profile_times)  # within the run's times: checked before the run
    outputs = _outputs(args)
    with output_lock(outputs["run"], "-o") if "run" in outputs else nullcontext():
        with _progress(args.quiet) as progress:
            run = _run(case, spec, before, progress)
        return _write(args, run, spec, outputs)


def _write(args: argparse.Namespace, run: Any, spec: _Settings, outputs: dict[str, Path]) -> int:
    """Write the files asked for (each atomically), then print the report and where they are."""
    from edl_solver.io.files import atomic_output
    from edl_solver.io.transient_file import write_transient
    from edl_solver.plot.transient_figure import transient_figure
    from edl_solver.report.transient_text import transient_report

    report = transient_report(run)
    written: list[tuple[str, Path]] = []
    failure = None
    try:
        if "run" in outputs:
            written.append(("run", write_transient(run, outputs["run"])))
        if "figure" in outputs:
            written.append(("figure", transient_figure(run, spec.profile_times, path=outputs["figure"])))
        if "report" in outputs:
            with atomic_output(outputs["report"]) as temporary:
                temporary.write_text(report, encoding="utf-8")
            written.append(("report", outputs["report"]))
    except OSError as exc:
        failure = f"cannot write {exc.filename or 'the output'}: {exc.strerror or exc}"
    if not args.quiet:
        print(report, end="")
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return fail(failure, EXIT_WRITE_FAILED) if failure else EXIT_OK
