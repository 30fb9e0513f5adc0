"""``edl transport CASE.toml`` with a [channel] section (issue 15): the section makes the channel Python makes, each
flag replaces its key, bad input exits 2 with one line and no file, and the channel group holds each end's access
resistance (against the closed forms of channel/access.py) and the wall segments."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.channel import Channel, current_voltage
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.inputs.casefile import load_case
from tests.helpers import ROOT, assert_png, run, write

CAPILLARY = """\
[geometry]
kind = "capillary"
radius = "5 nm"

[electrolyte]
ions = { "K+" = "10 mM", "Cl-" = "10 mM" }

[wall]
charge_density = "-20 mC/m^2"
"""

#: A small cone with two wall segments: a coarse table (8 x 4), three voltages; seconds.
CONE = CAPILLARY + """
[channel]
length = "1 um"
size = ["5 nm", "20 nm"]
access_resistance = true
points = 8
size_points = 4
iv = { start = "-0.2 V", stop = "0.2 V", count = 3 }
rectification = true

[[channel.wall_segments]]
x_end = "0.4 um"
charge_density = "-20 mC/m^2"

[[channel.wall_segments]]
x_end = "1 um"
charge_density = "-5 mC/m^2"
"""

#: A uniform channel between equal reservoirs: solved in one cross-section solve.
UNIFORM = CAPILLARY + """
[channel]
length = "2 um"
access_resistance = true
iv = { start = "-0.1 V", stop = "0.1 V", count = 3 }
"""


def conductivity(case: edl.Case, salt: float) -> float:
    """K = F^2/(RT) sum z_i^2 D_i c_i of the case's ions at the first ion's concentration ``salt``, S/m
    (Nernst-Einstein, dilute; from memory)."""
    scale = salt / case.electrolyte.ions[0].concentration
    rt = GAS_CONSTANT * case.solvent.temperature
    return FARADAY ** 2 / rt * sum(ion.valence ** 2 * ion.diffusivity * ion.concentration * scale
                                   for ion in case.electrolyte.ions)


@pytest.fixture(scope="module")
def cone_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, int, str, str]:
    folder = tmp_path_factory.mktemp("cone")
    path = write(folder, CONE)
    return (folder, *run(["transport", str(path), "-o", str(folder / "cone.h5"),
                          "--iv-figure", str(folder / "cone.png")]))


def test_the_section_makes_the_channel_python_makes(cone_run: tuple[Path, int, str, str]) -> None:
    folder, code, _out, err = cone_run
    assert code == 0, err
    data = xr.open_dataset(folder / "cone.h5", engine="h5netcdf", group="channel")
    case = load_case(folder / "case.toml")
    cone = Channel(case, "1 um", "10 mM", "10 mM", access_resistance=True, points=8, size_points=4,
                   size=("5 nm", "20 nm"), wall_segments=[("0.4 um", edl.Wall(charge_density="-20 mC/m^2")),
                                                          ("1 um", edl.Wall(charge_density="-5 mC/m^2"))])
    direct = current_voltage(cone, [-0.2, 0.0, 0.2])
    assert list(data["voltage"].values) == pytest.approx([-0.2, 0.0, 0.2])
    assert data["current"].values == pytest.approx(direct["current"].values, rel=1e-9)
    assert list(data["voltage_magnitude"].values) == pytest.approx([0.2])
    assert list(data.attrs["size_sizes"]) == pytest.approx([5e-9, 20e-9])
    assert_png(folder / "cone.png")


def test_each_end_access_resistance_is_halls_at_that_end(cone_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = cone_run
    assert code == 0, err
    data = xr.open_dataset(folder / "cone.h5", engine="h5netcdf", group="channel")
    case = load_case(folder / "case.toml")
    kappa = conductivity(case, 10.0)
    # Hall 1975 (J. Gen. Physiol. 66, 531; from memory): R = 1/(4 K a) per end, a the radius of that opening.
    expected = [1.0 / (4.0 * kappa * 5e-9), 1.0 / (4.0 * kappa * 20e-9)]
    assert list(data["end"].values) == ["left", "right"]
    assert data["end_access_resistance"].values == pytest.approx(expected, rel=1e-6)
    assert data["end_access_resistance"].attrs["units"] == "ohm"
    assert data["end_size"].values == pytest.approx([5e-9, 20e-9])
    assert data["end_access_resistance"].values.sum() == pytest.approx(data.attrs["access_resistance"], rel=1e-12)
    assert "access resistance of the left (x = 0) end" in out and "access resistance of the right (x = L) end" in out
    assert "(radius 5 nm, reservoir 10 mM)" in out and "(radius 20 nm, reservoir 10 mM)" in out
    assert "Device:" not in out  # the file's access resistance is the channel's; the device block needs its flags


def test_the_wall_segments_are_in_the_group_and_the_report(cone_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = cone_run
    assert code == 0, err
    data = xr.open_dataset(folder / "cone.h5", engine="h5netcdf", group="channel")
    assert data["wall_segment_start"].values == pytest.approx([0.0, 0.4e-6])
    assert data["wall_segment_end"].values == pytest.approx([0.4e-6, 1e-6])
    assert data["wall_segment_charge_density"].values == pytest.approx([-0.02, -0.005])
    assert data["wall_segment_charge_density"].attrs["units"] == "C/m^2"
    assert list(data["wall_segment_wall"].values) == ["charge density -20 mC/m^2", "charge density -5 mC/m^2"]
    assert "wall along x" in out and "from x = 0 to 400 nm: charge density -20 mC/m^2" in out
    assert "from 400 nm to 1 µm: charge density -5 mC/m^2" in out


def test_a_slit_pair_of_walls_and_its_width_come_from_the_file(tmp_path: Path) -> None:
    text = """\
