"""The validity map's figure (``edl_solver.plot.validity.map_figure``), checked by content: its colour scale
centred on the tolerance, the tolerance labels inside the axes, and the root-found boundary on both panels
(the EO flow rate's and the current's)."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.analysis.boundary import boundary_curve
from edl_solver.analysis.validity_map import validity_map
from tests.helpers import KCL
from tests.plot.test_figures_of_walls import captured_map_figure

BASE = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"))
X_AXIS = ("kappa_h", list(np.geomspace(0.3, 300, 9)))
Y_AXIS = ("zeta_kT", list(np.linspace(-4.0, -1.0, 5)))


@pytest.fixture(scope="module")
def data() -> Any:
    return validity_map(BASE, X_AXIS, Y_AXIS, boundary_tolerance=0.05)


def panels(figure: Any) -> list[Any]:
    """The two map panels (the colour bars have no title)."""
    return [axes for axes in figure.axes if axes.get_title()]


def filled(axes: Any) -> Any:
    from matplotlib.contour import ContourSet

    (found,) = [c for c in axes.collections if isinstance(c, ContourSet) and c.filled]
    return found


def inside(axes: Any, x: float, y: float) -> bool:
    (x0, x1), (y0, y1) = sorted(axes.get_xlim()), sorted(axes.get_ylim())
    return x0 < x < x1 and y0 < y < y1


def percent_labels(axes: Any) -> list[Any]:
    """The texts on the map that name a tolerance ("1 %", "5 %"): contour labels and the boundary's."""
    return [text for text in axes.texts if text.get_text().endswith(" %")]


def test_colour_scale_is_centred_on_the_tolerance(data: Any, tmp_path: Path,
                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    figure = captured_map_figure(monkeypatch, data, tmp_path / "map.png")
    for axes in panels(figure):
        contours = filled(axes)
        # 0.1 % to 100 % for 5 %: the band 1-10 % is a third of the colours, whatever the map's extremes
        assert (contours.norm.vmin, contours.norm.vmax) == (-3.0, 0.0)
        assert contours.extend == "both"  # beyond the range: clipped, with arrows on the colour bar
        assert any(math.isclose(level, math.log10(0.05)) for level in contours.levels)  # a colour edge at 5 %
        assert np.count_nonzero((contours.levels > -2.0) & (contours.levels < -1.0)) >= 7  # 1-10 %: 8 bands
    bars = [axes for axes in figure.axes if axes.get_ylabel() == "|(thin − full) / full|"]
    assert len(bars) == 2
    for bar in bars:
        labels = [tick.get_text() for tick in bar.get_yticklabels()]
        assert {"0.1 %", "1 %", "5 %", "10 %", "100 %"} <= set(labels)


@pytest.mark.parametrize("tolerance, limits", [(0.01, (-4.0, 0.0)), (0.2, (-3.0, 1.0))])
def test_colour_scale_follows_another_tolerance(tolerance: float, limits: tuple[float, float], tmp_path: Path,
                                                monkeypatch: pytest.MonkeyPatch) -> None:
    data = validity_map(BASE, ("kappa_h", [1.0, 10.0, 100.0]), ("zeta_kT", [-2.0, -1.0]),
                        tolerances=(0.01, 0.05, 0.2), boundary_tolerance=tolerance)
    figure = captured_map_figure(monkeypatch, data, tmp_path / "map.png")
    for axes in panels(figure):
        norm = filled(axes).norm
        assert (norm.vmin, norm.vmax) == limits and norm.vmin < math.log10(tolerance) < norm.vmax


def test_boundary_on_both_panels_labelled_inside_the_axes(data: Any, tmp_path: Path,
                                                          monkeypatch: pytest.MonkeyPatch) -> None:
    figure = captured_map_figure(monkeypatch, data, tmp_path / "map.png")
    for axes, variable in zip(panels(figure), ("boundary", "boundary_current")):
        (line,) = [line for line in axes.get_lines() if "root-found" in str(line.get_label())]
        # the curve is the dataset's, in display coordinates (log10 kappa h against zeta/(kT/e))
        curve = data[variable]
        assert curve.attrs["axis"] == "kappa_h" and np.isfinite(curve.values).sum() >= 3
        finite = np.isfinite(curve.values)
        assert np.allclose(np.asarray(line.get_xdata())[finite], np.log10(curve.values[finite]))
        assert np.allclose(np.asarray(line.get_ydata())[finite], curve["zeta_kT"].values[finite])
        labels = percent_labels(axes)
        # 1 % and 10 % on the contour lines, 5 % on the boundary: each once, every one inside the axes
        assert sorted(text.get_text() for text in labels) == ["1 %", "10 %", "5 %"]
        for text in labels:
            assert inside(axes, *text.get_position()), text.get_text()
            assert text.get_clip_on()


def test_without_a_boundary_the_tolerance_contour_is_drawn_and_labelled(data: Any, tmp_path: Path,
                                                                        monkeypatch: pytest.MonkeyPatch) -> None:
    figure = captured_map_figure(monkeypatch, data.drop_vars(["boundary", "boundary_current"]), tmp_path / "a.png")
    for axes in panels(figure):
        assert not [line for line in axes.get_lines() if "root-found" in str(line.get_label())]
        labels = percent_labels(axes)
        assert sorted(text.get_text() for text in labels) == ["1 %", "10 %", "5 %"]
        assert all(inside(axes, *text.get_position()) for text in labels)


def test_a_given_curve_replaces_the_one_of_its_quantity(data: Any, tmp_path: Path,
                                                        monkeypatch: pytest.MonkeyPatch) -> None:
    from edl_solver.plot import validity

    curve = boundary_curve(BASE, "kappa_h", "zeta_kT", [-4.0, -1.0], 0.05, "current", bracket=(0.3, 300.0))
    drawn = []
    save = validity.save_png
    monkeypatch.setattr(validity, "save_png", lambda figure, path: drawn.append(figure) or save(figure, path))
    validity.map_figure(data, tmp_path / "map.png", boundary=curve)
    flow, current = panels(drawn[0])
    (line,) = [line for line in current.get_lines() if "root-found" in str(line.get_label())]
    assert len(line.get_xdata()) == 2  # the given curve, at its two values
    (line,) = [line for line in flow.get_lines() if "root-found" in str(line.get_label())]
    assert len(line.get_xdata()) == data["boundary"].size  # the dataset's
    validity.map_figure(data, tmp_path / "none.png", boundary=False)
    assert not [line for axes in panels(drawn[-1]) for line in axes.get_lines()]
