"""The ``edl transient`` command (edl_solver.cli.transient_command): a case and its [transient] settings to a run
file with its drives, a figure and a report; bad input exits 2 with one line and no output file.

``stand_in_transient`` records the keywords the command passes to the solver. Command-line behaviour of this
project's design, not physics.
"""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from edl_solver.cli.app import main
from edl_solver.cli.transient_command import parse_times
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.io.transient_file import read_transient
from tests.helpers import PNG_SIGNATURE

CASE_TOML = """\
field = "10 kV/m"

[geometry]
kind = "slit"
height = "40 nm"

[electrolyte]
ions = { "Na+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-50 mV"
"""
FLAGS = ["--slit", "40nm", "--ion", "Na+=1mM", "--ion", "Cl-=1mM", "--zeta", "-50mV", "--field", "10kV/m"]


def run_transient(argv: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of ``edl transient ARGV``."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["transient", *argv])
    return code, out.getvalue(), err.getvalue()


@pytest.fixture
def stand_in_transient(monkeypatch: pytest.MonkeyPatch) -> dict:
    """``model.startup.transient`` with the ``drives`` and ``progress`` keywords: records them, calls progress, and
    runs today's function for the rest."""
    from edl_solver.model import startup

    real, seen = startup.transient, {}

    def transient(case: Any, times: Any, before: Any = None, drives: Any = None, progress: Any = None) -> Any:
        seen.update(drives=drives, before=before)
        for fraction in (0.0, 0.5, 1.0):
            progress(fraction)
        seen["progress"] = True
        return real(case, times, before=before)

    monkeypatch.setattr(startup, "transient", transient)
    return seen


def test_flags_alone_write_run_figure_and_report(tmp_path: Path) -> None:
    files = [tmp_path / name for name in ("run.h5", "run.png", "run.txt")]
    code, out, err = run_transient([*FLAGS, "--times", "1ps:10ns:9", "-o", str(files[0]), "--figure", str(files[1]),
                                    "--report", str(files[2])])
    assert (code, err) == (0, "")
    run = read_transient(files[0])
    assert run["time"].values == pytest.approx(np.geomspace(1e-12, 1e-8, 9), rel=1e-15)
    assert json.loads(run.attrs["drives_json"]) == {}
    assert json.loads(run.attrs["before_json"])["field"] == 0.0  # by default the case at rest
    assert files[1].read_bytes()[:8] == PNG_SIGNATURE
    assert out.startswith(files[2].read_text(encoding="utf-8"))  # the report, printed and written
    assert "Flow start-up after a step of the drives" in out and "field: 0 V/m → 10 kV/m" in out
    assert out.rstrip().splitlines()[-3:] == [f"wrote the {what} to {path.resolve()}"
                                              for what, path in zip(("run", "figure", "report"), files)]


def test_the_transient_section_gives_times_before_and_drives(tmp_path: Path) -> None:
    """The real [transient] reader and solver: the file's times, profile times, before overrides (with --before on
    top) and a drive, which travels with the run in its file."""
    case = tmp_path / "case.toml"
    case.write_text(CASE_TOML + """
[transient]
times = ["1 ps", "1 ns"]
profile_times = ["1 ns"]
[transient.before]
field = "2 kV/m"
[transient.drive.pressure_gradient]
kind = "sine"
amplitude = "1 bar/mm"
frequency = "1 GHz"
""", encoding="utf-8")
    code, out, err = run_transient([str(case), "-o", str(tmp_path / "run.h5"), "--before", "wall.zeta=-50mV"])
    assert (code, err) == (0, "")
    run = read_transient(tmp_path / "run.h5")
    assert run["time"].values.tolist() == [1e-12, 1e-9]
    assert json.loads(run.attrs["before_json"])["field"] == 2000.0
    assert json.loads(run.attrs["drives_json"])["pressure_gradient"]["kind"] == "sine"
    assert run["pressure_gradient"].values == pytest.approx(1e8 * np.sin(2 * np.pi * 1e9 * run["time"].values),
                                                            rel=1e-9, abs=1e-3)
    assert "field: 2 kV/m → 10 kV/m" in out
    code, out, err = run_transient([str(case), "--times", "1ps,2ps,3ps", "-q"])  # --times replaces the file's
    assert code == 2 and "profile_times: 1e-09 s is outside the run" in err  # the file's profile times stay


def test_no_progress_bar_when_stderr_is_not_a_terminal(stand_in_transient: dict) -> None:
    code, _out, err = run_transient([*FLAGS, "--times", "1ps:1ns:3"])
    assert (code, err) == (0, "") and stand_in_transient["progress"]


@pytest.mark.parametrize(("argv", "message"), [
    ([], "--times: missing (no case file), expected --times FROM:TO:N"),
    (["--times", "1ns:1us"], "--times: '1ns:1us' is not FROM:TO:N"),
    (["--times", "1ns:1us:0"], "--times: N '0' is not allowed"),
    (["--times", "1ns,-2ns"], "--times: '-2ns' is not positive"),
    (["--times", "1ns,2mV"], "--times: '2mV' has units of"),
    (["--times", "2ns,1ns"], "times: "),
    (["--times", "1ns:1us:5", "--profile-times", "1s"], "profile_times: 1 s is outside the run"),
    (["--times", "1ns:1us:5", "--before", "wall.zeta"], "--before: 'wall.zeta' is not PATH=VALUE"),
    (["--times", "1ns:1us:5", "--before", "field=1kV/m", "--before", "field=2kV/m"],
     "--before: 'field' is given twice"),
    (["--times", "1ns:1us:5", "--figure", "same.h5"], "--figure: 'same.h5' is also the run file"),
])
def test_bad_input_exits_2_with_one_line_and_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                     argv: list[str], message: str) -> None:
    monkeypatch.chdir(tmp_path)
    code, out, err = run_transient([*FLAGS, "-o", "same.h5", *argv])
    assert code == 2 and out == ""
    assert err.startswith(f"edl: error: {message}") and err.count("\n") == 1, err
    assert list(tmp_path.iterdir()) == []


