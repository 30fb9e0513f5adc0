"""The worked examples in examples/: they run, their files load, and one number of each is pinned.

The pinned numbers are regression pins of our own computation (recorded when the examples were written),
not published values: they catch an unintended change of the results, not an error of the physics.
"""

from __future__ import annotations

import os
import re
import runpy
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.inputs.casefile import load_case, loads_case
from tests.helpers import PNG_SIGNATURE, ROOT

EXAMPLES = ROOT / "examples"
# One table line: KCl (mM), pH, zeta (mV), sigma (mC/m^2), eo_ratio, verdict.
ROW = re.compile(r"^\s*([\d.]+)\s+([\d.]+)\s+(-?[\d.]+)\s+(-?[\d.]+)\s+([\d.]+)\s+(valid|not valid) at ")


def run_script(*args: str, cwd: Path) -> subprocess.CompletedProcess[str]:
    """Run examples/silica_ph_series.py as a user would, warnings as errors, with this checkout importable."""
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, (str(ROOT), os.environ.get("PYTHONPATH"))))}
    return subprocess.run([sys.executable, "-W", "error", str(EXAMPLES / "silica_ph_series.py"), *args],
                          cwd=cwd, env=env, capture_output=True, text=True, timeout=300, check=False)


@pytest.fixture(scope="module")
def series_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[subprocess.CompletedProcess[str], Path]:
    folder = tmp_path_factory.mktemp("series")
    return run_script("--figure", "silica_ph.png", cwd=folder), folder


def table_rows(stdout: str) -> dict[tuple[float, float], tuple[float, float, float, str]]:
    """{(KCl mM, pH): (zeta mV, sigma mC/m^2, eo_ratio, verdict)} from the printed table."""
    rows = {}
    for line in stdout.splitlines():
        match = ROW.match(line)
        if match:
            c, ph, zeta, sigma, ratio, verdict = match.groups()
            rows[float(c), float(ph)] = (float(zeta), float(sigma), float(ratio), verdict)
    return rows


def test_silica_ph_series_prints_the_table_and_saves_the_figure(
        series_run: tuple[subprocess.CompletedProcess[str], Path]) -> None:
    done, folder = series_run
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
    rows = table_rows(done.stdout)
    assert set(rows) == {(c, ph) for c in (0.1, 1.0, 10.0) for ph in range(3, 11)}
    # Regression pin of our own computation (not a published value): zeta of the 50 nm silica slit in
    # 1 mM KCl at pH 7, as printed (to 0.01 mV).
    assert rows[1.0, 7.0][0] == pytest.approx(-90.31, abs=0.006)
    for c in (0.1, 1.0, 10.0):
        # The silanols dissociate as the pH rises: zeta and sigma fall monotonically (Behrens & Grier's
        # one-site picture); the thin-layer model over-predicts, eo_ratio < 1, in overlapping layers.
        zetas = [rows[c, ph][0] for ph in range(3, 11)]
        sigmas = [rows[c, ph][1] for ph in range(3, 11)]
        assert zetas == sorted(zetas, reverse=True) and sigmas == sorted(sigmas, reverse=True)
        assert all(0.0 < rows[c, ph][2] < 1.0 for ph in range(3, 11))
    figure = folder / "silica_ph.png"
    assert figure.read_bytes()[:8] == PNG_SIGNATURE and figure.stat().st_size > 10_000
    assert sorted(os.listdir(folder)) == ["silica_ph.png"]  # nothing else written
    assert "figure: silica_ph.png" in done.stdout


