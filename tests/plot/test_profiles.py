"""Tests of edl_solver.plot.profiles: the profile figure."""

from __future__ import annotations

import os
import struct
from pathlib import Path

import matplotlib
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.plot.profiles import profile_figure

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
KCL_1MM = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def png_size(path: Path) -> tuple[int, int]:
    """(width, height) in pixels from the PNG header (IHDR follows the signature)."""
    header = path.read_bytes()[:24]
    assert header[:8] == PNG_SIGNATURE and header[12:16] == b"IHDR"
    return struct.unpack(">II", header[16:24])


@pytest.fixture(scope="module")
def slit() -> edl.Result:
    return edl.solve(edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL_1MM, wall=edl.Wall(zeta="-50 mV"),
                              field="10 kV/m", pressure_gradient=-1e5))


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
