"""The ``edl map`` command (edl_solver.cli.map_command): the map and figure it writes, bad input, Ctrl-C and resume.
The maps themselves are checked in tests/analysis/test_validity_map.py."""

from __future__ import annotations

import argparse
import contextlib
import io
import os
import re
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from edl_solver.cli.map_command import add_map_command, parse_axis
from tests.helpers import CHARGED_SLIT_TOML, PNG_SIGNATURE, write
from tests.interrupting import interrupt_after_first_write
from tests.reference_solutions import gouy_chapman_boundary

# -- the edl map command -----------------------------------------------------------------------------

CASE_TOML = CHARGED_SLIT_TOML


def run_map(argv: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of ``edl map ARGV`` through a parser built here."""
    parser = argparse.ArgumentParser(prog="edl")
    add_map_command(parser.add_subparsers(dest="command"))
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        args = parser.parse_args(["map", *argv])
        code = args.run(args)
    return code, out.getvalue(), err.getvalue()


def case_file(folder: Path, text: str = CASE_TOML) -> str:
    return str(write(folder, text))


def test_map_command_writes_the_map_and_the_figure(tmp_path: Path) -> None:
    case = case_file(tmp_path)
    code, out, err = run_map([case, "--x", "electrolyte.concentration:0.1mM:100mM:4",
                              "--y", "geometry.height:5nm:2um:5", "--tolerance", "5%",
                              "-o", str(tmp_path / "map.h5"), "--figure", str(tmp_path / "map.png")])
    assert (code, err) == (0, ""), err
    assert sorted(os.listdir(tmp_path)) == ["case.toml", "map.h5", "map.png"]
    assert "20 cases, 20 converged" in out
    assert "root-found along geometry.height (thin-layer model valid at larger geometry.height)" in out
    assert "  at c(K+) = 0.1 mM: H = " in out and " nm" in out  # in the units of the field
    with xr.open_dataset(tmp_path / "map.h5", engine="h5netcdf") as ds:
        assert dict(ds.sizes) == {"geometry.height": 5, "electrolyte.concentration": 4}
        np.testing.assert_allclose(ds["electrolyte.concentration"].values, [0.1, 1.0, 10.0, 100.0], rtol=1e-12)
        assert ds["boundary"].attrs["tolerance"] == pytest.approx(0.05)
    assert (tmp_path / "map.png").read_bytes()[:8] == PNG_SIGNATURE


@pytest.mark.parametrize(("argv", "message"), [
    (["--x", "geometry.height:5nm:2um", "--y", "zeta_kT:-4:-1:3:lin"], "--x: 'geometry.height:5nm:2um' is not an axis"),
    (["--x", "geometry.hieght:5nm:2um:3", "--y", "zeta_kT:-4:-1:3:lin"], "did you mean 'geometry.height'"),
    (["--x", "geometry.height:5mM:2um:3", "--y", "zeta_kT:-4:-1:3:lin"], "--x geometry.height FROM"),
    (["--x", "kappa_h:1:100:3", "--y", "zeta_kT:-4:1:3"], "crosses or touches zero"),
    (["--x", "kappa_h:1:100:1", "--y", "zeta_kT:-4:-1:3"], "COUNT '1'"),
    (["--x", "kappa_h:1:100:3", "--y", "electrolyte.concentration:1mM:10mM:3"], "--y: .* changes the Debye length"),
    (["--x", "kappa_h:1:100:3", "--y", "zeta_kT:-4:-1:3", "--tolerance", "150%"], "--tolerance"),
    (["--x", "kappa_h:1:100:3", "--y", "zeta_kT:-4:-1:3", "--figure", "FOLDER/nowhere/map.png"], "--figure"),
], ids=["short-axis", "typo", "wrong-unit", "log-through-zero", "one-value", "kappa-h-with-salt",
        "tolerance", "missing-folder"])
def test_map_command_bad_input_exits_2_with_one_line_and_no_files(argv: list[str], message: str,
                                                                   tmp_path: Path) -> None:
    case = case_file(tmp_path)
    argv = [arg.replace("FOLDER", str(tmp_path)) for arg in argv]
    code, out, err = run_map([case, *argv, "-o", str(tmp_path / "map.h5")])
    assert code == 2 and out == ""
    assert err.startswith("edl: error: ") and err.count("\n") == 1, err
    assert message in err or re.search(message, err), err
    assert os.listdir(tmp_path) == ["case.toml"]


def test_map_command_exits_3_when_nothing_converges(tmp_path: Path) -> None:
    # One Newton iteration per grid cannot converge a nonlinear layer: every case fails, and the command says so.
    case = case_file(tmp_path, CASE_TOML + "\n[numerics]\nmax_iterations = 1\n")
    code, out, err = run_map([case, "--x", "kappa_h:1:100:2", "--y", "zeta_kT:-4:-1:2", "-q"])
    assert code == 3 and out == ""
    assert err.startswith("edl: error: ") and "none of the 4 cases" in err and err.count("\n") == 1


def test_map_command_help_shows_the_axis_syntax_and_examples() -> None:
    parser = argparse.ArgumentParser(prog="edl")
    add_map_command(parser.add_subparsers(dest="command"))
    out = io.StringIO()
    with contextlib.redirect_stdout(out), pytest.raises(SystemExit) as exited:
        parser.parse_args(["map", "--help"])
    assert exited.value.code == 0
    text = out.getvalue()
    assert "PATH:FROM:TO:COUNT[:log|lin]" in text and "examples:" in text and "edl map case.toml" in text
    path, values = parse_axis("kappa_h:1:100:3", "--x")
    assert path == "kappa_h" and values == pytest.approx([1.0, 10.0, 100.0], rel=1e-15)
    assert parse_axis("wall.zeta:-100mV:-20mV:3:lin", "--y")[1] == pytest.approx([-0.1, -0.06, -0.02], rel=1e-15)


def test_map_command_through_edl_main(tmp_path: Path) -> None:
    from edl_solver.cli import main

    case = case_file(tmp_path)
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["map", case, "--x", "kappa_h:1:100:3", "--y", "zeta_kT:-4:-1:2:lin",
                     "--figure", str(tmp_path / "map.png")])
    assert (code, err.getvalue()) == (0, ""), err.getvalue()
    assert "boundary where |EO flow-rate error| = 5 %, root-found along kappa_h" in out.getvalue()
    # the printed boundary at zeta = -1 kT/e is the Gouy-Chapman root (see gouy_chapman_boundary), to its 6 digits
    printed = re.search(r"at zeta/\(kT/e\) = -1: kappa\*h = (\S+)", out.getvalue())
    assert printed and float(printed[1]) == pytest.approx(gouy_chapman_boundary(-1.0, 0.05), rel=1e-5)
    assert (tmp_path / "map.png").read_bytes()[:8] == PNG_SIGNATURE
    err = io.StringIO()
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(err):
        code = main(["map", case, "--y", "zeta_kT:-4:-1:2:lin"])  # no --x
    assert code == 2 and err.getvalue().startswith("edl: error: ") and "--x" in err.getvalue()
    assert err.getvalue().count("\n") == 1


def test_map_command_ctrl_c_keeps_the_cases_and_resume_finishes_the_same_map(tmp_path: Path) -> None:
    # 22,500 cases (~1 s in compiled batches of 4,000): interrupted once the first batch is written
    case = case_file(tmp_path)
    output = tmp_path / "map.h5"
    partial = tmp_path / "map.h5.sweep.partial"
    axes = ["--x", "electrolyte.concentration:0.1mM:100mM:150", "--y", "geometry.height:5nm:2um:150"]
    code, out, err = interrupt_after_first_write(["map", case, *axes, "-o", str(output)], partial)
    assert code == 130, (out, err)
    assert err.startswith("edl: error: interrupted; the finished cases are kept in") and err.count("\n") == 1, err
    assert "--resume" in err and partial.exists() and not output.exists()
    # starting afresh would lose them: refused until --resume is given
    code, _, err = run_map([case, *axes, "-o", str(output)])
    assert code == 2 and "--resume" in err and partial.exists()
    code, out, err = run_map([case, *axes, "-o", str(output), "--resume", "-q"])
    assert (code, out, err) == (0, "", "")
    assert not partial.exists()
    with xr.open_dataset(output, engine="h5netcdf") as resumed:
        code, _, _ = run_map([case, *axes, "-o", str(tmp_path / "again.h5"), "-q"])
        assert code == 0
        with xr.open_dataset(tmp_path / "again.h5", engine="h5netcdf") as uninterrupted:
            xr.testing.assert_identical(resumed.load(), uninterrupted.load())


def test_map_command_resume_needs_the_map_file(tmp_path: Path) -> None:
    code, out, err = run_map([case_file(tmp_path), "--x", "kappa_h:1:100:2", "--y", "zeta_kT:-4:-1:2", "--resume"])
    assert code == 2 and out == "" and "--resume" in err and "-o MAP.h5" in err and err.count("\n") == 1