def test_silica_ph_series_reports_a_bad_figure_path(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    script = runpy.run_path(str(EXAMPLES / "silica_ph_series.py"), run_name="silica_ph_series")
    status = script["main"](["--figure", str(tmp_path / "missing" / "ph.png")])
    assert status == 2
    error = capsys.readouterr().err
    assert error.startswith("silica_ph_series: --figure: path: ") and "does not exist" in error
    assert error.count("\n") == 1
    assert not (tmp_path / "missing").exists()


@pytest.fixture(scope="module")
def silica_slit() -> edl.Result:
    return edl.solve(load_case(EXAMPLES / "silica_slit.toml"))


def test_silica_slit_toml_is_the_stated_case(silica_slit: edl.Result) -> None:
    case = silica_slit.case
    assert case.geometry == edl.Slit(height=50e-9)
    assert case.electrolyte == edl.Electrolyte.from_ions({"K+": 1.0, "Cl-": 1.0}, pH=7.0, water_ions=True)
    assert case.wall == edl.Wall.silica()
    assert (case.field, case.pressure_gradient, case.model, case.tolerance) == (1e4, -1e8, "pb", 0.05)
    # Regression pin of our own computation (not a published value): eo_ratio of this case, at the
    # default accuracy of 1e-6.
    assert silica_slit.summary["eo_ratio"] == pytest.approx(0.6760995717326131, rel=1e-6)


def test_silica_slit_toml_agrees_with_the_series(silica_slit: edl.Result,
                                                 series_run: tuple[subprocess.CompletedProcess[str], Path]) -> None:
    # The file's case is the series' case at pH 7 and 1 mM (only the drives differ, which zeta ignores).
    printed = table_rows(series_run[0].stdout)[1.0, 7.0][0]
    assert round(silica_slit.summary["zeta"] * 1e3, 2) == printed


def test_silica_slit_toml_full_form_in_its_comments_is_the_preset() -> None:
    # The file shows the preset written in full, commented out: uncommented, it must be the same wall.
    text = (EXAMPLES / "silica_slit.toml").read_text(encoding="utf-8")
    lines = []
    for line in text.splitlines():
        if line.startswith("preset ="):
            continue
        if re.match(r"# (stern_capacitance =|\[\[wall\.site\]\]|name =|density =|pK =|charges =)", line):
            line = line[2:]
        lines.append(line)
    full = loads_case("\n".join(lines))
    assert full.wall == edl.Wall.silica()
    assert full == load_case(EXAMPLES / "silica_slit.toml")


def test_etched_channel_toml_solves_and_sits_beside_its_slit() -> None:
    """The rectangle example: a 500 x 30 nm silica channel. Its side walls change the mean EO velocity by less than
    the share of the width their layers take, ~2 H / W (common practice), and the case is the stated one."""
    result = edl.solve(load_case(EXAMPLES / "etched_channel.toml"))
    assert result.case.geometry == edl.Rectangle(width=500e-9, height=30e-9)
    assert result.case.wall == edl.Wall.silica()
    assert 0.0 < -result.slit_comparison["side_wall_effect_mean_velocity_eo"] < 2 * 30 / 500


def test_electrode_gap_toml_charges_both_electrodes_equally(tmp_path: Path) -> None:
    """The transient example through the command line: the file's [transient] section (only two of its times, to
    stay fast). A closed section stays neutral, so the two electrodes take opposite charges (Gauss's law,
    common practice); at the end it rests at its closed-section equilibrium and kept its ions."""
    from edl_solver.cli.app import main
    from edl_solver.io.transient_file import read_transient

    run_file = tmp_path / "gap.h5"
    assert main(["transient", str(EXAMPLES / "electrode_gap.toml"), "--times", "30ns,10us",
                 "--profile-times", "30ns", "-o", str(run_file), "-q"]) == 0
    run = read_transient(run_file)
    sigma = run["wall_charge_density"].values
    assert sigma[:, 0] == pytest.approx(-sigma[:, 1], rel=1e-9)
    assert run.attrs["closed_equilibrium_difference"] < 1e-8
    assert np.max(np.abs(run["inventory"].values / run["inventory"].values[0] - 1)) < 1e-10
    assert run["wall_potential"].sel(wall="top").values == pytest.approx(0.15, rel=1e-12)
