"""Time-dependent drives (issue 14): the signals, their units per target, the checks of bind, CSV tables and the
round trip through plain mappings and JSON.

Every expected value is computed by hand from the signal's definition (common practice).
"""

from __future__ import annotations

import json
import math
import re

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.drive_signals import MAX_PERIODS
from edl_solver.inputs.drives import Drive, bind, drive_targets, drives_from_json, drives_json
from tests.helpers import KCL, write

SLIT = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"))
CHARGED = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL,
                   wall=(edl.Wall(charge_density="-2 mC/m^2"),
                         edl.Wall(charge_density="-1 mC/m^2", gate_voltage="0.1 V", gate_capacitance="10 mF/m^2")))
TUBE = edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-30 mV"))


def one(target: str, drive: Drive, case: edl.Case = SLIT):
    (bound,) = bind({target: drive}, case)
    return bound


# -- values of each kind at chosen times ------------------------------------------------------------------------


def test_sine_values() -> None:
    # 1 kV/m + 10 kV/m sin(2 pi 1 MHz t + pi/2): cos, so 11 kV/m at 0, 1 kV/m at T/4, -9 kV/m at T/2.
    bound = one("field", Drive.sine("10 kV/m", "1 MHz", offset="1 kV/m", phase=math.pi / 2))
    assert bound.kind == "sine" and bound.sine == (1e3, 1e4, 1e6, math.pi / 2)
    assert bound.value([1e-12, 0.25e-6, 0.5e-6]) == pytest.approx([11e3, 1e3, -9e3], abs=1e-6)
    assert isinstance(bound.value(0.5e-6), float)
    assert bound.breakpoints(1e-5).size == 0
    with pytest.raises(ValueError, match="sine"):
        bound.piecewise(1e-5)


def test_square_values_edges_and_points() -> None:
    # 1 +- 2 at 1 kHz, duty 1/4, from 0.5 ms: 1 before, 3 on [0.5, 0.75) ms, -1 on [0.75, 1.5) ms, 3 again...
    bound = one("field", Drive.square(2, "1 kHz", offset=1, duty=0.25, delay="0.5 ms"))
    t = np.array([0.4, 0.5, 0.6, 0.75, 1.4, 1.5, 1.76]) * 1e-3
    assert bound.value(t).tolist() == [1, 3, 3, -1, -1, 3, -1]
    assert bound.breakpoints(2e-3) == pytest.approx(np.array([0.5, 0.75, 1.5, 1.75]) * 1e-3)
    times, values = bound.piecewise(2e-3)
    assert times == pytest.approx(np.array([0, 0.5, 0.5, 0.75, 0.75, 1.5, 1.5, 1.75, 1.75, 2]) * 1e-3)
    assert values.tolist() == [1, 1, 3, 3, -1, -1, 3, 3, -1, -1]
    times, values = bound.piecewise(1.75e-3)  # an edge at the end is kept whole
    assert times[-2:] == pytest.approx([1.75e-3, 1.75e-3]) and values[-2:].tolist() == [3, -1]


def test_square_without_delay_starts_high() -> None:
    bound = one("field", Drive.square(5, "1 MHz"))
    times, values = bound.piecewise(1e-6)
    assert times == pytest.approx([0, 0.5e-6, 0.5e-6, 1e-6, 1e-6]) and values.tolist() == [5, 5, -5, -5, 5]
    assert bound.value(np.arange(1, 10) * 0.1e-6 + 0.05e-6).tolist() == [5, 5, 5, 5, -5, -5, -5, -5, -5]


def test_square_of_too_many_periods_is_refused() -> None:
    bound = one("field", Drive.square(1, "1 GHz"))
    with pytest.raises(InputError, match=f"expected at most {MAX_PERIODS}"):
        bound.piecewise(0.01)
    assert bound.value(0.01 + 0.1e-9) == 1.0  # the value itself needs no points


