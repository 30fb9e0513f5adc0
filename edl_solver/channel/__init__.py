"""Finite channels between two reservoirs: the cross-section relations integrated along the channel.

The public face: ``Channel``, ``Device`` (N channels in parallel, in lab units) and the operating functions
(``current_voltage``, ``membrane_potential``, ``osmotic_power``, ``operating_point``, ``salt_flux``,
``tabulate``); ``edl_solver.channel.conductance`` holds the conductance-against-concentration helpers.

Modules, from the bottom up: ``relations`` (the salt's ratios, the reduced matrix), ``point`` (the
OperatingPoint), ``quadrature`` (the along-channel conditions in ln c), ``path`` (their solution),
``model`` (Channel, the table of cross-section solves), ``operating`` (the operating functions),
``access`` (access resistances), ``device`` and ``device_text`` (N channels in parallel, their report lines),
``plateau`` (closed forms of the counter-ion limit), ``characteristics`` (a channel's lab landmarks) and
``conductance`` (conductance against concentration); for a section that varies along x, ``shape`` (the
size along x), ``taper_table`` (the relations over concentration and size), ``taper_path`` (the problem along
x), ``rectification`` (``rectification_ratio``) and ``rectification_curve`` (the ratio against concentration).
"""

from edl_solver.channel.device import Device
from edl_solver.channel.model import Channel, ChannelTable, tabulate
from edl_solver.channel.operating import (
    OperatingPoint,
    OsmoticPower,
    current_voltage,
    membrane_potential,
    operating_point,
    osmotic_power,
    salt_flux,
)
from edl_solver.channel.rectification_curve import rectification_curve

__all__ = [
    "Channel",
    "ChannelTable",
    "Device",
    "OperatingPoint",
    "OsmoticPower",
    "current_voltage",
    "membrane_potential",
    "operating_point",
    "osmotic_power",
    "rectification_curve",
    "salt_flux",
    "tabulate",
]
