"""``edl transport --rectification-curve C1:C2:N``: the rectification of a cone against concentration in the
report, the HDF5 group "rectification" and --rectification-figure. Behaviour only: the ratios themselves are
tested in tests/channel/test_rectification_curve.py."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.channel import Channel, rectification_curve
from tests.helpers import assert_png, run

CONE = ["--capillary", "5nm", "--ion", "K+=10mM", "--ion", "Cl-=10mM", "--charge-density", "-20mC/m^2"]


@pytest.fixture(scope="module")
def curve_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, int, str, str]:
    folder = tmp_path_factory.mktemp("curve")
    argv = ["transport", *CONE, "--length", "1um", "--size", "5nm:40nm", "--rectification-voltage", "300mV",
            "--rectification-curve", "1mM:100mM:3", "--rectification-figure", str(folder / "curve.png"),
            "-o", str(folder / "out.h5")]
    return (folder, *run(argv))


def test_the_curve_is_printed_stored_and_drawn(
        curve_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = curve_run
    assert code == 0, err
    assert "rectification |I(+V)/I(-V)| against concentration at |V| = 0.3 V" in out
    assert "below 1: more current with the left reservoir (x = 0, the tip) positive" in out
    data = xr.open_dataset(folder / "out.h5", engine="h5netcdf", group="rectification")
    assert list(data["concentration"].values) == pytest.approx([1.0, 10.0, 100.0])
    assert data.attrs["voltage"] == pytest.approx(0.3)
    assert data["rectification"].attrs["units"] == "1" and data["kappa_a_tip"].attrs["units"] == "1"
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=edl.Electrolyte(
        ions=[edl.Ion("K+", concentration="10 mM"), edl.Ion("Cl-", concentration="10 mM")]),
        wall=edl.Wall(charge_density="-20 mC/m^2"))
    want = rectification_curve(Channel(case, "1 um", "10 mM", "10 mM", size=("5 nm", "40 nm")), [1.0, 10.0, 100.0],
                               0.3)
    np.testing.assert_allclose(data["rectification"].values, want["rectification"].values, rtol=1e-9)
    assert list(data["status"].values) == [0, 0, 0] and np.all(data["rectification"].values < 1.0)
    assert {"channel", "rectification"} <= set(xr.open_datatree(folder / "out.h5", engine="h5netcdf").children)
    assert_png(folder / "curve.png")


def test_without_rectification_voltage_the_curve_is_at_the_largest_voltage_of_iv(tmp_path: Path) -> None:
    code, out, err = run(["transport", *CONE, "--length", "1um", "--size", "5nm:40nm", "--iv", "-100mV:50mV:2",
                          "--rectification-curve", "10mM:30mM:2", "-o", str(tmp_path / "out.h5")])
    assert code == 0, err
    assert "at |V| = 0.1 V" in out
    data = xr.open_dataset(tmp_path / "out.h5", engine="h5netcdf", group="rectification")
    assert data.attrs["voltage"] == pytest.approx(0.1)


@pytest.mark.parametrize(("flags", "parts"), [
    (["--rectification-figure", "c.png"], ["--rectification-figure", "needs --rectification-curve"]),
    (["--rectification-voltage", "1V"], ["--rectification-voltage", "needs --rectification-curve"]),
    (["--rectification-curve", "1mM:10mM:3"], ["--rectification-curve", "needs --length"]),
    (["--length", "1um", "--rectification-curve", "1mM:10mM:3"], ["--rectification-curve", "needs --size"]),
    (["--length", "1um", "--size", "5nm:40nm", "--rectification-curve", "1mM:10mM"],
     ["--rectification-curve", "'1mM:10mM'", "FROM:TO:N"]),
    (["--length", "1um", "--size", "5nm:40nm", "--rectification-curve", "0mM:10mM:3", "--iv", "-1V:1V:3"],
     ["--rectification-curve", "'0mM:10mM:3'", "above zero"]),
    (["--length", "1um", "--size", "5nm:40nm", "--rectification-curve", "1mM:10mM:3"],
     ["--rectification-curve", "--rectification-voltage V or --iv"]),
    (["--length", "1um", "--size", "5nm:40nm", "--rectification-curve", "1mM:10mM:3", "--rectification-voltage",
      "-1V"], ["--rectification-voltage", "'-1V'", "positive voltage magnitude"]),
    (["--length", "1um", "--size", "5nm:40nm", "--rectification-curve", "1mM:10mM:3", "--rectification-voltage",
      "1V", "--rectification-figure", "result.h5"], ["--rectification-figure", "also the file of -o"]),
])
def test_bad_rectification_flags_exit_2_with_one_line_and_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                                  flags: list[str], parts: list[str]) -> None:
    monkeypatch.chdir(tmp_path)
    code, out, err = run(["transport", *CONE, *flags, "-o", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == "" and list(tmp_path.iterdir()) == []
