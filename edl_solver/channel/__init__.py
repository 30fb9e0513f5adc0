"""Finite channels between two reservoirs: the cross-section relations integrated along the channel.

The public face: ``Channel`` and the operating functions (``current_voltage``, ``membrane_potential``,
``osmotic_power``, ``operating_point``, ``salt_flux``, ``tabulate``); ``edl_solver.channel.conductance``
holds the conductance-against-concentration helpers.
"""

from edl_solver.channel.model import (
    Channel,
    ChannelTable,
    OperatingPoint,
    OsmoticPower,
    current_voltage,
    membrane_potential,
    operating_point,
    osmotic_power,
    salt_flux,
    tabulate,
)

__all__ = [
    "Channel",
    "ChannelTable",
    "OperatingPoint",
    "OsmoticPower",
    "current_voltage",
    "membrane_potential",
    "operating_point",
    "osmotic_power",
    "salt_flux",
    "tabulate",
]
