"""The ``edl fit`` command (edl_solver.cli.fit_command): the one command from a CSV of measurements to fitted
wall parameters with a report, a figure and an HDF5 record; bad data and bad flags exit 2 with one line and
no output file."""

from __future__ import annotations

import contextlib
import io
import threading
from pathlib import Path

import pytest
import xarray as xr

from edl_solver.cli.app import main
from edl_solver.io.files import output_lock
from tests.helpers import PNG_SIGNATURE, ROOT

DEMO = ROOT / "examples" / "slit_conductance.csv"
#: The device of the demo file (its comment lines) and a template whose charge is not the answer.
DEVICE = ["--slit", "100nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--charge-density", "-1mC/m^2",
          "--length", "20um", "--width", "10um", "--channels", "10"]


def run_fit(argv: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of ``edl fit ARGV``."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["fit", *argv])
    return code, out.getvalue(), err.getvalue()


def test_the_demo_file_gives_its_charge_back_with_report_figure_and_record(tmp_path: Path) -> None:
    record, figure = tmp_path / "fit.h5", tmp_path / "fit.png"
    code, out, err = run_fit([str(DEMO), *DEVICE, "--fit", "wall.charge_density", "-o", str(record),
                              "--figure", str(figure)])
    assert code == 0, err
    assert "wall.charge_density = -8." in out and "mC/m²" in out
    assert "thin-layer fit" in out and "reduced chi^2" in out and "not scaled by chi^2" in out
    assert figure.read_bytes()[:8] == PNG_SIGNATURE
    with xr.open_dataset(record, engine="h5netcdf", group="fit") as data:
        value, error = float(data["value"].values[0]), float(data["standard_error"].values[0])
        assert list(data["parameter"].values) == ["wall.charge_density"]
        assert data["data0.measured"].size == 13 and data["data0.curve.model"].size > 13
        assert data["covariance"].shape == (1, 1) and "data0.thin_layer_model" in data.variables
    # the demo file was made with -8 mC/m^2 and 2 % noise (its comment lines): recovered within 3 standard errors
    assert abs(value - -8e-3) < 3 * error
    assert 0 < error < 0.5e-3


def test_two_parameters_report_their_correlation(tmp_path: Path) -> None:
    code, out, err = run_fit([str(DEMO), *DEVICE, "--fit", "wall.charge_density,geometry.height=90nm", "-q"])
    assert (code, out, err) == (0, "", "")
    code, out, err = run_fit([str(DEMO), *DEVICE, "--fit", "wall.charge_density,geometry.height=90nm"])
    assert code == 0, err
    assert "correlation:" in out and "geometry.height" in out and " nm" in out


def _csv(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "data.csv"
    path.write_text(text, encoding="utf-8")
    return path


GOOD_HEAD = "concentration [mM],conductance [nS],uncertainty [nS]\n"
GOOD_ROWS = "0.01,8.70,0.17\n1,13.2,0.26\n100,721,14\n"


@pytest.mark.parametrize(("text", "fit", "expected"), [
    (GOOD_HEAD + "0.01,8.70,0.17\n1,abc,0.26\n100,721,14\n", "wall.charge_density",
     ["row 3", "'conductance [nS]'", "'abc' is not a number"]),
    ("concentration [mM],conductivity [nS]\n0.01,8.7\n1,13\n", "wall.charge_density",
     ["row 1", "'conductivity [nS]'", "not a known column"]),
    ("concentration [mM],conductance [nV]\n0.01,8.7\n1,13\n", "wall.charge_density",
     ["row 1", "'conductance [nV]'"]),
    ("concentration [mM],conductance [nS]\n0.01,8.7\n-1,13\n", "wall.charge_density",
     ["row 3", "'concentration [mM]'", "negative"]),
    (GOOD_HEAD + "0.01,8.70,0.17\n", "wall.charge_density,wall.site[0].pK",
     ["data.csv", "1 row(s) of data, expected at least 2"]),
    (GOOD_HEAD + GOOD_ROWS, "wall.colour", ["--fit", "'wall.colour'", "not a sweepable input"]),
    (GOOD_HEAD + GOOD_ROWS, "model", ["--fit", "'model'", "not a sweepable input"]),
], ids=["non-numeric cell", "unknown column", "unknown unit", "negative concentration", "fewer points",
        "unknown path", "word path"])
def test_bad_data_and_paths_exit_2_with_one_line_and_no_file(tmp_path: Path, text: str, fit: str,
                                                             expected: list[str]) -> None:
    record, figure = tmp_path / "fit.h5", tmp_path / "fit.png"
    code, out, err = run_fit([str(_csv(tmp_path, text)), *DEVICE, "--fit", fit, "-o", str(record),
                              "--figure", str(figure)])
    assert code == 2 and out == ""
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err
    for part in expected:
        assert part in err, err
    assert not record.exists() and not figure.exists()


def test_bad_flags_exit_2(tmp_path: Path) -> None:
    for argv, expected in ((["--fit", "wall.charge_density="], "--fit"), (["--fit", "wall.zeta", "--channels", "0"],
                                                                          "--channels")):
        code, _, err = run_fit([str(DEMO), *DEVICE[:-2], *argv])
        assert code == 2 and expected in err and err.count("\n") == 1


def test_a_second_run_on_a_locked_fit_file_is_refused(tmp_path: Path) -> None:
    record = tmp_path / "fit.h5"
    held, release = threading.Event(), threading.Event()

    def hold() -> None:  # another run: the lock is refused to another thread as to another process
        with output_lock(record, "-o"):
            held.set()
            release.wait(30)

    holder = threading.Thread(target=hold)
    holder.start()
    try:
        assert held.wait(30)
        code, out, err = run_fit([str(DEMO), *DEVICE, "--fit", "wall.charge_density", "-o", str(record)])
    finally:
        release.set()
        holder.join()
    assert code == 2 and out == "" and "-o" in err and err.count("\n") == 1
    assert not record.exists()