def test_ramp_values_and_points() -> None:
    # -50 mV until 1 us, then linear to -10 mV at 3 us: -30 mV at 2 us.
    bound = one("wall.zeta", Drive.ramp("-50 mV", "-10 mV", "2 us", delay="1 us"))
    assert bound.value([0.5e-6, 2e-6, 4e-6]) == pytest.approx([-0.05, -0.03, -0.01])
    assert bound.breakpoints(1e-5) == pytest.approx([1e-6, 3e-6])
    assert bound.breakpoints(2e-6) == pytest.approx([1e-6])
    times, values = bound.piecewise(2e-6)
    assert times == pytest.approx([0, 1e-6, 2e-6]) and values == pytest.approx([-0.05, -0.05, -0.03])


def test_table_values_jumps_and_holds() -> None:
    # 0 until 1 s, up to 10 at 2 s, a jump to 20, held.
    bound = one("pressure_gradient", Drive.table([1, 2, 2, 4], [0, 10, 20, 20]))
    assert bound.value([0.5, 1.5, 1.999, 2.0, 3.0, 5.0]) == pytest.approx([0, 5, 9.99, 20, 20, 20])
    assert bound.breakpoints(10.0) == pytest.approx([1, 2])  # no kink at 4 s: flat on both sides
    times, values = bound.piecewise(3.0)
    assert times == pytest.approx([0, 1, 2, 2, 3]) and values == pytest.approx([0, 0, 10, 20, 20])


def test_table_jump_at_zero_starts_from_its_right_value() -> None:
    bound = one("field", Drive.table([0, 0, 1], [0, 7, 7]))
    times, values = bound.piecewise(2.0)
    assert times.tolist() == [0, 1, 2] and values.tolist() == [7, 7, 7]
    assert bound.breakpoints(2.0).size == 0


@pytest.mark.parametrize("t_end", [0.0, -1.0, math.nan, math.inf, "1 s", True])
def test_end_time_must_be_after_the_step(t_end) -> None:
    bound = one("field", Drive.ramp(0, 1, 1))
    with pytest.raises(InputError, match="t_end"):
        bound.piecewise(t_end)


# -- units and targets --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(("target", "value", "si", "case"), [
    ("field", "10 kV/m", 1e4, SLIT),
    ("pressure_gradient", "-1 bar/mm", -1e8, SLIT),
    ("wall.zeta", "25 mV", 0.025, SLIT),
    ("wall.bottom.charge_density", "-2 mC/m^2", -0.002, CHARGED),
    ("wall.top.gate_voltage", "200 mV", 0.2, CHARGED),
])
def test_values_are_parsed_in_the_targets_unit(target, value, si, case) -> None:
    bound = one(target, Drive.ramp(0, value, "1 us"), case)
    assert bound.parameters[1] == pytest.approx(si, rel=1e-15)
    assert bound.unit == {"field": "V/m", "pressure_gradient": "Pa/m", "charge_density": "C/m^2"}.get(
        bound.quantity, "V")


def test_plain_numbers_take_the_drives_unit_else_si() -> None:
    assert one("wall.zeta", Drive.table([0, 1], [-50, -25], unit="mV")).parameters[2:] == (-0.05, -0.025)
    assert one("wall.zeta", Drive.table([0, 1], [-0.05, "-25 mV"])).parameters[2:] == (-0.05, -0.025)


def test_walls_and_quantities_of_targets() -> None:
    assert one("wall.zeta", Drive.sine("1 mV", 1)).walls == ("bottom", "top")
    top = one("wall.top.zeta", Drive.sine("1 mV", 1))
    assert (top.walls, top.quantity, top.target) == (("top",), "zeta", "wall.top.zeta")
    assert one("field", Drive.sine(1, 1)).walls == ()
    assert one("wall.zeta", Drive.sine("1 mV", 1), TUBE).walls == ("bottom", "top")  # the one wall, as Case.walls
    assert "wall.top.zeta" not in drive_targets(TUBE) and "wall.top.zeta" in drive_targets(SLIT)
    assert bind(None, SLIT) == () and bind({}, SLIT) == ()