[geometry]
kind = "slit"
height = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall.bottom]
zeta = "-40 mV"

[wall.top]
zeta = "-20 mV"

[channel]
length = "1 um"
width = "1 um"
access_resistance = true

[[channel.wall_segments]]
x_end = "1 um"
bottom = { zeta = "-40 mV" }
top = { zeta = "-20 mV" }
"""
    path = write(tmp_path, text)
    code, _out, err = run(["transport", str(path), "-o", str(tmp_path / "slit.h5")])
    assert code == 0, err
    data = xr.open_dataset(tmp_path / "slit.h5", engine="h5netcdf", group="channel")
    assert data["wall_segment_zeta"].shape == (1, 2)
    assert data["wall_segment_zeta"].values[0] == pytest.approx([-0.04, -0.02])
    assert data["wall_segment_zeta"].dims == ("wall_segment", "wall")
    assert list(data["wall"].values) == ["bottom", "top"]
    # The strip's access resistance (channel/access.py: (ln(8 W/H) - 1)/(pi K W), from memory), times W per width.
    kappa = conductivity(load_case(path), 1.0)
    expected = (math.log(8.0 * 1e-6 / 20e-9) - 1.0) / (math.pi * kappa * 1e-6) * 1e-6
    assert data["end_access_resistance"].values == pytest.approx([expected, expected], rel=1e-6)
    assert data["end_access_resistance"].attrs["units"] == "ohm m"


@pytest.mark.parametrize(("flags", "check"), [
    ([], lambda d: (d.attrs["length"] == pytest.approx(2e-6) and list(d["voltage"].values) == pytest.approx(
        [-0.1, 0.0, 0.1]) and "end_access_resistance" in d)),
    (["--length", "3um"], lambda d: d.attrs["length"] == pytest.approx(3e-6)),
    (["--iv", "-50mV:50mV:5"], lambda d: list(d["voltage"].values) == pytest.approx(np.linspace(-0.05, 0.05, 5))),
    (["--access-resistance", "off"], lambda d: "end_access_resistance" not in d and d.attrs["access_resistance"] == 0),
    (["--left", "5mM", "--right", "20mM"], lambda d: (d.attrs["left_concentration"], d.attrs["right_concentration"])
     == pytest.approx((5.0, 20.0))),
    (["--size", "5nm:10nm"], lambda d: list(d.attrs["size_sizes"]) == pytest.approx([5e-9, 10e-9])),
])
def test_a_flag_replaces_its_key(tmp_path: Path, flags: list[str], check) -> None:
    path = write(tmp_path, UNIFORM.replace("[channel]\n", "[channel]\npoints = 8\nsize_points = 4\n"))
    code, _out, err = run(["transport", str(path), *flags, "-o", str(tmp_path / "out.h5")])
    assert code == 0, err
    data = xr.open_dataset(tmp_path / "out.h5", engine="h5netcdf", group="channel")
    assert check(data), data


def test_a_rectification_flag_takes_the_file_curve(tmp_path: Path) -> None:
    path = write(tmp_path, UNIFORM)
    code, _out, err = run(["transport", str(path), "--rectification", "-o", str(tmp_path / "out.h5")])
    assert code == 0, err
    data = xr.open_dataset(tmp_path / "out.h5", engine="h5netcdf", group="channel")
    # A uniform channel between equal reservoirs is mirror-symmetric: no rectification (common practice).
    assert data["rectification"].values == pytest.approx([1.0], rel=1e-6)


@pytest.mark.parametrize(("section", "flags", "parts"), [
    ('length = "1 um"\nlenght = 2', [], ["case.toml: unknown key 'channel.lenght'", "did you mean 'channel.length'"]),
    ('length = "1 um"\nsize = ["5 nm", "-1 nm"]', [], ["case.toml: channel.size[1]: '-1 nm'"]),
    ('length = "1 um"\nsize = { csv = "none.csv" }', [], ["case.toml: channel.size.csv", "none.csv", "not found"]),
    ('length = "1 um"\nrectification = true', [], ["case.toml: channel.rectification: true without an I-V curve"]),
    ('length = "1 um"\npoints = 4', [], ["case.toml: channel.points: 4", "from 8 to 400"]),
    ('length = "1 um"\n[[channel.wall_segments]]\nx_end = "0.5 um"\ncharge_density = 0.01', [],
     ["case.toml: channel.wall_segments[0].x_end", "the channel's length"]),
    ('length = "1 um"\n[[channel.wall_segments]]\nx_end = "1 um"\nzeta = "10 mV"', [],
     ["case.toml: channel.wall_segments[0]", "the case's kind"]),
    ('length = "1 um"', ["--size", "5nm"], ["--size: '5nm'", "A:B"]),
    ('length = "1 um"\niv = { start = "-1 V", stop = "1 V", count = 3 }', ["--iv", "1V"], ["--iv: '1V'"]),
])
def test_bad_input_exits_2_with_one_line_and_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch, section: str,
                                                     flags: list[str], parts: list[str]) -> None:
    monkeypatch.chdir(tmp_path)
    write(tmp_path, CAPILLARY + "\n[channel]\n" + section + "\n")
    before = sorted(tmp_path.iterdir())
    code, out, err = run(["transport", "case.toml", *flags, "-o", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == "" and sorted(tmp_path.iterdir()) == before


def test_a_slit_with_access_resistance_and_no_width_names_the_file(tmp_path: Path,
                                                                   monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    write(tmp_path, CAPILLARY.replace('kind = "capillary"\nradius = "5 nm"', 'kind = "slit"\nheight = "20 nm"')
          + '\n[channel]\nlength = "1 um"\naccess_resistance = true\n')
    code, out, err = run(["transport", "case.toml", "-o", "result.h5"])
    assert code == 2 and err.count("\n") == 1, err
    assert "case.toml: channel.access_resistance: True for a slit without a width" in err, err
    assert out == "" and not (tmp_path / "result.h5").exists()


def test_a_wall_profile_and_the_table_settings_go_to_the_channel(tmp_path: Path,
                                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    """[channel] wall_profile, wall_points and concentration_span reach the Channel: the run's HDF5 group gives the
    profile's rows and the span, and the currents equal those of the same Channel built in Python (same
    equations, same table)."""
    monkeypatch.chdir(tmp_path)
    write(tmp_path, CAPILLARY + '\n[channel]\nlength = "1 um"\nwall_points = 5\nconcentration_span = 100\n'
          'iv = { start = "-0.1 V", stop = "0.1 V", count = 3 }\n'
          'wall_profile = { position = ["0 um", "1 um"], value = ["-20 mC/m^2", "-5 mC/m^2"] }\n')
    code, _out, err = run(["transport", "case.toml", "-o", "result.h5"])
    assert code == 0, err
    data = xr.open_dataset(tmp_path / "result.h5", engine="h5netcdf", group="channel")
    assert data.attrs["wall_profile_value"] == pytest.approx([-0.020, -0.005])
    assert data.attrs["concentration_span"] == 100.0
    case = load_case(tmp_path / "case.toml")
    first = case.electrolyte.ions[0].concentration
    channel = Channel(case, "1 um", first, first, wall_points=5, concentration_span=100,
                      wall_profile={"position": [0.0, 1e-6], "value": [-0.020, -0.005]})
    expected = current_voltage(channel, [-0.1, 0.0, 0.1])["current"].values
    np.testing.assert_allclose(data["current"].values, expected, rtol=1e-9)
    write(tmp_path, CAPILLARY + '\n[channel]\nlength = "1 um"\nconcentration_span = "big"\n')
    code, _out, err = run(["transport", "case.toml", "-o", "bad.h5"])
    assert code == 2 and "channel.concentration_span" in err and len(err.strip().splitlines()) == 1, err
    assert not (tmp_path / "bad.h5").exists()


def test_the_example_conical_pore_runs_and_rectifies(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    code, _out, err = run(["transport", str(ROOT / "examples" / "conical_pore.toml"), "-o", "pore.h5",
                          "--iv-figure", "pore.png", "--iv", "-1V:1V:5"])
    assert code == 0, err
    data = xr.open_dataset(tmp_path / "pore.h5", engine="h5netcdf", group="channel")
    assert (data["status"].values == 0).all()
    # A negative cone passes more current from tip to base (Delta V < 0; README "Direction of rectification";
    # Vlassiouk, Smirnov & Siwy 2008, from memory): the ratio is below 1.
    assert np.all(data["rectification"].values < 1.0)
    assert data["end_size"].values == pytest.approx([10e-9, 200e-9])
    assert_png(tmp_path / "pore.png")
