"""The [channel] section of a case file (issue 15): every key, the size as a pair, a table and a CSV file with units,
the wall segments as [wall] writes them (one wall and a slit's pair), the errors (one line naming the file, the
dotted key and the value) and the round trips (the case without the section; the Channel the section makes)."""

from __future__ import annotations

import re

import pytest

import edl_solver as edl
from edl_solver.channel import Channel
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import case_to_mapping, dumps_case, load_case, loads_case
from edl_solver.inputs.channel_spec import channel_from_mapping, read_channel_spec
from tests.helpers import write

CAPILLARY = """\
[geometry]
kind = "capillary"
radius = "10 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
charge_density = "-10 mC/m^2"
"""

SLIT_PAIR = """\
[geometry]
kind = "slit"
height = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall.bottom]
zeta = "-40 mV"

[wall.top]
zeta = "-20 mV"
"""

FULL = CAPILLARY + """
[channel]
length = "5 um"
left = "0.5 mM"
right = "2 mM"
size = ["10 nm", "200 nm"]
access_resistance = true
points = 16
size_points = 6
iv = { start = "-1 V", stop = "1 V", count = 5 }
rectification = true

[[channel.wall_segments]]
x_end = "2.5 um"
charge_density = "-10 mC/m^2"

[[channel.wall_segments]]
x_end = "5 um"
charge_density = "10 mC/m^2"
"""


def capillary() -> edl.Case:
    return loads_case(CAPILLARY)


def spec_of(channel: dict, case: edl.Case | None = None, folder: str = "."):
    return channel_from_mapping({"channel": channel}, case or capillary(), folder=folder)


def test_every_key_is_read_and_makes_the_channel_python_makes(tmp_path) -> None:
    path = write(tmp_path, FULL)
    case = load_case(path)  # the case reader leaves [channel] alone
    assert case == capillary()
    spec = read_channel_spec(path, case)
    assert spec.length == pytest.approx(5e-6)
    assert (spec.left, spec.right) == pytest.approx((0.5, 2.0))
    assert spec.size == pytest.approx((10e-9, 200e-9))
    assert spec.access_resistance is True and spec.rectification is True
    assert (spec.points, spec.size_points) == (16, 6)
    assert spec.voltages == pytest.approx([-1.0, -0.5, 0.0, 0.5, 1.0])
    assert [end for end, _ in spec.wall_segments] == pytest.approx([2.5e-6, 5e-6])
    assert [wall for _, wall in spec.wall_segments] == [edl.Wall(charge_density="-10 mC/m^2"),
                                                        edl.Wall(charge_density="10 mC/m^2")]
    made = Channel(case, **spec.channel_kwargs(case))
    direct = Channel(case, "5 um", "0.5 mM", "2 mM", access_resistance=True, points=16, size_points=6,
                     size=("10 nm", "200 nm"), wall_segments=[("2.5 um", edl.Wall(charge_density="-10 mC/m^2")),
                                                              ("5 um", edl.Wall(charge_density="10 mC/m^2"))])
    assert made == direct


def test_reservoirs_default_to_the_case_and_unset_keys_stay_out_of_the_channel() -> None:
    spec = spec_of({"length": "1 um"})
    assert spec.channel_kwargs(capillary()) == {"length": 1e-6, "left_concentration": 1.0, "right_concentration": 1.0}
    assert spec.voltages is None and spec.size is None and spec.wall_segments is None


def test_the_size_as_a_table_is_in_metres() -> None:
    spec = spec_of({"length": "2 um", "size": {"position": ["0 um", "1 um", "2 um"], "size": ["10 nm", 5e-9, "10 nm"]}})
    assert spec.size["position"] == pytest.approx([0.0, 1e-6, 2e-6])
    assert spec.size["size"] == pytest.approx([10e-9, 5e-9, 10e-9])
    shape = Channel(capillary(), **spec.channel_kwargs(capillary())).size
    assert shape.sizes == pytest.approx((10e-9, 5e-9, 10e-9))


