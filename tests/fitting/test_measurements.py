"""Measurement files in lab units (``fitting.measurements``): every conversion against hand arithmetic, the
device conversions against the project's own device model, and every kind of bad data refused in one line
that names the file, the row and the column.

The conversions are unit arithmetic and the definitions of the summary (results/schema.py, README "Transport
coefficients"): common practice, no outside source.
"""

from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.channel.device import Device
from edl_solver.errors import InputError
from edl_solver.fitting.measurements import read_measurement_files, read_measurements, write_measurements
from tests.helpers import ROOT

SLIT = {"geometry": "slit", "length": "20 um", "width": "10 um", "channels": 10}  # L / (N W) = 0.2


def csv_file(tmp_path: Path, text: str, name: str = "data.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def read(tmp_path: Path, text: str, **options: object) -> dict[str, np.ndarray]:
    return read_measurements(csv_file(tmp_path, text), **options)


# -- conversions, by hand ----------------------------------------------------------------------------------

def test_conductance_of_slits_becomes_conductance_per_length_per_width(tmp_path: Path) -> None:
    data = read(tmp_path, "concentration [mM],conductance [nS],uncertainty [nS]\n0.1,10,0.2\n1,25,0.5\n", **SLIT)
    assert list(data) == ["electrolyte.concentration", "conductance_per_length", "uncertainty"]
    np.testing.assert_allclose(data["electrolyte.concentration"], [0.1, 1.0], rtol=1e-15)  # 1 mM = 1 mol/m^3
    # G L / (N W): 10 nS x 20 um / (10 x 10 um) = 2 nS (per unit width: S m / m)
    np.testing.assert_allclose(data["conductance_per_length"], [2e-9, 5e-9], rtol=1e-14)
    np.testing.assert_allclose(data["uncertainty"], [4e-11, 1e-10], rtol=1e-14)


def test_conductance_of_capillaries_is_per_channel(tmp_path: Path) -> None:
    data = read(tmp_path, "pH,conductance [pS]\n7,300\n8,450\n", geometry="capillary", length="5 um", channels=3)
    # G L / N: 300 pS x 5 um / 3 = 5e-16 S m
    np.testing.assert_allclose(data["conductance_per_length"], [5e-16, 7.5e-16], rtol=1e-14)
    np.testing.assert_array_equal(data["electrolyte.pH"], [7.0, 8.0])


def test_streaming_current_at_a_pressure_becomes_the_streaming_conductance(tmp_path: Path) -> None:
    text = "concentration [mM],pressure [mbar],streaming current [pA],streaming current uncertainty [fA]\n" \
           "1,100,-5,50\n1,-200,8,40\n"
    data = read(tmp_path, text, **SLIT)
    assert "pressure_gradient" not in data  # the pressure is spent on the coefficient
    # -I L / (N W dp): -(-5 pA) x 20 um / (10 x 10 um x 1e4 Pa) = 1e-16 A/Pa; the uncertainty with |dp|
    np.testing.assert_allclose(data["streaming_conductance"], [1e-16, 8e-17], rtol=1e-14)
    np.testing.assert_allclose(data["uncertainty"], [1e-18, 4e-19], rtol=1e-14)


def test_streaming_conductance_and_potential_columns(tmp_path: Path) -> None:
    # The device's current per pressure drop, K = I / (p(left) - p(right)): K L / N for one capillary kind.
    data = read(tmp_path, "streaming conductance [pA/bar]\n2\n", geometry="capillary", length="1 mm", channels=4)
    np.testing.assert_allclose(data["streaming_conductance"], [2e-12 / 1e5 * 1e-3 / 4], rtol=1e-14)
    # dV / dp: -2 mV at 100 mbar = -2e-3 V / 1e4 Pa; no device values needed
    data = read(tmp_path, "temperature [degC],pressure [mbar],streaming potential [mV]\n25,100,-2\n")
    np.testing.assert_allclose(data["streaming_potential_coefficient"], [-2e-7], rtol=1e-14)
    np.testing.assert_allclose(data["solvent.temperature"], [298.15], rtol=1e-15)  # 25 degC, an offset unit
    data = read(tmp_path, "Streaming  Potential Coefficient [mV/bar]\n-20\n")
    np.testing.assert_allclose(data["streaming_potential_coefficient"], [-2e-7], rtol=1e-14)


def test_eo_flow_velocity_and_current_take_the_voltage_as_the_field(tmp_path: Path) -> None:
    data = read(tmp_path, "voltage [V],eo flow rate [nL/min]\n1,-0.6\n", geometry="capillary", length="20 um",
                channels=2)
    np.testing.assert_allclose(data["field"], [-5e4], rtol=1e-15)  # -dV / L = -1 V / 20 um
    np.testing.assert_allclose(data["flow_rate_eo"], [-0.6e-12 / 60 / 2], rtol=1e-14)  # 1 nL = 1e-12 m^3
    data = read(tmp_path, "voltage [mV],electroosmotic velocity [um/s]\n-500,12\n", length="10 um")
    np.testing.assert_allclose(data["field"], [5e4], rtol=1e-15)
    np.testing.assert_allclose(data["mean_velocity_eo"], [1.2e-5], rtol=1e-14)  # no per-channel scaling
    data = read(tmp_path, "voltage [V],pressure [bar],current [nA]\n2,0.5,3\n", **SLIT)
    np.testing.assert_allclose(data["field"], [-1e5], rtol=1e-15)
    np.testing.assert_allclose(data["pressure_gradient"], [2.5e9], rtol=1e-15)  # dp / L = 5e4 Pa / 20 um
    np.testing.assert_allclose(data["current"], [3e-9 / (10 * 1e-5)], rtol=1e-14)  # I / (N W)


def test_paths_and_summary_keys_are_read_as_they_are(tmp_path: Path) -> None:
    text = "electrolyte.concentration [M],geometry.height [nm],field [kV/m],zeta [mV],uncertainty [mV]\n" \
           "0.001,50,1,-40,2\n"
    data = read(tmp_path, text)
    expected = {"electrolyte.concentration": 1.0, "geometry.height": 5e-8, "field": 1e3, "zeta": -0.04,
                "uncertainty": 0.002}
    assert {key: value.tolist() for key, value in data.items()} == {key: [v] for key, v in expected.items()}
    data = read(tmp_path, "conductance_per_length [nS*um]\n2\n", geometry=edl.Capillary(radius="10 nm"))
    np.testing.assert_allclose(data["conductance_per_length"], [2e-15], rtol=1e-14)  # S m per capillary
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=edl.Electrolyte.from_ions({"K+": 1, "Cl-": 1}),
                    wall=edl.Wall(zeta="-50 mV"))
    data = read(tmp_path, "streaming_current [pA/um]\n3\n", geometry=case)
    np.testing.assert_allclose(data["streaming_current"], [3e-6], rtol=1e-14)  # A per metre of width
    data = read(tmp_path, "pH [-],selectivity\n7,0.5\n")
    assert {key: value.tolist() for key, value in data.items()} == {"electrolyte.pH": [7.0], "selectivity": [0.5]}


