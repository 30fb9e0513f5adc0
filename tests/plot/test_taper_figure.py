"""The I-V figure of a tapered channel (``plot.transport.iv_figure`` with ``plot.taper``): beside the I-V curve, a
panel of |I(+V)/I(-V)| against |V| (read from the curve's pairs +V, -V) and a panel of the walls against x."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.conductance import channel_characteristics
from edl_solver.channel.taper_outputs import curve_rectification, shape_attrs
from edl_solver.plot import transport
from tests.helpers import assert_png, case_of


def _cone(voltages: list[float], size: Any = ("5 nm", "40 nm")) -> Any:
    case = case_of(edl.Capillary(radius="5 nm"), edl.Wall(charge_density="-20 mC/m^2"))
    channel = ch.Channel(case, "1 um", "1 mM", "1 mM", size=size)
    data = channel_characteristics(channel, voltages)
    data.attrs.update(shape_attrs(channel))
    return data


def _figure_of(dataset: Any, path: Path, monkeypatch: pytest.MonkeyPatch) -> Any:
    kept = {}
    save = transport.save_png

    def keep(figure: Any, target: Path) -> Path:
        kept["figure"] = figure
        return save(figure, target)

    monkeypatch.setattr(transport, "save_png", keep)
    assert_png(transport.iv_figure(dataset, path))
    return kept["figure"]


def test_a_cone_adds_the_rectification_and_the_shape(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    data = _cone([-0.2, -0.1, 0.0, 0.1, 0.2])
    figure = _figure_of(data, tmp_path / "cone.png", monkeypatch)
    _main, ratio, shape, _salt = figure.axes
    magnitudes, ratios = curve_rectification(data)
    current = data["current"].values
    assert ratios == pytest.approx(np.abs(current[3:] / current[1::-1]))  # |I(+V)/I(-V)| of the curve's pairs
    drawn = ratio.get_lines()[-1]
    assert drawn.get_xdata() == pytest.approx(magnitudes * 1e3) and drawn.get_ydata() == pytest.approx(ratios)
    walls = shape.get_lines()[0]
    assert walls.get_xdata() == pytest.approx([0.0, 1.0]) and walls.get_ydata() == pytest.approx([5.0, 40.0])
    assert "tapered: radius 5 nm at x = 0 to 40 nm at x = L" in figure.get_suptitle()


def test_a_one_sided_curve_says_there_is_no_pair_and_a_uniform_channel_has_one_panel(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    one_sided = _cone([0.0, 0.1, 0.2], size={"position": ["0 um", "0.5 um", "1 um"], "size": ["20 nm", "5 nm",
                                                                                                "20 nm"]})
    assert curve_rectification(one_sided) is None
    figure = _figure_of(one_sided, tmp_path / "one.png", monkeypatch)
    assert len(figure.axes) == 3
    assert any("no pair of voltages" in text.get_text() for text in figure.axes[1].texts)
    assert "from a table of 3 rows" in figure.get_suptitle()
    case = case_of(edl.Capillary(radius="5 nm"), edl.Wall(charge_density="-20 mC/m^2"))
    uniform = channel_characteristics(ch.Channel(case, "1 um", "1 mM", "1 mM"), [-0.1, 0.1])
    assert len(_figure_of(uniform, tmp_path / "uniform.png", monkeypatch).axes) == 1


def test_the_shape_panel_carries_the_salt_along_x_at_opposite_voltages(tmp_path: Path,
                                                                       monkeypatch: pytest.MonkeyPatch) -> None:
    """The salt c(x) at the largest +V and -V of the curve, on a second axis of the shape panel: the curve's own
    profiles (``concentration_profile``), in mM, with the reservoirs' 1 mM at both ends."""
    data = _cone([-0.2, -0.1, 0.0, 0.1, 0.2])
    figure = _figure_of(data, tmp_path / "cone.png", monkeypatch)
    salt = figure.axes[-1]
    forward, reverse = salt.get_lines()
    assert forward.get_ydata() == pytest.approx(data["concentration_profile"].sel(voltage=0.2).values)
    assert reverse.get_ydata() == pytest.approx(data["concentration_profile"].sel(voltage=-0.2).values)
    assert forward.get_ydata()[[0, -1]] == pytest.approx([1.0, 1.0])
    assert "±200 mV" in figure.axes[2].get_title()
    assert "capillary, wall" in figure.get_suptitle() and "radius a = 5 nm" not in figure.get_suptitle()