def test_the_size_from_a_csv_file_takes_the_units_of_its_header(tmp_path) -> None:
    (tmp_path / "shapes").mkdir()
    write(tmp_path / "shapes", name="cone.csv",
          text="# an hourglass\nposition [um]; radius [nm]\n0; 20\n\n1.5; 8\n3; 0.02e3\n")
    spec = spec_of({"length": "3 um", "size": {"csv": "shapes/cone.csv"}}, folder=tmp_path)
    assert spec.size["position"] == pytest.approx([0.0, 1.5e-6, 3e-6], rel=1e-12)
    assert spec.size["position"][-1] == 3e-6  # the last row is the length exactly
    assert spec.size["size"] == pytest.approx([20e-9, 8e-9, 20e-9], rel=1e-12)
    write(tmp_path, name="slit.csv", text="position [mm],size [um]\n0,0.02\n0.003,0.01\n")
    slit = loads_case(SLIT_PAIR)
    spec = spec_of({"length": "3 um", "size": {"csv": "slit.csv"}}, slit, folder=tmp_path)
    assert spec.size["size"] == pytest.approx([20e-9, 10e-9], rel=1e-12)


def test_wall_segments_of_a_slit_with_two_walls_take_the_pair_form() -> None:
    slit = loads_case(SLIT_PAIR)
    spec = spec_of({"length": "1 um", "wall_segments": [
        {"x_end": "0.4 um", "bottom": {"zeta": "-40 mV"}, "top": {"zeta": "-20 mV"}},
        {"x_end": "1 um", "bottom": {"zeta": "40 mV"}, "top": {"zeta": "20 mV"}}]}, slit)
    assert spec.wall_segments[1][1] == (edl.Wall(zeta="40 mV"), edl.Wall(zeta="20 mV"))
    assert Channel(slit, **spec.channel_kwargs(slit)).wall_segments.ends == pytest.approx((0.4e-6, 1e-6))


def test_a_regulated_wall_segment_reads_sites_and_presets() -> None:
    case = capillary()
    spec = spec_of({"length": "1 um", "wall_segments": [{"x_end": "1 um", "preset": "silica"}]}, case)
    assert spec.wall_segments[0][1] == edl.Wall.silica()