def test_a_case_file_without_transient_section_needs_times(tmp_path: Path) -> None:
    case = tmp_path / "case.toml"
    case.write_text(CASE_TOML, encoding="utf-8")
    code, _out, err = run_transient([str(case), "-o", str(tmp_path / "run.h5")])
    assert code == 2 and f"{case} has no [transient] section" in err
    code, _out, err = run_transient([str(case), "--times", "1ps", "-o", str(case)])
    assert code == 2 and "-o: " in err and "is also the case file" in err


def test_a_run_that_fails_exits_3_and_writes_nothing(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from edl_solver.model import startup

    def fails(case: Any, times: Any, before: Any = None, **keywords: Any) -> Any:
        raise ConvergenceError("transient flow: accuracy missed")

    monkeypatch.setattr(startup, "transient", fails)
    code, out, err = run_transient([*FLAGS, "--times", "1ns", "-o", str(tmp_path / "run.h5"), "--figure",
                                    str(tmp_path / "run.png")])
    assert (code, out) == (3, "") and err == "edl: error: transient flow: accuracy missed\n"
    assert list(tmp_path.iterdir()) == []  # nor the lock file


def test_parse_times_forms() -> None:
    assert parse_times("1ns:1us:4", "--times") == pytest.approx([1e-9, 1e-8, 1e-7, 1e-6], rel=1e-12)
    assert parse_times("1 ns, 5ns ,20ns", "--times") == pytest.approx([1e-9, 5e-9, 2e-8], rel=1e-15)
    with pytest.raises(InputError, match=r"^--times: '1ns,,2ns' is not a list of times"):
        parse_times("1ns,,2ns", "--times")


def test_help_shows_the_transient_section() -> None:
    code, out, _err = run_transient(["--help"])
    assert code == 0 and "[transient.drive.field]" in out and "--before PATH=VALUE" in out


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_a_progress_bar_on_a_terminal_and_none_when_quiet(stand_in_transient: dict) -> None:
    for quiet, shown in ((False, True), (True, False)):
        err = _Terminal()
        with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(err):
            code = main(["transient", *FLAGS, "--times", "1ps:1ns:3", *(["-q"] if quiet else [])])
        assert code == 0 and ("transient: 100%" in err.getvalue()) is shown, err.getvalue()
