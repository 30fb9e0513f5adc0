"""Issue 11, reports: three significant figures, one unit per quantity, round-off of a zero printed as 0, and
a verdict quoting the error line's number (``report.units``, ``report.text``, ``cli.transport_text``)."""

from __future__ import annotations

import contextlib
import io
import re

import pytest

import edl_solver as edl
from edl_solver.cli import main
from edl_solver.model.thin_layer import verdict
from edl_solver.report.formatting import percent

_NUMBER = re.compile(r"(?<![\w.])[+-]?\d+(?:\.\d+)?(?:e[+-]?\d+)?")


def _digits(token: str) -> int:
    """Significant figures of a printed number; trailing zeros of an integer do not count (252000: 3)."""
    mantissa = token.lstrip("+-").split("e")[0]
    digits = mantissa.replace(".", "").lstrip("0")
    return len(digits.rstrip("0")) if "." not in mantissa else len(digits)


def _case(geometry: object, wall: object = None) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=wall or edl.Wall(charge_density="-2 mC/m^2"), field="10 kV/m", pressure_gradient="-1 bar/mm")


def _transport(*flags: str) -> str:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["transport", *flags, "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--charge-density", "-2mC/m^2",
                     "--field", "10kV/m"])
    assert (code, err.getvalue()) == (0, ""), err.getvalue()
    return out.getvalue()


def _results(text: str) -> list[str]:
    """The lines of computed values: after the case echo (whose inputs keep the digits they were given), less
    the solver's counts."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("Debye length"))
    return [line for line in lines[start + 1:] if not line.startswith(("Solver:", "wrote "))]


@pytest.mark.parametrize("shape", [["--slit", "20nm"], ["--capillary", "10nm"],
                                   ["--slit", "20nm", "--width", "100um", "--channels", "20", "--voltage", "1V",
                                    "--pressure-difference", "100mbar", "--access-resistance", "on"]])
def test_no_value_has_more_than_three_significant_figures(shape: list[str]) -> None:
    """The issue: '-44.5279 mV' beside three-figure values, '0.005179' mM, '+1.112 mV'; the device lines too."""
    device = "--width" in shape  # a device between equal reservoirs
    reservoirs = [] if device else ["--left", "0.1mM", "--right", "1mM", "--iv", "-150mV:150mV:3"]
    text = _transport(*shape, "--length", "10um", *reservoirs, "--conductance", "0.001mM:100mM:8")
    long = [(token, line) for line in _results(text) for token in _NUMBER.findall(line) if _digits(token) > 3]
    assert long == [], long


def _units(line: str) -> list[str]:
    return re.findall(r"[+-]?\d[\d.e+-]*\s+([^\s/,()]+(?:/[^\s,()]+)?)", line.split("  ", 2)[-1])


@pytest.mark.parametrize(("geometry", "unit"),
                         [(edl.Slit(height="20 nm"), "µA/m"), (edl.Capillary(radius="10 nm"), "fA")])
def test_currents_share_one_unit(geometry: object, unit: str) -> None:
    """'4.28 µA/m / 247 nA/m' on one line read as two quantities: one prefix per quantity."""
    report = edl.solve(_case(geometry)).report()
    currents = [line for line in report.splitlines() if line.strip().startswith("current:")]
    assert len(currents) == 2
    assert {u for line in currents for u in _units(line)} == {unit}, currents


def test_conductance_per_length_reads_as_a_channel_conductance() -> None:
    """'1.13e-08 nS·m' for a capillary: shown as the conductance of a 1 µm long channel (G·L / 1 µm), pS."""
    result = edl.solve(_case(edl.Capillary(radius="10 nm")))
    line = next(line for line in result.report().splitlines() if "conductance of a 1 µm long channel" in line)
    expected = result.summary["conductance_per_length"] / 1e-6
    assert f"{expected * 1e12:.3g} pS" in line, line


def test_opposite_walls_print_round_off_as_zero() -> None:
    """Walls at -50 mV and +50 mV in a 1:1 electrolyte: the EO flow, the mid-plane potential and the profile
    deviation vanish by symmetry (common practice: the antisymmetric charge drives opposite, cancelling slips);
    the issue saw '-1.26e-14 um/s' and 'largest profile deviation 2.12e-14 %'."""
    walls = (edl.Wall(zeta="-50 mV"), edl.Wall(zeta="50 mV"))
    case = edl.Case(geometry=edl.Slit(height="20 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}), wall=walls, field="10 kV/m")
    report = edl.solve(case).report()
    lines = {line.split("  ")[1].strip(): line.split("  ", 2)[-1].strip() for line in report.splitlines()
             if line.startswith("  ") and "  " in line[2:]}
    assert lines["electroosmotic (EO) mean velocity / flow rate"] == "0 µm/s / 0 µm²/s"
    assert lines["potential at the mid-plane / section mean"] == "0 mV / 0 mV"
    assert lines["largest profile deviation outside the layers"] == "0 % of the slip speed"
    assert not re.search(r"\de-1\d", report), report  # no round-off noise anywhere


@pytest.mark.parametrize("error", [2515.95, 0.02364, -0.4971, 0.0004])
def test_verdict_quotes_the_error_line(error: float) -> None:
    """The issue: 'by 251595 %' in the verdict under '+252000 %' on the error line."""
    assert f" by {percent(abs(error))} here" in verdict(error, 1e-4)


def test_verdict_of_a_report_equals_its_error_line() -> None:
    report = edl.solve(_case(edl.Slit(height="20 nm"))).report()
    error = re.search(r"flow-rate error .*?([+-]?[\d.]+) %", report)
    said = re.search(r"Verdict: .* by ([\d.]+) %", report)
    assert error is not None and said is not None, report
    assert error.group(1).lstrip("+-") == said.group(1)


def test_transport_without_flags_says_what_they_add() -> None:
    """'edl transport' without flags printed only what 'edl solve' prints."""
    text = _transport("--slit", "20nm")
    assert "edl transport adds, with its flags: --length L" in text
    assert "--conductance" in text.splitlines()[-2]


def test_prefix_is_chosen_per_quantity_not_per_value() -> None:
    from edl_solver.report.units import show  # new in issue 11

    shown = show("current", edl.Slit(height="20 nm"), 4.54e-6, 1.36e-8)
    assert (shown(4.54e-6), shown(1.36e-8), shown(3e-22)) == ("4.54 µA/m", "0.0136 µA/m", "0 µA/m")