@pytest.mark.parametrize(("channel", "parts"), [
    ({"length": "1 um", "lenght": 1}, ["unknown key 'channel.lenght'", "did you mean 'channel.length'"]),
    ({"size": ["1 nm", "2 nm"]}, ["channel.length: missing"]),
    ({"length": "-1 um"}, ["channel.length", "'-1 um'"]),
    ({"length": "1 um", "left": "1 mM"}, ["channel.left: given without channel.right"]),
    ({"length": "1 um", "left": "1 mM", "right": "0 mM"}, ["channel.right", "'0 mM'"]),
    ({"length": "1 um", "left": "1 mM", "right": "1 m"}, ["channel.right", "'1 m'"]),
    ({"length": "1 um", "access_resistance": "yes"}, ["channel.access_resistance: 'yes'", "true or false"]),
    ({"length": "1 um", "rectification": 1}, ["channel.rectification: 1", "true or false"]),
    ({"length": "1 um", "width": "10 um"}, ["channel.width: '10 um' for a capillary"]),
    ({"length": "1 um", "points": 3.5}, ["channel.points: 3.5", "whole number"]),
    ({"length": "1 um", "size_points": True}, ["channel.size_points: True"]),
    ({"length": "1 um", "iv": "-1V:1V:3"}, ["channel.iv: '-1V:1V:3' is not a table", "start"]),
    ({"length": "1 um", "iv": {"start": "-1 V", "stop": "1 V", "cont": 3}}, ["unknown key 'channel.iv.cont'",
                                                                          "did you mean 'channel.iv.count'"]),
    ({"length": "1 um", "iv": {"start": "-1 V", "stop": "1 V"}}, ["channel.iv.count: missing"]),
    ({"length": "1 um", "iv": {"start": "1 V", "stop": "1 V", "count": 3}}, ["channel.iv.stop", "different"]),
    ({"length": "1 um", "iv": {"start": "-1 V", "stop": "1 m", "count": 3}}, ["channel.iv.stop", "'1 m'"]),
    ({"length": "1 um", "iv": {"start": "-1 V", "stop": "1 V", "count": 1}}, ["channel.iv.count: 1", "2 to 1000"]),
    ({"length": "1 um", "iv": {"start": "-1 V", "stop": "-0.1 V", "count": 3}, "rectification": True},
     ["channel.rectification", "positive voltages"]),
    ({"length": "1 um", "size": "10 nm"}, ["channel.size: '10 nm'", "a pair"]),
    ({"length": "1 um", "size": ["10 nm", "-2 nm"]}, ["channel.size[1]: '-2 nm'"]),
    ({"length": "1 um", "size": ["10 nm", "2 nm", "3 nm"]}, ["channel.size", "a pair"]),
    ({"length": "1 um", "size": {"position": [0, 1e-6], "radius": [1e-8, 2e-8]}},
     ["unknown key 'channel.size.radius'"]),
    ({"length": "1 um", "size": {"position": [0, 1e-6], "size": [1e-8]}}, ["channel.size.size", "at least two"]),
    ({"length": "1 um", "size": {"position": [0, 0.5e-6, 1e-6], "size": [1e-8, 2e-8]}},
     ["channel.size.size: 2 sizes for 3 positions"]),
    ({"length": "1 um", "size": {"position": [0, 2e-6], "size": [1e-8, 2e-8]}},
     ["channel.size.position", "from 0 to the length"]),
    ({"length": "1 um", "size": {"position": ["0 um", "1 V"], "size": [1e-8, 2e-8]}},
     ["channel.size.position[1]", "'1 V'"]),
    ({"length": "1 um", "size": {"csv": "a.csv", "size": [1]}}, ["channel.size.size: given beside csv"]),
    ({"length": "1 um", "size": {"csv": 3}}, ["channel.size.csv: 3 is not a file name"]),
    ({"length": "1 um", "size": {"csv": "missing.csv"}}, ["channel.size.csv", "missing.csv", "not found"]),
    ({"length": "1 um", "wall_segments": "bipolar"}, ["channel.wall_segments: 'bipolar'", "[[channel.wall_segments]]"]),
    ({"length": "1 um", "wall_segments": [{"zeta": "1 mV"}]}, ["channel.wall_segments[0].x_end: missing"]),
    ({"length": "1 um", "wall_segments": [{"x_end": "1 um", "charge": 1}]},
     ["unknown key 'channel.wall_segments[0].charge'"]),
    ({"length": "1 um", "wall_segments": [{"x_end": "1 um", "charge_density": "1 mV"}]},
     ["channel.wall_segments[0].charge_density", "'1 mV'"]),
    ({"length": "1 um", "wall_segments": [{"x_end": "1 um", "preset": "silca"}]},
     ["channel.wall_segments[0].preset: 'silca'", "did you mean 'silica'"]),
    ({"length": "1 um", "wall_segments": [{"x_end": "1 um", "bottom": {"zeta": 0.01}, "top": {"zeta": 0.01}}]},
     ["channel.wall_segments[0].bottom: a capillary has one wall"]),
    ({"length": "1 um", "wall_segments": [{"x_end": "1 s", "zeta": 0.01}]},
     ["channel.wall_segments[0].x_end", "'1 s'"]),
    ({"length": "1 um", "wall_profile": [1, 2]}, ["channel.wall_profile: [1, 2]", "position", "value"]),
])
def test_bad_keys_are_one_line_naming_the_file_and_the_key(tmp_path, channel: dict, parts: list[str]) -> None:
    with pytest.raises(InputError) as error:
        channel_from_mapping({"channel": channel}, capillary(), source="pore.toml", folder=tmp_path)
    message = str(error.value)
    assert "\n" not in message and message.startswith("pore.toml: ")
    for part in parts:
        assert part in message, message


