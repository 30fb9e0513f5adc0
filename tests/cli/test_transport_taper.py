"""``edl transport`` for a tapered channel: --size A:B (a cone), --rectification, the report's shape lines and
the device line of a cone. Behaviour only: the currents themselves are tested in tests/channel/test_taper_*."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.channel import Channel
from edl_solver.channel.device import Device
from edl_solver.channel.device_text import device_lines
from edl_solver.channel.rectification import rectification_ratio
from tests.helpers import assert_png, run

CONE = ["--capillary", "5nm", "--ion", "K+=10mM", "--ion", "Cl-=10mM", "--charge-density", "-20mC/m^2",
        "--length", "1um"]


@pytest.fixture(scope="module")
def cone_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, int, str, str]:
    folder = tmp_path_factory.mktemp("cone")
    argv = ["transport", *CONE, "--size", "5nm:40nm", "--iv", "-300mV:300mV:7", "--rectification",
            "--iv-figure", str(folder / "iv.png"), "-o", str(folder / "out.h5")]
    return (folder, *run(argv))


def test_size_makes_a_cone_whose_rectification_is_printed_and_stored(cone_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = cone_run
    assert code == 0, err
    assert "tapered channel" in out and "radius 5 nm at x = 0 to 40 nm at x = L, linear" in out
    assert "interpolation error" in out
    assert "rectification |I(+V)/I(-V)|" in out
    data = xr.open_dataset(folder / "out.h5", engine="h5netcdf", group="channel")
    assert list(data["voltage_magnitude"].values) == pytest.approx([0.1, 0.2, 0.3])
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=edl.Electrolyte(
        ions=[edl.Ion("K+", concentration="10 mM"), edl.Ion("Cl-", concentration="10 mM")]),
        wall=edl.Wall(charge_density="-20 mC/m^2"))
    cone = Channel(case, "1 um", "10 mM", "10 mM", size=("5 nm", "40 nm"))
    assert data["rectification"].values == pytest.approx(rectification_ratio(cone, [0.1, 0.2, 0.3]), rel=1e-9)
    assert np.all(data["rectification"].values != 1.0)  # a charged cone is not mirror-symmetric
    assert list(data.attrs["size_sizes"]) == pytest.approx([5e-9, 40e-9])
    assert_png(folder / "iv.png")


@pytest.mark.parametrize(("flags", "parts"), [
    (["--size", "5nm:40nm"], ["--size", "needs --length"]),
    (["--length", "1um", "--size", "5nm"], ["--size", "'5nm'", "A:B"]),
    (["--length", "1um", "--size", "5nm:-4nm"], ["--size", "'5nm:-4nm'", "positive"]),
    (["--length", "1um", "--iv", "-1V:-0.1V:3", "--rectification"], ["--rectification", "positive voltages"]),
    (["--length", "1um", "--rectification"], ["--rectification", "--iv"]),
])
def test_bad_size_or_rectification_exit_2_with_one_line(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                        flags: list[str], parts: list[str]) -> None:
    monkeypatch.chdir(tmp_path)
    code, out, err = run(["transport", *CONE[:-2], *flags, "-o", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == "" and list(tmp_path.iterdir()) == []


def test_a_device_of_cones_names_their_sizes_not_the_case_radius() -> None:
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=edl.Electrolyte(
        ions=[edl.Ion("K+", concentration="10 mM"), edl.Ion("Cl-", concentration="10 mM")]),
        wall=edl.Wall(charge_density="-20 mC/m^2"))
    text = device_lines(Device(Channel(case, "1 um", "10 mM", "10 mM", size=("20 nm", "40 nm")), 3), 0.0, 0.0)
    first = text.splitlines()[0]
    assert "radius 20 nm at x = 0 to 40 nm at x = L" in first, first
    assert "5 nm" not in first, first