@pytest.mark.parametrize(("target", "drive", "case", "message"), [
    ("field", Drive.sine("10 mV", 1), SLIT, r"drives\['field'\].amplitude: '10 mV' has units of volt"),
    ("wall.zeta", Drive.ramp(0, "1 kV/m", 1), SLIT, r"drives\['wall.zeta'\].end: '1 kV/m' has units"),
    ("wall.zeta", Drive.table([0, 1], [0, 1], unit="kV/m"), SLIT, r"\.unit: 'kV/m' does not convert to V"),
    ("wall.zeeta", Drive.sine(1, 1), SLIT, "did you mean 'wall.zeta'.*one of field, pressure_gradient"),
    ("wall.top.zeta", Drive.sine(1, 1), TUBE, "not a target of a drive of a capillary"),
    ("wall.zeta", Drive.sine("1 mV", 1), CHARGED, "the bottom wall fixes its charge, expected a wall with a fixed"),
    ("wall.charge_density", Drive.sine("1 mC/m^2", 1), SLIT, "fixes its potential.*fixed-charge wall without sites"),
    ("wall.top.gate_voltage", Drive.sine("1 mV", 1), SLIT, "the top wall has no gate"),
    ("wall.bottom.gate_voltage", Drive.sine("1 mV", 1), CHARGED, "the bottom wall has no gate"),
    ("wall.zeta", Drive.sine("1 V", 1), SLIT, r"drives\['wall.zeta'\]: at -1 V the case is not valid.*wall.zeta"),
    ("wall.bottom.charge_density", Drive.ramp(0, "-5 C/m^2", 1), CHARGED, "at -5 C/m\\^2 the case is not valid"),
    ("field", "10 kV/m", SLIT, r"drives\['field'\]: '10 kV/m' is not a Drive"),
])
def test_bind_refuses(target, drive, case, message) -> None:
    with pytest.raises(InputError, match=message):
        bind({target: drive}, case)


def test_bind_refuses_sites_rectangles_overlaps_and_non_mappings() -> None:
    silica = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall.silica(),
                      electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7))
    with pytest.raises(InputError, match="has acid-base sites"):
        bind({"wall.charge_density": Drive.sine("1 mC/m^2", 1)}, silica)
    box = edl.Case(geometry=edl.Rectangle(width="100 nm", height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta=-0.05))
    with pytest.raises(InputError, match="drives: a rectangle's section cannot be driven in time"):
        bind({"field": Drive.sine(1, 1)}, box)
    with pytest.raises(InputError, match=r"'wall.zeta' and 'wall.top.zeta' both drive the top wall's zeta"):
        bind({"wall.zeta": Drive.sine("1 mV", 1), "wall.top.zeta": Drive.sine("1 mV", 2)}, SLIT)
    with pytest.raises(InputError, match=r"drives: .* is not a mapping of targets to drives"):
        bind([Drive.sine(1, 1)], SLIT)


# -- refusals when a drive is made -------------------------------------------------------------------------------


@pytest.mark.parametrize(("make", "message"), [
    (lambda: Drive.sine(1, 0), "drive.frequency: 0 is not positive"),
    (lambda: Drive.sine(1, "-1 MHz"), "drive.frequency: '-1 MHz' is not positive"),
    (lambda: Drive.sine(1, "1 us"), "drive.frequency: '1 us' has units"),
    (lambda: Drive.square(1, 1, duty=0), "drive.duty: 0 is out of range"),
    (lambda: Drive.square(1, 1, duty="100 %"), "drive.duty: '100 %' is out of range"),
    (lambda: Drive.square(1, 1, delay=-1), "drive.delay: -1 is negative"),
    (lambda: Drive.ramp(0, 1, 0), "drive.duration: 0 is not positive"),
    (lambda: Drive.sine(math.nan, 1), "drive.amplitude: nan is not finite"),
    (lambda: Drive.ramp(0, math.inf, 1), "drive.end: inf is not finite"),
    (lambda: Drive.sine(True, 1), "drive.amplitude: True is not a value"),
    (lambda: Drive.sine("10 nm", 1), "drive.amplitude: '10 nm' is not a value a drive can set"),
    (lambda: Drive.sine("nan mV", 1), "drive.amplitude: 'nan mV' is not a value a drive can set"),
    (lambda: Drive.table([0, 2, 1], [0, 1, 2]), r"drive.times\[2\]: 1 is before the time above it"),
    (lambda: Drive.table([0, 1, 1, 1], [0, 1, 2, 3]), r"drive.times\[3\]: 1 is listed a third time"),
    (lambda: Drive.table([-1, 1], [0, 1]), r"drive.times\[0\]: -1 is negative"),
    (lambda: Drive.table([1], [0]), "drive.times: .* expected at least two times"),
    (lambda: Drive.table([0, 1], [0, 1, 2]), "drive.values: .* expected 2 values"),
    (lambda: Drive.table([0, 1], [0, 1], unit="nm"), "drive.unit: 'nm' is not a unit a drive can set"),
    (lambda: Drive("pulse", amplitude=1), "drive.kind: 'pulse' is not a kind of drive"),
    (lambda: Drive("sine", amplitude=1, frequency=1, duty=0.5), "drive.duty: 0.5 given for a sine drive"),
    (lambda: Drive("ramp", start=0, end=1), "drive.duration: missing"),
])
def test_drive_refuses(make, message) -> None:
    with pytest.raises(InputError, match=message):
        make()


