"""What the channel group of ``edl transport`` holds beyond the I-V curve: the wall segments of a channel whose
wall changes along x, and the access resistance of each end.

Variables added to the channel dataset (the HDF5 group "channel"):

- with ``wall_segments``, on the dimension ``wall_segment``: ``wall_segment_start`` and ``wall_segment_end`` (m),
  ``wall_segment_wall`` (each segment's wall in words) and, for walls that fix a charge or a potential,
  ``wall_segment_charge_density`` (C/m^2) or ``wall_segment_zeta`` (V), on (``wall_segment``, ``wall``) where the
  case has a pair of walls (``wall`` names them: "bottom", "top");
- with access resistance, on the dimension ``end`` ("left" at x = 0, "right" at x = L): ``end_access_resistance``
  (ohm; ohm m per unit width of a slit), ``end_size`` (the radius or height of that end, m) and
  ``end_concentration`` (its reservoir's, mol/m^3). Their sum is the attribute ``access_resistance``.

Each end's value is ``channel.access``'s closed form at that end's size and its reservoir's bulk conductivity
(Hall 1975 for a capillary, 1/(4 K a); the strip's for a slit), as ``channel.taper_table`` sums them.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

__all__ = ["add_channel_outputs", "end_access_resistances", "wall_words"]

#: What each kind of wall fixes, and the variable and unit of its value.
_FIXED = {"charge": ("charge_density", "C/m^2", "wall charge density"), "potential": ("zeta", "V", "zeta potential")}


def end_access_resistances(channel: Any) -> tuple[tuple[float, float], tuple[float, float]]:
    """((left, right) access resistance, (left, right) size) of a ``Channel``: ohm each (ohm m per unit width of a
    slit: one slit's times its width), m; zeros without ``access_resistance``."""
    from edl_solver.channel.access import end_access_resistance
    from edl_solver.model.bulk import bulk_conductivity

    case = channel.case
    geometry = case.geometry
    sizes = channel.size.ends if channel.size is not None else (geometry.size, geometry.size)
    if not channel.access_resistance:
        return (0.0, 0.0), sizes
    per_salt = bulk_conductivity(case) / case.electrolyte.ions[0].concentration
    values = []
    for c, size in zip((channel.left_concentration, channel.right_concentration), sizes):
        end = dataclasses.replace(geometry, **{geometry.size_name: size})
        value = end_access_resistance(end, per_salt * c, channel.width)
        values.append(value * channel.width if geometry.kind == "slit" else value)
    return (values[0], values[1]), sizes


def wall_words(wall: Any) -> str:
    """A wall (or a pair) in words: "charge density -20 mC/m^2", "zeta -50 mV", "regulated (2 sites)"."""
    from edl_solver.report.formatting import prefixed

    if isinstance(wall, tuple):
        return "; ".join(f"{side} {wall_words(w)}" for side, w in zip(("bottom", "top"), wall))
    if wall.kind == "potential":
        return f"zeta {prefixed(wall.zeta, 'V')}"
    if wall.kind == "charge":
        return f"charge density {prefixed(wall.charge_density, 'C/m^2')}"
    parts = [f"{len(wall.sites)} site kind(s)" if wall.sites else "",
             f"Stern {wall.stern_capacitance:.3g} F/m^2" if wall.stern_capacitance is not None else "",
             f"gate {prefixed(wall.gate_voltage, 'V')}" if wall.gate_voltage is not None else ""]
    return f"regulated ({', '.join(part for part in parts if part)})"


def add_channel_outputs(data: Any, channel: Any) -> None:
    """Add the wall segments and each end's access resistance of ``channel`` (a ``Channel``) to ``data``."""
    segments = channel.wall_segments
    if segments is not None:
        ends = np.asarray(segments.ends, dtype=float)
        data["wall_segment_start"] = (("wall_segment",), np.concatenate(([0.0], ends[:-1])),
                                      {"units": "m", "long_name": "start of the wall segment along x"})
        data["wall_segment_end"] = (("wall_segment",), ends, {"units": "m", "long_name": "end of the wall segment "
                                                                                        "along x"})
        data["wall_segment_wall"] = (("wall_segment",), np.array([wall_words(w) for w in segments.walls], dtype=str),
                                     {"long_name": "the wall of the segment"})
        first = segments.walls[0]
        kind = (first[0] if isinstance(first, tuple) else first).kind
        if kind in _FIXED:
            name, unit, text = _FIXED[kind]
            values = [[getattr(w, name) for w in wall] if isinstance(wall, tuple) else getattr(wall, name)
                      for wall in segments.walls]
            dims = ("wall_segment", "wall") if isinstance(first, tuple) else ("wall_segment",)
            data[f"wall_segment_{name}"] = (dims, np.asarray(values, dtype=float), {"units": unit, "long_name": text})
            if isinstance(first, tuple):
                data["wall"] = (("wall",), np.array(channel.case.geometry.wall_names, dtype=str))
    if channel.access_resistance:
        (left, right), sizes = end_access_resistances(channel)
        unit = "ohm m" if channel.case.geometry.kind == "slit" else "ohm"
        if not all(math.isfinite(v) for v in (left, right)):
            return
        data["end"] = (("end",), np.array(["left", "right"], dtype=str), {"long_name": "end of the channel: left at "
                                                                                       "x = 0, right at x = L"})
        data["end_access_resistance"] = (("end",), np.array([left, right]), {
            "units": unit, "long_name": "access resistance of the end (Hall 1975 for a capillary; the strip's for "
                                        "a slit), in series"})
        data["end_size"] = (("end",), np.asarray(sizes, dtype=float), {
            "units": "m", "long_name": f"{channel.case.geometry.size_name} at the end"})
        data["end_concentration"] = (("end",), np.array([channel.left_concentration, channel.right_concentration]),
                                     {"units": "mol/m^3", "long_name": "salt concentration of the end's reservoir"})
