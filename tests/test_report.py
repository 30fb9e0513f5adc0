"""Tests of edl_solver.report: the plain-text report of a result."""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import pytest

import edl_solver as edl
from edl_solver.report import prefixed, text

KCL_1MM = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


@pytest.fixture(scope="module")
def slit() -> edl.Result:
    return edl.solve(edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL_1MM, wall=edl.Wall(zeta="-50 mV"),
                              field="10 kV/m", pressure_gradient=-1e5))


@pytest.fixture(scope="module")
def capillary() -> edl.Result:
    return edl.solve(edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=KCL_1MM,
                              wall=edl.Wall(charge_density="-2 mC/m^2"), field="10 kV/m"))


@pytest.fixture(scope="module")
def asymmetric() -> edl.Result:
    return edl.solve(edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL_1MM,
                              wall=(edl.Wall(zeta="-50 mV"), edl.Wall(zeta="-20 mV")), field="10 kV/m"))


def test_slit_report_states_case_scales_and_verdict(slit: edl.Result) -> None:
    report = slit.report()
    assert report == text(slit)
    # Debye length of a 1:1 electrolyte at 25 degC: 0.304 nm / sqrt(I / M) (Israelachvili, Intermolecular
    # and Surface Forces, ch. 14), 9.61 nm at 1 mM.
    assert "Debye length λ_D = 9.61 nm" in report
    assert "κh (half-height / Debye length) = 2.6" in report  # H/2 over 9.61 nm
    assert "H = 50 nm" in report
    assert "K+ 1 mM, Cl- 1 mM" in report
    assert "zeta = -50 mV" in report
    assert "25 °C" in report
    assert "field E = 10 kV/m" in report
    assert "dp/dx = -100 kPa/m" in report
    assert "Poisson-Boltzmann" in report
    assert "per metre of slit width" in report
    for unit in ("mC/m²", "µm/s", "µm²/s", "µA/m"):
        assert unit in report, unit
    assert f"Verdict: {slit.verdict}" in report
    assert slit.message in report
    assert "eo_ratio" in report
    ratio = slit.summary["eo_ratio"]
    assert f"{ratio:.3g}" in report
    error = slit.summary["thin_layer_flow_rate_error"]
    assert f"{100 * error:+.3g} %" in report
    assert len(report.splitlines()) <= 30


def test_slit_report_shows_the_pressure_driven_flow_only_when_driven(slit: edl.Result,
                                                                       asymmetric: edl.Result) -> None:
    assert "pressure-driven" in slit.report()
    assert "pressure-driven" not in asymmetric.report()


def test_capillary_report_uses_kappa_a_and_absolute_units(capillary: edl.Result) -> None:
    report = capillary.report()
    assert "κa (radius / Debye length) = 2.08" in report  # 20 nm / 9.61 nm
    assert "a = 20 nm" in report
    assert "per metre" not in report
    assert "charge density = -2 mC/m²" in report
    assert "Grahame" in report  # the thin-layer zeta of a charged wall is stated
    assert "aL/s (1.14e-19 m³/s)" in report  # 90.9 µm/s over pi (20 nm)^2
    assert " fA" in report and "A/m" not in report


def test_two_walls_are_reported_each(asymmetric: edl.Result) -> None:
    report = asymmetric.report()
    assert "bottom zeta = -50 mV; top zeta = -20 mV" in report
    assert "bottom -50 mV, top -20 mV" in report


def test_warnings_and_undefined_values_are_shown(slit: edl.Result) -> None:
    result = dataclasses.replace(slit, warnings=("ions are crowded at the wall",),
                                 summary={**slit.summary, "eo_ratio": math.nan})
    report = result.report()
    assert "Warning: ions are crowded at the wall" in report
    assert "eo_ratio (full / thin-layer mean EO velocity)" in report
    assert "undefined" in report
    assert "nan" not in report


def test_report_of_loaded_result_is_identical(slit: edl.Result, tmp_path: Path) -> None:
    assert edl.load(slit.to_hdf5(tmp_path / "r.h5")).report() == slit.report()


@pytest.mark.parametrize(("value", "unit", "expected"), [
    (1.2e-11, "A", "12 pA"),
    (-1.0421e-5, "A/m", "-10.4 µA/m"),
    (1e4, "V/m", "10 kV/m"),
    (999.96, "A", "1 kA"),  # rounding carries into the next prefix
    (0.0, "A", "0 A"),
    (math.nan, "A", "undefined"),
])
def test_prefixed(value: float, unit: str, expected: str) -> None:
    assert prefixed(value, unit) == expected