@pytest.mark.parametrize(("text", "parts"), [
    ("position, radius\n0, 1\n1, 2\n", ["line 1", "units in brackets"]),
    ("position [um], radius\n0, 1\n1, 2\n", ["line 1", "units in brackets"]),
    ("x [um], radius [nm]\n0, 1\n1, 2\n", ["line 1", "'x'", "'position'"]),
    ("position [um], height [nm]\n0, 1\n1, 2\n", ["line 1", "'height'", "'radius' or 'size'"]),
    ("position [um], radius [mV]\n0, 1\n1, 2\n", ["line 1", "'mV'", "not a length"]),
    ("position [um], radius [nm], note\n0, 1\n1, 2\n", ["line 1", "3 fields"]),
    ("position [um], radius [nm]\n0, 1\n1, two\n", ["line 3", "'1, two'", "finite numbers"]),
    ("position [um], radius [nm]\n0, 1\n1, nan\n", ["line 3", "finite numbers"]),
    ("position [um], radius [nm]\n0, 1\n", ["1 row(s) of data", "at least two rows"]),
    ("position [um], radius [nm]\n0, 1\n0.5, 3\n", ["positions: [0.0, 5e-07] m", "from 0 to the length"]),
    ("position [um], radius [nm]\n0, 1\n1, 0\n", ["sizes[1]: 0.0 m", "positive"]),
])
def test_bad_csv_files_are_one_line_naming_the_file_and_the_line(tmp_path, text: str, parts: list[str]) -> None:
    write(tmp_path, name="shape.csv", text=text)
    with pytest.raises(InputError) as error:
        channel_from_mapping({"channel": {"length": "1 um", "size": {"csv": "shape.csv"}}}, capillary(),
                             source="pore.toml", folder=tmp_path)
    message = str(error.value)
    assert "\n" not in message and message.startswith("pore.toml: channel.size.csv: ")
    assert "shape.csv" in message
    for part in parts:
        assert part in message, message


def test_a_case_file_with_a_channel_section_round_trips_without_it(tmp_path) -> None:
    path = write(tmp_path, FULL)
    case = load_case(path)
    written = dumps_case(case)
    assert "[channel]" not in written  # the section is not part of the Case, as [transient] is not
    assert loads_case(written) == case
    assert case_to_mapping(loads_case(written)) == case_to_mapping(case)


def test_the_demo_case_file_still_round_trips() -> None:
    from edl_solver.cli.demo import DEMO_TOML, demo_case

    assert loads_case(dumps_case(demo_case())) == demo_case()
    assert loads_case(DEMO_TOML + '\n[channel]\nlength = "1 um"\n') == demo_case()


def test_a_misspelt_section_name_is_refused_with_a_hint() -> None:
    with pytest.raises(InputError, match=re.escape("unknown key 'chanel' (did you mean 'channel'?)")):
        loads_case(CAPILLARY + '\n[chanel]\nlength = "1 um"\n')


def test_a_wall_profile_is_read_as_given_inline_or_from_csv(tmp_path) -> None:
    inline = {"position": ["0 um", "1 um"], "value": ["-20 mC/m^2", "-5 mC/m^2"]}
    assert spec_of({"length": "1 um", "wall_profile": inline}).wall_profile == inline
    write(tmp_path, name="charge.csv", text="position [um], charge_density [mC/m^2]\n0, -20\n1, -5\n")
    spec = spec_of({"length": "1 um", "wall_profile": {"csv": "charge.csv"}}, folder=tmp_path)
    assert spec.wall_profile["position"] == pytest.approx([0.0, 1e-6])
    assert spec.wall_profile["value"] == ["-20.0 mC/m^2", "-5.0 mC/m^2"]  # the header's unit, for Channel to check