# -- CSV tables ---------------------------------------------------------------------------------------------------


def test_csv_with_a_unit_in_the_header(tmp_path) -> None:
    text = "\ufefftime (us), zeta [mV]\n# a comment\n0, -50\n1, -40\n\n1;-30\n2\t-30\n"
    path = write(tmp_path, name="gate.csv", text=text)
    drive = Drive.from_csv(path)
    assert drive == Drive.table([0, 1e-6, 1e-6, 2e-6], [-50, -40, -30, -30], unit="mV")
    assert one("wall.zeta", drive).value(0.5e-6) == pytest.approx(-0.045)


def test_csv_with_underscore_units_and_without_header(tmp_path) -> None:
    drive = Drive.from_csv(write(tmp_path, name="a.csv", text="t_us,field_kV/m\n0,1\n2,3\n"))
    assert (drive.times, drive.values, drive.unit) == ((0.0, 2e-6), (1.0, 3.0), "kV/m")
    assert one("field", drive).value(1e-6) == pytest.approx(2e3)
    drive = Drive.from_csv(write(tmp_path, name="b.csv", text="0,1\n2e-6,3\n"))
    assert (drive.times, drive.values, drive.unit) == ((0.0, 2e-6), (1.0, 3.0), None)
    drive = Drive.from_csv(write(tmp_path, name="c.csv", text="time,field\n0,1\n2e-6,3\n"))
    assert (drive.times, drive.unit) == ((0.0, 2e-6), None)


@pytest.mark.parametrize(("text", "message"), [
    ("time (s), value\n0, 1, 2\n", "line 2: '0, 1, 2' has 3 fields, expected two"),
    ("0, 1\n1, x\n", "line 2: the value 'x' is not a finite number"),
    ("0, 1\nnan, 2\n", "line 2: the time 'nan' is not a finite number"),
    ("t (us), v\n1, 1\n0, 2\n", "line 3: the time 0.0 is before the one above it"),
    ("-1, 1\n0, 2\n", "line 1: the time -1.0 is negative"),
    ("0, 1\n1, 1\n1, 2\n1, 3\n", "line 4: the time 1.0 is listed a third time"),
    ("time (mV), v\n0, 1\n1, 2\n", "line 1: the time's unit 'mV' in 'time \\(mV\\)' is not a unit of time"),
    ("time, wall_potential\n0, 1\n1, 2\n", "line 1: the value's unit 'potential' in 'wall_potential' is not a unit"),
    ("time (), v\n0, 1\n1, 2\n", "line 1: 'time \\(\\)' has empty brackets"),
    ("time, v\n0, 1\n", "1 line\\(s\\) of data, expected at least two"),
    ("time, v\nt, v\n0, 1\n", "line 2: the time 't' is not a finite number"),
])
def test_csv_refuses_with_file_and_line(tmp_path, text, message) -> None:
    path = write(tmp_path, name="bad.csv", text=text)
    with pytest.raises(InputError, match=f"^{re.escape(str(path))}: {message}"):
        Drive.from_csv(path)


def test_csv_files_that_cannot_be_read(tmp_path) -> None:
    with pytest.raises(InputError, match="drive table file not found"):
        Drive.from_csv(tmp_path / "missing.csv")
    with pytest.raises(InputError, match="is a directory"):
        Drive.from_csv(tmp_path)
    (tmp_path / "latin.csv").write_bytes(b"t\xe9, v\n0, 1\n1, 2\n")
    with pytest.raises(InputError, match="not UTF-8"):
        Drive.from_csv(tmp_path / "latin.csv")


