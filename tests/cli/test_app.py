"""The ``edl`` command, called through ``main([...])``: results, overrides, and one-line errors."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import edl_solver as edl
from edl_solver.cli.demo import DEMO_TOML, demo_case
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.casefile import load_case
from edl_solver.inputs.units import to_si
from tests.helpers import run, write

CASE_TOML = """\
field = "2 kV/m"
pressure_gradient = "-3 bar/mm"

[geometry]
kind = "slit"
height = "40 nm"

[electrolyte]
ions = { "K+" = "2 mM", "Cl-" = "2 mM" }

[wall]
zeta = "-30 mV"
"""
QUICK = ["--slit", "20nm", "--ion", "Na+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV", "--field", "1kV/m"]


def case_file(tmp_path: Path, text: str = CASE_TOML) -> str:
    return str(write(tmp_path, text))


def assert_one_line_error(err: str, *parts: str) -> None:
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"


def with_quick(flag: str, value: str) -> list[str]:
    """QUICK with ``flag`` set to ``value`` (or added)."""
    argv = list(QUICK)
    if flag in argv and flag != "--ion":
        argv[argv.index(flag) + 1] = value
    else:
        argv += [flag, value]
    return argv


# -- bad input: exit 2, one line naming the field and the value, nothing written ----------------------

BAD_FLAGS = {
    "unknown ion": (["--slit", "20nm", "--ion", "Kq+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV"],
                    ["--ion", "'Kq+'", "did you mean 'K+'"]),
    "negative concentration": (["--slit", "20nm", "--ion", "K+=-1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV"],
                               ["--ion K+", "'-1mM'", "not positive"]),
    "missing concentration": (["--slit", "20nm", "--ion", "K+", "--ion", "Cl-=1mM", "--zeta", "-40mV"],
                              ["--ion", "'K+'", "NAME=CONCENTRATION"]),
    "empty concentration": (["--slit", "20nm", "--ion", "K+=", "--ion", "Cl-=1mM", "--zeta", "-40mV"],
                            ["--ion K+", "''"]),
    "salt for an ion": (["--slit", "20nm", "--ion", "KCl=1mM", "--zeta", "-40mV"],
                        ["--ion", "'KCl'", "--ion K+=1mM --ion Cl-=1mM"]),
    "not neutral": (["--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=2mM", "--zeta", "-40mV"],
                    ["--ion", "not neutral"]),
    "zero height": (with_quick("--slit", "0nm"), ["--slit", "'0nm'", "not positive"]),
    "negative height": (with_quick("--slit", "-20nm"), ["--slit", "'-20nm'", "not positive"]),
    "negative radius": (["--capillary", "-5nm", *QUICK[2:]], ["--capillary", "'-5nm'", "not positive"]),
    "both zeta and charge": (with_quick("--charge-density", "-1mC/m^2"), ["--charge-density", "--zeta"]),
    "unparsable unit": (with_quick("--slit", "20 blorps"), ["--slit", "'20 blorps'", "length"]),
    "no unit": (with_quick("--slit", "20"), ["--slit", "'20'", "no unit"]),
    "height in volts": (with_quick("--slit", "5mV"), ["--slit", "'5mV'", "volt", "length"]),
    "zeta in metres": (with_quick("--zeta", "5nm"), ["--zeta", "'5nm'", "electric potential"]),
    "field in volts": (with_quick("--field", "1kV"), ["--field", "'1kV'", "electric field"]),
    "molar as millimetre": (["--slit", "20nm", "--ion", "K+=1mm", "--ion", "Cl-=1mm", "--zeta", "-40mV"],
                            ["--ion K+", "'1mm'", "metre", "concentration"]),
    "hot water": (with_quick("--temperature", "150degC"), ["--temperature", "'150degC'"]),
    "tolerance too large": (with_quick("--tolerance", "150%"), ["--tolerance", "'150%'"]),
    "bad accuracy": (with_quick("--accuracy", "2"), ["--accuracy", "2"]),
    "bad model": (with_quick("--model", "pbx"), ["--model", "'pbx'"]),
    "slit and capillary": (["--capillary", "5nm", *QUICK], ["--slit", "--capillary"]),
    "top wall of a capillary": (["--capillary", "5nm", *QUICK[2:], "--top-zeta", "-1mV"],
                                ["--top-zeta", "capillary"]),
    "top wall without bottom": ([*QUICK[:6], "--top-zeta", "-1mV"], ["--top-zeta", "bottom wall"]),
    "no wall": (QUICK[:6], ["--zeta"]),
    "no electrolyte": (["--slit", "20nm", "--zeta", "-40mV"], ["--ion"]),
    "no geometry": (QUICK[2:], ["--slit", "--capillary"]),
    "nothing": ([], ["no case given", "edl demo --print-case"]),
    "unit split from its number": (["--slit", "20", "nm", *QUICK[2:]], ["'nm'", "--slit 20nm"]),
    "unknown flag": ([*QUICK, "--zetta", "1mV"], ["--zetta"]),
    "missing file": (["absent.toml"], ["absent.toml", "not found"]),
}


@pytest.mark.parametrize("name", BAD_FLAGS)
def test_bad_flags_give_one_line_exit_2_and_write_nothing(tmp_path: Path, name: str) -> None:
    argv, parts = BAD_FLAGS[name]
    out = tmp_path / "out.h5"
    figure = tmp_path / "out.png"
    code, stdout, err = run(["solve", *argv, "-o", str(out), "--figure", str(figure)])
    assert code == 2
    assert_one_line_error(err, *parts)
    assert stdout == ""
    assert not out.exists() and not figure.exists()
    assert list(tmp_path.iterdir()) == []


BAD_FILES = {
    "unknown key": (CASE_TOML.replace("zeta =", "zetta ="),
                    "case.toml: unknown key 'wall.zetta' (did you mean 'wall.zeta'?)"),
    "missing section": (CASE_TOML.split("[wall]")[0], "case.toml: missing section [wall]; add it or give --zeta"),
    "syntax error": (CASE_TOML.replace('height = "40 nm"', "height = 40 nm"), "(at line 6, column 13)"),
    "wrong dimension": (CASE_TOML.replace('"40 nm"', '"40 mV"'),
                        "case.toml: geometry.height: '40 mV' has units of volt"),
    "unknown ion": (CASE_TOML.replace('"K+"', '"Kk+"'), "case.toml: electrolyte.ions: 'Kk+' is not in the ion table"),
    "both wall conditions": (CASE_TOML.replace('zeta = "-30 mV"', 'zeta = "-30 mV"\ncharge_density = -0.001'),
                             "case.toml: wall: both of zeta='-30 mV' and charge_density=-0.001 given"),
}


@pytest.mark.parametrize("name", BAD_FILES)
def test_bad_case_files_name_the_file_and_keep_existing_outputs(tmp_path: Path, name: str) -> None:
    text, expected = BAD_FILES[name]
    path = case_file(tmp_path, text)
    out = tmp_path / "out.h5"
    out.write_bytes(b"an earlier result")
    code, _, err = run(["solve", path, "-o", str(out)])
    assert code == 2
    assert_one_line_error(err, expected)
    assert out.read_bytes() == b"an earlier result"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case.toml", "out.h5"]


def test_a_flag_value_is_blamed_on_the_flag_not_the_file(tmp_path: Path) -> None:
    code, _, err = run(["solve", case_file(tmp_path), "--slit", "5mV"])
    assert code == 2
    assert_one_line_error(err, "--slit: '5mV' has units of volt")
    assert "case.toml" not in err


@pytest.mark.parametrize(("where", "flag"), [("nodir/out.h5", "-o"), ("file.txt/out.png", "--figure"),
                                             (".", "-o")])
def test_unwritable_outputs_are_refused_before_the_solve(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                        where: str, flag: str) -> None:
    (tmp_path / "file.txt").write_text("x")
    monkeypatch.chdir(tmp_path)

    def must_not_run(case: edl.Case) -> None:
        raise AssertionError("solved although the output cannot be written")

    monkeypatch.setattr("edl_solver.pipeline.solve", must_not_run)
    code, _, err = run(["solve", *QUICK, flag, where])
    assert code == 2
    assert_one_line_error(err, flag, repr(where))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["file.txt"]


def test_read_only_directory_is_refused(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    locked = tmp_path / "locked"
    locked.mkdir()
    real_access = os.access
    # Root may write anywhere, so the read-only directory is simulated where the CLI asks for permission.
    monkeypatch.setattr(os, "access", lambda p, mode, **kw: False if Path(p) == locked else real_access(p, mode, **kw))
    code, _, err = run(["solve", *QUICK, "-o", str(locked / "out.h5")])
    assert code == 2
    assert_one_line_error(err, "-o", "not writable")
    assert list(locked.iterdir()) == []


def test_same_file_for_result_and_figure_is_refused(tmp_path: Path) -> None:
    out = str(tmp_path / "out.h5")
    code, _, err = run(["solve", *QUICK, "-o", out, "--figure", out])
    assert code == 2
    assert_one_line_error(err, "--figure", "-o")
    assert list(tmp_path.iterdir()) == []


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(garbage=st.text(max_size=30))
def test_garbage_heights_never_give_a_traceback(tmp_path: Path, garbage: str) -> None:
    try:
        valid = to_si(garbage, "m", "height") > 0
    except InputError:
        valid = False
    assume(not valid)
    out = tmp_path / "out.h5"
    code, _, err = run(["solve", "--slit", garbage, *QUICK[2:], "-o", str(out)])
    assert code == 2
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err
    assert not out.exists()


def test_convergence_failure_exits_3_and_keeps_the_old_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch
                                                            ) -> None:
    def fail(case: edl.Case) -> None:
        raise ConvergenceError(f"{case.describe()}: Newton did not converge\n(residual 1e-2)")

    monkeypatch.setattr("edl_solver.pipeline.solve", fail)
    out = tmp_path / "out.h5"
    out.write_bytes(b"an earlier result")
    code, stdout, err = run(["solve", *QUICK, "-o", str(out), "--figure", str(tmp_path / "out.png")])
    assert code == 3 and stdout == ""
    assert_one_line_error(err, "Newton did not converge (residual 1e-2)")
    assert out.read_bytes() == b"an earlier result"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.h5"]


def test_a_real_convergence_failure_is_reported_as_such(tmp_path: Path) -> None:
    # An accuracy the grid limit cannot reach: the solver says so, and the command exits 3.
    text = CASE_TOML.replace('"-30 mV"', '"-300 mV"') + "[numerics]\naccuracy = 1e-13\nmax_intervals = 8\n"
    code, _, err = run(["solve", case_file(tmp_path, text), "-o", str(tmp_path / "out.h5")])
    assert code == 3
    assert_one_line_error(err, "accuracy")
    assert not (tmp_path / "out.h5").exists()


# -- good input ---------------------------------------------------------------------------------------


def test_solve_case_file_writes_a_result_that_loads_back(tmp_path: Path) -> None:
    path = case_file(tmp_path)
    out = tmp_path / "out.h5"
    code, stdout, err = run(["solve", path, "-o", str(out)])
    assert (code, err) == (0, "")
    result = edl.load(out)
    assert result.case == load_case(path)
    assert result.status == "converged" and result.summary["debye_length"] > 0
    assert str(out.resolve()) in stdout and result.verdict in stdout


def test_flags_override_the_file_and_keep_the_rest(tmp_path: Path) -> None:
    out = tmp_path / "out.h5"
    code, _, err = run(["solve", case_file(tmp_path), "--slit", "60nm", "--zeta", "-20mV", "--ion", "Na+=5mM",
                        "--ion", "Cl-=5mM", "--field", "-1kV/m", "--temperature", "310K", "--model", "dh",
                        "--tolerance", "10%", "--accuracy", "1e-7", "-o", str(out), "--quiet"])
    assert (code, err) == (0, "")
    case = edl.load(out).case
    assert case.geometry == edl.Slit(height=60e-9)
    assert case.wall == edl.Wall(zeta=-0.02)
    assert {ion.name: ion.concentration for ion in case.electrolyte.ions} == {"Na+": 5.0, "Cl-": 5.0}
    assert (case.field, case.model, case.tolerance, case.numerics.accuracy) == (-1e3, "dh", 0.1, 1e-7)
    assert case.solvent.temperature == 310.0
    assert case.pressure_gradient == -3e5 * 1e3  # from the file: -3 bar/mm


def test_top_wall_flags_make_two_walls_and_ion_flags_keep_a_file_ions_properties(tmp_path: Path) -> None:
    text = CASE_TOML.replace('ions = { "K+" = "2 mM", "Cl-" = "2 mM" }',
                             'ions = [{ name = "A+", valence = 1, concentration = "2 mM", diffusivity = 1.5e-9 },'
                             ' { name = "Cl-", concentration = "2 mM" }]')
    out = tmp_path / "out.h5"
    code, _, err = run(["solve", case_file(tmp_path, text), "--top-charge-density", "-1mC/m^2",
                        "--ion", "A+=3mM", "--ion", "Cl-=3mM", "-o", str(out), "-q"])
    assert (code, err) == (0, "")
    case = edl.load(out).case
    assert case.wall == (edl.Wall(zeta=-0.03), edl.Wall(charge_density=-1e-3))
    a_ion = case.electrolyte.ions[0]
    assert (a_ion.name, a_ion.concentration, a_ion.diffusivity) == ("A+", 3.0, 1.5e-9)


@pytest.mark.parametrize("style", [["--zeta", "-40mV"], ["--zeta=-40mV"], ["--zeta", "\u221240 mV"]])
def test_negative_values_can_follow_their_flag(tmp_path: Path, style: list[str]) -> None:
    out = tmp_path / "out.h5"
    code, _, err = run(["solve", *QUICK[:6], *style, "-o", str(out)])
    assert (code, err) == (0, "")
    assert edl.load(out).case.wall == edl.Wall(zeta=-0.04)


def test_a_case_without_drives_says_how_to_add_them() -> None:
    code, stdout, _ = run(["solve", *QUICK[:8]])
    assert code == 0 and "note: no field and no pressure gradient" in stdout
    assert "note:" not in run(["solve", *QUICK])[1]


def test_output_is_replaced_only_by_a_complete_result(tmp_path: Path) -> None:
    out = tmp_path / "out.h5"
    out.write_bytes(b"an earlier result")
    code, _, _ = run(["solve", *QUICK, "-o", str(out), "-q"])
    assert code == 0
    assert edl.load(out).case.geometry == edl.Slit(height=20e-9)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.h5"]  # no temporary files left


def test_a_failed_write_exits_1_after_the_report(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    out = tmp_path / "out.h5"

    def disk_full(result: edl.Result, path: Path) -> None:
        raise OSError(28, "No space left on device", str(path))

    monkeypatch.setattr("edl_solver.io.hdf5.write_result", disk_full)
    code, stdout, err = run(["solve", *QUICK, "-o", str(out)])
    assert code == 1
    assert_one_line_error(err, f"cannot write {out}: No space left on device")
    assert stdout.strip() and "wrote" not in stdout  # the report, but no claim of a written file


def test_quiet_prints_nothing(tmp_path: Path) -> None:
    assert run(["solve", *QUICK, "-o", str(tmp_path / "out.h5"), "--quiet"]) == (0, "", "")


def test_demo_writes_both_files_where_asked(tmp_path: Path) -> None:
    out, figure = tmp_path / "d.h5", tmp_path / "d.png"
    code, stdout, err = run(["demo", "-o", str(out), "--figure", str(figure)])
    assert (code, err) == (0, "")
    assert edl.load(out).case == demo_case()
    assert figure.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert str(out.resolve()) in stdout and str(figure.resolve()) in stdout


def test_demo_writes_to_the_current_directory_by_default(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    code, stdout, _ = run(["demo"])
    assert code == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["edl_demo.h5", "edl_demo.png"]
    assert str(tmp_path.resolve() / "edl_demo.h5") in stdout


def test_demo_print_case_prints_the_file_and_writes_nothing(tmp_path: Path, monkeypatch: pytest.MonkeyPatch
                                                            ) -> None:
    monkeypatch.chdir(tmp_path)
    assert run(["demo", "--print-case"]) == (0, DEMO_TOML, "")
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("command", [[], ["solve"], ["demo"]])
def test_help_on_every_command_has_examples(command: list[str]) -> None:
    code, stdout, err = run([*command, "--help"])
    assert (code, err) == (0, "")
    assert stdout.startswith(f"usage: {' '.join(['edl', *command])}") and "examples:" in stdout


def test_version_and_no_command() -> None:
    assert run(["--version"]) == (0, f"edl {edl.__version__}\n", "")
    code, stdout, _ = run([])
    assert code == 2 and "usage: edl" in stdout


def test_module_entry_point_fails_cleanly_on_a_bad_unit(tmp_path: Path) -> None:
    # The process as a user starts it: exit 2, one line, no traceback, no file.
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(Path(edl.__file__).resolve().parents[1]), os.environ.get("PYTHONPATH", "")])}
    out = tmp_path / "out.h5"
    process = subprocess.run(
        [sys.executable, "-m", "edl_solver", "solve", "--slit", "20 parsecs per volt", *QUICK[2:], "-o", str(out)],
        capture_output=True, text=True, env=env, cwd=tmp_path, timeout=120)
    assert process.returncode == 2
    assert_one_line_error(process.stderr, "--slit", "'20 parsecs per volt'")
    assert process.stdout == "" and not out.exists()


def test_model_flags_reach_the_case(tmp_path: Path) -> None:
    """--silica --pH, --slip-length, --model steric --diameter and --viscoelectric set the same case as Python."""
    out = tmp_path / "silica.h5"
    code, _, err = run(["solve", "--slit", "40nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--silica", "--pH", "7",
                        "--slip-length", "1nm", "--field", "1kV/m", "-q", "-o", str(out)])
    assert code == 0 and err == ""
    expected = edl.Case(geometry=edl.Slit(height="40 nm"),
                        electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7),
                        wall=edl.Wall.silica(slip_length="1 nm"), field="1 kV/m")
    assert edl.load(out).case == expected
    out = tmp_path / "steric.h5"
    code, _, err = run(["solve", "--slit", "10nm", "--ion", "K+=100mM", "--ion", "Cl-=100mM", "--zeta", "-300mV",
                        "--model", "steric", "--diameter", "0.7nm", "--viscoelectric", "-q", "-o", str(out)])
    assert code == 0 and err == ""
    case = edl.load(out).case
    assert case.model == "steric" and {ion.diameter for ion in case.electrolyte.ions} == {7e-10}
    assert case.solvent.viscoelectric_coefficient == 1e-15


def test_silica_without_ph_is_a_one_line_error(tmp_path: Path) -> None:
    code, _, err = run(["solve", "--slit", "40nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--silica",
                        "-o", str(tmp_path / "x.h5")])
    assert code == 2 and err.count("\n") == 1 and "electrolyte.pH" in err
    assert list(tmp_path.iterdir()) == []
