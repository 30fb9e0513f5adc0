"""The drives of a transient run as the compiled stepper takes them (``kernels.pnp_system`` drive slots).

Four slots: the field and the pressure gradient (as multipliers of their scales E_s, G_s: the largest magnitude
they reach) and the driven entry of the left and right wall ends' rows (zeta or charge in dimensionless units, or
a gate voltage). A slot is a constant (the value of ``case``), a sine, or a piecewise-linear table with jumps;
square waves, ramps and tables all become tables (``inputs.drives.BoundDrive.piecewise``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.kernels import layout
from edl_solver.kernels.pnp_system import CONSTANT, DRIVE_SLOTS, PIECEWISE, SINE, SLOT_FIELD, SLOT_LEFT, SLOT_PRESSURE

#: The wall-row entry a drive of each wall quantity sets, and its unit in the scales vector.
_WALL_ENTRY = {"zeta": layout.W_VALUE, "charge_density": layout.W_VALUE, "gate_voltage": layout.W_GATE_V}
_WALL_UNIT = {"zeta": layout.S_THERMAL_VOLTAGE, "charge_density": layout.S_CHARGE_DENSITY,
              "gate_voltage": layout.S_THERMAL_VOLTAGE}


def _range(bound: Any, t_end: float) -> tuple[float, float]:
    """Smallest and largest value of a bound drive over (0, t_end]."""
    if bound.kind == "sine":
        offset, amplitude = bound.sine[0], abs(bound.sine[1])
        return offset - amplitude, offset + amplitude
    _, values = bound.piecewise(t_end)
    return float(np.min(values)), float(np.max(values))


@dataclass
class DriveSlots:
    """The bound drives of a run (``inputs.drives.bind``) and the scales they set."""

    case: Case
    bound: tuple[Any, ...] = ()
    t_end: float = 0.0
    field_scale: float = 1.0
    pressure_scale: float = 1.0
    field_peak: float = 0.0
    pressure_peak: float = 0.0
    one_wall: bool = False
    drives_charge: bool = False
    largest_potential: float = 0.0
    wall_bound: list[Any] = field(default_factory=list)

    def breakpoints(self, t_end: float) -> np.ndarray:
        """Times (s) in (0, t_end] where a drive jumps or kinks."""
        points = [np.asarray(b.breakpoints(t_end), dtype=float) for b in self.bound]
        merged = np.unique(np.concatenate(points)) if points else np.empty(0)
        return merged[(merged > 0.0) & (merged <= t_end)]

    def _ends(self, bound: Any, half: bool) -> list[int]:
        """Grid ends (0 left, 1 right) a wall drive sets."""
        if half:
            return [1]
        return [0 if wall == "bottom" else 1 for wall in bound.walls]

    def kernel_arrays(self, walls: np.ndarray, sc: np.ndarray, half: bool, t_end_hat: float,
                      time_unit: float) -> tuple[np.ndarray, ...]:
        """(walls, wall_field, code, base, sine, starts, times, values) for ``PnpProblem``."""
        walls = walls.copy()
        wall_field = np.full(2, -1, dtype=np.int64)
        code = np.full(DRIVE_SLOTS, CONSTANT, dtype=np.int64)
        base = np.zeros(DRIVE_SLOTS)
        sine = np.zeros((DRIVE_SLOTS, 4))
        tables: list[tuple[np.ndarray, np.ndarray]] = [(np.empty(0), np.empty(0))] * DRIVE_SLOTS
        base[SLOT_FIELD] = self.case.field / self.field_scale
        base[SLOT_PRESSURE] = self.case.pressure_gradient / self.pressure_scale
        for end in range(2):
            base[SLOT_LEFT + end] = walls[end, layout.W_VALUE]
        for bound in self.bound:
            if bound.quantity in ("field", "pressure_gradient"):
                targets = [SLOT_FIELD if bound.quantity == "field" else SLOT_PRESSURE]
                unit = self.field_scale if bound.quantity == "field" else self.pressure_scale
            else:
                targets = [SLOT_LEFT + end for end in self._ends(bound, half)]
                unit = sc[_WALL_UNIT[bound.quantity]]
                for slot in targets:
                    wall_field[slot - SLOT_LEFT] = _WALL_ENTRY[bound.quantity]
                    base[slot] = walls[slot - SLOT_LEFT, _WALL_ENTRY[bound.quantity]]
            for slot in targets:
                if bound.kind == "sine":
                    offset, amplitude, frequency, phase = bound.sine
                    code[slot] = SINE
                    sine[slot] = (offset / unit, amplitude / unit, 2.0 * np.pi * frequency * time_unit, phase)
                else:
                    times, values = bound.piecewise(t_end_hat * time_unit)
                    code[slot] = PIECEWISE
                    tables[slot] = (np.asarray(times, dtype=float) / time_unit, np.asarray(values, dtype=float) / unit)
        starts = np.zeros(DRIVE_SLOTS + 1, dtype=np.int64)
        for slot in range(DRIVE_SLOTS):
            starts[slot + 1] = starts[slot] + tables[slot][0].size
        times = np.concatenate([t for t, _ in tables]) if starts[-1] else np.zeros(1)
        values = np.concatenate([v for _, v in tables]) if starts[-1] else np.zeros(1)
        return walls, wall_field, code, base, sine, starts, times, values

    def attach(self, sc: np.ndarray, half: bool) -> None:
        """Record the ends and units of the wall drives once the section and its scales are known."""
        self.wall_bound = [(b, self._ends(b, half), sc[_WALL_UNIT[b.quantity]]) for b in self.bound
                           if b.quantity not in ("field", "pressure_gradient")]

    def extreme_walls(self, walls: np.ndarray) -> list[np.ndarray]:
        """Wall rows with every wall drive at its smallest, then at its largest value (for the error scales)."""
        if not self.wall_bound:
            return []
        out = []
        for pick in (0, 1):
            rows = walls.copy()
            for bound, ends, unit in self.wall_bound:
                value = _range(bound, self.t_end)[pick] / unit
                for end in ends:
                    rows[end, _WALL_ENTRY[bound.quantity]] = value
            out.append(rows)
        return out


def drive_slots(drives: Any, case: Case, before: Case | None = None, t_end: float = 0.0) -> DriveSlots:
    """Bind ``drives`` (None or a mapping target -> ``inputs.drives.Drive``) to ``case`` and size them."""
    bound: tuple[Any, ...] = ()
    if drives:
        from edl_solver.inputs.drives import bind

        bound = tuple(bind(drives, case))
    slots = DriveSlots(case=case, bound=bound, t_end=t_end)
    fields = [abs(case.field)] + ([abs(before.field)] if before is not None else [])
    pressures = [abs(case.pressure_gradient)] + ([abs(before.pressure_gradient)] if before is not None else [])
    for b in bound:
        low, high = _range(b, t_end)
        if b.quantity == "field":
            fields.append(max(abs(low), abs(high)))
        elif b.quantity == "pressure_gradient":
            pressures.append(max(abs(low), abs(high)))
        else:
            slots.one_wall |= case.symmetric and len(b.walls) == 1
            slots.drives_charge |= b.quantity == "charge_density"
            if b.quantity == "zeta":
                slots.largest_potential = max(slots.largest_potential, abs(low), abs(high))
    slots.field_scale = max(fields) or 1.0
    slots.pressure_scale = max(pressures) or 1.0
    drive_field = [b for b in bound if b.quantity == "field"]
    drive_pressure = [b for b in bound if b.quantity == "pressure_gradient"]
    slots.field_peak = (max(abs(v) for v in _range(drive_field[0], t_end)) if drive_field
                        else abs(case.field)) / slots.field_scale
    slots.pressure_peak = (max(abs(v) for v in _range(drive_pressure[0], t_end)) if drive_pressure
                           else abs(case.pressure_gradient)) / slots.pressure_scale
    return slots


def drives_json(drives: Any, case: Case) -> str:
    """The drives as JSON text ({target: drive mapping}), "{}" for none."""
    if not drives:
        return "{}"
    from edl_solver.inputs.drives import bind
    from edl_solver.inputs.drives import drives_json as to_json

    return to_json(bind(drives, case))
