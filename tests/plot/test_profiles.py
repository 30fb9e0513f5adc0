"""Tests of edl_solver.plot.profiles: the profile figure."""

from __future__ import annotations

import os
import struct
from pathlib import Path
from typing import Any

import matplotlib
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.ion_size import close_packing
from edl_solver.plot.profiles import profile_figure
from tests.helpers import KCL as KCL_1MM
from tests.helpers import PNG_SIGNATURE


def png_size(path: Path) -> tuple[int, int]:
    """(width, height) in pixels from the PNG header (IHDR follows the signature)."""
    header = path.read_bytes()[:24]
    assert header[:8] == PNG_SIGNATURE and header[12:16] == b"IHDR"
    return struct.unpack(">II", header[16:24])


@pytest.mark.parametrize("case", [
    edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 10, "Cl-": 10}),
             wall=edl.Wall(charge_density="-10 mC/m^2"), field="10 kV/m", model="dh"),  # DH: some c < 0
    edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL_1MM,
             wall=(edl.Wall(zeta="-50 mV"), edl.Wall(charge_density="2 mC/m^2")), field="10 kV/m"),
], ids=["capillary-dh", "asymmetric-slit"])
def test_png_written_for_other_geometries(case: edl.Case, tmp_path: Path) -> None:
    path = profile_figure(edl.solve(case), tmp_path / "profile.png")
    assert path.stat().st_size > 20_000
    assert png_size(path)[0] > 500


def test_png_written_without_touching_pyplot(slit: edl.Result, tmp_path: Path) -> None:
    import matplotlib.pyplot as plt

    backend = matplotlib.get_backend()
    figures = plt.get_fignums()
    path = profile_figure(slit, tmp_path / "profile.png")
    assert path == tmp_path / "profile.png"
    assert path.read_bytes()[:8] == PNG_SIGNATURE
    assert path.stat().st_size > 20_000  # three panels of lines and text, not an empty canvas
    assert plt.get_fignums() == figures
    assert matplotlib.get_backend() == backend
    assert os.listdir(tmp_path) == ["profile.png"]


def test_thin_layers_get_a_wall_zoom(slit: edl.Result, tmp_path: Path) -> None:
    thin = edl.solve(edl.Case(geometry=edl.Slit(height="1 um"), electrolyte=KCL_1MM, wall=edl.Wall(zeta="-50 mV"),
                              field="10 kV/m"))
    assert thin.summary["kappa_h"] > 50  # layers far thinner than the section: the zoom's reason to be
    wide = png_size(profile_figure(thin, tmp_path / "thin.png"))[0]
    narrow = png_size(profile_figure(slit, tmp_path / "thick.png"))[0]
    assert wide > narrow * 1.2


def test_failed_save_keeps_old_file(slit: edl.Result, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from matplotlib.figure import Figure

    path = tmp_path / "profile.png"
    path.write_bytes(b"old figure")

    def broken(self: object, *args: object, **kwargs: object) -> None:
        raise RuntimeError("renderer failed")

    monkeypatch.setattr(Figure, "savefig", broken)
    with pytest.raises(RuntimeError, match="renderer failed"):
        profile_figure(slit, path)
    assert path.read_bytes() == b"old figure"
    assert os.listdir(tmp_path) == ["profile.png"]


def test_bad_inputs(slit: edl.Result, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        profile_figure(slit, tmp_path / "missing" / "profile.png")
    with pytest.raises(InputError, match="result"):
        profile_figure("not a result", tmp_path / "profile.png")  # type: ignore[arg-type]


# -- the figure's wording for the new models (plotting shares the report's model names) --------------------


def drawn_figure(result: edl.Result, path: Path, monkeypatch: pytest.MonkeyPatch) -> Any:
    """Draw ``result`` with plotting.profile_figure and return the matplotlib Figure it saved."""
    from matplotlib.figure import Figure

    from edl_solver.plot.profiles import profile_figure

    saved = []
    real = Figure.savefig

    def keep(self: Figure, *args: Any, **kwargs: Any) -> None:
        saved.append(self)
        real(self, *args, **kwargs)

    monkeypatch.setattr(Figure, "savefig", keep)
    profile_figure(result, path)
    return saved[0]


def test_figure_marks_close_packing_for_the_steric_model(steric: edl.Result, tmp_path: Path,
                                                         monkeypatch: pytest.MonkeyPatch) -> None:
    figure = drawn_figure(steric, tmp_path / "steric.png", monkeypatch)
    title = " ".join(" ".join(text.get_text() for text in figure.texts).split())  # suptitle; wrapped lines joined
    assert "d = 0.7 nm" in title and "slip b = 5 nm" in title
    concentration_axes = figure.axes[1]
    marks = [line for line in concentration_axes.get_lines() if "close packing" in str(line.get_label())]
    assert len(marks) == 1
    assert marks[0].get_ydata()[0] == pytest.approx(close_packing(0.7e-9)) == pytest.approx(4841.0, rel=1e-3)


def test_figure_marks_the_charge_plane_of_a_stern_wall(regulated: edl.Result, tmp_path: Path,
                                                       monkeypatch: pytest.MonkeyPatch) -> None:
    figure = drawn_figure(regulated, tmp_path / "regulated.png", monkeypatch)
    title = " ".join(" ".join(text.get_text() for text in figure.texts).split())
    assert "pH 5" in title and "silanol pK 7.5" in title and "gate 1 V" in title
    potential_axes = figure.axes[0]
    marks = [line for line in potential_axes.get_lines() if "charge-plane" in str(line.get_label())]
    assert len(marks) == 1
    # Only the bottom wall has a Stern layer: one marker, on it, at psi_0.
    assert list(marks[0].get_xdata()) == [0.0]
    assert list(marks[0].get_ydata()) == [regulated.summary["stern_potential"][0] * 1e3]
    closes = [line for axes in figure.axes for line in axes.get_lines() if "close packing" in str(line.get_label())]
    assert not closes  # point ions: no ceiling


def test_a_case_at_rest_draws_the_eo_velocity_per_unit_field(tmp_path, monkeypatch) -> None:
    """No field and no pressure gradient: the velocity panel shows u/E in µm/s per kV/m (it drew lines at zero),
    the EO profile per unit field and the thin-layer line from the walls' Helmholtz-Smoluchowski slips, as the
    summary gives them per unit field once a field is set (common practice)."""
    import edl_solver as edl
    from edl_solver.plot import profiles as plot_profiles

    drawn = []
    save = plot_profiles.save_png

    def keep(figure, target):
        drawn.append(figure)
        return save(figure, target)

    monkeypatch.setattr(plot_profiles, "save_png", keep)
    salt = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
    walls = (edl.Wall(zeta="-50 mV"), edl.Wall(charge_density="1 mC/m^2"))
    rest = edl.solve(edl.Case(edl.Slit(height="40 nm"), salt, walls))
    plot_profiles.profile_figure(rest, tmp_path / "rest.png")
    velocity_axes = [axes for axes in drawn[0].axes if axes.get_ylabel().startswith("u/E")]
    assert len(velocity_axes) == 1
    eo, thin = (line.get_ydata() for line in velocity_axes[0].get_lines() if "per kV/m" in str(line.get_label()))
    assert eo == pytest.approx(rest.profiles.eo_per_field * 1e9, rel=1e-12)
    driven = edl.solve(edl.Case(edl.Slit(height="40 nm"), salt, walls, field=1e3)).summary["hs_velocity"]
    assert (thin[0], thin[-1]) == pytest.approx((driven[0] * 1e6, driven[1] * 1e6), rel=1e-9)