def test_layout_comments_blank_lines_semicolons_quotes_and_byte_order_mark(tmp_path: Path) -> None:
    path = tmp_path / "excel.csv"
    path.write_bytes("\ufeff# from the lab book\n\nConcentration [mM];Conductance [nS]\n  # a note\n1;2\n\n10;4\n"
                     .encode("utf-8"))
    data = read_measurements(path, **SLIT)
    np.testing.assert_allclose(data["conductance_per_length"], [4e-10, 8e-10], rtol=1e-14)
    data = read(tmp_path, '"concentration [mM]",conductance [nS]\n"1", 2\n', **SLIT)
    np.testing.assert_allclose(data["electrolyte.concentration"], [1.0])
    two = read_measurement_files([csv_file(tmp_path, "conductance [nS]\n1\n", "a.csv"),
                                  csv_file(tmp_path, "pressure [mbar],streaming potential [mV]\n1,1\n", "b.csv")],
                                 **SLIT)
    assert [sorted(d) for d in two] == [["conductance_per_length"], ["streaming_potential_coefficient"]]


def test_write_measurements_round_trips(tmp_path: Path) -> None:
    path = tmp_path / "made.csv"
    write_measurements(path, {"concentration [mM]": [0.1, 1.0], "conductance [nS]": [1.234567891, 2.5]},
                       comments=["synthetic"])
    assert path.read_text(encoding="utf-8") == "# synthetic\nconcentration [mM],conductance [nS]\n0.1,1.23457\n1,2.5\n"
    data = read_measurements(path, **SLIT)
    np.testing.assert_allclose(data["conductance_per_length"], [1.23457e-9 * 0.2, 5e-10], rtol=1e-14)
    with pytest.raises(InputError, match="the same number in each"):
        write_measurements(path, {"a [mM]": [1.0], "conductance [nS]": [1.0, 2.0]})
    assert path.read_text(encoding="utf-8").startswith("# synthetic")  # kept as it was


