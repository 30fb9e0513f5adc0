"""``edl transport`` for a device: --width, --channels, --voltage, --pressure-difference and
--access-resistance print the device's flow (uL/min or nL/min), current, pump curve, stall pressure and
streaming potential, with the README's high-voltage caution; bad values exit 2 with one line.

Values are compared with the Python API (``edl_solver.channel.device``), whose physics
tests/channel/test_device.py checks against Smoluchowski and Poiseuille.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

import edl_solver as edl
from edl_solver.channel import Channel
from edl_solver.channel.device import Device
from tests.helpers import run

SLIT = ["--slit", "1um", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta", "-50mV"]
DEVICE = ["--length", "1cm", "--width", "100um", "--channels", "20", "--voltage", "100V",
          "--pressure-difference", "100mbar", "--access-resistance", "on"]


def _shown(out: str, label: str) -> str:
    match = re.search(re.escape(label) + r"\s+(\S+ \S+)", out)
    assert match is not None, out
    return match.group(1)


def test_device_flags_print_the_device_in_lab_units() -> None:
    code, out, err = run(["transport", *SLIT, *DEVICE])
    assert (code, err) == (0, "")
    case = edl.Case(geometry=edl.Slit(height="1 um"), electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM",
                                                                                              "Cl-": "1 mM"}),
                    wall=edl.Wall(zeta="-50 mV"))
    device = Device(Channel(case, "1 cm", "1 mM", "1 mM", access_resistance=True, width="100 um"), channels=20)
    state, curve = device.state(100.0, 1e4), device.pump_curve(100.0)
    assert "Device: 20 slits 1 µm high and 100 µm wide in parallel, each 10 mm long, with access resistance" in out
    flow = _shown(out, "flow rate (+ from left to right)")
    assert flow.endswith("nL/min") and float(flow.split()[0]) == pytest.approx(state.flow_rate * 60e12, rel=1e-3)
    free = _shown(out, "free flow (Δp = 0)")
    assert float(free.split()[0]) == pytest.approx(curve.free_flow * 60e12, rel=1e-3)
    stall = _shown(out, "stall pressure Δp (flow 0)")
    assert stall.endswith("mbar") and float(stall.split()[0]) == pytest.approx(curve.stall_pressure / 100, rel=1e-3)
    potential = _shown(out, "streaming potential (open circuit, at this Δp)")
    assert float(potential.split()[0]) == pytest.approx(device.streaming_potential(1e4) * 1e3, rel=1e-3)
    for text in ("current", "conductance -dI/dΔV", "access resistance, both ends of one channel", "MΩ",
                 "streaming current (ΔV = 0, at this Δp)", "high voltage can kill", "Joule heating"):
        assert text in out, text


def test_a_capillary_device_without_voltage_has_no_pump_curve_nor_caution() -> None:
    code, out, err = run(["transport", "--capillary", "10nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta",
                          "-50mV", "--length", "1um", "--channels", "1000", "--pressure-difference", "2bar"])
    assert (code, err) == (0, "")
    assert "Device: 1000 capillaries of radius 10 nm in parallel, each 1 µm long, without access resistance" in out
    assert "Δp = p(right) - p(left) 2 bar" in out and "streaming potential" in out
    assert "stall pressure" not in out and "high voltage" not in out


BAD = {
    "voltage without length": (["--voltage", "10V"], ["--voltage", "--length"]),
    "slit without width": (["--length", "1cm", "--voltage", "10V"], ["--voltage", "--width"]),
    "zero channels": (["--length", "1cm", "--width", "100um", "--channels", "0"], ["--channels", "'0'"]),
    "fractional channels": (["--length", "1cm", "--width", "100um", "--channels", "2.5"], ["--channels"]),
    "narrow slit": (["--length", "1cm", "--width", "5um"], ["--width", "'5um'", "10 times the slit height"]),
    "width in volts": (["--length", "1cm", "--width", "5V"], ["--width", "'5V'"]),
    "voltage in metres": (["--length", "1cm", "--width", "100um", "--voltage", "10m"], ["--voltage", "'10m'"]),
    "pressure in kelvin": (["--length", "1cm", "--width", "100um", "--pressure-difference", "1K"],
                           ["--pressure-difference", "'1K'"]),
    "access resistance maybe": (["--length", "1cm", "--access-resistance", "maybe"], ["--access-resistance"]),
    "access without width": (["--length", "1cm", "--access-resistance", "on"], ["--access-resistance", "--width"]),
}


@pytest.mark.parametrize("name", BAD)
def test_bad_device_flags_exit_2_with_one_line_and_no_files(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                           name: str) -> None:
    monkeypatch.chdir(tmp_path)
    flags, parts = BAD[name]
    code, out, err = run(["transport", *SLIT, *flags, "-o", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == ""
    assert list(tmp_path.iterdir()) == []


def test_width_of_a_capillary_exits_2() -> None:
    code, out, err = run(["transport", "--capillary", "10nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta",
                          "-50mV", "--length", "1um", "--width", "1um"])
    assert code == 2 and err.startswith("edl: error: --width: '1um' for a capillary") and out == ""
