"""The lines ``edl transport`` prints for a device (N channels in parallel at an applied voltage and a pressure
difference): flow in uL/min or nL/min, pressures in bar or mbar, current, conductance, streaming potential,
and the laboratory caution of the README wherever a voltage is applied."""

from __future__ import annotations

from edl_solver.channel.device import Device, flow_in_lab_units, pressure_in_lab_units
from edl_solver.channel.model import Channel

__all__ = ["HIGH_VOLTAGE_CAUTION", "device_lines"]

#: The README's laboratory caution, shortened (README, "Cautions").
HIGH_VOLTAGE_CAUTION = (
    "  caution: electroosmotic devices are driven by high-voltage supplies, and high voltage can kill: use\n"
    "  interlocked enclosures, current-limited supplies and insulated leads rated for the voltage, and never\n"
    "  touch electrodes or reservoirs while the supply is on. Joule heating (∝ K E²) changes viscosity,\n"
    "  permittivity and conductivity and can make bubbles or boil small volumes; these results assume\n"
    "  isothermal conditions. Follow your institution's safety rules and qualified, licensed personnel.")


def _row(label: str, text: str) -> str:
    return f"  {label:<48} {text}"


def _tapered(channel: Channel) -> str:
    """The shape of tapered channels: their sizes at x = 0 and x = L (and the range, for a table)."""
    from edl_solver.report.formatting import prefixed

    sizes = channel.size.sizes
    ends = f"{prefixed(sizes[0], 'm')} at x = 0 to {prefixed(sizes[-1], 'm')} at x = L"
    if len(sizes) > 2:
        ends += f" (a table, from {prefixed(min(sizes), 'm')} to {prefixed(max(sizes), 'm')})"
    if channel.case.geometry.kind == "slit":
        return f"tapered slits {prefixed(channel.width, 'm')} wide, of height {ends}"
    return f"tapered capillaries of radius {ends}"


def _describe(device: Device) -> str:
    from edl_solver.report.formatting import prefixed

    channel = device.channel
    geometry = channel.case.geometry
    if channel.size is not None:  # the case's own size is not the channel's
        shape = _tapered(channel)
    elif geometry.kind == "slit":
        shape = f"slits {prefixed(geometry.height, 'm')} high and {prefixed(channel.width, 'm')} wide"
    else:
        shape = f"capillaries of radius {prefixed(geometry.radius, 'm')}"
    access = "with" if channel.access_resistance else "without"
    return (f"Device: {device.channels} {shape} in parallel, each {prefixed(channel.length, 'm')} long, {access} "
            "access resistance")


def device_lines(device: Device, voltage: float, pressure_difference: float) -> str:
    """The device's flow, current, conductance, pump curve at ``voltage`` (when not 0) and streaming potential
    at ``pressure_difference`` (when not 0); signs: Delta V = V(right) - V(left), Delta p = p(right) - p(left),
    flow and current positive from left to right."""
    from edl_solver.channel.model import table_of
    from edl_solver.report.formatting import prefixed

    state = device.state(voltage, pressure_difference)
    lines = [_describe(device),
             _row("at ΔV = V(right) - V(left)", f"{voltage:+.3g} V and Δp = p(right) - p(left) "
                                                 f"{pressure_in_lab_units(pressure_difference)}"),
             _row("flow rate (+ from left to right)", f"{flow_in_lab_units(state.flow_rate)} "
                                                      f"({state.flow_rate:.3g} m³/s)"),
             _row("current", prefixed(state.current, "A")),
             _row("conductance -dI/dΔV", prefixed(device.conductance(voltage), "S"))]
    if device.channel.access_resistance:
        per_channel = table_of(device.channel).access_resistance / (device.channel.width or 1.0)
        lines.append(_row("access resistance, both ends of one channel", prefixed(per_channel, "Ω")))
    if voltage != 0.0:
        curve = device.pump_curve(voltage)
        lines += [_row("pump curve at this voltage: free flow (Δp = 0)", flow_in_lab_units(curve.free_flow)),
                  _row("stall pressure Δp (flow 0)", f"{pressure_in_lab_units(curve.stall_pressure)} "
                                                     f"({curve.stall_pressure:.3g} Pa)"),
                  _row("", "(flow falls linearly from the free flow to 0 at the stall pressure)"),
                  _row("electrical power of the supply", prefixed(state.power, "W"))]
    if pressure_difference != 0.0:
        potential = device.streaming_potential(pressure_difference)
        streaming = device.streaming_current(pressure_difference)
        lines += [_row("streaming potential (open circuit, at this Δp)",
                       f"{potential * 1e3:+.3g} mV (no current: access resistance plays no part)"),
                  _row("streaming current (ΔV = 0, at this Δp)", prefixed(streaming, "A"))]
    if voltage != 0.0:
        lines.append(HIGH_VOLTAGE_CAUTION)
    return "\n".join(lines) + "\n"