# -- plain mappings, JSON, descriptions ---------------------------------------------------------------------------

DRIVES = {
    "field": Drive.sine("10 kV/m", "1 MHz", offset=100.0, phase=0.3),
    "pressure_gradient": Drive.ramp(0, "-1 bar/mm", "2 us", delay="1 us"),
    "wall.top.zeta": Drive.square("20 mV", "1 MHz", offset="-50 mV", duty="25 %", delay="0.5 us"),
    "wall.bottom.zeta": Drive.table([0, 1e-6, 1e-6, 2e-6], [-50, -40, -30, -30], unit="mV"),
}


@pytest.mark.parametrize("drive", DRIVES.values(), ids=DRIVES.keys())
def test_mapping_round_trip_is_exact(drive) -> None:
    table = drive.to_mapping()
    assert json.loads(json.dumps(table)) == table  # plain data
    assert Drive.from_mapping(table) == drive
    assert Drive.from_mapping(json.loads(json.dumps(table))) == drive
    assert "\n" not in drive.describe() and drive.kind in drive.describe()


def test_csv_drive_stores_its_points_not_its_path(tmp_path) -> None:
    table = Drive.from_csv(write(tmp_path, name="a.csv", text="time (ns), zeta (mV)\n0, 1\n3, 2\n")).to_mapping()
    assert table == {"kind": "table", "times": [0.0, 3e-9], "values": [1.0, 2.0], "unit": "mV"}


def test_drives_json_round_trip() -> None:
    bound = bind(DRIVES, SLIT)
    text = drives_json(bound)
    assert list(json.loads(text)) == list(DRIVES)
    assert drives_from_json(text, SLIT) == bound
    assert drives_json(()) == "{}" and drives_from_json("{}", SLIT) == ()
    with pytest.raises(InputError, match=r"drives_json: .* is not JSON text"):
        drives_from_json("{oops", SLIT)
    with pytest.raises(InputError, match=r"drives_json: .* is not a JSON object"):
        drives_from_json("[]", SLIT)


@pytest.mark.parametrize(("table", "message"), [
    ({"kind": "sine", "amplitude": 1, "frequncy": 1}, "unknown key 'here.frequncy' \\(did you mean 'frequency'\\?\\)"),
    ({"amplitude": 1}, "here.kind: None is not a kind of drive"),
    ({"kind": "sine", "amplitude": 1, "frequency": -1}, "^here.frequency: -1 is not positive"),
    ("sine", "here: 'sine' is not a table"),
])
def test_from_mapping_refuses_naming_where(table, message) -> None:
    with pytest.raises(InputError, match=message):
        Drive.from_mapping(table, "here")


def test_a_kind_that_is_not_a_word_is_refused() -> None:
    with pytest.raises(InputError, match=r"drive.kind: \['sine'\] is not a kind of drive"):
        Drive(["sine"], amplitude=1, frequency=1)
    with pytest.raises(InputError, match=r"here.kind: \['sine'\] is not a kind of drive"):
        Drive.from_mapping({"kind": ["sine"]}, "here")


@pytest.mark.parametrize("target", ["pressure_gradient", "wall.top.zeta", "wall.bottom.zeta"])
def test_piecewise_points_and_breakpoints_agree_with_the_values(target) -> None:
    # The solver steps between breakpoints on the points: they must be the signal itself (common practice).
    bound = bind(DRIVES, SLIT)[list(DRIVES).index(target)]
    t_end = 3.3e-6
    times, values = bound.piecewise(t_end)
    breaks = bound.breakpoints(t_end)
    assert times[0] == 0.0 and times[-1] == t_end and np.all(np.diff(times) >= 0)
    assert set(breaks) <= set(times[1:])
    inside = np.linspace(0.0, t_end, 997)[1:]
    inside = inside[np.min(np.abs(inside[:, None] - breaks[None, :]), axis=1) > 1e-12]  # off the jumps
    assert np.interp(inside, times, values) == pytest.approx(bound.value(inside), abs=1e-12 * np.max(np.abs(values)))
    assert bound.value(breaks) == pytest.approx([values[np.flatnonzero(times == b)[-1]] for b in breaks])