# -- the device model of the project agrees with the conversions ---------------------------------------------

@pytest.fixture(scope="module")
def slit_device() -> Device:
    case = edl.Case(geometry=edl.Slit(height="100 nm"), wall=edl.Wall(charge_density="-8 mC/m^2"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}))
    return Device(edl.Channel(case, "20 um", "1 mM", "1 mM", width="10 um"), channels=10)


def test_device_values_read_back_as_the_summary_of_the_section(tmp_path: Path, slit_device: Device) -> None:
    # The device (channel.device, same signs as edl transport) and the reader are two routes from one model.
    case = slit_device.channel.case
    rows = {"conductance [nS]": slit_device.conductance() * 1e9,
            "streaming current [pA]": slit_device.streaming_current("100 mbar") * 1e12,
            "streaming potential [mV]": slit_device.streaming_potential("100 mbar") * 1e3,
            "eo flow rate [nL/min]": slit_device.state("1 V").flow_rate * 1e12 * 60,
            "current [nA]": slit_device.state("1 V", "100 mbar").current * 1e9}
    for header, value in rows.items():
        data = read(tmp_path, f"voltage [V],pressure [mbar],{header}\n1,100,{value!r}\n", **SLIT)
        (key,) = set(data) - {"field", "pressure_gradient"}
        drives = {"field": data.get("field", [0.0])[0], "pressure_gradient": data.get("pressure_gradient", [0.0])[0]}
        summary = edl.solve(dataclasses.replace(case, **drives)).summary
        assert data[key][0] == pytest.approx(summary[key], rel=1e-9), header


# -- the demo file ---------------------------------------------------------------------------------------

def test_the_demo_file_is_the_model_its_comments_state() -> None:
    path = ROOT / "examples" / "slit_conductance.csv"
    comments = [line for line in path.read_text(encoding="utf-8").splitlines() if line.startswith("#")]
    assert "Synthetic data, NOT a measurement" in comments[0]
    data = read_measurements(path, geometry="slit", length="20 um", width="10 um", channels=10)
    # The recipe in the file's comments, run again (values written to 6 digits).
    case = edl.Case(geometry=edl.Slit(height="100 nm"), wall=edl.Wall(charge_density="-8 mC/m^2"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}))
    c = np.logspace(-2, 2, 13)
    g = edl.sweep(case, {"electrolyte.concentration": c})["conductance_per_length"].values * 10 * 10e-6 / 20e-6
    g = g * (1 + 0.02 * np.random.default_rng(12).standard_normal(13))
    np.testing.assert_allclose(data["electrolyte.concentration"], c, rtol=5e-6)
    np.testing.assert_allclose(data["conductance_per_length"], g * 20e-6 / (10 * 10e-6), rtol=2e-5)
    np.testing.assert_allclose(data["uncertainty"], 0.02 * data["conductance_per_length"], rtol=2e-5)


# -- bad data: one line naming the file, the row and the column ---------------------------------------------

