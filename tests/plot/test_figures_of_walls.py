"""Every figure the tool draws, for the walls beyond a fixed ζ or σ: charge regulated by sites, a fixed charge
behind a Stern layer, a gated wall, and the steric model.

The figures: the profile figure (``edl solve --figure``), the pump curve, conductance and I-V figures of
``edl transport``, and the validity map (``edl map --figure``). The map's figure once read the wall's
``charge_density`` from the case and failed with a KeyError for a wall regulated by sites or a gate.
The map's figure is checked by content here; its colour scale and labels in tests/plot/test_validity_figure.py.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.analysis.validity_map import validity_map
from edl_solver.channel.conductance import channel_characteristics, conductance_curve
from edl_solver.plot import validity
from edl_solver.plot.profiles import profile_figure
from edl_solver.plot.transport import conductance_figure, iv_figure, pump_curve_figure
from tests.helpers import KCL, assert_png

SITE = edl.Site(density="8 nm^-2", pK=7.5, charges=(0, -1))
STERIC_KCL = edl.Electrolyte(tuple(edl.Ion(name=ion.name, concentration=ion.concentration, diameter="0.7 nm")
                                   for ion in KCL.ions))

#: A slit of 50 nm with 1 mM KCl at 10 kV/m and one of the walls that regulate their charge, or the steric model.
WALLS: dict[str, dict[str, Any]] = {
    "sites": {"wall": edl.Wall(sites=(SITE,)), "electrolyte": edl.Electrolyte(KCL.ions, pH=7.0)},
    "stern": {"wall": edl.Wall(charge_density="-5 mC/m^2", stern_capacitance="0.5 F/m^2"), "electrolyte": KCL},
    "gate": {"wall": edl.Wall(gate_voltage="-0.5 V", gate_capacitance="0.01 F/m^2"), "electrolyte": KCL},
    "steric": {"wall": edl.Wall(charge_density="-20 mC/m^2"), "electrolyte": STERIC_KCL, "model": "steric"},
}


def wall_case(name: str) -> edl.Case:
    return edl.Case(geometry=edl.Slit(height="50 nm"), field="10 kV/m", **WALLS[name])


@pytest.fixture(scope="module", params=list(WALLS))
def case(request: pytest.FixtureRequest) -> edl.Case:
    return wall_case(request.param)


def test_profile_and_pump_curve_figures(case: edl.Case, tmp_path: Path) -> None:
    result = edl.solve(case)
    assert_png(profile_figure(result, tmp_path / "profile.png"))
    assert_png(pump_curve_figure(result, tmp_path / "pump.png", length="10 um"))


def test_conductance_and_iv_figures(case: edl.Case, tmp_path: Path) -> None:
    assert_png(conductance_figure(conductance_curve(case, np.geomspace(0.01, 10, 4)), tmp_path / "conductance.png"))
    curve = channel_characteristics(ch.Channel(case, "2 um", "0.1 mM", "1 mM"), np.linspace(-0.1, 0.1, 5))
    assert_png(iv_figure(curve, tmp_path / "iv.png"))


def captured_map_figure(monkeypatch: pytest.MonkeyPatch, data: Any, path: Path) -> Any:
    """Draw the map's figure to ``path`` and return the matplotlib Figure it wrote."""
    drawn = []
    save = validity.save_png

    def keep(figure: Any, target: Any) -> Path:
        drawn.append(figure)
        return save(figure, target)

    monkeypatch.setattr(validity, "save_png", keep)
    assert_png(validity.map_figure(data, path))
    return drawn[0]


def test_map_figure_of_every_wall(case: edl.Case, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    data = validity_map(case, ("geometry.height", ["5 nm", "100 nm", "2 um"]),
                        ("electrolyte.concentration", ["1 mM", "10 mM", "100 mM"]), boundary_tolerance=0.05)
    figure = captured_map_figure(monkeypatch, data, tmp_path / "map.png")
    title = figure.get_suptitle()
    wall = case.walls[0]
    if wall.sites:
        assert "pK 7.5" in title and "pH 7" in title
    if wall.stern_capacitance is not None:
        assert "Stern layer 0.5 F/m²" in title and "σ = -5 mC/m²" in title
    if wall.gate_voltage is not None:
        assert "gate -0.5 V" in title
    if case.model == "steric":
        assert "steric" in title and "ion diameter 0.7 nm" in title
    panels = [axes for axes in figure.axes if axes.get_title()]
    assert [axes.get_title().split(":")[0] for axes in panels] == ["EO flow rate", "Current per field"]
    for axes in panels:  # each panel its own root-found boundary
        lines = [line for line in axes.get_lines() if "root-found" in str(line.get_label())]
        assert len(lines) == 1 and np.isfinite(lines[0].get_xdata()).any()
    assert [str(data[v].attrs["quantity"]) for v in ("boundary", "boundary_current")] == ["flow_rate", "current"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["map.png"]


def test_a_wall_regulated_without_sites_is_described_by_what_regulates_it() -> None:
    # it read "regulated ()" for a fixed charge behind a Stern layer, and for a gate
    from edl_solver.plot.shared import wall_text

    assert wall_text(edl.Wall(charge_density="-10 mC/m^2", stern_capacitance="2 F/m^2")) == \
        "charge regulated: σ = -10 mC/m², Stern layer 2 F/m²"
    gated = wall_text(edl.Wall(gate_voltage="0.1 V", gate_capacitance="0.01 F/m^2"))
    assert gated.startswith("charge regulated: gate 0.1 V")
