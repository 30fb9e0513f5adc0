"""A device: N identical channels in parallel between the same two reservoirs, at an applied voltage and a
pressure difference, in the units a lab reads (flow in uL/min or nL/min, pressures in bar or mbar).

Signs as in ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L),
Delta V = V(L) - V(0), Delta p = p(L) - p(0), flow and current positive along +x. Each channel is the
``Channel``'s (a slit's per-width values times its width W; ``Channel.width`` is required), its access
resistance in series if ``Channel.access_resistance``; the device's flow and current are N times one
channel's. The channels' openings are taken as far apart compared with their size: their access resistances
do not interact.

The pump curve at a voltage is the volume flow against Delta p: from the free flow Q0 at Delta p = 0 to the
stall pressure Delta p_stall at Q = 0. For equal reservoirs a uniform channel is linear (the line is exact;
Q0 = -(dQ/dDelta p) Delta p_stall); between different reservoirs, or along a section that varies
(``Channel.size``), the stall pressure is found by the secant method and the curve drawn as the straight line
between the two points.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from edl_solver.channel.model import Channel, table_of
from edl_solver.channel.operating import _raise_failed, operating_point
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.units import to_si

__all__ = ["Device", "DeviceState", "PumpCurve", "flow_in_lab_units", "pressure_in_lab_units"]

#: Secant iterations of the stall pressure between different reservoirs, and their relative tolerance on Q.
STALL_ITERATIONS = 40
STALL_TOLERANCE = 1e-10
#: Voltage step of the device conductance's central difference between different reservoirs, V.
CONDUCTANCE_STEP = 1e-3


@dataclass(frozen=True)
class DeviceState:
    """The device at one voltage and pressure difference (totals over the N channels, SI).

    Attributes
    ----------
    voltage : float
        Applied Delta V = V(L) - V(0), V.
    pressure_difference : float
        Delta p = p(L) - p(0), Pa.
    flow_rate : float
        Volume flow along +x, m^3/s.
    current : float
        Electric current along +x, A.
    power : float
        Electrical power the supply delivers, -I Delta V, W (Joule heating and pumping work), positive for a
        driven channel.
    """

    voltage: float
    pressure_difference: float
    flow_rate: float
    current: float
    power: float


@dataclass(frozen=True)
class PumpCurve:
    """The device's pump curve at a voltage: Q(Delta p) from (0, free_flow) to (stall_pressure, 0).

    Attributes
    ----------
    voltage : float
        Delta V, V.
    free_flow : float
        Q at Delta p = 0, m^3/s.
    stall_pressure : float
        Delta p at which Q = 0, Pa (0 when the voltage drives no flow).
    hydraulic_conductance : float
        -dQ/dDelta p along the line, m^3/(s Pa) (free_flow / stall_pressure).
    """

    voltage: float
    free_flow: float
    stall_pressure: float
    hydraulic_conductance: float

    def flow_at(self, pressure_difference: float) -> float:
        """Q on the line at Delta p (Pa), m^3/s."""
        return self.free_flow - self.hydraulic_conductance * pressure_difference


def _count(value: object) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < 1:
        raise InputError(f"device.channels: {value!r} is not allowed, expected a whole number of channels, at least 1")
    return value


@dataclass(frozen=True)
class Device:
    """N identical channels in parallel between the same two reservoirs.

    Parameters
    ----------
    channel : Channel
        One channel (a slit needs ``Channel.width``); its ``access_resistance`` applies to each channel.
    channels : int
        Number N of channels in parallel, at least 1.
    """

    channel: Channel
    channels: int = 1

    def __post_init__(self) -> None:
        if not isinstance(self.channel, Channel):
            raise InputError(f"device.channel: {type(self.channel).__name__} is not a Channel, expected "
                             "edl_solver.channel.Channel(...)")
        _count(self.channels)
        if self.channel.case.geometry.kind == "slit" and self.channel.width is None:
            raise InputError("device.channel: a slit Channel without a width, expected Channel(..., width='1 um') "
                             "(the section's values are per unit width)")

    @property
    def scale(self) -> float:
        """Factor from the channel model's values (per unit width for a slit) to the device's: N W or N."""
        return self.channels * (self.channel.width if self.channel.width is not None else 1.0)

    def state(self, voltage: float | str = 0.0, pressure_difference: float | str = 0.0) -> DeviceState:
        """The device's flow and current at Delta V and Delta p.

        Raises
        ------
        ConvergenceError
            If the channel's operating point does not converge.
        """
        voltage = to_si(voltage, "V", "device.voltage")
        dp = to_si(pressure_difference, "Pa", "device.pressure_difference")
        point = operating_point(table_of(self.channel), voltage=voltage, pressure_difference=dp)
        _raise_failed(point, "device")
        current = self.scale * point.current
        return DeviceState(voltage, dp, self.scale * point.volume_flow, current, -current * voltage)

    def pump_curve(self, voltage: float | str) -> PumpCurve:
        """The pump curve at Delta V: free flow, stall pressure and the line between them.

        Raises
        ------
        ConvergenceError
            If an operating point fails, or the stall pressure is not found.
        """
        voltage = to_si(voltage, "V", "device.voltage")
        free = self.state(voltage, 0.0).flow_rate
        probe = 1.0e5  # 1 bar: the slope (exact for a uniform channel)
        slope = (self.state(voltage, probe).flow_rate - free) / probe
        if slope >= 0.0:
            raise ConvergenceError(f"device: the flow does not fall with the back pressure (dQ/dDelta p = {slope:.3g} "
                                   "m^3/(s Pa))")
        stall = -free / slope
        if not self.channel.equal_reservoirs or self.channel.size is not None:  # a varying section is not linear
            stall = self._secant_stall(voltage, free, stall, slope)
        conductance = free / stall if stall != 0.0 else -slope
        return PumpCurve(voltage, free, stall, conductance)

    def _secant_stall(self, voltage: float, free: float, stall: float, slope: float) -> float:
        """Delta p with Q = 0 between different reservoirs (the channel is not exactly linear)."""
        previous, q_previous = 0.0, free
        for _ in range(STALL_ITERATIONS):
            q = self.state(voltage, stall).flow_rate
            if abs(q) <= STALL_TOLERANCE * max(abs(free), abs(slope) * abs(stall)):
                return stall
            previous, q_previous, stall = stall, q, stall - q * (stall - previous) / (q - q_previous)
        raise ConvergenceError(f"device: the stall pressure at {voltage:.4g} V was not found in {STALL_ITERATIONS} "
                               "secant steps")

    def conductance(self, voltage: float | str = 0.0) -> float:
        """-dI/dDelta V of the device at Delta V and Delta p = 0, S (exact for equal reservoirs)."""
        voltage = to_si(voltage, "V", "device.voltage")
        step = CONDUCTANCE_STEP
        high, low = self.state(voltage + step).current, self.state(voltage - step).current
        return -(high - low) / (2.0 * step)

    def streaming_potential(self, pressure_difference: float | str) -> float:
        """Open-circuit Delta V produced by Delta p, V: V_oc(Delta p) - V_oc(0) (V_oc(0) = 0 for equal
        reservoirs). No current flows, so the access resistance does not change it."""
        from edl_solver.channel.operating import membrane_potential

        dp = to_si(pressure_difference, "Pa", "device.pressure_difference")
        zero = 0.0 if self.channel.equal_reservoirs else membrane_potential(self.channel, 0.0)
        return membrane_potential(self.channel, dp) - zero

    def streaming_current(self, pressure_difference: float | str) -> float:
        """Short-circuit current (Delta V = 0) produced by Delta p, A: I(0, Delta p) - I(0, 0). The access
        resistance lowers it."""
        dp = to_si(pressure_difference, "Pa", "device.pressure_difference")
        zero = 0.0 if self.channel.equal_reservoirs else self.state(0.0, 0.0).current
        return self.state(0.0, dp).current - zero


def flow_in_lab_units(flow: float) -> str:
    """A volume flow (m^3/s) in uL/min at and above 1 uL/min, else in nL/min: 1 uL = 1e-9 m^3."""
    microlitres = flow * 1e9 * 60.0
    if abs(microlitres) >= 1.0:
        return f"{microlitres:.3g} µL/min"
    return f"{microlitres * 1e3:.3g} nL/min"


def pressure_in_lab_units(pressure: float) -> str:
    """A pressure (Pa) in bar at and above 1 bar, else in mbar (1 bar = 1e5 Pa)."""
    if not math.isfinite(pressure):
        return str(pressure)
    if abs(pressure) >= 1e5:
        return f"{pressure / 1e5:.3g} bar"
    return f"{pressure / 1e2:.3g} mbar"