BAD = [
    ("concentration [mM],conductance [nS]\n1,abc\n", {}, 2, "conductance [nS]", "'abc' is not a number"),
    ("concentration [mM],conductance [nS]\n1 + 1,2\n", {}, 2, "concentration [mM]", "'1 + 1' is not a number"),
    ("concentration [mM],conductance [nS]\n1 mM,2\n", {}, 2, "concentration [mM]", "'1 mM' is not a number"),
    ("concentration [mM],conductance [nS]\n1,2\n3,\n", {}, 3, "conductance [nS]", "empty cell"),
    ("concentration [mM],conductance [nS]\n1,nan\n", {}, 2, "conductance [nS]", "'nan' is not a number"),
    ("concentration [mM],conductance [nS]\n-1,2\n", {}, 2, "concentration [mM]", "is negative"),
    ("concentration [mM],conductance [nS]\n0,2\n", {}, 2, "concentration [mM]", "is zero"),
    ("height [nm],conductance [nS]\n-5,2\n", {}, 2, "height [nm]", "is negative"),
    ("conductance [nS],uncertainty [nS]\n2,0\n", {}, 2, "uncertainty [nS]", "not a positive uncertainty"),
    ("conductance [nS],uncertainty [nS]\n2,-0.1\n", {}, 2, "uncertainty [nS]", "not a positive uncertainty"),
    ("# c\nconductivity [S/m],conductance [nS]\n1,2\n", {}, 2, "conductivity [S/m]", "is not a known column"),
    ("concentration (mM),conductance [nS]\n1,2\n", {}, 1, "concentration (mM)", "in square brackets"),
    ("wall.charge [mC/m^2],conductance [nS]\n1,2\n", {}, 1, "wall.charge [mC/m^2]", "did you mean"),
    ("model,conductance [nS]\n1,2\n", {}, 1, "model", "is not a known column"),
    ("thin_layer_zeta [mV]\n1\n", {}, 1, "thin_layer_zeta [mV]", "thin-layer model's or a check of the solve"),
    ("error_estimate\n1\n", {}, 1, "error_estimate", "not measured"),
    ("concentration [mMol],conductance [nS]\n1,2\n", {}, 1, "concentration [mMol]", "unit 'mMol' is not a unit"),
    ("concentration [1 + 1 mM],conductance [nS]\n1,2\n", {}, 1, "concentration [1 + 1 mM]",
     "unit '1 + 1 mM' is not a unit"),
    ("concentration [mM],conductance [nA]\n1,2\n", {}, 1, "conductance [nA]",
     "unit 'nA' has units of ampere (electric current), expected units of S such as nS"),
    ("concentration [mm],conductance [nS]\n1,2\n", {}, 1, "concentration [mm]",
     "unit 'mm' has units of metre (length), expected units of mol/m^3 such as mM"),
    ("concentration,conductance [nS]\n1,2\n", {}, 1, "concentration", "no unit, expected one in square brackets"),
    ("conductance [nS],uncertainty [pA]\n1,2\n", {}, 1, "uncertainty [pA]", "expected units of S such as nS"),
    ("concentration [mM],electrolyte.concentration [M],conductance [nS]\n1,1,2\n", {}, 1,
     "electrolyte.concentration [M]", "the same electrolyte.concentration as column 'concentration [mM]'"),
    ("voltage [V],field [V/m],current [pA]\n1,1,2\n", {}, 1, "field [V/m]", "the same field"),
    ("conductance [nS],uncertainty [nS],conductance uncertainty [pS]\n1,1,1\n", {}, 1,
     "conductance uncertainty [pS]", "the same uncertainty"),
    ("concentration [mM],concentration [M],conductance [nS]\n1,1,2\n", {}, 1, "concentration [M]", "the same"),
    ("conductance [nS],streaming potential coefficient [mV/bar]\n1,2\n", {}, 1,
     "streaming potential coefficient [mV/bar]", "a second measured column"),
    ("conductance [nS],current uncertainty [pA]\n1,2\n", {}, 1, "current uncertainty [pA]", "not the measured"),
    ("streaming current [pA]\n1\n", {}, 1, "streaming current [pA]", "needs the pressure difference"),
    ("current [pA],pressure [mbar]\n1,1\n", {}, 1, "current [pA]", "needs the voltage"),
    ("pressure [mbar],streaming current [pA]\n100,1\n0,1\n", {}, 3, "pressure [mbar]", "zero pressure difference"),
    ("concentration [mM],conductance [nS]\n1,2,3\n", {}, 2, None, "3 cell(s), expected 2"),
    ("concentration [mM],conductance [nS]\n1,2\n", {"length": None}, 1, "conductance [nS]", "channel length"),
    ("voltage [V],eo velocity [um/s]\n1,2\n", {"length": None}, 1, "voltage [V]", "channel length"),
    ("concentration [mM],conductance [nS]\n1,2\n", {"width": None}, 1, "conductance [nS]", "width of each slit"),
    ("concentration [mM],conductance [nS]\n1,2\n", {"width": None, "geometry": None}, 1, "conductance [nS]",
     "geometry='slit'"),
    ("conductance_per_length [nS]\n1\n", {"width": None, "geometry": None}, 1, "conductance_per_length [nS]",
     "geometry='slit' or 'capillary'"),
    ("conductance_per_length [nS]\n1\n", {"geometry": "capillary", "width": None}, 1, "conductance_per_length [nS]",
     "unit 'nS' has units of nanosiemens (dimension"),
]


