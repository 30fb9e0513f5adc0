"""Tests of edl_solver.report (text and formatting): the plain-text report of a result."""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import pytest

import edl_solver as edl
from edl_solver.report.formatting import prefixed
from edl_solver.report.text import text
from tests.helpers import KCL as KCL_1MM


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
    assert len(report.splitlines()) <= 45  # case, summary, thin-layer comparison, transport block


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
    assert "Bottom wall: zeta = -50 mV\nTop wall: zeta = -20 mV\n" in report
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


# -- regulated walls, slip, steric model, pH, viscoelectric solvent ----------------------------------------


def test_regulated_walls_are_described(regulated: edl.Result) -> None:
    report = regulated.report()
    assert ("Bottom wall: charge-regulated; silanol sites 8 nm⁻², pK 7.5 (charge 0 → -1); Stern capacitance "
            "C_S = 2.9 F/m²; slip length b = 1 nm\n") in report
    assert ("Top wall: charge-regulated; amphoteric sites 2 nm⁻², pK 4, 9 (charge +1 → 0 → -1); fixed charge "
            "density -1 mC/m²; gate at V_g = 1 V behind C_g = 10 mF/m²\n") in report
    # H+ and OH- are among the ions here, so the pH needs no remark.
    assert "H+ 0.01 mM, OH- 1e-06 mM, ionic strength 1.01 mM; pH 5\n" in report
    assert "isolated wall, regulated charge" in report  # where the thin-layer zeta comes from
    assert "Navier slip length b" in report
    assert len(report.splitlines()) <= 45  # case, summary, thin-layer comparison, transport block


def test_stern_potential_is_printed_per_wall(regulated: edl.Result) -> None:
    bottom, top = regulated.summary["stern_potential"]
    assert math.isnan(top)  # the top wall has no Stern layer
    line = next(line for line in regulated.report().splitlines() if "charge-plane potential" in line)
    assert line.endswith(f"bottom {bottom * 1e3:.3g} mV, top none (no Stern layer)")
    assert "ψ0 = ζ + σ/C_S" in line


def test_no_stern_line_without_a_stern_layer(steric: edl.Result) -> None:
    assert "stern_potential" not in steric.summary
    assert "charge-plane" not in steric.report()


def test_steric_model_slip_and_ph_are_described(steric: edl.Result) -> None:
    report = steric.report()
    assert "Model: Poisson-Boltzmann with finite ion size (steric, lattice gas)" in report
    # 1 / (N_A d^3) for d = 0.7 nm: 1 / (6.022e23 * 3.43e-28 m^3) = 4841 mol/m^3 = 4.84 M
    assert "ion diameter d = 0.7 nm, close packing at 1/(N_A d³) = 4.84 M" in report
    assert "Wall: zeta = -100 mV; slip length b = 5 nm" in report
    assert "pH 7 (H+ and OH- not among the ions)" in report
    assert "viscoelectric" not in report


def test_viscoelectric_coefficient_is_given() -> None:
    result = edl.solve(edl.Case(geometry=edl.Slit(height="30 nm"), electrolyte=KCL_1MM, wall=edl.Wall(zeta="-60 mV"),
                                solvent=edl.Water(viscoelectric=True), field="10 kV/m"))
    assert "Solvent: water at 25 °C (εr = 78.3, viscosity 0.89 mPa·s, viscoelectric coefficient f = 1e-15 m²/V²)" \
        in result.report()


def test_warnings_of_the_solve_are_printed() -> None:
    # 0.5 M is above the dilute limit of edl_solver.model.validity: the solve itself notes it.
    result = edl.solve(edl.Case(geometry=edl.Slit(height="20 nm"), wall=edl.Wall(zeta="-30 mV"),
                                electrolyte=edl.Electrolyte.from_ions({"K+": "500 mM", "Cl-": "500 mM"})))
    assert result.warnings
    report = result.report()
    for warning in result.warnings:
        assert f"Warning: {warning}\n" in report


def test_report_of_a_loaded_regulated_result_is_identical(regulated: edl.Result, tmp_path: Path) -> None:
    # The file stores the water ions as plain ions; the report reads the same.
    assert edl.load(regulated.to_hdf5(tmp_path / "r.h5")).report() == regulated.report()
