"""Tests of edl_solver.plot.rectangle_figure: the figure of a rectangular section (maps of the potential and the EO
velocity, the mid-line profiles), drawn through plot.profiles.profile_figure and ``edl solve --figure``."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import matplotlib
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.plot.profiles import profile_figure
from edl_solver.plot.rectangle_figure import rectangle_figure, thin_layer_per_field
from edl_solver.plot.shared import number
from tests.helpers import KCL, assert_png, run, write

FAST = edl.Numerics(accuracy=1e-3)


def rectangle(width: str, height: str, **kwargs: Any) -> edl.Result:
    """A rectangle of 1 mM KCl, walls at -40 mV, solved at a loose accuracy (the figure is checked, not numbers)."""
    return edl.solve(edl.Case(geometry=edl.Rectangle(width=width, height=height), electrolyte=KCL,
                              wall=edl.Wall(zeta="-40 mV"), numerics=FAST, **kwargs))


def drawn(result: edl.Result, path: Path, monkeypatch: pytest.MonkeyPatch) -> Any:
    """Draw ``result`` with profile_figure (the entry point of ``edl solve --figure``); the Figure it saved."""
    from matplotlib.figure import Figure

    saved = []
    real = Figure.savefig

    def keep(self: Figure, *args: Any, **kwargs: Any) -> None:
        saved.append(self)
        real(self, *args, **kwargs)

    monkeypatch.setattr(Figure, "savefig", keep)
    assert profile_figure(result, path) == path
    assert_png(path)
    return saved[0]


def titles(figure: Any) -> str:
    """Every title and figure text, wrapped lines joined."""
    texts = [text.get_text() for text in figure.texts] + [axes.get_title() for axes in figure.axes]
    return " ".join(" ".join(texts).split())


def test_flat_rectangle_draws_the_whole_section_stretched_and_one_end_to_scale(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    import matplotlib.pyplot as plt

    result = rectangle("1 um", "20 nm", field="10 kV/m")
    figures, backend = plt.get_fignums(), matplotlib.get_backend()
    figure = drawn(result, tmp_path / "flat.png", monkeypatch)
    assert plt.get_fignums() == figures and matplotlib.get_backend() == backend  # no pyplot figure
    text = titles(figure)
    assert "Rectangle 1000 × 20 nm (W × H)" in text and "all four walls ζ = -40 mV" in text
    assert f"κh = {number(result.summary['kappa_h'])}" in text
    assert f"eo_ratio (full / thin-layer EO flow) = {number(result.summary['eo_ratio'])}" in text
    assert f"Verdict: {result.verdict}" in text
    assert "z stretched ×" in text and "one end, to scale" in text
    ends = [axes for axes in figure.axes if "one end" in axes.get_title()]
    assert len(ends) == 2 and all(axes.get_aspect() == 1.0 for axes in ends)
    assert ends[0].get_xlim()[1] == pytest.approx(40.0)  # two heights of the 1000 nm width: the side wall's end


def test_tall_rectangle_draws_with_y_stretched(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    figure = drawn(rectangle("20 nm", "200 nm", field="10 kV/m"), tmp_path / "tall.png", monkeypatch)
    text = titles(figure)
    assert "Rectangle 20 × 200 nm (W × H)" in text and "y stretched ×" in text
    ends = [axes for axes in figure.axes if "one end" in axes.get_title()]
    assert ends[0].get_ylim()[1] == pytest.approx(40.0)


def test_compact_rectangle_is_drawn_to_scale_with_the_slip_velocity_marked(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    result = rectangle("60 nm", "40 nm", field="10 kV/m")
    figure = drawn(result, tmp_path / "compact.png", monkeypatch)
    maps = [axes for axes in figure.axes if "the section, to scale" in axes.get_title()]
    assert len(maps) == 2 and all(axes.get_aspect() == 1.0 for axes in maps)
    slip = result.summary["hs_velocity"] * 1e6  # µm/s
    assert f"thin-layer slip u_s = {number(slip)} µm/s" in titles(figure)
    # the slip velocity is a dashed line on the velocity's colour bar
    bar = next(axes for axes in figure.axes if axes.get_ylabel() == "EO velocity u (µm/s)")
    assert any(line.get_ydata()[0] == pytest.approx(slip) for line in bar.get_lines())


def test_no_field_draws_the_velocity_per_unit_field(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    result = rectangle("60 nm", "40 nm")
    assert result.case.field == 0.0 and result.summary["hs_velocity"] == 0.0  # the case this test is about
    figure = drawn(result, tmp_path / "no_field.png", monkeypatch)
    per_kv = thin_layer_per_field(result.case)[0] * 1e3 * 1e6  # (µm/s) per kV/m
    assert f"thin-layer slip u_s = {number(per_kv)} µm/s per kV/m" in titles(figure)
    labels = [axes.get_ylabel() for axes in figure.axes]
    assert "EO velocity per field u/E (µm/s per kV/m)" in labels


def test_thin_layer_per_field_is_the_summary_slip_velocity_over_the_field() -> None:
    """Two paths to one number: the figure's slip per unit field of the isolated wall (Grahame zeta of sigma) and the
    solver's hs_velocity at a field (common practice: the slip velocity is linear in E)."""
    case = edl.Case(geometry=edl.Rectangle(width="60 nm", height="40 nm"), electrolyte=KCL, field="5 kV/m",
                    wall=edl.Wall(charge_density="-5 mC/m^2"), numerics=FAST)
    result = edl.solve(case)
    top_bottom, sides = thin_layer_per_field(case)
    assert top_bottom == sides
    assert top_bottom * case.field == pytest.approx(result.summary["hs_velocity"], rel=1e-9)


def test_edl_solve_writes_the_rectangle_figure(tmp_path: Path) -> None:
    case = write(tmp_path, '[geometry]\nkind = "rectangle"\nwidth = "60 nm"\nheight = "40 nm"\n\n[electrolyte]\n'
                 'ions = { "K+" = "1 mM", "Cl-" = "1 mM" }\n\n[wall]\nzeta = "-40 mV"\n\n[numerics]\n'
                 'accuracy = 1e-3\n')
    code, _, err = run(["solve", str(case), "--figure", str(tmp_path / "case.png")])
    assert code == 0, err
    assert_png(tmp_path / "case.png")


def test_a_result_of_another_geometry_is_refused(slit: edl.Result, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="not a Result of a rectangle"):
        rectangle_figure(slit, tmp_path / "slit.png")
    assert not (tmp_path / "slit.png").exists()
