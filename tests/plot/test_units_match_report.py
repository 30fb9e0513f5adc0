"""Issue 11, figures: an axis shows its quantity in the report's unit ('uA/m in the report, pA/um in the I-V
figure'; 'nS*m' beside 'pS*um'), from the one table of ``report.units``."""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

import numpy as np
import pytest

import edl_solver as edl
import edl_solver.plot.transport as figures
from edl_solver.channel.conductance import channel_characteristics, conductance_curve
from edl_solver.cli.transport_text import channel_lines


def _case(geometry: object) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=edl.Wall(charge_density="-2 mC/m^2"), field="10 kV/m")


@pytest.fixture
def drawn(monkeypatch: pytest.MonkeyPatch) -> list[Any]:
    """The figures the plot functions would write, kept instead of written."""
    kept: list[Any] = []
    monkeypatch.setattr(figures, "save_png", lambda figure, path: kept.append(figure) or Path(path))
    return kept


@pytest.mark.parametrize("geometry", [edl.Slit(height="20 nm"), edl.Capillary(radius="10 nm")])
def test_iv_axis_and_report_share_the_current_unit(geometry: object, drawn: list[Any], tmp_path: Path) -> None:
    case = _case(geometry)
    result = edl.solve(case)
    data = channel_characteristics(edl.Channel(case, "10 um", "0.1 mM", "1 mM"), np.linspace(-0.15, 0.15, 5))
    report = channel_lines(data, result)
    line = next(line for line in report.splitlines() if "short-circuit current" in line)
    unit = line.split()[-1]
    figures.iv_figure(data, tmp_path / "iv.png")
    label = drawn[0].axes[0].get_ylabel()
    assert f"({unit}" in label, (label, line)


def test_conductance_axis_and_report_share_the_unit_for_a_capillary(drawn: list[Any], tmp_path: Path) -> None:
    case = _case(edl.Capillary(radius="10 nm"))
    report = edl.solve(case).report()
    line = next(line for line in report.splitlines() if "conductance of a 1 µm long channel" in line)
    unit = re.search(r"\d (\S+)", line.split("channel", 1)[1]).group(1)
    figures.conductance_figure(conductance_curve(case, np.geomspace(0.01, 10.0, 3)), tmp_path / "g.png")
    label = drawn[0].axes[0].get_ylabel()
    assert "1 µm long channel" in label and f"({unit})" in label, (label, line)