@pytest.mark.parametrize(("text", "options", "row", "column", "words"), BAD)
def test_bad_data_is_one_line_naming_file_row_and_column(tmp_path: Path, text: str, options: dict[str, object],
                                                          row: int, column: str | None, words: str) -> None:
    path = csv_file(tmp_path, text)
    with pytest.raises(InputError) as raised:
        read_measurements(path, **{**SLIT, **options})
    message = str(raised.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: row {row}")
    if column is not None:
        assert f"column {column!r}: " in message
    assert words in message, message


def test_a_file_without_points_or_with_too_few(tmp_path: Path) -> None:
    path = csv_file(tmp_path, "concentration [mM],conductance [nS]\n1,2\n3,4\n")
    with pytest.raises(InputError, match=re.escape(f"{path}: 2 row(s) of data, expected at least 3")):
        read_measurements(path, min_points=3, **SLIT)
    assert len(read_measurements(path, min_points=2, **SLIT)["conductance_per_length"]) == 2
    path = csv_file(tmp_path, "concentration [mM],conductance [nS]\n# nothing yet\n", "empty.csv")
    with pytest.raises(InputError, match="0 row"):
        read_measurements(path, **SLIT)
    path = csv_file(tmp_path, "# only comments\n\n", "blank.csv")
    with pytest.raises(InputError, match="no header row"):
        read_measurements(path, **SLIT)
    path = csv_file(tmp_path, "concentration [mM],pH\n1,7\n", "unmeasured.csv")
    with pytest.raises(InputError, match="no measured column among 'concentration \\[mM\\]', 'pH'"):
        read_measurements(path, **SLIT)


@pytest.mark.parametrize(("options", "words"), [
    ({"channels": 0}, "channels: 0 is not allowed"),
    ({"channels": True}, "channels: True is not allowed"),
    ({"channels": 2.0}, "channels: 2.0 is not allowed"),
    ({"geometry": "rectangle"}, "geometry: 'rectangle' is not a channel geometry"),
    ({"geometry": np.array([1.0, 2.0])}, "is not a channel geometry"),
    ({"min_points": "3"}, "min_points: '3' is not allowed"),
    ({"length": "-1 um"}, "length: '-1 um' is not positive"),
    ({"length": "1 + 1 um"}, "length: '1 + 1 um' is not a quantity with units"),
    ({"width": "2 mM"}, "width: '2 mM' has units of"),
    ({"geometry": "capillary"}, "width: 1e-05 given for a capillary"),
])
def test_bad_device_keywords(tmp_path: Path, options: dict[str, object], words: str) -> None:
    path = csv_file(tmp_path, "concentration [mM],conductance [nS]\n1,2\n")
    with pytest.raises(InputError, match=re.escape(words)):
        read_measurements(path, **{**SLIT, **options})


def test_unreadable_files(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="cannot be read"):
        read_measurements(tmp_path / "missing.csv")
    path = tmp_path / "latin.csv"
    path.write_bytes("concentration [mM],conductance [\xb5S]\n1,2\n".encode("latin-1"))
    with pytest.raises(InputError, match="not UTF-8 text"):
        read_measurements(path)
    with pytest.raises(InputError, match="is not a file path"):
        read_measurements(3)  # type: ignore[arg-type]
