"""A device of N channels in parallel (``edl_solver.channel.device``): flow and current are N times one
channel's (times the width of a slit), in lab units; the pump curve, stall pressure and streaming potential of
a wide channel reach their thin-layer (Smoluchowski) and Poiseuille values.

Signs as in ``edl_solver.channel.model``: Delta V = V(L) - V(0), Delta p = p(L) - p(0), flows along +x.
"""

from __future__ import annotations

import math

import pytest

import edl_solver as edl
from edl_solver.channel import Channel, operating_point
from edl_solver.channel.device import Device, flow_in_lab_units, pressure_in_lab_units
from edl_solver.model.bulk import bulk_conductivity

ZETA = -0.025


def _kcl(concentration: str, geometry: edl.Slit | edl.Capillary) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=edl.Electrolyte.from_ions({"K+": concentration,
                                                                              "Cl-": concentration}),
                    wall=edl.Wall(zeta=ZETA))


def test_device_flow_and_current_are_n_times_width_times_the_channel_s() -> None:
    """7 slits 50 um wide: Q = 7 x 50e-6 m x Q per unit width, I likewise (definition of the device)."""
    case = _kcl("1 mM", edl.Slit(height="50 nm"))
    channel = Channel(case, "20 um", "1 mM", "1 mM", width="50 um")
    device = Device(channel, channels=7)
    point = operating_point(channel, voltage=2.0, pressure_difference=3e4)
    state = device.state("2 V", "300 mbar")
    assert state.pressure_difference == pytest.approx(3e4, rel=1e-12)
    assert state.flow_rate == pytest.approx(7 * 50e-6 * point.volume_flow, rel=1e-12)
    assert state.current == pytest.approx(7 * 50e-6 * point.current, rel=1e-12)
    assert state.power == pytest.approx(-state.current * 2.0, rel=1e-12)


def test_lab_units_by_hand() -> None:
    """1 uL = 1e-9 m^3, 1 min = 60 s, 1 bar = 1e5 Pa (SI definitions)."""
    assert flow_in_lab_units(2.5e-9 / 60.0) == "2.5 µL/min"
    assert flow_in_lab_units(-3.0e-12 / 60.0) == "-3 nL/min"
    assert flow_in_lab_units(4.0e-15 / 60.0) == "0.004 nL/min"
    assert pressure_in_lab_units(2.5e5) == "2.5 bar"
    assert pressure_in_lab_units(-40.0) == "-0.4 mbar"


@pytest.mark.parametrize(("geometry", "width", "area", "poiseuille", "stall_factor"), [
    # slit: Q0 = N W H eps zeta V / (eta L), G = N H^3 W / (12 eta L), stall = 12 eps zeta V / H^2
    (edl.Slit(height="2 um"), 200e-6, 2e-6 * 200e-6, (2e-6) ** 3 * 200e-6 / 12.0, 12.0 / (2e-6) ** 2),
    # capillary: Q0 = N pi a^2 eps zeta V / (eta L), G = N pi a^4 / (8 eta L), stall = 8 eps zeta V / a^2
    (edl.Capillary(radius="2 um"), None, math.pi * (2e-6) ** 2, math.pi * (2e-6) ** 4 / 8.0, 8.0 / (2e-6) ** 2),
])
def test_pump_curve_of_a_wide_channel_is_smoluchowski_over_poiseuille(geometry: edl.Slit | edl.Capillary,
                                                                      width: float | None, area: float,
                                                                      poiseuille: float, stall_factor: float) -> None:
    """Thin layers (Debye length 1 nm, size 2 um): free flow from Smoluchowski's slip velocity -eps zeta E/eta
    over the section, hydraulic conductance from (Hagen-)Poiseuille (from memory), stall pressure their ratio;
    within 0.5 % (the layers' share is about 3 lambda/H)."""
    case = _kcl("100 mM", geometry)
    eps, eta = case.solvent.permittivity, case.solvent.viscosity
    n, length, voltage = 4, 1e-3, 50.0
    curve = Device(Channel(case, length, "100 mM", "100 mM", width=width), channels=n).pump_curve(voltage)
    scale = n * (width or 1.0)
    assert curve.free_flow == pytest.approx(scale * area / (width or 1.0) * eps * ZETA * voltage / (eta * length),
                                            rel=5e-3)
    assert curve.hydraulic_conductance == pytest.approx(scale * poiseuille / (width or 1.0) / (eta * length),
                                                        rel=5e-3)
    assert curve.stall_pressure == pytest.approx(stall_factor * eps * ZETA * voltage, rel=5e-3)
    assert curve.flow_at(curve.stall_pressure) == pytest.approx(0.0, abs=1e-9 * abs(curve.free_flow))


def test_streaming_potential_of_a_long_wide_channel_is_smoluchowski() -> None:
    """Open-circuit Delta V = eps zeta Delta p / (eta K) (Smoluchowski; thin layers, negligible surface
    conduction, from memory), within 1 %; unchanged by the access resistance (no current flows)."""
    case = _kcl("100 mM", edl.Capillary(radius="2 um"))
    eps, eta, k = case.solvent.permittivity, case.solvent.viscosity, bulk_conductivity(case)
    expected = eps * ZETA * 1e4 / (eta * k)
    for access in (False, True):
        device = Device(Channel(case, "1 mm", "100 mM", "100 mM", access_resistance=access), channels=10)
        assert device.streaming_potential("100 mbar") == pytest.approx(expected, rel=1e-2)


def test_stall_pressure_between_different_reservoirs_stops_the_flow() -> None:
    """Between 0.1 mM and 1 mM the channel is not linear: the secant search still finds Q = 0."""
    case = _kcl("1 mM", edl.Slit(height="20 nm"))
    device = Device(Channel(case, "5 um", "0.1 mM", "1 mM", width="1 um"), channels=2)
    curve = device.pump_curve("0.5 V")
    assert device.state(0.5, curve.stall_pressure).flow_rate == pytest.approx(0.0, abs=1e-8 * abs(curve.free_flow))
    assert curve.free_flow != 0.0


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"channels": 0}, "device.channels"),
    ({"channels": 2.5}, "device.channels"),
    ({"channels": True}, "device.channels"),
])
def test_bad_devices_raise_one_line_naming_the_field(kwargs: dict, field: str) -> None:
    channel = Channel(_kcl("1 mM", edl.Capillary(radius="10 nm")), "1 um", "1 mM", "1 mM")
    with pytest.raises(edl.InputError) as info:
        Device(channel, **kwargs)
    assert str(info.value).startswith(field) and "\n" not in str(info.value)


def test_a_slit_device_needs_a_width() -> None:
    channel = Channel(_kcl("1 mM", edl.Slit(height="20 nm")), "1 um", "1 mM", "1 mM")
    with pytest.raises(edl.InputError, match=r"^device\.channel: a slit Channel without a width"):
        Device(channel)
